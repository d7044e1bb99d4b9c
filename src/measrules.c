/*
 * measrules.c - the rules on the measures beyond the sd on a data source,
 * and their bootstrap interval (measrules.h).
 *
 * The rules' arithmetic is rules.c's (hc_rules_measure_near_floor,
 * hc_rules_alexeev_tapon_es); this file draws the portfolios, complete or
 * period by period, in the sampled rules' stages.
 */
#include "holdcount/measrules.h"

#include <string.h>

#include "holdcount/memory.h"
#include "holdcount/periodic.h"
#include "holdcount/universe.h"

#define MEASRULES_MAX 4

/* One stage: sizes 1..k of the complete series src, or of the ragged
 * history (per, u) when per is set. */
static int sample_stage(struct sampler_result **sr, const struct hc_source *src, const struct hc_periodic *per,
			const struct universe *u, const size_t *sizes, size_t k, const struct sampler_options *o,
			struct hc_error *err)
{
	if (per)
		return hc_periodic_sample(sr, per, u, 0, sizes, k, o, err);
	return hc_sampler_run(sr, src, sizes, k, o, err);
}

/* Every selected measure rule on one sampled stage, in enum order. */
static int evaluate_stage(const struct rules_config *cfg, const struct sampler_result *sr,
			  struct rule_result *res, size_t *n, int *done, struct hc_error *err)
{
	int rule, status;

	*n = 0;
	*done = 1;
	for (rule = 0; rule < RULES_COUNT; rule++) {
		if (!(cfg->selected & RULES_MEASURE_MASK & RULES_FLAG(rule)))
			continue;
		status = rule == RULES_ALEXEEV_TAPON_ES ? hc_rules_alexeev_tapon_es(cfg, sr, &res[*n], err)
						       : hc_rules_measure_near_floor(cfg, rule, sr, &res[*n], err);
		if (status != HC_OK)
			return status;
		*done &= res[*n].met || !res[*n].defined;
		(*n)++;
	}
	return HC_OK;
}

static int stages(const struct rules_config *cfg, const struct hc_source *src, const struct hc_periodic *per,
		  const struct universe *u, size_t m, const struct sampler_options *so, struct rule_result *res,
		  size_t *nres, size_t *largest, struct hc_error *err)
{
	struct sampler_options o = *so;
	struct sampler_result *sr = NULL;
	size_t *sizes, k, j;
	int status = HC_OK, done = 0;

	*nres = 0;
	o.measures = hc_rules_measures_needed(cfg->selected);
	o.want_returns = 0;
	o.strata = NULL;
	o.nstrata = 0;
	o.stratify = SAMPLER_STRATA_NONE;
	if (!o.measures || m == 0)
		return HC_OK;
	if (!(sizes = hc_mallocarray(m, sizeof *sizes)))
		return hc_error(err, HC_ENOMEM, "out of memory for %zu sizes", m);
	for (j = 0; j < m; j++)
		sizes[j] = j + 1;
	for (k = RULES_SAMPLED_FIRST_K;; k *= RULES_SAMPLED_GROWTH) {
		if (k > m)
			k = m;
		if ((status = sample_stage(&sr, src, per, u, sizes, k, &o, err)) != HC_OK)
			break;
		status = evaluate_stage(cfg, sr, res, nres, &done, err);
		hc_sampler_result_free(sr);
		sr = NULL;
		o.progress = NULL;   /* the caller's progress follows the first stage only */
		if (status != HC_OK || done || k == m)
			break;
	}
	hc_free(sizes);
	if (status != HC_OK)
		*nres = 0;
	else if (largest)
		*largest = k;
	return status;
}

int hc_measrules_run(const struct rules_config *cfg, const struct hc_source *src,
		     const struct sampler_options *so, struct rule_result *res, size_t *nres,
		     size_t *largest, struct hc_error *err)
{
	*nres = 0;
	if (src->kind == HC_SOURCE_RAGGED)
		return stages(cfg, NULL, src->per, src->u, src->per->m, so, res, nres, largest, err);
	if (!hc_source_has_series(src) || src->u->has_missing)
		return hc_error(err, HC_EUSAGE, "the rules on the measures need each portfolio's return series: "
				"complete series, or a history with gaps read period by period");
	return stages(cfg, src, NULL, src->u, src->u->m, so, res, nres, largest, err);
}

