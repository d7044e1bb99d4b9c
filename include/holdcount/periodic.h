/*
 * periodic.h - the exact curve of a ragged universe from per-period sums.
 *
 * Securities list and delist at different dates and have gaps.  Keeping
 * only the complete ones keeps only survivors; instead each period uses
 * the securities alive (observed) then.  With x_it = r_it - rbar_i (each
 * security less its own mean over the periods it is observed), U_t the
 * M_t securities observed at period t, xbar_t their mean and s2_t their
 * cross-sectional variance (divisor M_t - 1):
 *
 *   E[sigma^2(N)] = 1/(T-1) sum_t [ xbar_t^2 + max(0, 1/N - 1/M_t) s2_t ]
 *
 * is the expected mean square, about each holding's own mean, of a
 * portfolio that at every period holds N securities drawn uniformly from
 * those alive then (all of them when N >= M_t).  For complete data it is
 * exactly v-bar/N + (1 - 1/N) c-bar (docs/mathematics.md, "Ragged
 * histories").  The tracking error against the equal-weight portfolio of
 * the alive securities is the second term alone.  Every figure here is per
 * period unless said otherwise; nothing needs an M x M matrix, and the sums
 * cost O(M T) once, a bootstrap replicate O(T) and a curve point O(log T).
 */
#ifndef HOLDCOUNT_PERIODIC_H
#define HOLDCOUNT_PERIODIC_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/bootstrap.h"
#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/moments.h"
#include "holdcount/rules.h"
#include "holdcount/sampler.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/*
 * The curve of one set of periods, as suffix sums over the distinct alive
 * counts level[0] < ... < level[nlevels-1]:
 *   s1[k] = sum over periods with M_t >= level[k] of s2_t/(T-1),
 *   s2[k] = the same of s2_t/(M_t (T-1)),  s1[nlevels] = s2[nlevels] = 0.
 * Then E[sigma^2(N)] = a + s1(N)/N - s2(N), where s1(N), s2(N) sum the
 * periods with M_t > N.
 */
struct hc_periodic_curve {
	size_t t;             /* periods summed */
	size_t nlevels;
	const size_t *level;  /* borrowed from struct hc_periodic */
	double *s1, *s2;      /* nlevels + 1 each (owned) */
	double a;             /* sum xbar_t^2/(T-1): the equal-weight universe's variance */
	double floor;         /* a - s2[0]: the limit of the unclamped curve (c-bar for complete data) */
	double spread;        /* s1[0]: v-bar - c-bar for complete data */
	size_t mmax;          /* largest alive count: counts range over 1..mmax */
};

struct hc_periodic {
	size_t m;             /* securities observed at least twice in the window */
	size_t m_short;       /* securities observed once only: left out (no own mean to centre on) */
	size_t t;             /* periods */
	size_t *alive;        /* t: M_t */
	double *mean;         /* t: xbar_t */
	double *cross;        /* t: s2_t, 0 when M_t < 2 */
	double *raw_mean;     /* t: mean return of the securities alive (not centred); 0 when none */
	size_t *rank;         /* t: index of M_t in level[] */
	size_t nlevels;
	size_t *level;        /* distinct alive counts, ascending */
	size_t alive_min, alive_median, alive_max;
	size_t complete;      /* securities observed at every period of the window */
	size_t *member;       /* m: index in the universe of each security kept */
	double *own_mean;     /* m: its mean over the window's periods it is observed */
	double periods_per_year;
	size_t max_bytes;     /* the universe's memory budget (memory.h), for the bootstrap and sampler */
	struct hc_periodic_curve curve;  /* every period of the window */
};

/*
 * The per-period sums of periods [first, first+len) of u, each security
 * centred on its own mean over the periods of the window it is observed.
 * NaN in u->x marks a gap.  Three passes over the window's cells (own
 * means, period means, period spreads about them), O(M len).
 * HC_EDATA when fewer than 2 securities are observed twice, fewer than 2
 * periods, or no period has two securities alive; HC_EUSAGE for a window
 * outside u; HC_ENOMEM.  *out is NULL on error.
 */
