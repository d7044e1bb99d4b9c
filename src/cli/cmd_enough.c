/*
 * cmd_enough.c - `holdcount enough UNIVERSE`: the holding count past which
 * extra holdings add little, by each rule, with a bootstrap interval.
 *
 * The rules and their sources are in docs/enough.md; the library does the
 * work (rules.h, bootstrap.h), this file parses, loads and reports.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "holdcount/bootstrap.h"
#include "holdcount/covmatrix.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/rules.h"
#include "holdcount/sampler.h"
#include "holdcount/strata.h"
#include "holdcount/universe.h"

#define ENOUGH_DEFAULT_BOOTSTRAP_PATHS 1000
/* An average sd above this a year (300%) is taken as a unit mistake (common
 * practice: even single stocks rarely exceed 100% a year). */
#define RULES_IMPLAUSIBLE_SD 3.0

struct enough_opts {
	struct cli_rules rul;
	struct cli_sampling smp;
	struct cli_summary sum;
	struct cli_universe uni;
	struct cli_output out;
	struct cli_strata strat;
};

static const char *const kind_choices[] = { "block", "stationary", NULL };
static const char *const policy_at_choices[] = { "upper", "estimate", NULL };
static const char *const interval_choices[] = { "studentized", "bca", "percentile", NULL };

#define RUL(f) offsetof(struct cli_rules, f)
static const struct cli_option rules_own[] = {
	{ "rules", 0, CLI_STRING, RUL(rules), "LIST",
	  "rules to apply: near-floor, marginal, band, next-holding, tracking-error, lag-share, statman-borrowing, "
	  "statman-lending, alexeev-tapon, alexeev-tapon-sampled, or all, exact, sampled (old names cost-benefit "
	  "and shortfall still work)",
	  NULL, "all (exact only from summary statistics)" },
	{ "near-floor", 0, CLI_FRACTION, RUL(near_floor), "X",
	  "near-floor: expected sd within X of the floor sd", NULL, "10%" },
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
	  "alexeev-tapon: a random portfolio removes at least X of the removable variance with probability Q",
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
	  "block length (mean length for stationary) in periods", NULL,
	  "data-driven, Politis & White 2004 with Patton, Politis & White 2009" },
	{ "interval", 0, CLI_CHOICE, RUL(interval), NULL,
	  "exact rules' interval: studentized on the log count (bootstrap-t, Hall 1988), bias-corrected and "
	  "accelerated (Efron 1987) or plain percentiles", interval_choices, "studentized" },
	{ "bootstrap-sampled", 0, CLI_FLAG, RUL(bootstrap_sampled), NULL,
	  "also bootstrap the sampled rules (band, lag-share, alexeev-tapon-sampled): re-samples portfolios per replicate, costly",
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

#define OFF(f) offsetof(struct enough_opts, f)

/* The rules look at every count, so there is no grid to choose. */
static const struct cli_omit enough_sampling_omit[] = {
	{ "sizes", "enough looks at every holding count, not at a grid of them" },
	{ NULL, NULL }
};

static const struct cli_group_use enough_groups[] = {
	{ &cli_group_rules, OFF(rul), NULL },
	{ &cli_group_sampling, OFF(smp), enough_sampling_omit },
	{ &cli_group_summary, OFF(sum), NULL },
	{ &cli_group_universe, OFF(uni), NULL },
	{ &cli_group_matrix_repair, OFF(uni), NULL },
	{ &cli_group_output, OFF(out), NULL },
	{ &cli_group_strata, OFF(strat), NULL },
	{ NULL, 0, NULL }
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
	"With --strata, the sampled rules (band, lag-share, alexeev-tapon-sampled) draw portfolios spread across strata "
	"(--proportional, or at most --per-stratum-max K in any stratum); the exact rules are "
	"unchanged. With --covariance (a covariance matrix) or --missing pairwise the band and "
	"alexeev-tapon-sampled rules draw their portfolios from the matrix; lag-share, which compounds returns over time, needs "
	"complete return series. See docs/enough.md for each rule and its source.",
	0, 1, enough_groups
};

/* A yearly sd step: "0.10pp" (percentage points), "0.1%" or "0.001". */
int cli_parse_sd_step(const char *s, double *out)
{
	char *end;
	double x = strtod(s, &end);

	if (end == s || !isfinite(x))
		return -1;
	if (strcmp(end, "pp") == 0 || strcmp(end, "%") == 0)
		x /= 100;
	else if (*end)
		return -1;
	*out = x;
	return 0;
}

/* One share: "95%" or "0.95". */
static int parse_share(const char *s, size_t len, double *out)
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
	if (strcmp(end, "%") == 0)
		x /= 100;
	else if (*end)
		return -1;
	*out = x;
	return 0;
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
	if (!have_data && (cfg->selected & (RULES_SAMPLED_MASK | RULES_SPREAD_MASK)))
		return cli_usage_error(cmd, "the band, lag-share and alexeev-tapon rules need a universe file, not summary statistics");
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
	if (o->marginal && cli_parse_sd_step(o->marginal, &cfg->marginal_eps))
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
	if (o->policy) {
		unsigned one;

		if (hc_rules_parse_list(o->policy, &one, &err))
			return cli_usage_error(cmd, "bad --policy '%s': expected one rule name, such as near-floor", o->policy);
		if (one & (one - 1))
			return cli_usage_error(cmd, "bad --policy '%s': expected one rule, not a group", o->policy);
		if (!(cfg->selected & one))
			return cli_usage_error(cmd, "--policy %s: that rule is not among the rules run (add it to --rules)",
					       o->policy);
	}
	return HC_OK;
}

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
	*vbar = var ? o->sum.average_variance : o->sum.average_sd * o->sum.average_sd;
	/* correlation times the average variance: the equal-variance reading */
	*cbar = cov ? o->sum.average_covariance : o->sum.average_correlation * *vbar;
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


