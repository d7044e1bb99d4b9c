/*
 * measures.c - downside, tail and path measures of a return series and
 * their summary by holding count (measures.h; definitions and sources in
 * docs/measures.md).
 *
 * Two sweeps over the series while it sits in the L1 cache, with no copy
 * and no second sampler: a vectorised one gathers the central moments
 * (from the deviations, so no cancellation), both semi-deviations and the
 * worst period; a serial one follows the wealth path (drawdown, compounded
 * growth) and keeps the smallest returns, or copies them for the
 * selection, that give the historical value-at-risk and expected shortfall
 * (Acerbi & Tasche, 2002, "On the coherence of expected shortfall", Journal
 * of Banking & Finance 26(7), 1487-1503: the lower quantile and the
 * tail mean with the fractional weight on the boundary observation).
 * Semi-deviation below the mean: Markowitz (1959), Portfolio Selection,
 * chapter IX; below a target of zero: Sortino & van der Meer (1991),
 * "Downside risk", Journal of Portfolio Management 17(4).  Skewness and
 * excess kurtosis are the moment ratios g1, g2 of Joanes & Gill (1998),
 * "Comparing measures of sample skewness and kurtosis", The Statistician
 * 47(1).  Maximum drawdown: Magdon-Ismail & Atiya (2004), "Maximum
 * drawdown", Risk 17(10).  Lagging the equal-weight universe: Heaton,
 * Polson & Witte (2017), "Why indexing works", Applied Stochastic Models
 * in Business and Industry 33(6).
 */
#include "holdcount/measures.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/memory.h"

/* The two tail levels, as exact fractions p = TAIL_NUM / TAIL_DEN, so that
 * T p, its floor and its ceiling carry no rounding (240 x 0.05 is not 12
 * in binary). */
#define TAIL_DEN 100u
#define TAIL95_NUM 5u
#define TAIL99_NUM 1u

/* Growth factors multiplied between two exponent splits (frexp): 32
 * factors from 1e-9 to 1e9 stay inside a double's normal range. */
#define GROWTH_BLOCK 32
#define MEASURES_LN2 0.69314718055994530941723212145817657

static const struct {
	const char *key, *title;
	int style;
} info[HC_MEASURE_COUNT] = {
	{ "semidev_mean", "semi-deviation below the mean", REPORT_STYLE_PERCENT },
	{ "semidev_zero", "semi-deviation below zero", REPORT_STYLE_PERCENT },
	{ "var95", "value-at-risk 95%", REPORT_STYLE_PERCENT },
	{ "var99", "value-at-risk 99%", REPORT_STYLE_PERCENT },
	{ "es95", "expected shortfall 95%", REPORT_STYLE_PERCENT },
	{ "es99", "expected shortfall 99%", REPORT_STYLE_PERCENT },
	{ "max_drawdown", "maximum drawdown", REPORT_STYLE_PERCENT },
	{ "skewness", "skewness", REPORT_STYLE_FIXED4 },
	{ "excess_kurtosis", "excess kurtosis", REPORT_STYLE_FIXED4 },
	{ "worst_period", "worst period", REPORT_STYLE_PERCENT },
	{ "lag_universe", "lags the equal-weight universe", REPORT_STYLE_PERCENT },
};

const char *hc_measure_key(int measure)
{
	return measure >= 0 && measure < HC_MEASURE_COUNT ? info[measure].key : NULL;
}

const char *hc_measure_title(int measure)
{
	return measure >= 0 && measure < HC_MEASURE_COUNT ? info[measure].title : NULL;
}

int hc_measure_annualised(int measure)
{
	return measure == HC_MEASURE_SEMIDEV_MEAN || measure == HC_MEASURE_SEMIDEV_ZERO;
}

#define BIT(m) (1u << (m))

static int word_mask(const char *w, size_t len, unsigned *mask)
{
	int j;

	if (len == 2 && !strncmp(w, "sd", 2))
		return 0;
	if (len == 3 && !strncmp(w, "all", 3)) {
		*mask |= HC_MEASURES_ALL;
		return 0;
	}
	if (len == 8 && !strncmp(w, "downside", 8)) {
		*mask |= BIT(HC_MEASURE_SEMIDEV_MEAN) | BIT(HC_MEASURE_SEMIDEV_ZERO);
		return 0;
	}
	if (len == 4 && !strncmp(w, "tail", 4)) {
		*mask |= BIT(HC_MEASURE_VAR95) | BIT(HC_MEASURE_VAR99) | BIT(HC_MEASURE_ES95) | BIT(HC_MEASURE_ES99);
		return 0;
	}
	for (j = 0; j < HC_MEASURE_COUNT; j++)
		if (strlen(info[j].key) == len && !strncmp(w, info[j].key, len)) {
			*mask |= BIT(j);
			return 0;
		}
	return -1;
}

