/*
 * test_rolling.c - rolling windows (rolling.h).
 *
 * References outside the module: the textbook two-pass covariance of the
 * test fixtures (tests/support/fixture.c, long double) for every window's
 * averages; the library's from-scratch route (hc_universe_window +
 * hc_moments_from_universe, what `describe` prints) for the sliding sums; the
 * formula N* = (v-bar - c-bar)/(((1+x)^2 - 1) c-bar) for the direction of a
 * regime change.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#include "fixture.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/report.h"
#include "holdcount/rolling.h"

static double rel(double a, double b)
{
	return fabs(a - b) / fmax(fabs(b), 1e-300);
}

/* Averages of the complete columns `keep` (n of them) over periods
 * [first, first + len) of u, from the fixtures' textbook covariance. */
static void reference_averages(const struct universe *u, const size_t *keep, size_t n,
			       size_t first, size_t len, double *vbar, double *cbar, double *corr)
{
	double *x = malloc(n * len * sizeof *x), *a = malloc(n * n * sizeof *a);
	long double V = 0, C = 0, R = 0;
	struct universe *w;
	size_t i, j;

	assert_non_null(x);
	assert_non_null(a);
	for (i = 0; i < n; i++)
		memcpy(x + i * len, u->x + keep[i] * u->t + first, len * sizeof *x);
	w = fixture_universe(x, n, len);
	assert_non_null(w);
	fixture_covariance(w, a);
	for (i = 0; i < n; i++)
		for (j = 0; j < n; j++) {
			if (i == j) {
				V += a[i * n + i];
				continue;
			}
			C += a[i * n + j];
			R += a[i * n + j] / sqrtl((long double)a[i * n + i] * a[j * n + j]);
		}
	*vbar = (double)(V / n);
	*cbar = (double)(C / ((long double)n * (n - 1)));
	*corr = (double)(R / ((long double)n * (n - 1)));
	fixture_free(w);
	free(x);
	free(a);
}

/* A one-factor universe whose specific volatility is multiplied by `jump`
 * from period `change` on: r = beta_i f + s_i e (GSL's mt19937). */
static struct universe *regime_universe(size_t m, size_t t, size_t change, double jump,
					unsigned long seed)
{
	gsl_rng *g = gsl_rng_alloc(gsl_rng_mt19937);
	double *x = malloc(m * t * sizeof *x), *f = malloc(t * sizeof *f), beta, s;
	struct universe *u;
	size_t i, k;

	assert_non_null(g);
	assert_non_null(x);
	assert_non_null(f);
	gsl_rng_set(g, seed);
	for (k = 0; k < t; k++)
		f[k] = 0.0071 + gsl_ran_gaussian(g, 0.0437);
	for (i = 0; i < m; i++) {
		beta = 0.55 + 0.9 * gsl_rng_uniform(g);
		s = 0.031 + 0.07 * gsl_rng_uniform(g);
		for (k = 0; k < t; k++)
			x[i * t + k] = beta * f[k] + (k >= change ? jump : 1.0) * s * gsl_ran_gaussian(g, 1.0);
	}
	u = fixture_universe(x, m, t);
	assert_non_null(u);
	gsl_rng_free(g);
	free(x);
	free(f);
	return u;
}

static void opts(struct rolling_options *o, size_t window, size_t step)
{
	hc_rolling_options_init(o);
	o->window = window;
	o->step = step;
}

/* A window over the whole sample gives, bit for bit, what describe and
 * enough compute (hc_moments_from_universe, hc_rules_exact), and agrees with the
 * textbook covariance to 1e-12 (rounding of sums of 37*36 terms). */
static void test_rolling_whole_window_matches_moments(void **state)
{
	struct universe *u = fixture_random_universe(37, 90, 2385);
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct rule_result rr;
	struct moments mo;
	struct hc_error err;
	size_t keep[37], i, j;
	double vbar, cbar, corr;

	(void)state;
	assert_non_null(u);
	opts(&o, 90, 1);
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(r->nwindows, 1);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_true(r->windows[0].average_variance == mo.average_variance);
	assert_true(r->windows[0].average_covariance == mo.average_covariance);
	assert_true(r->windows[0].average_correlation == mo.average_correlation);
	assert_int_equal(r->windows[0].securities, 37);
	assert_int_equal(r->windows[0].nrules, 6);
	for (j = 0; j < r->windows[0].nrules; j++) {
		const struct rule_result *w = &r->windows[0].rules[j];
		assert_int_equal(hc_rules_exact(&o.rules, w->rule, mo.average_variance,
					     mo.average_covariance, 37, 12.0, &rr, &err), HC_OK);
		assert_int_equal(w->met, rr.met);
		assert_int_equal(w->count, rr.count);
	}
	for (i = 0; i < 37; i++)
		keep[i] = i;
	reference_averages(u, keep, 37, 0, 90, &vbar, &cbar, &corr);
	assert_true(rel(r->windows[0].average_variance, vbar) < 1e-12);
	assert_true(rel(r->windows[0].average_covariance, cbar) < 1e-12);
	assert_true(rel(r->windows[0].average_correlation, corr) < 1e-12);
	hc_rolling_result_free(r);
	fixture_free(u);
}

