/*
 * Unit tests for sampler.c.  Outside references: the exact expected
 * variance (itself checked against subset enumeration in test_curve.c) for
 * the sampled means; the set of all 1- and 2-subsets' variances, computed
 * here from a textbook covariance; numpy's documented default ("linear")
 * quantile rule, written out below; the published splitmix64 outputs
 * (Rosetta Code, "Pseudo-random numbers/Splitmix64", seed 1234567).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>

#include "fixture.h"
#include "holdcount/paths.h"
#include "holdcount/memory.h"
#include "holdcount/sampler.h"

static void assert_close(double got, double want, double scale, double rel)
{
	if (!(fabs(got - want) <= rel * fmax(fabs(want), scale)))
		fail_msg("got %.17g, want %.17g (rel %.3g)", got, want, rel);
}

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;

	return (x > y) - (x < y);
}

/* numpy.percentile's default method ("linear", numpy docs): position
 * h = (K-1) q, then x[floor h] + (h - floor h)(x[floor h + 1] - x[floor h]). */
static double numpy_linear_quantile(const double *sorted, size_t k, double q)
{
	double h = (double)(k - 1) * q, lo = floor(h);
	size_t i = (size_t)lo;

	if (i + 1 >= k)
		return sorted[k - 1];
	return sorted[i] + (h - lo) * (sorted[i + 1] - sorted[i]);
}

static void options(struct sampler_options *opt, size_t paths, uint64_t seed, int threads)
{
	hc_sampler_options_init(opt);
	opt->paths = paths;
	opt->seed = seed;
	opt->threads = threads;
}

static void test_sampler_splitmix64_reference(void **state)
{
	/* Rosetta Code, "Pseudo-random numbers/Splitmix64": seed 1234567. */
	const uint64_t want[5] = {6457827717110365317ULL, 3203168211198807973ULL,
				  9817491932198370423ULL, 4593380528125082431ULL,
				  16408922859458223821ULL};
	uint64_t st = 1234567;
	int i;

	for (i = 0; i < 5; i++)
		assert_true(hc_paths_splitmix64(&st) == want[i]);
}

/* (e) The sampled mean variance lies within 4 Monte Carlo standard errors
 * of the exact expectation at every grid size (fixed seed); at n = M every
 * path holds the whole universe.  The sampled spread agrees with the exact
 * spread to 10% (with K = 4000 the sd's own relative error is about 2-3%). */
static void test_sampler_mean_within_4_se(void **state)
{
	const size_t sizes[] = {1, 2, 3, 5, 8, 13, 21, 30, 34, 40};
	const size_t ns = sizeof sizes / sizeof sizes[0], m = 40, K = 4000;
	struct universe *u = fixture_random_universe(m, 31, 2385);
	struct sampler_options opt;
	struct sampler_result *r;
	struct moments mo;
	struct curve *c;
	struct hc_error err;
	size_t j, k;

	assert_non_null(u);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, ns, 12.0, &err), HC_OK);
	options(&opt, K, 20260101, 2);
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	assert_int_equal(r->paths, K);
	assert_int_equal(r->nsizes, ns);
	assert_null(r->annual_return);
	assert_int_equal(hc_sampler_summarise(c, r, &err), HC_OK);
	assert_int_equal(c->paths, K);
	assert_true(c->seed == 20260101);
	for (j = 0; j + 1 < ns; j++) {
		const struct curve_point *p = &c->points[j];
		double sd = p->sampled_variance_se * sqrt((double)K);
		assert_true(p->sampled);
		assert_true(fabs(p->z_score) < 4.0);
		assert_true(fabs(p->sampled_mean_variance - p->expected_variance) < 4 * p->sampled_variance_se);
		assert_close(sd, p->variance_sd, 0, 0.10);
		/* E[sigma] < sqrt(E[sigma^2]) (Jensen). */
		assert_true(p->sampled_mean_sd < sqrt(p->sampled_mean_variance));
		assert_true(p->sd_p05 < p->sd_p50 && p->sd_p50 < p->sd_p95);
	}
	for (k = 0; k < K; k++)
		assert_close(r->variance[k * ns + ns - 1], mo.universe_variance, 0, 1e-12);
	assert_true(isnan(c->points[ns - 1].z_score));
	hc_sampler_result_free(r);
	hc_curve_free(c);
	fixture_free(u);
}

