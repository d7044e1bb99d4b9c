/*
 * Unit tests for moments.c.  References: a textbook two-pass covariance in
 * long double (tests/support/fixture.c), sums worked by hand for a 3 x 3
 * matrix, and the routes checked against each other.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>

#include "fixture.h"
#include "holdcount/covmatrix.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"

/* Relative closeness with a floor scale, so that sums near 0 compare
 * against the size of the figures they are made of. */
static void assert_close(double got, double want, double scale, double rel)
{
	if (!(fabs(got - want) <= rel * fmax(fabs(want), scale)))
		fail_msg("got %.17g, want %.17g (rel %.3g)", got, want, rel);
}

/* Reference sums straight from a full matrix, by their definitions. */
static void reference_sums(const double *a, size_t m, double *out /* V C S Q W Z */)
{
	long double V = 0, C = 0, S = 0, Q = 0, W = 0, Z = 0, r;
	size_t i, j;

	for (i = 0; i < m; i++) {
		r = 0;
		for (j = 0; j < m; j++)
			if (j != i) {
				r += a[i * m + j];
				Q += (long double)a[i * m + j] * a[i * m + j];
			}
		V += a[i * m + i];
		S += (long double)a[i * m + i] * a[i * m + i];
		W += a[i * m + i] * r;
		Z += r * r;
		C += r;
	}
	out[0] = V, out[1] = C, out[2] = S, out[3] = Q, out[4] = W, out[5] = Z;
}

static double reference_correlation(const double *a, size_t m)
{
	long double s = 0;
	size_t i, j;

	for (i = 0; i < m; i++)
		for (j = 0; j < m; j++)
			if (i != j)
				s += a[i * m + j] / sqrt(a[i * m + i] * a[j * m + j]);
	return (double)(s / (m * (m - 1.0)));
}

static void check_against_reference(const struct moments *mo, const double *a, size_t m, double rel)
{
	double ref[6];

	reference_sums(a, m, ref);
	assert_close(mo->sum_var, ref[0], ref[0], rel);
	assert_close(mo->sum_cov, ref[1], ref[0], rel);
	assert_close(mo->sum_var2, ref[2], ref[2], rel);
	assert_close(mo->sum_cov2, ref[3], ref[2], rel);
	assert_close(mo->sum_var_rowcov, ref[4], ref[2], rel);
	assert_close(mo->sum_rowcov2, ref[5], ref[2], rel);
	assert_close(mo->average_variance, ref[0] / m, ref[0] / m, rel);
	assert_close(mo->average_covariance, ref[1] / (m * (m - 1.0)), ref[0] / m, rel);
	assert_close(mo->average_correlation, reference_correlation(a, m), 1.0, rel);
	assert_close(mo->universe_variance, (ref[0] + ref[1]) / ((double)m * m), ref[0] / m, rel);
}

/* (b) The route hc_moments_from_universe picks for an m x t fixture, against
 * the two-pass reference covariance; both double-precision routes agree
 * with it to 1e-10 (the sums' rounding is about 1e-15 relative; 1e-10
 * leaves room for the Q = ||A||^2 - S step). */
static void check_route_against_reference(size_t m, size_t t, unsigned long seed, int route)
{
	struct universe *u = fixture_random_universe(m, t, seed);
	double *a = hc_malloc(m * m * sizeof *a);
	struct moments mo;
	struct hc_error err;

	assert_non_null(u);
	assert_non_null(a);
	fixture_covariance(u, a);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(mo.route, route);
	assert_int_equal(mo.m, m);
	assert_int_equal(mo.t, t);
	assert_true(mo.has_spread && mo.has_correlation);
	check_against_reference(&mo, a, m, 1e-10);
	hc_free(a);
	fixture_free(u);
}

/* T < M: the Gram route. */
static void test_moments_gram_route_matches_reference(void **state)
{
	check_route_against_reference(37, 13, 2385, MOMENTS_ROUTE_GRAM);
}

/* T >= M: the matrix route. */
static void test_moments_matrix_route_matches_reference(void **state)
{
	check_route_against_reference(23, 61, 7741, MOMENTS_ROUTE_MATRIX);
}

/* T >= M with M = 2 blocks + 37 rows: the matrix route's row blocks
 * (MOMENTS_BLOCK_ROWS) meet at two boundaries and end in a short block;
 * the sums still match the reference covariance held whole. */
