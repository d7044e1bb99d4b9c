/*
 * rules.h - the holding count past which extra holdings add little.
 *
 * Each rule turns the risk-versus-count curve into one count: the smallest
 * N that meets it (design.md section 5).  Exact rules depend only on the
 * per-period average variance v-bar, average covariance c-bar, the number of
 * securities M (0 = unbounded) and the periods per year P, so a bootstrap
 * replicate can evaluate them in O(log M) or O(M) without allocating.
 * Sampled rules read a sampler_result over consecutive sizes.
 *
 * Sources: statman-borrowing and statman-lending are Statman (1987), "How
 * Many Stocks Make a Diversified Portfolio?", Journal of Financial and
 * Quantitative Analysis 22(3), as published (a level compared with the
 * index fund's cost disadvantage); alexeev-tapon and alexeev-tapon-sampled
 * are the quantile rule of Alexeev & Tapon (2014), "Equity Portfolio
 * Diversification: How Many Stocks Are Enough? Evidence from Five Developed
 * Markets", Journal of Banking & Finance 46, also used by Raju & Agarwalla
 * (2021).  next-holding and lag-share are this tool's own rules and cite no
 * paper.  The other rules and every default are common practice with no
 * single source (docs/enough.md).
 *
 * Units: v-bar and c-bar are per period; every threshold in struct
 * rules_config and every value in struct rule_result is annualised (variance
 * times P, standard deviation times sqrt(P): common practice under serially
 * independent returns), as decimals (0.02 = 2% a year).  With
 * rules_config.per_period set (summary statistics or a covariance matrix
 * given without periods per year, evaluated with P = 1) thresholds and
 * values are on the inputs' own scale instead, and the unit and parameter
 * texts say "per period" and carry no percent sign.
 */
#ifndef HOLDCOUNT_RULES_H
#define HOLDCOUNT_RULES_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/bootstrap.h"
#include "holdcount/error.h"
#include "holdcount/moments.h"
#include "holdcount/report.h"
#include "holdcount/sampler.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

enum rules_id {
	RULES_NEAR_FLOOR = 0,     /* sqrt(E[s2(N)]) <= (1+x) sqrt(floor) */
	RULES_MARGINAL = 1,       /* sqrt(E[s2(N)]) - sqrt(E[s2(N+1)]) < eps */
	RULES_BAND = 2,           /* q-quantile of sampled sigma(n) <= (1+x) sqrt(floor), every sampled n >= N */
	RULES_NEXT_HOLDING = 3,   /* premium (s(N) - s(N+1)) / s_universe < holding cost (formerly cost-benefit) */
	RULES_TRACKING_ERROR = 4, /* sqrt(E[TE2(N)]) <= budget */
	RULES_LAG_SHARE = 5,      /* share lagging the universe by more than d < p, every sampled n >= N (formerly shortfall) */
	RULES_STATMAN_BORROWING = 6, /* premium_b (s(N)/s_index - 1) <= index cost disadvantage (Statman 1987) */
	RULES_STATMAN_LENDING = 7,   /* the same with the lending investor's premium */
	RULES_ALEXEEV_TAPON = 8,  /* P(share of removable variance removed >= x) >= q, two-moment gamma from the exact spread */
	RULES_ALEXEEV_TAPON_SAMPLED = 9, /* the same from sampled portfolios, every sampled n >= N */
	/* Rules on the measures beyond the sd (measrules.h), from each sampled
	 * portfolio's own return series, every sampled n >= N: */
	RULES_ES95_NEAR_FLOOR = 10,      /* mean ES95(N) <= (1+x) ES95 of the equal-weight universe */
	RULES_ES99_NEAR_FLOOR = 11,      /* the same at 99% */
	RULES_DRAWDOWN_NEAR_FLOOR = 12,  /* mean max drawdown(N) <= (1+x) the universe's */
	RULES_ALEXEEV_TAPON_ES = 13,     /* P(share of the removable ES95 removed >= x) >= q (Alexeev & Tapon 2014) */
	RULES_COUNT = 14
};

