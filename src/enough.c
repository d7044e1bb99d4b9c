/*
 * enough.c - every selected rule on a data source, with the bootstrap
 * interval, and the report `holdcount enough` prints (enough.h).
 *
 * The rules and their sources are in docs/enough.md; the arithmetic is
 * rules.h's and bootstrap.h's, this file runs the steps in order.
 */
#include "holdcount/enough.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/bootstrap.h"
#include "holdcount/memory.h"
#include "holdcount/periodic.h"
#include "holdcount/sampler.h"
#include "holdcount/strata.h"

void hc_enough_options_init(struct hc_enough_options *opt)
{
	memset(opt, 0, sizeof *opt);
	hc_rules_config_init(&opt->rules);
	opt->paths = ENOUGH_DEFAULT_PATHS;
	opt->seed = ENOUGH_DEFAULT_SEED;
	opt->bootstrap = BOOTSTRAP_DEFAULT_REPLICATES;
	opt->bootstrap_kind = BOOTSTRAP_BLOCK;
	opt->bootstrap_paths = ENOUGH_DEFAULT_BOOTSTRAP_PATHS;
}

void hc_enough_free(struct hc_enough *e)
{
	if (!e)
		return;
	hc_report_free(e->report);
	hc_measures_curve_free(e->measures);
	hc_free(e);
}

static int strata_given(const struct hc_enough_options *opt)
{
	return opt->strata && opt->strata->map;
}

/* ---- the report ----------------------------------------------------------- */

static int add_source(struct report *r, const struct hc_enough *e, const struct hc_source *src)
{
	const struct universe *u = src ? src->u : NULL;
	int bad = 0;

	if (u) {
		bad |= hc_report_add_text(r, "universe", "universe", u->source ? u->source : "-");
		bad |= hc_report_add_int(r, "securities", "securities", (long long)e->m);
		bad |= hc_report_add_int(r, "securities_dropped", "securities dropped", (long long)u->ndropped);
		bad |= hc_report_add_int(r, "periods", "periods", (long long)u->t);
		if (src->kind == HC_SOURCE_RAGGED) {
			bad |= hc_report_add_text(r, "input", "input", "return history with gaps, read period by period");
			bad |= hc_source_report_treatment(src, r);
		} else if (u->has_missing)
			bad |= hc_report_add_text(r, "input", "input", src->psd.repaired
				? "return history with gaps; pairwise-complete covariances, repaired to the nearest "
				  "positive semi-definite matrix, for every rule but shortfall"
				: e->paths ? "return history with gaps; pairwise-complete covariances, from which the band "
					    "rule draws its portfolios"
				: "return history with gaps; pairwise-complete covariances");
	} else if (src) {
		bad |= hc_report_add_text(r, "universe", "universe", src->name);
		bad |= hc_report_add_text(r, "input", "input", "covariance matrix");
		bad |= hc_report_add_int(r, "securities", "securities", (long long)e->m);
	} else if (e->m)
		bad |= hc_report_add_int(r, "securities", "securities", (long long)e->m);
	else
		bad |= hc_report_add_text(r, "securities", "securities", "unbounded");
	return bad;
}

static int add_fields(struct report *r, const struct hc_enough *e, const struct hc_source *src)
{
	double p = e->periods_per_year, floor_var = e->cbar * p;
	double uvar = src && src->kind == HC_SOURCE_RAGGED ? src->per->curve.a * p
		    : e->m ? (e->vbar / e->m + (1 - 1.0 / e->m) * e->cbar) * p : floor_var;
	int sd_style = e->annualised ? REPORT_STYLE_PERCENT : REPORT_STYLE_PLAIN;
	int bad = add_source(r, e, src);

	bad |= hc_report_add_scale(r, p, e->annualised);
	bad |= hc_report_add_real(r, "average_variance", "average variance", e->vbar * p, REPORT_STYLE_SCI);
	bad |= hc_report_add_real(r, "average_covariance", "average covariance", e->cbar * p, REPORT_STYLE_SCI);
	bad |= hc_report_add_real(r, "floor_sd", "floor sd", floor_var > 0 ? sqrt(floor_var) : NAN, sd_style);
	bad |= hc_report_add_real(r, "universe_sd", "equal-weight universe sd", uvar > 0 ? sqrt(uvar) : NAN, sd_style);
	if (e->paths) {
		bad |= hc_report_add_int(r, "paths", "sampled portfolios a size", (long long)e->paths);
		bad |= hc_report_add_int(r, "sampled_sizes", "sampled sizes 1 to", (long long)e->sampled_sizes);
	}
	if (e->bootstrapped) {
		bad |= hc_report_add_text(r, "bootstrap", "bootstrap", hc_bootstrap_kind_name(e->kind));
		bad |= hc_report_add_int(r, "replicates", "bootstrap replicates", (long long)e->replicates);
		bad |= hc_report_add_int(r, "block_length", "block length (periods)", (long long)e->block_length);
	} else
		bad |= hc_report_add_none(r, "bootstrap", "bootstrap");
	if ((src && src->u) || e->paths) {
		char seed[32];

		snprintf(seed, sizeof seed, "%llu", (unsigned long long)e->seed);
		bad |= hc_report_add_text(r, "seed", "seed", seed);
	}
	if (src && src->kind != HC_SOURCE_RAGGED)   /* a ragged source's matrix serves funds only */
		bad |= hc_source_report_psd(src, r);
	return bad ? HC_ENOMEM : HC_OK;
}

