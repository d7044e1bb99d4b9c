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

#define RUL(f) offsetof(struct cli_rules, f)
static const struct cli_option rules_own[] = {
	{ "rules", 0, CLI_STRING, RUL(rules), "LIST",
	  "rules to apply: near-floor, marginal, band, cost-benefit, tracking-error, shortfall, or all, exact, sampled",
	  NULL, "all (exact only from summary statistics)" },
	{ "near-floor", 0, CLI_FRACTION, RUL(near_floor), "X",
	  "near-floor: expected sd within X of the floor sd", NULL, "10%" },
	{ "marginal", 0, CLI_STRING, RUL(marginal), "EPS",
	  "marginal: one more holding lowers the expected sd by less than EPS a year (0.10pp, 0.1% or 0.001)",
	  NULL, "0.10pp" },
	{ "band", 0, CLI_STRING, RUL(band), "Q:X",
	  "band: the Q-quantile of sampled sd within X of the floor sd", NULL, "95%:10%" },
	{ "premium", 0, CLI_FRACTION, RUL(premium), "R",
	  "cost-benefit: the universe portfolio's premium a year", NULL, "5% (a placeholder: set it)" },
	{ "holding-cost", 0, CLI_FRACTION, RUL(holding_cost), "C",
	  "cost-benefit: the yearly cost of one more holding", NULL, "0.05% (a placeholder: set it)" },
	{ "te-budget", 0, CLI_FRACTION, RUL(te_budget), "B",
	  "tracking-error: expected tracking error against the universe within B a year", NULL, "2%" },
	{ "shortfall", 0, CLI_STRING, RUL(shortfall), "D:P",
	  "shortfall: fewer than P of sampled portfolios trail the universe's return by more than D a year",
	  NULL, "1%:10%" },
	{ "bootstrap", 0, CLI_COUNT, RUL(bootstrap), "B",
	  "bootstrap replicates for the count's interval (0: no interval)", NULL, "1000" },
	{ "bootstrap-kind", 0, CLI_CHOICE, RUL(bootstrap_kind), NULL,
	  "resample periods in moving blocks (Kuensch 1989) or stationary blocks (Politis & Romano 1994)",
	  kind_choices, "block" },
	{ "block-length", 0, CLI_COUNT, RUL(block_length), "L",
	  "block length (mean length for stationary) in periods; 0 means the default", NULL, "round(T^(1/3))" },
	{ "bootstrap-sampled", 0, CLI_FLAG, RUL(bootstrap_sampled), NULL,
	  "also bootstrap the sampled rules (band, shortfall): re-samples portfolios per replicate, costly",
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
				       strcmp(opt, "band") == 0 ? "95%:10%" : "1%:10%");
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
		cfg->selected = RULES_EXACT_MASK | RULES_FLAG(RULES_BAND);
	if (o->rules && hc_rules_parse_list(o->rules, &cfg->selected, &err))
		return cli_fail(cmd, &err);
	if (!have_data && (cfg->selected & RULES_SAMPLED_MASK))
		return cli_usage_error(cmd, "the band and shortfall rules need a universe file, not summary statistics");
	/* Everything but time-based figures works from a matrix (design.md section 8). */
	if (covariance && (cfg->selected & RULES_FLAG(RULES_SHORTFALL)))
		return cli_usage_error(cmd, "the shortfall rule needs return series: it compounds each portfolio's "
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
	if (o->shortfall && parse_pair(cmd, "shortfall", o->shortfall, &cfg->shortfall_d, &cfg->shortfall_p))
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
		return cli_usage_error(cmd, "--strata applies to the sampled rules (band, shortfall), and none is chosen");
	if (smp->paths == 0 && (cfg->selected & RULES_SAMPLED_MASK))
		return cli_usage_error(cmd, "--paths 0 leaves the band and shortfall rules nothing to read: choose --rules exact");
	return HC_OK;
}

int cli_enough_options(const char *cmd, const struct cli_rules *rul, const struct cli_sampling *smp,
		       const struct cli_args *a, int have_data, int covariance, struct hc_enough_options *eo)
{
	hc_enough_options_init(eo);
	eo->paths = smp->paths;
	eo->seed = smp->seed;
	eo->threads = (int)smp->threads;
	eo->bootstrap = rul->bootstrap;
	eo->bootstrap_kind = rul->bootstrap_kind;
	eo->block_length = rul->block_length;
	eo->bootstrap_sampled = rul->bootstrap_sampled;
	eo->bootstrap_paths = rul->bootstrap_paths;
	return cli_rules_config(cmd, rul, a, have_data, covariance, &eo->rules);
}