/* ---- the report ----------------------------------------------------------- */

struct enough_run {
	const struct universe *u;    /* NULL with summary statistics or a matrix */
	const char *matrix;          /* the covariance matrix's file, or NULL */
	const struct cli_psd *ps;    /* what --repair-psd did, or NULL */
	double vbar, cbar;           /* per period */
	size_t m;
	double ppy;
	int annualised;
	int bootstrapped;
	int interval;                /* 0 studentized, 1 BCa, 2 percentile */
	size_t replicates, block_length;
	int auto_block;
	int kind;
	uint64_t seed;
	size_t paths;
	size_t sampled_sizes;        /* sampled sizes 1..this */
	int sampled_bootstrapped;
	size_t bootstrap_paths;
	const char *no_interval;     /* why there is no interval, or NULL */
	const char *policy;          /* --policy RULE, or NULL for the default */
	int policy_at;               /* 0: upper end of the interval, 1: the estimate */
	int sentence_column;         /* 1: the rules table carries the sentence too (CSV, report folder) */
};

static int add_fields(struct report *r, const struct enough_run *e)
{
	double p = e->ppy, floor_var = e->cbar * p;
	double uvar = e->m ? (e->vbar / e->m + (1 - 1.0 / e->m) * e->cbar) * p : floor_var;
	int sd_style = e->annualised ? REPORT_STYLE_PERCENT : REPORT_STYLE_PLAIN;
	int bad = 0;

	if (e->u) {
		bad |= hc_report_add_text(r, "universe", "universe", e->u->source ? e->u->source : "-");
		bad |= hc_report_add_int(r, "securities", "securities", (long long)e->m);
		bad |= hc_report_add_int(r, "securities_dropped", "securities dropped", (long long)e->u->ndropped);
		bad |= hc_report_add_int(r, "periods", "periods", (long long)e->u->t);
		if (e->u->has_missing)
			bad |= hc_report_add_text(r, "input", "input", e->ps && e->ps->repaired
				? "return history with gaps; pairwise-complete covariances, repaired to the nearest "
				  "positive semi-definite matrix, for every rule but lag-share"
				: e->paths ? "return history with gaps; pairwise-complete covariances, from which the band and "
					    "alexeev-tapon-sampled rules draw their portfolios"
				: "return history with gaps; pairwise-complete covariances");
	} else if (e->matrix) {
		bad |= hc_report_add_text(r, "universe", "universe", e->matrix);
		bad |= hc_report_add_text(r, "input", "input", "covariance matrix");
		bad |= hc_report_add_int(r, "securities", "securities", (long long)e->m);
	} else if (e->m)
		bad |= hc_report_add_int(r, "securities", "securities", (long long)e->m);
	else
		bad |= hc_report_add_text(r, "securities", "securities", "unbounded");
	bad |= cli_add_scale(r, p, e->annualised);
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
	if (e->u || e->paths) {
		char seed[32];

		snprintf(seed, sizeof seed, "%llu", (unsigned long long)e->seed);
		bad |= hc_report_add_text(r, "seed", "seed", seed);
	}
	if (e->ps)
		bad |= cli_psd_fields(r, e->ps);
	return bad ? HC_ENOMEM : HC_OK;
}

static int add_notes(struct report *r, const struct enough_run *e)
{
	char text[700];
	int bad = 0;

	if (e->bootstrapped) {
		snprintf(text, sizeof text,
			 "count p05/p95: %s 90%% interval of each rule's count (p50: the median) over %zu "
			 "%s-bootstrap replicates of the periods (%sblock length %zu%s); empty (null) where it "
			 "reaches replicates in which the rule is not met%s",
			 e->interval == 0 ? "the exact rules' studentized (bootstrap-t on the log count, Hall 1988) and "
			 "the sampled rules' percentile" : e->interval == 1 ? "the exact rules' bias-corrected and "
			 "accelerated (BCa, Efron 1987) and the sampled rules' percentile" : "the percentile",
			 e->replicates, hc_bootstrap_kind_name(e->kind),
			 e->kind == BOOTSTRAP_STATIONARY ? "expected " : "", e->block_length,
			 e->auto_block ? ", data-driven: Politis & White 2004, Patton, Politis & White 2009" : "",
			 e->sampled_bootstrapped ? "" : "; sampled rules (band, lag-share, alexeev-tapon-sampled) have an interval only with --bootstrap-sampled");
		bad |= hc_report_add_note(r, text);
	} else if (e->no_interval)
		bad |= hc_report_add_note(r, e->no_interval);
	if (e->annualised && e->vbar * e->ppy > RULES_IMPLAUSIBLE_SD * RULES_IMPLAUSIBLE_SD) {
		snprintf(text, sizeof text,
			 "implausible: the average sd is %.4g%% a year, above %.0f%%; are the inputs in percent (variances in "
			 "percent squared?) rather than decimals?  Every count and figure here would then be wrong",
			 100 * sqrt(e->vbar * e->ppy), 100 * RULES_IMPLAUSIBLE_SD);
		bad |= hc_report_add_note(r, text);
	}
	if (!e->annualised)
		bad |= hc_report_add_note(r, "not annualised: the rule thresholds (--marginal, --te-budget, --premium, "
				       "--holding-cost) are compared on the scale of the inputs, not as yearly figures");
	bad |= hc_report_add_cautions(r);
	return bad ? HC_ENOMEM : HC_OK;
}

