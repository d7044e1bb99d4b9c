/*
 * rules.c - the rules for "enough holdings" (design.md section 5).
 *
 * The exact rules use E[s2(N)] = vbar/N + (1 - 1/N) cbar and
 * E[TE2(N)] = (vbar - cbar)(1/N - 1/M) (design.md section 3).  Closed forms
 * give a candidate count; the count reported is always confirmed by
 * evaluating the rule itself at N and N-1, so no floating-point rounding of
 * the closed form can move it by one.
 */
#include "holdcount/rules.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>

#include "holdcount/curve.h"
#include "holdcount/memory.h"
#include "holdcount/paths.h"
#include "holdcount/strata.h"

static const char *const rule_names[RULES_COUNT] = {
	"near-floor", "marginal", "band", "next-holding", "tracking-error",
	"lag-share", "statman-borrowing", "statman-lending", "alexeev-tapon",
	"alexeev-tapon-sampled", "es95-near-floor", "es99-near-floor", "drawdown-near-floor",
	"alexeev-tapon-es"
};

/* Earlier spellings, still accepted by hc_rules_parse_list so that scripts
 * keep working (docs/enough.md lists them). */
static const struct { const char *name; int rule; } rule_aliases[] = {
	{ "cost-benefit", RULES_NEXT_HOLDING },
	{ "shortfall", RULES_LAG_SHARE },
};

/* What each rule's value measures: [0] annualised, [1] on the inputs' own
 * scale (cfg->per_period). */
static const char *const rule_units[2][RULES_COUNT] = {
	{ "sd a year", "sd reduction a year", "sd a year (quantile)",
	  "return a year", "RMS tracking error a year", "share of portfolios",
	  "return a year", "return a year", "share of portfolios", "share of portfolios",
	  "expected shortfall 95% per period (mean)", "expected shortfall 99% per period (mean)",
	  "maximum drawdown over the sample (mean)", "share of portfolios" },
	{ "sd per period", "sd reduction per period", "sd per period (quantile)",
	  "return per period", "RMS tracking error per period", "share of portfolios",
	  "return per period", "return per period", "share of portfolios", "share of portfolios",
	  "expected shortfall 95% per period (mean)", "expected shortfall 99% per period (mean)",
	  "maximum drawdown over the sample (mean)", "share of portfolios" }
};

/* " a year" or " per period" after an amount. */
static const char *scale_word(int per_period)
{
	return per_period ? " per period" : " a year";
}

void hc_rules_config_init(struct rules_config *cfg)
{
	memset(cfg, 0, sizeof *cfg);
	cfg->selected = RULES_ALL_MASK;
	cfg->near_floor_x = RULES_DEFAULT_NEAR_FLOOR_X;
	cfg->marginal_eps = RULES_DEFAULT_MARGINAL_EPS;
	cfg->band_q = RULES_DEFAULT_BAND_Q;
	cfg->band_x = RULES_DEFAULT_BAND_X;
	cfg->premium = RULES_DEFAULT_PREMIUM;
	cfg->holding_cost = RULES_DEFAULT_HOLDING_COST;
	cfg->cost_defaults = 1;
	cfg->te_budget = RULES_DEFAULT_TE_BUDGET;
	cfg->shortfall_d = RULES_DEFAULT_SHORTFALL_D;
	cfg->shortfall_p = RULES_DEFAULT_SHORTFALL_P;
	cfg->borrow_premium = RULES_DEFAULT_BORROW_PREMIUM;
	cfg->lend_premium = RULES_DEFAULT_LEND_PREMIUM;
	cfg->index_cost = RULES_DEFAULT_INDEX_COST;
	cfg->statman_defaults = 1;
	cfg->at_x = RULES_DEFAULT_AT_X;
	cfg->at_q = RULES_DEFAULT_AT_Q;
}

static int positive(double x)
{
	return isfinite(x) && x > 0;
}

int hc_rules_config_check(const struct rules_config *cfg, struct hc_error *err)
{
	if (!positive(cfg->near_floor_x))
		return hc_error(err, HC_EUSAGE, "bad near-floor margin: expected a positive share, found %g", cfg->near_floor_x);
	if (!positive(cfg->marginal_eps))
		return hc_error(err, HC_EUSAGE, "bad marginal step: expected a positive reduction, found %g", cfg->marginal_eps);
	if (!(cfg->band_q > 0 && cfg->band_q < 1))
		return hc_error(err, HC_EUSAGE, "bad band quantile: expected a share strictly between 0 and 1, found %g", cfg->band_q);
	if (!positive(cfg->band_x))
		return hc_error(err, HC_EUSAGE, "bad band margin: expected a positive share, found %g", cfg->band_x);
	if (!positive(cfg->premium))
		return hc_error(err, HC_EUSAGE, "bad premium: expected a positive yearly return, found %g", cfg->premium);
	if (!positive(cfg->holding_cost))
		return hc_error(err, HC_EUSAGE, "bad holding cost: expected a positive yearly cost, found %g", cfg->holding_cost);
	if (!positive(cfg->te_budget))
		return hc_error(err, HC_EUSAGE, "bad tracking-error budget: expected a positive yearly figure, found %g", cfg->te_budget);
	if (!(isfinite(cfg->shortfall_d) && cfg->shortfall_d >= 0))
		return hc_error(err, HC_EUSAGE, "bad lag-share margin: expected a yearly return of 0 or more, found %g", cfg->shortfall_d);
	if (!(cfg->shortfall_p > 0 && cfg->shortfall_p < 1))
		return hc_error(err, HC_EUSAGE, "bad lag-share share: expected a share strictly between 0 and 1, found %g", cfg->shortfall_p);
	if (!positive(cfg->borrow_premium) || !positive(cfg->lend_premium))
		return hc_error(err, HC_EUSAGE, "bad Statman premium: expected positive yearly premiums, found %g and %g",
				cfg->borrow_premium, cfg->lend_premium);
	if (!positive(cfg->index_cost))
		return hc_error(err, HC_EUSAGE, "bad index cost: expected a positive yearly cost disadvantage, found %g", cfg->index_cost);
	if (!(cfg->at_x > 0 && cfg->at_x < 1) || !(cfg->at_q > 0 && cfg->at_q < 1))
		return hc_error(err, HC_EUSAGE, "bad Alexeev-Tapon share or probability: expected both strictly between 0 and 1, found %g and %g",
				cfg->at_x, cfg->at_q);
	return HC_OK;
}

const char *hc_rules_name(int rule)
{
	return rule >= 0 && rule < RULES_COUNT ? rule_names[rule] : NULL;
}

static int lookup_rule(const char *s, size_t len, unsigned *mask)
{
	static const struct { const char *name; unsigned mask; } groups[] = {
		{ "all", RULES_ALL_MASK },
		{ "exact", RULES_EXACT_MASK },
		{ "sampled", RULES_SAMPLED_MASK },
		{ "measures", RULES_MEASURE_MASK },
	};
	size_t k;

	for (k = 0; k < RULES_COUNT; k++)
		if (strlen(rule_names[k]) == len && strncmp(s, rule_names[k], len) == 0) {
			*mask = RULES_FLAG(k);
			return 0;
		}
	for (k = 0; k < sizeof rule_aliases / sizeof rule_aliases[0]; k++)
		if (strlen(rule_aliases[k].name) == len && strncmp(s, rule_aliases[k].name, len) == 0) {
			*mask = RULES_FLAG(rule_aliases[k].rule);
			return 0;
		}
	for (k = 0; k < sizeof groups / sizeof groups[0]; k++)
		if (strlen(groups[k].name) == len && strncmp(s, groups[k].name, len) == 0) {
			*mask = groups[k].mask;
			return 0;
		}
	return -1;
}

int hc_rules_parse_list(const char *text, unsigned *mask, struct hc_error *err)
{
	const char *p = text;
	unsigned out = 0, one;

	for (;;) {
		const char *end = strchr(p, ',');
		size_t len = end ? (size_t)(end - p) : strlen(p);

		if (lookup_rule(p, len, &one) != 0)
			return hc_error(err, HC_EUSAGE,
					"bad rule list: '%.*s' is not a rule (expected near-floor, marginal, band, next-holding, tracking-error, lag-share, statman-borrowing, statman-lending, alexeev-tapon, alexeev-tapon-sampled, es95-near-floor, es99-near-floor, drawdown-near-floor, alexeev-tapon-es, all, exact, sampled or measures)",
					(int)len, p);
		out |= one;
		if (!end)
			break;
		p = end + 1;
	}
	*mask = out;
	return HC_OK;
}

/* ---- exact rules ------------------------------------------------------ */

/* The exact rules' state: annualised averages a = cbar P (the floor) and
 * b = (vbar - cbar) P (the diversifiable part at N = 1). */
struct exact {
	double vbar, cbar, a, b;
	size_t m;        /* 0 = unbounded */
	size_t nmax;     /* largest count considered */
};

static void exact_init(struct exact *e, double vbar, double cbar, size_t m, double ppy)
{
	e->vbar = vbar * ppy;
	e->cbar = cbar * ppy;
	e->a = cbar * ppy;
	e->b = (vbar - cbar) * ppy;
	e->m = m;
	e->nmax = m ? m : RULES_UNBOUNDED_MAX;
}

/* Annualised sqrt(E[s2(N)]). */
static double exact_sd(const struct exact *e, double n)
{
	double v = e->a + e->b / n;

	return v > 0 ? sqrt(v) : 0.0;
}

/* sqrt(E[s2(N)]) - sqrt(E[s2(N+1)]), written as the difference of squares
 * over the sum so that it keeps its digits at large N:
 * b (1/N - 1/(N+1)) / (s(N) + s(N+1)) = b / (N (N+1) (s(N) + s(N+1))). */
