/*
 * curve_run.c - risk by holding count on a data source, exact and sampled,
 * and the report `holdcount curve` prints (curverun.h).
 */
#include "holdcount/curverun.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/covmatrix.h"
#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/periodic.h"
#include "holdcount/sampler.h"
#include "holdcount/strata.h"

void hc_curve_options_init(struct hc_curve_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->paths = CURVE_DEFAULT_PATHS;
	opt->seed = CURVE_DEFAULT_SEED;
}

void hc_curve_result_free(struct hc_curve_result *r)
{
	if (!r)
		return;
	hc_report_free(r->report);
	hc_strata_curve_free(r->strata);
	hc_measures_curve_free(r->measures);
	hc_curve_free(r->full);
	hc_curve_free(r->curve);
	hc_free(r);
}

static void sampler_options(struct sampler_options *so, const struct hc_curve_options *opt, double ppy)
{
	hc_sampler_options_init(so);
	so->paths = opt->paths;
	so->seed = opt->seed;
	so->threads = opt->threads;
	so->periods_per_year = ppy;
	so->progress = opt->progress.update;
	so->progress_ctx = opt->progress.ctx;
}

/* The sampled columns of c: random portfolios at its sizes, and their
 * measures when asked. */
static int sample(const struct hc_source *src, const struct hc_curve_options *opt, struct curve *c,
		  struct hc_measures_curve **mc, const size_t *sizes, size_t nsizes, struct hc_error *err)
{
	struct sampler_options so;
	struct sampler_result *res = NULL;
	int rc;

	sampler_options(&so, opt, c->periods_per_year);
	so.measures = opt->measures;
	hc_progress_begin(&opt->progress, "sampling random portfolios at the curve's counts", "sampling", "paths");
	/* a ragged history: at each period the first min(N, M_t) alive
	 * securities of a random order (periodic.h) */
	rc = src->kind == HC_SOURCE_RAGGED ? hc_periodic_sample(&res, src->per, src->u, 0, sizes, nsizes, &so, err)
					   : hc_sampler_run(&res, src, sizes, nsizes, &so, err);
	hc_progress_end(&opt->progress);
	if (rc == HC_OK)
		rc = hc_sampler_summarise(c, res, err);
	if (rc == HC_OK && opt->measures)
		rc = hc_measures_summarise(mc, res->measures_value, res->paths, sizes, nsizes, opt->measures,
					   res->universe_measures, c->periods_per_year, err);
	if (rc == HC_OK && opt->measures)
		(*mc)->ragged = src->kind == HC_SOURCE_RAGGED;
	hc_sampler_result_free(res);
	if (rc == HC_OK) {
		c->paths = opt->paths;
		c->seed = opt->seed;
	}
	return rc;
}

/* Stratified draws (strata.h) with the same paths and seed; the exact
 * column only for the fixed (proportional) allocation. */
static int sample_strata(const struct hc_source *src, const struct hc_curve_options *opt, const size_t *sizes,
			 size_t nsizes, struct strata_curve **sc, struct hc_error *err)
{
	const struct hc_strata_use *su = opt->strata;
	struct sampler_options so;
	struct sampler_result *res = NULL;
	struct strata_moments *sm = NULL;
	int rc;

	sampler_options(&so, opt, src->periods_per_year);
	hc_strata_use_apply(su, &so);
	hc_progress_begin(&opt->progress, NULL, "stratified sampling", "paths");
	rc = hc_strata_run(&res, src, sizes, nsizes, &so, err);
	hc_progress_end(&opt->progress);
	if (rc == HC_OK && su->mode == SAMPLER_STRATA_PROPORTIONAL)
		rc = hc_strata_moments_from_source(&sm, src, su->strata, err);
	if (rc == HC_OK)
		rc = hc_strata_curve_alloc(sc, res, su->strata, sm, so.stratify, so.per_stratum_max,
					src->periods_per_year, err);
	hc_strata_moments_free(sm);
	hc_sampler_result_free(res);
	return rc;
}

/* Append "a, b, c-d and e" naming the infeasible sizes of sc (runs of
 * consecutive sizes as ranges), at most STRATA_NAMED items then "and N
 * more". */
