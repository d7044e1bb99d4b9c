/*
 * cli_ragged.c - what the commands share for ragged histories (cli.h).
 */
#include "cli.h"

#include <math.h>
#include <stdio.h>

#include "holdcount/periodic.h"
#include "holdcount/universe.h"

int cli_ragged(const struct cli_universe *cu, const struct universe *u)
{
	return u && u->has_missing && cu->missing == CLI_MISSING_ALIVE;
}

int cli_ragged_sums(const char *cmd, const struct universe *u, struct hc_periodic **out)
{
	struct hc_error err;

	hc_error_clear(&err);
	if (hc_periodic_alloc(out, u, 0, u->t, &err) != HC_OK)
		return cli_fail(cmd, &err);
	return HC_OK;
}

int cli_ragged_fields(struct report *r, const struct hc_periodic *p)
{
	if (!p)
		return hc_report_add_text(r, "treatment", "treatment", "complete return series");
	if (hc_report_add_text(r, "treatment", "treatment", CLI_RAGGED_TREATMENT) ||
	    hc_report_add_int(r, "alive_min", "securities alive per period, fewest", (long long)p->alive_min) ||
	    hc_report_add_int(r, "alive_median", "securities alive per period, median", (long long)p->alive_median) ||
	    hc_report_add_int(r, "alive_max", "securities alive per period, most", (long long)p->alive_max) ||
	    hc_report_add_int(r, "securities_complete", "securities with no gap", (long long)p->complete))
		return HC_ENOMEM;
	if (p->m_short &&
	    hc_report_add_int(r, "securities_single_period", "securities observed in one period only (left out)",
			      (long long)p->m_short))
		return HC_ENOMEM;
	return HC_OK;
}