static int add_notes(struct report *r, const struct hc_enough *e, const struct hc_source *src)
{
	char text[300];
	int bad = 0;

	if (e->bootstrapped) {
		snprintf(text, sizeof text,
			 "count p05/p50/p95: percentiles of each rule's count over %zu %s-bootstrap replicates of "
			 "the periods (block length %zu); \"not met\" where the percentile reaches replicates "
			 "in which the rule is not met%s",
			 e->replicates, hc_bootstrap_kind_name(e->kind), e->block_length,
			 e->sampled_bootstrapped ? "" : "; sampled rules (band, shortfall) have an interval only with --bootstrap-sampled");
		bad |= hc_report_add_note(r, text);
	} else if (e->no_interval)
		bad |= hc_report_add_note(r, e->no_interval);
	if (src && src->kind == HC_SOURCE_RAGGED && e->bootstrapped)
		bad |= hc_report_add_note(r, "ragged history: each replicate of the exact rules sums the drawn "
				       "periods' cross-sections (O(T) a replicate) with every security centred on its "
				       "full-sample mean, not re-centred on the replicate; --bootstrap-sampled re-sums "
				       "and re-centres each replicate before sampling it");
	if (!e->annualised)
		bad |= hc_report_add_note(r, "not annualised: the rule thresholds (--marginal, --te-budget, --premium, "
				       "--holding-cost) are compared on the scale of the inputs, not as yearly figures");
	bad |= hc_report_add_cautions(r);
	return bad ? HC_ENOMEM : HC_OK;
}

/* Fields, strata (not from summary statistics), the rules table, notes. */
/* The table "measures": one row a count some rule chose, the rules that
 * chose it, and the measures' columns (measures.h). */
static int measures_table(struct report *r, const struct hc_enough *e)
{
	struct report_table *t;
	char names[RULES_COUNT * 24];
	size_t j, i;

	if (!e->measures)
		return HC_OK;
	t = hc_report_add_table(r, "measures", "measures of random portfolios at the counts the rules chose");
	if (!t || hc_report_table_add_column(t, "n", "holdings", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "rules", "rules", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (j = 0; j < e->measures->npoints; j++) {
		names[0] = '\0';
		for (i = 0; i < e->nrules; i++)
			if (e->rules[i].met && e->rules[i].count == e->measures->sizes[j])
				snprintf(names + strlen(names), sizeof names - strlen(names), "%s%s",
					 names[0] ? " " : "", e->rules[i].name);
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, j, 1, names))
			return HC_ENOMEM;
		hc_report_table_set_int(t, j, 0, (long long)e->measures->sizes[j]);
	}
	return hc_measures_report(e->measures, r, t) == HC_OK ? HC_OK : HC_ENOMEM;
}

/* The measures at the distinct counts the rules met, ascending, from
 * opt->paths random portfolios of the series (a run of its own, after the
 * rules, with their seed). */
static int measure_counts(struct hc_enough *e, const struct hc_source *src, const struct hc_enough_options *opt,
			  struct hc_error *err)
{
	struct sampler_options so;
	struct sampler_result *res = NULL;
	size_t sizes[RULES_COUNT], n = 0, i, j;
	int rc;

