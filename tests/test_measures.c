/*
 * Unit tests for measures.c and the sampler's measure hook.  Outside
 * references: hand-checkable series whose answers are worked out in the
 * comments (the definitions of docs/measures.md: Acerbi & Tasche, 2002,
 * J. Banking & Finance 26(7), for the historical VaR/ES; Joanes & Gill,
 * 1998, The Statistician 47(1), for g1 and g2; Magdon-Ismail & Atiya,
 * 2004, Risk 17(10), for the drawdown); numpy's documented "linear"
 * quantile rule, written out here over a full sort; and, for the sampler,
 * the members it exports (hc_sampler_members) averaged here by hand.
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
#include "holdcount/measures.h"
#include "holdcount/memory.h"
#include "holdcount/sampler.h"

static void assert_close(double got, double want, double rel)
{
	if (!(fabs(got - want) <= rel * fmax(fabs(want), 1e-300)))
		fail_msg("got %.17g, want %.17g (rel %.3g)", got, want, rel);
}

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;

	return (x > y) - (x < y);
}

static void test_measures_five_periods_by_hand(void **state)
{
	/* r = 10%, -5%, 2%, -8%, 4%: mean 0.6%; deviations 9.4, -5.6, 1.4,
	 * -8.6, 3.4 (%).  Below the mean: sqrt((5.6^2 + 8.6^2)/5) %; below
	 * zero: sqrt((5^2 + 8^2)/5) %.  T p = 0.25 at 95% and 0.05 at 99%:
	 * ceil = 1, floor = 0, so VaR = ES = the worst loss, 8%.  Wealth
	 * 1.10, 1.045, 1.0659, 0.980628, 1.01985312: peak 1.10, deepest
	 * 0.980628, drawdown 1 - 0.980628/1.1. */
	const double r[5] = { 0.10, -0.05, 0.02, -0.08, 0.04 };
	double out[HC_MEASURE_COUNT], scratch[5];
	double m2 = (0.094 * 0.094 + 0.056 * 0.056 + 0.014 * 0.014 + 0.086 * 0.086 + 0.034 * 0.034) / 5;
	double m3 = (pow(0.094, 3) - pow(0.056, 3) + pow(0.014, 3) - pow(0.086, 3) + pow(0.034, 3)) / 5;
	double m4 = (pow(0.094, 4) + pow(0.056, 4) + pow(0.014, 4) + pow(0.086, 4) + pow(0.034, 4)) / 5;

	(void)state;
	hc_measures_series(r, 1, 5, HC_MEASURES_ALL, log(1.5), out, scratch);
	assert_close(out[HC_MEASURE_SEMIDEV_MEAN], sqrt((0.056 * 0.056 + 0.086 * 0.086) / 5), 1e-12);
	assert_close(out[HC_MEASURE_SEMIDEV_ZERO], sqrt((0.05 * 0.05 + 0.08 * 0.08) / 5), 1e-12);
	assert_close(out[HC_MEASURE_VAR95], 0.08, 1e-12);
	assert_close(out[HC_MEASURE_ES95], 0.08, 1e-12);
	assert_close(out[HC_MEASURE_VAR99], 0.08, 1e-12);
	assert_close(out[HC_MEASURE_ES99], 0.08, 1e-12);
	assert_close(out[HC_MEASURE_MAX_DRAWDOWN], 1 - 0.980628 / 1.1, 1e-12);
	assert_close(out[HC_MEASURE_WORST_PERIOD], -0.08, 1e-12);
	assert_close(out[HC_MEASURE_SKEWNESS], m3 / pow(m2, 1.5), 1e-10);
	assert_close(out[HC_MEASURE_EXCESS_KURTOSIS], m4 / (m2 * m2) - 3, 1e-10);
	/* Growth 1.01985312 < 1.5: lags; above 1.01: does not. */
	assert_true(out[HC_MEASURE_LAG_UNIVERSE] == 1.0);
	hc_measures_series(r, 1, 5, HC_MEASURES_ALL, log(1.01), out, scratch);
	assert_true(out[HC_MEASURE_LAG_UNIVERSE] == 0.0);
	assert_close(hc_measures_log_growth(r, 1, 5, 1.0, 0.0), log(1.01985312), 1e-12);
}