static void test_moments_matrix_route_several_blocks(void **state)
{
	size_t m = 2 * MOMENTS_BLOCK_ROWS + 37;

	check_route_against_reference(m, m + 11, 3141, MOMENTS_ROUTE_MATRIX);
}

/* (b) Gram and matrix routes on the same data, both shapes, agree to
 * 1e-10 (each sum is exact up to rounding, about 1e-15 relative; the
 * margin covers Q = ||A||_F^2 - S). */
static void check_routes_agree(size_t m, size_t t, unsigned long seed)
{
	struct universe *u = fixture_random_universe(m, t, seed);
	struct moments mg, mm;
	struct hc_error err;

	assert_non_null(u);
	assert_int_equal(hc_moments_from_universe_route(&mg, u, MOMENTS_ROUTE_GRAM, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe_route(&mm, u, MOMENTS_ROUTE_MATRIX, &err), HC_OK);
	assert_int_equal(mg.route, MOMENTS_ROUTE_GRAM);
	assert_int_equal(mm.route, MOMENTS_ROUTE_MATRIX);
	assert_close(mg.sum_var, mm.sum_var, mm.sum_var, 1e-10);
	assert_close(mg.sum_cov, mm.sum_cov, mm.sum_var, 1e-10);
	assert_close(mg.sum_var2, mm.sum_var2, mm.sum_var2, 1e-10);
	assert_close(mg.sum_cov2, mm.sum_cov2, mm.sum_var2, 1e-10);
	assert_close(mg.sum_var_rowcov, mm.sum_var_rowcov, mm.sum_var2, 1e-10);
	assert_close(mg.sum_rowcov2, mm.sum_rowcov2, mm.sum_var2, 1e-10);
	assert_close(mg.average_correlation, mm.average_correlation, 1.0, 1e-10);
	assert_close(mg.universe_variance, mm.universe_variance, mm.average_variance, 1e-10);
	assert_int_equal(hc_moments_from_universe_route(&mm, u, 17, &err), HC_EUSAGE);
	u->has_missing = 1;
	assert_int_equal(hc_moments_from_universe_route(&mm, u, MOMENTS_ROUTE_GRAM, &err), HC_EUSAGE);
	fixture_free(u);
}

static void test_moments_gram_and_matrix_routes_agree(void **state)
{
	check_routes_agree(30, 29, 99);
	check_routes_agree(17, 44, 1001);
}

/* (c) A 3 x 3 matrix whose sums were worked by hand:
 * V = 0.1925, r = (0.004, 0.018, 0.010), C = 0.032, S = 0.01360625,
 * Q = 2(0.006^2 + 0.002^2 + 0.012^2) = 0.000368, W = 0.002405,
 * Z = 0.00044, correlations 0.1, -0.04, 0.16 (mean 0.22/3). */
static void test_moments_from_matrix_hand_worked(void **state)
{
	const double a[9] = {0.04, 0.006, -0.002, 0.006, 0.09, 0.012, -0.002, 0.012, 0.0625};
	struct moments mo;
	struct hc_error err;

	assert_int_equal(hc_moments_from_source(&mo, fixture_matrix(a, 3), &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_GIVEN);
	assert_close(mo.sum_var, 0.1925, 1, 1e-15);
	assert_close(mo.sum_cov, 0.032, 1, 1e-15);
	assert_close(mo.sum_var2, 0.01360625, 1, 1e-15);
	assert_close(mo.sum_cov2, 0.000368, 1, 1e-15);
	assert_close(mo.sum_var_rowcov, 0.002405, 1, 1e-15);
	assert_close(mo.sum_rowcov2, 0.00044, 1, 1e-15);
	assert_close(mo.average_variance, 0.1925 / 3, 1, 1e-15);
	assert_close(mo.average_covariance, 0.032 / 6, 1, 1e-15);
	assert_close(mo.average_correlation, 0.22 / 3, 1, 1e-15);
	assert_close(mo.universe_variance, (0.1925 + 0.032) / 9, 1, 1e-15);
}

/* Pairwise route: on complete data it must give the ordinary covariance;
 * with a gap, pairs with the gappy security use the 8 shared periods. */
static void test_moments_pairwise_route(void **state)
{
	size_t m = 4, t = 9, i, j;
	double x[36], y[32], a[16], a9[16], a8[16], corr = 0;
	struct universe *u, *u8;
	struct moments mo, ref;
	struct hc_error err;

	fixture_returns(x, m, t, 4242);
	u = fixture_universe(x, m, t);
	assert_non_null(u);
	u->has_missing = 1; /* forces the pairwise route on complete data */
	fixture_covariance(u, a9);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_PAIRWISE);
	check_against_reference(&mo, a9, m, 1e-12);
	fixture_free(u);

	/* The same series with security 2's period 3 missing. */
	for (i = 0; i < m; i++)
		for (j = 0, t = 0; j < 9; j++)
			if (j != 3)
				y[i * 8 + t++] = x[i * 9 + j];
	t = 9;
	u8 = fixture_universe(y, m, 8);
	assert_non_null(u8);
	fixture_covariance(u8, a8);
	x[2 * 9 + 3] = NAN;
	u = fixture_universe(x, m, t);
	assert_non_null(u);
	assert_true(u->has_missing);
	for (i = 0; i < m; i++)
		for (j = 0; j < m; j++) {
			a[i * m + j] = (i == 2 || j == 2) ? a8[i * m + j] : a9[i * m + j];
			if (i != j)
				corr += (i == 2 || j == 2)
					? a8[i * m + j] / sqrt(a8[i * m + i] * a8[j * m + j])
					: a9[i * m + j] / sqrt(a9[i * m + i] * a9[j * m + j]);
		}
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_moments_from_source(&ref, fixture_matrix(a, m), &err), HC_OK);
	assert_close(mo.sum_var, ref.sum_var, ref.sum_var, 1e-12);
	assert_close(mo.sum_cov, ref.sum_cov, ref.sum_var, 1e-12);
	assert_close(mo.sum_cov2, ref.sum_cov2, ref.sum_var2, 1e-12);
	assert_close(mo.sum_rowcov2, ref.sum_rowcov2, ref.sum_var2, 1e-12);
	assert_close(mo.average_correlation, corr / 12.0, 1.0, 1e-12);
	fixture_free(u);
	fixture_free(u8);
}

