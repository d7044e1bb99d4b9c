/*
 * analysis.h - what every analysis call shares: progress of its long steps,
 * and stratified draws.
 *
 * An analysis (curverun.h, describe.h, enough.h, audit.h, rolling.h,
 * reportset.h) takes a data source (source.h), its own option struct, and
 * a struct hc_progress; it returns a result and the report (report.h) every
 * writer renders.  It never prints: the caller's progress callbacks show
 * what runs, and their update's return value stops it (HC_EINTERRUPT).
 */
#ifndef HOLDCOUNT_ANALYSIS_H
#define HOLDCOUNT_ANALYSIS_H

#include <stddef.h>

#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/sampler.h"
#include "holdcount/strata.h"

#ifdef __cplusplus
extern "C" {
#endif

/*
 * The long steps of an analysis, one at a time.  begin(ctx, stage, label,
 * unit): a step starts; stage is a sentence naming it ("bootstrap of the
 * exact rules (1000 replicates)") or NULL, label and unit name its counter
 * ("bootstrap", "replicates") or are NULL for a step with none.
 * update(ctx, done, total): the sampler's progress callback (sampler.h);
 * nonzero stops the analysis with HC_EINTERRUPT.  end(ctx): the counted
 * step is over.  Every member may be NULL; all calls come from one thread.
 */
struct hc_progress {
	void (*begin)(void *ctx, const char *stage, const char *label, const char *unit);
	sampler_progress_fn update;
	void (*end)(void *ctx);
	void *ctx;
};

/* Calls the members that are set (for analyses and their callers). */
void hc_progress_begin(const struct hc_progress *p, const char *stage, const char *label, const char *unit);
void hc_progress_end(const struct hc_progress *p);

/*
 * Random portfolios spread across strata (strata.h), for the analyses that
 * draw them: which security is in which stratum (from a sector map,
 * sectors.h), and how to spread.  map NULL: unconstrained draws.
 */
struct hc_strata_use {
	const char *map;              /* the map's file, for the report; NULL = no strata */
	const size_t *stratum_of;     /* m stratum indices, in the source's security order */
	size_t nstrata;
	size_t unmapped;              /* securities the map lacks (one more stratum) */
	const struct strata *strata;  /* hc_strata_alloc of stratum_of */
	int mode;                     /* SAMPLER_STRATA_PROPORTIONAL or SAMPLER_STRATA_CAP */
	size_t per_stratum_max;       /* for SAMPLER_STRATA_CAP */
};

/* Point so's strata fields at su (nothing when su or su->map is NULL). */
void hc_strata_use_apply(const struct hc_strata_use *su, struct sampler_options *so);

/* The fields strata, strata_map, strata_count, strata_unmapped,
 * per_stratum_max (a none field "strata" when su is NULL or has no map).
 * HC_OK or HC_ENOMEM. */
int hc_strata_use_report(struct report *r, const struct hc_strata_use *su);

#ifdef __cplusplus
}
#endif

#endif