static double exact_step(const struct exact *e, size_t n)
{
	double dn = (double)n, sum = exact_sd(e, dn) + exact_sd(e, dn + 1);

	if (sum <= 0)
		return 0.0;
	return e->b / (dn * (dn + 1) * sum);
}

static int near_floor_meets(const struct exact *e, double x, size_t n)
{
	double dn = (double)n;

	/* v-bar/N + (1 - 1/N) c-bar <= (1+x)^2 c-bar, as the issue states it. */
	return e->vbar / dn + (1 - 1 / dn) * e->cbar <= (1 + x) * (1 + x) * e->cbar;
}

/* Expected variance a + b/N at or below the limit (Statman's rule, below). */
static int variance_meets(const struct exact *e, double limit, size_t n)
{
	return e->a + e->b / (double)n <= limit;
}

static double te2(const struct exact *e, size_t n)
{
	double inv_m = e->m ? 1.0 / (double)e->m : 0.0;
	double v = e->b * (1.0 / (double)n - inv_m);

	return v > 0 ? v : 0.0;
}

static int te_meets(const struct exact *e, double budget, size_t n)
{
	return te2(e, n) <= budget * budget;
}

/*
 * Smallest n in [1, nmax] with meets(n), given that meets is monotone
 * (false then true) and cand is a closed-form guess: confirm at cand and
 * cand - 1 and walk the few steps rounding can cost.  Returns 0 when none.
 */
static size_t confirm_count(const struct exact *e, double param,
			    int (*meets)(const struct exact *, double, size_t),
			    double cand)
{
	size_t n;

	if (!(cand >= 1))
		n = 1;
	else if (cand >= (double)e->nmax)
		n = e->nmax;
	else
		n = (size_t)ceil(cand);
	while (n > 1 && meets(e, param, n - 1))
		n--;
	while (n <= e->nmax && !meets(e, param, n))
		n++;
	return n <= e->nmax ? n : 0;
}

/* Marginal and next-holding: smallest N in 1..nmax-1 whose step
 * s(N) - s(N+1) is at or below limit (<=, so that a value printed equal
 * to its threshold is never a contradiction).  With cbar >= 0, s(N) = sqrt(a + b/N) is
 * convex in N (its second derivative is b/(N^3 s) (1 - b/(4 N s^2)) > 0
 * because s^2 >= b/N), so the step falls with N and a bisection finds the
 * first N exactly.  With cbar < 0 (possible only in a finite universe)
 * convexity can fail near N = M, so every N is scanned. */
static size_t first_small_step(const struct exact *e, double limit)
{
	size_t lo, hi, n;

	if (e->nmax < 2)
		return 0;
	if (e->a < 0) {
		for (n = 1; n < e->nmax; n++)
			if (exact_step(e, n) <= limit)
				return n;
		return 0;
	}
	if (exact_step(e, 1) <= limit)
		return 1;
	if (!(exact_step(e, e->nmax - 1) <= limit))
		return 0;
	lo = 1;                 /* step(lo) > limit */
	hi = e->nmax - 1;       /* step(hi) <= limit */
	while (hi - lo > 1) {
		size_t mid = lo + (hi - lo) / 2;

		if (exact_step(e, mid) <= limit)
			hi = mid;
		else
			lo = mid;
	}
	return hi;
}

/* Universe sigma for next-holding and Statman's index: the equal-weight
 * portfolio of all M, or the floor when unbounded. */
static double universe_sd(const struct exact *e)
{
	return e->m ? exact_sd(e, (double)e->m) : (e->a > 0 ? sqrt(e->a) : 0.0);
}

/* The count of one exact rule: 1 = met (count set), 0 = not met,
 * -1 = undefined on these averages. */
static int exact_count(const struct rules_config *cfg, int rule,
		       const struct exact *e, size_t *count)
{
	size_t n = 0;

	switch (rule) {
	case RULES_NEAR_FLOOR: {
		double gap = ((1 + cfg->near_floor_x) * (1 + cfg->near_floor_x) - 1) * e->cbar;

		if (!(e->cbar > 0))
			return -1;
		/* N >= (v-bar - c-bar) / (((1+x)^2 - 1) c-bar) */
		n = confirm_count(e, cfg->near_floor_x, near_floor_meets, e->b / gap);
		break;
	}
	case RULES_MARGINAL:
		n = first_small_step(e, cfg->marginal_eps);
		break;
	case RULES_NEXT_HOLDING: {
		/* This tool's own rule (no paper): the universe portfolio
		 * levered to sigma(N) earns premium sigma(N)/sigma_u, so the
		 * (N+1)-th holding is worth premium (s(N) - s(N+1))/s_u a year,
		 * compared with the yearly cost of one more holding. */
		double su = universe_sd(e);

		if (!(su > 0))
			return -1;
		/* premium (s(N) - s(N+1)) / s_u <= cost  <=>  step <= cost s_u / premium */
		n = first_small_step(e, cfg->holding_cost * su / cfg->premium);
		break;
	}
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING: {
		/* Statman (1987), "How Many Stocks Make a Diversified
		 * Portfolio?", Journal of Financial and Quantitative Analysis
		 * 22(3): an N-holding portfolio with sd s(N) above the index's
		 * s_i could be replaced by the index levered (borrowing) or
		 * mixed with lending to the same sd, which earns
		 * premium (s(N)/s_i - 1) more a year; N holdings are enough
		 * once that level is at most the index fund's cost
		 * disadvantage.  premium (s(N)/s_i - 1) <= cost  <=>
		 * a + b/N <= ((1 + cost/premium) s_i)^2, and a + b/N falls
		 * with N (b > 0), so the closed form N >= b/(limit - a) is
		 * confirmed as the other rules' are. */
		double si = universe_sd(e), prem = rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium
			: cfg->lend_premium;
		double k = 1 + cfg->index_cost / prem, limit = k * k * si * si;

		if (!(si > 0))
			return -1;
		n = confirm_count(e, limit, variance_meets, limit > e->a ? e->b / (limit - e->a) : INFINITY);
		break;
	}
	case RULES_TRACKING_ERROR: {
		/* (1/N - 1/M) <= k with k = budget^2 / b: N >= 1 / (1/M + k). */
		double inv_m = e->m ? 1.0 / (double)e->m : 0.0;
		double k = e->b > 0 ? cfg->te_budget * cfg->te_budget / e->b : INFINITY;

		n = confirm_count(e, cfg->te_budget, te_meets, 1.0 / (inv_m + k));
		break;
	}
	default:
		return -1;
	}
	if (n == 0)
		return 0;
	*count = n;
	return 1;
}

int hc_rules_exact_count(const struct rules_config *cfg, int rule, double vbar,
		      double cbar, size_t m, double periods_per_year,
		      size_t *count)
{
	struct exact e;

	if (m == 0 && cbar < 0)
		return -1;
	exact_init(&e, vbar, cbar, m, periods_per_year);
	return exact_count(cfg, rule, &e, count);
}

static void pct(char *buf, size_t len, double x)
{
	snprintf(buf, len, "%.4g%%", 100 * x);
}

/* An amount with its scale: "2% a year" annualised; "0.02 per period" on
 * the inputs' own scale, where a percent sign would claim a unit the
 * inputs may not have. */
static void amount(char *buf, size_t len, double x, int per_period)
{
	if (per_period)
		snprintf(buf, len, "%.4g per period", x);
	else
		snprintf(buf, len, "%.4g%% a year", 100 * x);
}

/* The parameter text of a rule, e.g. "x=10%" or "premium=5% a year,
 * holding cost=0.05% a year (defaults)"; amounts "per period" and without
 * a percent sign when cfg->per_period.  Shares (x, q, p) are shares on any
 * scale. */
static void rule_parameters(const struct rules_config *cfg, int rule, char *buf, size_t len)
{
	char a[48], b[48];
	int pp = cfg->per_period;

	switch (rule) {
	case RULES_NEAR_FLOOR:
	case RULES_ES95_NEAR_FLOOR:
	case RULES_ES99_NEAR_FLOOR:
	case RULES_DRAWDOWN_NEAR_FLOOR:
		pct(a, sizeof a, cfg->near_floor_x);
		snprintf(buf, len, "x=%s", a);
		break;
	case RULES_MARGINAL:
		if (pp)
			snprintf(buf, len, "eps=%.4g per period", cfg->marginal_eps);
		else
			snprintf(buf, len, "eps=%.4gpp a year", 100 * cfg->marginal_eps);
		break;
	case RULES_BAND:
		pct(a, sizeof a, cfg->band_q);
		pct(b, sizeof b, cfg->band_x);
		snprintf(buf, len, "q=%s x=%s", a, b);
		break;
	case RULES_NEXT_HOLDING:
		amount(a, sizeof a, cfg->premium, pp);
		amount(b, sizeof b, cfg->holding_cost, pp);
		snprintf(buf, len, "premium=%s, holding cost=%s%s", a, b,
			 cfg->cost_defaults ? " (defaults)" : "");
		break;
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING:
		amount(a, sizeof a, rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium : cfg->lend_premium, pp);
		amount(b, sizeof b, cfg->index_cost, pp);
		snprintf(buf, len, "%s premium=%s, index cost disadvantage=%s%s",
			 rule == RULES_STATMAN_BORROWING ? "borrowing" : "lending", a, b,
			 cfg->statman_defaults ? " (defaults)" : "");
		break;
	case RULES_ALEXEEV_TAPON:
	case RULES_ALEXEEV_TAPON_SAMPLED:
	case RULES_ALEXEEV_TAPON_ES:
		pct(a, sizeof a, cfg->at_x);
		pct(b, sizeof b, cfg->at_q);
		snprintf(buf, len, "x=%s q=%s", a, b);
		break;
	case RULES_TRACKING_ERROR:
		amount(a, sizeof a, cfg->te_budget, pp);
		snprintf(buf, len, "budget=%s", a);
		break;
	case RULES_LAG_SHARE:
		amount(a, sizeof a, cfg->shortfall_d, pp);
		pct(b, sizeof b, cfg->shortfall_p);
		snprintf(buf, len, "d=%s p=%s", a, b);
		break;
	default:
		snprintf(buf, len, "-");
	}
}

