/*
 * curve.c - exact risk by holding count (design.md section 3).
 *
 * A random equal-weight portfolio of N holdings is a uniform N-subset of the
 * M securities; its variance is X/N^2 with X the sum of the covariance
 * entries inside the subset.  The mean of X needs only V and C (the
 * expected-variance line of Elton & Gruber, 1977, Journal of Business 50(4),
 * here for a finite universe drawn without replacement); its variance needs
 * the second-order sums S, Q, W, Z through the inclusion probabilities
 * p_k = (N)_k/(M)_k of k distinct securities.
 */
#include "holdcount/curve.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/memory.h"

double hc_curve_expected_variance(const struct moments *mo, double n)
{
	return mo->average_variance / n + (1.0 - 1.0 / n) * mo->average_covariance;
}

double hc_curve_expected_te2(const struct moments *mo, double n)
{
	double spread = mo->average_variance - mo->average_covariance;
	double inv_m = mo->m ? 1.0 / (double)mo->m : 0.0;

	return spread * (1.0 / n - inv_m);
}

double hc_curve_diversifiable_share(const struct moments *mo, double n)
{
	return (mo->average_variance - mo->average_covariance) / n /
	       hc_curve_expected_variance(mo, n);
}

int hc_curve_equivalent_count(const struct moments *mo, double s2, double *n_eq)
{
	if (!(s2 > mo->average_covariance))
		return -1;
	*n_eq = (mo->average_variance - mo->average_covariance) /
		(s2 - mo->average_covariance);
	return 0;
}

/* Inclusion probability p_k = (n)_k/(m)_k of k given securities. */
static long double inclusion(size_t n, size_t m, size_t k)
{
	long double p = 1;
	size_t i;

	if (n < k)
		return 0;
	for (i = 0; i < k; i++)
		p *= (long double)(n - i) / (long double)(m - i);
	return p;
}

/* Var[X] straight from design.md section 3's E[X^2] - E[X]^2, for tiny
 * universes (M < 4) where the factored form below divides 0 by 0. */
static long double subset_sum_variance_direct(const struct moments *mo, size_t n)
{
	long double V = mo->sum_var, C = mo->sum_cov, S = mo->sum_var2;
	long double Q = mo->sum_cov2, W = mo->sum_var_rowcov, Z = mo->sum_rowcov2;
	long double p1 = inclusion(n, mo->m, 1), p2 = inclusion(n, mo->m, 2);
	long double p3 = inclusion(n, mo->m, 3), p4 = inclusion(n, mo->m, 4);
	long double ex = p1 * V + p2 * C, ex2;

	ex2 = p1 * S + p2 * (V * V - S) + 2 * (p2 * 2 * W + p3 * (V * C - 2 * W)) +
	      p2 * 2 * Q + p3 * (4 * Z - 4 * Q) + p4 * (C * C - 4 * Z + 2 * Q);
	return ex2 - ex * ex;
}

/*
 * Var[X] for an N-subset.  Expanding E[X^2] - E[X]^2 of design.md section 3
 * and grouping by sum gives coefficients that each carry the factor (M - N),
 * derived by hand from the p_k; for example p1 - p2 = N(M-N)/(M(M-1)) and
 * p2 - 2p3 + p4 = p2 (M-N)(M-N-1)/((M-2)(M-3)).  Written this way the
 * variance is exactly 0 at N = M and keeps its relative accuracy near it,
 * where subtracting two nearly equal E[X^2] and E[X]^2 would not.
 */
static long double subset_sum_variance(const struct moments *mo, size_t n_)
{
	long double N = (long double)n_, M = (long double)mo->m, f = M - N;
	long double V = mo->sum_var, C = mo->sum_cov, S = mo->sum_var2;
	long double Q = mo->sum_cov2, W = mo->sum_var_rowcov, Z = mo->sum_rowcov2;
	long double mm1 = M * (M - 1), n2 = N * (N - 1), d3, d4, x;

	if (n_ == mo->m)
		return 0; /* a single subset */
	if (mo->m < 4)
		return subset_sum_variance_direct(mo, n_);
	d3 = mm1 * (M - 2);
	d4 = d3 * (M - 3);
	x = N * f / mm1 * S;
	x -= N * f / (M * mm1) * V * V;
	x += 4 * n2 * f / d3 * W;
	x -= 4 * n2 * f / (M * d3) * V * C;
	x += 2 * n2 * f * (f - 1) / d4 * Q;
	x += 4 * n2 * (N - 2) * f / d4 * Z;
	x += n2 * f * (6 * (M + N) - 6 - 4 * N * M) / (mm1 * d4) * C * C;
	return x;
}