int hc_measures_parse(const char *list, unsigned *mask, struct hc_error *err)
{
	const char *p = list, *end;
	size_t len;

	*mask = 0;
	if (!list)
		return HC_OK;
	for (;;) {
		end = strchr(p, ',');
		len = end ? (size_t)(end - p) : strlen(p);
		if (len == 0 || word_mask(p, len, mask)) {
			*mask = 0;
			return hc_error(err, HC_EUSAGE,
					"bad measure list: '%.*s' is not a measure; expected sd, all, downside, tail, "
					"semidev_mean, semidev_zero, var95, var99, es95, es99, max_drawdown, skewness, "
					"excess_kurtosis, worst_period or lag_universe, separated by commas",
					(int)(len > 64 ? 64 : len), p);
		}
		if (!end)
			return HC_OK;
		p = end + 1;
	}
}

/* ---- selection ---- */

static void swap(double *a, double *b)
{
	double t = *a;

	*a = *b;
	*b = t;
}

/* Hoare's FIND with a median-of-three pivot and Hoare partitioning: the
 * answer in O(n) expected steps, the array left partitioned around k. */
double hc_measures_select(double *x, size_t n, size_t k)
{
	size_t lo = 0, hi = n - 1, mid, i, j;
	double pivot;

	while (hi > lo) {
		mid = lo + (hi - lo) / 2;
		if (x[mid] < x[lo])
			swap(&x[mid], &x[lo]);
		if (x[hi] < x[lo])
			swap(&x[hi], &x[lo]);
		if (x[hi] < x[mid])
			swap(&x[hi], &x[mid]);
		if (hi - lo < 3)
			break; /* three or fewer: now sorted */
		pivot = x[mid];
		swap(&x[mid], &x[hi - 1]);
		i = lo;
		j = hi - 1;
		for (;;) {
			while (x[++i] < pivot)
				;
			while (pivot < x[--j])
				;
			if (i >= j)
				break;
			swap(&x[i], &x[j]);
		}
		swap(&x[i], &x[hi - 1]);
		if (i == k)
			break;
		if (k < i)
			hi = i - 1;
		else
			lo = i + 1;
	}
	return x[k];
}

double hc_measures_quantile(double *x, size_t n, double q)
{
	double h = (double)(n - 1) * q, g, a, b;
	size_t lo = (size_t)floor(h), i;

	if (lo >= n - 1)
		return hc_measures_select(x, n, n - 1);
	a = hc_measures_select(x, n, lo);
	g = h - (double)lo;
	if (g == 0)
		return a;
	b = x[lo + 1];
	for (i = lo + 2; i < n; i++)
		b = x[i] < b ? x[i] : b;
	return a + g * (b - a);
}

/* ---- one series ---- */

/* The historical value-at-risk and expected shortfall of a series of t
 * returns at tail p = num/100, from x[0..n): x must hold the ceil(T p)
 * smallest returns (the whole series, or a prefix already partitioned by a
 * wider tail); x[0..n) is left partitioned around the ceil(T p)-th
 * smallest. */
static void tail(double *x, size_t n, size_t t, unsigned num, double *var, double *es)
{
	size_t tp = t * num, f = tp / TAIL_DEN, c = (tp + TAIL_DEN - 1) / TAIL_DEN, i;
	double q = hc_measures_select(x, n, c - 1), s = 0;

	for (i = 0; i < f; i++)
		s += x[i];
	s += (double)(tp % TAIL_DEN) / TAIL_DEN * q;
	*var = -q;
	*es = -s / ((double)tp / TAIL_DEN);
}

/* The ceil(T p95) smallest returns, kept sorted in the pass itself while
 * there are at most this many: a return enters only when it is below the
 * largest kept, which after the first few periods is rare and well
 * predicted, so the tail costs little beside the pass.  Longer tails go
 * to a selection (Hoare's FIND) over a copy of the series. */
