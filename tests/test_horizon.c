/*
 * Unit tests for horizon.c.  Outside references: hand-checkable cases
 * whose answers are worked out in the comments -- the arithmetic of the
 * two weightings as common practice states it (buy-and-hold: the mean of
 * the holdings' own compounded wealth; rebalanced: the product over
 * periods of one plus the mean return) -- and the draws the library
 * exports (hc_horizon_draw), counted here by hand.
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
#include "heapcheck.h"
#include "holdcount/bootstrap.h"
#include "holdcount/horizon.h"
#include "holdcount/memory.h"

static void assert_close(double got, double want, double rel)
{
	if (!(fabs(got - want) <= rel * fmax(fabs(want), 1e-300)))
		fail_msg("got %.17g, want %.17g (rel %.3g)", got, want, rel);
}

/* Two periods, monthly fixture: years = 2/12 gives h = 2. */
static void run2(struct hc_horizon_result **r, const struct universe *u, const size_t *sizes, size_t nsizes,
		 size_t paths, int threads)
{
	struct hc_horizon_options o;
	struct hc_error err;

	hc_horizon_options_init(&o);
	o.years = 2.0 / 12.0;
	o.paths = paths;
	o.seed = 5;
	o.threads = threads;
	if (hc_horizon_run(r, fixture_series(u), sizes, nsizes, &o, &err) != HC_OK)
		fail_msg("hc_horizon_run: %s", err.message);
}

/*
 * A: +10%, +20%; B: -5%, +30%.  One window (h = T = 2).
 * Buy-and-hold of both: (1.10*1.20 + 0.95*1.30)/2 = (1.32 + 1.235)/2 = 1.2775.
 * Rebalanced: (1 + (0.10-0.05)/2)(1 + (0.20+0.30)/2) = 1.025*1.25 = 1.28125.
 * One holding: A ends at 1.32, B at 1.235 either way; B lags both
 * universes, A neither.
 */
static void test_horizon_two_securities_two_periods_by_hand(void **state)
{
	double x[4] = { 0.10, 0.20, -0.05, 0.30 };
	size_t sizes[2] = { 1, 2 }, k, nb = 0, K = 40, per[2];
	uint32_t idx[2];
	struct universe *u = fixture_universe(x, 2, 2);
	struct hc_horizon_result *r = NULL;
	const struct hc_horizon_point *p;

	(void)state;
	assert_non_null(u);
	run2(&r, u, sizes, 2, K, 1);
	assert_int_equal(r->periods, 2);
	assert_int_equal(r->route, HC_HORIZON_WINDOWS);
	for (k = 0; k < K; k++) {
		assert_int_equal(hc_horizon_draw(5, k, 2, 2, 2, HC_HORIZON_WINDOWS, 0, idx, per, NULL), HC_OK);
		assert_int_equal(per[0], 0);
		assert_int_equal(per[1], 1);
		nb += idx[0] == 1;
	}
	assert_true(nb > 0 && nb < K);
	p = &r->pts[0 * 2 + HC_HORIZON_REBALANCED];
	assert_close(p->mean, ((double)(K - nb) * 1.32 + (double)nb * 1.235) / (double)K, 1e-13);
	assert_close(p->lag, (double)nb / (double)K, 1e-15);
	p = &r->pts[0 * 2 + HC_HORIZON_BUY_HOLD];
	assert_close(p->mean, ((double)(K - nb) * 1.32 + (double)nb * 1.235) / (double)K, 1e-13);
	assert_close(p->lag, (double)nb / (double)K, 1e-15);
	/* N = 2 is the universe: every path the same figure, never lagging. */
	p = &r->pts[1 * 2 + HC_HORIZON_REBALANCED];
	assert_close(p->mean, 1.28125, 1e-14);
	assert_close(p->p05, 1.28125, 1e-14);
	assert_close(p->p95, 1.28125, 1e-14);
	assert_true(p->lag == 0);
	p = &r->pts[1 * 2 + HC_HORIZON_BUY_HOLD];
	assert_close(p->mean, 1.2775, 1e-14);
	assert_close(p->p50, 1.2775, 1e-14);
	assert_true(p->lag == 0);
	assert_close(r->universe[HC_HORIZON_REBALANCED].p50, 1.28125, 1e-14);
	assert_close(r->universe[HC_HORIZON_BUY_HOLD].p50, 1.2775, 1e-14);
	hc_horizon_result_free(r);
	fixture_free(u);
}

