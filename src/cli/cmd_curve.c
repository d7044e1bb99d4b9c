/*
 * cmd_curve.c - `holdcount curve UNIVERSE`: risk by holding count, exact
 * and sampled.
 */
#include <limits.h>
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/covmatrix.h"
#include "holdcount/curve.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/sampler.h"
#include "holdcount/strata.h"
#include "holdcount/universe.h"

struct curve_opts {
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
	struct cli_strata strat;
};

static const struct cli_group_use curve_groups[] = {
	{ &cli_group_sampling, offsetof(struct curve_opts, sam), NULL },
	{ &cli_group_universe, offsetof(struct curve_opts, uni), NULL },
	{ &cli_group_matrix_repair, offsetof(struct curve_opts, uni), NULL },
	{ &cli_group_output, offsetof(struct curve_opts, out), NULL },
	{ &cli_group_strata, offsetof(struct curve_opts, strat), NULL },
	{ NULL, 0, NULL }
};

const struct cli_command cli_command_curve = {
	"curve", cmd_curve,
	"risk by holding count: the exact curve and its spread, and random portfolios to check it",
	"UNIVERSE",
	"For each holding count N: the exact expected variance and its square root, the exact "
	"standard deviation of the variance across random portfolios of N, the exact root-mean-square "
	"tracking error against the equal-weight universe and the share of the expected variance above the unbounded-universe floor; then, from "
	"K random equal-weight portfolios per count, the mean variance with its Monte Carlo standard "
	"error, the mean standard deviation, its 5%, 50% and 95% quantiles, and the z-score of the "
	"sampled mean against the exact one. With --strata, the same for portfolios spread across "
	"strata (--proportional, or at most --per-stratum-max K in any stratum), in stratified_* "
	"columns beside the unconstrained ones. Figures are annualised by the periods per year.",
	1, 1, curve_groups
};

int cli_curve_sample(const struct cli_sampling *sam, int quiet, const struct universe *u,
		     const struct covmatrix *cm, struct curve *c, const size_t *sizes, size_t nsizes,
		     struct hc_error *err)
{
	struct sampler_options so;
	struct sampler_result *res = NULL;
	struct cli_progress prog;
	int rc;

	hc_sampler_options_init(&so);
	so.paths = sam->paths;
	so.seed = sam->seed;
	so.threads = sam->threads > INT_MAX ? INT_MAX : (int)sam->threads;
	so.periods_per_year = c->periods_per_year;
	cli_progress_init(&prog, "sampling", "paths", quiet);
	so.progress = cli_progress_update;
	so.progress_ctx = &prog;
	if (u)
		rc = hc_sampler_run(&res, u, sizes, nsizes, &so, err);
	else
		rc = hc_sampler_run_matrix(&res, cm->a, cm->m, sizes, nsizes, &so, err);
	cli_progress_finish(&prog);
	if (rc == HC_OK)
		rc = hc_sampler_summarise(c, res, err);
	hc_sampler_result_free(res);
	if (rc == HC_OK) {
		c->paths = sam->paths;
		c->seed = sam->seed;
	}
	return rc;
}

/* Stratified draws (strata.h) with the same paths and seed; the exact
 * column only for the fixed (proportional) allocation. */