/* One replicate's counts (0 = not met), in the order of the selected measure rules. */
static int replicate(const struct rules_config *cfg, const struct hc_source *src,
		     const struct bootstrap_options *bo, const struct sampler_options *so, size_t rep,
		     size_t *idx, size_t *count, struct hc_error *err)
{
	const struct universe *u = src->u;
	struct universe *ru = NULL;
	struct hc_periodic *rp = NULL;
	struct sampler_options o = *so;
	struct rule_result rr[MEASRULES_MAX];
	size_t n = 0, k;
	int status;

	o.seed = hc_rules_replicate_seed(bo->seed, rep);
	o.progress = NULL;
	status = hc_bootstrap_indices(bo->kind, u->t, bo->block_length, bo->seed, rep, idx, err);
	if (status == HC_OK)
		status = hc_universe_resample(&ru, u, idx, u->t, err);
	if (status == HC_OK && src->kind == HC_SOURCE_RAGGED) {
		if ((status = hc_periodic_alloc(&rp, ru, 0, ru->t, err)) == HC_OK)
			status = stages(cfg, NULL, rp, ru, rp->m, &o, rr, &n, NULL, err);
	} else if (status == HC_OK) {
		struct hc_source rs;

		hc_source_init_series(&rs, ru);
		status = stages(cfg, &rs, NULL, ru, ru->m, &o, rr, &n, NULL, err);
	}
	for (k = 0; status == HC_OK && k < n; k++)
		count[k] = rr[k].met ? rr[k].count : 0;
	hc_periodic_free(rp);
	hc_universe_free(ru);
	return status;
}

int hc_measrules_bootstrap(const struct rules_config *cfg, const struct hc_source *src,
			   const struct bootstrap_options *bo, const struct sampler_options *so,
			   struct rule_result *res, size_t nres, struct hc_error *err)
{
	size_t B = bo->replicates, *idx = NULL, *cnt = NULL, *col = NULL, rep, j, q = 0, nsel = 0, all;
	int rule, status = HC_OK;

	if (B == 0 || B > HC_BOOTSTRAP_MAX_REPLICATES)
		return hc_error(err, HC_EUSAGE, "%zu bootstrap replicates: expected 1 to %u", B, HC_BOOTSTRAP_MAX_REPLICATES);
	if (!bo->block_length)
		return hc_error(err, HC_EUSAGE, "the bootstrap of the measure rules needs its block length set");
	if (src->kind != HC_SOURCE_RAGGED && (!hc_source_has_series(src) || src->u->has_missing))
		return hc_error(err, HC_EUSAGE, "the bootstrap of the measure rules needs return series");
	for (rule = 0; rule < RULES_COUNT; rule++)
		nsel += (cfg->selected & RULES_MEASURE_MASK & RULES_FLAG(rule)) != 0;
	if (nsel == 0)
		return HC_OK;
	if (hc_mul_size(nsel, B, &all) || !(idx = hc_mallocarray(src->u->t, sizeof *idx)) ||
	    !(cnt = hc_calloc(all, sizeof *cnt)) || !(col = hc_mallocarray(B, sizeof *col))) {
		status = hc_error(err, HC_ENOMEM, "out of memory for the bootstrap of the measure rules");
		goto cleanup;
	}
	for (rep = 0; rep < B && status == HC_OK; rep++) {
		status = replicate(cfg, src, bo, so, rep, idx, cnt + rep * nsel, err);
		if (status == HC_OK && bo->progress && bo->progress(bo->progress_ctx, rep + 1, B))
			status = hc_error(err, HC_EINTERRUPT, "the bootstrap of the measure rules stopped after %zu of "
					  "%zu replicates", rep + 1, B);
	}
	for (rule = 0; status == HC_OK && rule < RULES_COUNT; rule++) {
		if (!(cfg->selected & RULES_MEASURE_MASK & RULES_FLAG(rule)))
			continue;
		for (j = 0; j < nres; j++)
			if (res[j].rule == rule && res[j].defined) {
				for (rep = 0; rep < B; rep++)
					col[rep] = cnt[rep * nsel + q];
				hc_rules_set_interval(&res[j], col, B);
			}
		q++;
	}
cleanup:
	hc_free(idx);
	hc_free(cnt);
	hc_free(col);
	return status;
}
