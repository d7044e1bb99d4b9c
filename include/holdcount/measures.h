/*
 * measures.h - downside, tail and path measures of one return series, and
 * their summary across random portfolios by holding count.
 *
 * Every measure is computed from a portfolio's per-period return series
 * r_1..r_T in two sweeps over the series (the moment sums, and the wealth
 * path with the smallest returns kept as they come, or a selection
 * without sorting for long series) for the two historical quantiles.  Definitions, conventions and sources are in
 * docs/measures.md; in short, per period unless said:
 *   semidev_mean    sqrt(sum_t min(r_t - mean, 0)^2 / T)   below the mean
 *   semidev_zero    sqrt(sum_t min(r_t, 0)^2 / T)          below zero
 *   var95, var99    -r_(c), c = ceil(T p), p = 5% or 1%: the loss not
 *                   exceeded in a fraction 1-p of periods (a positive loss)
 *   es95, es99      -(sum_{i<=f} r_(i) + (T p - f) r_(f+1)) / (T p),
 *                   f = floor(T p): the mean loss in the worst T p periods
 *   max_drawdown    largest fall of the compounded path from a prior peak,
 *                   as a fraction of the peak (0..1; the start is a peak)
 *   skewness        m3 / m2^1.5, m_k = sum_t (r_t - mean)^k / T
 *   excess_kurtosis m4 / m2^2 - 3
 *   worst_period    min_t r_t
 *   lag_universe    1 when the portfolio's compounded return over the whole
 *                   sample is below the equal-weight universe's, else 0
 *                   (the mean across portfolios is the chance of lagging)
 * r_(i) is the i-th smallest return.  Only the semi-deviations are
 * annualised (times sqrt(P), like the sd); the others are reported as they
 * are (docs/measures.md says why).
 */
#ifndef HOLDCOUNT_MEASURES_H
#define HOLDCOUNT_MEASURES_H

#include <stddef.h>

#include "holdcount/error.h"
#include "holdcount/report.h"