static int sample_strata(struct curve_opts *o, const struct universe *u, const size_t *sizes,
			 size_t nsizes, struct strata_curve **sc, struct hc_error *err)
{
	struct sampler_options so;
	struct sampler_result *res = NULL;
	struct strata_moments *sm = NULL;
	struct cli_progress prog;
	int rc;

	hc_sampler_options_init(&so);
	so.paths = o->sam.paths;
	so.seed = o->sam.seed;
	so.threads = o->sam.threads > INT_MAX ? INT_MAX : (int)o->sam.threads;
	so.periods_per_year = u->periods_per_year;
	if ((rc = cli_strata_apply("curve", &o->strat, u, &so)))
		return rc;
	cli_progress_init(&prog, "stratified sampling", "paths", o->out.quiet);
	so.progress = cli_progress_update;
	so.progress_ctx = &prog;
	rc = hc_sampler_run(&res, u, sizes, nsizes, &so, err);
	cli_progress_finish(&prog);
	if (rc == HC_OK && o->strat.proportional)
		rc = hc_strata_moments_from_universe(&sm, u, o->strat.strata, err);
	if (rc == HC_OK)
		rc = hc_strata_curve_alloc(sc, res, o->strat.strata, sm, so.stratify, so.per_stratum_max,
					u->periods_per_year, err);
	hc_strata_moments_free(sm);
	hc_sampler_result_free(res);
	return rc ? cli_fail("curve", err) : HC_OK;
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
static int add_strata(struct report *r, const struct curve_opts *o, const struct strata_curve *sc)
{
	char text[600];
	size_t j, any_out = 0;

	if (cli_strata_fields(r, &o->strat))
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
			 hc_strata_cap_most(o->strat.strata, sc->per_stratum_max), sc->per_stratum_max,
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
int cli_curve_table(struct report *r, const struct curve *c, int annualised)
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

int cli_curve_fields(struct report *r, const struct cli_curve_source *src, const struct moments *mo,
		     const struct curve *c)
{
	char seed[32];

	snprintf(seed, sizeof seed, "%llu", (unsigned long long)c->seed);
	if (hc_report_add_text(r, "source", "source", src->path) ||
	    hc_report_add_text(r, "input", "input", src->input) ||
	    hc_report_add_int(r, "securities", "securities kept", (long long)src->m) ||
	    hc_report_add_int(r, "securities_dropped", "securities dropped", (long long)src->dropped) ||
	    (src->periods ? hc_report_add_int(r, "periods", "periods", (long long)src->periods)
			  : hc_report_add_none(r, "periods", "periods")) ||
	    cli_add_scale(r, c->periods_per_year, src->annualised) ||
	    hc_report_add_real(r, "floor_sd", "floor sd (unbounded universe)",
			    c->floor_variance >= 0 ? sqrt(c->floor_variance) : NAN, REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(r, "universe_sd", "equal-weight universe sd", sqrt(c->universe_variance),
			    REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(r, "average_correlation", "average correlation",
			    mo->has_correlation ? mo->average_correlation : NAN, REPORT_STYLE_FIXED4) ||
	    hc_report_add_int(r, "paths", "random portfolios per count", (long long)c->paths) ||
	    (c->paths ? hc_report_add_text(r, "seed", "seed", seed) : hc_report_add_none(r, "seed", "seed")) ||
	    hc_report_add_text(r, "sampling", "sampling",
			    c->paths ? "uniform random subsets without replacement; z compares the sampled mean "
				       "variance with the exact one in Monte Carlo standard errors"
				     : "not sampled (--paths 0)"))
		return HC_ENOMEM;
	return cli_curve_table(r, c, src->annualised);
}

static int build(struct report *r, const struct curve_opts *o, const struct cli_curve_source *src,
		 const struct moments *mo, const struct curve *c, const struct strata_curve *sc,
		 const struct cli_psd *ps)
{
	if (cli_curve_fields(r, src, mo, c) || add_strata(r, o, sc) || cli_psd_fields(r, ps))
		return HC_ENOMEM;
	return hc_report_add_cautions(r);
}

/* Exact curve, optional sampling and the report: shared by both inputs. */
static int finish(const struct curve_opts *o, const struct cli_curve_source *src, const struct universe *u,
		  const struct covmatrix *cm, const struct moments *mo, const size_t *sizes, size_t nsizes,
		  double p, const struct strata_curve *sc, const struct cli_psd *ps)
{
	struct curve *c = NULL;
	struct report *r = NULL;
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	rc = hc_curve_exact(&c, mo, sizes, nsizes, p, &err);
	if (rc == HC_OK && o->sam.paths > 0)
		rc = cli_curve_sample(&o->sam, o->out.quiet, u, cm, c, sizes, nsizes, &err);
	if (rc) {
		rc = cli_fail("curve", &err);
		goto cleanup;
	}
	r = hc_report_alloc();
	if (!r || build(r, o, src, mo, c, sc, ps)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		rc = cli_fail("curve", &err);
		goto cleanup;
	}
	rc = cli_write_report("curve", &o->out, r);
cleanup:
	hc_report_free(r);
	hc_curve_free(c);
	return rc;
}

static int curve_matrix(const struct curve_opts *o, const struct cli_args *a)
{
	struct cli_curve_source src = { a->positional[0], "covariance matrix", 0, 0, 0, 0 };
	double p = 1.0;
	struct covmatrix *cm = NULL;
	struct cli_psd ps;
	struct moments mo;
	struct hc_error err;
	size_t *sizes = NULL, nsizes = 0;
	int rc;

	src.annualised = !isnan(o->uni.periods_per_year);
	if (src.annualised) {
		p = o->uni.periods_per_year;
		if (!(p > 0.0))
			return cli_usage_error("curve", "--periods-per-year must be positive, found %g", p);
	}
	cli_psd_init(&ps, o->uni.repair_psd, p, src.annualised, "the covariance matrix");
	rc = cli_load_covariance("curve", &o->uni, a, src.path, &ps, &cm);
	if (rc)
		return rc;
	src.m = cm->m;
	hc_error_clear(&err);
	rc = cli_sizes("curve", o->sam.sizes, cm->m, &sizes, &nsizes);
	if (rc == HC_OK) {
		rc = hc_moments_from_matrix(&mo, cm->a, cm->m, &err);
		if (rc) {
			hc_error_prefix(&err, src.path);
			rc = cli_fail("curve", &err);
		}
	}
	if (rc == HC_OK)
		rc = finish(o, &src, NULL, cm, &mo, sizes, nsizes, p, NULL, &ps);
	hc_free(sizes);
	hc_covmatrix_free(cm);
	return rc;
}

int cmd_curve(int argc, char **argv)
{
	struct curve_opts o;
	struct cli_args a;
	struct cli_curve_source src;
	struct universe *u = NULL;
	struct covmatrix *cm = NULL;
	struct strata_curve *sc = NULL;
	struct cli_psd ps;
	struct moments mo;
	struct hc_error err;
	size_t *sizes = NULL, nsizes = 0;
	int rc;

	memset(&o, 0, sizeof o);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	cli_strata_init(&o.strat);
	rc = cli_parse(&cli_command_curve, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	if ((rc = cli_psd_usage("curve", &o.uni)) != HC_OK)
		goto cleanup;
	if (o.uni.covariance && (o.strat.map || o.strat.per_stratum_max || o.strat.proportional)) {
		rc = cli_usage_error("curve", "--strata draws from return series, not from a covariance matrix");
		goto cleanup;
	}
	if (o.uni.covariance) {
		rc = curve_matrix(&o, &a);
		goto cleanup;
	}
	rc = cli_load_universe("curve", &o.uni, a.positional[0], &u);
	if (rc)
		goto cleanup;
	rc = cli_sizes("curve", o.sam.sizes, u->m, &sizes, &nsizes);
	if (rc)
		goto cleanup;
	/* With gaps left (--missing pairwise) no portfolio has a complete return
	 * series, so random portfolios are drawn from the same pairwise-complete
	 * covariances the exact columns use, when they form a valid matrix (or
	 * from its repair, which the exact columns then use too). */
	cli_psd_init(&ps, o.uni.repair_psd, u->periods_per_year, 1, "the pairwise-complete covariance matrix");
	if ((o.sam.paths > 0 || ps.asked) && u->has_missing) {
		rc = cli_pairwise_matrix("curve", u, a.positional[0],
					 "the pairwise-complete covariances are not positive semi-definite, so no random "
					 "portfolio can be drawn from them; --paths 0 gives the exact curve alone, and "
					 CLI_PSD_HINT, &ps, &cm);
		if (rc)
			goto cleanup;
	}
	if (o.strat.map && o.sam.paths == 0) {
		rc = cli_usage_error("curve", "--strata draws random portfolios: it needs --paths above 0");
		goto cleanup;
	}
	if (o.strat.map && u->has_missing) {
		rc = cli_usage_error("curve", "--strata draws from complete return series, and '%s' has gaps "
				     "under --missing pairwise", a.positional[0]);
		goto cleanup;
	}
	rc = ps.repaired ? hc_moments_from_matrix(&mo, cm->a, cm->m, &err) : hc_moments_from_universe(&mo, u, &err);
	if (rc) {
		rc = cli_fail("curve", &err);
		goto cleanup;
	}
	if ((o.strat.map || o.strat.per_stratum_max || o.strat.proportional) &&
	    (rc = sample_strata(&o, u, sizes, nsizes, &sc, &err)))
		goto cleanup;
	src.path = u->source ? u->source : a.positional[0];
	src.input = ps.repaired ? "return history with gaps; its pairwise-complete covariances, repaired to the nearest "
				  "positive semi-definite matrix, give the exact columns and the random portfolios"
		  : cm ? "return history with gaps; sampled from its pairwise-complete covariances" : "return history";
	src.m = u->m;
	src.dropped = u->ndropped;
	src.periods = u->t;
	src.annualised = 1;
	rc = finish(&o, &src, cm ? NULL : u, cm, &mo, sizes, nsizes, u->periods_per_year, sc, &ps);
cleanup:
	hc_covmatrix_free(cm);
	hc_strata_curve_free(sc);
	cli_strata_release(&o.strat);
	hc_free(sizes);
	hc_universe_free(u);
	cli_args_release(&a);
	return rc;
}