/* (e) Thread count does not change a single byte. */
static void test_sampler_threads_identical(void **state)
{
	const size_t sizes[] = {40, 1, 7, 25, 60, 3};
	const size_t ns = 6;
	struct universe *u = fixture_random_universe(60, 47, 77);
	struct sampler_options opt;
	struct sampler_result *r1, *r2, *r3;
	struct hc_error err;

	assert_non_null(u);
	options(&opt, 501, 99, 1);
	opt.want_returns = 1;
	opt.periods_per_year = 12;
	assert_int_equal(hc_sampler_run(&r1, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	opt.threads = 2;
	assert_int_equal(hc_sampler_run(&r2, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	opt.threads = 3;
	assert_int_equal(hc_sampler_run(&r3, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	assert_memory_equal(r1->variance, r2->variance, 501 * ns * sizeof(double));
	assert_memory_equal(r1->annual_return, r2->annual_return, 501 * ns * sizeof(double));
	assert_memory_equal(r1->variance, r3->variance, 501 * ns * sizeof(double));
	/* And a different seed gives different portfolios. */
	hc_sampler_result_free(r3);
	opt.seed = 100;
	assert_int_equal(hc_sampler_run(&r3, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	assert_memory_not_equal(r1->variance, r3->variance, 501 * ns * sizeof(double));
	hc_sampler_result_free(r1);
	hc_sampler_result_free(r2);
	hc_sampler_result_free(r3);
	fixture_free(u);
}

/* A portfolio's figures do not depend on which other sizes are asked for:
 * same seed, same path, same n, same bytes (variance and return). */
static void test_sampler_sizes_do_not_change_bits(void **state)
{
	const size_t a[] = {7, 30, 41}, b[] = {60, 2, 7, 13, 30, 31, 41, 55};
	const size_t K = 97;
	struct universe *u = fixture_random_universe(60, 33, 404);
	struct sampler_options opt;
	struct sampler_result *ra, *rb;
	struct hc_error err;
	size_t k, j, jb[3] = {2, 4, 6};

	assert_non_null(u);
	options(&opt, K, 77, 2);
	opt.want_returns = 1;
	opt.periods_per_year = 12;
	assert_int_equal(hc_sampler_run(&ra, fixture_series(u), a, 3, &opt, &err), HC_OK);
	assert_int_equal(hc_sampler_run(&rb, fixture_series(u), b, 8, &opt, &err), HC_OK);
	for (k = 0; k < K; k++)
		for (j = 0; j < 3; j++) {
			assert_memory_equal(&ra->variance[k * 3 + j], &rb->variance[k * 8 + jb[j]], sizeof(double));
			assert_memory_equal(&ra->annual_return[k * 3 + j], &rb->annual_return[k * 8 + jb[j]],
					    sizeof(double));
		}
	hc_sampler_result_free(ra);
	hc_sampler_result_free(rb);
	fixture_free(u);
}

/* Every sampled 1- and 2-holding portfolio is one of the C(M,1), C(M,2)
 * possible ones, whose variances are computed here from the textbook
 * covariance; the compound return of a 1-holding portfolio is that
 * security's own, and of the M-holding portfolio the universe's. */
static void test_sampler_portfolios_are_subsets(void **state)
{
	const size_t sizes[] = {1, 2, 12};
	size_t m = 12, t = 19, i, j, k, q, K = 300;
	struct universe *u = fixture_random_universe(m, t, 31337);
	double a[144], own[12], ew = 0;
	struct sampler_options opt;
	struct sampler_result *r;
	struct hc_error err;

	assert_non_null(u);
	fixture_covariance(u, a);
	for (i = 0; i < m; i++) {
		long double lg = 0;
		for (q = 0; q < t; q++)
			lg += log1p(u->x[i * t + q]);
		own[i] = expm1((double)(lg * 12.0 / t));
	}
	{
		long double lg = 0;
		for (q = 0; q < t; q++) {
			double s = 0;
			for (i = 0; i < m; i++)
				s += u->x[i * t + q];
			lg += log1p(s / m);
		}
		ew = expm1((double)(lg * 12.0 / t));
	}
	options(&opt, K, 5, 2);
	opt.want_returns = 1;
	opt.periods_per_year = 12;
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 3, &opt, &err), HC_OK);
	for (k = 0; k < K; k++) {
		int hit1 = 0, hit2 = 0;
		double v1 = r->variance[k * 3], v2 = r->variance[k * 3 + 1];
		for (i = 0; i < m; i++) {
			if (fabs(v1 - a[i * m + i]) <= 1e-12 * a[i * m + i] &&
			    fabs(r->annual_return[k * 3] - own[i]) <= 1e-12)
				hit1 = 1;
			for (j = i + 1; j < m; j++) {
				double v = (a[i * m + i] + a[j * m + j] + 2 * a[i * m + j]) / 4;
				if (fabs(v2 - v) <= 1e-12 * v)
					hit2 = 1;
			}
		}
		assert_true(hit1);
		assert_true(hit2);
		assert_close(r->annual_return[k * 3 + 2], ew, 1e-3, 1e-12);
	}
	hc_sampler_result_free(r);
	fixture_free(u);
}

/*
 * Compound returns where a running product would leave a double's range,
 * and total losses.  The reference is the definition summed in logs, in
 * long double, written here: prod(1 + r_t)^(P/T) - 1 for the portfolio of
 * all M (every path holds every security at n = M).
 *  - 2397 periods of about +41% each: the growth factor is near e^830,
 *    beyond a double (about e^709); the annual return at P = 12 is still
 *    finite (about 60).
 *  - 2397 periods of about -37% each: the product falls below the smallest
 *    double (about e^-745) long before the end.
 *  - a period in which every security loses more than 100% (a short or
 *    levered position can): -1 at every size, a total loss, never a NaN.
 *    (A loss of exactly 100% is caught only up to the rounding of the
 *    centred sums the sampler keeps, which may leave a factor of 1e-16
 *    instead of 0: a known limit, not checked here.)
 */
static void test_sampler_compound_long_and_lost(void **state)
{
	enum { M = 5, T = 2397 };   /* not a multiple of 8: the lanes' tail too */
	static const double level[2] = { 0.41, -0.37 };
	const size_t sizes[] = { 1, 3, M };
	double *x = malloc(M * T * sizeof *x);
	struct sampler_options opt;
	struct sampler_result *r;
	struct universe *u;
	struct hc_error err;
	size_t i, k, j, c;

	assert_non_null(x);
	for (c = 0; c < 2; c++) {
		long double lg = 0;
		double want;

		for (i = 0; i < M; i++)
			for (k = 0; k < T; k++)
				x[i * T + k] = level[c] + 0.0137 * sin(0.7 * (double)(k + 3 * i)) + 0.0021 * (double)i;
		for (k = 0; k < T; k++) {
			long double s = 0;

			for (i = 0; i < M; i++)
				s += x[i * T + k];
			lg += log1pl(s / M);
		}
		want = (double)expm1l(lg * 12 / T);
		u = fixture_universe(x, M, T);
		assert_non_null(u);
		options(&opt, 7, 3, 1);
		opt.want_returns = 1;
		opt.periods_per_year = 12;
		assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 3, &opt, &err), HC_OK);
		for (k = 0; k < 7; k++) {
			assert_true(isfinite(r->annual_return[k * 3]) && r->annual_return[k * 3] > -1);
			/* 2397 roundings of about 1e-16 each: 1e-12 relative */
			assert_close(r->annual_return[k * 3 + 2], want, 1e-3, 1e-12);
		}
		print_message("compound over %d periods at %+.2f: %.6g (reference %.6g)\n", T, level[c],
			      r->annual_return[2], want);
		hc_sampler_result_free(r);
		fixture_free(u);
	}
	for (c = 0; c < 2; c++) {
		for (i = 0; i < M; i++)
			for (k = 0; k < T; k++)
				x[i * T + k] = 0.0083 + 0.031 * sin(1.3 * (double)(k + 5 * i));
		for (i = 0; i < M; i++)
			x[i * T + (c ? 2395 : 3)] = -1.0173 - 0.05 * (double)i;
		u = fixture_universe(x, M, T);
		assert_non_null(u);
		options(&opt, 7, 3, 2);
		opt.want_returns = 1;
		opt.periods_per_year = 12;
		assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 3, &opt, &err), HC_OK);
		for (k = 0; k < 7; k++)
			for (j = 0; j < 3; j++)
				assert_true(r->annual_return[k * 3 + j] == -1.0);
		hc_sampler_result_free(r);
		fixture_free(u);
	}
	free(x);
}

/* Universes of 2 and 3 securities (every size reached backwards from the
 * total): each 1-holding portfolio is one security, each M-holding one the
 * universe; both routes. */
static void test_sampler_tiny_universes(void **state)
{
	const size_t sizes[] = {1, 2, 3};
	size_t m, i, k, K = 50;
	double a[9], x[3 * 7];
	struct universe *u;
	struct sampler_options opt;
	struct sampler_result *r, *rm;
	struct hc_error err;

	for (m = 2; m <= 3; m++) {
		fixture_returns(x, m, 7, 100 + m);
		u = fixture_universe(x, m, 7);
		assert_non_null(u);
		fixture_covariance(u, a);
		options(&opt, K, 9, 2);
		assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, m, &opt, &err), HC_OK);
		assert_int_equal(hc_sampler_run(&rm, fixture_matrix(a, m), sizes, m, &opt, &err), HC_OK);
		for (k = 0; k < K; k++) {
			int hit = 0;
			double all = 0;
			for (i = 0; i < m * m; i++)
				all += a[i];
			for (i = 0; i < m; i++)
				if (fabs(r->variance[k * m] - a[i * m + i]) <= 1e-12 * a[i * m + i])
					hit = 1;
			assert_true(hit);
			assert_close(r->variance[k * m + m - 1], all / (double)(m * m), 0, 1e-12);
			for (i = 0; i < m; i++)
				assert_close(r->variance[k * m + i], rm->variance[k * m + i], 0, 1e-12);
		}
		hc_sampler_result_free(r);
		hc_sampler_result_free(rm);
		fixture_free(u);
	}
}

