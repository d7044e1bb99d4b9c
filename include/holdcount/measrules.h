/*
 * measrules.h - the rules on the measures beyond the sd (rules.h's
 * es95-near-floor, es99-near-floor, drawdown-near-floor and
 * alexeev-tapon-es), run on a data source: random portfolios drawn in
 * stages, each with its own return series through the measures
 * (measures.h), from complete series (sampler.h) or from a history with
 * gaps read period by period (periodic.h); and their bootstrap interval,
 * each replicate re-sampling the resampled history.
 *
 * Definitions and sources: docs/enough.md ("Rules on the measures").
 */
#ifndef HOLDCOUNT_MEASRULES_H
#define HOLDCOUNT_MEASRULES_H

#include <stddef.h>

#include "holdcount/bootstrap.h"
#include "holdcount/error.h"
#include "holdcount/rules.h"
#include "holdcount/sampler.h"
#include "holdcount/source.h"

#ifdef __cplusplus
extern "C" {
#endif

/*
 * The measure rules cfg selects (RULES_MEASURE_MASK), by sampling src:
 * sizes 1..K, K growing as hc_rules_sampled's stages do
 * (RULES_SAMPLED_FIRST_K x RULES_SAMPLED_GROWTH^j, up to M), until every
 * selected measure rule is met or undefined.  src is complete series
 * (HC_SOURCE_SERIES without gaps) or a ragged history (HC_SOURCE_RAGGED:
 * hc_periodic_sample's portfolios, the universe's value that of every
 * security alive each period); anything else is HC_EUSAGE.  so gives
 * paths, seed, threads and progress (first stage only); its strata are
 * ignored (unconstrained draws) and its measures replaced by the rules'.
 * res has room for 4; *nres gets how many were filled, in enum order;
 * *largest (may be NULL) the last K.  Costs one sampler run a stage with
 * the measures (up to three times the sd's time, K x sizes x 11 doubles).
 */
int hc_measrules_run(const struct rules_config *cfg, const struct hc_source *src,
		     const struct sampler_options *so, struct rule_result *res, size_t *nres,
		     size_t *largest, struct hc_error *err);

/*
 * The percentile interval of the measure rules among res[0..nres-1]: per
 * replicate the periods are drawn as bootstrap.h draws them
 * (hc_bootstrap_indices with bo's kind, seed and block length, which must
 * be set), the resampled history is sampled afresh by hc_measrules_run
 * with so->paths paths and the replicate's seed (hc_rules_replicate_seed),
 * and its counts set the interval (hc_rules_set_interval).  A ragged
 * history's replicate is re-summed (hc_periodic_alloc, O(M T)).  Costs B
 * such runs; bo->progress after each replicate.
 */
int hc_measrules_bootstrap(const struct rules_config *cfg, const struct hc_source *src,
			   const struct bootstrap_options *bo, const struct sampler_options *so,
			   struct rule_result *res, size_t nres, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