	for (i = 0; i < e->nrules; i++) {
		if (!e->rules[i].met)
			continue;
		for (j = n; j > 0 && sizes[j - 1] > e->rules[i].count; j--)
			sizes[j] = sizes[j - 1];
		if (j > 0 && sizes[j - 1] == e->rules[i].count) {
			memmove(sizes + j, sizes + j + 1, (n - j) * sizeof *sizes);
			continue;
		}
		sizes[j] = e->rules[i].count;
		n++;
	}
	if (n == 0)
		return HC_OK;
	hc_sampler_options_init(&so);
	so.paths = opt->paths;
	so.seed = opt->seed;
	so.threads = opt->threads;
	so.measures = opt->measures;
	so.progress = opt->progress.update;
	so.progress_ctx = opt->progress.ctx;
	hc_progress_begin(&opt->progress, "measures at the chosen counts", "sampling", "paths");
	rc = hc_sampler_run(&res, src, sizes, n, &so, err);
	hc_progress_end(&opt->progress);
	if (rc == HC_OK)
		rc = hc_measures_summarise(&e->measures, res->measures_value, res->paths, sizes, n, opt->measures,
					   res->universe_measures, e->periods_per_year, err);
	hc_sampler_result_free(res);
	return rc;
}

static int build_report(struct hc_enough *e, const struct hc_source *src,
			const struct hc_enough_options *opt, struct hc_error *err)
{
	struct report *r = hc_report_alloc();

	if (!r || add_fields(r, e, src) || (src && hc_strata_use_report(r, opt->strata)) ||
	    hc_rules_report(r, e->rules, e->nrules, err) || measures_table(r, e) || add_notes(r, e, src)) {
		hc_report_free(r);
		return hc_error(err, HC_ENOMEM, "out of memory building the report");
	}
	e->report = r;
	return HC_OK;
}

/* ---- the steps ---------------------------------------------------------------- */

static int evaluate(struct hc_enough *e, const struct hc_enough_options *opt, struct hc_error *err)
{
	struct rules_input in;

	memset(&in, 0, sizeof in);
	in.vbar = e->vbar;
	in.cbar = e->cbar;
	in.m = e->m;
	in.periods_per_year = e->periods_per_year;
	return hc_rules_evaluate(&opt->rules, &in, e->rules, &e->nrules, err);
}

/* The band and shortfall rules by sampling (hc_rules_sampled stops at the
 * smallest stage of sizes that settles them) src's series, or (band only)
 * its matrix; their results replace the "needs sampled portfolios"
 * placeholders that hc_rules_evaluate left. */
static int run_sampled(struct hc_enough *e, const struct hc_source *src,
		       const struct hc_enough_options *opt, struct hc_error *err)
{
	struct rules_config band = opt->rules;
	const struct hc_strata_use *su = strata_given(opt) && !hc_source_matrix(src) ? opt->strata : NULL;
	struct sampler_options so;
	struct rule_result sr[2];
	size_t n = 0, k, j;
	int rc;

	hc_sampler_options_init(&so);
	so.paths = opt->paths;
	so.seed = opt->seed;
	so.threads = opt->threads;
	so.periods_per_year = e->periods_per_year;
	hc_strata_use_apply(su, &so);
	hc_progress_begin(&opt->progress, "sampling random portfolios for the band and shortfall rules",
			  "sampling", "paths");
	so.progress = opt->progress.update;
	so.progress_ctx = opt->progress.ctx;
	band.selected &= ~RULES_FLAG(RULES_SHORTFALL);
	rc = hc_rules_sampled(hc_source_matrix(src) ? &band : &opt->rules, src, &so, e->cbar, sr, &n,
			      &e->sampled_sizes, err);
	hc_progress_end(&opt->progress);
	if (rc)
		return rc;
	for (k = 0; k < n; k++)
		for (j = 0; j < e->nrules; j++)
			if (e->rules[j].rule == sr[k].rule)
				e->rules[j] = sr[k];
	e->paths = opt->paths;
	e->seed = opt->seed;
	if (su && su->mode == SAMPLER_STRATA_CAP) {
		/* Past sum_s min(K, m_s) no portfolio meets the cap: say so. */
		size_t top = hc_strata_cap_most(su->strata, su->per_stratum_max);

		for (j = 0; j < e->nrules; j++)
			if ((RULES_FLAG(e->rules[j].rule) & RULES_SAMPLED_MASK) && e->rules[j].defined && !e->rules[j].met)
				snprintf(e->rules[j].note, sizeof e->rules[j].note,
					 "not met up to %zu holdings, the most with at most %zu in every stratum",
					 top, su->per_stratum_max);
	}
	return HC_OK;
}