int hc_periodic_alloc(struct hc_periodic **out, const struct universe *u,
		      size_t first, size_t len, struct hc_error *err);
void hc_periodic_free(struct hc_periodic *p);

/*
 * Moments equivalent to the whole sample's curve (route
 * MOMENTS_ROUTE_PERIODIC): m = p->m, t = p->t, c-bar = curve.floor,
 * v-bar = c-bar + curve.spread, universe_variance = curve.a; no spread,
 * no correlation.  v-bar/N + (1 - 1/N) c-bar equals the exact ragged
 * curve for N up to alive_min; beyond it use hc_periodic_expected_variance.
 * Cannot fail for a p from hc_periodic_alloc (HC_OK).
 */
int hc_periodic_moments(const struct hc_periodic *p, struct moments *mo, struct hc_error *err);

/* Workspace for a curve over a subset of p's periods (hc_periodic_curve_set). */
int hc_periodic_curve_init(struct hc_periodic_curve *c, const struct hc_periodic *p);
void hc_periodic_curve_release(struct hc_periodic_curve *c);

/* The curve of periods idx[0..n-1] of p (repeats allowed: a bootstrap
 * replicate), with divisor n - 1; the periods keep the full sample's
 * centring (no re-centring on the replicate's own means).  O(n + levels).
 * n >= 2. */
void hc_periodic_curve_set(struct hc_periodic_curve *c, const struct hc_periodic *p,
			   const size_t *idx, size_t n);

/* Per period: E[sigma^2(n)], E[TE^2(n)] against the equal-weight portfolio of
 * the alive securities, and the diversifiable share (spread/n)/E[sigma^2(n)].
 * n >= 1, real n allowed. */
double hc_periodic_expected_variance(const struct hc_periodic_curve *c, double n);
double hc_periodic_expected_te2(const struct hc_periodic_curve *c, double n);
double hc_periodic_diversifiable_share(const struct hc_periodic_curve *c, double n);

/*
 * The exact curve at sizes[0..nsizes-1] (each 1..p->m), annualised by
 * periods_per_year as hc_curve_exact does: floor = curve.floor, universe
 * variance = curve.a, m = p->m, variance_sd NaN (the spread needs the
 * M x M matrix).  HC_EUSAGE for a bad size, HC_ENOMEM.
 */
int hc_periodic_curve_exact(struct curve **out, const struct hc_periodic *p,
			    const size_t *sizes, size_t nsizes, double periods_per_year,
			    struct hc_error *err);

/*
 * Exact rules on the ragged curve, with the meaning each has for complete
 * data (rules.h): near-floor against curve.floor, marginal and
 * cost-benefit on the steps sqrt(E(N)) - sqrt(E(N+1)) for N < mmax,
 * cost-benefit against the universe sd sqrt(a), tracking error as above.
 * hc_periodic_rule_count: 1 met (*count set), 0 not met, -1 undefined.
 * hc_periodic_rule: fills res completely (texts as hc_rules_exact).
 */
int hc_periodic_rule_count(const struct rules_config *cfg, int rule,
			   const struct hc_periodic_curve *c, double periods_per_year,
			   size_t *count);
int hc_periodic_rule(const struct rules_config *cfg, int rule,
		     const struct hc_periodic_curve *c, double periods_per_year,
		     struct rule_result *res, struct hc_error *err);

/*
 * The data-driven expected block length of the per-period route (Politis &
 * White, 2004, with Patton, Politis & White, 2009: bootstrap.h): the larger
 * of the lengths of the two per-period series the curve is a mean of, the
 * squared mean xbar_t^2 and the cross-sectional variance s2_t, rounded,
 * within 1..T.  HC_ENOMEM only.
 */
int hc_periodic_block_length(const struct hc_periodic *p, size_t *length, struct hc_error *err);

/*
 * Bootstrap interval of the exact rules among res[0..nres-1]: B replicates
 * of the periods drawn as bootstrap.h draws them (hc_bootstrap_indices,
 * same kind, block length and seed, so the replicates are the complete-data
 * route's), each an O(T) curve with the full sample's centring, then the
 * rule counts and hc_rules_set_interval.  OpenMP over replicates; the
 * result does not depend on the thread count.  Other rules are left alone.
 */