/* ---- the recommendation ------------------------------------------------- */

/* The default policy rule.  near-floor: it is exact (no sampling noise),
 * needs no premium or cost a committee would have to guess, has a bootstrap
 * interval, and asks what a minimum-holdings rule is for -- risk close to
 * the least that diversification within this universe can reach. */
#define ENOUGH_DEFAULT_POLICY RULES_NEAR_FLOOR

/* What each rule asks, in words for a policy statement. */
static const char *const policy_phrase[RULES_COUNT] = {
	"a random equal-weight portfolio's expected risk is close to the least that diversification across the universe can reach",
	"one more holding lowers expected risk by no more than a set step",
	"even an unlucky random portfolio's risk is close to the least that diversification can reach",
	"the value of the risk one more holding removes is no more than that holding's cost",
	"the expected tracking error against the equal-weight universe is within a budget",
	"few random portfolios lag the universe's return by more than a set margin",
	"a levered index would add no more return than the index fund's cost disadvantage (Statman, 1987, borrowing investor)",
	"a levered index would add no more return than the index fund's cost disadvantage (Statman, 1987, lending investor)",
	"a random portfolio removes most of the removable risk with high probability (Alexeev & Tapon, 2014)",
	"a random portfolio removes most of the removable risk with high probability (Alexeev & Tapon, 2014, sampled)",
};

/* The rule the policy takes: --policy, else the default, else the first rule run. */
static const struct rule_result *policy_rule(const struct enough_run *e, const struct rule_result *res,
					     size_t nres, int *fallback)
{
	int want = ENOUGH_DEFAULT_POLICY;
	unsigned mask;
	struct hc_error err;
	size_t k;

	*fallback = 0;
	if (e->policy && hc_rules_parse_list(e->policy, &mask, &err) == HC_OK)
		for (k = 0; k < RULES_COUNT; k++)
			if (mask == RULES_FLAG(k))
				want = (int)k;
	for (k = 0; k < nres; k++)
		if (res[k].rule == want)
			return &res[k];
	*fallback = 1;
	return nres ? &res[0] : NULL;
}

/* "240 periods (12 a year) from 2005-01-31 to 2024-12-31", or what stands
 * in for the data. */
static void policy_period(const struct enough_run *e, char *buf, size_t len)
{
	char d0[16], d1[16];

	if (e->u && e->u->dates && e->u->t) {
		hc_universe_format_date(e->u->dates[0], d0);
		hc_universe_format_date(e->u->dates[e->u->t - 1], d1);
		snprintf(buf, len, "%zu periods (%.4g a year) from %s to %s", e->u->t, e->ppy, d0, d1);
	} else if (e->matrix)
		snprintf(buf, len, "a covariance matrix (no data period)");
	else
		snprintf(buf, len, "summary statistics (no data period)");
}

static void policy_universe(const struct enough_run *e, char *buf, size_t len)
{
	if (e->u && e->u->has_missing)
		snprintf(buf, len, "%zu securities from %s, gaps kept, pairwise-complete covariances%s", e->m,
			 e->u->source ? e->u->source : "the universe file",
			 e->ps && e->ps->repaired ? " repaired to the nearest positive semi-definite matrix" : "");
	else if (e->u)
		snprintf(buf, len, "%zu securities from %s with complete histories (%zu with gaps dropped)", e->m,
			 e->u->source ? e->u->source : "the universe file", e->u->ndropped);
	else if (e->matrix)
		snprintf(buf, len, "%zu securities in %s", e->m, e->matrix);
	else if (e->m)
		snprintf(buf, len, "%zu securities described by their averages", e->m);
	else
		snprintf(buf, len, "an unbounded universe described by its averages");
}

/* The count the policy takes, or 0 with *reason set. */
static size_t policy_count(const struct enough_run *e, const struct rule_result *p, int *at_upper,
			   const char **reason)
{
	*reason = NULL;
	*at_upper = 0;
	if (!p->defined) {
		*reason = "the rule cannot be evaluated on these data (see its note)";
		return 0;
	}
	if (!p->met) {
		*reason = "the rule is not met within the universe";
		return 0;
	}
	if (e->policy_at == 1 || !p->bootstrapped)
		return p->count;
	*at_upper = 1;
	if (isnan(p->count_p95)) {
		*reason = "the upper end of the 90% interval is not met: more than 5% of the bootstrap replicates "
			  "never meet the rule";
		return 0;
	}
	/* An upper end below the estimate (possible when the replicates lean
	 * low) is not a prudent minimum: take the larger. */
	return (size_t)p->count_p95 > p->count ? (size_t)p->count_p95 : p->count;
}

