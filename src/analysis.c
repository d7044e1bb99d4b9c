/*
 * analysis.c - progress and stratified draws shared by the analyses
 * (analysis.h).
 */
#include "holdcount/analysis.h"

#include <stdio.h>

void hc_progress_begin(const struct hc_progress *p, const char *stage, const char *label, const char *unit)
{
	if (p && p->begin)
		p->begin(p->ctx, stage, label, unit);
}

void hc_progress_end(const struct hc_progress *p)
{
	if (p && p->end)
		p->end(p->ctx);
}

void hc_strata_use_apply(const struct hc_strata_use *su, struct sampler_options *so)
{
	if (!su || !su->map)
		return;
	so->strata = su->stratum_of;
	so->nstrata = su->nstrata;
	so->stratify = su->mode;
	so->per_stratum_max = su->per_stratum_max;
}

int hc_strata_use_report(struct report *r, const struct hc_strata_use *su)
{
	char text[160];
	int rc = 0;

	if (!su || !su->map)
		return hc_report_add_none(r, "strata", "stratified draws") ? HC_ENOMEM : HC_OK;
	if (su->mode == SAMPLER_STRATA_PROPORTIONAL)
		snprintf(text, sizeof text, "proportional to stratum size (largest remainder), uniform within strata");
	else
		snprintf(text, sizeof text, "uniform over portfolios with at most %zu in any stratum",
			 su->per_stratum_max);
	rc |= hc_report_add_text(r, "strata", "stratified draws", text);
	rc |= hc_report_add_text(r, "strata_map", "strata map", su->map);
	rc |= hc_report_add_int(r, "strata_count", "strata", (long long)su->nstrata);
	rc |= hc_report_add_int(r, "strata_unmapped", "securities not in the map", (long long)su->unmapped);
	if (su->mode == SAMPLER_STRATA_CAP)
		rc |= hc_report_add_int(r, "per_stratum_max", "at most per stratum", (long long)su->per_stratum_max);
	return rc ? HC_ENOMEM : HC_OK;
}