static void test_measures_symmetric_moments(void **state)
{
	/* +-3% alternating: mean 0, skewness 0, m4/m2^2 = 1, excess -2. */
	const double r[4] = { 0.03, -0.03, 0.03, -0.03 };
	double out[HC_MEASURE_COUNT], scratch[4];

	(void)state;
	hc_measures_series(r, 1, 4, HC_MEASURES_ALL, NAN, out, scratch);
	assert_close(out[HC_MEASURE_SKEWNESS] + 1.0, 1.0, 1e-12);
	assert_close(out[HC_MEASURE_EXCESS_KURTOSIS], -2.0, 1e-12);
	assert_close(out[HC_MEASURE_SEMIDEV_MEAN], sqrt(2 * 0.0009 / 4), 1e-12);
	assert_true(isnan(out[HC_MEASURE_LAG_UNIVERSE]));
}

/* r_(i) = -base + (i-1) step for i = 1..t, stored in a scrambled order
 * (i * 7919 mod t, t not a multiple of 7919). */
static void ladder(double *r, size_t t, double base, double step)
{
	size_t i;

	for (i = 0; i < t; i++)
		r[(i * 7919) % t] = -base + (double)i * step;
}

static void test_measures_tail_fractions(void **state)
{
	/* T = 140: T p95 = 7 (integer): VaR95 = -r_(7) = 5% - 0.6% = 4.4%,
	 * ES95 = mean loss of the 7 worst = 5% - 0.3% = 4.7%.  T p99 = 1.4:
	 * VaR99 = -r_(2) = 4.9%, ES99 = (5% + 0.4 x 4.9%) / 1.4. */
	double r[140], out[HC_MEASURE_COUNT], scratch[140];

	(void)state;
	ladder(r, 140, 0.05, 0.001);
	hc_measures_series(r, 1, 140, HC_MEASURES_ALL, NAN, out, scratch);
	assert_close(out[HC_MEASURE_VAR95], 0.044, 1e-12);
	assert_close(out[HC_MEASURE_ES95], 0.047, 1e-12);
	assert_close(out[HC_MEASURE_VAR99], 0.049, 1e-12);
	assert_close(out[HC_MEASURE_ES99], (0.05 + 0.4 * 0.049) / 1.4, 1e-12);
}

static void test_measures_long_tail_by_selection(void **state)
{
	/* T = 2010 (ceil(T p95) = 101, past the streamed tail): T p95 =
	 * 100.5, so VaR95 = -r_(101) = 10% - 0.01%*100 = 9%, ES95 =
	 * (sum_{i<=100} loss_i + 0.5 loss_101)/100.5; T p99 = 20.1: VaR99 =
	 * -r_(21) = 9.8%, ES99 = (sum_{i<=20} loss_i + 0.1 loss_21)/20.1. */
	size_t t = 2010, i;
	double *r = malloc(t * sizeof *r), *scratch = malloc(t * sizeof *scratch), out[HC_MEASURE_COUNT];
	double s95 = 0, s99 = 0;

	(void)state;
	assert_non_null(r);
	assert_non_null(scratch);
	ladder(r, t, 0.1, 0.0001);
	for (i = 0; i < 100; i++)
		s95 += 0.1 - 0.0001 * (double)i;
	for (i = 0; i < 20; i++)
		s99 += 0.1 - 0.0001 * (double)i;
	hc_measures_series(r, 1, t, HC_MEASURES_ALL, NAN, out, scratch);
	assert_close(out[HC_MEASURE_VAR95], 0.09, 1e-12);
	assert_close(out[HC_MEASURE_ES95], (s95 + 0.5 * 0.09) / 100.5, 1e-12);
	assert_close(out[HC_MEASURE_VAR99], 0.098, 1e-12);
	assert_close(out[HC_MEASURE_ES99], (s99 + 0.1 * 0.098) / 20.1, 1e-12);
	free(r);
	free(scratch);
}