/* The rules table's columns policy (yes on the policy rule's row),
 * recommended_minimum (its count, or none with the reason) and, for CSV,
 * policy_sentence: so that the CSV alone carries the recommendation. */
static int policy_columns(struct report *r, const struct rule_result *res, const struct rule_result *p,
			  size_t n, const char *reason, const char *sentence)
{
	struct report_table *t = NULL;
	size_t k, row = (size_t)(p - res), col;

	for (k = 0; k < r->ntables; k++)
		if (strcmp(r->tables[k]->key, "rules") == 0)
			t = r->tables[k];
	if (!t || row >= t->nrows)
		return 0;
	col = t->ncols;
	if (hc_report_table_add_column(t, "policy", "policy", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "recommended_minimum", "recommended minimum", REPORT_STYLE_PLAIN) ||
	    (sentence && hc_report_table_add_column(t, "policy_sentence", "policy sentence", REPORT_STYLE_PLAIN)))
		return -1;
	for (k = 0; k < t->nrows; k++)
		hc_report_table_set_bool(t, k, col, k == row);
	if (n)
		hc_report_table_set_int(t, row, col + 1, (long long)n);
	else if (hc_report_table_set_none(t, row, col + 1, reason ? reason : "no recommendation"))
		return -1;
	return sentence ? hc_report_table_set_text(t, row, col + 2, sentence) : 0;
}

static int add_policy(struct report *r, const struct enough_run *e, const struct rule_result *res, size_t nres)
{
	const struct rule_result *p;
	const char *reason;
	char period[160], uni[400], on[600], basis[200], text[1800];
	size_t n;
	int fallback, at_upper, bad = 0;

	if (!(p = policy_rule(e, res, nres, &fallback)))
		return HC_OK;
	n = policy_count(e, p, &at_upper, &reason);
	policy_period(e, period, sizeof period);
	policy_universe(e, uni, sizeof uni);
	if (e->u)
		snprintf(on, sizeof on, "%s of returns of %s", period, uni);
	else
		snprintf(on, sizeof on, "%s, %s", uni, period);
	if (at_upper)
		snprintf(basis, sizeof basis, "upper end of the 90%% bootstrap interval");
	else if (e->policy_at == 1)
		snprintf(basis, sizeof basis, "estimate (--policy-at estimate)");
	else
		snprintf(basis, sizeof basis, "estimate (no interval to take the upper end of)");
	bad |= hc_report_add_text(r, "policy_rule", "policy rule", p->name);
	bad |= hc_report_add_text(r, "policy_basis", "policy count taken at", basis);
	if (n)
		bad |= hc_report_add_int(r, "policy_count", "recommended minimum holdings", (long long)n);
	else
		bad |= hc_report_add_none(r, "policy_count", "recommended minimum holdings");
	if (reason)
		bad |= hc_report_add_text(r, "policy_reason", "no recommendation because", reason);
	bad |= hc_report_add_text(r, "policy_period", "data period", period);
	bad |= hc_report_add_text(r, "policy_universe", "universe and treatment", uni);
	if (n && at_upper)
		snprintf(text, sizeof text,
			 "The portfolio shall hold at least %zu securities. Basis: on %s, the smallest "
			 "holding count at which %s (%s rule, %s) is estimated at %zu, with a 90%% bootstrap interval "
			 "of %.0f to %.0f; the minimum is set at the interval's upper end to allow for estimation error. "
			 "This is a historical estimate for random equal-weight holdings, to be reviewed when the data "
			 "are refreshed; it does not replace the fund's legal limits or licensed advice.",
			 n, on, policy_phrase[p->rule], p->name, p->parameters, p->count,
			 p->count_p05, p->count_p95);
	else if (n)
		snprintf(text, sizeof text,
			 "The portfolio shall hold at least %zu securities. Basis: on %s, the smallest "
			 "holding count at which %s (%s rule, %s) is estimated at %zu%s. This is a historical estimate "
			 "for random equal-weight holdings, to be reviewed when the data are refreshed; it does not "
			 "replace the fund's legal limits or licensed advice.",
			 n, on, policy_phrase[p->rule], p->name, p->parameters, p->count,
			 p->bootstrapped ? "; the policy takes the estimate, not the upper end of its 90% interval"
			 : "; there is no interval for its estimation error");
	else
		snprintf(text, sizeof text, "No minimum can be recommended from the %s rule: %s.", p->name, reason);
	bad |= hc_report_add_text(r, "policy_sentence", "policy sentence", text);
	bad |= policy_columns(r, res, p, n, reason, e->sentence_column ? text : NULL);
	if (fallback)
		bad |= hc_report_add_note(r, "policy: near-floor, the default policy rule, was not run, so the first rule run stands in; choose one with --policy");
	return bad ? HC_ENOMEM : HC_OK;
}

/* The report `holdcount enough` prints: fields, strata, the rules table
 * (its CSV), notes and cautions. */
