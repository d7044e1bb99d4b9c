/*
 * strata.h - portfolios spread across strata (sectors, or any label).
 *
 * Two ways to draw an n-holding portfolio from M securities in S strata of
 * m_s securities each:
 *
 *   proportional  the allocation n_s is fixed by Hamilton's largest
 *                 remainder method (Hamilton, 1792; the apportionment
 *                 rule): each stratum gets floor(n m_s / M) seats, and the
 *                 seats left over go one each to the strata with the
 *                 largest remainders n m_s mod M (ties: the larger stratum,
 *                 then the earlier one); then a uniform n_s-subset of each
 *                 stratum.  Always feasible for 1 <= n <= M.
 *   cap k         uniform over all n-subsets with at most k members in any
 *                 stratum: the allocation vector is drawn with probability
 *                 proportional to prod_s C(m_s, n_s) over the vectors with
 *                 n_s <= min(k, m_s) and sum n_s = n (a dynamic programme
 *                 over strata in log space), then a uniform n_s-subset of
 *                 each stratum.  Infeasible when sum_s min(k, m_s) < n.
 *
 * Path k of a stratified run shuffles every stratum completely with GSL's
 * mt19937 seeded from (seed, k); the portfolio of size n takes the first
 * n_s members of each stratum's ordering, and (cap mode) its allocation is
 * drawn from a splitmix64 stream seeded from (seed, k, n) (Steele, Lea &
 * Flood, 2014).  So a portfolio depends only on (seed, k, n): the same for
 * any thread count and any other sizes asked for.
 */
#ifndef HOLDCOUNT_STRATA_H
#define HOLDCOUNT_STRATA_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/sampler.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

struct strata {
	size_t m, nstrata;
	size_t *count;             /* nstrata: m_s (0 allowed) */
	size_t *start;             /* nstrata + 1: offsets into members */
	size_t *members;           /* m security indices grouped by stratum, ascending in each */
};

/* From stratum_of[i] in 0..nstrata-1 for each of m securities.
 * HC_EUSAGE for an index out of range or m = 0; HC_ENOMEM. */
int hc_strata_alloc(struct strata **out, const size_t *stratum_of, size_t m,
		 size_t nstrata, struct hc_error *err);
void hc_strata_free(struct strata *s);

/* Hamilton's largest-remainder allocation of n (1 <= n <= m) into alloc
 * (nstrata entries).  HC_EUSAGE when n is out of range. */
int hc_strata_proportional(const struct strata *s, size_t n, size_t *alloc,
			struct hc_error *err);

/* The cap mode's table: log of the number of ways to fill strata s.. with
 * j members, at most k each, for j <= nmax. */
struct strata_cap {
	size_t nstrata, nmax, k;
	size_t *cap;               /* min(k, m_s) */
	size_t *count;             /* m_s */
	double *logw;              /* (nstrata + 1) * (nmax + 1), row s; -INFINITY when none */
};

/* HC_EUSAGE for k = 0; HC_ENOMEM. */
int hc_strata_cap_alloc(struct strata_cap **out, const struct strata *s, size_t k,
		     size_t nmax, struct hc_error *err);
void hc_strata_cap_free(struct strata_cap *c);

/* 1 when some n-subset has at most k in every stratum (n <= nmax). */
int hc_strata_cap_feasible(const struct strata_cap *c, size_t n);

/* The most holdings any portfolio can have with at most k in every
 * stratum: sum_s min(k, m_s) (s->m when k = 0, no cap).  Every n from 1 to
 * it is feasible, none above.  The one place the commands take it from. */
size_t hc_strata_cap_most(const struct strata *s, size_t k);

/* Log of the number of n-subsets meeting the cap (-INFINITY when none). */
double hc_strata_cap_log_total(const struct strata_cap *c, size_t n);

/* Log probability of allocation alloc for size n under uniform subsets
 * meeting the cap: sum_s log C(m_s, n_s) - log total (-INFINITY when the
 * allocation breaks the cap or does not sum to n). */
double hc_strata_cap_log_probability(const struct strata_cap *c, size_t n, const size_t *alloc);

/* Draw an allocation for a feasible n into alloc from a stream of uniforms
 * in [0, 1): uniform(ctx) is called once per stratum. */
void hc_strata_cap_draw(const struct strata_cap *c, size_t n,
		     double (*uniform)(void *ctx), void *ctx, size_t *alloc);

/*
 * Stratum block sums for the exact expected variance of a fixed
 * allocation: sum_var[s] = sum of the variances in stratum s, block[s*S+t]
 * = sum_{i in s, j in t} A_ij (per period, divisor T-1).  From complete
 * returns in O(M T + S^2 T), or from an M x M covariance matrix.
 */