/* Late listing and delisting: each window keeps the securities complete in
 * it, and its averages match the textbook covariance of exactly those. */
static void test_rolling_windows_follow_listings(void **state)
{
	struct universe *u = fixture_random_universe(23, 150, 4711);
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct hc_error err;
	size_t keep[23], n, i, j, k, first;
	double vbar, cbar, corr;

	(void)state;
	assert_non_null(u);
	for (k = 0; k < 40; k++)
		u->x[0 * 150 + k] = NAN;      /* listed at period 40 */
	for (k = 101; k < 150; k++)
		u->x[1 * 150 + k] = NAN;      /* delisted after period 100 */
	u->x[5 * 150 + 77] = NAN;             /* one gap */
	u->has_missing = 1;
	opts(&o, 36, 3);
	o.refresh = ROLLING_REFRESH_NEVER;
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(r->nwindows, (150 - 36) / 3 + 1);
	for (j = 0; j < r->nwindows; j++) {
		first = j * 3;
		for (i = n = 0; i < 23; i++) {
			int complete = 1;
			for (k = first; k < first + 36; k++)
				complete &= !isnan(u->x[i * 150 + k]);
			if (complete)
				keep[n++] = i;
		}
		assert_int_equal(r->windows[j].status, HC_OK);
		assert_int_equal(r->windows[j].securities, n);
		assert_int_equal(r->windows[j].dropped, 23 - n);
		assert_int_equal(r->windows[j].first, first);
		assert_int_equal(r->windows[j].start_date, u->dates[first]);
		assert_int_equal(r->windows[j].end_date, u->dates[first + 35]);
		reference_averages(u, keep, n, first, 36, &vbar, &cbar, &corr);
		assert_true(rel(r->windows[j].average_variance, vbar) < 1e-12);
		assert_true(rel(r->windows[j].average_covariance, cbar) < 1e-11);
		assert_true(rel(r->windows[j].average_correlation, corr) < 1e-11);
	}
	hc_rolling_result_free(r);
	fixture_free(u);
}

/* 2041 windows slid without a single rebuild agree with every window
 * recomputed from scratch to 1e-10 (the drift bound in rolling.c is near
 * 2041 * 2^-52 ~ 5e-13 relative; 1e-10 is the requirement). */
