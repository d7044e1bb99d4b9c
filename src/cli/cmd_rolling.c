/*
 * cmd_rolling.c - `holdcount rolling UNIVERSE --window W --step S`: the
 * averages and every exact rule's count, window by window (rolling.h).
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "holdcount/rolling.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

struct rolling_opts {
	struct cli_universe uni;
	struct cli_output out;
	struct cli_rules rul;      /* the rule options of `enough` and `report` */
	size_t window, step, step_months, refresh, threads;
	uint64_t seed;
};

#define OWN(f) offsetof(struct rolling_opts, f)
static const struct cli_option rolling_own[] = {
	{ "window", 'w', CLI_COUNT, OWN(window), "W", "periods in each window", NULL, "60" },
	{ "step", 0, CLI_COUNT, OWN(step), "S",
	  "periods between the ends of two windows, counted back from the last period (instead of "
	  "--step-months)", NULL, "calendar months" },
	{ "step-months", 0, CLI_COUNT, OWN(step_months), "M",
	  "calendar months between the ends of two windows: the newest ends at the last period, each "
	  "earlier one at the last period of the month M months before (a month's last trading day on "
	  "daily data, the month end on monthly data)", NULL,
	  "12, or 1 on weekly and daily data" },
	{ "seed", 0, CLI_U64, OWN(seed), "S",
	  "bootstrap seed; every window uses it, and the same seed gives the same output", NULL, "1" },
	{ "threads", 0, CLI_THREADS, OWN(threads), "N",
	  "threads for the bootstrap; the output does not depend on it", NULL, "every core" },
	{ "refresh", 0, CLI_COUNT, OWN(refresh), "R",
	  "recompute the running sums from scratch at least every R windows", NULL, "64" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group rolling_group = { "rolling options", rolling_own };

/* The rule group of `enough` and `report`, as rolling windows use it: the
 * exact rules, with a bootstrap per window only when asked. */
static const struct cli_omit rolling_rules_omit[] = {
	{ "band", "rolling windows evaluate the exact rules only (band draws random portfolios)" },
	{ "lag-share", "rolling windows evaluate the exact rules only (lag-share draws random portfolios)" },
	{ "shortfall", "rolling windows evaluate the exact rules only (lag-share, once shortfall, draws random portfolios)" },
	{ "alexeev-tapon", "rolling windows evaluate the exact rules from the averages only (alexeev-tapon needs the "
	  "exact spread, and its sampled form draws random portfolios)" },
	{ "interval", "rolling windows give percentile intervals (enough --interval percentile gives the same for "
	  "one window over the whole sample)" },
	{ "policy", "rolling windows give each window's counts, not a recommendation: enough and report give it" },
	{ "policy-at", "rolling windows give each window's counts, not a recommendation: enough and report give it" },
	{ "bootstrap-sampled", "rolling windows evaluate the exact rules only; the sampled rules have no windows" },
	{ "bootstrap-paths", "rolling windows evaluate the exact rules only; the sampled rules have no windows" },
	{ NULL, NULL }
};
static const struct cli_default rolling_rules_defaults[] = {
	{ "rules", "exact" },
	{ "bootstrap", "0" },
	{ "bootstrap-kind", "block" },
	{ "block-length", "round(W^(1/3))" },
	{ NULL, NULL }
};

static const struct cli_omit rolling_universe_omit[] = {
	{ "covariance", "a covariance matrix has no periods to roll over; give a return history" },
	{ NULL, NULL }
};

static const struct cli_group_use rolling_groups[] = {
	{ &rolling_group, 0, NULL, NULL },
	{ &cli_group_rules, offsetof(struct rolling_opts, rul), rolling_rules_omit, rolling_rules_defaults },
	{ &cli_group_universe, offsetof(struct rolling_opts, uni), rolling_universe_omit, NULL },
	{ &cli_group_output, offsetof(struct rolling_opts, out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_rolling = {
	"rolling", cmd_rolling,
	"how the averages and the count needed move through rolling windows",
	"UNIVERSE",
	"Cuts the return history into windows of W periods anchored at the last date: the newest "
	"ends at the last period, each earlier one at the last period of a calendar month "
	"(--step-months M apart: 12 on monthly or slower data, 1 on weekly or daily data), or "
	"with --step S every S periods back from the last. For each window it gives its first and last dates, the securities kept (complete in the "
	"window, or those meeting --min-coverage with --missing pairwise), the average variance, "
	"covariance and correlation, the floor sigma, and the count every exact rule recommends "
	"(with --bootstrap, its 5%, 50% and 95% percentiles over resampled periods). Securities "
	"listed late or delisted enter and leave the windows as they did. Figures are annualised "
	"by the periods per year.",
	1, 1, rolling_groups
};

static int load(const struct rolling_opts *o, const char *path, struct universe **u)
{
	struct universe_options uo;
	struct hc_error err;
	int rc;

	*u = NULL;
	if ((rc = cli_universe_options("rolling", &o->uni, &uo)))
		return rc;
	/* Every security as read: each window applies the policy itself. */
	uo.missing = UNIVERSE_MISSING_KEEP;
	hc_error_clear(&err);
	rc = hc_universe_load(u, path, &uo, &err);
	if (rc)
		return cli_fail("rolling", &err);
	if ((rc = cli_restrict("rolling", &o->uni, UNIVERSE_MISSING_KEEP, u)))
		return rc;
	return cli_data_check("rolling", &o->uni, *u);
}

static int options(const struct rolling_opts *o, const struct cli_args *a,
		   struct rolling_options *ro)
{
	int rc;

	hc_rolling_options_init(ro);
	ro->window = o->window;
	ro->step = o->step;
	if (cli_given(a, "step") && cli_given(a, "step-months"))
		return cli_usage_error("rolling", "--step counts periods and --step-months calendar months; give one");
	if (cli_given(a, "step-months") && !o->step_months)
		return cli_usage_error("rolling", "--step-months must be at least 1, found 0");
	/* calendar steps unless --step counts periods; the default (step_months
	 * 0 here) is chosen once the data's periods per year are known */
	ro->step_months = cli_given(a, "step") ? 0 : o->step_months;
	ro->refresh = o->refresh;
	ro->missing = o->uni.missing == CLI_MISSING_PAIRWISE ? UNIVERSE_MISSING_PAIRWISE
		    : o->uni.missing == CLI_MISSING_ALIVE ? UNIVERSE_MISSING_KEEP : UNIVERSE_MISSING_COMPLETE;
	ro->min_coverage = o->uni.min_coverage;
	if ((rc = cli_rules_config("rolling", &o->rul, a, 1, 0, &ro->rules)))
		return rc;
	if (!o->rul.rules)
		ro->rules.selected = RULES_EXACT_MASK;
	else if (ro->rules.selected & ~RULES_EXACT_MASK)
		return cli_usage_error("rolling", "--rules: rolling windows evaluate the exact rules "
				       "only (near-floor, marginal, next-holding, tracking-error, statman-borrowing, "
				       "statman-lending)");
	ro->replicates = o->rul.bootstrap;
	ro->boot.kind = o->rul.bootstrap_kind;
	ro->boot.block_length = o->rul.block_length;
	ro->boot.seed = o->seed;
	ro->boot.threads = (int)o->threads;
	return HC_OK;
}

int cmd_rolling(int argc, char **argv)
{
	struct rolling_opts o;
	struct rolling_options ro;
	struct rolling_result *res = NULL;
	struct universe *u = NULL;
	struct report *r = NULL;
	struct cli_progress prog;
	struct cli_args a;
	struct hc_error err;
	int rc;

	memset(&o, 0, sizeof o);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	o.window = 60;
	o.step = 12;
	o.refresh = ROLLING_DEFAULT_REFRESH;
	cli_rules_init(&o.rul);
	o.rul.bootstrap = 0;
	o.rul.bootstrap_kind = BOOTSTRAP_BLOCK;   /* rolling's own default, as before */
	o.seed = 1;
	rc = cli_parse(&cli_command_rolling, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	if ((rc = options(&o, &a, &ro)) || (rc = load(&o, a.positional[0], &u)))
		goto cleanup;
	cli_progress_init(&prog, "windows", "windows", o.out.quiet);
	ro.progress = cli_progress_update;
	ro.progress_ctx = &prog;
	{
		struct hc_source src;

		hc_source_init_series(&src, u);   /* every security as read */
		if (!cli_given(&a, "step") && !ro.step_months)
			ro.step_months = u->periods_per_year > 13 ? 1 : 12;
		rc = hc_rolling_run(&res, &src, &ro, &err);
	}
	cli_progress_finish(&prog);
	if (rc) {
		rc = cli_fail("rolling", &err);
		goto cleanup;
	}
	r = hc_report_alloc();
	if (!r || hc_rolling_report(r, res, &err) || hc_rolling_report_context(r, res) || hc_report_add_cautions(r)) {
		if (!err.code)
			hc_error(&err, HC_ENOMEM, "out of memory for the report");
		rc = cli_fail("rolling", &err);
		goto cleanup;
	}
	rc = cli_write_report("rolling", &o.out, r);
cleanup:
	hc_report_free(r);
	hc_rolling_result_free(res);
	hc_universe_free(u);
	cli_args_release(&a);
	return rc;
}