static int build_report(const char *cmd, const struct enough_run *e, const struct cli_strata *strat,
			const struct rule_result *res, size_t nres, struct report **out)
{
	struct report *r = hc_report_alloc();
	struct hc_error err;

	hc_error_clear(&err);
	*out = NULL;
	if (!r || add_fields(r, e) || (strat && cli_strata_fields(r, strat)) ||
	    hc_rules_report(r, res, nres, &err) || add_policy(r, e, res, nres) || add_notes(r, e)) {
		hc_report_free(r);
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		return cli_fail(cmd, &err);
	}
	*out = r;
	return HC_OK;
}

/* ---- the command ------------------------------------------------------------ */

static int run_summary(const struct enough_opts *o, const struct cli_args *a,
		       const struct rules_config *cfg, struct enough_run *e,
		       struct rule_result *res, size_t *nres)
{
	struct rules_input in;
	struct moments mo;
	struct hc_error err;
	int rc;

	rc = summary_averages(o, a, &e->vbar, &e->cbar);
	if (rc)
		return rc;
	e->m = o->sum.securities;
	/* The same checks as `formula` (c-bar at most v-bar, c-bar at least
	 * -v-bar/(M-1), M not 1), by the same function. */
	hc_error_clear(&err);
	if (hc_moments_from_summary(&mo, e->vbar, e->cbar, e->m, &err))
		return cli_fail("enough", &err);
	e->annualised = cli_given(a, "periods-per-year");
	e->ppy = e->annualised ? o->uni.periods_per_year : 1.0;
	if (!(e->ppy > 0))
		return cli_usage_error("enough", "--periods-per-year must be positive, found %g", e->ppy);
	if (cli_given(a, "bootstrap") && o->rul.bootstrap > 0)
		return cli_usage_error("enough", "--bootstrap needs a universe file: summary statistics have no periods to resample");
	e->no_interval = "no interval: summary statistics have no periods to resample";
	memset(&in, 0, sizeof in);
	in.vbar = e->vbar;
	in.cbar = e->cbar;
	in.m = e->m;
	in.periods_per_year = e->ppy;
	rc = hc_rules_evaluate(cfg, &in, res, nres, &err);
	return rc ? cli_fail("enough", &err) : HC_OK;
}

/* What a return-history run reads: the command's name for messages and the
 * option groups it shares with `holdcount report`. */
struct data_run {
	const char *cmd;
	const struct cli_rules *rul;
	const struct cli_sampling *smp;
	struct cli_strata *strat;
	int quiet;
	int stages;                /* announce each long step (cli_stage) */
	int sentence_column;       /* the rules table carries the policy sentence (CSV, report folder) */
};

/* Options that contradict the rules chosen (before any file is read). */
static int data_checks(const char *cmd, const struct cli_sampling *smp, const struct cli_strata *strat,
		       const struct rules_config *cfg)
{
	if ((strat->map || strat->per_stratum_max || strat->proportional) && !(cfg->selected & RULES_SAMPLED_MASK))
		return cli_usage_error(cmd, "--strata applies to the sampled rules (band, lag-share, alexeev-tapon-sampled), and none is chosen");
	if (smp->paths == 0 && (cfg->selected & RULES_SAMPLED_MASK))
		return cli_usage_error(cmd, "--paths 0 leaves the sampled rules nothing to read: choose --rules exact");
	return HC_OK;
}

/* The band and shortfall rules by sampling (hc_rules_sampled stops at the
 * smallest stage of sizes that settles them) the return series u, or
 * (band only) the covariance matrix cm when it is not NULL; their results
 * replace the "needs sampled portfolios" placeholders that hc_rules_evaluate
 * left.  ppy: u's periods per year, or the matrix's scale. */
static int run_sampled(const struct data_run *d, const struct universe *u, const struct covmatrix *cm,
		       const struct rules_config *cfg, double cbar, double ppy, struct enough_run *e,
		       struct rule_result *res, size_t nres)
{
	struct rules_config band = *cfg;
	struct sampler_options so;
	struct cli_progress prog;
	struct rule_result sr[3];
	struct hc_error err;
	size_t n = 0, k, j;
	int rc;

	hc_error_clear(&err);
	hc_sampler_options_init(&so);
	so.paths = d->smp->paths;
	so.seed = d->smp->seed;
	so.threads = (int)d->smp->threads;
	so.periods_per_year = ppy;
	if (!cm && (rc = cli_strata_apply(d->cmd, d->strat, u, &so)))
		return rc;
	if (d->stages)
		cli_stage(d->cmd, d->quiet, "sampling random portfolios for the sampled rules");
	cli_progress_init(&prog, "sampling", "paths", d->quiet);
	so.progress = cli_progress_update;
	so.progress_ctx = &prog;
	band.selected &= ~RULES_FLAG(RULES_LAG_SHARE);
	rc = cm ? hc_rules_sampled_matrix(&band, cm->a, cm->m, &so, e->vbar, cbar, sr, &n, &e->sampled_sizes, &err)
		: hc_rules_sampled(cfg, u, &so, e->vbar, cbar, sr, &n, &e->sampled_sizes, &err);
	cli_progress_finish(&prog);
	if (rc)
		return cli_fail(d->cmd, &err);
	for (k = 0; k < n; k++)
		for (j = 0; j < nres; j++)
			if (res[j].rule == sr[k].rule)
				res[j] = sr[k];
	e->paths = d->smp->paths;
	e->seed = d->smp->seed;
	if (!cm && d->strat->per_stratum_max) {
		/* Past sum_s min(K, m_s) no portfolio meets the cap: say so. */
		size_t top = hc_strata_cap_most(d->strat->strata, d->strat->per_stratum_max);

		for (j = 0; j < nres; j++)
			if ((RULES_FLAG(res[j].rule) & RULES_SAMPLED_MASK) && res[j].defined && !res[j].met)
				snprintf(res[j].note, sizeof res[j].note,
					 "not met up to %zu holdings, the most with at most %zu in every stratum",
					 top, d->strat->per_stratum_max);
	}
	return HC_OK;
}