#define STRATA_NAMED 16
static void left_out_sizes(char *buf, size_t len, const struct strata_curve *sc)
{
	size_t j, items = 0, total = 0, used = strlen(buf);

	for (j = 0; j < sc->npoints; j++)
		if (!sc->points[j].feasible && (j == 0 || sc->points[j - 1].feasible ||
						sc->points[j].n != sc->points[j - 1].n + 1))
			total++;
	for (j = 0; j < sc->npoints && items < STRATA_NAMED; j++) {
		size_t first, last, e = j;
		const char *sep;

		if (sc->points[j].feasible)
			continue;
		while (e + 1 < sc->npoints && !sc->points[e + 1].feasible &&
		       sc->points[e + 1].n == sc->points[e].n + 1)
			e++;
		first = sc->points[j].n;
		last = sc->points[e].n;
		items++;
		sep = items == 1 ? "" : (items == total ? " and " : ", ");
		if (used < len)
			used += (size_t)snprintf(buf + used, len - used, first == last ? "%s%zu" : "%s%zu-%zu",
						 sep, first, last);
		j = e;
	}
	if (items < total && used < len)
		snprintf(buf + used, len - used, " and %zu more", total - items);
}

/* The stratified columns beside the curve's, and what they mean. */
static int add_strata(struct report *r, const struct hc_strata_use *su, const struct strata_curve *sc)
{
	char text[600];
	size_t j, any_out = 0;

	if (hc_strata_use_report(r, su))
		return HC_ENOMEM;
	if (!sc)
		return HC_OK;
	if (hc_strata_report_columns(sc, r->tables[r->ntables - 1]))
		return HC_ENOMEM;
	for (j = 0; j < sc->npoints; j++)
		any_out |= !sc->points[j].feasible;
	if (any_out) {
		/* The true maximum, sum_s min(k, m_s), not the largest grid size
		 * that happens to fit under it. */
		snprintf(text, sizeof text, "stratified: no portfolio of more than %zu holdings has at most %zu "
			 "in every stratum (the sum over strata of the smaller of %zu and the stratum's size); "
			 "left out of the stratified columns: ",
			 hc_strata_cap_most(su->strata, sc->per_stratum_max), sc->per_stratum_max,
			 sc->per_stratum_max);
		left_out_sizes(text, sizeof text, sc);
		if (hc_report_add_note(r, text))
			return HC_ENOMEM;
	}
	snprintf(text, sizeof text, "stratified: %s; its z compares the sampled mean with the exact "
		 "stratified expectation%s", sc->mode == SAMPLER_STRATA_PROPORTIONAL
		 ? "the exact column is the expected variance of the fixed allocation"
		 : "the cap draws the allocation at random, so there is no exact column",
		 sc->mode == SAMPLER_STRATA_PROPORTIONAL ? "" : " (none here)");
	return hc_report_add_note(r, text) ? HC_ENOMEM : HC_OK;
}

/* The curve table, with the scale appended as a column so that the CSV,
 * which carries only this table, still says what it is annualised by. */