static void result_init(const struct rules_config *cfg, int rule, struct rule_result *res)
{
	memset(res, 0, sizeof *res);
	res->rule = rule;
	res->name = rule_names[rule];
	res->per_period = cfg->per_period != 0;
	res->unit = rule_units[res->per_period][rule];
	res->defined = 1;
	res->value = NAN;
	res->threshold = NAN;
	res->count_p05 = res->count_p50 = res->count_p95 = NAN;
	rule_parameters(cfg, rule, res->parameters, sizeof res->parameters);
}

static void note_not_met(struct rule_result *res, size_t m, const char *what)
{
	if (m)
		snprintf(res->note, sizeof res->note, "not met within the universe of %zu securities%s", m, what);
	else
		snprintf(res->note, sizeof res->note, "not met at any count up to %zu%s", (size_t)RULES_UNBOUNDED_MAX, what);
}

/* The value at n and the threshold of an exact rule. */
static void exact_value(const struct rules_config *cfg, int rule,
			const struct exact *e, struct rule_result *res)
{
	double su;

	switch (rule) {
	case RULES_NEAR_FLOOR:
		res->threshold = (1 + cfg->near_floor_x) * sqrt(e->cbar);
		if (res->met)
			res->value = exact_sd(e, (double)res->count);
		break;
	case RULES_MARGINAL:
		res->threshold = cfg->marginal_eps;
		if (res->met)
			res->value = exact_step(e, res->count);
		break;
	case RULES_NEXT_HOLDING:
		su = universe_sd(e);
		res->threshold = cfg->holding_cost;
		if (res->met)
			res->value = cfg->premium * exact_step(e, res->count) / su;
		break;
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING:
		su = universe_sd(e);
		res->threshold = cfg->index_cost;
		if (res->met)
			res->value = (rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium : cfg->lend_premium) *
				(exact_sd(e, (double)res->count) / su - 1);
		break;
	case RULES_TRACKING_ERROR:
		res->threshold = cfg->te_budget;
		if (res->met)
			res->value = sqrt(te2(e, res->count));
		break;
	}
}

int hc_rules_exact(const struct rules_config *cfg, int rule, double vbar,
		double cbar, size_t m, double periods_per_year,
		struct rule_result *res, struct hc_error *err)
{
	struct exact e;
	int got;

	if (rule < 0 || rule >= RULES_COUNT || !(RULES_FLAG(rule) & RULES_EXACT_MASK))
		return hc_error(err, HC_EUSAGE, "rule %d is not an exact rule", rule);
	if (m == 1)
		return hc_error(err, HC_EUSAGE, "a universe of one security has no count to choose");
	if (!positive(periods_per_year) || !isfinite(vbar) || !isfinite(cbar))
		return hc_error(err, HC_EUSAGE, "rules need finite averages and positive periods per year");
	if (m == 0 && cbar < 0)
		return hc_error(err, HC_EUSAGE, "a negative average covariance is impossible in an unbounded universe: give the number of securities");
	result_init(cfg, rule, res);
	exact_init(&e, vbar, cbar, m, periods_per_year);
	got = exact_count(cfg, rule, &e, &res->count);
	if (got < 0) {
		res->defined = 0;
		if (rule == RULES_NEAR_FLOOR)
			snprintf(res->note, sizeof res->note,
				 "undefined: the floor (average covariance %.4g%s) is not above zero", e.cbar,
				 scale_word(res->per_period));
		else
			snprintf(res->note, sizeof res->note,
				 "undefined: the universe portfolio has no risk to compare with");
		return HC_OK;
	}
	res->met = got;
	if (!got)
		note_not_met(res, m, "");
	exact_value(cfg, rule, &e, res);
	return HC_OK;
}

/* ---- sampled rules ---------------------------------------------------- */

/*
 * The k-th smallest of a[0..n-1] (k < n), rearranging a so that every
 * element after position k is at least a[k]: Hoare's selection algorithm
 * (Hoare, 1961, "Algorithm 65: Find", Communications of the ACM 4(7)) with
 * a median-of-three pivot, O(n) expected instead of a sort's O(n log n).
 */
static double select_kth(double *a, size_t n, size_t k)
{
	size_t lo = 0, hi = n - 1;

	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2, i = lo, j = hi;
		double pivot, tmp;

		if (a[mid] < a[lo]) tmp = a[mid], a[mid] = a[lo], a[lo] = tmp;
		if (a[hi] < a[lo]) tmp = a[hi], a[hi] = a[lo], a[lo] = tmp;
		if (a[hi] < a[mid]) tmp = a[hi], a[hi] = a[mid], a[mid] = tmp;
		pivot = a[mid];
		/* a[lo] <= pivot <= a[hi] stop both scans inside [lo, hi] */
		for (;;) {
			while (a[i] < pivot)
				i++;
			while (a[j] > pivot)
				j--;
			if (i >= j)
				break;
			tmp = a[i], a[i] = a[j], a[j] = tmp;
			i++;
			j--;
		}
		/* now a[lo..j] <= pivot <= a[j+1..hi] (i > j), or i == j at a
		 * pivot-valued element with the same split around it */
		if (i == j) {
			if (k == j)
				return a[k];
			if (k < j)
				hi = j - 1;
			else
				lo = j + 1;
		} else if (k <= j)
			hi = j;
		else
			lo = j + 1;
	}
	return a[k];
}

/* A sampled variance as an annualised sd (0 for a variance of 0 or below);
 * non-decreasing in v, so it maps order statistics to order statistics. */
static double annual_sd(double v, double periods_per_year)
{
	v *= periods_per_year;
	return v > 0 ? sqrt(v) : 0.0;
}

/* numpy's default (linear) q-quantile of the annualised sd of column j of
 * r: x_i + (h - i)(x_{i+1} - x_i) with h = (K - 1) q, from the two order
 * statistics found by selection on the variances.  work holds r->paths. */
static double column_sd_quantile(const struct sampler_result *r, size_t j, double ppy,
				 double q, double *work)
{
	size_t k, n = r->paths, i;
	double h = (double)(n - 1) * q, lo = floor(h), a, b;

	for (k = 0; k < n; k++)
		work[k] = r->variance[k * r->nsizes + j];
	i = (size_t)lo;
	if (i + 1 >= n)
		return annual_sd(select_kth(work, n, n - 1), ppy);
	a = select_kth(work, n, i);
	b = work[i + 1];
	for (k = i + 2; k < n; k++)
		if (work[k] < b)
			b = work[k];
	a = annual_sd(a, ppy);
	b = annual_sd(b, ppy);
	return a + (h - lo) * (b - a);
}

static int size_feasible(const struct sampler_result *r, size_t j)
{
	return !r->feasible || r->feasible[j];
}

static int sizes_consecutive(const struct sampler_result *r)
{
	size_t k;

	for (k = 0; k < r->nsizes; k++)
		if (r->sizes[k] != k + 1)
			return 0;
	return 1;
}

static int check_sampled(const struct sampler_result *r, struct hc_error *err)
{
	size_t k;

	if (!r || r->paths == 0 || r->nsizes == 0)
		return hc_error(err, HC_EUSAGE, "sampled rules need sampled portfolios");
	for (k = 1; k < r->nsizes; k++)
		if (r->sizes[k] <= r->sizes[k - 1])
			return hc_error(err, HC_EUSAGE, "sampled rules need ascending sizes");
	return HC_OK;
}

static void grid_note(struct rule_result *res, const struct sampler_result *r)
{
	if (res->met && !sizes_consecutive(r))
		snprintf(res->note, sizeof res->note,
			 "smallest size on the sampled grid; sizes in between were not sampled");
}

int hc_rules_band(const struct rules_config *cfg, const struct sampler_result *r,
	       double cbar, double periods_per_year, struct rule_result *res,
	       struct hc_error *err)
{
	double *sd, limit;
	size_t j;
	int status;

	if ((status = check_sampled(r, err)) != HC_OK)
		return status;
	result_init(cfg, RULES_BAND, res);
	if (!(cbar > 0)) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note,
			 "undefined: the floor (average covariance %.4g%s) is not above zero",
			 cbar * periods_per_year, scale_word(res->per_period));
		return HC_OK;
	}
	limit = (1 + cfg->band_x) * sqrt(cbar * periods_per_year);
	res->threshold = limit;
	sd = hc_mallocarray(r->paths, sizeof *sd);
	if (!sd)
		return hc_error(err, HC_ENOMEM, "out of memory for the band rule");
	/* Settled, not first crossed: from the largest size down to the last
	 * one that fails (see rules.h). */
	for (j = r->nsizes; j-- > 0;) {
		double qv;

		if (!size_feasible(r, j))
			continue;
		qv = column_sd_quantile(r, j, periods_per_year, cfg->band_q, sd);
		if (!(qv <= limit))
			break;
		res->met = 1;
		res->count = r->sizes[j];
		res->value = qv;
	}
	hc_free(sd);
	if (!res->met)
		note_not_met(res, r->sizes[r->nsizes - 1], " sampled");
	grid_note(res, r);
	return HC_OK;
}

/* This tool's own rule (it cites no paper: the buy-and-hold rule of
 * Domian, Louton & Racine, 2007, against bonds over 20 years, is another
 * question): diversification judged by the share of random portfolios,
 * rebalanced every period, whose compound return over the sample ends more
 * than d a year behind the universe's, rather than by sigma. */
int hc_rules_lag_share(const struct rules_config *cfg,
		    const struct sampler_result *r, double universe_return,
		    struct rule_result *res, struct hc_error *err)
{
	double cut = universe_return - cfg->shortfall_d;
	size_t k, j;
	int status;

