/*
 * bootstrap.h - resampling periods to measure the estimation error of the
 * average variance and average covariance.
 *
 * Whole periods are resampled, so cross-sectional dependence is kept; blocks
 * of consecutive periods keep short-range serial dependence:
 *   - moving-block bootstrap (Kuensch, 1989, Annals of Statistics 17(3)):
 *     ceil(T/L) blocks of L consecutive periods with uniform starts in
 *     0..T-L, joined and cut to T periods;
 *   - stationary bootstrap (Politis & Romano, 1994, JASA 89(428)): blocks of
 *     geometric length with mean L, wrapping round the end of the sample.
 * Default L = round(T^(1/3)) for both (common practice for the order of the
 * block length; no single source).
 *
 * Replicate k's generator is splitmix64 (Steele, Lea & Flood, 2014) seeded
 * from (seed, k), and each replicate's result is stored in its own slot, so
 * results are identical for any thread count.
 */
#ifndef HOLDCOUNT_BOOTSTRAP_H
#define HOLDCOUNT_BOOTSTRAP_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/error.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

enum bootstrap_kind {
	BOOTSTRAP_BLOCK = 0,       /* moving-block (Kuensch, 1989) */
	BOOTSTRAP_STATIONARY = 1   /* stationary (Politis & Romano, 1994) */
};

#define BOOTSTRAP_DEFAULT_REPLICATES 1000
/* The most replicates one run takes: ten million (its two averages are
 * 160 MB), far beyond what a 5-95% interval needs, and far below the
 * counts whose array sizes wrap. */
#define HC_BOOTSTRAP_MAX_REPLICATES 10000000u

/* Progress callback, as the sampler's: done of total; nonzero stops
 * (HC_EINTERRUPT).  Called from one thread only.  May be NULL. */
typedef int (*bootstrap_progress_fn)(void *ctx, size_t done, size_t total);

struct bootstrap_options {
	size_t replicates;         /* 1 <= B <= HC_BOOTSTRAP_MAX_REPLICATES */
	int kind;                  /* enum bootstrap_kind */
	size_t block_length;       /* L; 0 = hc_bootstrap_default_block_length(T) */
	uint64_t seed;
	int threads;               /* 0 = OpenMP default */
	bootstrap_progress_fn progress;
	void *progress_ctx;
};

/* Defaults: BOOTSTRAP_DEFAULT_REPLICATES replicates, kind BOOTSTRAP_BLOCK,
 * seed 1, the rest zero/NULL.  Cannot fail. */
void hc_bootstrap_options_init(struct bootstrap_options *opt);

/* round(T^(1/3)), at least 1. */
size_t hc_bootstrap_default_block_length(size_t t);

/* Name of a kind ("block", "stationary"), or NULL. */
const char *hc_bootstrap_kind_name(int kind);

/*
 * The precomputed sums a replicate needs, from data centred by the
 * sample's own means (covariances are unchanged by a shift, and centring
 * keeps the replicate's raw sums from cancelling):
 *   s_t = sum_i x_ti          the row-sum series          (T)
 *   G   = X X^T over securities, the T x T Gram matrix    (when T <= M)
 * A replicate with period counts w (w_t = times period t was drawn) has
 *   sum_ij A_ij   = sample variance of the resampled row sums,
 *   sum_i A_ii    = (sum_t w_t G_tt - w^T G w / T) / (T - 1),
 * so it costs O(T^2) with G (O(T^2 M) once, by BLAS dsyrk), or O(MT) from
 * the centred data when T > M (then G is not formed).
 */
struct bootstrap_base {
	size_t m, t;
	double *rowsum;            /* t */
	double *gram;              /* t*t row-major, full symmetric; NULL when the direct route is used */
	double *xc;                /* m*t centred data, security-major; NULL when gram is used */
	size_t max_bytes;          /* the universe's memory budget (memory.h): the base's and
				    * each run's arrays are checked against it */
};

/* From complete data (u->has_missing == 0, m >= 2, t >= 2; else HC_EDATA). */
int hc_bootstrap_base_alloc(struct bootstrap_base **out, const struct universe *u,
			 struct hc_error *err);
void hc_bootstrap_base_free(struct bootstrap_base *b);

/*
 * Period indices of replicate rep into idx[0..t-1] (values 0..t-1).
 * Deterministic in (kind, t, block_length, seed, rep).  block_length must be
 * 1..t (HC_EUSAGE otherwise).
 */
int hc_bootstrap_indices(int kind, size_t t, size_t block_length, uint64_t seed,
		      size_t rep, size_t *idx, struct hc_error *err);

/* The same streams drawing n periods (n may exceed t: a bootstrap path
 * longer than the sample, the horizons of horizon.h): for n = t exactly
 * hc_bootstrap_indices' draw. */