/*
 * A third security C: 0%, -10% (wealth 0.90).  Pairs:
 *   AB rebalanced 1.28125, buy-and-hold 1.2775
 *   AC (1.05)(1.05) = 1.1025,      (1.32 + 0.90)/2 = 1.11
 *   BC (0.975)(1.10) = 1.0725,     (1.235 + 0.90)/2 = 1.0675
 * Universe: rebalanced (61/60)(17/15) = 1037/900, buy-and-hold 3.455/3;
 * AC and BC lag both ways, AB neither.
 */
static void test_horizon_pairs_of_three_by_hand(void **state)
{
	double x[6] = { 0.10, 0.20, -0.05, 0.30, 0.0, -0.10 };
	double reb[3] = { 1.28125, 1.1025, 1.0725 }, bh[3] = { 1.2775, 1.11, 1.0675 };
	size_t sizes[1] = { 2 }, k, K = 90, cnt[3] = { 0, 0, 0 }, per[2];
	uint32_t idx[3];
	struct universe *u = fixture_universe(x, 3, 2);
	struct hc_horizon_result *r = NULL;
	double mr = 0, mb = 0;

	(void)state;
	assert_non_null(u);
	run2(&r, u, sizes, 1, K, 2);
	for (k = 0; k < K; k++) {
		uint32_t a, b;

		assert_int_equal(hc_horizon_draw(5, k, 3, 2, 2, HC_HORIZON_WINDOWS, 0, idx, per, NULL), HC_OK);
		a = idx[0] < idx[1] ? idx[0] : idx[1];
		b = idx[0] < idx[1] ? idx[1] : idx[0];
		cnt[a == 0 && b == 1 ? 0 : a == 0 ? 1 : 2]++;
	}
	for (k = 0; k < 3; k++) {
		mr += (double)cnt[k] * reb[k];
		mb += (double)cnt[k] * bh[k];
	}
	assert_close(r->pts[HC_HORIZON_REBALANCED].mean, mr / (double)K, 1e-13);
	assert_close(r->pts[HC_HORIZON_BUY_HOLD].mean, mb / (double)K, 1e-13);
	assert_close(r->pts[HC_HORIZON_REBALANCED].lag, (double)(cnt[1] + cnt[2]) / (double)K, 1e-15);
	assert_close(r->pts[HC_HORIZON_BUY_HOLD].lag, (double)(cnt[1] + cnt[2]) / (double)K, 1e-15);
	assert_close(r->universe[HC_HORIZON_REBALANCED].p50, 1037.0 / 900.0, 1e-14);
	assert_close(r->universe[HC_HORIZON_BUY_HOLD].p50, 3.455 / 3.0, 1e-14);
	hc_horizon_result_free(r);
	fixture_free(u);
}

/* A fixed rate: 3% a year over two months is 1.03^(2/12); A (1.32) and B
 * (1.235) beat it, C (-150%, then +50%) ends at 0 (a loss beyond -100%
 * ends a holding) and lags.  The universe: rebalanced
 * (1 - 1.45/3)(1 + 1/3) = (31/60)(4/3) = 31/45, buy-and-hold
 * (1.32 + 1.235 + 0)/3; both below the rate, so it lags on every path. */