/* The matrix route (running quadratic form) draws the same portfolios from
 * the same seed, so its variances match the column route's (which reaches
 * large sizes backwards from the total) to rounding. */
static void test_sampler_matrix_route_matches_columns(void **state)
{
	const size_t sizes[] = {1, 4, 9, 16, 33, 41, 50};
	const size_t ns = 7, m = 50, t = 36, K = 200;
	struct universe *u = fixture_random_universe(m, t, 8080);
	double *a = hc_malloc(m * m * sizeof *a);
	struct sampler_options opt;
	struct sampler_result *rc, *rm;
	struct hc_error err;
	size_t i;

	assert_non_null(u);
	assert_non_null(a);
	fixture_covariance(u, a);
	options(&opt, K, 424242, 2);
	assert_int_equal(hc_sampler_run(&rc, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	assert_int_equal(hc_sampler_run(&rm, fixture_matrix(a, m), sizes, ns, &opt, &err), HC_OK);
	for (i = 0; i < K * ns; i++)
		assert_close(rc->variance[i], rm->variance[i], 0, 1e-11);
	hc_sampler_result_free(rc);
	hc_sampler_result_free(rm);
	hc_free(a);
	fixture_free(u);
}

/* (e) The summary against a brute-force computation: mean, standard error
 * sd/sqrt(K) with divisor K-1, mean sigma, and numpy's linear quantiles of
 * sigma on a sorted copy; everything scaled by P = 12. */
static void test_sampler_summary_brute_force(void **state)
{
	const size_t sizes[] = {2, 6, 17};
	const size_t ns = 3, K = 1237;
	struct universe *u = fixture_random_universe(23, 29, 6);
	struct sampler_options opt;
	struct sampler_result *r;
	struct moments mo;
	struct curve *c;
	struct hc_error err;
	double *s = malloc(K * sizeof *s), mean, ss, ms;
	size_t j, k;

	assert_non_null(u);
	assert_non_null(s);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, ns, 12.0, &err), HC_OK);
	options(&opt, K, 3, 0);
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, ns, &opt, &err), HC_OK);
	assert_int_equal(hc_sampler_summarise(c, r, &err), HC_OK);
	for (j = 0; j < ns; j++) {
		mean = ms = ss = 0;
		for (k = 0; k < K; k++) {
			mean += 12 * r->variance[k * ns + j];
			s[k] = sqrt(12 * r->variance[k * ns + j]);
			ms += s[k];
		}
		mean /= K;
		ms /= K;
		for (k = 0; k < K; k++)
			ss += (12 * r->variance[k * ns + j] - mean) * (12 * r->variance[k * ns + j] - mean);
		qsort(s, K, sizeof *s, cmp_double);
		assert_close(c->points[j].sampled_mean_variance, mean, 0, 1e-13);
		assert_close(c->points[j].sampled_variance_se, sqrt(ss / (K - 1) / K), 0, 1e-12);
		assert_close(c->points[j].sampled_mean_sd, ms, 0, 1e-13);
		assert_close(c->points[j].sd_p05, numpy_linear_quantile(s, K, 0.05), 0, 1e-15);
		assert_close(c->points[j].sd_p50, numpy_linear_quantile(s, K, 0.50), 0, 1e-15);
		assert_close(c->points[j].sd_p95, numpy_linear_quantile(s, K, 0.95), 0, 1e-15);
		assert_close(c->points[j].z_score,
			     (mean - c->points[j].expected_variance) / sqrt(ss / (K - 1) / K), 1, 1e-10);
	}
	free(s);
	hc_sampler_result_free(r);
	hc_curve_free(c);
	fixture_free(u);
}

