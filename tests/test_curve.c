/*
 * Unit tests for curve.c.  Outside references: exact enumeration of every
 * subset of small universes (the mean and spread of the portfolio variance,
 * and of the tracking error), the published tables of Elton & Gruber (1977)
 * and Statman (1987) (from memory, design.md section 11), and hand-written
 * expectations for the size-list grammar.
 */
#define _POSIX_C_SOURCE 200809L /* open_memstream */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>

#include "fixture.h"
#include "heapcheck.h"
#include "holdcount/curve.h"
#include "holdcount/memory.h"
#include "holdcount/report.h"
#include "holdcount/sampler.h"

static void assert_close(double got, double want, double scale, double rel)
{
	if (!(fabs(got - want) <= rel * fmax(fabs(want), scale)))
		fail_msg("got %.17g, want %.17g (rel %.3g)", got, want, rel);
}

struct enumeration {
	long double mean_var[16], var_var[16], mean_te2[16];
};

/* Every subset of the m securities (m <= 15), by bit mask: the portfolio
 * variance X/N^2 and the squared tracking error against the universe's
 * equal-weight portfolio, (w_S - 1/M)' A (w_S - 1/M), averaged per N;
 * the spread is the population variance over the C(M, N) subsets. */
static void enumerate(const double *a, size_t m, struct enumeration *e)
{
	long double sum[16] = {0}, sum2[16] = {0}, te[16] = {0}, count[16] = {0};
	unsigned long mask, top = 1UL << m;
	size_t i, j, n;
	double w[16];

	for (mask = 1; mask < top; mask++) {
		long double x = 0, q = 0, v;
		n = (size_t)__builtin_popcountl(mask);
		for (i = 0; i < m; i++)
			w[i] = ((mask >> i) & 1 ? 1.0 / n : 0.0) - 1.0 / m;
		for (i = 0; i < m; i++)
			for (j = 0; j < m; j++) {
				if (((mask >> i) & 1) && ((mask >> j) & 1))
					x += a[i * m + j];
				q += (long double)w[i] * a[i * m + j] * w[j];
			}
		v = x / ((long double)n * n);
		sum[n] += v;
		te[n] += q;
		count[n] += 1;
		(void)sum2;
	}
	for (n = 1; n <= m; n++) {
		e->mean_var[n] = sum[n] / count[n];
		e->mean_te2[n] = te[n] / count[n];
	}
	/* Second pass for the spread: two-pass variance over the subsets. */
	for (mask = 1; mask < top; mask++) {
		long double x = 0, d;
		n = (size_t)__builtin_popcountl(mask);
		for (i = 0; i < m; i++)
			for (j = 0; j < m; j++)
				if (((mask >> i) & 1) && ((mask >> j) & 1))
					x += a[i * m + j];
		d = x / ((long double)n * n) - e->mean_var[n];
		sum2[n] += d * d;
	}
	for (n = 1; n <= m; n++)
		e->var_var[n] = sum2[n] / count[n];
}

/* (a) Exact mean and sd of the portfolio variance, and E[TE^2], against
 * enumeration of all 2^M - 1 subsets, every N, 1e-12 relative.  The
 * enumeration is the outside reference; both shapes (Gram route, T < M,
 * and matrix route, T >= M) are covered. */
static void check_enumeration(size_t m, size_t t, unsigned long seed, int route)
{
	struct universe *u = fixture_random_universe(m, t, seed);
	double a[256], sd;
	struct enumeration e;
	struct moments mo;
	struct hc_error err;
	size_t n;

	assert_non_null(u);
	fixture_covariance(u, a);
	enumerate(a, m, &e);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(mo.route, route);
	for (n = 1; n <= m; n++) {
		assert_close(hc_curve_expected_variance(&mo, (double)n), (double)e.mean_var[n], 0, 1e-12);
		assert_int_equal(hc_curve_variance_sd(&mo, n, &sd, &err), HC_OK);
		if (n == m)
			assert_true(sd == 0.0); /* one subset: no spread at all */
		else
			assert_close(sd, sqrt((double)e.var_var[n]), 0, 1e-12);
		assert_close(hc_curve_expected_te2(&mo, (double)n), (double)e.mean_te2[n],
			     (double)e.mean_te2[1], 1e-12);
	}
	/* At N = M the expectation is the equal-weight universe variance. */
	assert_close(hc_curve_expected_variance(&mo, (double)m), mo.universe_variance, 0, 1e-12);
	fixture_free(u);
}