#define RULES_FLAG(id) (1u << (id))
/* Exact rules from the averages v-bar and c-bar alone (bootstrapped per replicate). */
#define RULES_EXACT_MASK (RULES_FLAG(RULES_NEAR_FLOOR) | RULES_FLAG(RULES_MARGINAL) | \
			  RULES_FLAG(RULES_NEXT_HOLDING) | RULES_FLAG(RULES_TRACKING_ERROR) | \
			  RULES_FLAG(RULES_STATMAN_BORROWING) | RULES_FLAG(RULES_STATMAN_LENDING))
/* Exact rules that need the exact spread (struct moments with has_spread). */
#define RULES_SPREAD_MASK RULES_FLAG(RULES_ALEXEEV_TAPON)
#define RULES_SAMPLED_MASK (RULES_FLAG(RULES_BAND) | RULES_FLAG(RULES_LAG_SHARE) | \
			    RULES_FLAG(RULES_ALEXEEV_TAPON_SAMPLED))
#define RULES_ALL_MASK (RULES_EXACT_MASK | RULES_SPREAD_MASK | RULES_SAMPLED_MASK)
/* The rules on the measures beyond the sd (measrules.h): each portfolio's
 * series through the measures, so they are chosen by name or by the group
 * "measures" only, not by "all" (their sampling costs up to three times
 * the sd's, and their memory K x sizes x 11 doubles). */
#define RULES_MEASURE_MASK (RULES_FLAG(RULES_ES95_NEAR_FLOOR) | RULES_FLAG(RULES_ES99_NEAR_FLOOR) | \
			    RULES_FLAG(RULES_DRAWDOWN_NEAR_FLOOR) | RULES_FLAG(RULES_ALEXEEV_TAPON_ES))

/* Defaults, named once (design.md section 5; common practice, no single
 * source, except where a paper is named in docs/enough.md). */
#define RULES_DEFAULT_NEAR_FLOOR_X 0.10     /* within 10% of the floor sigma */
#define RULES_DEFAULT_MARGINAL_EPS 0.001    /* 0.10 percentage points of sigma a year */
#define RULES_DEFAULT_BAND_Q 0.95
#define RULES_DEFAULT_BAND_X 0.10
#define RULES_DEFAULT_PREMIUM 0.05          /* universe portfolio's premium a year */
#define RULES_DEFAULT_HOLDING_COST 0.0005   /* yearly cost of one more holding */
#define RULES_DEFAULT_TE_BUDGET 0.02        /* 2% a year */
#define RULES_DEFAULT_SHORTFALL_D 0.01      /* lag-share: lags by more than 1% a year */
#define RULES_DEFAULT_SHORTFALL_P 0.10      /* lag-share: in fewer than 10% of portfolios */
/* Statman (1987): the index fund's cost disadvantage and the premiums of the
 * index over the borrowing and the lending rate, a year.  These are not
 * Statman's printed inputs (not recalled with confidence): they are chosen so
 * that, on Elton & Gruber's averages (46.619, 7.058, unbounded), the rule
 * gives his published 30 (borrowing) and 40 (lending) holdings (from memory
 * of the paper's conclusion).  Set your own. */
#define RULES_DEFAULT_INDEX_COST 0.005
#define RULES_DEFAULT_BORROW_PREMIUM 0.055
#define RULES_DEFAULT_LEND_PREMIUM 0.073
/* Alexeev & Tapon (2014): 90% of the removable risk with probability 90%. */
#define RULES_DEFAULT_AT_X 0.90
#define RULES_DEFAULT_AT_Q 0.90

/* Unbounded universes (m = 0) search counts up to this; beyond it a rule is
 * reported as not met. */
#define RULES_UNBOUNDED_MAX ((size_t)1 << 40)

/* Sampled rules sample sizes 1..K for K = RULES_SAMPLED_FIRST_K, then 2K,
 * 4K, ... up to M, stopping once every selected sampled rule is met. */
#define RULES_SAMPLED_FIRST_K 256
#define RULES_SAMPLED_GROWTH 2

#define RULES_TEXT_MAX 160