static int run_bootstrap(struct hc_enough *e, const struct universe *u,
			 const struct hc_enough_options *opt, struct hc_error *err)
{
	const struct rules_config *cfg = &opt->rules;
	struct bootstrap_base *b = NULL;
	struct bootstrap_result *br = NULL;
	struct bootstrap_options bo;
	char what[96];
	int rc;

	hc_bootstrap_options_init(&bo);
	bo.replicates = opt->bootstrap;
	bo.kind = opt->bootstrap_kind;
	bo.block_length = opt->block_length;
	bo.seed = opt->seed;
	bo.threads = opt->threads;
	rc = hc_bootstrap_base_alloc(&b, u, err);
	if (rc == HC_OK) {
		snprintf(what, sizeof what, "bootstrap of the exact rules (%zu replicates)", opt->bootstrap);
		hc_progress_begin(&opt->progress, what, "bootstrap", "replicates");
		bo.progress = opt->progress.update;
		bo.progress_ctx = opt->progress.ctx;
		rc = hc_bootstrap_run(&br, b, &bo, err);
		hc_progress_end(&opt->progress);
	}
	if (rc == HC_OK)
		rc = hc_rules_bootstrap_exact(cfg, br->vbar, br->cbar, br->replicates, u->m,
					   u->periods_per_year, e->rules, e->nrules, err);
	if (rc == HC_OK) {
		e->bootstrapped = 1;
		e->replicates = br->replicates;
		e->block_length = br->block_length;
		e->kind = br->kind;
	}
	if (rc == HC_OK && opt->bootstrap_sampled && (cfg->selected & RULES_SAMPLED_MASK)) {
		struct sampler_options so;

		hc_sampler_options_init(&so);
		so.paths = opt->bootstrap_paths;
		so.threads = opt->threads;
		so.periods_per_year = u->periods_per_year;
		hc_strata_use_apply(strata_given(opt) ? opt->strata : NULL, &so);
		hc_progress_begin(&opt->progress, "bootstrap of the sampled rules", "sampled bootstrap", "replicates");
		bo.progress = opt->progress.update;
		bo.progress_ctx = opt->progress.ctx;
		rc = hc_rules_bootstrap_sampled(cfg, u, b, &bo, &so, e->rules, e->nrules, err);
		hc_progress_end(&opt->progress);
		e->sampled_bootstrapped = rc == HC_OK;
	}
	hc_bootstrap_result_free(br);
	hc_bootstrap_base_free(b);
	return rc;
}

/* A covariance matrix: the exact rules from its averages and the band rule
 * from random portfolios drawn from it; no periods, so no shortfall rule
 * and no interval. */
static int run_matrix(struct hc_enough *e, const struct hc_source *src,
		      const struct hc_enough_options *opt, struct hc_error *err)
{
	int rc;

	e->no_interval = "no interval: a covariance matrix has no periods to resample";
	if ((rc = evaluate(e, opt, err)))
		return rc;
	if (opt->rules.selected & RULES_FLAG(RULES_BAND))
		rc = run_sampled(e, src, opt, err);
	return rc;
}

/* Every selected rule on a return history: exact, sampled, bootstrap.
 * With gaps left (--missing pairwise) the band rule draws from the
 * pairwise-complete covariances. */
static int run_series(struct hc_enough *e, const struct hc_source *src,
		      const struct hc_enough_options *opt, struct hc_error *err)
{
	const struct universe *u = src->u;
	const struct rules_config *cfg = &opt->rules;
	int rc;

	e->seed = opt->seed;
	if ((rc = evaluate(e, opt, err)))
		return rc;
	if ((cfg->selected & RULES_SAMPLED_MASK) && u->has_missing) {
		for (size_t j = 0; j < e->nrules; j++)
			if (e->rules[j].rule == RULES_SHORTFALL)
				snprintf(e->rules[j].note, sizeof e->rules[j].note,
					 "needs complete data: a portfolio's return over time needs every member's "
					 "return in every period");
		if ((cfg->selected & RULES_FLAG(RULES_BAND)) && hc_source_matrix(src) &&
		    (rc = run_sampled(e, src, opt, err)))
			return rc;
	} else if (cfg->selected & RULES_SAMPLED_MASK) {
		if ((rc = run_sampled(e, src, opt, err)))
			return rc;
	}
	if (opt->bootstrap == 0)
		e->no_interval = "no interval: --bootstrap 0";
	else if (u->has_missing)
		e->no_interval = "no interval: the bootstrap resamples whole periods and needs complete data";
	else
		rc = run_bootstrap(e, u, opt, err);
	return rc;
}