static int run_bootstrap(const struct data_run *d, const struct universe *u,
			 const struct rules_config *cfg, struct enough_run *e,
			 struct rule_result *res, size_t nres)
{
	struct bootstrap_base *b = NULL;
	struct bootstrap_result *br = NULL;
	struct bootstrap_options bo;
	struct cli_progress prog;
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	hc_bootstrap_options_init(&bo);
	bo.replicates = d->rul->bootstrap;
	bo.kind = d->rul->bootstrap_kind;
	bo.block_length = d->rul->block_length;
	bo.seed = d->smp->seed;
	bo.threads = (int)d->smp->threads;
	rc = hc_bootstrap_base_alloc(&b, u, &err);
	if (rc == HC_OK && !bo.block_length)
		rc = hc_bootstrap_auto_block_length(b, &bo.block_length, &err);
	if (rc == HC_OK) {
		if (d->stages) {
			char what[96];
			snprintf(what, sizeof what, "bootstrap of the exact rules (%zu replicates)", d->rul->bootstrap);
			cli_stage(d->cmd, d->quiet, what);
		}
		cli_progress_init(&prog, "bootstrap", "replicates", d->quiet);
		bo.progress = cli_progress_update;
		bo.progress_ctx = &prog;
		rc = hc_bootstrap_run(&br, b, &bo, &err);
		cli_progress_finish(&prog);
	}
	if (rc == HC_OK && d->rul->interval == 0)
		rc = hc_rules_bootstrap_exact_t(cfg, b, &bo, bo.block_length, br->vbar, br->cbar, br->replicates,
						e->vbar, e->cbar, u->periods_per_year, res, nres, &err);
	else if (rc == HC_OK && d->rul->interval == 1) {
		double *jv = NULL, *jc = NULL;
		size_t nj = 0;

		/* The jackknife needs two blocks; with fewer, no acceleration. */
		if (u->t / bo.block_length >= 2)
			rc = hc_bootstrap_jackknife(b, bo.block_length, &jv, &jc, &nj, &err);
		if (rc == HC_OK)
			rc = hc_rules_bootstrap_exact_bca(cfg, br->vbar, br->cbar, br->replicates, jv, jc, nj,
							  e->vbar, e->cbar, u->m, u->periods_per_year, res, nres, &err);
		hc_free(jv);
		hc_free(jc);
	} else if (rc == HC_OK)
		rc = hc_rules_bootstrap_exact(cfg, br->vbar, br->cbar, br->replicates, u->m,
					   u->periods_per_year, res, nres, &err);
	for (size_t j = 0; rc == HC_OK && j < nres; j++)
		if (res[j].rule == RULES_ALEXEEV_TAPON && res[j].defined && !res[j].note[0])
			snprintf(res[j].note, sizeof res[j].note, "no interval: the exact spread is not recomputed per "
				 "replicate; alexeev-tapon-sampled has one with --bootstrap-sampled");
	if (rc == HC_OK) {
		e->bootstrapped = 1;
		e->interval = d->rul->interval;
		e->auto_block = d->rul->block_length == 0;
		e->replicates = br->replicates;
		e->block_length = br->block_length;
		e->kind = br->kind;
	}
	if (rc == HC_OK && d->rul->bootstrap_sampled && (cfg->selected & RULES_SAMPLED_MASK)) {
		struct sampler_options so;

		hc_sampler_options_init(&so);
		so.paths = d->rul->bootstrap_paths;
		so.threads = (int)d->smp->threads;
		so.periods_per_year = u->periods_per_year;
		if ((rc = cli_strata_apply(d->cmd, d->strat, u, &so))) {
			hc_bootstrap_result_free(br);
			hc_bootstrap_base_free(b);
			return rc;
		}
		if (d->stages)
			cli_stage(d->cmd, d->quiet, "bootstrap of the sampled rules");
		cli_progress_init(&prog, "sampled bootstrap", "replicates", d->quiet);
		bo.progress = cli_progress_update;
		bo.progress_ctx = &prog;
		rc = hc_rules_bootstrap_sampled(cfg, u, b, &bo, &so, res, nres, &err);
		cli_progress_finish(&prog);
		e->sampled_bootstrapped = rc == HC_OK;
	}
	hc_bootstrap_result_free(br);
	hc_bootstrap_base_free(b);
	return rc ? cli_fail(d->cmd, &err) : HC_OK;
}