struct rules_config {
	unsigned selected;        /* RULES_FLAG(...) mask */
	double near_floor_x;
	double marginal_eps;      /* annualised sigma, decimal */
	double band_q, band_x;
	double premium;           /* a year, decimal */
	double holding_cost;      /* a year, decimal */
	int cost_defaults;        /* 1 when premium and cost are the defaults (said in the output) */
	double te_budget;         /* annualised TE, decimal */
	double shortfall_d;       /* a year, decimal */
	double shortfall_p;       /* share, 0..1 */
	double borrow_premium;    /* Statman: index premium over the borrowing rate, a year */
	double lend_premium;      /* Statman: index premium over the lending rate, a year */
	double index_cost;        /* Statman: the index fund's cost disadvantage, a year */
	int statman_defaults;     /* 1 when the three are the defaults (said in the output) */
	double at_x;              /* Alexeev & Tapon: share of the removable variance removed, 0..1 */
	double at_q;              /* Alexeev & Tapon: probability, 0..1 */
	int per_period;           /* 1: inputs not annualised; texts say "per period" (default 0) */
};

/* Every rule selected, every parameter at its default. */
void hc_rules_config_init(struct rules_config *cfg);

/* Check every parameter's range: HC_EUSAGE naming the parameter otherwise
 * (x > 0, eps > 0, 0 < q < 1, premium > 0, cost > 0, budget > 0, d >= 0,
 * 0 < p < 1). */
int hc_rules_config_check(const struct rules_config *cfg, struct hc_error *err);

/* Parse "near-floor,marginal,..." into a mask (also "all", "exact",
 * "sampled").  HC_EUSAGE naming the unknown item. */
int hc_rules_parse_list(const char *text, unsigned *mask, struct hc_error *err);

/* The rule's name as printed ("near-floor", ...); NULL when out of range. */
const char *hc_rules_name(int rule);

struct rule_result {
	int rule;                 /* enum rules_id */
	const char *name;         /* static, hc_rules_name(rule) */
	char parameters[RULES_TEXT_MAX]; /* e.g. "x=10%" */
	int defined;              /* 0: cannot be evaluated on these data (see note) */
	int met;                  /* 1: some count up to M meets it */
	size_t count;             /* the smallest such count (when met) */
	double value;             /* the rule's quantity at count (NaN when not met) */
	double threshold;         /* what value is compared with (NaN when not defined) */
	const char *unit;         /* static: what value measures, "a year" or "per period" */
	int per_period;           /* copied from rules_config.per_period */
	char note[RULES_TEXT_MAX];/* "not met within the universe of 40", ... */
	/* Bootstrap interval (bootstrapped = 1): the 5th, 50th and 95th
	 * percentiles of the count over the replicates as order statistics --
	 * the smallest count with at least that share of replicates at or below
	 * it (numpy's method='inverted_cdf'), so always a whole number of
	 * holdings some replicate needed -- with an unmet replicate counted as
	 * larger than every count; a percentile that falls among the unmet
	 * replicates is NaN and printed "not met". */
	int bootstrapped;
	size_t replicates;
	size_t replicates_met;
	double count_p05, count_p50, count_p95;
};

/* The inputs every rule may need. */
struct rules_input {
	double vbar;              /* per period */
	double cbar;              /* per period */
	size_t m;                 /* securities; 0 = unbounded */
	double periods_per_year;  /* P > 0 */
	const struct sampler_result *sampled; /* NULL: sampled rules not evaluated */
	double universe_return;   /* compound annualised, for lag-share */
	const struct moments *mo; /* the exact spread for alexeev-tapon; NULL or no spread: undefined */
};

/*
 * One exact rule (near-floor, marginal, cost-benefit, tracking-error) for
 * the given averages: fills res completely (no bootstrap).  No allocation;
 * fit for a bootstrap replicate.  HC_EUSAGE for a sampled rule or m = 1.
 */
int hc_rules_exact(const struct rules_config *cfg, int rule, double vbar,
		double cbar, size_t m, double periods_per_year,
		struct rule_result *res, struct hc_error *err);

/*
 * The count alone, cheaper still: returns 1 and sets *count when met, 0 when
 * not met within the universe, -1 when undefined on these averages.
 */
int hc_rules_exact_count(const struct rules_config *cfg, int rule, double vbar,
		      double cbar, size_t m, double periods_per_year,
		      size_t *count);