/* A ragged history (HC_SOURCE_RAGGED): every exact rule on the per-period
 * curve (periodic.h), band and shortfall from ragged random portfolios in
 * stages, the interval of the exact rules from O(T) replicates and, with
 * bootstrap_sampled, of the sampled ones from re-summed replicates. */
static int run_ragged(struct hc_enough *e, const struct hc_source *src,
		      const struct hc_enough_options *opt, struct hc_error *err)
{
	const struct hc_periodic *p = src->per;
	const struct rules_config *cfg = &opt->rules;
	struct bootstrap_options bo;
	struct sampler_options so;
	struct rule_result sr[2];
	char what[96];
	size_t j, k;
	int rc = HC_OK;

	e->seed = opt->seed;
	if ((rc = evaluate(e, opt, err)))
		return rc;
	for (j = 0; j < e->nrules && rc == HC_OK; j++)
		if (RULES_FLAG(e->rules[j].rule) & RULES_EXACT_MASK)
			rc = hc_periodic_rule(cfg, e->rules[j].rule, &p->curve, src->periods_per_year, &e->rules[j], err);
	if (rc)
		return rc;
	hc_sampler_options_init(&so);
	so.paths = opt->paths;
	so.seed = opt->seed;
	so.threads = opt->threads;
	so.periods_per_year = src->periods_per_year;
	if (cfg->selected & RULES_SAMPLED_MASK) {
		hc_progress_begin(&opt->progress, "sampling random portfolios for the band and shortfall rules",
				  "sampling", "paths");
		so.progress = opt->progress.update;
		so.progress_ctx = opt->progress.ctx;
		rc = hc_periodic_rules_sampled(cfg, p, src->u, &so, sr, &e->sampled_sizes, err);
		hc_progress_end(&opt->progress);
		if (rc)
			return rc;
		for (k = 0; k < 2; k++)
			for (j = 0; j < e->nrules; j++)
				if (e->rules[j].rule == (k == 0 ? RULES_BAND : RULES_SHORTFALL) &&
				    (cfg->selected & RULES_FLAG(e->rules[j].rule)))
					e->rules[j] = sr[k];
		e->paths = opt->paths;
	}
	if (opt->bootstrap == 0) {
		e->no_interval = "no interval: --bootstrap 0";
		return HC_OK;
	}
	hc_bootstrap_options_init(&bo);
	bo.replicates = opt->bootstrap;
	bo.kind = opt->bootstrap_kind;
	bo.block_length = opt->block_length;
	bo.seed = opt->seed;
	bo.threads = opt->threads;
	snprintf(what, sizeof what, "bootstrap of the exact rules (%zu replicates)", opt->bootstrap);
	hc_progress_begin(&opt->progress, what, "bootstrap", "replicates");
	bo.progress = opt->progress.update;
	bo.progress_ctx = opt->progress.ctx;
	rc = hc_periodic_bootstrap(cfg, p, &bo, src->periods_per_year, e->rules, e->nrules, err);
	hc_progress_end(&opt->progress);
	if (rc)
		return rc;
	e->bootstrapped = 1;
	e->replicates = bo.replicates;
	e->block_length = bo.block_length ? bo.block_length : hc_bootstrap_default_block_length(p->t);
	e->kind = bo.kind;
	if (opt->bootstrap_sampled && (cfg->selected & RULES_SAMPLED_MASK)) {
		so.paths = opt->bootstrap_paths;
		so.progress = NULL;
		hc_progress_begin(&opt->progress, "bootstrap of the sampled rules", "sampled bootstrap", "replicates");
		bo.progress = opt->progress.update;
		bo.progress_ctx = opt->progress.ctx;
		rc = hc_periodic_bootstrap_sampled(cfg, src->u, &bo, &so, e->rules, e->nrules, err);
		hc_progress_end(&opt->progress);
		e->sampled_bootstrapped = rc == HC_OK;
	}
	return rc;
}