	if ((status = check_sampled(r, err)) != HC_OK)
		return status;
	if (!r->annual_return)
		return hc_error(err, HC_EUSAGE, "the lag-share rule needs sampled returns");
	result_init(cfg, RULES_LAG_SHARE, res);
	res->threshold = cfg->shortfall_p;
	/* Settled, not first crossed, as the band (see rules.h). */
	for (j = r->nsizes; j-- > 0;) {
		size_t behind = 0;
		double share;

		if (!size_feasible(r, j))
			continue;
		for (k = 0; k < r->paths; k++)
			behind += r->annual_return[k * r->nsizes + j] < cut;
		share = (double)behind / (double)r->paths;
		if (!(share < cfg->shortfall_p))
			break;
		res->met = 1;
		res->count = r->sizes[j];
		res->value = share;
	}
	if (!res->met)
		note_not_met(res, r->sizes[r->nsizes - 1], " sampled");
	grid_note(res, r);
	return HC_OK;
}

/* ---- Alexeev & Tapon's quantile rule ----------------------------------- */

/*
 * Alexeev & Tapon (2014), "Equity Portfolio Diversification: How Many
 * Stocks Are Enough?  Evidence from Five Developed Markets", Journal of
 * Banking & Finance 46 (also Raju & Agarwalla, 2021): N holdings are
 * enough when a random N-holding portfolio removes at least x of the
 * removable risk with probability at least q.  Removable risk is the
 * average single holding's variance less the equal-weight universe's,
 * v-bar - s_u^2, so the share a portfolio of variance s^2 removes is
 * (v-bar - s^2)/(v-bar - s_u^2), and the rule asks
 * P(s^2(N) <= v-bar - x (v-bar - s_u^2)) >= q.  *limit gets that variance
 * limit (per period); returns -1 when there is nothing to remove.
 */
static int at_limit_between(const struct rules_config *cfg, double vbar, double su2, double *limit)
{
	if (!(vbar - su2 > 0))
		return -1;
	*limit = vbar - cfg->at_x * (vbar - su2);
	return 0;
}

/* The variance of an equal-weight portfolio of m of the securities,
 * v-bar/m + (1 - 1/m) c-bar (the equal-weight universe's at m = M); c-bar
 * for m = 0, the unbounded universe's floor. */
static double equal_weight_variance(double vbar, double cbar, size_t m)
{
	return m ? vbar / (double)m + (1 - 1.0 / (double)m) * cbar : cbar;
}

static int at_limit(const struct rules_config *cfg, double vbar, double cbar, size_t m, double *limit)
{
	return at_limit_between(cfg, vbar, equal_weight_variance(vbar, cbar, m), limit);
}

/* P(s^2(n) <= limit) by a gamma distribution with the exact mean and
 * variance of s^2(n) across random n-subsets (a two-moment match, as
 * Satterthwaite's for sums of squares; the portfolio variance is a
 * positive, right-skewed quadratic form).  Exactly 0 or 1 when the spread
 * is 0 (n = M). */
static int at_gamma_prob(const struct moments *mo, double mean, size_t n,
			 double limit, double *prob, struct hc_error *err)
{
	double sd;
	int status;

	if ((status = hc_curve_variance_sd(mo, n, &sd, err)) != HC_OK)
		return status;
	if (!(sd > 1e-12 * fabs(mean)) || !(mean > 0))
		*prob = mean <= limit ? 1.0 : 0.0;
	else
		*prob = gsl_cdf_gamma_P(limit, mean * mean / (sd * sd), sd * sd / mean);
	return HC_OK;
}

/* Settled from the top, as the sampled rules: the probability rises with n
 * in practice, and a scan down from m guards against a dip.  mean[n - 1]
 * is E[s^2(n)], or NULL for the equal-weight v-bar/n + (1 - 1/n) c-bar. */
static int at_scan(const struct rules_config *cfg, const struct moments *mo, const double *mean, size_t m,
		   double limit, struct rule_result *res, struct hc_error *err)
{
	double prob;
	size_t n;
	int status;

	for (n = m; n >= 1; n--) {
		double mu = mean ? mean[n - 1] : equal_weight_variance(mo->average_variance, mo->average_covariance, n);

		if ((status = at_gamma_prob(mo, mu, n, limit, &prob, err)) != HC_OK)
			return status;
		if (!(prob >= cfg->at_q))
			break;
		res->met = 1;
		res->count = n;
		res->value = prob;
	}
	if (!res->met)
		note_not_met(res, m, "");
	return HC_OK;
}

int hc_rules_alexeev_tapon(const struct rules_config *cfg, const struct moments *mo,
			   struct rule_result *res, struct hc_error *err)
{
	double limit;

	result_init(cfg, RULES_ALEXEEV_TAPON, res);
	res->threshold = cfg->at_q;
	if (!mo || !mo->has_spread || mo->m < 2) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note,
			 "needs the exact spread: a return history or a covariance matrix, not summary statistics");
		return HC_OK;
	}
	if (at_limit(cfg, mo->average_variance, mo->average_covariance, mo->m, &limit) != 0) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note, "undefined: no risk to remove (average variance not above the universe's)");
		return HC_OK;
	}
	return at_scan(cfg, mo, NULL, mo->m, limit, res, err);
}

int hc_rules_alexeev_tapon_between(const struct rules_config *cfg, const struct moments *spread,
				   const double *mean, double one_holding, double universe_variance,
				   struct rule_result *res, struct hc_error *err)
{
	double limit;

	result_init(cfg, RULES_ALEXEEV_TAPON, res);
	res->threshold = cfg->at_q;
	if (!spread || !spread->has_spread || spread->m < 2)
		return hc_error(err, HC_EUSAGE, "the exact Alexeev & Tapon rule needs the exact spread");
	if (at_limit_between(cfg, one_holding, universe_variance, &limit) != 0) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note, "undefined: no risk to remove (average variance not above the universe's)");
		return HC_OK;
	}
	return at_scan(cfg, spread, mean, spread->m, limit, res, err);
}

int hc_rules_alexeev_tapon_sampled(const struct rules_config *cfg, const struct sampler_result *r,
				   double vbar, double cbar, size_t m, struct rule_result *res,
				   struct hc_error *err)
{
	return hc_rules_alexeev_tapon_sampled_between(cfg, r, vbar, equal_weight_variance(vbar, cbar, m),
						      res, err);
}

/* The Alexeev & Tapon settling, shared by the variance and the expected
 * shortfall forms: scanning down from the largest size, the rule holds while
 * the share of sampled portfolios whose value (values[(k * nsizes + j) *
 * stride + at]) is at most limit stays at least q; the count is the last
 * size where it held, so it holds for good from there up. */
static void settle_share_at_most(const struct rules_config *cfg, const struct sampler_result *r,
				 const double *values, size_t stride, size_t at, double limit,
				 struct rule_result *res)
{
	size_t j, k;

	for (j = r->nsizes; j-- > 0;) {
		size_t removed = 0;
		double share;

		if (!size_feasible(r, j))
			continue;
		for (k = 0; k < r->paths; k++)
			removed += values[(k * r->nsizes + j) * stride + at] <= limit;
		share = (double)removed / (double)r->paths;
		if (!(share >= cfg->at_q))
			break;
		res->met = 1;
		res->count = r->sizes[j];
		res->value = share;
	}
	if (!res->met)
		note_not_met(res, r->sizes[r->nsizes - 1], " sampled");
	grid_note(res, r);
}

int hc_rules_alexeev_tapon_sampled_between(const struct rules_config *cfg, const struct sampler_result *r,
					   double one_holding, double universe_variance,
					   struct rule_result *res, struct hc_error *err)
{
	double limit;
	int status;

	if ((status = check_sampled(r, err)) != HC_OK)
		return status;
	result_init(cfg, RULES_ALEXEEV_TAPON_SAMPLED, res);
	res->threshold = cfg->at_q;
	if (at_limit_between(cfg, one_holding, universe_variance, &limit) != 0) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note, "undefined: no risk to remove (average variance not above the universe's)");
		return HC_OK;
	}
	settle_share_at_most(cfg, r, r->variance, 1, 0, limit, res);
	return HC_OK;
}

int hc_rules_universe_return(const struct universe *u, double periods_per_year,
			  double *ret, struct hc_error *err)
{
	double log_growth = 0;
	size_t t, i;

	if (u->has_missing)
		return hc_error(err, HC_EDATA, "the universe return needs complete data");
	if (u->t == 0 || u->m == 0 || !positive(periods_per_year))
		return hc_error(err, HC_EUSAGE, "the universe return needs periods, securities and positive periods per year");
	/* Sum of logs rather than a running product: no overflow or underflow
	 * over long daily histories. */
	for (t = 0; t < u->t; t++) {
		double s = 0;

		for (i = 0; i < u->m; i++)
			s += u->x[i * u->t + t];
		s /= (double)u->m;
		if (!(s > -1))
			return hc_error(err, HC_EDATA, "the universe portfolio loses everything in period %zu", t + 1);
		log_growth += log1p(s);
	}
	*ret = expm1(log_growth * periods_per_year / (double)u->t);
	return HC_OK;
}

int hc_rules_evaluate(const struct rules_config *cfg, const struct rules_input *in,
		   struct rule_result *res, size_t *nres, struct hc_error *err)
{
	size_t n = 0;
	int rule, status;