/*
 * The sampled rules (band, shortfall) return the count from which the rule
 * is settled: the smallest sampled N such that the criterion holds at N and
 * at every larger sampled size (sizes r->feasible marks infeasible, under a
 * stratified cap, are not part of the sample and are passed over).  A first
 * crossing alone is not enough: the sampled quantile or share wanders with
 * sampling noise, so it can dip under the limit once and come back above
 * it; such a dip does not set the count.  Not met when the criterion fails
 * at the largest feasible sampled size.  Under hc_rules_sampled's stages,
 * "every larger size" means every size up to the last stage sampled.
 *
 * Band rule from sampled variances: r must hold sizes in ascending order
 * (1..M consecutive for "the smallest count"; otherwise the smallest grid
 * size from which the rule is settled, said in the note).  The q-quantile
 * of each size's sd is numpy's linear one, from two order statistics found
 * by selection.  cbar per period.  Allocates one workspace of r->paths
 * doubles.
 */
int hc_rules_band(const struct rules_config *cfg, const struct sampler_result *r,
	       double cbar, double periods_per_year, struct rule_result *res,
	       struct hc_error *err);

/* Lag-share rule (this tool's own; formerly "shortfall") from sampled annual returns (r->annual_return required)
 * against the universe's compound annualised return: settled, as above,
 * where the share trailing by more than d stays below p. */
int hc_rules_lag_share(const struct rules_config *cfg,
		    const struct sampler_result *r, double universe_return,
		    struct rule_result *res, struct hc_error *err);

/*
 * Band, lag-share and alexeev-tapon-sampled (those selected in cfg) by
 * sampling src (source.h) with so: sizes 1..K, K growing as
 * RULES_SAMPLED_FIRST_K x RULES_SAMPLED_GROWTH^j up to M, until every
 * selected sampled rule is met.  Each stage is a valid sample of random
 * portfolios; the sampler builds sizes by a route that depends on the set
 * of sizes asked for, so a staged run and a full-grid run may draw
 * different portfolios and agree within sampling noise only.  vbar and cbar
 * per period (the band's floor, Alexeev-Tapon's removable risk);
 * so->want_returns is set as needed.  *largest (may be NULL) gets the last
 * K sampled.  res holds room for 3; *nres gets how many were filled (band,
 * lag-share, alexeev-tapon-sampled).  A source that draws from a matrix (a
 * covariance matrix, or the pairwise-complete covariances of series with
 * gaps) draws the same portfolios for the same seed, so the band's count
 * agrees unless a quantile lies within rounding of the threshold; the
 * lag-share rule needs each portfolio's returns over time: HC_EUSAGE when
 * it is selected there.
 */
int hc_rules_sampled(const struct rules_config *cfg, const struct hc_source *src,
		     const struct sampler_options *so, double vbar, double cbar,
		     struct rule_result *res, size_t *nres, size_t *largest,
		     struct hc_error *err);

/*
 * Alexeev & Tapon (2014), Journal of Banking & Finance 46: the smallest N
 * from which a random N-holding portfolio removes at least cfg->at_x of the
 * removable variance (v-bar less the equal-weight universe's variance) with
 * probability at least cfg->at_q.  The exact form reads the probability
 * from a gamma distribution matched to the exact mean and variance of the
 * portfolio variance (mo->has_spread needed; otherwise res is "undefined"
 * with a note), scanning N = M down to the first failure; the sampled form
 * counts sampled portfolios (settled as the other sampled rules).  value is
 * the probability at the count, threshold is q.
 */
int hc_rules_alexeev_tapon(const struct rules_config *cfg, const struct moments *mo,
			   struct rule_result *res, struct hc_error *err);

/*
 * The same rule with the mean of each count given: mean[n - 1] the
 * expected variance of a random n-holding portfolio (n = 1..spread->m),
 * the variance's spread across n-subsets from spread (hc_curve_variance_sd:
 * spread->has_spread), the removable variance from one_holding down to
 * universe_variance.  For a ragged history (periodic.h): the per-period
 * curve's mean, the pairwise-complete matrix's spread.  HC_EUSAGE without
 * a spread; res undefined (with the reason) when nothing is removable.
 */
int hc_rules_alexeev_tapon_between(const struct rules_config *cfg, const struct moments *spread,
				   const double *mean, double one_holding, double universe_variance,
				   struct rule_result *res, struct hc_error *err);
int hc_rules_alexeev_tapon_sampled(const struct rules_config *cfg, const struct sampler_result *r,
				   double vbar, double cbar, size_t m, struct rule_result *res,
				   struct hc_error *err);