static void test_horizon_rate_benchmark_and_total_loss(void **state)
{
	double x[6] = { 0.10, 0.20, -0.05, 0.30, -1.5, 0.50 };
	size_t sizes[1] = { 1 }, k, K = 60, n[3] = { 0, 0, 0 }, per[2];
	uint32_t idx[3];
	struct universe *u = fixture_universe(x, 3, 2);
	struct hc_horizon_result *r = NULL;
	struct hc_horizon_options o;
	struct hc_error err;
	double want;

	(void)state;
	assert_non_null(u);
	hc_horizon_options_init(&o);
	o.years = 2.0 / 12.0;
	o.paths = K;
	o.seed = 9;
	o.rate_given = 1;
	o.rate = 0.03;
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), sizes, 1, &o, &err), HC_OK);
	assert_close(r->rate_wealth, pow(1.03, 2.0 / 12.0), 1e-15);
	for (k = 0; k < K; k++) {
		assert_int_equal(hc_horizon_draw(9, k, 3, 2, 2, HC_HORIZON_WINDOWS, 0, idx, per, NULL), HC_OK);
		n[idx[0]]++;
	}
	assert_true(n[2] > 0);
	want = ((double)n[0] * 1.32 + (double)n[1] * 1.235) / (double)K;
	assert_close(r->pts[HC_HORIZON_REBALANCED].mean, want, 1e-13);
	assert_close(r->pts[HC_HORIZON_BUY_HOLD].mean, want, 1e-13);
	assert_close(r->pts[HC_HORIZON_REBALANCED].lag, (double)n[2] / (double)K, 1e-15);
	assert_close(r->pts[HC_HORIZON_BUY_HOLD].p05, 0.0, 1);
	assert_true(r->pts[HC_HORIZON_BUY_HOLD].p05 == 0.0);
	assert_close(r->universe[HC_HORIZON_REBALANCED].p50, 31.0 / 45.0, 1e-14);
	assert_close(r->universe[HC_HORIZON_BUY_HOLD].p50, 2.555 / 3.0, 1e-14);
	assert_true(r->universe[HC_HORIZON_REBALANCED].lag == 1.0);
	hc_horizon_result_free(r);
	fixture_free(u);
}

/* The same figures whatever the thread count; the bootstrap's draws stay
 * in the sample, and its first T periods for n = T are
 * hc_bootstrap_indices' (the generalisation changed no existing stream). */
static void test_horizon_threads_and_bootstrap_draws(void **state)
{
	struct universe *u = fixture_random_universe(12, 30, 7);
	size_t sizes[3] = { 1, 4, 12 }, idx_a[30], idx_b[30], per[100], k;
	struct hc_horizon_options o;
	struct hc_horizon_result *r1 = NULL, *r2 = NULL;
	struct hc_error err;
	uint32_t mem[12];

	(void)state;
	assert_non_null(u);
	hc_horizon_options_init(&o);
	o.years = 5;                   /* 60 periods > 30: the bootstrap */
	o.paths = 500;
	o.seed = 3;
	o.threads = 1;
	assert_int_equal(hc_horizon_run(&r1, fixture_series(u), sizes, 3, &o, &err), HC_OK);
	o.threads = 2;
	assert_int_equal(hc_horizon_run(&r2, fixture_series(u), sizes, 3, &o, &err), HC_OK);
	assert_int_equal(r1->route, HC_HORIZON_BOOTSTRAP);
	assert_int_equal(r1->periods, 60);
	assert_true(r1->block_length >= 1 && r1->block_length <= 30);
	assert_memory_equal(r1->pts, r2->pts, 3 * 2 * sizeof *r1->pts);
	for (k = 0; k < 20; k++) {
		size_t s;

		assert_int_equal(hc_horizon_draw(3, k, 12, 30, 100, HC_HORIZON_BOOTSTRAP, 4, mem, per, &err), HC_OK);
		for (s = 0; s < 100; s++)
			assert_true(per[s] < 30);
	}
	assert_int_equal(hc_bootstrap_indices(BOOTSTRAP_STATIONARY, 30, 4, 11, 2, idx_a, &err), HC_OK);
	assert_int_equal(hc_bootstrap_indices_n(BOOTSTRAP_STATIONARY, 30, 30, 4, 11, 2, idx_b, &err), HC_OK);
	assert_memory_equal(idx_a, idx_b, sizeof idx_a);
	hc_horizon_result_free(r1);
	hc_horizon_result_free(r2);
	fixture_free(u);
}

