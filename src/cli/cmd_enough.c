/*
 * cmd_enough.c - `holdcount enough UNIVERSE`: the holding count past which
 * extra holdings add little, by each rule, with a bootstrap interval.
 *
 * The rules and their sources are in docs/enough.md; the library does the
 * work (enough.h), this file parses, builds the data source and writes.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "holdcount/enough.h"
#include "holdcount/moments.h"
#include "holdcount/rules.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

struct enough_opts {
	struct cli_rules rul;
	struct cli_sampling smp;
	struct cli_summary sum;
	struct cli_universe uni;
	struct cli_output out;
	struct cli_strata strat;
	struct cli_measures mea;
};

#define OFF(f) offsetof(struct enough_opts, f)

/* The rules look at every count, so there is no grid to choose. */
static const struct cli_omit enough_sampling_omit[] = {
	{ "sizes", "enough looks at every holding count, not at a grid of them" },
	{ NULL, NULL }
};

static const struct cli_group_use enough_groups[] = {
	{ &cli_group_rules, OFF(rul), NULL, NULL },
	{ &cli_group_sampling, OFF(smp), enough_sampling_omit, NULL },
	{ &cli_group_measures, OFF(mea), NULL, NULL },
	{ &cli_group_summary, OFF(sum), NULL, NULL },
	{ &cli_group_universe, OFF(uni), NULL, NULL },
	{ &cli_group_matrix_repair, OFF(uni), NULL, NULL },
	{ &cli_group_output, OFF(out), NULL, NULL },
	{ &cli_group_strata, OFF(strat), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_enough = {
	"enough", cmd_enough,
	"the holding count past which extra holdings add little, by several published rules",
	"[UNIVERSE]",
	"For each rule, the smallest holding count that meets it, the rule's parameters, the value "
	"reached at that count, and a 90% interval for the count from a bootstrap of the periods. "
	"Without UNIVERSE, give summary statistics (--average-variance and --average-covariance, or "
	"--average-sd and --average-correlation, and optionally --securities) for the exact rules. "
	"One rule's count (--policy, default near-floor) becomes the recommendation, with a sentence for a "
	"policy statement. "
	"With --strata, the sampled rules (band, lag-share, alexeev-tapon-sampled) draw portfolios spread "
	"across strata (--proportional, or at most --per-stratum-max K in any stratum); the exact rules are "
	"unchanged. With --covariance (a covariance matrix) or --missing pairwise the band and "
	"alexeev-tapon-sampled rules draw their portfolios from the matrix; lag-share, which compounds returns "
	"over time, needs complete return series. With --measures, the same kind of random portfolios at each "
	"count a rule chose give the measures there (docs/measures.md), in a table 'measures' (text and JSON). "
	"See docs/enough.md for each rule and its source.",
	0, 1, enough_groups
};

/* ---- summary statistics ------------------------------------------------- */

static int summary_averages(const struct enough_opts *o, const struct cli_args *a,
			    double *vbar, double *cbar)
{
	int var = cli_given(a, "average-variance"), sd = cli_given(a, "average-sd");
	int cov = cli_given(a, "average-covariance"), cor = cli_given(a, "average-correlation");

	if (var == sd)
		return cli_usage_error("enough", var ? "give --average-variance or --average-sd, not both"
				       : "needs a UNIVERSE file, or --average-variance or --average-sd (see 'holdcount enough --help')");
	if (cov == cor)
		return cli_usage_error("enough", cov ? "give --average-covariance or --average-correlation, not both"
				       : "needs --average-covariance or --average-correlation with summary statistics");
	if (sd && !(o->sum.average_sd > 0))
		return cli_usage_error("enough", "--average-sd must be positive, found %g", o->sum.average_sd);
	if (var && !(o->sum.average_variance > 0))
		return cli_usage_error("enough", "--average-variance must be positive, found %g", o->sum.average_variance);
	if (cor && !(fabs(o->sum.average_correlation) <= 1))
		return cli_usage_error("enough", "--average-correlation must lie from -1 to 1, found %g",
				       o->sum.average_correlation);
	hc_moments_summary_averages(var ? o->sum.average_variance : NAN, cov ? o->sum.average_covariance : NAN,
				    o->sum.average_sd, o->sum.average_correlation, vbar, cbar);
	return HC_OK;
}

static int data_summary_given(const struct cli_args *a)
{
	static const char *const names[] = { "average-variance", "average-covariance", "average-sd",
					     "average-correlation", "securities" };
	size_t k;

	for (k = 0; k < sizeof names / sizeof names[0]; k++)
		if (cli_given(a, names[k]))
			return 1;
	return 0;
}


/* ---- the command ------------------------------------------------------------ */

/* Summary statistics: the exact rules alone. */
static int run_summary(const struct enough_opts *o, const struct cli_args *a,
		       const struct hc_enough_options *eo, struct hc_enough **e)
{
	struct hc_error err;
	double vbar = 0, cbar = 0, ppy;
	int rc;

	if ((rc = summary_averages(o, a, &vbar, &cbar)))
		return rc;
	ppy = cli_given(a, "periods-per-year") ? o->uni.periods_per_year : 0.0;
	if (cli_given(a, "periods-per-year") && !(ppy > 0))
		return cli_usage_error("enough", "--periods-per-year must be positive, found %g", ppy);
	if (cli_given(a, "bootstrap") && o->rul.bootstrap > 0)
		return cli_usage_error("enough", "--bootstrap needs a universe file: summary statistics have no periods to resample");
	hc_error_clear(&err);
	rc = hc_enough_summary(e, vbar, cbar, o->sum.securities, ppy, eo, &err);
	return rc ? cli_fail("enough", &err) : HC_OK;
}

/* A return history or (--covariance) a matrix. */
static int run_file(struct enough_opts *o, const struct cli_args *a, struct hc_enough_options *eo,
		    struct hc_enough **e)
{
	const char *path = a->positional[0];
	struct hc_strata_use su;
	struct hc_source *src = NULL;
	struct universe *u = NULL;
	struct cli_steps steps;
	struct hc_error err;
	int rc, band = (eo->rules.selected & HC_ENOUGH_MATRIX_SAMPLED) != 0;

	if ((rc = cli_enough_checks("enough", &o->smp, &o->strat, &eo->rules)))
		return rc;
	if (o->uni.covariance)
		rc = cli_load_source("enough", &o->uni, a, path, 0, NULL, &src);
	else if ((rc = cli_load_universe("enough", &o->uni, path, &u)) == HC_OK) {
		if (u->has_missing && (o->strat.map || o->strat.per_stratum_max || o->strat.proportional)) {
			hc_universe_free(u);
			return cli_usage_error("enough", "--strata draws from complete return series, and '%s' has gaps%s",
					       path, o->uni.missing == CLI_MISSING_ALIVE
					       ? ": --missing complete keeps only the securities with none" : " under --missing pairwise");
		}
		/* With gaps left the band rule draws from the pairwise-complete
		 * covariances, and --repair-psd makes the exact rules use the repair too. */
		rc = cli_source_from_universe("enough", &o->uni, u, path, band,
					      "the pairwise-complete covariances are not positive semi-definite, so the band "
					      "rule cannot draw random portfolios from them; --rules exact leaves it out, and "
					      HC_SOURCE_PSD_HINT, &src);
	}
	if (rc == HC_OK && hc_source_has_series(src) && (eo->rules.selected & RULES_SAMPLED_MASK) &&
	    (rc = cli_strata_apply("enough", &o->strat, src->u, &su)) == HC_OK)
		eo->strata = &su;
	if (rc == HC_OK) {
		cli_steps_bind(&steps, &eo->progress, "enough", o->out.quiet, 0);
		hc_error_clear(&err);
		if (hc_enough_run(e, src, eo, &err))
			rc = cli_fail("enough", &err);
	}
	hc_source_free(src);
	return rc;
}

int cmd_enough(int argc, char **argv)
{
	struct enough_opts o;
	struct cli_args a;
	struct hc_enough_options eo;
	struct hc_enough *e = NULL;
	int rc, have_data;

	memset(&o, 0, sizeof o);
	cli_rules_init(&o.rul);
	cli_sampling_init(&o.smp);
	cli_summary_init(&o.sum);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	cli_strata_init(&o.strat);
	rc = cli_parse(&cli_command_enough, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	have_data = a.npositional == 1;
	if (have_data && data_summary_given(&a)) {
		rc = cli_usage_error("enough", "give a UNIVERSE file or summary statistics, not both");
		goto cleanup;
	}
	if (!have_data && o.uni.repair_psd) {
		rc = cli_usage_error("enough", "--repair-psd needs a UNIVERSE file (a covariance matrix or a return history "
				     "under --missing pairwise), not summary statistics");
		goto cleanup;
	}
	if (have_data && (rc = cli_psd_usage("enough", &o.uni)) != HC_OK)
		goto cleanup;
	rc = cli_enough_options("enough", &o.rul, &o.smp, &a, have_data, o.uni.covariance, &eo);
	if (rc || (rc = cli_measures_mask("enough", &o.mea, &eo.measures)))
		goto cleanup;
	/* The text table leaves the long sentence out of the rules table (it
	 * is a field below it); CSV, the rules table alone, and JSON carry it. */
	eo.sentence_column = o.out.format != CLI_FORMAT_TABLE;
	/* Summary statistics and a matrix stay on the inputs' scale unless told
	 * the periods per year: the rules' texts then say "per period". */
	eo.rules.per_period = (!have_data || o.uni.covariance) && !cli_given(&a, "periods-per-year");
	if ((!have_data || o.uni.covariance) && (o.strat.map || o.strat.per_stratum_max || o.strat.proportional)) {
		rc = cli_usage_error("enough", "--strata draws from return series, not from %s",
				     have_data ? "a covariance matrix" : "summary statistics");
		goto cleanup;
	}
	rc = have_data ? run_file(&o, &a, &eo, &e) : run_summary(&o, &a, &eo, &e);
	if (rc == HC_OK)
		rc = cli_write_report("enough", &o.out, e->report);
cleanup:
	hc_enough_free(e);
	cli_strata_release(&o.strat);
	cli_args_release(&a);
	return rc;
}
