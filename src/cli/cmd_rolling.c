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
#include "holdcount/universe.h"

struct rolling_opts {
	struct cli_universe uni;
	struct cli_output out;
	size_t window, step, refresh;
	const char *rules;
	double near_floor, premium, holding_cost, te_budget;
	const char *marginal;
	size_t bootstrap, block_length, threads;
	int bootstrap_kind;
	uint64_t seed;
};

static const char *const kind_words[] = { "block", "stationary", NULL };

#define OWN(f) offsetof(struct rolling_opts, f)
static const struct cli_option rolling_own[] = {
	{ "window", 'w', CLI_COUNT, OWN(window), "W", "periods in each window", NULL, "60" },
	{ "step", 0, CLI_COUNT, OWN(step), "S", "periods between the starts of two windows", NULL, "12" },
	{ "rules", 0, CLI_STRING, OWN(rules), "LIST",
	  "exact rules to evaluate: near-floor, marginal, next-holding, tracking-error, statman-borrowing, statman-lending, or exact",
	  NULL, "exact" },
	{ "near-floor", 0, CLI_FRACTION, OWN(near_floor), "X",
	  "near-floor rule: sigma within X of the floor sigma, as 0.1 or 10%", NULL, "10%" },
	{ "marginal", 0, CLI_STRING, OWN(marginal), "EPS",
	  "marginal rule: one more holding lowers annual sigma by less than EPS (0.10pp, 0.1% or 0.001)",
	  NULL, "0.10pp" },
	{ "premium", 0, CLI_FRACTION, OWN(premium), "P",
	  "next-holding rule: the universe portfolio's premium a year", NULL, "5%" },
	{ "holding-cost", 0, CLI_FRACTION, OWN(holding_cost), "C",
	  "next-holding rule: yearly cost of one more holding", NULL, "0.05%" },
	{ "te-budget", 0, CLI_FRACTION, OWN(te_budget), "B",
	  "tracking-error rule: annual tracking error budget", NULL, "2%" },
	{ "bootstrap", 0, CLI_COUNT, OWN(bootstrap), "B",
	  "bootstrap replicates per window for each count's 5-95% interval; 0 for none", NULL, "0" },
	{ "bootstrap-kind", 0, CLI_CHOICE, OWN(bootstrap_kind), NULL,
	  "moving-block (Kuensch, 1989) or stationary (Politis & Romano, 1994) bootstrap",
	  kind_words, "block" },
	{ "block-length", 0, CLI_COUNT, OWN(block_length), "L",
	  "bootstrap block length in periods", NULL, "round(W^(1/3))" },
	{ "seed", 0, CLI_U64, OWN(seed), "S",
	  "bootstrap seed; every window uses it, and the same seed gives the same output", NULL, "1" },
	{ "threads", 0, CLI_COUNT, OWN(threads), "N",
	  "threads for the bootstrap; the output does not depend on it", NULL, "every core" },
	{ "refresh", 0, CLI_COUNT, OWN(refresh), "R",
	  "recompute the running sums from scratch at least every R windows", NULL, "64" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group rolling_group = { "rolling options", rolling_own };

static const struct cli_omit rolling_universe_omit[] = {
	{ "covariance", "a covariance matrix has no periods to roll over; give a return history" },
	{ NULL, NULL }
};

static const struct cli_group_use rolling_groups[] = {
	{ &rolling_group, 0, NULL },
	{ &cli_group_universe, offsetof(struct rolling_opts, uni), rolling_universe_omit },
	{ &cli_group_output, offsetof(struct rolling_opts, out), NULL },
	{ NULL, 0, NULL }
};

const struct cli_command cli_command_rolling = {
	"rolling", cmd_rolling,
	"how the averages and the count needed move through rolling windows",
	"UNIVERSE",
	"Cuts the return history into windows of W periods, one starting every S periods, and "
	"for each window gives its first and last dates, the securities kept (complete in the "
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
	return rc ? cli_fail("rolling", &err) : HC_OK;
}

static int options(const struct rolling_opts *o, const struct cli_args *a,
		   struct rolling_options *ro)
{
	struct hc_error err;
	unsigned mask;

	hc_rolling_options_init(ro);
	hc_error_clear(&err);
	ro->window = o->window;
	ro->step = o->step;
	ro->refresh = o->refresh;
	ro->missing = o->uni.missing == CLI_MISSING_PAIRWISE ? UNIVERSE_MISSING_PAIRWISE
							     : UNIVERSE_MISSING_COMPLETE;
	ro->min_coverage = o->uni.min_coverage;
	if (o->rules) {
		if (hc_rules_parse_list(o->rules, &mask, &err))
			return cli_fail("rolling", &err);
		if (mask & ~RULES_EXACT_MASK)
			return cli_usage_error("rolling", "--rules: rolling windows evaluate the exact rules "
					       "only (near-floor, marginal, next-holding, tracking-error, statman-borrowing, statman-lending)");
		ro->rules.selected = mask;
	} else {
		ro->rules.selected = RULES_EXACT_MASK;
	}
	ro->rules.near_floor_x = o->near_floor;
	if (o->marginal && cli_parse_sd_step(o->marginal, &ro->rules.marginal_eps))
		return cli_usage_error("rolling", "bad --marginal '%s': expected a yearly sd step such as "
				       "0.10pp, 0.1%% or 0.001", o->marginal);
	if (cli_given(a, "premium") != cli_given(a, "holding-cost"))
		return cli_usage_error("rolling", "give --premium and --holding-cost together (or neither, "
				       "for the stated defaults)");
	ro->rules.premium = o->premium;
	ro->rules.holding_cost = o->holding_cost;
	ro->rules.cost_defaults = !cli_given(a, "premium") && !cli_given(a, "holding-cost");
	ro->rules.te_budget = o->te_budget;
	if (hc_rules_config_check(&ro->rules, &err))
		return cli_fail("rolling", &err);
	ro->replicates = o->bootstrap;
	ro->boot.kind = o->bootstrap_kind;
	ro->boot.block_length = o->block_length;
	ro->boot.seed = o->seed;
	ro->boot.threads = (int)o->threads;
	return HC_OK;
}

/* The rules' parameters and what the windows mean, beside the table. */
int cli_rolling_context(struct report *r, const struct rolling_result *res)
{
	char key[64], title[96];
	size_t j, c;
	int rc = 0;

	for (j = 0; j < res->nwindows; j++)
		if (res->windows[j].status == HC_OK)
			break;
	for (c = 0; j < res->nwindows && c < res->windows[j].nrules; c++) {
		const struct rule_result *rr = &res->windows[j].rules[c];
		snprintf(key, sizeof key, "parameters_%s", rr->name);
		for (char *p = key; *p; p++)
			if (*p == '-')
				*p = '_';
		snprintf(title, sizeof title, "%s parameters", rr->name);
		rc |= hc_report_add_text(r, key, title, rr->parameters);
	}
	rc |= hc_report_add_note(r, "each window's figures come from that window's periods alone; "
			      "averages drift over decades (Campbell, Lettau, Malkiel & Xu, 2001, "
			      "Journal of Finance 56(1)), so a count set once is worth revisiting");
	return rc;
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
	o.near_floor = RULES_DEFAULT_NEAR_FLOOR_X;
	o.premium = RULES_DEFAULT_PREMIUM;
	o.holding_cost = RULES_DEFAULT_HOLDING_COST;
	o.te_budget = RULES_DEFAULT_TE_BUDGET;
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
	rc = hc_rolling_run(&res, u, &ro, &err);
	cli_progress_finish(&prog);
	if (rc) {
		rc = cli_fail("rolling", &err);
		goto cleanup;
	}
	r = hc_report_alloc();
	if (!r || hc_rolling_report(r, res, &err) || cli_rolling_context(r, res) || hc_report_add_cautions(r)) {
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