static void test_horizon_refusals(void **state)
{
	double a[4] = { 0.02, 0.01, 0.01, 0.03 };
	struct universe *u = fixture_random_universe(4, 24, 2);
	size_t sizes[1] = { 2 }, bad[1] = { 5 };
	struct hc_horizon_options o;
	struct hc_horizon_result *r = NULL;
	struct hc_error err;

	(void)state;
	assert_non_null(u);
	hc_horizon_options_init(&o);
	o.paths = 10;
	assert_int_equal(hc_horizon_run(&r, fixture_matrix(a, 2), sizes, 1, &o, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "covariance matrix"));
	o.route = HC_HORIZON_WINDOWS;  /* 20 years of 24 months */
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), sizes, 1, &o, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "longer than the sample"));
	o.route = HC_HORIZON_AUTO;
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), bad, 1, &o, &err), HC_EUSAGE);
	o.years = 0;
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), sizes, 1, &o, &err), HC_EUSAGE);
	o.years = 1;
	o.rate_given = 1;
	o.rate = -1;
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), sizes, 1, &o, &err), HC_EUSAGE);
	o.rate_given = 0;
	o.block_length = 25;
	o.route = HC_HORIZON_BOOTSTRAP;
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), sizes, 1, &o, &err), HC_EUSAGE);
	assert_null(r);
	o.block_length = 0;
	hc_alloc_fail_after(2);
	assert_int_equal(hc_horizon_run(&r, fixture_series(u), sizes, 1, &o, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	assert_null(r);
	fixture_free(u);
}

/* Allocation failure at every allocation in turn, on both routes: each
 * failing run says HC_ENOMEM, leaves *out NULL and leaks nothing. */
/*
 * A history with gaps, one window of all three periods (h = T = 3):
 *   A: +10%, then delisted (no return);  B: +20%, -10%, +5%;  C: 0%, +30%, -20%.
 * Universe (all three listed at the start), buy-and-hold: after period 1,
 * A 1.1/3, B 1.2/3, C 1/3 (total 1.1); A leaves and its 1.1/3 goes to B and
 * C in proportion 0.4 : 1/3, so B = 0.6, C = 0.5; then B 0.6 x 0.9 x 1.05 =
 * 0.567, C 0.5 x 1.3 x 0.8 = 0.52: 1.087.  Rebalanced over the holdings
 * left: 1.1 x (1 + (-0.10 + 0.30)/2) x (1 + (0.05 - 0.20)/2) = 1.1 x 1.1 x
 * 0.925 = 1.11925.  A alone: 1.1, then cash (nothing left): 1.1 both ways.
 * B alone 1.2 x 0.9 x 1.05 = 1.134; C alone 1.3 x 0.8 = 1.04.  {A, B}: A's
 * 0.55 joins B's 0.6, 1.15 x 0.9 x 1.05 = 1.08675 both ways; {A, C}: 1.05 x
 * 1.3 x 0.8 = 1.092 both ways; {B, C}: 0.567 + 0.52 = 1.087 held,
 * 1.1 x 1.1 x 0.925 = 1.11925 rebalanced (B and C make up the universe
 * after A leaves).
 */
static const double *gaps_by_hand(const uint32_t *idx, size_t n, int w)
{
	static const double one[3] = { 1.1, 1.134, 1.04 };
	static double v;
	int b = 0, c = 0;
	size_t i;

	for (i = 0; i < n; i++) {
		b |= idx[i] == 1;
		c |= idx[i] == 2;
	}
	if (n == 1)
		v = one[idx[0]];
	else if (n == 3 || (b && c))
		v = w == HC_HORIZON_REBALANCED ? 1.11925 : 1.087;
	else
		v = b ? 1.08675 : 1.092;
	return &v;
}

static void test_horizon_gaps_by_hand(void **state)
{
	double x[9] = { 0.10, NAN, NAN, 0.20, -0.10, 0.05, 0.0, 0.30, -0.20 };
	size_t sizes[3] = { 1, 2, 3 }, per[3], j;
	uint32_t idx[3];
	uint64_t seed;
	struct universe *u = fixture_universe(x, 3, 3);
	struct hc_source_options so;
	struct hc_source *src = NULL;
	struct hc_horizon_options o;
	struct hc_horizon_result *r = NULL;
	struct hc_error err;
	int w;

	(void)state;
	assert_non_null(u);
	hc_source_options_init(&so);
	so.ragged = 1;
	assert_int_equal(hc_source_from_universe(&src, u, &so, &err), HC_OK);
	assert_int_equal(src->kind, HC_SOURCE_RAGGED);
	assert_int_equal(hc_horizon_count_bound(src->u, 3, NULL), 3);
	assert_int_equal(hc_horizon_count_bound(src->u, 2, NULL), 2); /* the second period's window: B, C */
	for (seed = 1; seed <= 8; seed++) {
		hc_horizon_options_init(&o);
		o.years = 3.0 / 12.0;
		o.paths = 1;
		o.seed = seed;
		o.threads = 1;
		assert_int_equal(hc_horizon_run(&r, src, sizes, 3, &o, &err), HC_OK);
		assert_int_equal(hc_horizon_draw(seed, 0, 3, 3, 3, HC_HORIZON_WINDOWS, 0, idx, per, NULL), HC_OK);
		for (j = 0; j < 3; j++)
			for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++)
				assert_close(r->pts[j * HC_HORIZON_WEIGHTINGS + w].mean, *gaps_by_hand(idx, sizes[j], w), 1e-13);
		assert_close(r->universe[HC_HORIZON_BUY_HOLD].p50, 1.087, 1e-13);
		assert_close(r->universe[HC_HORIZON_REBALANCED].p50, 1.11925, 1e-13);
		hc_horizon_result_free(r);
		r = NULL;
	}
	/* The bootstrap is refused on gaps; a window of 2 periods starting at
	 * the second period has only B and C listed. */
	o.route = HC_HORIZON_BOOTSTRAP;
	assert_int_equal(hc_horizon_run(&r, src, sizes, 3, &o, &err), HC_EUSAGE);
	assert_null(r);
	o.route = HC_HORIZON_AUTO;
	o.years = 2.0 / 12.0;
	assert_int_equal(hc_horizon_run(&r, src, sizes, 3, &o, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "bad holding count 3: the window starting"));
	hc_source_free(src);
}