	if ((status = hc_rules_config_check(cfg, err)) != HC_OK)
		return status;
	for (rule = 0; rule < RULES_COUNT; rule++) {
		struct rule_result *r = &res[n];

		if (!(cfg->selected & RULES_FLAG(rule)))
			continue;
		if (RULES_FLAG(rule) & RULES_EXACT_MASK)
			status = hc_rules_exact(cfg, rule, in->vbar, in->cbar, in->m,
					     in->periods_per_year, r, err);
		else if (rule == RULES_ALEXEEV_TAPON)
			status = hc_rules_alexeev_tapon(cfg, in->mo, r, err);
		else if (!in->sampled || (RULES_FLAG(rule) & RULES_MEASURE_MASK)) {
			/* the measure rules are measrules.h's, run by the caller */
			result_init(cfg, rule, r);
			r->defined = 0;
			snprintf(r->note, sizeof r->note, (RULES_FLAG(rule) & RULES_MEASURE_MASK)
				 ? "needs each sampled portfolio's return series" : "needs return data and sampled portfolios");
			status = HC_OK;
		} else if (rule == RULES_BAND)
			status = hc_rules_band(cfg, in->sampled, in->cbar, in->periods_per_year, r, err);
		else if (rule == RULES_ALEXEEV_TAPON_SAMPLED)
			status = hc_rules_alexeev_tapon_sampled(cfg, in->sampled, in->vbar, in->cbar, in->m, r, err);
		else
			status = hc_rules_lag_share(cfg, in->sampled, in->universe_return, r, err);
		if (status != HC_OK)
			return status;
		n++;
	}
	*nres = n;
	return HC_OK;
}

/* ---- rules on the measures beyond the sd -------------------------------- */

/* The measure (measures.h) a measure rule reads. */
static int rule_measure(int rule)
{
	return rule == RULES_ES95_NEAR_FLOOR ? HC_MEASURE_ES95
	     : rule == RULES_ES99_NEAR_FLOOR ? HC_MEASURE_ES99
	     : rule == RULES_DRAWDOWN_NEAR_FLOOR ? HC_MEASURE_MAX_DRAWDOWN : HC_MEASURE_ES95;
}

unsigned hc_rules_measures_needed(unsigned selected)
{
	unsigned mask = 0;
	int rule;

	for (rule = 0; rule < RULES_COUNT; rule++)
		if (selected & RULES_MEASURE_MASK & RULES_FLAG(rule))
			mask |= 1u << rule_measure(rule);
	return mask;
}

static int check_measured(const struct sampler_result *r, int measure, struct hc_error *err)
{
	int status = check_sampled(r, err);

	if (status != HC_OK)
		return status;
	if (!r->measures_value || !(r->measures & (1u << measure)))
		return hc_error(err, HC_EUSAGE, "the rule on %s needs each portfolio's measures",
				hc_measure_key(measure));
	return HC_OK;
}

/* The mean over the paths of one measure at column j of r. */
static double column_measure_mean(const struct sampler_result *r, size_t j, int measure)
{
	double s = 0;
	size_t k;

	for (k = 0; k < r->paths; k++)
		s += r->measures_value[(k * r->nsizes + j) * HC_MEASURE_COUNT + measure];
	return s / (double)r->paths;
}

/*
 * Near-floor on a measure: the mean of the measure over the sampled
 * N-holding portfolios within x of its floor, the equal-weight universe's
 * own value (the value every portfolio reaches at N = M).  The sd's
 * near-floor compares with the unbounded universe's floor sqrt(c-bar);
 * the measures have no such closed form, so their floor is the universe's
 * value (docs/enough.md says what that changes).  Settled from the top, as
 * the other sampled rules.
 */
int hc_rules_measure_near_floor(const struct rules_config *cfg, int rule, const struct sampler_result *r,
				struct rule_result *res, struct hc_error *err)
{
	int measure = rule_measure(rule), status;
	double floor_value, limit;
	size_t j;

	if (rule != RULES_ES95_NEAR_FLOOR && rule != RULES_ES99_NEAR_FLOOR && rule != RULES_DRAWDOWN_NEAR_FLOOR)
		return hc_error(err, HC_EUSAGE, "rule %d is not a near-floor rule on a measure", rule);
	if ((status = check_measured(r, measure, err)) != HC_OK)
		return status;
	result_init(cfg, rule, res);
	floor_value = r->universe_measures[measure];
	if (!(floor_value > 0)) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note, "undefined: the equal-weight universe's %s is %.4g, not above zero",
			 hc_measure_title(measure), floor_value);
		return HC_OK;
	}
	limit = (1 + cfg->near_floor_x) * floor_value;
	res->threshold = limit;
	for (j = r->nsizes; j-- > 0;) {
		double mean;

		if (!size_feasible(r, j))
			continue;
		mean = column_measure_mean(r, j, measure);
		if (!(mean <= limit))
			break;
		res->met = 1;
		res->count = r->sizes[j];
		res->value = mean;
	}
	if (!res->met)
		note_not_met(res, r->sizes[r->nsizes - 1], " sampled");
	grid_note(res, r);
	return HC_OK;
}

/*
 * Alexeev & Tapon's quantile form on the expected shortfall at 95%: the
 * removable ES runs from the mean ES of the sampled one-holding portfolios
 * (r->sizes[0] must be 1) down to the equal-weight universe's; a portfolio
 * of ES e removes (ES(1) - e)/(ES(1) - ES(M)) of it.  The share of sampled
 * N-holding portfolios with e <= ES(1) - x (ES(1) - ES(M)) is counted
 * directly: a share of at least q at or below the limit is the same test
 * as the empirical (inverse-cdf) q-quantile of e being at most the limit,
 * so neither a sort nor a selection is needed.  Settled from the top.
 * Alexeev & Tapon (2014), "The number of stocks in your portfolio should
 * be larger than you think", Journal of Investment Strategies 4(1); the
 * working paper "Equity Portfolio Diversification: How Many Stocks are
 * Enough?", SSRN 2182295 (2012): confidence bands that assure a given
 * reduction of the diversifiable risk, expected shortfall among the
 * measures (docs/enough.md says what they did and what this does).
 */
int hc_rules_alexeev_tapon_es(const struct rules_config *cfg, const struct sampler_result *r,
			      struct rule_result *res, struct hc_error *err)
{
	double es1, esm, limit;
	int status;

	if ((status = check_measured(r, HC_MEASURE_ES95, err)) != HC_OK)
		return status;
	result_init(cfg, RULES_ALEXEEV_TAPON_ES, res);
	res->threshold = cfg->at_q;
	if (r->sizes[0] != 1) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note, "undefined: needs sampled one-holding portfolios for ES(1)");
		return HC_OK;
	}
	es1 = column_measure_mean(r, 0, HC_MEASURE_ES95);
	esm = r->universe_measures[HC_MEASURE_ES95];
	if (!(es1 - esm > 0)) {
		res->defined = 0;
		snprintf(res->note, sizeof res->note, "undefined: no expected shortfall to remove (one holding's mean "
			 "%.4g not above the universe's %.4g)", es1, esm);
		return HC_OK;
	}
	limit = es1 - cfg->at_x * (es1 - esm);
	settle_share_at_most(cfg, r, r->measures_value, HC_MEASURE_COUNT, HC_MEASURE_ES95, limit, res);
	return HC_OK;
}

/* ---- bootstrap intervals ---------------------------------------------- */

static int cmp_count(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	/* 0 (not met) sorts after every count. */
	if (x == 0 || y == 0)
		return (x == 0) - (y == 0);
	return (x > y) - (x < y);
}

/*
 * The pct-th percentile of n sorted counts as an order statistic: the
 * smallest count c with at least pct% of the replicates at or below it,
 * c[k-1] with k = ceil(n pct / 100) (at least 1), computed in integers.
 * That is the inverse of the empirical distribution function (definition 1
 * of Hyndman & Fan, 1996, "Sample Quantiles in Statistical Packages", The
 * American Statistician 50(4), from memory; numpy's method='inverted_cdf'), so a percentile is always some replicate's count,
 * a whole number of holdings.  Not met (0, sorted last) stands above every
 * count: NaN ("not met") when the percentile falls among those replicates.
 */
static double count_percentile(const size_t *c, size_t n, size_t pct)
{
	size_t k = (n * pct + 99) / 100;

	if (k < 1)
		k = 1;
	return c[k - 1] == 0 ? NAN : (double)c[k - 1];
}

/* Say why, when a percentile interval does not hold its own estimate. */
static void note_excluded(struct rule_result *res)
{
	if (!res->met || res->note[0])
		return;
	if ((!isnan(res->count_p05) && (double)res->count < res->count_p05) ||
	    (!isnan(res->count_p95) && (double)res->count > res->count_p95))
		snprintf(res->note, sizeof res->note,
			 "interval excludes the estimate: replicate counts lean %s it (resampling re-estimates "
			 "the means%s)", (double)res->count < res->count_p05 ? "above" : "below",
			 RULES_FLAG(res->rule) & (RULES_SAMPLED_MASK | RULES_MEASURE_MASK) ? "; fewer, fresh portfolios" : "");
}

void hc_rules_set_interval(struct rule_result *res, size_t *count, size_t nrep)
{
	size_t k;

	res->bootstrapped = 1;
	res->replicates = nrep;
	res->replicates_met = 0;
	for (k = 0; k < nrep; k++)
		res->replicates_met += count[k] != 0;
	if (nrep == 0)
		return;
	qsort(count, nrep, sizeof *count, cmp_count);
	res->count_p05 = count_percentile(count, nrep, 5);
	res->count_p50 = count_percentile(count, nrep, 50);
	res->count_p95 = count_percentile(count, nrep, 95);
	note_excluded(res);
}

int hc_rules_bootstrap_exact(const struct rules_config *cfg, const double *vbar,
			  const double *cbar, size_t nrep, size_t m,
			  double periods_per_year, struct rule_result *res,
			  size_t nres, struct hc_error *err)
{
	size_t *count, j, k;

	if (nrep == 0)
		return hc_error(err, HC_EUSAGE, "the bootstrap needs at least one replicate");
	count = hc_mallocarray(nrep, sizeof *count);
	if (!count)
		return hc_error(err, HC_ENOMEM, "out of memory for %zu bootstrap counts", nrep);
	for (j = 0; j < nres; j++) {
		if (!(RULES_FLAG(res[j].rule) & RULES_EXACT_MASK))
			continue;
		for (k = 0; k < nrep; k++) {
			size_t n;

			count[k] = hc_rules_exact_count(cfg, res[j].rule, vbar[k], cbar[k],
						     m, periods_per_year, &n) == 1 ? n : 0;
		}
		hc_rules_set_interval(&res[j], count, nrep);
	}
	hc_free(count);
	return HC_OK;
}

