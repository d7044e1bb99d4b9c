/*
 * cli_rules.c - the rule options shared by `enough`, `report` and
 * `rolling`: one table, one parser per option kind, one translation into
 * the library's struct rules_config.
 */
#include "cli.h"

#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/bootstrap.h"
#include "holdcount/enough.h"
#include "holdcount/rules.h"

static const char *const kind_choices[] = { "block", "stationary", NULL };
static const char *const policy_at_choices[] = { "upper", "estimate", NULL };
static const char *const interval_choices[] = { "studentized", "bca", "percentile", NULL };

#define RUL(f) offsetof(struct cli_rules, f)
static const struct cli_option rules_own[] = {
	{ "rules", 0, CLI_STRING, RUL(rules), "LIST",
	  "rules to apply: near-floor, marginal, band, next-holding, tracking-error, lag-share, statman-borrowing, "
	  "statman-lending, alexeev-tapon, alexeev-tapon-sampled, or all, exact, sampled (old names cost-benefit "
	  "and shortfall still work); enough also takes the rules on the measures es95-near-floor, es99-near-floor, "
	  "drawdown-near-floor, alexeev-tapon-es, or measures (not in all: they pass every sampled portfolio's "
	  "return series through the measures, 2.5-9x the CPU time of the sd's sampled rules on the demo)",
	  NULL, "all (exact only from summary statistics)" },
	{ "near-floor", 0, CLI_FRACTION, RUL(near_floor), "X",
	  "near-floor: expected sd within X of the floor sd (also the X of es95-, es99- and drawdown-near-floor: "
	  "the mean measure within X of the equal-weight universe's)", NULL, "10%" },
	{ "marginal", 0, CLI_STRING, RUL(marginal), "EPS",
	  "marginal: one more holding lowers the expected sd by less than EPS a year (0.10pp, 0.1% or 0.001)",
	  NULL, "0.10pp" },
	{ "band", 0, CLI_STRING, RUL(band), "Q:X",
	  "band: the Q-quantile of sampled sd within X of the floor sd", NULL, "95%:10%" },
	{ "premium", 0, CLI_FRACTION, RUL(premium), "R",
	  "next-holding: the universe portfolio's premium a year", NULL, "5% (a placeholder: set it)" },
	{ "holding-cost", 0, CLI_FRACTION, RUL(holding_cost), "C",
	  "next-holding: the yearly cost of one more holding", NULL, "0.05% (a placeholder: set it)" },
	{ "statman", 0, CLI_STRING, RUL(statman), "B:L",
	  "statman-borrowing/-lending: the index's premium a year over the borrowing rate (B) and over the lending rate (L)",
	  NULL, "5.5%:7.3% (reproduce Statman's 30/40; set yours)" },
	{ "index-cost", 0, CLI_FRACTION, RUL(index_cost), "C",
	  "statman-borrowing/-lending: the index fund's cost disadvantage a year", NULL, "0.5% (set yours)" },
	{ "alexeev-tapon", 0, CLI_STRING, RUL(alexeev_tapon), "X:Q",
	  "alexeev-tapon: a random portfolio removes at least X of the removable variance with probability Q "
	  "(also alexeev-tapon-es's X and Q, on the expected shortfall at 95%)",
	  NULL, "90%:90%" },
	{ "te-budget", 0, CLI_FRACTION, RUL(te_budget), "B",
	  "tracking-error: expected tracking error against the universe within B a year", NULL, "2%" },
	{ "lag-share", 0, CLI_STRING, RUL(shortfall), "D:P",
	  "lag-share: fewer than P of sampled portfolios lag the universe's return by more than D a year",
	  NULL, "1%:10%" },
	{ "shortfall", 0, CLI_STRING, RUL(shortfall), "D:P",
	  "old spelling of --lag-share, kept so that scripts keep working", NULL, NULL },
	{ "policy", 0, CLI_STRING, RUL(policy), "RULE",
	  "the rule whose count becomes the recommended minimum holdings", NULL, "near-floor" },
	{ "policy-at", 0, CLI_CHOICE, RUL(policy_at), NULL,
	  "take the recommended count at the upper end of the 90% interval or at the estimate",
	  policy_at_choices, "upper" },
	{ "bootstrap", 0, CLI_COUNT, RUL(bootstrap), "B",
	  "bootstrap replicates for the count's interval (0: no interval)", NULL, "1000" },
	{ "bootstrap-kind", 0, CLI_CHOICE, RUL(bootstrap_kind), NULL,
	  "resample periods in moving blocks (Kuensch 1989) or stationary blocks (Politis & Romano 1994)",
	  kind_choices, "stationary" },
	{ "block-length", 0, CLI_COUNT, RUL(block_length), "L",
	  "block length (mean length for stationary) in periods; 0 means the default", NULL,
	  "data-driven, Politis & White 2004 with Patton, Politis & White 2009" },
	{ "interval", 0, CLI_CHOICE, RUL(interval), NULL,
	  "exact rules' interval: studentized on the log count (bootstrap-t, Hall 1988), bias-corrected and "
	  "accelerated (Efron 1987) or plain percentiles", interval_choices, "studentized" },
	{ "bootstrap-sampled", 0, CLI_FLAG, RUL(bootstrap_sampled), NULL,
	  "also bootstrap the sampled rules (band, lag-share, alexeev-tapon-sampled), alexeev-tapon and the rules on "
	  "the measures: re-samples portfolios and recomputes the exact spread per replicate, costly (the measure "
	  "rules: one more sampler run with the measures a replicate, about 0.3 s of CPU at 1000 paths on "
	  "139 securities x 240 periods)",
	  NULL, NULL },
	{ "bootstrap-paths", 0, CLI_COUNT, RUL(bootstrap_paths), "K",
	  "portfolios a size in each replicate of --bootstrap-sampled", NULL, "1000" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
/* Shared with `holdcount report` (cli.h), so both read the same options. */
const struct cli_group cli_group_rules = { "rule options", rules_own };

void cli_rules_init(struct cli_rules *r)
{
	memset(r, 0, sizeof *r);
	r->bootstrap = BOOTSTRAP_DEFAULT_REPLICATES;
	r->bootstrap_kind = BOOTSTRAP_STATIONARY;
	r->bootstrap_paths = ENOUGH_DEFAULT_BOOTSTRAP_PATHS;
}

/* A finite number in s[0..len), as a decimal or with a "%" suffix (or
 * "pp", percentage points, when pp is set) meaning hundredths. */
static int parse_percent(const char *s, size_t len, int pp, double *out)
{
	char buf[64], *end;
	double x;

	if (len == 0 || len >= sizeof buf)
		return -1;
	memcpy(buf, s, len);
	buf[len] = 0;
	x = strtod(buf, &end);
	if (end == buf || !isfinite(x))
		return -1;
	if (strcmp(end, "%") == 0 || (pp && strcmp(end, "pp") == 0))
		x /= 100;
	else if (*end)
		return -1;
	*out = x;
	return 0;
}

/* A yearly sd step: "0.10pp" (percentage points), "0.1%" or "0.001". */
static int parse_sd_step(const char *s, double *out)
{
	return parse_percent(s, strlen(s), 1, out);
}

/* One share: "95%" or "0.95". */
static int parse_share(const char *s, size_t len, double *out)
{
	return parse_percent(s, len, 0, out);
}

/* "A:B" as two shares. */
static int parse_pair(const char *cmd, const char *opt, const char *s, double *a, double *b)
{
	const char *colon = strchr(s, ':');

	if (!colon || parse_share(s, (size_t)(colon - s), a) || parse_share(colon + 1, strlen(colon + 1), b))
		return cli_usage_error(cmd, "bad --%s '%s': expected two shares as A:B, e.g. %s", opt, s,
				       strcmp(opt, "band") == 0 ? "95%:10%" : strcmp(opt, "statman") == 0 ? "5.5%:7.3%"
				       : strcmp(opt, "alexeev-tapon") == 0 ? "90%:90%" : "1%:10%");
	return HC_OK;
}

int cli_rules_config(const char *cmd, const struct cli_rules *o, const struct cli_args *a,
		     int have_data, int covariance, struct rules_config *cfg)
{
	struct hc_error err;

	hc_rules_config_init(cfg);
	hc_error_clear(&err);
	if (!have_data)
		cfg->selected = RULES_EXACT_MASK;
	else if (covariance)
		cfg->selected = RULES_ALL_MASK & ~RULES_FLAG(RULES_LAG_SHARE);
	if (o->rules && hc_rules_parse_list(o->rules, &cfg->selected, &err))
		return cli_fail(cmd, &err);
	if (!have_data && (cfg->selected & (RULES_SAMPLED_MASK | RULES_SPREAD_MASK | RULES_MEASURE_MASK)))
		return cli_usage_error(cmd, "the band, lag-share, alexeev-tapon and measure rules need a universe file, not summary statistics");
	if ((cfg->selected & RULES_MEASURE_MASK) && strcmp(cmd, "enough") != 0)
		return cli_usage_error(cmd, "the rules on the measures (es95-near-floor, es99-near-floor, drawdown-near-floor, "
				       "alexeev-tapon-es) run in holdcount enough only");
	if (covariance && (cfg->selected & RULES_MEASURE_MASK))
		return cli_usage_error(cmd, "the rules on the measures need each portfolio's return series, and a "
				       "covariance matrix has none");
	/* Everything but time-based figures works from a matrix (design.md section 8). */
	if (covariance && (cfg->selected & RULES_FLAG(RULES_LAG_SHARE)))
		return cli_usage_error(cmd, "the lag-share rule needs return series: it compounds each portfolio's "
				       "returns over the periods, and a covariance matrix has none (--rules exact,band "
				       "runs every other rule)");
	if (covariance && cli_given(a, "bootstrap") && o->bootstrap > 0)
		return cli_usage_error(cmd, "--bootstrap needs return data: a covariance matrix has no periods to resample");
	if (covariance && o->bootstrap_sampled)
		return cli_usage_error(cmd, "--bootstrap-sampled needs return data: a covariance matrix has no periods to resample");
	if (cli_given(a, "near-floor"))
		cfg->near_floor_x = o->near_floor;
	if (o->marginal && parse_sd_step(o->marginal, &cfg->marginal_eps))
		return cli_usage_error(cmd, "bad --marginal '%s': expected a yearly sd step such as 0.10pp, 0.1%% or 0.001",
				       o->marginal);
	if (o->band && parse_pair(cmd, "band", o->band, &cfg->band_q, &cfg->band_x))
		return HC_EUSAGE;
	if (o->shortfall && parse_pair(cmd, cli_given(a, "shortfall") ? "shortfall" : "lag-share", o->shortfall,
				       &cfg->shortfall_d, &cfg->shortfall_p))
		return HC_EUSAGE;
	if (o->statman && parse_pair(cmd, "statman", o->statman, &cfg->borrow_premium, &cfg->lend_premium))
		return HC_EUSAGE;
	if (cli_given(a, "index-cost"))
		cfg->index_cost = o->index_cost;
	cfg->statman_defaults = !o->statman && !cli_given(a, "index-cost");
	if (o->alexeev_tapon && parse_pair(cmd, "alexeev-tapon", o->alexeev_tapon, &cfg->at_x, &cfg->at_q))
		return HC_EUSAGE;
	if (cli_given(a, "premium"))
		cfg->premium = o->premium;
	if (cli_given(a, "holding-cost"))
		cfg->holding_cost = o->holding_cost;
	cfg->cost_defaults = !cli_given(a, "premium") && !cli_given(a, "holding-cost");
	if (cli_given(a, "premium") != cli_given(a, "holding-cost"))
		return cli_usage_error(cmd, "give --premium and --holding-cost together (or neither, for the stated defaults)");
	if (cli_given(a, "te-budget"))
		cfg->te_budget = o->te_budget;
	if (hc_rules_config_check(cfg, &err))
		return cli_fail(cmd, &err);
	return HC_OK;
}


int cli_enough_checks(const char *cmd, const struct cli_sampling *smp, const struct cli_strata *strat,
		      const struct rules_config *cfg)
{
	if ((strat->map || strat->per_stratum_max || strat->proportional) && !(cfg->selected & RULES_SAMPLED_MASK))
		return cli_usage_error(cmd, "--strata applies to the sampled rules (band, lag-share, alexeev-tapon-sampled), "
				       "and none is chosen");
	if (smp->paths == 0 && (cfg->selected & (RULES_SAMPLED_MASK | RULES_MEASURE_MASK)))
		return cli_usage_error(cmd, "--paths 0 leaves the sampled rules nothing to read: choose --rules exact");
	return HC_OK;
}

/* --policy RULE: one rule among those run, as its enum rules_id in *policy
 * (-1 when not given: the library's default). */
static int policy_option(const char *cmd, const struct cli_rules *o, const struct rules_config *cfg, int *policy)
{
	struct hc_error err;
	unsigned one;
	int k;

	*policy = -1;
	if (!o->policy)
		return HC_OK;
	hc_error_clear(&err);
	if (hc_rules_parse_list(o->policy, &one, &err))
		return cli_usage_error(cmd, "bad --policy '%s': expected one rule name, such as near-floor", o->policy);
	if (one & (one - 1))
		return cli_usage_error(cmd, "bad --policy '%s': expected one rule, not a group", o->policy);
	if (!(cfg->selected & one))
		return cli_usage_error(cmd, "--policy %s: that rule is not among the rules run (add it to --rules)",
				       o->policy);
	for (k = 0; k < RULES_COUNT; k++)
		if (one == RULES_FLAG(k))
			*policy = k;
	return HC_OK;
}

int cli_enough_options(const char *cmd, const struct cli_rules *rul, const struct cli_sampling *smp,
		       const struct cli_args *a, int have_data, int covariance, struct hc_enough_options *eo)
{
	int rc;

	hc_enough_options_init(eo);
	eo->paths = smp->paths;
	eo->seed = smp->seed;
	eo->threads = (int)smp->threads;
	eo->bootstrap = rul->bootstrap;
	eo->bootstrap_kind = rul->bootstrap_kind;
	eo->block_length = rul->block_length;
	eo->bootstrap_sampled = rul->bootstrap_sampled;
	eo->bootstrap_paths = rul->bootstrap_paths;
	eo->interval = rul->interval;
	eo->policy_at = rul->policy_at;
	if ((rc = cli_rules_config(cmd, rul, a, have_data, covariance, &eo->rules)))
		return rc;
	return policy_option(cmd, rul, &eo->rules, &eo->policy);
}