#define TAIL_STREAM_MAX 64

static inline void keep_smallest(double *buf, size_t *len, size_t cap, double r)
{
	size_t i = *len;

	if (i == cap) {
		if (!(r < buf[cap - 1]))
			return;
		i--;
	} else
		(*len)++;
	while (i > 0 && r < buf[i - 1]) {
		buf[i] = buf[i - 1];
		i--;
	}
	buf[i] = r;
}

/* VaR and ES at tail num/100 of t returns from the ascending c smallest in buf. */
static void tail_sorted(const double *buf, size_t t, unsigned num, double *var, double *es)
{
	size_t tp = t * num, f = tp / TAIL_DEN, c = (tp + TAIL_DEN - 1) / TAIL_DEN, i;
	double s = 0;

	for (i = 0; i < f; i++)
		s += buf[i];
	s += (double)(tp % TAIL_DEN) / TAIL_DEN * buf[c - 1];
	*var = -buf[c - 1];
	*es = -s / ((double)tp / TAIL_DEN);
}

/* The moment sums of one series: four fixed lanes (period k in lane
 * k mod 4), so the adds do not wait on one another and the bits are the
 * same whichever vector width the compiler picks; every conditional is a
 * minimum of two doubles (one instruction, no branch: the signs of
 * returns are a coin toss a branch predictor would lose on half the
 * time). */
struct sums {
	double m2, m3, m4, below_mean, below_zero, worst, least;
};

/* One period into lane l. */
#define MOMENT_STEP(l, xv) do { \
	double x_ = (xv) * scale, r_ = mean + x_, x2_ = x_ * x_; \
	double xn_ = x_ < 0.0 ? x_ : 0.0, rn_ = r_ < 0.0 ? r_ : 0.0; \
	m2[l] += x2_; \
	m3[l] += x2_ * x_; \
	m4[l] += x2_ * x2_; \
	bm[l] += xn_ * xn_; \
	bz[l] += rn_ * rn_; \
	lo[l] = r_ < lo[l] ? r_ : lo[l]; \
} while (0)

/* Four lanes as one vector of GCC's vector extension (as the sampler's
 * compound()): the operations are elementwise, in the same order as
 * MOMENT_STEP, so either clone and the scalar tail give the same bits. */
typedef double measures_v4 __attribute__((vector_size(4 * sizeof(double))));
typedef long long measures_m4 __attribute__((vector_size(4 * sizeof(long long))));

__attribute__((target_clones("avx2", "default")))
static void moment_sums(const double *d, size_t stride, size_t t, double scale, double mean, struct sums *o)
{
	const measures_v4 vs = { scale, scale, scale, scale }, vm = { mean, mean, mean, mean }, zero = { 0, 0, 0, 0 };
	measures_v4 vm2 = zero, vm3 = zero, vm4 = zero, vbm = zero, vbz = zero, x, r, x2, xn, rn;
	measures_v4 vlo = { INFINITY, INFINITY, INFINITY, INFINITY };
	measures_m4 lt;
	double m2[4], m3[4], m4[4], bm[4], bz[4], lo[4];
	size_t k = 0;

	if (stride == 1)
		for (; k + 4 <= t; k += 4) {
			memcpy(&x, d + k, sizeof x);
			x = x * vs;
			r = vm + x;
			x2 = x * x;
			lt = x < zero;
			xn = (measures_v4)(lt & (measures_m4)x);
			lt = r < zero;
			rn = (measures_v4)(lt & (measures_m4)r);
			vm2 += x2;
			vm3 += x2 * x;
			vm4 += x2 * x2;
			vbm += xn * xn;
			vbz += rn * rn;
			lt = r < vlo;
			vlo = (measures_v4)((lt & (measures_m4)r) | (~lt & (measures_m4)vlo));
		}
	memcpy(m2, &vm2, sizeof m2);
	memcpy(m3, &vm3, sizeof m3);
	memcpy(m4, &vm4, sizeof m4);
	memcpy(bm, &vbm, sizeof bm);
	memcpy(bz, &vbz, sizeof bz);
	memcpy(lo, &vlo, sizeof lo);
	for (; k + 4 <= t; k += 4) {
		MOMENT_STEP(0, d[k * stride]);
		MOMENT_STEP(1, d[(k + 1) * stride]);
		MOMENT_STEP(2, d[(k + 2) * stride]);
		MOMENT_STEP(3, d[(k + 3) * stride]);
	}
	for (; k < t; k++)
		MOMENT_STEP(k & 3, d[k * stride]);
	o->m2 = (m2[0] + m2[1]) + (m2[2] + m2[3]);
	o->m3 = (m3[0] + m3[1]) + (m3[2] + m3[3]);
	o->m4 = (m4[0] + m4[1]) + (m4[2] + m4[3]);
	o->below_mean = (bm[0] + bm[1]) + (bm[2] + bm[3]);
	o->below_zero = (bz[0] + bz[1]) + (bz[2] + bz[3]);
	o->worst = lo[0] < lo[1] ? lo[0] : lo[1];
	o->worst = lo[2] < o->worst ? lo[2] : o->worst;
	o->worst = lo[3] < o->worst ? lo[3] : o->worst;
	o->least = 1.0 + o->worst;
}