static void test_curve_exact_matches_enumeration(void **state)
{
	check_enumeration(11, 7, 2385, MOMENTS_ROUTE_GRAM);
	check_enumeration(10, 23, 4711, MOMENTS_ROUTE_MATRIX);
	check_enumeration(12, 5, 314159, MOMENTS_ROUTE_GRAM);
}

/* Tiny universes (M = 2, 3) exercise the p_3 = p_4 = 0 cases. */
static void test_curve_tiny_universes(void **state)
{
	double sd;
	struct enumeration e;
	struct moments mo;
	struct hc_error err;
	size_t m, n;
	const double a3[9] = {0.0412, 0.0071, -0.0033, 0.0071, 0.0237, 0.0058, -0.0033, 0.0058, 0.0659};
	double a[9];

	for (m = 2; m <= 3; m++) {
		size_t i, j;
		for (i = 0; i < m; i++)
			for (j = 0; j < m; j++)
				a[i * m + j] = a3[i * 3 + j];
		enumerate(a, m, &e);
		assert_int_equal(hc_moments_from_source(&mo, fixture_matrix(a, m), &err), HC_OK);
		for (n = 1; n <= m; n++) {
			assert_int_equal(hc_curve_variance_sd(&mo, n, &sd, &err), HC_OK);
			assert_close(sd, sqrt((double)e.var_var[n]), 1e-18, 1e-12);
			assert_close(hc_curve_expected_variance(&mo, (double)n), (double)e.mean_var[n], 0, 1e-12);
		}
	}
}

/* (d) Elton & Gruber (1977), "Risk Reduction and Portfolio Size: An
 * Analytical Solution", Journal of Business 50(4): their table follows
 * 46.619/N + 7.058(1 - 1/N); rows N = 1, 10 and the limit read 46.619,
 * 11.014 and 7.058 (values from memory; the table is rounded, so 0.002).
 * Statman (1987), "How Many Stocks Make a Diversified Portfolio?", JFQA
 * 22(3): 49.236% at N = 1, 23.932% at 10 and 19.158% in the limit, the same
 * averages annualised with 52 weeks (from memory; within 0.002). */
static void test_curve_published_tables(void **state)
{
	const size_t sizes[] = {1, 10, 1000000};
	struct moments mo;
	struct curve *c;
	struct hc_error err;

	assert_int_equal(hc_moments_from_summary(&mo, 46.619, 7.058, 0, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, 3, 1.0, &err), HC_OK);
	assert_true(fabs(c->points[0].expected_variance - 46.619) < 0.002);
	assert_true(fabs(c->points[1].expected_variance - 11.014) < 0.002);
	assert_true(fabs(c->floor_variance - 7.058) < 0.002);
	assert_true(fabs(c->points[2].expected_variance - 7.058) < 0.002);
	assert_true(isnan(c->points[0].variance_sd)); /* summary: no spread */
	assert_false(c->points[0].sampled);
	hc_curve_free(c);

	assert_int_equal(hc_curve_exact(&c, &mo, sizes, 3, 52.0, &err), HC_OK);
	assert_true(fabs(c->points[0].expected_sd - 49.236) < 0.002);
	assert_true(fabs(c->points[1].expected_sd - 23.932) < 0.002);
	assert_true(fabs(sqrt(c->floor_variance) - 19.158) < 0.002);
	assert_true(c->m == 0 && c->periods_per_year == 52.0);
	hc_curve_free(c);
}

