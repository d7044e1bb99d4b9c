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
#include "holdcount/analysis.h"
#include "holdcount/curverun.h"
#include "holdcount/memory.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

struct curve_opts {
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
	struct cli_strata strat;
	struct cli_measures mea;
};

static const struct cli_group_use curve_groups[] = {
	{ &cli_group_sampling, offsetof(struct curve_opts, sam), NULL, NULL },
	{ &cli_group_measures, offsetof(struct curve_opts, mea), NULL, NULL },
	{ &cli_group_universe, offsetof(struct curve_opts, uni), NULL, NULL },
	{ &cli_group_matrix_repair, offsetof(struct curve_opts, uni), NULL, NULL },
	{ &cli_group_output, offsetof(struct curve_opts, out), NULL, NULL },
	{ &cli_group_strata, offsetof(struct curve_opts, strat), NULL, NULL },
	{ NULL, 0, NULL, NULL }
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
	"columns beside the unconstrained ones. With --measures, the same random portfolios' downside, tail "
	"and path measures (semi-deviations, value-at-risk, expected shortfall, maximum drawdown, "
	"skewness, excess kurtosis, worst period, the chance of lagging the equal-weight universe): "
	"each measure's mean with its Monte Carlo standard error and its 5%, 50% and 95% quantiles by "
	"count, and the universe's own value; they need return series, complete or read period by "
	"period (--missing alive), not a covariance matrix. Figures are annualised "
	"by the periods per year, except those --measures names as per period.",
	1, 1, curve_groups
};

/* The data source: a matrix, or the return history; with gaps left
 * (--missing pairwise) no portfolio has a complete return series, so random
 * portfolios are drawn from the same pairwise-complete covariances the exact
 * columns use, when they form a valid matrix (or from its repair, which the
 * exact columns then use too).  The grid of counts from the source's size. */
static int load(struct curve_opts *o, const struct cli_args *a, struct hc_source **src,
		size_t **sizes, size_t *nsizes)
{
	const char *path = a->positional[0];
	struct universe *u = NULL;
	int rc;

	if (o->uni.covariance) {
		if ((rc = cli_load_source("curve", &o->uni, a, path, 0, NULL, src)))
			return rc;
		return cli_sizes("curve", o->sam.sizes, hc_source_m(*src), sizes, nsizes);
	}
	if ((rc = cli_load_universe("curve", &o->uni, path, &u)))
		return rc;
	if ((rc = cli_sizes("curve", o->sam.sizes, u->m, sizes, nsizes))) {
		hc_universe_free(u);
		return rc;
	}
	rc = cli_source_from_universe("curve", &o->uni, u, path, o->sam.paths > 0,
				      "the pairwise-complete covariances are not positive semi-definite, so no random "
				      "portfolio can be drawn from them; --paths 0 gives the exact curve alone, and "
				      HC_SOURCE_PSD_HINT, src);
	if (rc)
		return rc;
	if (o->strat.map && o->sam.paths == 0)
		return cli_usage_error("curve", "--strata draws random portfolios: it needs --paths above 0");
	if (o->strat.map && !hc_source_has_series(*src))
		return cli_usage_error("curve", "--strata draws from complete return series, and '%s' has gaps%s", path,
				       (*src)->kind == HC_SOURCE_RAGGED ? ": --missing complete keeps only the securities with none"
				       : " under --missing pairwise");
	return HC_OK;
}

int cmd_curve(int argc, char **argv)
{
	struct curve_opts o;
	struct cli_args a;
	struct hc_source *src = NULL;
	struct hc_curve_options co;
	struct hc_curve_result *res = NULL;
	struct hc_strata_use su;
	struct cli_steps steps;
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
	hc_curve_options_init(&co);
	if ((rc = cli_measures_mask("curve", &o.mea, &co.measures)))
		goto cleanup;
	if ((rc = load(&o, &a, &src, &sizes, &nsizes)))
		goto cleanup;
	co.paths = o.sam.paths;
	co.seed = o.sam.seed;
	co.threads = o.sam.threads > INT_MAX ? INT_MAX : (int)o.sam.threads;
	if ((o.strat.map || o.strat.per_stratum_max || o.strat.proportional) &&
	    (rc = cli_strata_apply("curve", &o.strat, src->u, &su)))
		goto cleanup;
	if (o.strat.map)
		co.strata = &su;
	cli_steps_bind(&steps, &co.progress, "curve", o.out.quiet, 0);
	if (hc_curve_run(&res, src, sizes, nsizes, &co, &err))
		rc = cli_fail("curve", &err);
	else
		rc = cli_write_report("curve", &o.out, res->report);
cleanup:
	hc_curve_result_free(res);
	hc_source_free(src);
	cli_strata_release(&o.strat);
	hc_free(sizes);
	cli_args_release(&a);
	return rc;
}