struct sweep {
	const struct hc_source *src;
	int route;
	struct hc_horizon_result *r;
};

static int sweep_run(void *ctx, struct hc_error *err)
{
	struct sweep *w = ctx;
	struct hc_horizon_options o;
	size_t sizes[3] = { 1, 3, 6 };

	hc_horizon_options_init(&o);
	o.years = 1.5;
	o.paths = 40;
	o.threads = 1;
	o.route = w->route;
	return hc_horizon_run(&w->r, w->src, sizes, 3, &o, err);
}

static void sweep_release(void *ctx)
{
	struct sweep *w = ctx;

	hc_horizon_result_free(w->r);
	w->r = NULL;
}

static void sweep_failed(void *ctx)
{
	assert_null(((struct sweep *)ctx)->r);
}

static void test_horizon_allocation_failure(void **state)
{
	struct universe *u = fixture_random_universe(6, 24, 4);
	struct sweep w = { NULL, HC_HORIZON_WINDOWS, NULL };
	struct heapcheck_call call = { sweep_run, sweep_release, sweep_failed, &w };

	(void)state;
	assert_non_null(u);
	w.src = fixture_series(u);
	assert_true(heapcheck_sweep(&call) > 10);
	w.route = HC_HORIZON_BOOTSTRAP;
	assert_true(heapcheck_sweep(&call) > 10);
	fixture_free(u);
}

/* The same sweep on a history with gaps (a late listing, a delisting):
 * the ragged path's workspace. */
static void test_horizon_allocation_failure_gaps(void **state)
{
	struct universe *u = fixture_random_universe(8, 30, 6);
	struct sweep w = { NULL, HC_HORIZON_WINDOWS, NULL };
	struct heapcheck_call call = { sweep_run, sweep_release, sweep_failed, &w };
	struct hc_source_options so;
	struct hc_source *src = NULL;
	struct hc_error err;
	size_t k;

	(void)state;
	assert_non_null(u);
	for (k = 0; k < 5; k++)
		u->x[0 * 30 + k] = NAN;
	for (k = 20; k < 30; k++)
		u->x[1 * 30 + k] = NAN;
	u->has_missing = 1;
	hc_source_options_init(&so);
	so.ragged = 1;
	assert_int_equal(hc_source_from_universe(&src, u, &so, &err), HC_OK);
	assert_int_equal(src->kind, HC_SOURCE_RAGGED);
	w.src = src;
	assert_true(heapcheck_sweep(&call) > 10);
	hc_source_free(src);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_horizon_two_securities_two_periods_by_hand),
		cmocka_unit_test(test_horizon_pairs_of_three_by_hand),
		cmocka_unit_test(test_horizon_rate_benchmark_and_total_loss),
		cmocka_unit_test(test_horizon_threads_and_bootstrap_draws),
		cmocka_unit_test(test_horizon_refusals),
		cmocka_unit_test(test_horizon_allocation_failure),
		cmocka_unit_test(test_horizon_gaps_by_hand),
		cmocka_unit_test(test_horizon_allocation_failure_gaps),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