static void test_moments_from_summary(void **state)
{
	struct moments mo;
	struct hc_error err;

	/* Elton & Gruber (1977) averages (from memory, design.md section 11). */
	assert_int_equal(hc_moments_from_summary(&mo, 46.619, 7.058, 0, &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_SUMMARY);
	assert_int_equal(mo.m, 0);
	assert_false(mo.has_spread);
	assert_false(mo.has_correlation);
	assert_close(mo.universe_variance, 7.058, 1, 1e-15);
	assert_close(mo.average_correlation, 7.058 / 46.619, 1, 1e-15);
	assert_int_equal(hc_moments_from_summary(&mo, 0.0385, 0.0071, 412, &err), HC_OK);
	assert_close(mo.sum_var, 0.0385 * 412, 1, 1e-15);
	assert_close(mo.sum_cov, 0.0071 * 412 * 411, 1, 1e-14);
	assert_close(mo.universe_variance, 0.0385 / 412 + 0.0071 * 411 / 412, 1, 1e-14);
}

static void test_moments_summary_rejects_impossible(void **state)
{
	struct moments mo;
	struct hc_error err;

	assert_int_equal(hc_moments_from_summary(&mo, -0.02, 0.01, 0, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "not a positive number"));
	assert_int_equal(hc_moments_from_summary(&mo, 0.02, 0.03, 0, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "at most the average variance"));
	assert_int_equal(hc_moments_from_summary(&mo, 0.02, NAN, 10, &err), HC_EUSAGE);
	assert_int_equal(hc_moments_from_summary(&mo, 0.02, 0.01, 1, &err), HC_EUSAGE);
	/* cbar >= -vbar/(M-1) for a positive semi-definite equicorrelated matrix. */
	assert_int_equal(hc_moments_from_summary(&mo, 0.02, -0.011, 3, &err), HC_EUSAGE);
	assert_int_equal(hc_moments_from_summary(&mo, 0.02, -0.009, 3, &err), HC_OK);
	assert_int_equal(hc_moments_from_summary(&mo, 0.02, -0.001, 0, &err), HC_EUSAGE);
}

static void test_moments_rejects_bad_data(void **state)
{
	double x[3 * 5];
	const double bad[4] = {0.04, 0.01, 0.01, 0.0};
	const double inf[4] = {0.04, INFINITY, INFINITY, 0.05};
	struct universe *u;
	struct moments mo;
	struct hc_error err;
	size_t k;

	fixture_returns(x, 3, 5, 11);
	for (k = 0; k < 5; k++)
		x[1 * 5 + k] = 0.0137; /* S02 constant */
	u = fixture_universe(x, 3, 5);
	assert_non_null(u);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_EDATA);
	assert_string_equal(err.message, "security 'S02' has zero variance");
	u->has_missing = 1;
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_EDATA);
	assert_string_equal(err.message, "security 'S02' has zero variance");
	u->has_missing = 0;
	u->m = 1;
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "expected at least 2"));
	u->m = 3;
	fixture_free(u);
	assert_int_equal(hc_moments_from_source(&mo, fixture_matrix(bad, 2), &err), HC_EDATA);
	assert_non_null(strstr(err.message, "the variance in row 2 is 0"));
	assert_int_equal(hc_moments_from_source(&mo, fixture_matrix(inf, 2), &err), HC_EDATA);
	assert_non_null(strstr(err.message, "not a finite number"));
	assert_int_equal(hc_moments_from_source(&mo, fixture_matrix(bad, 1), &err), HC_EDATA);

	/* Pairwise: a security with a single observation. */
	fixture_returns(x, 3, 5, 12);
	for (k = 1; k < 5; k++)
		x[2 * 5 + k] = NAN;
	u = fixture_universe(x, 3, 5);
	assert_non_null(u);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_EDATA);
	assert_string_equal(err.message, "fixture: security 'S03' has only 1 period; expected at least 3 for a covariance");
	fixture_free(u);
}