/* Scaling: variance by P, sd by sqrt(P); the diversifiable share and the
 * tracking error follow their definitions in design.md section 2. */
static void test_curve_exact_columns_and_scaling(void **state)
{
	const size_t sizes[] = {1, 4, 9, 25};
	struct moments mo;
	struct curve *c;
	struct hc_error err;
	double vbar = 0.00873, cbar = 0.00219, ev, sd;
	size_t i;

	assert_int_equal(hc_moments_from_summary(&mo, vbar, cbar, 25, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, 4, 12.0, &err), HC_OK);
	assert_int_equal(c->npoints, 4);
	for (i = 0; i < 4; i++) {
		double n = (double)sizes[i];
		ev = vbar / n + (1 - 1 / n) * cbar;
		assert_int_equal(c->points[i].n, sizes[i]);
		assert_close(c->points[i].expected_variance, 12 * ev, 0, 1e-15);
		assert_close(c->points[i].expected_sd, sqrt(12 * ev), 0, 1e-15);
		assert_close(c->points[i].diversifiable_share, (vbar - cbar) / n / ev, 0, 1e-14);
		assert_close(c->points[i].expected_tracking_error,
			     sqrt(12 * (vbar - cbar) * (1 / n - 1 / 25.0)), 1e-300, 1e-14);
	}
	assert_true(c->points[3].expected_tracking_error == 0.0);
	assert_close(c->universe_variance, 12 * (vbar / 25 + cbar * 24 / 25), 0, 1e-14);
	hc_curve_free(c);
	assert_int_equal(hc_curve_variance_sd(&mo, 3, &sd, &err), HC_EUSAGE);
}

/* Equivalent count inverts the expected-variance curve (to 1e-9); at or
 * below the floor there is no such count. */
static void test_curve_equivalent_count(void **state)
{
	struct moments mo;
	struct hc_error err;
	const double ns[] = {1.0, 2.385, 17.0, 250.5};
	double n_eq;
	size_t i;

	assert_int_equal(hc_moments_from_summary(&mo, 0.0612, 0.0094, 0, &err), HC_OK);
	for (i = 0; i < 4; i++) {
		assert_int_equal(hc_curve_equivalent_count(&mo, hc_curve_expected_variance(&mo, ns[i]), &n_eq), 0);
		assert_close(n_eq, ns[i], 0, 1e-9);
	}
	assert_int_equal(hc_curve_equivalent_count(&mo, 0.0094, &n_eq), -1);
	assert_int_equal(hc_curve_equivalent_count(&mo, 0.0031, &n_eq), -1);
}

static void test_curve_exact_rejects_bad_sizes(void **state)
{
	const size_t big[] = {3, 26}, zero[] = {0};
	struct moments mo;
	struct curve *c = (struct curve *)&mo;
	struct hc_error err;
	double sd;

	assert_int_equal(hc_moments_from_summary(&mo, 0.0412, 0.0101, 25, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, big, 2, 12.0, &err), HC_EUSAGE);
	assert_null(c);
	assert_string_equal(err.message, "size 26 is larger than the 25 securities kept");
	assert_int_equal(hc_curve_exact(&c, &mo, zero, 1, 12.0, &err), HC_EUSAGE);
	assert_int_equal(hc_curve_exact(&c, &mo, big, 1, 0.0, &err), HC_EUSAGE);
	assert_int_equal(hc_curve_exact(&c, &mo, big, 1, NAN, &err), HC_EUSAGE);
	{
		const double a[4] = {0.0412, 0.0071, 0.0071, 0.0237};
		assert_int_equal(hc_moments_from_source(&mo, fixture_matrix(a, 2), &err), HC_OK);
		assert_int_equal(hc_curve_variance_sd(&mo, 3, &sd, &err), HC_EUSAGE);
		assert_int_equal(hc_curve_variance_sd(&mo, 0, &sd, &err), HC_EUSAGE);
	}
	hc_curve_free(NULL);
}