int hc_periodic_bootstrap(const struct rules_config *cfg, const struct hc_periodic *p,
			  const struct bootstrap_options *bopt, double periods_per_year,
			  struct rule_result *res, size_t nres, struct hc_error *err);

/*
 * The continuous count of an exact rule on the curve c: the real N at
 * which the rule's quantity crosses its threshold on the curve extended to
 * real N (E(N) = a + sum over periods of max(0, 1/N - 1/M_t) s2_t/(T-1),
 * continuous in N), clamped into (count - 1, count] so that its ceiling is
 * hc_periodic_rule_count's count.  +inf when not met, NaN when undefined.
 * On complete data it is hc_rules_exact_real of the same averages (to
 * rounding): the quantity the studentized and BCa intervals are built on.
 */
double hc_periodic_rule_real(const struct rules_config *cfg, int rule, const struct hc_periodic_curve *c,
			     double periods_per_year);

/* The interval method of hc_periodic_bootstrap_interval. */
enum hc_periodic_interval {
	HC_PERIODIC_INTERVAL_PERCENTILE = 0,   /* percentiles of the replicates' counts */
	HC_PERIODIC_INTERVAL_STUDENTIZED = 1,  /* bootstrap-t on the log continuous count */
	HC_PERIODIC_INTERVAL_BCA = 2           /* Efron's (1987) BCa, jackknife acceleration */
};

/*
 * hc_periodic_bootstrap with a choice of interval, the methods of complete
 * data on the same quantity (rules.h: hc_rules_interval_studentized,
 * hc_rules_interval_bca), from the same replicates:
 *   - studentized: each replicate's continuous count (hc_periodic_rule_real
 *     of its curve) studentized by the delta-method standard error of its
 *     log from the replicate's own periods -- the curve is a mean of
 *     per-period contributions (xbar_t^2, and s2_t and s2_t/M_t to every
 *     branch at or below M_t), so each period has a linearised value, and
 *     their long-run variance with Bartlett weights up to the block length
 *     gives the error (hc_bootstrap_long_run_se), as on complete data;
 *   - BCa: bias correction from the replicates, acceleration from
 *     hc_periodic_jackknife with the block length (none with fewer than two
 *     blocks).  u is the history p was computed from (window from period 0,
 *     all of its periods); needed for BCa only (else may be NULL).
 * Rules not defined on the sample are left without an interval, as on
 * complete data.  HC_EUSAGE for an unknown method or a missing u; the
 * errors of hc_periodic_bootstrap.
 */
int hc_periodic_bootstrap_interval(const struct rules_config *cfg, const struct hc_periodic *p,
				   const struct universe *u, const struct bootstrap_options *bopt,
				   double periods_per_year, int method, struct rule_result *res, size_t nres,
				   struct hc_error *err);

/*
 * The delete-a-block jackknife (Kuensch, 1989) of the continuous counts of
 * rules[0..nrules-1], as hc_bootstrap_jackknife does it on complete data:
 * block b (periods bL..bL+L-1, b < floor(T/L)) left out, the per-period
 * sums of the rest formed afresh (hc_periodic_alloc on u without the
 * block: leaving out periods moves each security's own mean and so every
 * period's centred cross-section; a security observed once in the rest
 * drops out of the alive sets).  (*jack)[q * *nj + b] is rule q's value
 * (NaN when the rest has no per-period sums); *jack is allocated (hc_free).
 * *nj = 0 and *jack NULL with fewer than two blocks or fewer than two
 * periods left.  On complete data the values are hc_rules_exact_real of
 * hc_bootstrap_jackknife's averages.  O(M T) a block.  HC_EUSAGE when u
 * does not have p's periods; HC_ENOMEM (budget p->max_bytes).
 */
int hc_periodic_jackknife(const struct rules_config *cfg, const struct hc_periodic *p, const struct universe *u,
			  size_t block_length, double periods_per_year, const int *rules, size_t nrules,
			  double **jack, size_t *nj, struct hc_error *err);