static int stop_early(void *ctx, size_t done, size_t total)
{
	size_t *calls = ctx;

	(*calls)++;
	return done >= 20;
}

static void test_sampler_rejects_bad_requests(void **state)
{
	const size_t sizes[] = {1, 5}, big[] = {3, 13}, zero[] = {0}, other[] = {3, 7};
	const size_t strata[12] = {0};
	struct universe *u = fixture_random_universe(12, 10, 1);
	struct sampler_options opt;
	struct sampler_result *r = (struct sampler_result *)&opt;
	struct moments mo;
	struct curve *c;
	struct hc_error err;
	size_t calls = 0;
	double a[4] = {0.04, 0.01, 0.01, 0.03};

	assert_non_null(u);
	options(&opt, 100, 1, 1);
	/* Stratified draws are strata.c's (tests/test_strata.c), which builds
	 * on this module: asked of the sampler, they are refused. */
	opt.strata = NULL;
	opt.nstrata = 1;
	opt.stratify = SAMPLER_STRATA_PROPORTIONAL;
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_EUSAGE);
	assert_string_equal(err.message, "stratified draws are hc_strata_run's (strata.h)");
	assert_null(r);
	(void)strata;
	options(&opt, 0, 1, 1);
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_EUSAGE);
	assert_string_equal(err.message, "no paths to sample");
	options(&opt, 10, 1, 1);
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), big, 2, &opt, &err), HC_EUSAGE);
	assert_string_equal(err.message, "size 13 is larger than the 12 securities kept");
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), zero, 1, &opt, &err), HC_EUSAGE);
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 0, &opt, &err), HC_EUSAGE);
	opt.threads = -2;
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_EUSAGE);
	opt.threads = 1;
	opt.want_returns = 1;
	opt.periods_per_year = 0;
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_EUSAGE);
	opt.periods_per_year = 12;
	assert_int_equal(hc_sampler_run(&r, fixture_matrix(a, 2), sizes, 1, &opt, &err), HC_EUSAGE);
	opt.want_returns = 0;
	u->has_missing = 1;
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "needs complete data"));
	u->has_missing = 0;

	/* A progress callback that asks to stop. */
	options(&opt, 1000, 1, 1);
	opt.progress = stop_early;
	opt.progress_ctx = &calls;
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_EINTERRUPT);
	assert_null(r);
	assert_int_equal(calls, 20);

	/* Summaries of mismatched sizes. */
	options(&opt, 10, 1, 1);
	assert_int_equal(hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, other, 2, 12, &err), HC_OK);
	assert_int_equal(hc_sampler_summarise(c, r, &err), HC_EUSAGE);
	c->npoints = 1;
	assert_int_equal(hc_sampler_summarise(c, r, &err), HC_EUSAGE);
	hc_curve_free(c);
	hc_sampler_result_free(r);
	hc_sampler_result_free(NULL);
	fixture_free(u);
}