int hc_bootstrap_indices_n(int kind, size_t t, size_t n, size_t block_length, uint64_t seed,
			   size_t rep, size_t *idx, struct hc_error *err);

/*
 * Average variance and covariance (per period, divisor T-1) of the
 * resampled universe whose period t appears w[t] times (sum w = T).
 * No allocation; safe to call from several threads at once.
 */
void hc_bootstrap_moments(const struct bootstrap_base *b, const double *w,
		       double *vbar, double *cbar);

struct bootstrap_result {
	size_t replicates;
	size_t block_length;       /* L used */
	int kind;
	double *vbar;              /* replicates, per period */
	double *cbar;              /* replicates, per period */
};

/* Run B replicates (OpenMP over replicates). */
int hc_bootstrap_run(struct bootstrap_result **out, const struct bootstrap_base *b,
		  const struct bootstrap_options *opt, struct hc_error *err);
void hc_bootstrap_result_free(struct bootstrap_result *r);

/*
 * Data-driven expected block length for the stationary bootstrap: Politis &
 * White (2004), Econometric Reviews 23(1), with the correction of Patton,
 * Politis & White (2009), Econometric Reviews 28(4).
 * hc_bootstrap_politis_white gives it (a real >= 1) for one series x[0..n-1];
 * hc_bootstrap_auto_block_length takes the larger of the lengths of the two
 * per-period series the averages are means of (the squared equal-weight
 * row sum and the row sum of squares), rounded, within 1..T.
 */
double hc_bootstrap_politis_white(const double *x, size_t n);
int hc_bootstrap_auto_block_length(const struct bootstrap_base *b, size_t *length,
				   struct hc_error *err);

/*
 * Delete-a-block jackknife (Kuensch, 1989): the averages (per period) with
 * each of the floor(T/L) non-overlapping blocks of L periods left out in
 * turn, into *vbar and *cbar (allocated, *n of each; the caller frees with
 * hc_free).  O(T L^2 + T^2) with the Gram matrix, O(M T) otherwise.  For the
 * acceleration of BCa intervals (rules.h).  HC_EUSAGE with fewer than two
 * blocks.
 */
int hc_bootstrap_jackknife(const struct bootstrap_base *b, size_t block_length, double **vbar,
			   double **cbar, size_t *n, struct hc_error *err);

/* The per-period series the averages are (nearly) means of, from the
 * centred data: q[t] = sum_i x_ti^2 and s2[t] = (sum_i x_ti)^2, so that
 * V = sum_t q_t/(T-1) and V + C = sum_t s2_t/(T-1).  q and s2 hold T. */
void hc_bootstrap_period_series(const struct bootstrap_base *b, double *q, double *s2);

/*
 * The standard error of the mean of a linearised per-period series g over
 * the periods idx[0..t-1] of a replicate (idx NULL: periods 0..t-1 in
 * order; g indexed by period): sqrt(sum_{|k|<bw} w_k gamma_k / t), gamma_k
 * the lag-k autocovariance sum of g about its mean over the drawn periods
 * (divisor t) and w_k the Bartlett weights 1 - |k|/bw (Newey & West, 1987,
 * Econometrica 55(3)).  The delta-method standard error of a smooth
 * function of per-period means, as the studentized intervals (rules.h,
 * periodic.h) use it.  No allocation.
 */
double hc_bootstrap_long_run_se(const double *g, const size_t *idx, size_t t, size_t bw);

/*
 * Volatility clustering in b's history: the McLeod & Li (1983) test,
 * "Diagnostic Checking ARMA Time Series Models Using Squared-Residual
 * Autocorrelations", Journal of Time Series Analysis 4(4) -- the Ljung &
 * Box (1978, Biometrika 65(2)) statistic Q = T(T+2) sum_{k=1..h} r_k^2/(T-k)
 * on the squared centred equal-weight portfolio returns, r_k their lag-k
 * autocorrelation -- with h = *lags (0: HC_BOOTSTRAP_CLUSTERING_LAGS, at
 * most T/4, at least 1; *lags gets the h used), *q the statistic and *p its
 * chi-square(h) upper tail.  NaN for both when T < 8 or the squares are
 * constant.  A small p says volatility clusters, where the measured
 * coverage of the intervals falls short (docs/enough.md).
 */
#define HC_BOOTSTRAP_CLUSTERING_LAGS 12
void hc_bootstrap_clustering(const struct bootstrap_base *b, size_t *lags, double *q, double *p);
/* The same test on any series r[0..n-1] (its squares, centred on their
 * mean): a ragged history passes its equal-weight alive portfolio's
 * centred returns (periodic.h). */
void hc_bootstrap_mcleod_li(const double *r, size_t n, size_t *lags, double *q, double *p);

#ifdef __cplusplus
}
#endif

#endif