/* ---- BCa intervals --------------------------------------------------------- */

/* Real N with step(N) = limit, in (lo, hi], by bisection (step falls with N). */
static double step_root(const struct exact *e, double limit, double lo, double hi)
{
	int k;

	for (k = 0; k < 60; k++) {
		double mid = 0.5 * (lo + hi), dn = mid, sum = exact_sd(e, dn) + exact_sd(e, dn + 1);
		double step = sum > 0 ? e->b / (dn * (dn + 1) * sum) : 0;

		if (step <= limit)
			hi = mid;
		else
			lo = mid;
	}
	return hi;
}

/*
 * The continuous count of an exact rule: the real N at which its quantity
 * crosses the threshold, so that the count is its ceiling.  A smooth
 * function of v-bar and c-bar, which is what BCa needs (the count itself is
 * a step function).  +inf when not met, NaN when undefined.  Clamped into
 * (count - 1, count] so that rounding never disagrees with the count.
 */
double hc_rules_exact_real(const struct rules_config *cfg, int rule, double vbar, double cbar,
			   size_t m, double periods_per_year)
{
	struct exact e;
	size_t n;
	double x = NAN, lo, hi;
	int got;

	if (m == 0 && cbar < 0)
		return NAN;
	exact_init(&e, vbar, cbar, m, periods_per_year);
	got = exact_count(cfg, rule, &e, &n);
	if (got < 0)
		return NAN;
	if (got == 0)
		return INFINITY;
	hi = (double)n;
	lo = hi - 1;
	switch (rule) {
	case RULES_NEAR_FLOOR:
		x = e.b / (((1 + cfg->near_floor_x) * (1 + cfg->near_floor_x) - 1) * e.cbar);
		break;
	case RULES_TRACKING_ERROR: {
		double inv_m = e.m ? 1.0 / (double)e.m : 0.0;

		x = e.b > 0 ? 1.0 / (inv_m + cfg->te_budget * cfg->te_budget / e.b) : 1.0;
		break;
	}
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING: {
		double si = universe_sd(&e), prem = rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium
			: cfg->lend_premium, k = 1 + cfg->index_cost / prem, limit = k * k * si * si;

		x = limit > e.a ? e.b / (limit - e.a) : hi;
		break;
	}
	case RULES_MARGINAL:
		x = step_root(&e, cfg->marginal_eps, lo > 0 ? lo : 0, hi);
		break;
	case RULES_NEXT_HOLDING:
		x = step_root(&e, cfg->holding_cost * universe_sd(&e) / cfg->premium, lo > 0 ? lo : 0, hi);
		break;
	}
	if (!(x > lo))
		x = lo + 1e-9;
	if (!(x <= hi))
		x = hi;
	return x;
}

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;

	return (x > y) - (x < y);
}

/* The count at order statistic ceil(B alpha) of sorted real counts (inf =
 * not met = NaN). */
static double bca_count(const double *sorted, size_t nrep, double alpha)
{
	double k = ceil((double)nrep * alpha);
	size_t i = k < 1 ? 0 : k > (double)nrep ? nrep - 1 : (size_t)k - 1;
	double x = sorted[i];

	if (!isfinite(x))
		return NAN;
	return ceil(x) < 1 ? 1 : ceil(x);
}

/*
 * BCa interval (Efron, 1987, "Better Bootstrap Confidence Intervals",
 * Journal of the American Statistical Association 82(397)) of one exact
 * rule's continuous count: bias correction z0 from the share of replicates
 * below the estimate (ties count half), acceleration a from the
 * delete-a-block jackknife values (Kuensch, 1989), endpoints at the
 * replicate quantiles Phi(z0 + (z0 + z)/(1 - a (z0 + z))) for z = z(0.05),
 * z(0.95); counts are their ceilings.  x is sorted in place.
 */
void hc_rules_interval_bca(struct rule_result *res, double est, double *x, size_t nrep,
			   const double *jack, size_t nj)
{
	double less = 0, eq = 0, p, z0, acc = 0, num = 0, den = 0, jmean = 0;
	double zl = gsl_cdf_ugaussian_Pinv(0.05), zh = -zl, al, ah;
	size_t k, met = 0;
	int finite = 1;

	for (k = 0; k < nrep; k++) {
		if (isnan(x[k]))
			x[k] = INFINITY;   /* undefined in a replicate: never met there */
		met += isfinite(x[k]) != 0;
		less += x[k] < est;
		eq += x[k] == est;
	}
	p = (less + 0.5 * eq) / (double)nrep;
	p = fmin(fmax(p, 0.5 / (double)nrep), 1 - 0.5 / (double)nrep);
	z0 = gsl_cdf_ugaussian_Pinv(p);
	for (k = 0; k < nj; k++) {
		finite &= isfinite(jack[k]) != 0;
		jmean += jack[k];
	}
	if (finite && nj > 1) {
		jmean /= (double)nj;
		for (k = 0; k < nj; k++) {
			double d = jmean - jack[k];

			num += d * d * d;
			den += d * d;
		}
		acc = den > 0 ? num / (6 * pow(den, 1.5)) : 0;
	}
	al = gsl_cdf_ugaussian_P(z0 + (z0 + zl) / (1 - acc * (z0 + zl)));
	ah = gsl_cdf_ugaussian_P(z0 + (z0 + zh) / (1 - acc * (z0 + zh)));
	qsort(x, nrep, sizeof *x, cmp_double);
	res->bootstrapped = 1;
	res->replicates = nrep;
	res->replicates_met = met;
	res->count_p05 = bca_count(x, nrep, al);
	res->count_p50 = bca_count(x, nrep, 0.5);
	res->count_p95 = bca_count(x, nrep, ah);
	if (res->met && !res->note[0] &&
	    ((!isnan(res->count_p05) && (double)res->count < res->count_p05) ||
	     (!isnan(res->count_p95) && (double)res->count > res->count_p95)))
		snprintf(res->note, sizeof res->note,
			 "the BCa interval excludes the estimate: the replicates lean %s of it (bias correction "
			 "z0 = %.2f, acceleration %.3f)", z0 > 0 ? "below" : "above", z0, acc);
}

int hc_rules_bootstrap_exact_bca(const struct rules_config *cfg, const double *vbar, const double *cbar,
				 size_t nrep, const double *jv, const double *jc, size_t nj, double vhat,
				 double chat, size_t m, double periods_per_year, struct rule_result *res,
				 size_t nres, struct hc_error *err)
{
	double *work, *jack;
	size_t j, k;

	if (nrep == 0)
		return hc_error(err, HC_EUSAGE, "the bootstrap needs at least one replicate");
	work = hc_malloc(nrep * sizeof *work);
	jack = hc_malloc((nj ? nj : 1) * sizeof *jack);
	if (!work || !jack) {
		hc_free(work);
		hc_free(jack);
		return hc_error(err, HC_ENOMEM, "out of memory for %zu bootstrap counts", nrep);
	}
	for (j = 0; j < nres; j++) {
		int rule = res[j].rule;

		if (!(RULES_FLAG(rule) & RULES_EXACT_MASK) || !res[j].defined)
			continue;
		for (k = 0; k < nrep; k++)
			work[k] = hc_rules_exact_real(cfg, rule, vbar[k], cbar[k], m, periods_per_year);
		for (k = 0; k < nj; k++)
			jack[k] = hc_rules_exact_real(cfg, rule, jv[k], jc[k], m, periods_per_year);
		hc_rules_interval_bca(&res[j], hc_rules_exact_real(cfg, rule, vhat, chat, m, periods_per_year),
				      work, nrep, jack, nj);
	}
	hc_free(work);
	hc_free(jack);
	return HC_OK;
}

/*
 * Studentized (bootstrap-t) interval on the log of the continuous count
 * (Efron & Tibshirani, 1993, An Introduction to the Bootstrap, ch. 12, and
 * Hall, 1988, Annals of Statistics 16(3), for its second-order accuracy):
 * t_k = (log theta*_k - log theta-hat) / se*_k with each replicate's own
 * delta-method standard error, so that a replicate that missed the
 * sample's large shocks has both a low estimate and a low standard error
 * -- the link a percentile interval loses under fat tails.
 * Interval: exp(log theta-hat - t_(0.95) se, log theta-hat - t_(0.05) se).
 */