/* A covariance matrix (--covariance): the exact rules from its averages
 * and the band rule from random portfolios drawn from it; no periods, so no
 * shortfall rule (refused by cli_rules_config) and no interval. */
static int run_matrix(struct enough_opts *o, const struct cli_args *a, const char *path,
		      const struct rules_config *cfg, struct cli_psd *ps, struct enough_run *e,
		      struct rule_result *res, size_t *nres)
{
	struct data_run d = { "enough", &o->rul, &o->smp, &o->strat, o->out.quiet, 0,
			      o->out.format != CLI_FORMAT_TABLE };
	struct covmatrix *cm = NULL;
	struct rules_input in;
	struct moments mo;
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	if (o->strat.map || o->strat.per_stratum_max || o->strat.proportional)
		return cli_usage_error("enough", "--strata draws from return series, not from a covariance matrix");
	if ((rc = data_checks("enough", &o->smp, &o->strat, cfg)))
		return rc;
	e->annualised = cli_given(a, "periods-per-year");
	e->ppy = e->annualised ? o->uni.periods_per_year : 1.0;
	if (!(e->ppy > 0))
		return cli_usage_error("enough", "--periods-per-year must be positive, found %g", e->ppy);
	cli_psd_init(ps, o->uni.repair_psd, e->ppy, e->annualised, "the covariance matrix");
	if ((rc = cli_load_covariance("enough", &o->uni, a, path, ps, &cm)))
		return rc;
	e->ps = ps;
	e->matrix = path;
	rc = hc_moments_from_matrix(&mo, cm->a, cm->m, &err);
	if (rc) {
		hc_error_prefix(&err, path);
		rc = cli_fail("enough", &err);
		goto cleanup;
	}
	e->vbar = mo.average_variance;
	e->cbar = mo.average_covariance;
	e->m = mo.m;
	e->no_interval = "no interval: a covariance matrix has no periods to resample";
	memset(&in, 0, sizeof in);
	in.vbar = e->vbar;
	in.cbar = e->cbar;
	in.m = e->m;
	in.periods_per_year = e->ppy;
	in.mo = &mo;
	rc = hc_rules_evaluate(cfg, &in, res, nres, &err);
	if (rc) {
		rc = cli_fail("enough", &err);
		goto cleanup;
	}
	if (cfg->selected & RULES_SAMPLED_MASK)
		rc = run_sampled(&d, NULL, cm, cfg, e->cbar, e->ppy, e, res, *nres);
cleanup:
	hc_covmatrix_free(cm);
	return rc;
}

/* Every selected rule on a return history: exact, sampled, bootstrap.
 * With gaps left (--missing pairwise) the band rule draws from cm, the
 * pairwise-complete covariances (NULL when band is not selected). */
static int run_data(const struct data_run *d, const struct universe *u, const struct covmatrix *cm,
		    const struct moments *mo, const struct rules_config *cfg, struct enough_run *e,
		    struct rule_result *res, size_t *nres)
{
	struct rules_input in;
	struct hc_error err;
	int rc;

	e->u = u;
	e->vbar = mo->average_variance;
	e->cbar = mo->average_covariance;
	e->m = u->m;
	e->ppy = u->periods_per_year;
	e->annualised = 1;
	e->seed = d->smp->seed;
	memset(&in, 0, sizeof in);
	in.vbar = e->vbar;
	in.cbar = e->cbar;
	in.m = e->m;
	in.periods_per_year = e->ppy;
	in.mo = mo;
	hc_error_clear(&err);
	rc = hc_rules_evaluate(cfg, &in, res, nres, &err);
	if (rc)
		return cli_fail(d->cmd, &err);
	if ((cfg->selected & RULES_SAMPLED_MASK) && u->has_missing) {
		for (size_t j = 0; j < *nres; j++)
			if (res[j].rule == RULES_LAG_SHARE)
				snprintf(res[j].note, sizeof res[j].note,
					 "needs complete data: a portfolio's return over time needs every member's "
					 "return in every period");
		if (cm && (rc = run_sampled(d, u, cm, cfg, e->cbar, u->periods_per_year, e, res, *nres)))
			return rc;
	} else if (cfg->selected & RULES_SAMPLED_MASK) {
		rc = run_sampled(d, u, NULL, cfg, e->cbar, u->periods_per_year, e, res, *nres);
		if (rc)
			return rc;
	}
	if (d->rul->bootstrap == 0)
		e->no_interval = "no interval: --bootstrap 0";
	else if (u->has_missing)
		e->no_interval = "no interval: the bootstrap resamples whole periods and needs complete data";
	else
		rc = run_bootstrap(d, u, cfg, e, res, *nres);
	return rc;
}

/* cli_enough_data, with the pairwise matrix cm (or NULL) and what
 * --repair-psd did (ps, or NULL). */
static int enough_data(const struct data_run *d, const struct universe *u, const struct covmatrix *cm,
		       const struct cli_psd *ps, const struct moments *mo, const struct rules_config *cfg,
		       struct rule_result *res, size_t *nres, struct report **out)
{
	struct enough_run e;
	int rc;