#ifdef __cplusplus
extern "C" {
#endif

enum hc_measure {
	HC_MEASURE_SEMIDEV_MEAN = 0,
	HC_MEASURE_SEMIDEV_ZERO,
	HC_MEASURE_VAR95,
	HC_MEASURE_VAR99,
	HC_MEASURE_ES95,
	HC_MEASURE_ES99,
	HC_MEASURE_MAX_DRAWDOWN,
	HC_MEASURE_SKEWNESS,
	HC_MEASURE_EXCESS_KURTOSIS,
	HC_MEASURE_WORST_PERIOD,
	HC_MEASURE_LAG_UNIVERSE,
	HC_MEASURE_COUNT
};

/* A set of measures: bit (1u << enum hc_measure). */
#define HC_MEASURES_ALL ((1u << HC_MEASURE_COUNT) - 1u)

/* The measure's key ("es95"), used in lists, CSV and JSON; its reading
 * title ("expected shortfall 95%"); NULL for an index out of range. */
const char *hc_measure_key(int measure);
const char *hc_measure_title(int measure);

/* Whether the measure is annualised with the sd (times sqrt(P)): the
 * semi-deviations only. */
int hc_measure_annualised(int measure);

/*
 * Parse a comma-separated list of measure keys into *mask.  "sd" names the
 * standard-deviation family every curve shows (no extra bit); "all" every
 * measure; "downside" the two semi-deviations; "tail" the value-at-risk and
 * expected-shortfall four.  Empty items and unknown words are HC_EUSAGE
 * with the word and the accepted keys in the message.
 */
int hc_measures_parse(const char *list, unsigned *mask, struct hc_error *err);

/*
 * One series.  scratch holds t doubles (the selection works in it).  The
 * series is r_t = mean + scale d[t*stride]: d the deviations from the series'
 * mean (the sampler's centred sums, scaled), which keeps the central
 * moments exact; hc_measures_series takes plain returns.  For
 * lag_universe, log_growth_bar is the log of the benchmark's compounded
 * growth (ignored otherwise; NaN leaves lag_universe NaN).  Every measure
 * in mask is written to out[measure] (per period, not annualised); the
 * others are left as they were.  t >= 1.  A period of -100% or worse makes
 * max_drawdown 1 and the compounded growth zero (lag_universe 1).
 */
void hc_measures_centred(const double *d, size_t stride, size_t t, double scale, double mean, unsigned mask,
			 double log_growth_bar, double *out, double *scratch);
void hc_measures_series(const double *r, size_t stride, size_t t, unsigned mask, double log_growth_bar,
			double *out, double *scratch);

/* log prod_t (1 + mean + scale d_t) (-inf when some factor is 0 or less), the
 * quantity lag_universe compares. */
double hc_measures_log_growth(const double *d, size_t stride, size_t t, double scale, double mean);

/* The same of plain returns r, centred as hc_measures_series centres them
 * (so a portfolio whose series has the benchmark's bits gets the
 * benchmark's growth, and does not lag it); scratch holds t doubles. */
double hc_measures_series_log_growth(const double *r, size_t stride, size_t t, double *scratch);

/*
 * The k-th smallest (0-based) of x[0..n) by selection (Hoare's FIND,
 * 1961, CACM 4(7), Algorithm 65, median-of-three pivot), reordering x so
 * that x[0..k) <= x[k] <= x[k+1..n).  Deterministic.  k < n.
 */
double hc_measures_select(double *x, size_t n, size_t k);

/*
 * The q-quantile of x[0..n) by numpy's default linear rule (the same as
 * hc_sampler_summarise's, which sorts): with h = (n-1) q, x_(floor h) +
 * (h - floor h)(x_(floor h + 1) - x_(floor h)), by selection; x is
 * reordered.  n >= 1, 0 <= q <= 1.
 */
double hc_measures_quantile(double *x, size_t n, double q);

/* The summary of one measure at one holding count, across K portfolios. */
struct hc_measure_point {
	double mean, se;          /* mean and Monte Carlo standard error sd/sqrt(K) (sd divisor K-1) */
	double p05, p50, p95;     /* numpy's linear quantiles */
};

struct hc_measures_curve {
	unsigned mask;
	size_t npoints;
	size_t *sizes;                 /* npoints counts */
	struct hc_measure_point *pts;  /* npoints * HC_MEASURE_COUNT, row = count */
	double universe[HC_MEASURE_COUNT]; /* the equal-weight universe's own value (N = M) */
	double periods_per_year;       /* semi-deviations scaled by sqrt of this */
	int ragged;                    /* drawn from a history read period by period (the report says so) */
};

/*
 * Summarise per-portfolio values v (paths rows of nsizes * HC_MEASURE_COUNT:
 * v[(k*nsizes + j)*HC_MEASURE_COUNT + measure], per period) into a new
 * curve, semi-deviations scaled by sqrt(ppy); universe[] (per period) is
 * copied and scaled the same way.  Deterministic (serial, path order).
 * HC_EUSAGE for paths 0, HC_ENOMEM.
 */
int hc_measures_summarise(struct hc_measures_curve **out, const double *v, size_t paths, const size_t *sizes,
			  size_t nsizes, unsigned mask, const double *universe, double ppy, struct hc_error *err);

void hc_measures_curve_free(struct hc_measures_curve *c);

/*
 * Append to t, whose rows are the same counts in the same order, five
 * columns per measure in mask, in enum order: KEY_mean, KEY_se, KEY_p05,
 * KEY_p50, KEY_p95; and to r the fields universe_KEY and a note on the
 * conventions (and, when c->ragged, one on what a portfolio and the
 * universe are on a history read period by period).  HC_OK, HC_EUSAGE (row count differs), HC_ENOMEM.
 */
int hc_measures_report(const struct hc_measures_curve *c, struct report *r, struct report_table *t);

#ifdef __cplusplus
}
#endif

#endif
