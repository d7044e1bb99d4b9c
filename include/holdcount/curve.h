/*
 * curve.h - risk by holding count: exact figures and sampled figures.
 *
 * A random equal-weight portfolio of n holdings is a uniform n-subset of the
 * M securities, drawn without replacement (design.md section 3).  The exact
 * functions work per period; struct curve holds figures already scaled by
 * the curve's periods_per_year (variance times P, standard deviation times
 * sqrt(P)), which is what every writer prints.
 */
#ifndef HOLDCOUNT_CURVE_H
#define HOLDCOUNT_CURVE_H

#include <stddef.h>

#include "holdcount/error.h"
#include "holdcount/moments.h"
#include "holdcount/report.h"

#ifdef __cplusplus
extern "C" {
#endif

/* E[sigma^2(n)] = vbar/n + (1 - 1/n) cbar, per period; n >= 1 (real n allowed). */
double hc_curve_expected_variance(const struct moments *mo, double n);

/* Exact standard deviation of the portfolio variance across random n-subsets,
 * per period (squared units); exactly 0 at n = m.  Needs mo->has_spread
 * (not from summary statistics) and 1 <= n <= m; otherwise HC_EUSAGE. */
int hc_curve_variance_sd(const struct moments *mo, size_t n, double *sd,
		      struct hc_error *err);

/* Set variance_sd of every point of c (annualised by c->periods_per_year)
 * from mo by hc_curve_variance_sd: the spread across fixed N-subsets of
 * mo's m securities.  c->m must equal mo->m.  HC_EUSAGE when mo lacks the
 * spread sums or the sizes do not match (c unchanged). */
struct curve;
int hc_curve_set_spread(struct curve *c, const struct moments *mo, struct hc_error *err);

/* E[TE^2(n)] = (vbar - cbar)(1/n - 1/M) against the universe equal-weight
 * portfolio, per period; with an unbounded universe (m = 0) the 1/M term is 0. */
double hc_curve_expected_te2(const struct moments *mo, double n);

/* (vbar - cbar)/n divided by E[sigma^2(n)]. */
double hc_curve_diversifiable_share(const struct moments *mo, double n);

/* Equivalent count of a portfolio with per-period variance s2:
 * (vbar - cbar)/(s2 - cbar).  Returns 0 and sets *n_eq, or -1 when s2 <= cbar
 * ("below the floor": there is no such count). */
int hc_curve_equivalent_count(const struct moments *mo, double s2, double *n_eq);

struct curve_point {
	size_t n;
	double expected_variance;       /* annualised */
	double expected_sd;             /* sqrt of expected_variance (not E[sigma]) */
	double variance_sd;             /* exact sd of the variance; NaN when unknown */
	double expected_tracking_error; /* sqrt(E[TE^2]) */
	double diversifiable_share;     /* fraction, 0..1 */
	int sampled;                    /* the fields below are set */
	double sampled_mean_variance;
	double sampled_variance_se;     /* Monte Carlo standard error of that mean */
	double sampled_mean_sd;         /* mean of sampled sigma */
	double sd_p05, sd_p50, sd_p95;  /* quantiles of sampled sigma (numpy's linear rule) */
	double z_score;                 /* (sampled mean - exact)/se */
};

struct curve {
	size_t npoints;
	struct curve_point *points;
	double periods_per_year;        /* scale applied; 1 = per period as given */
	size_t m;                       /* securities; 0 = unbounded */
	double floor_variance;          /* c-bar, annualised */
	double universe_variance;       /* annualised */
	size_t paths;                   /* 0 = not sampled */
	unsigned long long seed;
};

/* Allocate a curve with the exact columns filled for sizes[0..nsizes-1]
 * (each 1 <= n <= m, or any n >= 1 when m = 0), scaled by
 * periods_per_year (> 0; 1 keeps the input's scale).  variance_sd is NaN
 * without the spread sums; the sampled fields are NaN and sampled = 0
 * until hc_sampler_summarise.  Free with hc_curve_free.  HC_EUSAGE for a bad size
 * ("size 900 is larger than the 412 securities kept") or scale, HC_ENOMEM;
 * *out is NULL on error. */
int hc_curve_exact(struct curve **out, const struct moments *mo,
		const size_t *sizes, size_t nsizes, double periods_per_year,
		struct hc_error *err);

/* Free c and everything it owns; NULL is a no-op. */
void hc_curve_free(struct curve *c);

/* Most sizes one size list may name, ranges expanded and duplicates
 * counted: bounds the work and memory of a list such as "1-3000000000"
 * for an unbounded universe. */
#define CURVE_MAX_SIZES 1000000

/*
 * Parse a size list "1,2,5-30,50,100" (ranges inclusive, ascending order
 * not required; duplicates removed; result sorted) into a new array.
 * Every size must be 1 <= n <= max (max = 0: no upper bound), and the list
 * may name at most CURVE_MAX_SIZES sizes.
 * HC_EUSAGE with a message naming the offending item on error
 * ("bad size list: 'x' is not a count", "size 900 is larger than the 412
 * securities kept", "bad size list: '1-3000000000' names more than
 * 1000000 sizes"); HC_ENOMEM.
 */
int hc_curve_parse_sizes(const char *text, size_t max, size_t **sizes,
		      size_t *nsizes, struct hc_error *err);

/* The default grid for a universe of m securities: 1..10, then a roughly
 * logarithmic sequence (12, 15, 20, 25, 30, 40, 50, ...) up to and
 * including m.  m = 0 (unbounded) stops at 1000. */
int hc_curve_default_sizes(size_t m, size_t **sizes, size_t *nsizes,
			struct hc_error *err);

/*
 * Declare the curve's columns on t, in the contract order
 *   n,expected_variance,expected_sd,variance_sd,expected_tracking_error,
 *   diversifiable_share,sampled_mean_variance,sampled_variance_se,
 *   sampled_mean_sd,sd_p05,sd_p50,sd_p95,z_score
 * and append one row per point (annualised as c is; sampled cells and
 * unknown values left empty).  t must have no columns yet.  Defined in
 * src/hc_curve_report.c so that programs without a report need no writer.
 * Returns HC_OK, HC_ENOMEM when the table cannot grow, or HC_EUSAGE when
 * t already has columns (no error record: the caller words the message).
 */
int hc_curve_report(const struct curve *c, struct report_table *t);

#ifdef __cplusplus
}
#endif

#endif