static void test_measures_drawdown_total_loss_and_long_path(void **state)
{
	/* A period of -100%: the wealth is gone, drawdown 100%, growth -inf. */
	const double lost[3] = { 0.2, -1.0, 0.5 };
	double out[HC_MEASURE_COUNT], scratch[3000], r[3000];
	size_t k;

	(void)state;
	hc_measures_series(lost, 1, 3, HC_MEASURES_ALL, 0.0, out, scratch);
	assert_close(out[HC_MEASURE_MAX_DRAWDOWN], 1.0, 0);
	assert_true(out[HC_MEASURE_LAG_UNIVERSE] == 1.0);
	assert_true(isinf(hc_measures_log_growth(lost, 1, 3, 1.0, 0.0)));
	/* 3000 periods of +50% (wealth 1.5^3000, past a double's range) then
	 * nothing lost: no drawdown, growth 3000 log 1.5, without overflow;
	 * then one -20% period at the end: drawdown 20%. */
	for (k = 0; k < 3000; k++)
		r[k] = 0.5;
	hc_measures_series(r, 1, 3000, HC_MEASURES_ALL, NAN, out, scratch);
	assert_close(out[HC_MEASURE_MAX_DRAWDOWN] + 1.0, 1.0, 1e-15);
	assert_close(hc_measures_log_growth(r, 1, 3000, 1.0, 0.0), 3000 * log(1.5), 1e-12);
	r[2999] = -0.2;
	hc_measures_series(r, 1, 3000, HC_MEASURES_ALL, NAN, out, scratch);
	assert_close(out[HC_MEASURE_MAX_DRAWDOWN], 0.2, 1e-12);
}

static void test_measures_select_and_quantile_match_sorting(void **state)
{
	/* numpy's linear rule over a full sort (numpy.quantile docs) against
	 * the selection, on values with many ties and on distinct ones. */
	double x[997], y[997], sorted[997], q[5] = { 0, 0.05, 0.5, 0.95, 1 }, h;
	size_t n = 997, i, j, lo;

	(void)state;
	for (j = 0; j < 2; j++) {
		for (i = 0; i < n; i++)
			x[i] = j ? sin((double)i * 1.7) * 0.031 : (double)((i * 37) % 11) * 0.013;
		memcpy(sorted, x, sizeof x);
		qsort(sorted, n, sizeof *sorted, cmp_double);
		for (i = 0; i < 5; i++) {
			memcpy(y, x, sizeof x);
			h = (double)(n - 1) * q[i];
			lo = (size_t)floor(h);
			assert_close(hc_measures_quantile(y, n, q[i]),
				     lo + 1 < n ? sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]) : sorted[n - 1],
				     1e-15);
		}
		for (i = 0; i < n; i += 97) {
			memcpy(y, x, sizeof x);
			assert_true(hc_measures_select(y, n, i) == sorted[i]);
			for (lo = 0; lo < i; lo++)
				assert_true(y[lo] <= y[i]);
		}
	}
}

static void test_measures_parse_lists(void **state)
{
	struct hc_error err;
	unsigned mask = 7;

	(void)state;
	assert_int_equal(hc_measures_parse("sd", &mask, &err), HC_OK);
	assert_int_equal(mask, 0);
	assert_int_equal(hc_measures_parse("es95,skewness", &mask, &err), HC_OK);
	assert_int_equal(mask, (1u << HC_MEASURE_ES95) | (1u << HC_MEASURE_SKEWNESS));
	assert_int_equal(hc_measures_parse("tail", &mask, &err), HC_OK);
	assert_int_equal(mask, (1u << HC_MEASURE_VAR95) | (1u << HC_MEASURE_VAR99) | (1u << HC_MEASURE_ES95) |
				       (1u << HC_MEASURE_ES99));
	assert_int_equal(hc_measures_parse("sd,all", &mask, &err), HC_OK);
	assert_int_equal(mask, HC_MEASURES_ALL);
	assert_int_equal(hc_measures_parse("es95,,var95", &mask, &err), HC_EUSAGE);
	assert_int_equal(hc_measures_parse("es97", &mask, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "'es97' is not a measure"));
	assert_int_equal(hc_measures_parse("", &mask, &err), HC_EUSAGE);
}

