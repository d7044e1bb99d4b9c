/*
 * cmd_horizon.c - `holdcount horizon UNIVERSE`: ending wealth over H years
 * by holding count, rebalanced and buy-and-hold (horizon.h).
 */
#include <limits.h>
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/horizon.h"
#include "holdcount/marketvalues.h"
#include "holdcount/memory.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

struct horizon_opts {
	double years;
	int resample;              /* enum hc_horizon_route */
	size_t block_length;
	double rate;               /* NaN = the universe is the benchmark */
	const char *benchmark_file; /* a return series on the universe's dates */
	double lag_limit;          /* the Domian, Louton & Racine rule's p */
	const char *market_values; /* id,market_value: capitalisation weights */
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
};

static const char *const resample_words[] = { "auto", "windows", "bootstrap", NULL };

static const struct cli_option horizon_own[] = {
	{ "years", 0, CLI_REAL, offsetof(struct horizon_opts, years), "H",
	  "the horizon in years, turned into periods by the periods per year", NULL, "20" },
	{ "resample", 0, CLI_CHOICE, offsetof(struct horizon_opts, resample), NULL,
	  "how the H-year paths are built: overlapping windows of the history (every start date equally "
	  "likely; only when H fits in the sample), a stationary bootstrap of whole periods (Politis & "
	  "Romano, 1994), or auto: windows when H fits, else the bootstrap",
	  resample_words, "auto" },
	{ "block-length", 0, CLI_COUNT, offsetof(struct horizon_opts, block_length), "L",
	  "the bootstrap's mean block length in periods", NULL,
	  "Politis & White (2004) on the equal-weight universe's returns" },
	{ "benchmark-rate", 0, CLI_FRACTION, offsetof(struct horizon_opts, rate), "G",
	  "compare with a fixed rate of G a year (as 3% or 0.03) instead of the equal-weight universe "
	  "on the same path", NULL, "the equal-weight universe" },
	{ "benchmark-file", 0, CLI_STRING, offsetof(struct horizon_opts, benchmark_file), "FILE",
	  "compare with a benchmark's return series (a bond or bill index, a capitalisation-weighted index): "
	  "a CSV of two columns, the date and the benchmark's values headed by its name, on the universe's "
	  "period dates, read as the universe is read (returns, --percent, or prices with --prices); each "
	  "path takes the benchmark's returns of the same periods as the securities'", NULL,
	  "the equal-weight universe" },
	{ "market-values", 0, CLI_STRING, offsetof(struct horizon_opts, market_values), "FILE",
	  "weight each portfolio by market value instead of equally: a CSV with columns 'id' and "
	  "'market_value' (above 0; ids the universe lacks are ignored), each member weighted by its share of "
	  "the portfolio's market value, rebalanced to those weights or bought in them and held; the universe "
	  "it is compared with is weighted the same way", NULL, "equal weights" },
	{ "lag-limit", 0, CLI_FRACTION, offsetof(struct horizon_opts, lag_limit), "P",
	  "the rule of Domian, Louton & Racine (2007): report the fewest holdings, among the counts asked, whose "
	  "buy-and-hold portfolios end behind the benchmark on at most a share P of the paths (as 1% or 0.01), "
	  "with the Monte Carlo standard error of that share; no interval for the count: the history's own "
	  "sampling error, which dominates, would need the whole run repeated for each bootstrap replicate of "
	  "the history (B times this command's time)", NULL, "1%" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group horizon_group = { "horizon options", horizon_own };

static const struct cli_omit horizon_omit[] = {
	{ "covariance", "ending wealth needs a return history" },
	{ NULL, NULL }
};

static const struct cli_group_use horizon_groups[] = {
	{ &horizon_group, 0, NULL, NULL },
	{ &cli_group_sampling, offsetof(struct horizon_opts, sam), NULL, NULL },
	{ &cli_group_universe, offsetof(struct horizon_opts, uni), horizon_omit, NULL },
	{ &cli_group_output, offsetof(struct horizon_opts, out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_horizon = {
	"horizon", cmd_horizon,
	"ending wealth over H years by holding count, rebalanced and buy-and-hold, and the chance of lagging",
	"UNIVERSE",
	"For each holding count N, K random portfolios (drawn as curve draws them), each followed over an "
	"H-year path of whole periods of the history: a window of it when H fits in the sample, else a "
	"stationary bootstrap of it. Ending wealth of 1 unit invested, with equal weights (or weights by "
	"--market-values) restored every period and bought and held: its mean with the Monte Carlo standard error, its "
	"5%, 50% and 95% quantiles, and the share of portfolios ending below the benchmark (the equal-weight "
	"universe held the same way on the same path, a series of --benchmark-file on the same periods, or "
	"--benchmark-rate), and the rule of Domian, Louton & Racine (2007): the fewest holdings whose "
	"buy-and-hold portfolios lag on at most --lag-limit of the paths. On a history with gaps (the "
	"default reading) the paths are windows only: a portfolio holds securities listed at the window's "
	"start, and a holding delisted inside it leaves (its value reinvested in the rest when held). A bootstrap of the history is not "
	"a forecast.",
	1, 1, horizon_groups
};

/* The default grid's top: every security, or on a history with gaps the
 * fewest listed at the start of a window (hc_horizon_count_bound). */
static size_t grid_bound(const struct hc_source *src, double years)
{
	const struct universe *u = src->u;
	double hp;

	if (!u)
		return hc_source_m(src);
	hp = years * u->periods_per_year;
	if (src->kind != HC_SOURCE_RAGGED || !(hp >= 0.5) || hp > (double)u->t + 0.5)
		return u->m;
	return hc_horizon_count_bound(u, (size_t)llround(hp), NULL);
}

int cmd_horizon(int argc, char **argv)
{
	struct horizon_opts o;
	struct cli_args a;
	struct hc_source *src = NULL;
	struct universe *u = NULL;
	struct hc_horizon_options ho;
	struct hc_horizon_result *res = NULL;
	struct benchseries *bench = NULL;
	double *mv = NULL;
	struct cli_steps steps;
	struct hc_error err;
	size_t *sizes = NULL, nsizes = 0;
	const char *path;
	int rc;

	memset(&o, 0, sizeof o);
	o.years = HC_HORIZON_DEFAULT_YEARS;
	o.rate = NAN;
	o.lag_limit = HC_HORIZON_DEFAULT_LAG_LIMIT;
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_horizon, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	path = a.positional[0];
	if (o.sam.paths == 0) {
		rc = cli_usage_error("horizon", "--paths 0: the horizon is measured on random portfolios, at least 1");
		goto cleanup;
	}
	if (cli_given(&a, "block-length") && (o.block_length == 0 || o.resample == HC_HORIZON_WINDOWS)) {
		rc = cli_usage_error("horizon", o.block_length == 0 ? "--block-length must be at least 1 period"
				     : "--block-length is the bootstrap's; --resample windows uses none");
		goto cleanup;
	}
	if (cli_given(&a, "benchmark-file") && cli_given(&a, "benchmark-rate")) {
		rc = cli_usage_error("horizon", "--benchmark-file and --benchmark-rate: one benchmark at a time");
		goto cleanup;
	}
	if (!(o.lag_limit > 0 && o.lag_limit < 1)) {
		rc = cli_usage_error("horizon", "--lag-limit %g: expected a share between 0 and 1 (as 1%% or 0.01)",
				     o.lag_limit);
		goto cleanup;
	}
	if ((rc = cli_load_universe("horizon", &o.uni, path, &u)))
		goto cleanup;
	if (o.benchmark_file &&
	    hc_benchseries_load(&bench, o.benchmark_file, u->dates, u->t,
				!o.uni.prices ? BENCHSERIES_RETURNS
				: o.uni.log_returns ? BENCHSERIES_PRICES_LOG : BENCHSERIES_PRICES,
				o.uni.percent, &err)) {
		rc = cli_fail("horizon", &err);
		hc_universe_free(u);
		goto cleanup;
	}
	if ((rc = cli_source_from_universe("horizon", &o.uni, u, path, 0, NULL, &src)))
		goto cleanup;
	if ((rc = cli_sizes("horizon", o.sam.sizes, o.sam.sizes ? hc_source_m(src) : grid_bound(src, o.years), &sizes,
			    &nsizes)))
		goto cleanup;
	hc_horizon_options_init(&ho);
	ho.years = o.years;
	ho.paths = o.sam.paths;
	ho.seed = o.sam.seed;
	ho.threads = o.sam.threads > INT_MAX ? INT_MAX : (int)o.sam.threads;
	ho.route = o.resample;
	ho.block_length = o.block_length;
	ho.rate_given = cli_given(&a, "benchmark-rate");
	ho.rate = o.rate;
	ho.benchmark = bench;
	if (o.market_values && src->u) {
		if (hc_marketvalues_load(&mv, o.market_values, src->u->ids, src->u->m, &err)) {
			rc = cli_fail("horizon", &err);
			goto cleanup;
		}
		ho.market_values = mv;
		ho.market_values_name = o.market_values;
	}
	ho.lag_limit = o.lag_limit;
	cli_steps_bind(&steps, &ho.progress, "horizon", o.out.quiet, 0);
	if (hc_horizon_run(&res, src, sizes, nsizes, &ho, &err))
		rc = cli_fail("horizon", &err);
	else
		rc = cli_write_report("horizon", &o.out, res->report);
cleanup:
	hc_horizon_result_free(res);
	hc_source_free(src);
	hc_benchseries_free(bench);
	hc_free(mv);
	hc_free(sizes);
	cli_args_release(&a);
	return rc;
}