static void test_rolling_sliding_agrees_with_scratch(void **state)
{
	struct universe *u = fixture_random_universe(40, 2100, 99);
	struct rolling_options o;
	struct rolling_result *a = NULL, *b = NULL;
	struct hc_error err;
	size_t j, q, slid = 0;

	(void)state;
	assert_non_null(u);
	opts(&o, 60, 1);
	o.refresh = ROLLING_REFRESH_NEVER;
	assert_int_equal(hc_rolling_run(&a, fixture_series(u), &o, &err), HC_OK);
	o.from_scratch = 1;
	assert_int_equal(hc_rolling_run(&b, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(a->nwindows, 2041);
	for (j = 0; j < a->nwindows; j++) {
		const struct rolling_window *x = &a->windows[j], *y = &b->windows[j];
		slid += !x->recomputed;
		assert_int_equal(y->recomputed, 1);
		assert_true(rel(x->average_variance, y->average_variance) < 1e-10);
		assert_true(rel(x->average_covariance, y->average_covariance) < 1e-10);
		assert_true(rel(x->average_correlation, y->average_correlation) < 1e-10);
		for (q = 0; q < x->nrules; q++)
			assert_int_equal(x->rules[q].count, y->rules[q].count);
	}
	assert_int_equal(slid, 2040);
	hc_rolling_result_free(a);
	hc_rolling_result_free(b);
	fixture_free(u);
}

/* Specific volatility doubled at period 240 of 480: v-bar - c-bar grows
 * about fourfold while c-bar (the factor's share) stays, so the near-floor
 * count N* = (v-bar - c-bar)/(((1+x)^2 - 1) c-bar) must rise, to roughly
 * four times; the tracking-error count, E[TE^2] = (v-bar - c-bar)(1/N -
 * 1/M), rises too.  Windows wholly after the change vs wholly before. */
static void test_rolling_counts_rise_after_regime_change(void **state)
{
	struct universe *u = regime_universe(300, 480, 240, 2.0, 20011);
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct hc_error err;
	size_t j, before_max = 0, after_min = (size_t)-1, nf;

	(void)state;
	opts(&o, 60, 12);
	o.rules.selected = RULES_FLAG(RULES_NEAR_FLOOR) | RULES_FLAG(RULES_TRACKING_ERROR);
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	for (j = 0; j < r->nwindows; j++) {
		const struct rolling_window *w = &r->windows[j];
		assert_true(w->rules[0].met);
		nf = w->rules[0].count;
		if (w->first + 60 <= 240)
			before_max = nf > before_max ? nf : before_max;
		else if (w->first >= 240)
			after_min = nf < after_min ? nf : after_min;
	}
	assert_true(after_min > 2 * before_max);
	assert_true(r->windows[r->nwindows - 1].rules[1].count > r->windows[0].rules[1].count);
	hc_rolling_result_free(r);
	fixture_free(u);
}

/* A window with fewer than two securities keeps its dates and a note; the
 * others go on. */
static void test_rolling_window_without_figures(void **state)
{
	struct universe *u = fixture_random_universe(3, 48, 7);
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct report *rep = hc_report_alloc();
	struct hc_error err;
	size_t k;

	(void)state;
	assert_non_null(rep);
	for (k = 0; k < 24; k++)
		u->x[k] = u->x[48 + k] = NAN;
	u->has_missing = 1;
	opts(&o, 12, 12);
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(r->nwindows, 4);
	assert_int_equal(r->windows[0].status, HC_EDATA);
	assert_int_equal(r->windows[1].status, HC_EDATA);
	assert_non_null(strstr(r->windows[0].note, "expected at least 2"));
	assert_int_equal(r->windows[2].status, HC_OK);
	assert_int_equal(r->windows[2].securities, 3);
	assert_int_equal(hc_rolling_report(rep, r, &err), HC_OK);
	assert_int_equal(rep->tables[0]->cells[0 * rep->tables[0]->ncols + 3].kind, REPORT_NONE);
	hc_report_free(rep);
	hc_rolling_result_free(r);
	fixture_free(u);
}

/* The bootstrap interval of each window is the bootstrap module's on that
 * window's data with the same seed. */
static void test_rolling_bootstrap_interval(void **state)
{
	struct universe *u = fixture_random_universe(30, 72, 555), *w = NULL;
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct bootstrap_base *base = NULL;
	struct bootstrap_result *br = NULL;
	struct bootstrap_options bo;
	struct rule_result res[RULES_COUNT];
	struct hc_error err;
	size_t j;

	(void)state;
	opts(&o, 48, 24);
	o.replicates = 64;
	o.boot.seed = 31337;
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(r->nwindows, 2);
	assert_int_equal(hc_universe_window(&w, u, 24, 48, UNIVERSE_MISSING_COMPLETE, 0.8, &err), HC_OK);
	bo = o.boot;
	bo.replicates = 64;
	assert_int_equal(hc_bootstrap_base_alloc(&base, w, &err), HC_OK);
	assert_int_equal(hc_bootstrap_run(&br, base, &bo, &err), HC_OK);
	memcpy(res, r->windows[1].rules, sizeof res);
	assert_int_equal(hc_rules_bootstrap_exact(&o.rules, br->vbar, br->cbar, 64, 30, 12.0, res,
					       r->windows[1].nrules, &err), HC_OK);
	for (j = 0; j < r->windows[1].nrules; j++) {
		assert_true(r->windows[1].rules[j].bootstrapped);
		assert_int_equal(r->windows[1].rules[j].replicates, 64);
		assert_true(memcmp(&res[j].count_p05, &r->windows[1].rules[j].count_p05, sizeof(double)) == 0);
		assert_true(memcmp(&res[j].count_p95, &r->windows[1].rules[j].count_p95, sizeof(double)) == 0);
	}
	hc_bootstrap_result_free(br);
	hc_bootstrap_base_free(base);
	hc_universe_free(w);
	hc_rolling_result_free(r);
	fixture_free(u);
}

/* The output contract's columns, in order; floor_sd is sqrt(c-bar P). */
static void test_rolling_report_contract(void **state)
{
	static const char *const want[] = {
		"window_start", "window_end", "securities", "average_variance", "average_covariance",
		"average_correlation", "floor_sd", "count_near_floor", "count_marginal",
		"count_next_holding", "count_tracking_error", "count_statman_borrowing",
		"count_statman_lending", "dropped", "note"
	};
	struct universe *u = fixture_random_universe(12, 40, 3);
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct report *rep = hc_report_alloc();
	struct hc_error err;
	struct report_table *t;
	size_t j;

	(void)state;
	opts(&o, 24, 8);
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(hc_rolling_report(rep, r, &err), HC_OK);
	t = rep->tables[0];
	assert_int_equal(t->ncols, sizeof want / sizeof *want);
	for (j = 0; j < t->ncols; j++)
		assert_string_equal(t->cols[j].key, want[j]);
	assert_int_equal(t->nrows, 3);
	assert_true(rel(t->cells[6].real, sqrt(r->windows[0].average_covariance * 12.0)) < 1e-15);
	assert_true(rel(t->cells[3].real, r->windows[0].average_variance * 12.0) < 1e-15);
	hc_report_free(rep);
	hc_rolling_result_free(r);
	fixture_free(u);
}

static void expect_usage(const struct universe *u, const struct rolling_options *o, const char *what)
{
	struct rolling_result *r = (void *)1;
	struct hc_error err;

	assert_int_equal(hc_rolling_run(&r, fixture_series(u), o, &err), HC_EUSAGE);
	assert_null(r);
	assert_non_null(strstr(err.message, what));
}

static void test_rolling_rejects_bad_options(void **state)
{
	struct universe *u = fixture_random_universe(6, 30, 1);
	struct rolling_options o;

	(void)state;
	opts(&o, 1, 1);
	expect_usage(u, &o, "too short");
	opts(&o, 31, 1);
	expect_usage(u, &o, "longer than the 30 periods");
	opts(&o, 12, 0);
	expect_usage(u, &o, "step of 0");
	opts(&o, 12, 1);
	o.missing = 7;
	expect_usage(u, &o, "complete-data, pairwise or per-period");
	opts(&o, 12, 1);
	o.missing = UNIVERSE_MISSING_PAIRWISE;
	o.replicates = 10;
	expect_usage(u, &o, "bootstrap");
	opts(&o, 12, 1);
	o.rules.selected = RULES_FLAG(RULES_BAND);
	expect_usage(u, &o, "no exact rule");
	opts(&o, 12, 1);
	o.rules.te_budget = -0.02;
	expect_usage(u, &o, "tracking-error budget");
	fixture_free(u);
}

/* Every allocation failure is HC_ENOMEM with nothing returned. */
static void test_rolling_allocation_failure(void **state)
{
	struct universe *u = fixture_random_universe(9, 50, 11);
	struct rolling_options o;
	struct rolling_result *r;
	struct hc_error err;
	long k;
	int rc;

	(void)state;
	u->x[3] = NAN;
	u->has_missing = 1;
	opts(&o, 20, 3);
	o.refresh = 4;
	for (k = 0;; k++) {
		hc_alloc_fail_after(k);
		rc = hc_rolling_run(&r, fixture_series(u), &o, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
		assert_null(r);
	}
	assert_true(k > 10);
	hc_rolling_result_free(r);
	fixture_free(u);
}

/* The pairwise policy recomputes each window with pairwise-complete
 * covariances: the same as moments on that window. */
static void test_rolling_pairwise_policy(void **state)
{
	struct universe *u = fixture_random_universe(8, 60, 21), *w = NULL;
	struct rolling_options o;
	struct rolling_result *r = NULL;
	struct moments mo;
	struct hc_error err;

	(void)state;
	u->x[2 * 60 + 30] = NAN;
	u->has_missing = 1;
	opts(&o, 40, 10);
	o.missing = UNIVERSE_MISSING_PAIRWISE;
	assert_int_equal(hc_rolling_run(&r, fixture_series(u), &o, &err), HC_OK);
	assert_int_equal(r->nwindows, 3);
	assert_int_equal(r->windows[1].securities, 8);
	assert_int_equal(hc_universe_window(&w, u, 10, 40, UNIVERSE_MISSING_PAIRWISE, 0.8, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe(&mo, w, &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_PAIRWISE);
	assert_true(r->windows[1].average_covariance == mo.average_covariance);
	hc_universe_free(w);
	hc_rolling_result_free(r);
	fixture_free(u);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_rolling_whole_window_matches_moments),
		cmocka_unit_test(test_rolling_windows_follow_listings),
		cmocka_unit_test(test_rolling_sliding_agrees_with_scratch),
		cmocka_unit_test(test_rolling_counts_rise_after_regime_change),
		cmocka_unit_test(test_rolling_window_without_figures),
		cmocka_unit_test(test_rolling_bootstrap_interval),
		cmocka_unit_test(test_rolling_report_contract),
		cmocka_unit_test(test_rolling_rejects_bad_options),
		cmocka_unit_test(test_rolling_allocation_failure),
		cmocka_unit_test(test_rolling_pairwise_policy),
	};

	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