/* The sampler's per-portfolio measures equal those of the portfolio its
 * exported members form, averaged here period by period; the universe's
 * own at N = M; and the bits do not depend on the thread count. */
static void test_measures_sampler_hook_matches_members(void **state)
{
	size_t m = 23, t = 150, sizes[4] = { 1, 4, 17, 23 }, k, j, i, p, mm;
	struct universe *u = fixture_random_universe(m, t, 811);
	struct sampler_options opt;
	struct sampler_result *r1 = NULL, *r2 = NULL;
	struct hc_error err;
	uint32_t idx[23];
	double series[150], want[HC_MEASURE_COUNT], scratch[150], lgbar;

	(void)state;
	assert_non_null(u);
	hc_sampler_options_init(&opt);
	opt.paths = 40;
	opt.seed = 77;
	opt.measures = HC_MEASURES_ALL;
	opt.threads = 1;
	assert_int_equal(hc_sampler_run(&r1, fixture_series(u), sizes, 4, &opt, &err), HC_OK);
	opt.threads = 2;
	assert_int_equal(hc_sampler_run(&r2, fixture_series(u), sizes, 4, &opt, &err), HC_OK);
	assert_memory_equal(r1->measures_value, r2->measures_value, 40 * 4 * HC_MEASURE_COUNT * sizeof(double));
	for (p = 0; p < t; p++) {
		series[p] = 0;
		for (i = 0; i < m; i++)
			series[p] += u->x[i * t + p] / (double)m;
	}
	lgbar = hc_measures_log_growth(series, 1, t, 1.0, 0.0);
	hc_measures_series(series, 1, t, HC_MEASURES_ALL, lgbar, want, scratch);
	for (mm = 0; mm < HC_MEASURE_LAG_UNIVERSE; mm++)
		assert_close(r1->universe_measures[mm], want[mm], 1e-9);
	for (k = 0; k < 40; k++) {
		assert_int_equal(hc_sampler_members(77, k, m, idx, &err), HC_OK);
		for (j = 0; j < 4; j++) {
			for (p = 0; p < t; p++) {
				series[p] = 0;
				for (i = 0; i < sizes[j]; i++)
					series[p] += u->x[idx[i] * t + p];
				series[p] /= (double)sizes[j];
			}
			hc_measures_series(series, 1, t, HC_MEASURES_ALL, lgbar, want, scratch);
			for (mm = 0; mm < HC_MEASURE_COUNT; mm++) {
				double got = r1->measures_value[(k * 4 + j) * HC_MEASURE_COUNT + mm];

				if (mm == HC_MEASURE_LAG_UNIVERSE && sizes[j] == m)
					assert_true(got == 0.0); /* the universe does not lag itself */
				else if (mm == HC_MEASURE_LAG_UNIVERSE)
					assert_true(got == want[mm]);
				else
					assert_close(got, want[mm], 1e-9);
			}
		}
	}
	hc_sampler_result_free(r1);
	hc_sampler_result_free(r2);
	fixture_free(u);
}

static void test_measures_matrix_route_refused(void **state)
{
	double a[4] = { 0.02, 0.01, 0.01, 0.03 };
	size_t sizes[1] = { 1 };
	struct sampler_options opt;
	struct sampler_result *r = NULL;
	struct hc_error err;

	(void)state;
	hc_sampler_options_init(&opt);
	opt.paths = 5;
	opt.measures = 1u << HC_MEASURE_ES95;
	assert_int_equal(hc_sampler_run(&r, fixture_matrix(a, 2), sizes, 1, &opt, &err), HC_EUSAGE);
	assert_null(r);
}