int hc_rules_interval_studentized(struct rule_result *res, double est, double se0, const double *x,
				  const double *se, size_t nrep, size_t m, struct hc_error *err)
{
	double *tk = hc_malloc(nrep * sizeof *tk), *cnt = hc_malloc(nrep * sizeof *cnt), lo, hi, tl, th;
	double nmax = m ? (double)m : (double)RULES_UNBOUNDED_MAX;
	size_t k, met = 0;

	if (!tk || !cnt) {
		hc_free(tk);
		hc_free(cnt);
		return hc_error(err, HC_ENOMEM, "out of memory for the studentized bootstrap");
	}
	for (k = 0; k < nrep; k++) {
		cnt[k] = isnan(x[k]) ? INFINITY : x[k];
		met += isfinite(cnt[k]) != 0;
		/* a replicate not met, or without a standard error, lies beyond every other */
		tk[k] = isfinite(x[k]) && se[k] > 0 ? (log(x[k]) - log(est)) / se[k] : INFINITY;
	}
	qsort(cnt, nrep, sizeof *cnt, cmp_double);
	res->bootstrapped = 1;
	res->replicates = nrep;
	res->replicates_met = met;
	res->count_p50 = bca_count(cnt, nrep, 0.5);
	if (!isfinite(est) || !(se0 > 0)) {
		res->count_p05 = bca_count(cnt, nrep, 0.05);
		res->count_p95 = bca_count(cnt, nrep, 0.95);
		goto out;
	}
	qsort(tk, nrep, sizeof *tk, cmp_double);
	tl = tk[(size_t)fmax(ceil(0.05 * (double)nrep) - 1, 0)];
	th = tk[(size_t)fmax(ceil(0.95 * (double)nrep) - 1, 0)];
	lo = isfinite(th) ? exp(log(est) - th * se0) : 0;
	hi = exp(log(est) - tl * se0);
	res->count_p05 = ceil(lo) < 1 ? 1 : ceil(lo);
	res->count_p95 = ceil(hi) > nmax ? NAN : fmax(ceil(hi), 1);
	if (res->met && !res->note[0] &&
	    ((double)res->count < res->count_p05 ||
	     (!isnan(res->count_p95) && (double)res->count > res->count_p95)))
		snprintf(res->note, sizeof res->note,
			 "the studentized interval excludes the estimate: the replicates' t-statistics lie "
			 "to one side of 0 (from %.2f to %.2f)", tl, th);
out:
	hc_free(tk);
	hc_free(cnt);
	return HC_OK;
}

/* The delta-method standard error of log theta from the per-period series
 * q_t and s2_t of the drawn periods idx (bootstrap.h's
 * hc_bootstrap_long_run_se on the linearised series); g holds t. */
static double log_se(const struct rules_config *cfg, int rule, double vbar, double cbar, size_t m,
		     double ppy, size_t t, const double *q, const double *s2, const size_t *idx, size_t bw,
		     double *g)
{
	double th = hc_rules_exact_real(cfg, rule, vbar, cbar, m, ppy), hv = 1e-6 * fabs(vbar), hc = 1e-6 * fabs(cbar);
	double dv, dc, k1, k2, ga, gb, dm = (double)m, dt = (double)t;
	size_t i;

	if (!isfinite(th) || !(hv > 0) || !(hc > 0))
		return NAN;
	dv = (log(hc_rules_exact_real(cfg, rule, vbar + hv, cbar, m, ppy)) -
	      log(hc_rules_exact_real(cfg, rule, vbar - hv, cbar, m, ppy))) / (2 * hv);
	dc = (log(hc_rules_exact_real(cfg, rule, vbar, cbar + hc, m, ppy)) -
	      log(hc_rules_exact_real(cfg, rule, vbar, cbar - hc, m, ppy))) / (2 * hc);
	if (!isfinite(dv) || !isfinite(dc))
		return NAN;
	k1 = dt / ((dt - 1) * dm);
	k2 = dt / ((dt - 1) * dm * (dm - 1));
	ga = dv * k1 - dc * k2;   /* d log theta / d mean(q) */
	gb = dc * k2;             /* d log theta / d mean(s2) */
	for (i = 0; i < t; i++)
		g[i] = ga * q[i] + gb * s2[i];
	return hc_bootstrap_long_run_se(g, idx, t, bw);
}

int hc_rules_bootstrap_exact_t(const struct rules_config *cfg, const struct bootstrap_base *b,
			       const struct bootstrap_options *bopt, size_t block_length, const double *vbar,
			       const double *cbar, size_t nrep, double vhat, double chat, double periods_per_year,
			       struct rule_result *res, size_t nres, struct hc_error *err)
{
	size_t t = b->t, m = b->m, j, k, *idx = NULL;
	double *q = NULL, *s2 = NULL, *g = NULL, *x = NULL, *se = NULL;
	int status = HC_OK;

	if (nrep == 0)
		return hc_error(err, HC_EUSAGE, "the bootstrap needs at least one replicate");
	q = hc_malloc(t * sizeof *q);
	s2 = hc_malloc(t * sizeof *s2);
	g = hc_malloc(t * sizeof *g);
	idx = hc_malloc(t * sizeof *idx);
	x = hc_malloc(nrep * sizeof *x);
	se = hc_malloc(nrep * RULES_COUNT * sizeof *se);
	if (!q || !s2 || !g || !idx || !x || !se) {
		status = hc_error(err, HC_ENOMEM, "out of memory for the studentized bootstrap");
		goto cleanup;
	}
	hc_bootstrap_period_series(b, q, s2);
	/* se[rule * nrep + k]: replicate k's standard error for the rule */
	for (k = 0; k < nrep; k++) {
		if ((status = hc_bootstrap_indices(bopt->kind, t, block_length, bopt->seed, k, idx, err)) != HC_OK)
			goto cleanup;
		for (j = 0; j < nres; j++)
			se[(size_t)res[j].rule * nrep + k] = (RULES_FLAG(res[j].rule) & RULES_EXACT_MASK)
				? log_se(cfg, res[j].rule, vbar[k], cbar[k], m, periods_per_year, t, q, s2, idx,
					 block_length, g) : NAN;
	}
	for (j = 0; j < nres && status == HC_OK; j++) {
		int rule = res[j].rule;

		if (!(RULES_FLAG(rule) & RULES_EXACT_MASK) || !res[j].defined)
			continue;
		for (k = 0; k < nrep; k++)
			x[k] = hc_rules_exact_real(cfg, rule, vbar[k], cbar[k], m, periods_per_year);
		status = hc_rules_interval_studentized(&res[j], hc_rules_exact_real(cfg, rule, vhat, chat, m,
										   periods_per_year),
						       log_se(cfg, rule, vhat, chat, m, periods_per_year, t, q, s2,
							      NULL, block_length, g),
						       x, se + (size_t)rule * nrep, nrep, m, err);
	}
cleanup:
	hc_free(q);
	hc_free(s2);
	hc_free(g);
	hc_free(idx);
	hc_free(x);
	hc_free(se);
	return status;
}

/* ---- report ------------------------------------------------------------- */

static const struct { const char *key, *title; int style; } rule_columns[] = {
	{ "rule", "rule", REPORT_STYLE_PLAIN },
	{ "parameters", "parameters", REPORT_STYLE_PLAIN },
	{ "count", "count", REPORT_STYLE_PLAIN },
	{ "value_at_count", "value at count", REPORT_STYLE_PERCENT },
	{ "count_p05", "count p05", REPORT_STYLE_PLAIN },
	{ "count_p50", "count p50", REPORT_STYLE_PLAIN },
	{ "count_p95", "count p95", REPORT_STYLE_PLAIN },
	{ "met", "met", REPORT_STYLE_PLAIN },
	{ "unit", "unit", REPORT_STYLE_PLAIN },
	{ "threshold", "threshold", REPORT_STYLE_PERCENT },
	{ "replicates", "replicates", REPORT_STYLE_PLAIN },
	{ "replicates_met", "replicates met", REPORT_STYLE_PLAIN },
	{ "note", "note", REPORT_STYLE_PLAIN },
};
#define RULE_NCOLUMNS (sizeof rule_columns / sizeof rule_columns[0])

/* A count percentile: none without a bootstrap, "not met" when it reaches
 * replicates that did not meet the rule. */
static int set_percentile(struct report_table *t, size_t row, size_t col,
			  const struct rule_result *res, double p)
{
	if (!res->bootstrapped)
		return 0;
	if (isnan(p))
		return hc_report_table_set_none(t, row, col, "not met");
	hc_report_table_set_int(t, row, col, (long long)p);
	return 0;
}

/* Rules whose value and threshold are shares of portfolios, not amounts. */
static int rule_is_share(int rule)
{
	return rule == RULES_LAG_SHARE || rule == RULES_ALEXEEV_TAPON || rule == RULES_ALEXEEV_TAPON_SAMPLED ||
	       rule == RULES_ALEXEEV_TAPON_ES;
}

/* The value or threshold of a rule: the column's percent style for yearly
 * figures and shares, plain for amounts on the inputs' own scale. */
static void set_amount(struct report_table *t, size_t row, size_t col,
		       const struct rule_result *res, double x)
{
	hc_report_table_set_real(t, row, col, x);
	if (res->per_period && !rule_is_share(res->rule))
		t->cells[row * t->ncols + col].style = REPORT_STYLE_PLAIN;
}

static int rule_row(struct report_table *t, const struct rule_result *res)
{
	size_t row;
	int bad = 0;

	if (hc_report_table_add_row(t) != 0)
		return -1;
	row = t->nrows - 1;
	bad |= hc_report_table_set_text(t, row, 0, res->name);
	bad |= hc_report_table_set_text(t, row, 1, res->parameters);
	if (res->met) {
		hc_report_table_set_int(t, row, 2, (long long)res->count);
		set_amount(t, row, 3, res, res->value);
	}
	bad |= set_percentile(t, row, 4, res, res->count_p05);
	bad |= set_percentile(t, row, 5, res, res->count_p50);
	bad |= set_percentile(t, row, 6, res, res->count_p95);
	hc_report_table_set_bool(t, row, 7, res->met);
	bad |= hc_report_table_set_text(t, row, 8, res->unit);
	set_amount(t, row, 9, res, res->threshold);
	if (res->bootstrapped) {
		hc_report_table_set_int(t, row, 10, (long long)res->replicates);
		hc_report_table_set_int(t, row, 11, (long long)res->replicates_met);
	}
	if (res->note[0])
		bad |= hc_report_table_set_text(t, row, 12, res->note);
	else if (res->bootstrapped && isnan(res->count_p95))
		bad |= hc_report_table_set_text(t, row, 12, "interval reaches replicates that do not meet the rule "
						"(more than 5% of them): its upper end is null, \"not met\"");
	return bad ? -1 : 0;
}