/* (f) Every allocation failure on each route ends in HC_ENOMEM. */
static void check_alloc_failures(struct universe *u)
{
	struct moments mo;
	struct hc_error err;
	long k;
	int rc;

	for (k = 0;; k++) {
		hc_alloc_fail_after(k);
		rc = hc_moments_from_universe(&mo, u, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
		assert_non_null(strstr(err.message, "out of memory"));
	}
	assert_true(k >= 1);
}

static void test_moments_allocation_failure(void **state)
{
	struct universe *g = fixture_random_universe(12, 5, 5), *m = fixture_random_universe(5, 12, 6);

	assert_non_null(g);
	assert_non_null(m);
	check_alloc_failures(g);
	check_alloc_failures(m);
	m->has_missing = 1;
	check_alloc_failures(m);
	fixture_free(g);
	fixture_free(m);
}

/* The pairwise matrix pair by pair in long double: each pair over the
 * periods both have, its own means there, divisor n - 1. */
static double pair_cov(const double *x, size_t t, size_t i, size_t j)
{
	long double si = 0, sj = 0, c = 0;
	size_t k, n = 0;

	for (k = 0; k < t; k++)
		if (!isnan(x[i * t + k]) && !isnan(x[j * t + k])) {
			si += x[i * t + k];
			sj += x[j * t + k];
			n++;
		}
	si /= n;
	sj /= n;
	for (k = 0; k < t; k++)
		if (!isnan(x[i * t + k]) && !isnan(x[j * t + k]))
			c += (x[i * t + k] - si) * (x[j * t + k] - sj);
	return (double)(c / (n - 1));
}

/* Both ways to the sums over each pair's overlap give the pair-by-pair
 * matrix: dense products (a quarter of the cells missing, above the
 * 1-in-8 share) and the sums from the gaps (1 cell in 40 missing). */
static void test_moments_pairwise_dense_and_sparse(void **state)
{
	size_t m = 9, t = 40, i, j, k, pass;
	double x[360], *a;
	struct universe *u;
	struct hc_error err;

	(void)state;
	for (pass = 0; pass < 2; pass++) {
		size_t every = pass == 0 ? 4 : 40, gaps = 0;

		fixture_returns(x, m, t, 2718 + pass);
		for (i = 0; i < m; i++)
			for (k = 0; k < t; k++)
				if ((i * 7 + k * 3) % every == 0) {
					x[i * t + k] = NAN;
					gaps++;
				}
		assert_true(pass == 0 ? gaps > m * t / 8 : gaps <= m * t / 8);
		u = fixture_universe(x, m, t);
		assert_non_null(u);
		assert_int_equal(hc_moments_covariance(u, &a, &err), HC_OK);
		for (i = 0; i < m; i++)
			for (j = 0; j < m; j++)
				assert_close(a[i * m + j], pair_cov(x, t, i, j), a[0], 1e-12);
		hc_free(a);
		fixture_free(u);
	}
}

/* The correlation of a pair over the periods both have, pair by pair in
 * long double (its own means and variances there). */
static double pair_corr(const double *x, size_t t, size_t i, size_t j)
{
	double c = pair_cov(x, t, i, j);
	long double si = 0, sj = 0, vi = 0, vj = 0;
	size_t k, n = 0;

	for (k = 0; k < t; k++)
		if (!isnan(x[i * t + k]) && !isnan(x[j * t + k])) {
			si += x[i * t + k];
			sj += x[j * t + k];
			n++;
		}
	si /= n;
	sj /= n;
	for (k = 0; k < t; k++)
		if (!isnan(x[i * t + k]) && !isnan(x[j * t + k])) {
			vi += (x[i * t + k] - si) * (x[i * t + k] - si);
			vj += (x[j * t + k] - sj) * (x[j * t + k] - sj);
		}
	return (double)(c * (n - 1) / sqrtl(vi * vj));
}

/* A ragged history, M x 40 (at M = 300, two 256-wide tiles of pairs, the
 * second one partial): scattered gaps, periods every security but one misses, a
 * late listing and an early delisting (long runs of gaps). */
static void ragged_returns(double *x, size_t m, size_t t)
{
	size_t i, k;

	fixture_returns(x, m, t, 31415);
	for (i = 0; i < m; i++)
		for (k = 0; k < t; k++)
			if ((i * 11 + k * 7) % 37 == 0 || (k == 9 && i != 4) || (k == 23 && i % 3 == 0) ||
			    (i == 5 && k < 17) || (i == 66 && k >= 29) || (i == 33 && (k == 2 || k == 3)))
				x[i * t + k] = NAN;
}

/*
 * The counts of common periods from the gaps (n_ij = T - d_i - d_j + the
 * periods both miss) against the dense way's K K' and against a direct
 * count, pair by pair: exactly equal.  The matrix and the average
 * correlation from the gaps against the dense way's and against the
 * pair-by-pair covariance and correlation in long double: 1e-12 relative
 * (the two ways add the same terms in other orders; a few ulps each).
 */
static void test_moments_pairwise_gap_counts(void **state)
{
	enum { M = 300, T = 40 };
	static double x[M * T];
	double *ag, *ad, *ng, *nd, cg, cd;
	long double rs = 0;
	size_t i, j, k, n;
	struct universe *u;
	struct hc_error err;

	(void)state;
	ragged_returns(x, M, T);
	u = fixture_universe(x, M, T);
	assert_non_null(u);
	assert_true(u->has_missing);
	assert_int_equal(hc_moments_pairwise_by(u, MOMENTS_PAIRWISE_GAPS, &ag, &ng, &cg, &err), HC_OK);
	assert_int_equal(hc_moments_pairwise_by(u, MOMENTS_PAIRWISE_DENSE, &ad, &nd, &cd, &err), HC_OK);
	for (i = 0; i < M; i++)
		for (j = 0; j < M; j++) {
			for (k = n = 0; k < T; k++)
				n += !isnan(x[i * T + k]) && !isnan(x[j * T + k]);
			if (ng[i * M + j] != (double)n || nd[i * M + j] != (double)n)
				fail_msg("pair %zu, %zu: %g periods from the gaps, %g dense, %zu counted", i, j,
					 ng[i * M + j], nd[i * M + j], n);
			assert_close(ag[i * M + j], ad[i * M + j], ad[0], 1e-12);
			assert_close(ag[i * M + j], pair_cov(x, T, i, j), ad[0], 1e-12);
			if (i != j)
				rs += pair_corr(x, T, i, j);
		}
	/* the late listing and a pair with the common gaps: counts worked by hand */
	assert_true(ng[5 * M + 5] < T - 17 + 1 && ng[4 * M + 4] > ng[3 * M + 3]);
	assert_close(cg, cd, 1.0, 1e-12);
	assert_close(cg, (double)(rs / (M * (M - 1.0))), 1.0, 1e-12);
	assert_true(cg > 0.05 && cg < 0.95);
	hc_free(ag);
	hc_free(ad);
	hc_free(ng);
	hc_free(nd);
	assert_int_equal(hc_moments_pairwise_by(u, 3, &ag, NULL, &cg, &err), HC_EUSAGE);
	assert_null(ag);
	fixture_free(u);
}

/* A pair with too few common periods, and one where a security does not
 * vary over the overlap: the gaps way, which checks pairs in tiles on
 * several threads (100 and 200 in the first tile, 3 and 270 in the
 * second), names the same first pair in row order as the dense way. */
static void test_moments_pairwise_gap_errors(void **state)
{
	enum { M = 300, T = 40 };
	static double x[M * T];
	struct universe *u;
	struct hc_error eg, ed;
	double *a, c;
	size_t k;

	(void)state;
	ragged_returns(x, M, T);
	for (k = 0; k < T; k++) {   /* 3 (observed before 20) shares no period with 270 (after); */
		x[(k < 20 ? 270 : 3) * T + k] = NAN;
		x[(k < 10 ? 200 : 100) * T + k] = NAN;   /* nor 100 (before 10) with 200 (after) */
	}
	u = fixture_universe(x, M, T);
	assert_non_null(u);
	assert_int_equal(hc_moments_pairwise_by(u, MOMENTS_PAIRWISE_GAPS, &a, NULL, &c, &eg), HC_EDATA);
	assert_null(a);
	assert_int_equal(hc_moments_pairwise_by(u, MOMENTS_PAIRWISE_DENSE, &a, NULL, &c, &ed), HC_EDATA);
	assert_string_equal(eg.message, ed.message);
	assert_non_null(strstr(eg.message, "securities 'S04' and 'S271' have only 0 common periods"));
	fixture_free(u);

	ragged_returns(x, M, T);
	for (k = 0; k < T; k++) {   /* 12 is constant where 57 is observed (exactly: dyadic values, mean 0.25) */
		x[12 * T + k] = k < 20 ? 0.125 : 0.375;
		if (k < 20)
			x[57 * T + k] = NAN;
	}
	u = fixture_universe(x, M, T);
	assert_non_null(u);
	assert_int_equal(hc_moments_pairwise_by(u, MOMENTS_PAIRWISE_GAPS, &a, NULL, &c, &eg), HC_EDATA);
	assert_int_equal(hc_moments_pairwise_by(u, MOMENTS_PAIRWISE_DENSE, &a, NULL, &c, &ed), HC_EDATA);
	assert_string_equal(eg.message, ed.message);
	assert_non_null(strstr(eg.message, "'S13' does not vary over their common periods"));
	fixture_free(u);
}

/* Every allocation failure on either way ends in HC_ENOMEM. */
static void test_moments_pairwise_by_allocation_failure(void **state)
{
	enum { M = 70, T = 40 };
	static double x[M * T];
	struct universe *u;
	struct hc_error err;
	double *a, *n, c;
	int way, rc;
	long k;

	(void)state;
	ragged_returns(x, M, T);
	u = fixture_universe(x, M, T);
	assert_non_null(u);
	for (way = MOMENTS_PAIRWISE_DENSE; way <= MOMENTS_PAIRWISE_GAPS; way++) {
		for (k = 0;; k++) {
			hc_alloc_fail_after(k);
			rc = hc_moments_pairwise_by(u, way, &a, &n, &c, &err);
			hc_alloc_fail_after(-1);
			if (rc == HC_OK)
				break;
			assert_int_equal(rc, HC_ENOMEM);
			assert_null(a);
			assert_null(n);
		}
		assert_true(k >= 5);
		hc_free(a);
		hc_free(n);
	}
	fixture_free(u);
}

/* hc_moments_covariance: the full matrix against the textbook two-pass
 * covariance (complete data), and pairwise entries against the covariance
 * of the overlapping periods (a security with a gap). */
static void test_moments_covariance_matrix(void **state)
{
	size_t m = 6, t = 11, i, j, k, n;
	double x[66], y[60], ref[36], ref10[36], *a;
	struct universe *u, *u10;
	struct hc_error err;

	fixture_returns(x, m, t, 1618);
	u = fixture_universe(x, m, t);
	assert_non_null(u);
	fixture_covariance(u, ref);
	assert_int_equal(hc_moments_covariance(u, &a, &err), HC_OK);
	for (i = 0; i < m * m; i++)
		assert_close(a[i], ref[i], ref[0], 1e-12);
	hc_free(a);
	fixture_free(u);

	/* Security 4 misses period 7: its pairs use the other 10 periods. */
	for (i = 0; i < m; i++)
		for (k = 0, n = 0; k < t; k++)
			if (k != 7)
				y[i * 10 + n++] = x[i * t + k];
	u10 = fixture_universe(y, m, 10);
	assert_non_null(u10);
	fixture_covariance(u10, ref10);
	x[4 * t + 7] = NAN;
	u = fixture_universe(x, m, t);
	assert_non_null(u);
	assert_int_equal(hc_moments_covariance(u, &a, &err), HC_OK);
	for (i = 0; i < m; i++)
		for (j = 0; j < m; j++)
			assert_close(a[i * m + j], (i == 4 || j == 4) ? ref10[i * m + j] : ref[i * m + j],
				     ref[0], 1e-12);
	hc_free(a);

	a = (double *)&err;
	hc_alloc_fail_after(0);
	assert_int_equal(hc_moments_covariance(u, &a, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	assert_null(a);
	u->has_missing = 0;
	for (k = 0; k < 2; k++) {
		hc_alloc_fail_after((long)k);
		assert_int_equal(hc_moments_covariance(u10, &a, &err), HC_ENOMEM);
		hc_alloc_fail_after(-1);
		assert_null(a);
	}
	u->m = 1;
	assert_int_equal(hc_moments_covariance(u, &a, &err), HC_EDATA);
	u->m = m;
	fixture_free(u);
	fixture_free(u10);
}

/* Budget (memory.h) of a universe with u->max_bytes set: ok at exactly
 * the bytes held plus those the route allocates, refused one byte below,
 * with the message naming the figures. */
static void expect_budget(struct universe *u, int route, size_t bytes)
{
	struct moments mo;
	struct hc_error err;

	u->max_bytes = bytes - 1;
	assert_int_equal(hc_moments_from_universe_route(&mo, u, route, &err), HC_ENOMEM);
	assert_int_equal(mo.m, 0);
	assert_memory_equal(err.message, "fixture: universe too large for its covariances: needs at least 0.1 MiB, budget 0.0 MiB",
			    sizeof "fixture: universe too large for its covariances: needs at least 0.1 MiB, budget 0.0 MiB");
	u->max_bytes = bytes;
	assert_int_equal(hc_moments_from_universe_route(&mo, u, route, &err), HC_OK);
	u->max_bytes = 0;
}

/* The sizes counted by hand from the allocations (8-byte doubles):
 *   matrix, 23 x 61: held 23*61, centred copy 23*61, one block of
 *     min(23, MOMENTS_BLOCK_ROWS) = 23 rows of 23, v 23 doubles, r 23 long doubles;
 *   Gram, 37 x 13: held 37*13, centred copy 37*13, Gram 13*13, two 13-vectors;
 *   pairwise, 23 x 61: held 23*61, three 23 x 23 arrays and three 23 x 61 copies
 *     in double and one of each in float (the masked Gram products);
 *   hc_moments_covariance, 23 x 61 complete: held, centred copy, 23 x 23. */
static void test_moments_memory_budget(void **state)
{
	struct universe *a = fixture_random_universe(23, 61, 7741);
	struct universe *g = fixture_random_universe(37, 13, 2385);
	struct hc_error err;
	double *cov = (double *)&err;

	assert_non_null(a);
	assert_non_null(g);
	expect_budget(a, MOMENTS_ROUTE_MATRIX, 8 * (23 * 61 * 2 + 23 * 23 + 23) + 23 * sizeof(long double));
	expect_budget(g, MOMENTS_ROUTE_GRAM, 8 * (37 * 13 * 2 + 13 * 13 + 2 * 13));
	a->has_missing = 1;
	expect_budget(a, MOMENTS_ROUTE_PAIRWISE, 8 * (23 * 61 + 3 * 23 * 23 + 3 * 23 * 61) + 4 * (23 * 23 + 23 * 61));
	a->has_missing = 0;
	a->max_bytes = 8 * (23 * 61 * 2 + 23 * 23) - 1;
	assert_int_equal(hc_moments_covariance(a, &cov, &err), HC_ENOMEM);
	assert_null(cov);
	assert_memory_equal(err.message, "fixture: universe too large for its covariance matrix: ", 55);
	a->max_bytes = 8 * (23 * 61 * 2 + 23 * 23);
	assert_int_equal(hc_moments_covariance(a, &cov, &err), HC_OK);
	hc_free(cov);
	fixture_free(a);
	fixture_free(g);
}

/*
 * One minimum of common periods for every pairwise computation: 3, the
 * contract of docs/formats.md ("a pair with fewer than 3 common periods is
 * an error naming the pair").  B and C below share exactly 2 periods: the
 * pairwise route of hc_moments_from_universe and hc_covmatrix_from_universe
 * refuse them with the same message.  One more row gives them 3, and then
 * both accept, with the covariance numpy gives for those three periods.
 */
static void test_moments_pairwise_minimum_periods(void **state)
{
	static const char two[] =
		"date,A,B,C\n"
		"2021-01-31,0.0213,NA,0.0342\n"
		"2021-02-28,-0.0385,NA,0.0051\n"
		"2021-03-31,0.0172,0.0093,NA\n"
		"2021-04-30,0.0051,-0.0204,NA\n"
		"2021-05-31,0.0094,0.0077,-0.0319\n"
		"2021-06-30,-0.0217,0.0148,0.0089\n";
	static const char three_row[] = "2021-07-31,-0.0106,-0.0126,0.0207\n";
	static const char want[] =
		"u.csv: securities 'B' and 'C' have only 2 common periods; expected at least 3 for a pairwise covariance";
	char text[sizeof two + sizeof three_row];
	struct universe_options o;
	struct universe *u;
	struct covmatrix *c;
	struct moments mo;
	struct hc_error err;
	double *a;

	hc_universe_options_init(&o);
	o.missing = UNIVERSE_MISSING_KEEP;
	assert_int_equal(hc_universe_load_buffer(&u, "u.csv", two, strlen(two), &o, &err), HC_OK);
	assert_int_equal(u->has_missing, 1);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_EDATA);
	assert_string_equal(err.message, want);
	assert_int_equal(hc_moments_covariance(u, &a, &err), HC_EDATA);
	assert_string_equal(err.message, want);
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_EDATA);
	assert_string_equal(err.message, want);
	hc_universe_free(u);

	snprintf(text, sizeof text, "%s%s", two, three_row);
	assert_int_equal(hc_universe_load_buffer(&u, "u.csv", text, strlen(text), &o, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_PAIRWISE);
	assert_int_equal(hc_moments_covariance(u, &a, &err), HC_OK);
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_OK);
	/* numpy.cov([0.0077, 0.0148, -0.0126], [-0.0319, 0.0089, 0.0207])[0, 1]
	 * = -0.00018357 (numpy 1.24); the two routines round differently. */
	assert_close(a[1 * 3 + 2], -0.00018357, 1e-4, 1e-12);
	assert_close(c->a[1 * 3 + 2], -0.00018357, 1e-4, 1e-12);
	hc_free(a);
	hc_covmatrix_free(c);
	hc_universe_free(u);
}

/* Summary statistics: an sd of 23.85% and correlation 0.3 give v-bar =
 * 0.23850^2 = 0.0568822 5 and c-bar = 0.3 v-bar = 0.0170646 75 (by hand);
 * given variances pass through unchanged. */
static void test_moments_summary_averages(void **state)
{
	double v, c;

	(void)state;
	hc_moments_summary_averages(NAN, NAN, 0.2385, 0.3, &v, &c);
	assert_true(fabs(v - 0.05688225) < 1e-15 && fabs(c - 0.017064675) < 1e-15);
	hc_moments_summary_averages(0.0412, NAN, 0.9, -0.1, &v, &c);
	assert_true(v == 0.0412 && fabs(c + 0.00412) < 1e-15);
	hc_moments_summary_averages(0.0412, 0.0097, 0.9, -0.1, &v, &c);
	assert_true(v == 0.0412 && c == 0.0097);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_moments_gram_route_matches_reference),
		cmocka_unit_test(test_moments_summary_averages),
		cmocka_unit_test(test_moments_matrix_route_matches_reference),
		cmocka_unit_test(test_moments_matrix_route_several_blocks),
		cmocka_unit_test(test_moments_gram_and_matrix_routes_agree),
		cmocka_unit_test(test_moments_from_matrix_hand_worked),
		cmocka_unit_test(test_moments_pairwise_route),
		cmocka_unit_test(test_moments_pairwise_dense_and_sparse),
		cmocka_unit_test(test_moments_pairwise_gap_counts),
		cmocka_unit_test(test_moments_pairwise_gap_errors),
		cmocka_unit_test(test_moments_pairwise_by_allocation_failure),
		cmocka_unit_test(test_moments_from_summary),
		cmocka_unit_test(test_moments_summary_rejects_impossible),
		cmocka_unit_test(test_moments_rejects_bad_data),
		cmocka_unit_test(test_moments_allocation_failure),
		cmocka_unit_test(test_moments_covariance_matrix),
		cmocka_unit_test(test_moments_pairwise_minimum_periods),
		cmocka_unit_test(test_moments_memory_budget),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