/* The sampled form given the two ends of the removable variance directly
 * (per period): one_holding, the expected variance of a one-holding random
 * portfolio (v-bar), and universe_variance, the equal-weight universe's.
 * A ragged history (periodic.h) passes E[sigma^2(1)] of its per-period
 * curve and the variance of the equal-weight portfolio of the securities
 * alive each period (curve.a); hc_rules_alexeev_tapon_sampled passes v-bar
 * and v-bar/M + (1 - 1/M) c-bar. */
int hc_rules_alexeev_tapon_sampled_between(const struct rules_config *cfg, const struct sampler_result *r,
					   double one_holding, double universe_variance,
					   struct rule_result *res, struct hc_error *err);

/*
 * Rules on the measures beyond the sd (measures.h), from sampled portfolios
 * whose measures were asked for (r->measures_value with the rule's measure;
 * HC_EUSAGE otherwise), settled as the other sampled rules.  Sources and
 * definitions in docs/enough.md.
 *
 * hc_rules_measure_near_floor (rule es95-near-floor, es99-near-floor or
 * drawdown-near-floor): the mean of the measure over the N-holding
 * portfolios at most (1 + cfg->near_floor_x) times the equal-weight
 * universe's own value (r->universe_measures); undefined when that value
 * is not above zero.  value is the mean at the count (per period for the
 * expected shortfall, over the sample for the drawdown), threshold the
 * limit.
 *
 * hc_rules_alexeev_tapon_es: Alexeev & Tapon's quantile form on the
 * expected shortfall at 95%: the smallest N from which at least cfg->at_q
 * of the sampled portfolios remove at least cfg->at_x of the removable
 * ES, the mean ES of the one-holding portfolios (r->sizes[0] must be 1)
 * less the universe's.  value is the share at the count, threshold q.
 *
 * hc_rules_measures_needed: the measures.h set the selected measure rules
 * read.
 */
int hc_rules_measure_near_floor(const struct rules_config *cfg, int rule, const struct sampler_result *r,
				struct rule_result *res, struct hc_error *err);
int hc_rules_alexeev_tapon_es(const struct rules_config *cfg, const struct sampler_result *r,
			      struct rule_result *res, struct hc_error *err);
unsigned hc_rules_measures_needed(unsigned selected);

/*
 * Compound annualised return of the universe's equal-weight portfolio,
 * rebalanced every period: prod_t (1 + mean_i r_ti)^(P/T) - 1 (complete data
 * only).  HC_EDATA when a period's portfolio return is -100% or worse.
 */
int hc_rules_universe_return(const struct universe *u, double periods_per_year,
			  double *ret, struct hc_error *err);

/*
 * Every selected rule, in enum order, into res[0..*nres-1] (res has room for
 * RULES_COUNT).  Sampled rules are evaluated when in->sampled is set; else
 * they are reported as defined = 0 with the note "needs return data".  The
 * measure rules (RULES_MEASURE_MASK) are always left so, with the note
 * "needs each sampled portfolio's return series": measrules.h runs them.
 */
int hc_rules_evaluate(const struct rules_config *cfg, const struct rules_input *in,
		   struct rule_result *res, size_t *nres, struct hc_error *err);

/*
 * Bootstrap interval of the exact rules among res[0..nres-1] from per
 * replicate averages vbar[k], cbar[k] (k < nrep, per period).  Sampled rules
 * are left alone (see hc_rules_set_interval).  Allocates nrep counts.
 */
int hc_rules_bootstrap_exact(const struct rules_config *cfg, const double *vbar,
			  const double *cbar, size_t nrep, size_t m,
			  double periods_per_year, struct rule_result *res,
			  size_t nres, struct hc_error *err);

/*
 * The continuous count of an exact rule (the real N at which its quantity
 * crosses the threshold; the count is its ceiling): +inf when not met, NaN
 * when undefined.
 */
double hc_rules_exact_real(const struct rules_config *cfg, int rule, double vbar, double cbar,
			   size_t m, double periods_per_year);