	*out = NULL;
	*nres = 0;
	if ((rc = data_checks(d->cmd, d->smp, d->strat, cfg)))
		return rc;
	memset(&e, 0, sizeof e);
	e.ps = ps;
	e.policy = d->rul->policy;
	e.policy_at = d->rul->policy_at;
	e.sentence_column = d->sentence_column;
	rc = run_data(d, u, cm, mo, cfg, &e, res, nres);
	return rc ? rc : build_report(d->cmd, &e, d->strat, res, *nres, out);
}

int cli_enough_data(const char *cmd, const struct cli_rules *rul, const struct cli_sampling *smp,
		    struct cli_strata *strat, int quiet, int stages, const struct universe *u,
		    const struct moments *mo, const struct rules_config *cfg,
		    struct rule_result *res, size_t *nres, struct report **out)
{
	struct data_run d = { cmd, rul, smp, strat, quiet, stages, 1 };

	return enough_data(&d, u, NULL, NULL, mo, cfg, res, nres, out);
}

/* The sampled rules that can draw from a covariance matrix. */
#define MATRIX_SAMPLED (RULES_FLAG(RULES_BAND) | RULES_FLAG(RULES_ALEXEEV_TAPON_SAMPLED))

/* A return history: load it, then the rules as `holdcount report` also runs them. */
static int enough_file(struct enough_opts *o, const char *path, const struct rules_config *cfg,
		       struct cli_psd *ps, struct universe **up, struct rule_result *res, size_t *nres,
		       struct report **out)
{
	struct data_run d = { "enough", &o->rul, &o->smp, &o->strat, o->out.quiet, 0,
			      o->out.format != CLI_FORMAT_TABLE };
	struct covmatrix *cm = NULL;
	struct moments mo;
	struct hc_error err;
	int rc;

	if ((rc = data_checks("enough", &o->smp, &o->strat, cfg)))
		return rc;
	rc = cli_load_universe("enough", &o->uni, path, up);
	if (rc)
		return rc;
	cli_psd_init(ps, o->uni.repair_psd, (*up)->periods_per_year, 1, "the pairwise-complete covariance matrix");
	/* With gaps left the band rule draws from the pairwise-complete
	 * covariances, and --repair-psd makes the exact rules use the repair too. */
	if ((*up)->has_missing && (o->strat.map || o->strat.per_stratum_max || o->strat.proportional))
		return cli_usage_error("enough", "--strata draws from complete return series, and '%s' has gaps "
				       "under --missing pairwise", path);
	if ((*up)->has_missing && ((cfg->selected & MATRIX_SAMPLED) || ps->asked) &&
	    (rc = cli_pairwise_matrix("enough", *up, path,
				      "the pairwise-complete covariances are not positive semi-definite, so the band "
				      "rule cannot draw random portfolios from them; --rules exact leaves it out, and "
				      CLI_PSD_HINT, ps, &cm)))
		return rc;
	hc_error_clear(&err);
	rc = ps->repaired ? hc_moments_from_matrix(&mo, cm->a, cm->m, &err) : hc_moments_from_universe(&mo, *up, &err);
	if (rc)
		rc = cli_fail("enough", &err);
	else
		rc = enough_data(&d, *up, (cfg->selected & MATRIX_SAMPLED) ? cm : NULL, ps, &mo, cfg,
				 res, nres, out);
	hc_covmatrix_free(cm);
	return rc;
}

int cmd_enough(int argc, char **argv)
{
	struct enough_opts o;
	struct cli_args a;
	struct rules_config cfg;
	struct rule_result res[RULES_COUNT];
	struct enough_run e;
	struct universe *u = NULL;
	struct report *r = NULL;
	struct cli_psd ps;
	size_t nres = 0;
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
	memset(&e, 0, sizeof e);
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
	rc = cli_rules_config("enough", &o.rul, &a, have_data, o.uni.covariance, &cfg);
	if (rc)
		goto cleanup;
	/* Summary statistics and a matrix stay on the inputs' scale unless told
	 * the periods per year: the rules' texts then say "per period". */
	cfg.per_period = (!have_data || o.uni.covariance) && !cli_given(&a, "periods-per-year");
	if ((!have_data || o.uni.covariance) && (o.strat.map || o.strat.per_stratum_max || o.strat.proportional)) {
		rc = cli_usage_error("enough", "--strata draws from return series, not from %s",
				     have_data ? "a covariance matrix" : "summary statistics");
		goto cleanup;
	}
	e.policy = o.rul.policy;
	e.policy_at = o.rul.policy_at;
	e.sentence_column = o.out.format != CLI_FORMAT_TABLE;
	if (have_data && !o.uni.covariance) {
		rc = enough_file(&o, a.positional[0], &cfg, &ps, &u, res, &nres, &r);
	} else {
		if (have_data)
			rc = run_matrix(&o, &a, a.positional[0], &cfg, &ps, &e, res, &nres);
		else
			rc = run_summary(&o, &a, &cfg, &e, res, &nres);
		if (rc == HC_OK)
			rc = build_report("enough", &e, have_data ? &o.strat : NULL, res, nres, &r);
	}
	if (rc == HC_OK)
		rc = cli_write_report("enough", &o.out, r);
cleanup:
	hc_report_free(r);
	cli_strata_release(&o.strat);
	hc_universe_free(u);
	cli_args_release(&a);
	return rc;
}
