/*
 * cli_strata.c - the stratified-draw options shared by `curve` and
 * `enough`: a sector map (sectors.h) turned into the sampler's strata.
 */
#include "cli.h"

#include <stdio.h>
#include <string.h>

#include "holdcount/analysis.h"
#include "holdcount/sampler.h"
#include "holdcount/sectors.h"
#include "holdcount/strata.h"
#include "holdcount/universe.h"

#define STR(f) offsetof(struct cli_strata, f)
static const struct cli_option strata_options[] = {
	{ "strata", 0, CLI_STRING, STR(map), "FILE",
	  "draw portfolios spread across the labels of FILE (a CSV of id,label, e.g. sectors); "
	  "securities it lacks form one more stratum", NULL, "unconstrained draws" },
	{ "strata-id-column", 0, CLI_STRING, STR(id_column), "NAME",
	  "name of the id column in the --strata file", NULL, "id" },
	{ "strata-column", 0, CLI_STRING, STR(label_column), "NAME",
	  "name of the label column in the --strata file", NULL, "label" },
	{ "per-stratum-max", 0, CLI_COUNT, STR(per_stratum_max), "K",
	  "with --strata: uniform over all portfolios holding at most K of any stratum", NULL, NULL },
	{ "proportional", 0, CLI_FLAG, STR(proportional), NULL,
	  "with --strata: each stratum's share of the holdings in proportion to its size "
	  "(largest remainder), uniform within strata", NULL, NULL },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_strata = { "stratified draws", strata_options };

void cli_strata_init(struct cli_strata *s)
{
	memset(s, 0, sizeof *s);
}

void cli_strata_release(struct cli_strata *s)
{
	hc_sectors_strata_free(s->stratum_of, s->labels, s->nlabels);
	hc_strata_free(s->strata);
	s->stratum_of = NULL;
	s->labels = NULL;
	s->nlabels = 0;
	s->strata = NULL;
}

int cli_strata_apply(const char *cmd, struct cli_strata *s, const struct universe *u,
		     struct hc_strata_use *su)
{
	struct sectors *map = NULL;
	struct hc_error err;
	int rc;

	memset(su, 0, sizeof *su);
	if (!s->map) {
		if (s->per_stratum_max || s->proportional)
			return cli_usage_error(cmd, "--per-stratum-max and --proportional need --strata FILE");
		return HC_OK;
	}
	if (s->strata)
		goto fill;   /* loaded by an earlier call */
	if (!!s->per_stratum_max == !!s->proportional)
		return cli_usage_error(cmd, "--strata needs one of --per-stratum-max K (K at least 1) or "
				       "--proportional");
	hc_error_clear(&err);
	rc = hc_sectors_load(&map, s->map, s->id_column, s->label_column, &err);
	if (rc == HC_OK)
		rc = hc_sectors_strata(map, u, &s->stratum_of, &s->labels, &s->nlabels, &s->unmapped, &err);
	if (rc == HC_OK)
		rc = hc_strata_alloc(&s->strata, s->stratum_of, u->m, s->nlabels, &err);
	hc_sectors_free(map);
	if (rc)
		return cli_fail(cmd, &err);
fill:
	su->map = s->map;
	su->stratum_of = s->stratum_of;
	su->nstrata = s->nlabels;
	su->unmapped = s->unmapped;
	su->strata = s->strata;
	su->mode = s->proportional ? SAMPLER_STRATA_PROPORTIONAL : SAMPLER_STRATA_CAP;
	su->per_stratum_max = s->per_stratum_max;
	return HC_OK;
}
