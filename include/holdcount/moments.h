/*
 * moments.h - the sums that the exact curve and its spread need.
 *
 * From the M x M sample covariance A (divisor T-1) with v_i = A_ii,
 * c_ij = A_ij (i != j), r_i = sum_{j != i} c_ij (design.md section 3):
 *   V = sum v_i,  C = sum r_i,  S = sum v_i^2,  Q = sum_{i != j} c_ij^2,
 *   W = sum v_i r_i,  Z = sum r_i^2.
 * All figures are per period (not annualised).
 */
#ifndef HOLDCOUNT_MOMENTS_H
#define HOLDCOUNT_MOMENTS_H

#include <stddef.h>

#include "holdcount/error.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

enum moments_route {
	MOMENTS_ROUTE_GRAM = 0,     /* column sums and the T x T Gram matrix (complete data, T < M) */
	MOMENTS_ROUTE_MATRIX = 1,   /* the M x M covariance in row blocks through BLAS dgemm */
	MOMENTS_ROUTE_PAIRWISE = 2, /* pairwise-complete covariances (data with gaps) */
	MOMENTS_ROUTE_GIVEN = 3,    /* a covariance matrix was supplied */
	MOMENTS_ROUTE_SUMMARY = 4,  /* only average variance and covariance are known */
	MOMENTS_ROUTE_PERIODIC = 5  /* per-period sums of a ragged history (periodic.h) */
};

/* Rows of the covariance matrix the matrix route computes at a time (its
 * buffer holds MOMENTS_BLOCK_ROWS x M doubles, 10 MB for M = 5000). */
#define MOMENTS_BLOCK_ROWS 256

/* An average sd above this a year (300%) is taken as a unit mistake, such as
 * variances given in percent squared (common practice: even single stocks
 * rarely exceed 100% a year); enough and formula say so in a note. */
#define HC_MOMENTS_IMPLAUSIBLE_SD 3.0

struct moments {
	size_t m;                  /* securities; 0 = unbounded universe (summary only) */
	size_t t;                  /* periods behind the estimate; 0 when unknown */
	int route;                 /* enum moments_route */
	int has_spread;            /* S, Q, W, Z are known */
	int has_correlation;       /* average_correlation is known */
	double sum_var;            /* V */
	double sum_cov;            /* C */
	double sum_var2;           /* S */
	double sum_cov2;           /* Q */
	double sum_var_rowcov;     /* W */
	double sum_rowcov2;        /* Z */
	double average_variance;   /* v-bar = V/M */
	double average_covariance; /* c-bar = C/(M(M-1)) */
	double average_correlation;/* mean off-diagonal correlation */
	double universe_variance;  /* equal-weight portfolio of all M: (V+C)/M^2; c-bar when unbounded */
};

/*
 * Put the BLAS (OpenBLAS, which the library links) on one thread and stop
 * its idle worker threads.  The products here run on one BLAS thread
 * anyway (each sets and restores the count around its call), but the
 * pthread build of OpenBLAS starts a worker per core when it loads, and
 * those busy-wait with sched_yield for about 0.1 s at start and after every
 * threaded call, taking cores from the sampler's OpenMP threads.  For
 * programs that want no threaded BLAS of their own: call once at start,
 * before any other thread runs.  The holdcount command does.  Cannot fail.
 */
void hc_moments_blas_serial(void);

/* From a universe: complete data uses the Gram route when T < M, else the
 * matrix route; data with gaps uses pairwise-complete covariances.
 * Memory besides the universe: the centred copy (M x T) and the T x T Gram
 * matrix, or the centred copy and MOMENTS_BLOCK_ROWS x M doubles (matrix
 * route), or for pairwise covariances at most four M x M arrays and four
 * M x T copies, one of each in float (masked Gram products on threaded
 * BLAS; with few gaps only the M x M result, one M x T copy and a mask of
 * bytes, the rest from the gaps on the OpenMP threads: enum
 * moments_pairwise_way; the budget counts the larger); checked first against the
 * universe's budget u->max_bytes (memory.h's hc_memory_check), HC_ENOMEM
 * "SOURCE: universe too large for its covariances: needs at least ..."
 * when they do not fit.
 * HC_EDATA when fewer than 2 securities or periods, when a security has
 * zero variance, or (pairwise) when two securities share fewer than
 * COVMATRIX_MIN_COMMON_PERIODS (covmatrix.h) periods, with the message
 * hc_covmatrix_check_overlap gives; HC_ENOMEM.  On error *mo is zeroed. */