static void expect_sizes(const char *text, size_t max, const size_t *want, size_t nwant)
{
	size_t *got, n, i;
	struct hc_error err;

	assert_int_equal(hc_curve_parse_sizes(text, max, &got, &n, &err), HC_OK);
	assert_int_equal(n, nwant);
	for (i = 0; i < n; i++)
		assert_int_equal(got[i], want[i]);
	hc_free(got);
}

static void expect_bad_sizes(const char *text, size_t max, int code, const char *message)
{
	size_t *got = (size_t *)&max, n = 99;
	struct hc_error err;

	assert_int_equal(hc_curve_parse_sizes(text, max, &got, &n, &err), code);
	assert_null(got);
	assert_int_equal(n, 0);
	assert_string_equal(err.message, message);
}

static void test_curve_parse_sizes(void **state)
{
	const size_t a[] = {1, 2, 5, 6, 7, 8, 50, 100};
	const size_t b[] = {3, 4, 5, 9};
	const size_t c[] = {412};

	expect_sizes("1,2,5-8,50,100", 412, a, 8);
	expect_sizes("100,5-8,2,50,1,6,6", 0, a, 8);      /* any order, duplicates once */
	expect_sizes(" 9 , 3-5,4", 10, b, 4);
	expect_sizes("412", 412, c, 1);
	expect_bad_sizes("1,x,3", 412, HC_EUSAGE, "bad size list: 'x' is not a count");
	expect_bad_sizes("1,900", 412, HC_EUSAGE, "size 900 is larger than the 412 securities kept");
	expect_bad_sizes("5-900", 412, HC_EUSAGE, "size 900 is larger than the 412 securities kept");
	expect_bad_sizes("0", 412, HC_EUSAGE, "bad size list: '0' is not a count");
	expect_bad_sizes("1,,2", 412, HC_EUSAGE, "bad size list: '' is not a count");
	expect_bad_sizes("", 412, HC_EUSAGE, "bad size list: '' is not a count");
	expect_bad_sizes("-3", 412, HC_EUSAGE, "bad size list: '-3' is not a count or a range of counts");
	expect_bad_sizes("2.5", 412, HC_EUSAGE, "bad size list: '2.5' is not a count");
	expect_bad_sizes("30-5", 412, HC_EUSAGE, "bad size list: range '30-5' runs backwards");
	expect_bad_sizes("99999999999999999999999", 0, HC_EUSAGE,
			 "bad size list: '99999999999999999999999' is not a count");
	/* A bound on the list, not on the sizes (an unbounded universe). */
	expect_bad_sizes("1-3000000000", 0, HC_EUSAGE, "bad size list: '1-3000000000' names more than 1000000 sizes");
	expect_bad_sizes("1-999999,5-6", 0, HC_EUSAGE, "bad size list: '5-6' names more than 1000000 sizes");
	expect_bad_sizes("1-18446744073709551615", 0, HC_EUSAGE,
			 "bad size list: '1-18446744073709551615' is not a count or a range of counts");
	{
		const size_t one_big[] = {3000000000UL};
		expect_sizes("3000000000", 0, one_big, 1);
	}
	hc_alloc_fail_after(0);
	expect_bad_sizes("1-5", 0, HC_ENOMEM, "out of memory for the size list");
	hc_alloc_fail_after(-1);
}