/*
 * The path: wealth W_t and its running peak, rescaled together by a power
 * of two every GROWTH_BLOCK periods (exact, so W/peak keeps its bits),
 * which keeps both in range however long the history; the log of the
 * final W plus the exponents is the compounded growth.  The deepest fall
 * is found as the smallest W/peak, tested by a multiplication
 * (W < peak (1 - dd)) so that the division is taken only when the
 * drawdown deepens, which after the first periods is rare.  With the
 * streamed tail, the smallest returns are kept in the same pass.
 */
static double path(const double *d, size_t stride, size_t t, double scale, double mean, double *dd_out,
		   double *buf, size_t cap, double *scratch)
{
	double w = 1, peak = 1, keep = 1, r, g;
	size_t k, len = 0;
	long expo = 0;
	int e;

	for (k = 0; k < t; k++) {
		r = mean + d[k * stride] * scale;
		g = 1.0 + r;
		w *= g;
		peak = w > peak ? w : peak;
		if (w < peak * keep)
			keep = w / peak; /* the smallest W/peak so far */
		if (k % GROWTH_BLOCK == GROWTH_BLOCK - 1) {
			peak = frexp(peak, &e);
			w = ldexp(w, -e);
			expo += e;
		}
		if (cap)
			keep_smallest(buf, &len, cap, r);
		else if (scratch)
			scratch[k] = r;
	}
	*dd_out = 1.0 - keep;
	return w > 0 ? log(w) + (double)expo * MEASURES_LN2 : -INFINITY;
}

void hc_measures_centred(const double *d, size_t stride, size_t t, double scale, double mean, unsigned mask,
			 double log_growth_bar, double *out, double *scratch)
{
	struct sums s;
	double buf[TAIL_STREAM_MAX], dd, lg, m2;
	size_t c95 = (t * TAIL95_NUM + TAIL_DEN - 1) / TAIL_DEN;
	int want_tail = (mask & (BIT(HC_MEASURE_VAR95) | BIT(HC_MEASURE_ES95) | BIT(HC_MEASURE_VAR99) |
				 BIT(HC_MEASURE_ES99))) != 0;
	int stream = want_tail && c95 <= TAIL_STREAM_MAX;

	moment_sums(d, stride, t, scale, mean, &s);
	lg = path(d, stride, t, scale, mean, &dd, buf, stream ? c95 : 0, want_tail && !stream ? scratch : NULL);
	m2 = s.m2 / (double)t;
	out[HC_MEASURE_SEMIDEV_MEAN] = sqrt(s.below_mean / (double)t);
	out[HC_MEASURE_SEMIDEV_ZERO] = sqrt(s.below_zero / (double)t);
	/* A factor of zero or less: the wealth is gone (a fall of 100%). */
	out[HC_MEASURE_MAX_DRAWDOWN] = s.least > 0 ? dd : 1.0;
	out[HC_MEASURE_SKEWNESS] = m2 > 0 ? (s.m3 / (double)t) / (m2 * sqrt(m2)) : NAN;
	out[HC_MEASURE_EXCESS_KURTOSIS] = m2 > 0 ? (s.m4 / (double)t) / (m2 * m2) - 3.0 : NAN;
	out[HC_MEASURE_WORST_PERIOD] = s.worst;
	if (!(s.least > 0))
		lg = -INFINITY;
	out[HC_MEASURE_LAG_UNIVERSE] = isnan(log_growth_bar) ? NAN : (lg < log_growth_bar ? 1.0 : 0.0);
	if (stream) {
		tail_sorted(buf, t, TAIL95_NUM, &out[HC_MEASURE_VAR95], &out[HC_MEASURE_ES95]);
		tail_sorted(buf, t, TAIL99_NUM, &out[HC_MEASURE_VAR99], &out[HC_MEASURE_ES99]);
	} else if (want_tail) {
		/* 95% first over the whole series; the 99% tail lies inside the
		 * 95% one, so its selection runs over those ceil(T p95) alone. */
		tail(scratch, t, t, TAIL95_NUM, &out[HC_MEASURE_VAR95], &out[HC_MEASURE_ES95]);
		tail(scratch, c95, t, TAIL99_NUM, &out[HC_MEASURE_VAR99], &out[HC_MEASURE_ES99]);
	}
}