int hc_curve_variance_sd(const struct moments *mo, size_t n, double *sd,
		      struct hc_error *err)
{
	long double var, n4;

	if (!mo->has_spread || mo->m < 2)
		return hc_error(err, HC_EUSAGE,
				"the spread of the variance needs the full covariance sums, which summary statistics lack");
	if (n < 1 || n > mo->m)
		return hc_error(err, HC_EUSAGE,
				"size %zu is outside 1..%zu securities", n, mo->m);
	n4 = (long double)n * n * n * n;
	var = subset_sum_variance(mo, n) / n4;
	/* A variance of variances; rounding can leave a tiny negative. */
	*sd = var > 0 ? (double)sqrtl(var) : 0.0;
	return HC_OK;
}

int hc_curve_set_spread(struct curve *c, const struct moments *mo, struct hc_error *err)
{
	size_t i;
	double sd;
	int rc;

	if (!mo->has_spread || mo->m != c->m)
		return hc_error(err, HC_EUSAGE, "the spread needs the covariance sums of the curve's %zu securities",
				c->m);
	for (i = 0; i < c->npoints; i++)
		if ((rc = hc_curve_variance_sd(mo, c->points[i].n, &sd, err)) != HC_OK)
			return rc;
	for (i = 0; i < c->npoints; i++) {
		hc_curve_variance_sd(mo, c->points[i].n, &sd, err);
		c->points[i].variance_sd = sd * c->periods_per_year;
	}
	return HC_OK;
}

void hc_curve_free(struct curve *c)
{
	if (!c)
		return;
	hc_free(c->points);
	hc_free(c);
}

static void exact_point(struct curve_point *p, const struct moments *mo, size_t n,
			double ppy, double sd)
{
	double ev = hc_curve_expected_variance(mo, (double)n);
	double te2 = hc_curve_expected_te2(mo, (double)n);

	p->n = n;
	p->expected_variance = ev * ppy;
	p->expected_sd = sqrt(ev * ppy);
	p->variance_sd = sd * ppy;
	p->expected_tracking_error = te2 > 0 ? sqrt(te2 * ppy) : 0.0;
	p->diversifiable_share = hc_curve_diversifiable_share(mo, (double)n);
	p->sampled = 0;
	p->sampled_mean_variance = p->sampled_variance_se = NAN;
	p->sampled_mean_sd = p->sd_p05 = p->sd_p50 = p->sd_p95 = NAN;
	p->z_score = NAN;
}

int hc_curve_exact(struct curve **out, const struct moments *mo,
		const size_t *sizes, size_t nsizes, double periods_per_year,
		struct hc_error *err)
{
	struct curve *c;
	size_t i;
	double sd;
	int rc;

	*out = NULL;
	if (!isfinite(periods_per_year) || periods_per_year <= 0)
		return hc_error(err, HC_EUSAGE,
				"periods per year %g is not a positive number", periods_per_year);
	for (i = 0; i < nsizes; i++) {
		if (sizes[i] < 1)
			return hc_error(err, HC_EUSAGE, "size 0 is not a holding count");
		if (mo->m && sizes[i] > mo->m)
			return hc_error(err, HC_EUSAGE,
					"size %zu is larger than the %zu securities kept", sizes[i], mo->m);
	}
	c = hc_calloc(1, sizeof *c);
	if (!c || !(c->points = hc_calloc(nsizes ? nsizes : 1, sizeof *c->points))) {
		hc_curve_free(c);
		return hc_error(err, HC_ENOMEM, "out of memory for a curve of %zu points", nsizes);
	}
	c->npoints = nsizes;
	c->periods_per_year = periods_per_year;
	c->m = mo->m;
	c->floor_variance = mo->average_covariance * periods_per_year;
	c->universe_variance = mo->universe_variance * periods_per_year;
	for (i = 0; i < nsizes; i++) {
		sd = NAN;
		if (mo->has_spread) {
			rc = hc_curve_variance_sd(mo, sizes[i], &sd, err);
			if (rc) {
				hc_curve_free(c);
				return rc;
			}
		}
		exact_point(&c->points[i], mo, sizes[i], periods_per_year, sd);
	}
	*out = c;
	return HC_OK;
}

/* ---- size lists ---- */

struct sizes_buf {
	size_t *v;
	size_t n, cap;
};