int hc_rules_report(struct report *rep, const struct rule_result *res,
		 size_t nres, struct hc_error *err)
{
	struct report_table *t;
	size_t k;

	t = hc_report_add_table(rep, "rules", "smallest holding count meeting each rule");
	if (!t)
		return hc_error(err, HC_ENOMEM, "out of memory for the rules table");
	for (k = 0; k < RULE_NCOLUMNS; k++)
		if (hc_report_table_add_column(t, rule_columns[k].key, rule_columns[k].title,
					    rule_columns[k].style) != 0)
			return hc_error(err, HC_ENOMEM, "out of memory for the rules table");
	for (k = 0; k < nres; k++)
		if (rule_row(t, &res[k]) != 0)
			return hc_error(err, HC_ENOMEM, "out of memory for the rules table");
	return HC_OK;
}


/* ---- sampling for the sampled rules ------------------------------------ */

/* The staged sampling of hc_rules_sampled (the sampler picks the series or
 * the matrix route from src). */
static int sampled_stages(const struct rules_config *cfg, const struct hc_source *src,
			  const struct sampler_options *so, double vbar, double cbar,
			  struct rule_result *res, size_t *nres, size_t *largest,
			  struct hc_error *err)
{
	size_t m = hc_source_m(src);
	struct sampler_options o = *so;
	struct sampler_result *sr = NULL;
	size_t *sizes = NULL, k, n = 0, j;
	int want_band = (cfg->selected & RULES_FLAG(RULES_BAND)) != 0;
	int want_at = (cfg->selected & RULES_FLAG(RULES_ALEXEEV_TAPON_SAMPLED)) != 0;
	int status = HC_OK;
	double uret = 0;

	*nres = 0;
	o.want_returns = (cfg->selected & RULES_FLAG(RULES_LAG_SHARE)) != 0;
	if (!want_band && !want_at && !o.want_returns)
		return HC_OK;
	if (o.want_returns && (status = hc_rules_universe_return(src->u, o.periods_per_year, &uret, err)) != HC_OK)
		return status;
	sizes = hc_mallocarray(m, sizeof *sizes);
	if (!sizes)
		return hc_error(err, HC_ENOMEM, "out of memory for %zu sizes", m);
	for (j = 0; j < m; j++)
		sizes[j] = j + 1;
	for (k = RULES_SAMPLED_FIRST_K;; k *= RULES_SAMPLED_GROWTH) {
		int done = 1;

		if (k > m)
			k = m;
		n = 0;
		status = o.strata || o.stratify != SAMPLER_STRATA_NONE ? hc_strata_run(&sr, src, sizes, k, &o, err)
									: hc_sampler_run(&sr, src, sizes, k, &o, err);
		if (status != HC_OK)
			break;
		if (want_band) {
			if ((status = hc_rules_band(cfg, sr, cbar, o.periods_per_year, &res[n], err)) != HC_OK)
				break;
			done &= res[n].met || !res[n].defined;
			n++;
		}
		if (o.want_returns) {
			if ((status = hc_rules_lag_share(cfg, sr, uret, &res[n], err)) != HC_OK)
				break;
			done &= res[n].met;
			n++;
		}
		if (want_at) {
			if ((status = hc_rules_alexeev_tapon_sampled(cfg, sr, vbar, cbar, m, &res[n], err)) != HC_OK)
				break;
			done &= res[n].met || !res[n].defined;
			n++;
		}
		hc_sampler_result_free(sr);
		sr = NULL;
		/* the caller's progress bar follows the first stage only */
		o.progress = NULL;
		if (done || k == m)
			break;
	}
	hc_sampler_result_free(sr);
	hc_free(sizes);
	if (status != HC_OK)
		return status;
	if (largest)
		*largest = k;
	*nres = n;
	return HC_OK;
}

int hc_rules_sampled(const struct rules_config *cfg, const struct hc_source *src,
		     const struct sampler_options *so, double vbar, double cbar,
		     struct rule_result *res, size_t *nres, size_t *largest,
		     struct hc_error *err)
{
	*nres = 0;
	if (hc_source_matrix(src) && (cfg->selected & RULES_FLAG(RULES_LAG_SHARE)))
		return hc_error(err, HC_EUSAGE, "the lag-share rule compounds each portfolio's returns over the "
				"periods, and a covariance matrix has none");
	return sampled_stages(cfg, src, so, vbar, cbar, res, nres, largest, err);
}

/* ---- bootstrap of the sampled rules ------------------------------------ */

/* Distinct from the bootstrap's own period streams, which use (seed, rep)
 * directly. */
uint64_t hc_rules_replicate_seed(uint64_t seed, size_t rep)
{
	return hc_paths_stream(seed ^ 0x5DEECE66DULL, (uint64_t)rep);
}

/* One replicate's band, lag-share and Alexeev-Tapon (sampled, and exact
 * from the replicate's own exact spread) counts (0 = not met). */
static int sampled_replicate(const struct rules_config *cfg, const struct universe *u,
			     const struct bootstrap_base *b, const struct bootstrap_options *bopt,
			     const struct sampler_options *sopt, size_t l, size_t rep,
			     size_t *idx, double *w, size_t *band, size_t *shortfall,
			     size_t *at, size_t *at_exact, struct hc_error *err)
{
	struct universe *ru = NULL;
	struct hc_source rs;
	struct sampler_options so = *sopt;
	struct rule_result rr[3];
	double vbar, cbar;
	size_t k, n;
	int status;

	if ((status = hc_bootstrap_indices(bopt->kind, u->t, l, bopt->seed, rep, idx, err)) != HC_OK)
		return status;
	memset(w, 0, u->t * sizeof *w);
	for (k = 0; k < u->t; k++)
		w[idx[k]] += 1;
	hc_bootstrap_moments(b, w, &vbar, &cbar);
	if ((status = hc_universe_resample(&ru, u, idx, u->t, err)) != HC_OK)
		return status;
	so.seed = hc_rules_replicate_seed(bopt->seed, rep);
	so.progress = NULL;
	hc_source_init_series(&rs, ru);
	status = hc_rules_sampled(cfg, &rs, &so, vbar, cbar, rr, &n, NULL, err);
	if (status == HC_OK && (cfg->selected & RULES_SPREAD_MASK)) {
		struct moments mo;
		struct rule_result ar;

		if ((status = hc_moments_from_universe(&mo, ru, err)) == HC_OK &&
		    (status = hc_rules_alexeev_tapon(cfg, &mo, &ar, err)) == HC_OK)
			*at_exact = ar.met ? ar.count : 0;
	}
	hc_universe_free(ru);
	if (status != HC_OK)
		return status;
	for (k = 0; k < n; k++) {
		size_t c = rr[k].met ? rr[k].count : 0;

		if (rr[k].rule == RULES_BAND)
			*band = c;
		else if (rr[k].rule == RULES_LAG_SHARE)
			*shortfall = c;
		else
			*at = c;
	}
	return HC_OK;
}

int hc_rules_bootstrap_sampled(const struct rules_config *cfg, const struct universe *u,
			    const struct bootstrap_base *b,
			    const struct bootstrap_options *bopt,
			    const struct sampler_options *sopt,
			    struct rule_result *res, size_t nres, struct hc_error *err)
{
	size_t nrep = bopt->replicates, l, rep, j, *idx = NULL;
	size_t *band = NULL, *shortfall = NULL, *at = NULL, *at_exact = NULL;
	double *w = NULL;
	int status = HC_OK;

	if (nrep == 0)
		return hc_error(err, HC_EUSAGE, "the bootstrap needs at least one replicate");
	if (nrep > HC_BOOTSTRAP_MAX_REPLICATES)
		return hc_error(err, HC_EUSAGE, "%zu bootstrap replicates is more than the %u allowed", nrep,
				HC_BOOTSTRAP_MAX_REPLICATES);
	l = bopt->block_length ? bopt->block_length : hc_bootstrap_default_block_length(u->t);
	idx = hc_mallocarray(u->t, sizeof *idx);
	w = hc_mallocarray(u->t, sizeof *w);
	band = hc_calloc(nrep, sizeof *band);
	shortfall = hc_calloc(nrep, sizeof *shortfall);
	at = hc_calloc(nrep, sizeof *at);
	at_exact = hc_calloc(nrep, sizeof *at_exact);
	if (!idx || !w || !band || !shortfall || !at || !at_exact) {
		status = hc_error(err, HC_ENOMEM, "out of memory for the sampled bootstrap");
		goto cleanup;
	}
	for (rep = 0; rep < nrep; rep++) {
		status = sampled_replicate(cfg, u, b, bopt, sopt, l, rep, idx, w,
					   &band[rep], &shortfall[rep], &at[rep], &at_exact[rep], err);
		if (status != HC_OK)
			goto cleanup;
		if (bopt->progress && bopt->progress(bopt->progress_ctx, rep + 1, nrep)) {
			status = hc_error(err, HC_EINTERRUPT, "sampled bootstrap stopped after %zu of %zu replicates", rep + 1, nrep);
			goto cleanup;
		}
	}
	for (j = 0; j < nres; j++) {
		if (res[j].rule == RULES_BAND && res[j].defined)
			hc_rules_set_interval(&res[j], band, nrep);
		else if (res[j].rule == RULES_LAG_SHARE && res[j].defined)
			hc_rules_set_interval(&res[j], shortfall, nrep);
		else if (res[j].rule == RULES_ALEXEEV_TAPON_SAMPLED && res[j].defined)
			hc_rules_set_interval(&res[j], at, nrep);
		else if (res[j].rule == RULES_ALEXEEV_TAPON && res[j].defined && (cfg->selected & RULES_SPREAD_MASK))
			hc_rules_set_interval(&res[j], at_exact, nrep);
	}
cleanup:
	hc_free(idx);
	hc_free(w);
	hc_free(band);
	hc_free(shortfall);
	hc_free(at);
	hc_free(at_exact);
	return status;
}