int hc_curve_add_table(struct report *r, const struct curve *c, int annualised)
{
	struct report_table *t = hc_report_add_table(r, "curve", "risk by holding count");
	size_t i;

	if (!t || hc_curve_report(c, t) != HC_OK ||
	    hc_report_table_add_column(t, "periods_per_year", "per year", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	if (annualised)
		for (i = 0; i < t->nrows; i++)
			hc_report_table_set_real(t, i, t->ncols - 1, c->periods_per_year);
	return HC_OK;
}

static int curve_fields(struct report *r, const struct hc_source *s, const char *input,
			const struct moments *mo, const struct curve *c, const char *reason)
{
	const struct universe *u = s->u;
	char seed[32];

	snprintf(seed, sizeof seed, "%llu", (unsigned long long)c->seed);
	if (hc_report_add_text(r, "source", "source", s->name ? s->name : "") ||
	    hc_report_add_text(r, "input", "input", input) ||
	    hc_report_add_int(r, "securities", "securities kept", (long long)hc_source_m(s)) ||
	    hc_report_add_int(r, "securities_dropped", "securities dropped", (long long)(u ? u->ndropped : 0)) ||
	    (u ? hc_report_add_int(r, "periods", "periods", (long long)u->t)
	       : hc_report_add_none(r, "periods", "periods")) ||
	    hc_report_add_scale(r, c->periods_per_year, s->annualised) ||
	    hc_report_add_real(r, "floor_sd", "floor sd (unbounded universe)",
			    c->floor_variance >= 0 ? sqrt(c->floor_variance) : NAN, REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(r, "universe_sd", "equal-weight universe sd", sqrt(c->universe_variance),
			    REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(r, "average_correlation", "average correlation",
			    mo->has_correlation ? mo->average_correlation : NAN, REPORT_STYLE_FIXED4) ||
	    hc_report_add_int(r, "paths", "random portfolios per count", (long long)c->paths) ||
	    (c->paths ? hc_report_add_text(r, "seed", "seed", seed) : hc_report_add_none(r, "seed", "seed")) ||
	    hc_report_add_text(r, "sampling", "sampling",
			    !c->paths ? "not sampled (--paths 0)"
			    : s->kind == HC_SOURCE_RAGGED
			    ? "a random order of the securities; at each period the portfolio holds the first N alive "
			      "then (all of them when fewer are alive); z compares the sampled mean variance with the "
			      "exact one in Monte Carlo standard errors"
			    : "uniform random subsets without replacement; z compares the sampled mean "
			      "variance with the exact one in Monte Carlo standard errors") ||
	    hc_source_report_treatment(s, r) || hc_datacheck_report_kept(r, s->u ? &s->u->checks : NULL))
		return HC_ENOMEM;
	if (s->kind == HC_SOURCE_RAGGED &&
	    (hc_report_add_text(r, "variance_sd_basis", "sd of var is", HC_CURVE_RAGGED_SPREAD_BASIS) ||
	     (reason && *reason && hc_report_add_text(r, "variance_sd_reason", "sd of var empty because", reason))))
		return HC_ENOMEM;
	return hc_curve_add_table(r, c, s->annualised);
}

static const char *input_text(const struct hc_source *s)
{
	switch (s->kind) {
	case HC_SOURCE_SERIES:
		return "return history";
	case HC_SOURCE_PAIRWISE:
		return s->psd.repaired ? "return history with gaps; its pairwise-complete covariances, repaired to the "
					 "nearest positive semi-definite matrix, give the exact columns and the random portfolios"
		     : s->cm ? "return history with gaps; sampled from its pairwise-complete covariances" : "return history";
	case HC_SOURCE_RAGGED:
		return "return history with gaps, read period by period";
	}
	return "covariance matrix";
}

static struct report_table *curve_table(struct report *r)
{
	size_t i;

	for (i = 0; i < r->ntables; i++)
		if (strcmp(r->tables[i]->key, "curve") == 0)
			return r->tables[i];
	return NULL;
}

static int build(struct hc_curve_result *res, const struct hc_source *src, const struct hc_curve_options *opt)
{
	struct report *r = res->report = hc_report_alloc();

	if (!r || curve_fields(r, src, input_text(src), &res->mo, res->curve, res->spread_reason) ||
	    add_strata(r, opt->strata, res->strata) ||
	    /* a ragged source's matrix (funds only) plays no part in the curve */
	    (src->kind != HC_SOURCE_RAGGED && hc_source_report_psd(src, r)))
		return HC_ENOMEM;
	if (res->measures && hc_measures_report(res->measures, r, curve_table(r)))
		return HC_ENOMEM;
	return hc_report_add_cautions(r);
}

/* First and last observed period of security i; t when it has none. */
static void span(const struct universe *u, size_t i, size_t *first, size_t *last)
{
	const double *x = u->x + i * u->t;
	size_t k;

	*first = *last = u->t;
	for (k = 0; k < u->t; k++)
		if (!isnan(x[k])) {
			if (*first == u->t)
				*first = k;
			*last = k;
		}
}

/* Common observed periods of securities i and j (O(T)). */
static size_t common(const struct universe *u, size_t i, size_t j)
{
	const double *a = u->x + i * u->t, *b = u->x + j * u->t;
	size_t k, n = 0;

	for (k = 0; k < u->t; k++)
		n += !isnan(a[k]) && !isnan(b[k]);
	return n;
}

/*
 * Before O(M^2 T) of products, the pair whose listing spans overlap least:
 * the latest first observation against the earliest last one (when both
 * are the same security, each against the runner-up of the other end).
 * A universe where a security delisted before another listed has no
 * pairwise-complete matrix, and this says so in O(M T).
 */
static int overlap_precheck(const struct universe *u, struct hc_error *err)
{
	size_t i, f, l, i1 = 0, i2 = 0, j1 = 0, j2 = 0, *fst, *lst;
	int rc = HC_OK;

	if (u->m < 2)
		return HC_OK;
	if (!(fst = hc_mallocarray(u->m, sizeof *fst)) || !(lst = hc_mallocarray(u->m, sizeof *lst))) {
		hc_free(fst);
		return hc_error(err, HC_ENOMEM, "out of memory for the listing spans");
	}
	for (i = 0; i < u->m; i++) {
		span(u, i, &f, &l);
		fst[i] = f;
		lst[i] = l;
		if (f == u->t) {
			rc = hc_covmatrix_check_overlap(u, i, i, 0, err);
			goto done;
		}
	}
	/* i1, i2: the two latest first observations; j1, j2: the two earliest last */
	i1 = fst[0] >= fst[1] ? 0 : 1;
	i2 = 1 - i1;
	j1 = lst[0] <= lst[1] ? 0 : 1;
	j2 = 1 - j1;
	for (i = 2; i < u->m; i++) {
		if (fst[i] > fst[i1]) {
			i2 = i1;
			i1 = i;
		} else if (fst[i] > fst[i2]) {
			i2 = i;
		}
		if (lst[i] < lst[j1]) {
			j2 = j1;
			j1 = i;
		} else if (lst[i] < lst[j2]) {
			j2 = i;
		}
	}
	if (i1 != j1)
		rc = hc_covmatrix_check_overlap(u, i1, j1, common(u, i1, j1), err);
	else if ((rc = hc_covmatrix_check_overlap(u, i1, j2, common(u, i1, j2), err)) == HC_OK)
		rc = hc_covmatrix_check_overlap(u, i2, j1, common(u, i2, j1), err);
done:
	hc_free(fst);
	hc_free(lst);
	return rc;
}

int hc_curve_pairwise_spread(struct curve *c, const struct universe *u, struct moments *mo,
			     struct hc_error *err)
{
	int rc;

	if (c->m != u->m)
		return hc_error(err, HC_EUSAGE, "the curve has %zu securities and the history %zu", c->m, u->m);
	if ((rc = overlap_precheck(u, err)) != HC_OK)
		return rc;
	if ((rc = hc_moments_from_universe_route(mo, u, MOMENTS_ROUTE_PAIRWISE, err)) != HC_OK)
		return rc;
	return hc_curve_set_spread(c, mo, err);
}

/*
 * The per-period route keeps the securities observed at least twice
 * (per->member); when it left some of u out, *sub is a view of u cut to
 * those (its own copy of their rows, ids borrowed from u; free sub->x and
 * sub->ids), else sub->x is NULL and u serves as it is.
 */
static int kept_universe(const struct hc_source *src, struct universe *sub, struct hc_error *err)
{
	const struct universe *u = src->u;
	const struct hc_periodic *p = src->per;
	size_t i, n;

	memset(sub, 0, sizeof *sub);
	if (p->m == u->m)
		return HC_OK;
	if (hc_mul_size(p->m, u->t, &n) || !(sub->x = hc_mallocarray(n, sizeof *sub->x)) ||
	    !(sub->ids = hc_mallocarray(p->m ? p->m : 1, sizeof *sub->ids))) {
		hc_free(sub->x);
		sub->x = NULL;
		return hc_error(err, HC_ENOMEM, "out of memory for the %zu securities kept", p->m);
	}
	for (i = 0; i < p->m; i++) {
		memcpy(sub->x + i * u->t, u->x + p->member[i] * u->t, u->t * sizeof *sub->x);
		sub->ids[i] = u->ids ? u->ids[p->member[i]] : NULL;
	}
	sub->m = sub->m_read = p->m;
	sub->t = u->t;
	sub->source = u->source;
	sub->max_bytes = u->max_bytes;
	sub->has_missing = 1;
	sub->periods_per_year = u->periods_per_year;
	return HC_OK;
}

int hc_curve_ragged_spread_moments(const struct hc_source *src, struct moments *mo, char *reason, size_t len,
				   struct hc_error *err)
{
	struct universe sub;
	struct hc_error why;
	int rc;

	memset(mo, 0, sizeof *mo);
	if (len)
		reason[0] = '\0';
	hc_error_clear(&why);
	rc = kept_universe(src, &sub, &why);
	if (rc == HC_OK) {
		const struct universe *v = sub.x ? &sub : src->u;

		if ((rc = overlap_precheck(v, &why)) == HC_OK)
			rc = hc_moments_from_universe_route(mo, v, MOMENTS_ROUTE_PAIRWISE, &why);
	}
	hc_free(sub.x);
	hc_free(sub.ids);
	if (rc == HC_OK)
		return HC_OK;
	memset(mo, 0, sizeof *mo);
	if (rc != HC_EDATA && rc != HC_ENOMEM)
		return hc_error(err, rc, "%s", why.message);
	snprintf(reason, len, "the pairwise-complete covariance matrix it needs cannot be built (%.900s)", why.message);
	return HC_OK;
}

/*
 * A ragged source's variance_sd (hc_curve_ragged_spread_moments).  A
 * universe with no pairwise-complete matrix (a pair without common
 * periods) or one too large for the memory budget leaves the column empty
 * with the reason in res->spread_reason, and the rest of the curve stands.
 */
static int ragged_spread(struct hc_curve_result *res, const struct hc_source *src, struct hc_error *err)
{
	char why[HC_ERROR_MESSAGE_MAX - 16];
	int rc;

	if ((rc = hc_curve_ragged_spread_moments(src, &res->spread_mo, why, sizeof why, err)) != HC_OK)
		return rc;
	if (!res->spread_mo.has_spread) {
		snprintf(res->spread_reason, sizeof res->spread_reason, "not computed: %s", why);
		return HC_OK;
	}
	if ((rc = hc_curve_set_spread(res->curve, &res->spread_mo, err)) != HC_OK)
		return rc;
	res->spread_built = 1;
	return HC_OK;
}

/* The exact curve at every count 1..M, for plots. */
static int full_curve(struct hc_curve_result *res, const struct hc_source *src, struct hc_error *err)
{
	size_t m = hc_source_m(src), i, *sizes = hc_calloc(m, sizeof *sizes);
	int rc;

	if (!sizes)
		return hc_error(err, HC_ENOMEM, "out of memory for the count grid");
	for (i = 0; i < m; i++)
		sizes[i] = i + 1;
	rc = src->kind == HC_SOURCE_RAGGED ? hc_periodic_curve_exact(&res->full, src->per, sizes, m, src->periods_per_year, err)
					   : hc_curve_exact(&res->full, &res->mo, sizes, m, src->periods_per_year, err);
	if (rc == HC_OK && res->spread_built)
		rc = hc_curve_set_spread(res->full, &res->spread_mo, err);
	hc_free(sizes);
	return rc;
}

static int check(const struct hc_source *src, const struct hc_curve_options *opt, struct hc_error *err)
{
	if (opt->measures && opt->paths == 0)
		return hc_error(err, HC_EUSAGE, "--measures summarises random portfolios: it needs --paths above 0");
	/* a ragged history's portfolios have series too, period by period */
	if (opt->measures && !hc_source_has_series(src) && src->kind != HC_SOURCE_RAGGED)
		return hc_error(err, HC_EUSAGE, "--measures needs each portfolio's return series: return series "
				"(complete, or with gaps read period by period under --missing alive), not %s",
				src->kind == HC_SOURCE_MATRIX ? "a covariance matrix"
				: "a history with gaps under --missing pairwise");
	if (!opt->strata || !opt->strata->map)
		return HC_OK;
	if (src->kind == HC_SOURCE_MATRIX)
		return hc_error(err, HC_EUSAGE, "--strata draws from return series, not from a covariance matrix");
	if (opt->paths == 0)
		return hc_error(err, HC_EUSAGE, "--strata draws random portfolios: it needs --paths above 0");
	if (src->kind == HC_SOURCE_RAGGED)
		return hc_error(err, HC_EUSAGE, "--strata draws from complete return series, and '%s' has gaps: "
				"--missing complete keeps only the securities with none", src->name ? src->name : "");
	if (!hc_source_has_series(src))
		return hc_error(err, HC_EUSAGE, "--strata draws from complete return series, and '%s' has gaps "
				"under --missing pairwise", src->name ? src->name : "");
	return HC_OK;
}

int hc_curve_run(struct hc_curve_result **out, const struct hc_source *src, const size_t *sizes, size_t nsizes,
		 const struct hc_curve_options *opt, struct hc_error *err)
{
	struct hc_curve_result *res;
	int rc;

	*out = NULL;
	if ((rc = check(src, opt, err)))
		return rc;
	if (!(res = hc_calloc(1, sizeof *res)))
		return hc_error(err, HC_ENOMEM, "out of memory");
	if (opt->moments)
		res->mo = *opt->moments;
	else
		rc = hc_moments_from_source(&res->mo, src, err);
	if (rc == HC_OK && opt->strata && opt->strata->map)
		rc = sample_strata(src, opt, sizes, nsizes, &res->strata, err);
	/* a ragged history's exact curve from its per-period sums (the
	 * averages give it only up to the fewest alive) */
	if (rc == HC_OK)
		rc = src->kind == HC_SOURCE_RAGGED
		     ? hc_periodic_curve_exact(&res->curve, src->per, sizes, nsizes, src->periods_per_year, err)
		     : hc_curve_exact(&res->curve, &res->mo, sizes, nsizes, src->periods_per_year, err);
	if (rc == HC_OK && src->kind == HC_SOURCE_RAGGED)
		rc = ragged_spread(res, src, err);
	if (rc == HC_OK && opt->paths > 0)
		rc = sample(src, opt, res->curve, &res->measures, sizes, nsizes, err);
	if (rc == HC_OK && opt->full)
		rc = full_curve(res, src, err);
	if (rc == HC_OK && build(res, src, opt))
		rc = hc_error(err, HC_ENOMEM, "out of memory building the report");
	if (rc) {
		hc_curve_result_free(res);
		return rc;
	}
	*out = res;
	return HC_OK;
}

/* ---- from summary statistics (`holdcount formula`) ---- */

/* Text view: variance-scale inputs may be in any unit (percent squared,
 * say), so their figures are shown plain rather than as percents. */
static void plain_styles(struct report_table *t)
{
	size_t i, j;

	for (j = 0; j < t->ncols; j++) {
		/* A share is a share whatever the unit of the inputs. */
		if (t->cols[j].style != REPORT_STYLE_PERCENT || strcmp(t->cols[j].key, "diversifiable_share") == 0)
			continue;
		t->cols[j].style = REPORT_STYLE_PLAIN;
		for (i = 0; i < t->nrows; i++)
			t->cells[i * t->ncols + j].style = REPORT_STYLE_PLAIN;
	}
}

static int build_formula(struct report *r, const struct moments *mo, const struct curve *c,
			 int annualised, int plain)
{
	int sd_style = plain ? REPORT_STYLE_PLAIN : REPORT_STYLE_PERCENT;
	double p = c->periods_per_year;
	struct report_table *t;

	if (hc_report_add_real(r, "average_variance", "average variance", mo->average_variance * p, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_covariance", "average covariance", mo->average_covariance * p, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_correlation", "average correlation (implied)",
			    mo->average_covariance / mo->average_variance, REPORT_STYLE_FIXED4) ||
	    (mo->m ? hc_report_add_int(r, "securities", "securities", (long long)mo->m)
		   : hc_report_add_none(r, "securities", "securities")) ||
	    hc_report_add_text(r, "universe", "universe", mo->m ? "finite" : "unbounded") ||
	    hc_report_add_scale(r, p, annualised) ||
	    hc_report_add_real(r, "floor_variance", "floor variance", c->floor_variance, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "floor_sd", "floor sd", c->floor_variance >= 0 ? sqrt(c->floor_variance) : NAN, sd_style) ||
	    hc_report_add_real(r, "universe_sd", "equal-weight universe sd",
			    mo->m ? sqrt(c->universe_variance) : NAN, sd_style))
		return HC_ENOMEM;
	if (hc_curve_add_table(r, c, annualised))
		return HC_ENOMEM;
	t = r->tables[r->ntables - 1];
	if (plain)
		plain_styles(t);
	if (annualised && mo->average_variance * p > HC_MOMENTS_IMPLAUSIBLE_SD * HC_MOMENTS_IMPLAUSIBLE_SD) {
		char text[300];

		snprintf(text, sizeof text,
			 "implausible: the average sd is %.4g%% a year, above %.0f%%; are the inputs in percent "
			 "(variances in percent squared?) rather than decimals?", 100 * sqrt(mo->average_variance * p),
			 100 * HC_MOMENTS_IMPLAUSIBLE_SD);
		if (hc_report_add_note(r, text))
			return HC_ENOMEM;
	}
	return hc_report_add_cautions(r);
}

int hc_curve_formula(struct report **out, const struct moments *mo, const size_t *sizes, size_t nsizes,
		     double periods_per_year, int plain, struct hc_error *err)
{
	struct curve *c = NULL;
	struct report *r = NULL;
	int rc, annualised = periods_per_year > 0;

	*out = NULL;
	rc = hc_curve_exact(&c, mo, sizes, nsizes, annualised ? periods_per_year : 1.0, err);
	if (rc == HC_OK && (!(r = hc_report_alloc()) || build_formula(r, mo, c, annualised, plain))) {
		hc_report_free(r);
		rc = hc_error(err, HC_ENOMEM, "out of memory building the report");
	} else if (rc == HC_OK)
		*out = r;
	hc_curve_free(c);
	return rc;
}