/*
 * Sample ragged portfolios: a path is a random order of the p->m
 * securities; at each period its portfolio of size n holds the first
 * min(n, M_t) securities of that order alive then, equally weighted.
 * variance[k*nsizes + j] = sum_t p_t^2/(T-1) with p_t the portfolio's mean
 * of the centred returns x_it: its mean over paths estimates
 * hc_periodic_expected_variance exactly (hc_sampler_summarise gives the
 * z-score).  sizes strictly ascending, each 1..p->m.  Uses opt->paths,
 * seed, threads, progress (from one thread; nonzero stops: HC_EINTERRUPT) and want_returns (annual_return: prod_t (1 + p_t)^(P/T) - 1
 * with p_t the portfolio's mean return, rebalanced each period; a period
 * with none alive adds nothing) and measures (measures_value, as the
 * complete route's: measures.h of each portfolio's per-period return
 * series, the held securities' equal-weight mean return as observed, 0 in
 * a period with none alive; universe_measures those of the equal-weight
 * portfolio of every security alive, raw_mean, also lag_universe's
 * benchmark; each thread keeps nsizes x T doubles of series, counted in
 * the memory budget); strata are HC_EUSAGE.  Path k is seeded
 * from (seed, k), so output does not depend on threads.  A path costs
 * O(T x the order position where every period has n_max alive), at most
 * O(M T).  u and first must be those p was computed from.
 */
int hc_periodic_sample(struct sampler_result **out, const struct hc_periodic *p,
		       const struct universe *u, size_t first,
		       const size_t *sizes, size_t nsizes,
		       const struct sampler_options *opt, struct hc_error *err);

/*
 * The random order path k of a ragged sample seeded with seed draws over
 * the m kept securities (indices into p->member), into order (m entries):
 * path k's portfolio of N holdings holds, at each period, the first
 * min(N, M_t) of this order alive then.  For tests (the numpy check
 * recomputes each path's measures).  HC_EUSAGE for m 0, HC_ENOMEM.
 */
int hc_periodic_order(uint64_t seed, size_t k, size_t m, size_t *order, struct hc_error *err);

/* Compound annualised return of the equal-weight portfolio of the alive
 * securities, rebalanced every period: prod_t (1 + raw_mean_t)^(P/T) - 1.
 * HC_EDATA when a period's return is -100% or worse. */
int hc_periodic_universe_return(const struct hc_periodic *p, double periods_per_year,
				double *ret, struct hc_error *err);

/*
 * The band, lag-share and alexeev-tapon-sampled rules (those cfg selects) from ragged random
 * portfolios (hc_periodic_sample) over sizes 1..K, K growing as
 * hc_rules_sampled's stages do (RULES_SAMPLED_FIRST_K, times
 * RULES_SAMPLED_GROWTH) until all are met or K reaches p->m: band against
 * the per-period floor, shortfall against the compound return of the
 * equal-weight portfolio of the alive securities, alexeev-tapon-sampled
 * with the removable variance running from E[sigma^2(1)] of the curve down
 * to curve.a (hc_rules_alexeev_tapon_sampled_between).  sr[0] band, sr[1]
 * lag-share, sr[2] alexeev-tapon-sampled (zeroed when not selected);
 * *largest the last K.  base gives
 * paths, seed, threads and progress.  u is the universe p was computed
 * from (first period 0).
 */
int hc_periodic_rules_sampled(const struct rules_config *cfg, const struct hc_periodic *p,
			      const struct universe *u, const struct sampler_options *base,
			      struct rule_result sr[3], size_t *largest, struct hc_error *err);

/*
 * The interval of the sampled rules on a ragged history: per replicate the
 * periods are drawn as for the exact rules (bo), the resampled history is
 * re-summed (each security re-centred on the replicate, O(M T)) and
 * sampled afresh with the replicate's seed (hc_rules_replicate_seed) and
 * base->paths paths; hc_rules_set_interval on the band, lag-share and
 * alexeev-tapon-sampled results among res.  bo->progress is called after each replicate.
 */
int hc_periodic_bootstrap_sampled(const struct rules_config *cfg, const struct universe *u,
				  const struct bootstrap_options *bo, const struct sampler_options *base,
				  struct rule_result *res, size_t nres, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