/*
 * BCa intervals (Efron, 1987, JASA 82(397)) for the exact rules among
 * res[0..nres-1]: the continuous count's bootstrap distribution over the
 * replicates' averages vbar[k], cbar[k] (k < nrep), bias-corrected by the
 * estimate's (vhat, chat) position in it and accelerated by the jackknife
 * averages jv[k], jc[k] (k < nj; hc_bootstrap_jackknife); count_p05 and
 * count_p95 are the ceilings of the BCa endpoints for a 90% interval,
 * count_p50 the replicates' median count.  An interval that excludes the
 * estimate says why in the note.  Allocates nrep doubles.
 */
int hc_rules_bootstrap_exact_bca(const struct rules_config *cfg, const double *vbar, const double *cbar,
				 size_t nrep, const double *jv, const double *jc, size_t nj, double vhat,
				 double chat, size_t m, double periods_per_year, struct rule_result *res,
				 size_t nres, struct hc_error *err);

/*
 * Studentized (bootstrap-t) intervals for the exact rules on the log of the
 * continuous count, each replicate (regenerated from bopt's kind and seed
 * and block_length, as hc_bootstrap_run drew it) studentized by its own
 * delta-method standard error from the per-period series of b.  Same
 * fields as hc_rules_bootstrap_exact_bca.
 */
int hc_rules_bootstrap_exact_t(const struct rules_config *cfg, const struct bootstrap_base *b,
			       const struct bootstrap_options *bopt, size_t block_length, const double *vbar,
			       const double *cbar, size_t nrep, double vhat, double chat, double periods_per_year,
			       struct rule_result *res, size_t nres, struct hc_error *err);

/*
 * The interval methods on continuous counts, shared by the complete-data
 * route above and the per-period route (periodic.h); est is the sample's
 * continuous count, x[k] replicate k's (+inf: not met, NaN: undefined).
 * hc_rules_interval_bca: Efron's (1987) BCa with the acceleration from the
 * jackknife values jack[0..nj-1] (none finite or nj < 2: no acceleration);
 * sorts x in place.  hc_rules_interval_studentized: bootstrap-t on log x
 * with se0 the estimate's and se[k] replicate k's standard error of the
 * log count; m the largest count (0: unbounded); HC_ENOMEM.  Both set
 * bootstrapped, replicates, replicates_met, count_p05/p50/p95 and, when
 * the interval excludes the estimate, the note.
 */
void hc_rules_interval_bca(struct rule_result *res, double est, double *x, size_t nrep,
			   const double *jack, size_t nj);
int hc_rules_interval_studentized(struct rule_result *res, double est, double se0, const double *x,
				  const double *se, size_t nrep, size_t m, struct hc_error *err);

/*
 * Set res's interval from per replicate counts: count[k] is the count of
 * replicate k, or 0 when the rule was not met in it.  Sorts count in place.
 * The one place every interval (enough, rolling, report) is computed.
 */
void hc_rules_set_interval(struct rule_result *res, size_t *count, size_t nrep);

/*
 * Bootstrap interval of the sampled rules (band, lag-share,
 * alexeev-tapon-sampled) among res[0..nres-1]: per replicate the periods are
 * resampled as in bootstrap.h (same kind, block length and seed as bopt),
 * the resampled universe is sampled afresh by hc_rules_sampled with sopt
 * (its seed derived from (bopt->seed, replicate), so results do not depend
 * on threads), and the replicate's own v-bar, c-bar and universe return set
 * the thresholds.  When alexeev-tapon (exact) is selected, each replicate's
 * exact spread is recomputed (hc_moments_from_universe, O(M^2 T)) and its
 * percentile interval set too.  Costs up to B x paths x K x T for the K
 * sampled: use fewer paths than the main run.  b must come from u.
 * Progress (bopt->progress) after each replicate.
 */
uint64_t hc_rules_replicate_seed(uint64_t seed, size_t rep);  /* the sampler seed of replicate rep */
int hc_rules_bootstrap_sampled(const struct rules_config *cfg, const struct universe *u,
			    const struct bootstrap_base *b,
			    const struct bootstrap_options *bopt,
			    const struct sampler_options *sopt,
			    struct rule_result *res, size_t nres, struct hc_error *err);

/*
 * Append the table "rules" to rep with the columns
 * rule,parameters,count,value_at_count,count_p05,count_p50,count_p95,met
 * then unit,threshold,replicates,replicates_met,note.
 */
int hc_rules_report(struct report *rep, const struct rule_result *res,
		 size_t nres, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