static void test_curve_default_sizes(void **state)
{
	const size_t g1000[] = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 12, 15, 20, 25, 30, 40, 50, 60, 75,
				100, 120, 150, 200, 250, 300, 400, 500, 600, 750, 1000};
	const size_t g412[] = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 12, 15, 20, 25, 30, 40, 50, 60, 75,
			       100, 120, 150, 200, 250, 300, 400, 412};
	size_t *s, n, i;
	struct hc_error err;

	assert_int_equal(hc_curve_default_sizes(1000, &s, &n, &err), HC_OK);
	assert_int_equal(n, sizeof g1000 / sizeof g1000[0]);
	for (i = 0; i < n; i++)
		assert_int_equal(s[i], g1000[i]);
	hc_free(s);
	assert_int_equal(hc_curve_default_sizes(0, &s, &n, &err), HC_OK); /* unbounded: to 1000 */
	assert_int_equal(n, sizeof g1000 / sizeof g1000[0]);
	assert_int_equal(s[n - 1], 1000);
	hc_free(s);
	assert_int_equal(hc_curve_default_sizes(412, &s, &n, &err), HC_OK);
	assert_int_equal(n, sizeof g412 / sizeof g412[0]);
	for (i = 0; i < n; i++)
		assert_int_equal(s[i], g412[i]);
	hc_free(s);
	assert_int_equal(hc_curve_default_sizes(7, &s, &n, &err), HC_OK);
	assert_int_equal(n, 7);
	assert_int_equal(s[6], 7);
	hc_free(s);
	assert_int_equal(hc_curve_default_sizes(11, &s, &n, &err), HC_OK);
	assert_int_equal(n, 11);
	assert_int_equal(s[10], 11);
	hc_free(s);
	hc_alloc_fail_after(0);
	assert_int_equal(hc_curve_default_sizes(11, &s, &n, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	assert_null(s);
}

/* (f) Allocation failures in hc_curve_exact leave nothing behind: HC_ENOMEM,
 * no curve, the heap as it was (heapcheck.h). */
struct made {
	struct moments mo;
	struct curve *c;
};

static int made_curve(void *ctx, struct hc_error *err)
{
	static const size_t sizes[] = {1, 2, 3};
	struct made *w = ctx;

	return hc_curve_exact(&w->c, &w->mo, sizes, 3, 12.0, err);
}

static void made_release(void *ctx)
{
	hc_curve_free(((struct made *)ctx)->c);
}

static void made_none(void *ctx)
{
	assert_null(((struct made *)ctx)->c);
}

static void test_curve_allocation_failure(void **state)
{
	struct made w;
	struct heapcheck_call call = { made_curve, made_release, made_none, &w };
	struct hc_error err;

	assert_int_equal(hc_moments_from_summary(&w.mo, 0.0412, 0.0101, 25, &err), HC_OK);
	assert_int_equal(heapcheck_sweep(&call), 2);
}

/* hc_curve_report: the column contract of issue 2, in order, every cell the
 * curve's own figure, sampled cells empty when not sampled; rendered by the
 * CSV writer, the header row is exactly the contract. */
static const char *const contract =
	"n,expected_variance,expected_sd,variance_sd,expected_tracking_error,"
	"diversifiable_share,sampled_mean_variance,sampled_variance_se,"
	"sampled_mean_sd,sd_p05,sd_p50,sd_p95,z_score";

static void test_curve_report_columns(void **state)
{
	const size_t sizes[] = {1, 3, 10};
	struct universe *u = fixture_random_universe(10, 14, 2718);
	struct sampler_options opt;
	struct sampler_result *res;
	struct moments mo;
	struct curve *c;
	struct report *r;
	struct report_table *t;
	struct hc_error err;
	char *buf = NULL, line[512];
	size_t len = 0, i, j, at = 0;
	FILE *fp;

	assert_non_null(u);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, 3, 12.0, &err), HC_OK);
	r = hc_report_alloc();
	assert_non_null(r);
	t = hc_report_add_table(r, "curve", "risk by holding count");
	assert_non_null(t);
	assert_int_equal(hc_curve_report(c, t), HC_OK);
	assert_int_equal(t->ncols, 13);
	assert_int_equal(t->nrows, 3);
	for (j = 0; j < t->ncols; j++) {
		size_t k = strlen(t->cols[j].key);
		assert_memory_equal(contract + at, t->cols[j].key, k);
		at += k + 1;
	}
	assert_int_equal(at, strlen(contract) + 1);
	for (i = 0; i < 3; i++) {
		const struct report_value *row = t->cells + i * t->ncols;
		assert_int_equal(row[0].kind, REPORT_INT);
		assert_int_equal(row[0].integer, (long long)sizes[i]);
		assert_true(row[1].real == c->points[i].expected_variance);
		assert_true(row[2].real == c->points[i].expected_sd);
		assert_true(row[3].real == c->points[i].variance_sd);
		assert_true(row[4].real == c->points[i].expected_tracking_error);
		assert_true(row[5].real == c->points[i].diversifiable_share);
		for (j = 6; j < 13; j++)
			assert_int_equal(row[j].kind, REPORT_NONE);
	}
	assert_int_equal(t->cells[2 * 13 + 4].kind, REPORT_REAL); /* TE is 0 at n = M */
	assert_int_equal(hc_curve_report(c, t), HC_EUSAGE);             /* columns already there */
	hc_report_free(r);

	/* Sampled: every cell filled except z at n = M (standard error 0). */
	hc_sampler_options_init(&opt);
	opt.paths = 64;
	opt.seed = 8;
	opt.threads = 1;
	assert_int_equal(hc_sampler_run(&res, fixture_series(u), sizes, 3, &opt, &err), HC_OK);
	assert_int_equal(hc_sampler_summarise(c, res, &err), HC_OK);
	r = hc_report_alloc();
	assert_non_null(r);
	t = hc_report_add_table(r, "curve", NULL);
	assert_non_null(t);
	assert_int_equal(hc_curve_report(c, t), HC_OK);
	assert_true(t->cells[0 * 13 + 6].real == c->points[0].sampled_mean_variance);
	assert_true(t->cells[1 * 13 + 7].real == c->points[1].sampled_variance_se);
	assert_true(t->cells[1 * 13 + 8].real == c->points[1].sampled_mean_sd);
	assert_true(t->cells[1 * 13 + 9].real == c->points[1].sd_p05);
	assert_true(t->cells[1 * 13 + 10].real == c->points[1].sd_p50);
	assert_true(t->cells[1 * 13 + 11].real == c->points[1].sd_p95);
	assert_true(t->cells[1 * 13 + 12].real == c->points[1].z_score);
	assert_int_equal(t->cells[2 * 13 + 12].kind, REPORT_NONE);
	fp = open_memstream(&buf, &len);
	assert_non_null(fp);
	assert_int_equal(hc_report_writer_csv->write(fp, r, &err), HC_OK);
	fclose(fp);
	assert_non_null(buf);
	assert_int_equal(sscanf(buf, "%511[^\n]", line), 1);
	assert_string_equal(line, contract);
	free(buf);
	hc_report_free(r);
	hc_sampler_result_free(res);

	/* Allocation failure while growing the table. */
	{
		long k;
		int rc;
		for (k = 0;; k++) {
			r = hc_report_alloc();
			assert_non_null(r);
			t = hc_report_add_table(r, "curve", NULL);
			assert_non_null(t);
			hc_alloc_fail_after(k);
			rc = hc_curve_report(c, t);
			hc_alloc_fail_after(-1);
			hc_report_free(r);
			if (rc == HC_OK)
				break;
			assert_int_equal(rc, HC_ENOMEM);
		}
		assert_true(k >= 2);
	}
	hc_curve_free(c);
	fixture_free(u);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_curve_exact_matches_enumeration),
		cmocka_unit_test(test_curve_tiny_universes),
		cmocka_unit_test(test_curve_published_tables),
		cmocka_unit_test(test_curve_exact_columns_and_scaling),
		cmocka_unit_test(test_curve_equivalent_count),
		cmocka_unit_test(test_curve_exact_rejects_bad_sizes),
		cmocka_unit_test(test_curve_parse_sizes),
		cmocka_unit_test(test_curve_default_sizes),
		cmocka_unit_test(test_curve_allocation_failure),
		cmocka_unit_test(test_curve_report_columns),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