/* (f) Every allocation failure ends in HC_ENOMEM with nothing returned. */
static void test_sampler_allocation_failure(void **state)
{
	const size_t sizes[] = {1, 3, 8};
	struct universe *u = fixture_random_universe(8, 6, 12);
	double a[64];
	struct sampler_options opt;
	struct sampler_result *r;
	struct moments mo;
	struct curve *c;
	struct hc_error err;
	long k;
	int rc, route;

	assert_non_null(u);
	fixture_covariance(u, a);
	options(&opt, 16, 7, 1);
	for (route = 0; route < 2; route++) {
		for (k = 0;; k++) {
			hc_alloc_fail_after(k);
			rc = route ? hc_sampler_run(&r, fixture_matrix(a, 8), sizes, 3, &opt, &err)
				   : hc_sampler_run(&r, fixture_series(u), sizes, 3, &opt, &err);
			hc_alloc_fail_after(-1);
			if (rc == HC_OK)
				break;
			assert_int_equal(rc, HC_ENOMEM);
			assert_null(r);
		}
		assert_true(k >= 5);
		if (route == 0) {
			assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
			assert_int_equal(hc_curve_exact(&c, &mo, sizes, 3, 12, &err), HC_OK);
			hc_alloc_fail_after(0);
			assert_int_equal(hc_sampler_summarise(c, r, &err), HC_ENOMEM);
			hc_alloc_fail_after(-1);
			hc_curve_free(c);
		}
		hc_sampler_result_free(r);
	}
	fixture_free(u);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_sampler_splitmix64_reference),
		cmocka_unit_test(test_sampler_mean_within_4_se),
		cmocka_unit_test(test_sampler_threads_identical),
		cmocka_unit_test(test_sampler_sizes_do_not_change_bits),
		cmocka_unit_test(test_sampler_portfolios_are_subsets),
		cmocka_unit_test(test_sampler_matrix_route_matches_columns),
		cmocka_unit_test(test_sampler_tiny_universes),
		cmocka_unit_test(test_sampler_compound_long_and_lost),
		cmocka_unit_test(test_sampler_summary_brute_force),
		cmocka_unit_test(test_sampler_rejects_bad_requests),
		cmocka_unit_test(test_sampler_allocation_failure),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