static int push(struct sizes_buf *b, size_t x)
{
	size_t *nv = hc_grow(b->v, &b->cap, b->n, sizeof *nv, 32);

	if (!nv)
		return -1;
	b->v = nv;
	b->v[b->n++] = x;
	return 0;
}

static int cmp_size(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	return (x > y) - (x < y);
}

/* A count: one or more decimal digits, >= 1, no sign, no overflow. */
static int parse_count(const char *s, size_t len, size_t *out)
{
	size_t i, x = 0;

	if (len == 0)
		return -1;
	for (i = 0; i < len; i++) {
		if (!isdigit((unsigned char)s[i]))
			return -1;
		if (x > (SIZE_MAX - 9) / 10)
			return -1;
		x = 10 * x + (size_t)(s[i] - '0');
	}
	if (x < 1)
		return -1;
	*out = x;
	return 0;
}

static int parse_item(const char *s, size_t len, size_t max, struct sizes_buf *b,
		      struct hc_error *err)
{
	const char *dash;
	size_t lo, hi, x;

	while (len && isspace((unsigned char)*s))
		s++, len--;
	while (len && isspace((unsigned char)s[len - 1]))
		len--;
	dash = memchr(s, '-', len);
	if (dash) {
		if (parse_count(s, (size_t)(dash - s), &lo) ||
		    parse_count(dash + 1, len - (size_t)(dash - s) - 1, &hi))
			return hc_error(err, HC_EUSAGE, "bad size list: '%.*s' is not a count or a range of counts",
					(int)len, s);
		if (hi < lo)
			return hc_error(err, HC_EUSAGE, "bad size list: range '%.*s' runs backwards",
					(int)len, s);
	} else {
		if (parse_count(s, len, &lo))
			return hc_error(err, HC_EUSAGE, "bad size list: '%.*s' is not a count", (int)len, s);
		hi = lo;
	}
	if (max && hi > max)
		return hc_error(err, HC_EUSAGE, "size %zu is larger than the %zu securities kept", hi, max);
	if (hi - lo >= CURVE_MAX_SIZES - b->n)
		return hc_error(err, HC_EUSAGE, "bad size list: '%.*s' names more than %d sizes",
				(int)len, s, CURVE_MAX_SIZES);
	for (x = lo; x <= hi; x++)
		if (push(b, x))
			return hc_error(err, HC_ENOMEM, "out of memory for the size list");
	return HC_OK;
}

int hc_curve_parse_sizes(const char *text, size_t max, size_t **sizes,
		      size_t *nsizes, struct hc_error *err)
{
	struct sizes_buf b = {0};
	const char *p = text, *comma;
	size_t i, k;
	int rc;

	*sizes = NULL;
	*nsizes = 0;
	for (;;) {
		comma = strchr(p, ',');
		rc = parse_item(p, comma ? (size_t)(comma - p) : strlen(p), max, &b, err);
		if (rc) {
			hc_free(b.v);
			return rc;
		}
		if (!comma)
			break;
		p = comma + 1;
	}
	qsort(b.v, b.n, sizeof *b.v, cmp_size);
	for (i = k = 0; i < b.n; i++)
		if (k == 0 || b.v[i] != b.v[k - 1])
			b.v[k++] = b.v[i];
	*sizes = b.v;
	*nsizes = k;
	return HC_OK;
}

int hc_curve_default_sizes(size_t m, size_t **sizes, size_t *nsizes,
			struct hc_error *err)
{
	/* 1..10, then steps of roughly 1.2-1.5x a decade: common practice for a
	 * curve read on a log axis. */
	static const size_t mant[] = {10, 12, 15, 20, 25, 30, 40, 50, 60, 75};
	struct sizes_buf b = {0};
	size_t top = m ? m : 1000, x, scale, i;

	*sizes = NULL;
	*nsizes = 0;
	for (x = 1; x <= 10 && x <= top; x++)
		if (push(&b, x))
			goto nomem;
	for (scale = 1; 10 * scale < top; scale *= 10)
		for (i = scale == 1 ? 1 : 0; i < sizeof mant / sizeof mant[0]; i++) {
			x = mant[i] * scale;
			if (x < top && push(&b, x))
				goto nomem;
		}
	if (top > 10 && push(&b, top))
		goto nomem;
	*sizes = b.v;
	*nsizes = b.n;
	return HC_OK;
nomem:
	hc_free(b.v);
	return hc_error(err, HC_ENOMEM, "out of memory for the size list");
}