static int check(const struct hc_source *src, const struct hc_enough_options *opt, struct hc_error *err)
{
	const struct rules_config *cfg = &opt->rules;

	if (opt->measures && opt->paths == 0)
		return hc_error(err, HC_EUSAGE, "--measures summarises random portfolios: it needs --paths above 0");
	if (opt->measures && !hc_source_has_series(src))
		return hc_error(err, HC_EUSAGE, "--measures needs each portfolio's return series: complete return "
				"series, not %s", src->kind == HC_SOURCE_MATRIX ? "a covariance matrix"
				: src->kind == HC_SOURCE_RAGGED ? "a history with gaps read period by period (--missing "
				"alive); --missing complete leaves out the securities with gaps"
				: "a history with gaps under --missing pairwise");
	if (strata_given(opt) && !(cfg->selected & RULES_SAMPLED_MASK))
		return hc_error(err, HC_EUSAGE, "--strata applies to the sampled rules (band, shortfall), and none is chosen");
	if (opt->paths == 0 && (cfg->selected & RULES_SAMPLED_MASK))
		return hc_error(err, HC_EUSAGE, "--paths 0 leaves the band and shortfall rules nothing to read: choose --rules exact");
	if (src->kind == HC_SOURCE_MATRIX) {
		if (cfg->selected & RULES_FLAG(RULES_SHORTFALL))
			return hc_error(err, HC_EUSAGE, "the shortfall rule needs return series: it compounds each "
					"portfolio's returns over the periods, and a covariance matrix has none");
		if (strata_given(opt))
			return hc_error(err, HC_EUSAGE, "--strata draws from return series, not from a covariance matrix");
	} else if (src->kind == HC_SOURCE_RAGGED && strata_given(opt))
		return hc_error(err, HC_EUSAGE, "--strata draws from complete return series, and '%s' has gaps: "
				"--missing complete keeps only the securities with none", src->name ? src->name : "");
	else if (src->u->has_missing && strata_given(opt))
		return hc_error(err, HC_EUSAGE, "--strata draws from complete return series, and '%s' has gaps "
				"under --missing pairwise", src->name ? src->name : "");
	return HC_OK;
}

int hc_enough_run(struct hc_enough **out, const struct hc_source *src,
		  const struct hc_enough_options *opt, struct hc_error *err)
{
	struct hc_enough *e;
	struct moments mo;
	int rc;

	*out = NULL;
	if ((rc = check(src, opt, err)))
		return rc;
	if (opt->moments)
		mo = *opt->moments;
	else if ((rc = hc_moments_from_source(&mo, src, err)))
		return rc;
	if (!(e = hc_calloc(1, sizeof *e)))
		return hc_error(err, HC_ENOMEM, "out of memory");
	e->vbar = mo.average_variance;
	e->cbar = mo.average_covariance;
	e->m = mo.m;
	e->periods_per_year = src->periods_per_year;
	e->annualised = src->annualised;
	rc = src->kind == HC_SOURCE_MATRIX ? run_matrix(e, src, opt, err)
	     : src->kind == HC_SOURCE_RAGGED ? run_ragged(e, src, opt, err) : run_series(e, src, opt, err);
	if (rc == HC_OK && opt->measures)
		rc = measure_counts(e, src, opt, err);
	if (rc == HC_OK)
		rc = build_report(e, src, opt, err);
	if (rc) {
		hc_enough_free(e);
		return rc;
	}
	*out = e;
	return HC_OK;
}

int hc_enough_summary(struct hc_enough **out, double vbar, double cbar, size_t m,
		      double periods_per_year, const struct hc_enough_options *opt,
		      struct hc_error *err)
{
	struct hc_enough *e;
	struct moments mo;
	int rc;

	*out = NULL;
	/* The same checks as `formula` (c-bar at most v-bar, c-bar at least
	 * -v-bar/(M-1), M not 1), by the same function. */
	if ((rc = hc_moments_from_summary(&mo, vbar, cbar, m, err)))
		return rc;
	if (opt->rules.selected & RULES_SAMPLED_MASK)
		return hc_error(err, HC_EUSAGE, "the band and shortfall rules need a universe file, not summary statistics");
	if (opt->measures)
		return hc_error(err, HC_EUSAGE, "--measures needs each portfolio's return series: a universe file, "
				"not summary statistics");
	if (!(periods_per_year >= 0) || isinf(periods_per_year))
		return hc_error(err, HC_EUSAGE, "periods per year must be positive, found %g", periods_per_year);
	if (!(e = hc_calloc(1, sizeof *e)))
		return hc_error(err, HC_ENOMEM, "out of memory");
	e->vbar = vbar;
	e->cbar = cbar;
	e->m = m;
	e->annualised = periods_per_year > 0;
	e->periods_per_year = periods_per_year > 0 ? periods_per_year : 1.0;
	e->no_interval = "no interval: summary statistics have no periods to resample";
	rc = evaluate(e, opt, err);
	if (rc == HC_OK)
		rc = build_report(e, NULL, opt, err);
	if (rc) {
		hc_enough_free(e);
		return rc;
	}
	*out = e;
	return HC_OK;
}