struct strata_moments {
	size_t nstrata;
	double *sum_var;
	double *block;
};

/* From src's complete series, or from its matrix when it draws from one
 * (source.h).  *out is new (hc_strata_moments_free) or NULL on error.
 * HC_EUSAGE when the series have gaps, fewer than 2 periods or not s->m
 * securities, or the matrix is not s->m square; HC_ENOMEM. */
int hc_strata_moments_from_source(struct strata_moments **out, const struct hc_source *src,
				  const struct strata *s, struct hc_error *err);
/* Free sm and everything it owns; NULL is a no-op. */
void hc_strata_moments_free(struct strata_moments *sm);

/*
 * Exact expected per-period variance of an equal-weight portfolio of
 * n = sum alloc holdings drawn uniformly within each stratum:
 *   E[X] = sum_s [ n_s/m_s V_s + n_s(n_s-1)/(m_s(m_s-1)) (B_ss - V_s) ]
 *        + sum_{s != t} n_s n_t/(m_s m_t) B_st,      E[sigma^2] = E[X]/n^2
 * (inclusion probabilities within a stratum, as design.md section 3 does
 * for one stratum).
 */
double hc_strata_expected_variance(const struct strata_moments *sm, const struct strata *s,
				const size_t *alloc);

/*
 * Stratified sampling, as hc_sampler_run does for unconstrained draws,
 * from src's complete series or from its matrix (source.h):
 * opt->strata (m indices), opt->nstrata, opt->stratify and, for the cap,
 * opt->per_stratum_max.  r->feasible[j] is 0 for a size no allocation
 * meets, and its cells hold variance +INFINITY and return -1 (a total
 * loss), so that no rule reading the sample (hc_rules_band, hc_rules_shortfall)
 * can be met there.  Errors: HC_EUSAGE (no strata, mode none, a
 * cap of 0, bad size, paths 0, gaps in the data, returns from a matrix),
 * HC_EDATA, HC_ENOMEM, HC_EINTERRUPT.
 */
int hc_strata_run(struct sampler_result **out, const struct hc_source *src,
		  const size_t *sizes, size_t nsizes, const struct sampler_options *opt,
		  struct hc_error *err);

/*
 * The members (sorted ascending) of path k's portfolio of n holdings, as
 * hc_strata_run draws it, into members (n entries), and its allocation into
 * alloc (nstrata entries).  mode is enum sampler_stratify; cap is needed
 * (and only read) for SAMPLER_STRATA_CAP.  HC_EUSAGE when n is infeasible.
 */
int hc_strata_portfolio(const struct strata *s, const struct strata_cap *cap, int mode,
		     size_t n, uint64_t seed, size_t k, size_t *members, size_t *alloc,
		     struct hc_error *err);

/* The stratified curve, one point per size of the sample. */
struct strata_point {
	size_t n;
	int feasible;
	double expected_variance;  /* annualised exact value (fixed allocation), NaN when not known */
	int sampled;
	double mean_variance, variance_se, mean_sd, sd_p05, sd_p50, sd_p95, z_score;
};

struct strata_curve {
	size_t npoints;
	struct strata_point *points;
	int mode;                  /* enum sampler_stratify */
	size_t per_stratum_max;
	double periods_per_year;
};

/*
 * Summarise a stratified sample r (scaled by periods_per_year) as
 * hc_sampler_summarise does; the exact column from sm for the proportional
 * mode (sm may be NULL: no exact column), the z-score against it.
 */
int hc_strata_curve_alloc(struct strata_curve **out, const struct sampler_result *r,
		       const struct strata *s, const struct strata_moments *sm, int mode,
		       size_t per_stratum_max, double periods_per_year, struct hc_error *err);
/* Free c and everything it owns; NULL is a no-op. */
void hc_strata_curve_free(struct strata_curve *c);

/*
 * Append the columns stratified_feasible, stratified_expected_variance,
 * stratified_mean_variance, stratified_variance_se, stratified_mean_sd,
 * stratified_sd_p05, stratified_sd_p50, stratified_sd_p95,
 * stratified_z_score to t, whose rows must be the curve's sizes in order
 * (a hc_curve_report table).  Infeasible sizes: stratified_feasible false
 * and the other cells empty.  HC_EUSAGE when the row count differs,
 * HC_ENOMEM.
 */
int hc_strata_report_columns(const struct strata_curve *c, struct report_table *t);

#ifdef __cplusplus
}
#endif

#endif
