/*
 * sampler.h - random equal-weight portfolios by nested random permutations.
 *
 * A path is one random ordering of the universe (partial Fisher-Yates up to
 * the largest size asked for); its first n members are a uniform random
 * n-subset, so one path gives one portfolio of every size.  Path k's
 * generator is seeded from (seed, k) through splitmix64, so results are
 * byte-identical whatever the thread count (design.md section 4).
 */
#ifndef HOLDCOUNT_SAMPLER_H
#define HOLDCOUNT_SAMPLER_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/paths.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Progress callback: done of total paths; return nonzero to stop early
 * (then hc_sampler_run returns HC_EINTERRUPT). May be NULL. Called from one
 * thread only. */
typedef int (*sampler_progress_fn)(void *ctx, size_t done, size_t total);

struct sampler_options {
	size_t paths;            /* K portfolios per size */
	uint64_t seed;
	int threads;             /* 0 = OpenMP default */
	int want_returns;        /* also record each portfolio's annualised compound return */
	double periods_per_year; /* for annualising returns */
	const size_t *strata;    /* NULL, or m stratum indices (0..nstrata-1) for stratified draws */
	size_t nstrata;
	int stratify;            /* enum sampler_stratify, with strata */
	size_t per_stratum_max;  /* cap for SAMPLER_STRATA_CAP */
	sampler_progress_fn progress;
	void *progress_ctx;
};

enum sampler_stratify {
	SAMPLER_STRATA_NONE = 0,
	SAMPLER_STRATA_PROPORTIONAL = 1, /* allocation by largest remainder */
	SAMPLER_STRATA_CAP = 2           /* uniform over subsets with at most k per stratum */
};

/* Defaults: SAMPLER_DEFAULT_PATHS paths, seed 0, threads 0 (OpenMP's
 * default), periods_per_year 1, no returns, no strata, no progress. */
void hc_sampler_options_init(struct sampler_options *opt);

/* Below this standard error relative to the mean sampled variance, the
 * sampled spread is rounding (every draw the same portfolio, as at n = M)
 * and hc_sampler_summarise leaves the z-score empty (NaN). */
#define SAMPLER_SPREAD_RTOL 1e-12

struct sampler_result {
	size_t paths;
	size_t nsizes;
	size_t *sizes;           /* copy of the sizes */
	double *variance;        /* paths*nsizes, per-period variance, row k = path k */
	double *annual_return;   /* paths*nsizes or NULL: compound annualised return */
	unsigned char *feasible; /* nsizes: 0 where a stratified allocation is impossible */
	uint64_t seed;           /* the seed the paths were drawn from (copied to the curve) */
};

/* Sample random portfolios of src (source.h): from its complete return
 * series, or, when the source draws from a matrix (a covariance matrix, or
 * the pairwise-complete covariances of series with gaps), by a running
 * quadratic form, O(n_max^2) a path, with no returns (want_returns is then
 * HC_EUSAGE); the same seed draws the same portfolios either way.
 * Every size must be 1..M, in any order (duplicates allowed).
 * variance[k*nsizes + j] is path k's portfolio of sizes[j] members, per
 * period (divisor T-1).  annual_return, when opt->want_returns, is that
 * portfolio's compound annualised return, rebalanced to equal weights each
 * period: prod(1 + r_t)^(P/T) - 1 with P = opt->periods_per_year.
 * Stratified draws are hc_strata_run's (strata.h, which builds on this
 * module): opt->strata or opt->stratify set here is HC_EUSAGE.
 * Errors: HC_EUSAGE (bad size, paths 0, data with gaps, strata),
 * HC_EDATA (fewer
 * than 2 securities or periods), HC_ENOMEM, HC_EINTERRUPT (progress
 * callback asked to stop).  *out is NULL on error. */
int hc_sampler_run(struct sampler_result **out, const struct hc_source *src,
		   const size_t *sizes, size_t nsizes,
		   const struct sampler_options *opt, struct hc_error *err);

/* Fill the sampled columns of c (whose points must have the same sizes, in
 * the same order) from r, scaling by c->periods_per_year: the mean variance,
 * its Monte Carlo standard error sd/sqrt(K) (sd with divisor K-1; NaN for
 * K = 1), the mean of sigma, sigma's 5/50/95% quantiles (linear
 * interpolation between order statistics, numpy's default), and the z-score
 * of the mean against the exact expected variance (NaN when the standard
 * error is 0, as at n = M).  Sets c->paths and c->seed.  Deterministic.
 * HC_EUSAGE when the sizes differ, HC_ENOMEM. */
int hc_sampler_summarise(struct curve *c, const struct sampler_result *r,
		      struct hc_error *err);

/* Free r and everything it owns; NULL is a no-op. */
void hc_sampler_result_free(struct sampler_result *r);

#ifdef __cplusplus
}
#endif

#endif