int hc_moments_from_universe(struct moments *mo, const struct universe *u,
			  struct hc_error *err);

/* The same by a chosen route (MOMENTS_ROUTE_GRAM, _MATRIX or _PAIRWISE),
 * for tests and benchmarks: every route is exact for complete data, only
 * the cost differs.  GRAM and MATRIX need complete data (HC_EUSAGE). */
int hc_moments_from_universe_route(struct moments *mo, const struct universe *u,
				int route, struct hc_error *err);

/* The pairwise route's moments (the average correlation too) and the
 * pairwise-complete matrix they come from, in a new *a (hc_free), from one
 * set of masked Gram products, for a caller that needs both (describe's
 * positive semi-definite check); the budget and errors of
 * hc_moments_from_universe_route.  *a is NULL on error. */
int hc_moments_pairwise_matrix(struct moments *mo, const struct universe *u, double **a,
			       struct hc_error *err);

/* The two ways to the sums over each pair's common periods. */
enum moments_pairwise_way {
	MOMENTS_PAIRWISE_AUTO = 0,  /* from the gaps when at most 1 cell in 8 is missing, else dense */
	MOMENTS_PAIRWISE_DENSE = 1, /* masked Gram products on BLAS: K K', Z K', (Z*Z) K' */
	MOMENTS_PAIRWISE_GAPS = 2   /* from each security's list of missing periods */
};

/* The pairwise-complete matrix of u by a chosen way (enum
 * moments_pairwise_way), for tests and benchmarks: both ways give the same
 * matrix up to rounding and the same counts exactly, only the cost
 * differs.  *a (M x M, row-major, hc_free) as hc_moments_covariance; when
 * counts is not NULL, *counts (M x M, hc_free) gets each pair's number of
 * common periods (each security's own on the diagonal);
 * *average_correlation the mean off-diagonal pairwise correlation.  Budget
 * and errors as hc_moments_from_universe_route's pairwise route; HC_EUSAGE
 * for an unknown way.  *a and *counts are NULL on error. */
int hc_moments_pairwise_by(const struct universe *u, int way, double **a, double **counts,
			   double *average_correlation, struct hc_error *err);

/* OpenBLAS on omp_get_max_threads() threads for a product or
 * factorisation of about work flops outside this module (below 1e9 it
 * stays on one thread); end with hc_moments_blas_serial, which stops the
 * workers so they do not spin beside OpenMP work. */
void hc_moments_blas_threaded(double work);

/* The M x M sample covariance matrix of u (divisor T-1, row-major, both
 * triangles) into a new array *a, freed with hc_free: through dsyrk for
 * complete data; pairwise-complete (each pair over the periods both have,
 * which need not be positive semi-definite) when u->has_missing.  For the
 * matrix sampler and for audits.  Errors as hc_moments_from_universe (the
 * budget counts the M x M result, and the centred copy for complete data);
 * *a is NULL on error. */
int hc_moments_covariance(const struct universe *u, double **a, struct hc_error *err);

/*
 * The moments of a data source (source.h): from its series as
 * hc_moments_from_universe does (the pairwise route for data with gaps), or
 * from its M x M covariance matrix (route MOMENTS_ROUTE_GIVEN; the average
 * correlation from it too) when the source is a matrix or a repaired
 * pairwise matrix.  A matrix's errors carry its name as prefix.  HC_EDATA
 * when fewer than 2 securities; errors as hc_moments_from_universe.
 */
struct hc_source;
int hc_moments_from_source(struct moments *mo, const struct hc_source *src,
			   struct hc_error *err);

/* The averages summary statistics give: vbar = variance when it is a
 * number, else sd squared; cbar = covariance when it is a number, else
 * correlation times vbar (the equal-variance reading: common practice, no
 * single source).  Pass NAN for what was not given.  Cannot fail. */
void hc_moments_summary_averages(double variance, double covariance, double sd, double correlation,
				 double *vbar, double *cbar);

/* The most securities a summary may name: far beyond any market, and far
 * below the counts at which M, M - 1 and the size grid lose their meaning
 * in double arithmetic or wrap in a signed 64-bit count (2^63). */
#define HC_MOMENTS_MAX_SECURITIES 1000000000u

/* From summary statistics: average variance vbar, average covariance cbar,
 * m securities (0 = unbounded).  No spread; correlation cbar/vbar is used
 * only as an approximation and flagged has_correlation = 0.  HC_EUSAGE
 * when m is above HC_MOMENTS_MAX_SECURITIES. */
int hc_moments_from_summary(struct moments *mo, double vbar, double cbar,
			 size_t m, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