double hc_measures_log_growth(const double *d, size_t stride, size_t t, double scale, double mean)
{
	struct sums s;
	double dd, lg;

	/* The same pass as a portfolio's, so that a portfolio equal to the
	 * benchmark gets the same bits. */
	moment_sums(d, stride, t, scale, mean, &s);
	lg = path(d, stride, t, scale, mean, &dd, NULL, 0, NULL);
	return s.least > 0 ? lg : -INFINITY;
}

/* The series' mean, and its deviations from it into scratch: the one
 * centring of plain returns, so that hc_measures_series and
 * hc_measures_series_log_growth see a series with the same bits. */
static double centre(const double *r, size_t stride, size_t t, double *scratch)
{
	long double s = 0;
	double mean;
	size_t k;

	for (k = 0; k < t; k++)
		s += r[k * stride];
	mean = (double)(s / t);
	for (k = 0; k < t; k++)
		scratch[k] = r[k * stride] - mean;
	return mean;
}

void hc_measures_series(const double *r, size_t stride, size_t t, unsigned mask, double log_growth_bar,
			double *out, double *scratch)
{
	/* Deviations formed in scratch, which the pass then overwrites with
	 * the returns in the same order (element k read before written). */
	double mean = centre(r, stride, t, scratch);

	hc_measures_centred(scratch, 1, t, 1.0, mean, mask, log_growth_bar, out, scratch);
}

double hc_measures_series_log_growth(const double *r, size_t stride, size_t t, double *scratch)
{
	double mean = centre(r, stride, t, scratch);

	return hc_measures_log_growth(scratch, 1, t, 1.0, mean);
}

/* ---- across portfolios ---- */

void hc_measures_curve_free(struct hc_measures_curve *c)
{
	if (!c)
		return;
	hc_free(c->sizes);
	hc_free(c->pts);
	hc_free(c);
}

/* Mean, Monte Carlo standard error (two-pass sd, divisor K-1, over
 * sqrt(K), as hc_sampler_summarise) and the three quantiles by selection
 * of the K values in x (reordered). */
static void point(struct hc_measure_point *pt, double *x, size_t K)
{
	long double s = 0, ss = 0, dv;
	size_t k;

	for (k = 0; k < K; k++)
		s += x[k];
	pt->mean = (double)(s / K);
	for (k = 0; k < K; k++) {
		dv = x[k] - (long double)pt->mean;
		ss += dv * dv;
	}
	pt->se = K > 1 ? sqrt((double)(ss / (K - 1)) / (double)K) : NAN;
	pt->p05 = hc_measures_quantile(x, K, 0.05);
	pt->p50 = hc_measures_quantile(x, K, 0.50);
	pt->p95 = hc_measures_quantile(x, K, 0.95);
}