static void test_measures_summarise_and_failures(void **state)
{
	/* Three portfolios, one count, es95 of 1%, 2%, 4%: mean 7/3 %, se =
	 * sd/sqrt(3) with sd^2 = ((1-7/3)^2 + (2-7/3)^2 + (4-7/3)^2)/2 %^2;
	 * numpy's linear quantiles: 5%: 1 + 0.1 x 1; 50%: 2; 95%: 2 + 0.9 x 2. */
	double v[3 * HC_MEASURE_COUNT] = { 0 };
	size_t sizes[1] = { 3 };
	struct hc_measures_curve *c = NULL;
	struct hc_error err;
	double mu = 7.0 / 3, sd2 = ((1 - mu) * (1 - mu) + (2 - mu) * (2 - mu) + (4 - mu) * (4 - mu)) / 2;

	(void)state;
	v[HC_MEASURE_ES95] = 0.01;
	v[HC_MEASURE_COUNT + HC_MEASURE_ES95] = 0.04;
	v[2 * HC_MEASURE_COUNT + HC_MEASURE_ES95] = 0.02;
	assert_int_equal(hc_measures_summarise(&c, v, 3, sizes, 1, 1u << HC_MEASURE_ES95, NULL, 12, &err), HC_OK);
	assert_close(c->pts[HC_MEASURE_ES95].mean, mu / 100, 1e-14);
	assert_close(c->pts[HC_MEASURE_ES95].se, sqrt(sd2 / 3) / 100, 1e-14);
	assert_close(c->pts[HC_MEASURE_ES95].p05, 0.011, 1e-14);
	assert_close(c->pts[HC_MEASURE_ES95].p50, 0.02, 1e-14);
	assert_close(c->pts[HC_MEASURE_ES95].p95, 0.038, 1e-14);
	hc_measures_curve_free(c);
	assert_int_equal(hc_measures_summarise(&c, v, 0, sizes, 1, 1, NULL, 12, &err), HC_EUSAGE);
	hc_alloc_fail_after(0);
	assert_int_equal(hc_measures_summarise(&c, v, 3, sizes, 1, 1, NULL, 12, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	assert_null(c);
}

/* Every allocation of a run with measures, failed in turn: HC_ENOMEM and
 * no result, until the run needs no more and succeeds with the bits of an
 * unhindered run. */
static void test_measures_sampler_allocation_failure(void **state)
{
	size_t sizes[2] = { 2, 9 }, n;
	struct universe *u = fixture_random_universe(9, 40, 5);
	struct sampler_options opt;
	struct sampler_result *ref = NULL, *r = NULL;
	struct hc_error err;
	uint32_t idx[3];
	int rc;

	(void)state;
	assert_non_null(u);
	hc_sampler_options_init(&opt);
	opt.paths = 6;
	opt.threads = 1;
	opt.measures = HC_MEASURES_ALL;
	assert_int_equal(hc_sampler_run(&ref, fixture_series(u), sizes, 2, &opt, &err), HC_OK);
	for (n = 0;; n++) {
		hc_alloc_fail_after((long)n);
		rc = hc_sampler_run(&r, fixture_series(u), sizes, 2, &opt, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
		assert_null(r);
		assert_true(n < 200);
	}
	assert_memory_equal(r->measures_value, ref->measures_value, 6 * 2 * HC_MEASURE_COUNT * sizeof(double));
	hc_sampler_result_free(r);
	hc_sampler_result_free(ref);
	fixture_free(u);
	assert_int_equal(hc_sampler_members(1, 0, 0, idx, &err), HC_EUSAGE);
	hc_alloc_fail_after(0);
	assert_int_equal(hc_sampler_members(1, 0, 3, idx, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_measures_five_periods_by_hand),
		cmocka_unit_test(test_measures_symmetric_moments),
		cmocka_unit_test(test_measures_tail_fractions),
		cmocka_unit_test(test_measures_long_tail_by_selection),
		cmocka_unit_test(test_measures_drawdown_total_loss_and_long_path),
		cmocka_unit_test(test_measures_select_and_quantile_match_sorting),
		cmocka_unit_test(test_measures_parse_lists),
		cmocka_unit_test(test_measures_sampler_hook_matches_members),
		cmocka_unit_test(test_measures_matrix_route_refused),
		cmocka_unit_test(test_measures_summarise_and_failures),
		cmocka_unit_test(test_measures_sampler_allocation_failure),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