int hc_measures_summarise(struct hc_measures_curve **out, const double *v, size_t paths, const size_t *sizes,
			  size_t nsizes, unsigned mask, const double *universe, double ppy, struct hc_error *err)
{
	struct hc_measures_curve *c;
	double *x, scale;
	size_t j, k, m, cells;

	*out = NULL;
	if (paths == 0)
		return hc_error(err, HC_EUSAGE, "no sampled portfolios to summarise");
	if (hc_mul_size(nsizes, HC_MEASURE_COUNT, &cells))
		return hc_error(err, HC_ENOMEM, "%zu counts are too many to summarise", nsizes);
	c = hc_calloc(1, sizeof *c);
	x = hc_mallocarray(paths, sizeof *x);
	if (c) {
		c->sizes = hc_mallocarray(nsizes ? nsizes : 1, sizeof *c->sizes);
		c->pts = hc_calloc(cells ? cells : 1, sizeof *c->pts);
	}
	if (!c || !x || !c->sizes || !c->pts) {
		hc_measures_curve_free(c);
		hc_free(x);
		return hc_error(err, HC_ENOMEM, "out of memory summarising the measures of %zu portfolios", paths);
	}
	c->mask = mask;
	c->npoints = nsizes;
	c->periods_per_year = ppy;
	memcpy(c->sizes, sizes, nsizes * sizeof *sizes);
	for (m = 0; m < HC_MEASURE_COUNT; m++) {
		scale = hc_measure_annualised((int)m) ? sqrt(ppy) : 1.0;
		c->universe[m] = universe ? universe[m] * scale : NAN;
		if (!(mask & BIT(m)))
			continue;
		for (j = 0; j < nsizes; j++) {
			for (k = 0; k < paths; k++)
				x[k] = v[(k * nsizes + j) * HC_MEASURE_COUNT + m] * scale;
			point(&c->pts[j * HC_MEASURE_COUNT + m], x, paths);
		}
	}
	hc_free(x);
	*out = c;
	return HC_OK;
}

int hc_measures_report(const struct hc_measures_curve *c, struct report *r, struct report_table *t)
{
	static const char *const part[5] = { "mean", "se", "p05", "p50", "p95" };
	static const char *const part_title[5] = { "mean", "se", "5%", "50%", "95%" };
	char key[64], title[96];
	size_t j, p, col;
	int m;

	if (t->nrows != c->npoints)
		return HC_EUSAGE;
	for (m = 0; m < HC_MEASURE_COUNT; m++) {
		if (!(c->mask & BIT(m)))
			continue;
		col = t->ncols;
		for (p = 0; p < 5; p++) {
			snprintf(key, sizeof key, "%s_%s", info[m].key, part[p]);
			snprintf(title, sizeof title, "%s %s", info[m].key, part_title[p]);
			if (hc_report_table_add_column(t, key, title, info[m].style))
				return HC_ENOMEM;
		}
		for (j = 0; j < c->npoints; j++) {
			const struct hc_measure_point *pt = &c->pts[j * HC_MEASURE_COUNT + m];

			hc_report_table_set_real(t, j, col, pt->mean);
			hc_report_table_set_real(t, j, col + 1, pt->se);
			hc_report_table_set_real(t, j, col + 2, pt->p05);
			hc_report_table_set_real(t, j, col + 3, pt->p50);
			hc_report_table_set_real(t, j, col + 4, pt->p95);
		}
	}
	for (m = 0; m < HC_MEASURE_COUNT; m++) {
		if (!(c->mask & BIT(m)) || m == HC_MEASURE_LAG_UNIVERSE)
			continue;
		snprintf(key, sizeof key, "universe_%s", info[m].key);
		snprintf(title, sizeof title, "equal-weight universe %s", info[m].title);
		if (hc_report_add_real(r, key, title, c->universe[m], info[m].style))
			return HC_ENOMEM;
	}
	if (hc_report_add_note(r, "measures: per period (value-at-risk, expected shortfall and the worst period as "
			       "returns of one period; value-at-risk and expected shortfall as positive losses, "
			       "from the historical lower quantile and tail mean), except the semi-deviations, "
			       "annualised like the sd (times the square root of the periods per year); maximum "
			       "drawdown over the whole sample; lag_universe is the share of portfolios whose "
			       "compounded return over the sample is below the equal-weight universe's. "
			       "Definitions and sources: docs/measures.md"))
		return HC_ENOMEM;
	if (c->ragged && hc_report_add_note(r, "measures, history with gaps read period by period: a random "
					    "portfolio's return each period is the equal-weight mean of the "
					    "securities it holds alive then (a delisted holding is replaced by the "
					    "next alive in its random order); the equal-weight universe, its value "
					    "at N = M and the benchmark of lag_universe, is every security alive "
					    "each period, equally weighted"))
		return HC_ENOMEM;
	return HC_OK;
}
