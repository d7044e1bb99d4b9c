/*
 * test_periodic.c - the per-period route against the complete-data route
 * and against enumeration of every subset of each period's alive set; the
 * ragged sampler's measures against the series formed from its orders.
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <math.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_rng.h>
#include <gsl/gsl_permutation.h>
#include <gsl/gsl_randist.h>

#include "holdcount/bootstrap.h"
#include "holdcount/curve.h"
#include "holdcount/curverun.h"
#include "holdcount/measures.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/periodic.h"
#include "holdcount/rules.h"
#include "holdcount/sampler.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

/* A one-factor universe (returns 0.004 + beta f_t + e_it), gaps where
 * ragged: security i lists at period first[i] and delists after last[i],
 * and a few scattered cells are missing. */
static struct universe *make_universe(size_t m, size_t t, int ragged, unsigned long seed)
{
	struct universe *u = hc_calloc(1, sizeof *u);
	gsl_rng *r = gsl_rng_alloc(gsl_rng_mt19937);
	double *f = hc_malloc(t * sizeof *f);
	size_t i, k;

	assert_non_null(u);
	assert_non_null(r);
	gsl_rng_set(r, seed);
	u->m = u->m_read = m;
	u->t = t;
	u->ids = hc_calloc(m, sizeof *u->ids);
	u->x = hc_malloc(m * t * sizeof *u->x);
	u->dates = hc_malloc(t * sizeof *u->dates);
	assert_true(u->ids && u->x && u->dates && f);
	for (k = 0; k < t; k++) {
		f[k] = 0.043 * gsl_ran_ugaussian(r);
		u->dates[k] = (int32_t)(12000 + 30 * k);
	}
	for (i = 0; i < m; i++) {
		double beta = 0.55 + 0.9 * gsl_rng_uniform(r), s = 0.03 + 0.07 * gsl_rng_uniform(r);
		size_t lo = 0, hi = t;

		u->ids[i] = hc_malloc(16);
		snprintf(u->ids[i], 16, "LIR%03zu", i + 1);
		if (ragged && i % 3 == 1)
			lo = (size_t)gsl_rng_uniform_int(r, t / 2);
		if (ragged && i % 4 == 2)
			hi = t / 2 + (size_t)gsl_rng_uniform_int(r, t / 2);
		if (hi < lo + 3)
			hi = lo + 3;
		for (k = 0; k < t; k++) {
			int gap = k < lo || k >= hi || (ragged && gsl_rng_uniform(r) < 0.05);

			u->x[i * t + k] = gap ? NAN : 0.004 + beta * f[k] + s * gsl_ran_ugaussian(r);
			u->has_missing |= gap;
		}
	}
	u->periods_per_year = 12;
	hc_free(f);
	gsl_rng_free(r);
	return u;
}

static double rel(double a, double b)
{
	double d = fabs(a - b), s = fmax(fabs(a), fabs(b));

	return s > 0 ? d / s : d;
}

/* Complete data: the per-period formula is the complete-data exact curve
 * (design.md section 3 via moments.c's Gram route) to 1e-12 relative. */
static void test_periodic_matches_complete_route(void **state)
{
	struct universe *u = make_universe(37, 61, 0, 11);
	struct hc_periodic *p = NULL;
	struct moments mo;
	struct hc_error err;
	size_t n;

	(void)state;
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_int_equal(p->alive_min, 37);
	assert_int_equal(p->alive_max, 37);
	assert_int_equal(p->complete, 37);
	assert_true(rel(p->curve.floor, mo.average_covariance) < 1e-12);
	assert_true(rel(p->curve.a, mo.universe_variance) < 1e-12);
	assert_true(rel(p->curve.spread, mo.average_variance - mo.average_covariance) < 1e-12);
	for (n = 1; n <= 37; n++) {
		assert_true(rel(hc_periodic_expected_variance(&p->curve, (double)n),
				hc_curve_expected_variance(&mo, (double)n)) < 1e-12);
		if (n < 37)
			assert_true(rel(hc_periodic_expected_te2(&p->curve, (double)n),
					hc_curve_expected_te2(&mo, (double)n)) < 1e-12);
	}
	assert_true(hc_periodic_expected_te2(&p->curve, 37.0) < 1e-15);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Complete data: every exact rule gives the complete-data route's count. */
static void test_periodic_rules_match_complete_route(void **state)
{
	struct universe *u = make_universe(150, 120, 0, 12);
	struct hc_periodic *p = NULL;
	struct moments mo;
	struct rules_config cfg;
	struct hc_error err;
	int rules[] = { RULES_NEAR_FLOOR, RULES_MARGINAL, RULES_NEXT_HOLDING, RULES_TRACKING_ERROR,
			RULES_STATMAN_BORROWING, RULES_STATMAN_LENDING };
	size_t j, a, b;

	(void)state;
	hc_rules_config_init(&cfg);
	cfg.te_budget = 0.03;
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	for (j = 0; j < sizeof rules / sizeof rules[0]; j++) {
		int g1 = hc_rules_exact_count(&cfg, rules[j], mo.average_variance, mo.average_covariance, mo.m, 12, &a);
		int g2 = hc_periodic_rule_count(&cfg, rules[j], &p->curve, 12, &b);

		assert_int_equal(g1, 1);
		assert_int_equal(g2, 1);
		assert_int_equal(a, b);
	}
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Complete data: the continuous count the studentized and BCa intervals
 * are built on is the complete route's (hc_rules_exact_real of the same
 * averages), and the delete-a-block jackknife, which re-forms the
 * per-period sums without each block, gives the continuous counts of
 * hc_bootstrap_jackknife's averages (Kuensch, 1989), both to 1e-9
 * relative (the continuous counts come from closed forms on both routes
 * and, for the steps, from bisections of 60 halvings of one holding). */
static void test_periodic_continuous_counts_match_complete_route(void **state)
{
	struct universe *u = make_universe(40, 96, 0, 13);
	struct hc_periodic *p = NULL;
	struct bootstrap_base *b = NULL;
	struct moments mo;
	struct rules_config cfg;
	struct hc_error err;
	int rules[] = { RULES_NEAR_FLOOR, RULES_MARGINAL, RULES_NEXT_HOLDING, RULES_TRACKING_ERROR,
			RULES_STATMAN_BORROWING, RULES_STATMAN_LENDING };
	size_t nr = sizeof rules / sizeof rules[0], j, k, nj = 0, nb = 0;
	double *jack = NULL, *jv = NULL, *jc = NULL;

	(void)state;
	hc_rules_config_init(&cfg);
	cfg.te_budget = 0.03;
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	for (j = 0; j < nr; j++) {
		double a = hc_rules_exact_real(&cfg, rules[j], mo.average_variance, mo.average_covariance, mo.m, 12);
		double c = hc_periodic_rule_real(&cfg, rules[j], &p->curve, 12);

		assert_true(isfinite(a) && a > 1);
		assert_true(rel(a, c) < 1e-9);
	}
	assert_int_equal(hc_bootstrap_base_alloc(&b, u, &err), HC_OK);
	assert_int_equal(hc_bootstrap_jackknife(b, 4, &jv, &jc, &nb, &err), HC_OK);
	assert_int_equal(hc_periodic_jackknife(&cfg, p, u, 4, 12, rules, nr, &jack, &nj, &err), HC_OK);
	assert_int_equal(nj, 24);
	assert_int_equal(nb, nj);
	for (j = 0; j < nr; j++)
		for (k = 0; k < nj; k++)
			assert_true(rel(jack[j * nj + k], hc_rules_exact_real(&cfg, rules[j], jv[k], jc[k], 40, 12)) < 1e-9);
	/* one block only: no jackknife, no acceleration */
	hc_free(jack);
	assert_int_equal(hc_periodic_jackknife(&cfg, p, u, 60, 12, rules, nr, &jack, &nj, &err), HC_OK);
	assert_int_equal(nj, 0);
	assert_null(jack);
	hc_free(jv);
	hc_free(jc);
	hc_bootstrap_base_free(b);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Ragged data: the continuous count is the real crossing of the rule's
 * quantity on the curve extended to real N, inside (count - 1, count]. */
static void test_periodic_continuous_counts_ragged(void **state)
{
	struct universe *u = make_universe(30, 90, 1, 14);
	struct hc_periodic *p = NULL;
	struct rules_config cfg;
	struct hc_error err;
	size_t n;
	double x;

	(void)state;
	hc_rules_config_init(&cfg);
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_true(p->alive_min < p->alive_max);
	assert_int_equal(hc_periodic_rule_count(&cfg, RULES_NEAR_FLOOR, &p->curve, 12, &n), 1);
	x = hc_periodic_rule_real(&cfg, RULES_NEAR_FLOOR, &p->curve, 12);
	assert_true(x > (double)n - 1 && x <= (double)n);
	/* E(x) equals the limit (1 + 10%)^2 floor, read period by period */
	{
		double e = 0, lim = 1.21 * p->curve.floor;
		size_t k;

		for (k = 0; k < p->t; k++) {
			double mt = (double)p->alive[k];

			e += p->mean[k] * p->mean[k] + (mt > x ? (1 / x - 1 / mt) * p->cross[k] : 0);
		}
		e /= (double)(p->t - 1);
		assert_true(rel(e, lim) < 1e-10);
	}
	assert_int_equal(hc_periodic_rule_count(&cfg, RULES_MARGINAL, &p->curve, 12, &n), 1);
	x = hc_periodic_rule_real(&cfg, RULES_MARGINAL, &p->curve, 12);
	assert_true(x > (double)n - 1 && x <= (double)n);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Enumeration: for each period, every subset of min(N, M_t) of the
 * securities alive then; the mean over subsets of (mean of x over the
 * subset)^2, summed over periods and divided by T - 1, with x centred on
 * each security's own observed mean (computed here independently). */
static double enumerate(const struct universe *u, size_t n)
{
	size_t i, k, t = u->t, m = u->m;
	double total = 0, mean[16];

	assert_true(m <= 16);
	for (i = 0; i < m; i++) {
		double s = 0;
		size_t c = 0;

		for (k = 0; k < t; k++)
			if (!isnan(u->x[i * t + k])) {
				s += u->x[i * t + k];
				c++;
			}
		mean[i] = s / (double)c;
	}
	for (k = 0; k < t; k++) {
		size_t alive = 0, take, subsets = 0;
		unsigned mask, full = 0;
		double acc = 0;

		for (i = 0; i < m; i++)
			if (!isnan(u->x[i * t + k])) {
				full |= 1u << i;
				alive++;
			}
		take = n < alive ? n : alive;
		for (mask = 0; mask < (1u << m); mask++) {
			double s = 0;

			if ((mask & ~full) || (size_t)__builtin_popcount(mask) != take)
				continue;
			for (i = 0; i < m; i++)
				if (mask & (1u << i))
					s += u->x[i * t + k] - mean[i];
			acc += (s / (double)take) * (s / (double)take);
			subsets++;
		}
		total += subsets ? acc / (double)subsets : 0.0;
	}
	return total / (double)(t - 1);
}

static void test_periodic_matches_enumeration_ragged(void **state)
{
	struct universe *u = make_universe(9, 23, 1, 13);
	struct hc_periodic *p = NULL;
	struct hc_error err;
	size_t n;

	(void)state;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_true(p->alive_min < p->alive_max);
	for (n = 1; n <= 9; n++)
		assert_true(rel(hc_periodic_expected_variance(&p->curve, (double)n), enumerate(u, n)) < 1e-12);
	/* The tracking error is the curve less the equal-weight alive portfolio's variance. */
	for (n = 1; n <= 9; n++)
		assert_true(fabs(hc_periodic_expected_te2(&p->curve, (double)n) -
				 (enumerate(u, n) - enumerate(u, 9))) < 1e-14);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* A window's sums equal the sums of a universe cut to that window. */
static void test_periodic_window_equals_cut(void **state)
{
	struct universe *u = make_universe(30, 80, 1, 14), *w = NULL;
	struct hc_periodic *p = NULL, *q = NULL;
	struct hc_error err;
	size_t n;

	(void)state;
	assert_int_equal(hc_universe_window(&w, u, 17, 40, UNIVERSE_MISSING_KEEP, 0.0001, &err), HC_OK);
	assert_int_equal(hc_periodic_alloc(&p, u, 17, 40, &err), HC_OK);
	assert_int_equal(hc_periodic_alloc(&q, w, 0, w->t, &err), HC_OK);
	assert_int_equal(p->m, q->m);
	for (n = 1; n <= p->m; n++)
		assert_true(rel(hc_periodic_expected_variance(&p->curve, (double)n),
				hc_periodic_expected_variance(&q->curve, (double)n)) < 1e-13);
	hc_periodic_free(p);
	hc_periodic_free(q);
	hc_universe_free(w);
	hc_universe_free(u);
}

/* Ragged rules against a plain scan of the formula (independent code). */
static void test_periodic_rules_scan_ragged(void **state)
{
	struct universe *u = make_universe(60, 90, 1, 15);
	struct hc_periodic *p = NULL;
	struct rules_config cfg;
	struct rule_result res;
	struct hc_error err;
	size_t n, count, want_floor = 0, want_te = 0, want_marg = 0;
	double P = 12, e0;

	(void)state;
	hc_rules_config_init(&cfg);
	cfg.near_floor_x = 0.05;
	cfg.te_budget = 0.04;
	cfg.marginal_eps = 0.0015;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	for (n = p->alive_max; n >= 1; n--) {
		double e = hc_periodic_expected_variance(&p->curve, (double)n);

		if (e <= 1.05 * 1.05 * p->curve.floor)
			want_floor = n;
		if (hc_periodic_expected_te2(&p->curve, (double)n) * P <= 0.04 * 0.04)
			want_te = n;
	}
	for (n = 1; n < p->alive_max && !want_marg; n++) {
		e0 = sqrt(P * hc_periodic_expected_variance(&p->curve, (double)n)) -
		     sqrt(P * hc_periodic_expected_variance(&p->curve, (double)n + 1));
		if (e0 < 0.0015)
			want_marg = n;
	}
	assert_true(want_floor > 1 && want_te > 1 && want_marg > 1);
	assert_int_equal(hc_periodic_rule_count(&cfg, RULES_NEAR_FLOOR, &p->curve, P, &count), 1);
	assert_int_equal(count, want_floor);
	assert_int_equal(hc_periodic_rule_count(&cfg, RULES_TRACKING_ERROR, &p->curve, P, &count), 1);
	assert_int_equal(count, want_te);
	assert_int_equal(hc_periodic_rule_count(&cfg, RULES_MARGINAL, &p->curve, P, &count), 1);
	assert_int_equal(count, want_marg);
	assert_int_equal(hc_periodic_rule(&cfg, RULES_TRACKING_ERROR, &p->curve, P, &res, &err), HC_OK);
	assert_int_equal(res.count, want_te);
	assert_true(res.value <= 0.04);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* The bootstrap: each replicate's curve is the formula over the drawn
 * periods; checked by recomputing three replicates' tracking-error counts
 * here from hc_bootstrap_indices and a direct sum. */
static void test_periodic_bootstrap_replicates(void **state)
{
	struct universe *u = make_universe(40, 70, 1, 16);
	struct hc_periodic *p = NULL;
	struct rules_config cfg;
	struct bootstrap_options bo;
	struct rule_result res;
	struct hc_error err;
	size_t idx[70], rep, k, n, counts[3];

	(void)state;
	hc_rules_config_init(&cfg);
	cfg.te_budget = 0.05;
	hc_bootstrap_options_init(&bo);
	bo.replicates = 3;
	bo.seed = 99;
	bo.threads = 2;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	for (rep = 0; rep < 3; rep++) {
		assert_int_equal(hc_bootstrap_indices(bo.kind, 70, hc_bootstrap_default_block_length(70), 99, rep,
						      idx, &err), HC_OK);
		counts[rep] = 0;
		for (n = 1; n <= p->alive_max && !counts[rep]; n++) {
			double te2 = 0;

			for (k = 0; k < 70; k++) {
				double m = (double)p->alive[idx[k]];

				if ((double)n < m)
					te2 += (1.0 / (double)n - 1.0 / m) * p->cross[idx[k]];
			}
			if (te2 / 69.0 * 12 <= 0.05 * 0.05 * (1 + 1e-12))
				counts[rep] = n;
		}
	}
	assert_int_equal(hc_periodic_rule(&cfg, RULES_TRACKING_ERROR, &p->curve, 12, &res, &err), HC_OK);
	assert_int_equal(hc_periodic_bootstrap(&cfg, p, &bo, 12, &res, 1, &err), HC_OK);
	assert_int_equal(res.replicates, 3);
	/* with three replicates the 5th, 50th and 95th percentiles are the
	 * smallest, middle and largest counts (inverted-cdf order statistics). */
	{
		size_t lo = counts[0], hi = counts[0], mid;

		for (rep = 1; rep < 3; rep++) {
			lo = counts[rep] < lo ? counts[rep] : lo;
			hi = counts[rep] > hi ? counts[rep] : hi;
		}
		mid = counts[0] + counts[1] + counts[2] - lo - hi;
		assert_true(res.count_p05 == (double)lo);
		assert_true(res.count_p50 == (double)mid);
		assert_true(res.count_p95 == (double)hi);
	}
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Sampled ragged portfolios: mean within 4.5 standard errors of the exact
 * per-period figure at every size; the full size holds everything alive,
 * so every path gives the exact universe figure there. */
static void test_periodic_sampler_matches_exact(void **state)
{
	struct universe *u = make_universe(45, 60, 1, 17);
	struct hc_periodic *p = NULL;
	struct sampler_options so;
	struct sampler_result *r = NULL, *r1 = NULL;
	struct hc_error err;
	size_t sizes[] = { 1, 2, 3, 5, 8, 12, 20, 30, 40, 45 }, ns = 10, j, k;

	(void)state;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	hc_sampler_options_init(&so);
	so.paths = 4000;
	so.seed = 2024;
	so.threads = 2;
	assert_int_equal(hc_periodic_sample(&r, p, u, 0, sizes, ns, &so, &err), HC_OK);
	for (j = 0; j < ns; j++) {
		double s = 0, s2 = 0, mean, se, exact = hc_periodic_expected_variance(&p->curve, (double)sizes[j]);

		for (k = 0; k < so.paths; k++) {
			double v = r->variance[k * ns + j];

			s += v;
			s2 += v * v;
		}
		mean = s / (double)so.paths;
		se = sqrt(fmax(s2 / (double)so.paths - mean * mean, 0) / (double)(so.paths - 1));
		if (sizes[j] == 45)
			assert_true(rel(mean, exact) < 1e-12);
		else
			assert_true(fabs(mean - exact) <= 4.5 * se);
	}
	/* Returns: holding everything alive is the equal-weight alive portfolio,
	 * whose compound return hc_periodic_universe_return gives; a single
	 * holding's return is its own compounded where alive. */
	{
		struct sampler_result *rr = NULL;
		double ur;
		size_t one[] = { 1, 45 };

		so.want_returns = 1;
		so.periods_per_year = 12;
		so.paths = 50;
		assert_int_equal(hc_periodic_sample(&rr, p, u, 0, one, 2, &so, &err), HC_OK);
		assert_int_equal(hc_periodic_universe_return(p, 12, &ur, &err), HC_OK);
		for (k = 0; k < 50; k++) {
			assert_true(rel(rr->annual_return[k * 2 + 1], ur) < 1e-12);
			assert_true(rr->annual_return[k * 2] != rr->annual_return[k * 2 + 1]);
		}
		hc_sampler_result_free(rr);
		so.want_returns = 0;
		so.paths = 4000;
	}
	/* Same seed on one thread: the same portfolios. */
	so.threads = 1;
	assert_int_equal(hc_periodic_sample(&r1, p, u, 0, sizes, ns, &so, &err), HC_OK);
	assert_memory_equal(r->variance, r1->variance, so.paths * ns * sizeof(double));
	hc_sampler_result_free(r);
	hc_sampler_result_free(r1);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Measures on a ragged history (measures.h through the sampler's hook):
 * each path's measures are those of the series the test forms from the
 * path's order (hc_periodic_order): at each period the mean return, as
 * observed, of the first min(N, M_t) securities of the order alive then;
 * the universe's are those of the all-alive equal-weight series, which the
 * portfolio of every security is exactly (it does not lag itself); the
 * variances keep their bytes; one and two threads give the same bytes; the
 * per-thread series buffers count in the memory budget. */
static void test_periodic_measures_hook(void **state)
{
	struct universe *u = make_universe(12, 50, 1, 23);
	struct hc_periodic *p = NULL;
	struct sampler_options so;
	struct sampler_result *r = NULL, *r1 = NULL, *plain = NULL;
	struct hc_error err;
	size_t sizes[] = { 1, 3, 7, 12 }, ns = 4, j, k, t, i, *order;
	double series[50], scratch[50], want[HC_MEASURE_COUNT], uni[HC_MEASURE_COUNT], lg;
	int m;

	(void)state;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_int_equal(p->m, 12);
	order = hc_mallocarray(p->m, sizeof *order);
	assert_non_null(order);
	hc_sampler_options_init(&so);
	so.paths = 60;
	so.seed = 77;
	so.threads = 2;
	assert_int_equal(hc_periodic_sample(&plain, p, u, 0, sizes, ns, &so, &err), HC_OK);
	so.measures = HC_MEASURES_ALL;
	assert_int_equal(hc_periodic_sample(&r, p, u, 0, sizes, ns, &so, &err), HC_OK);
	assert_non_null(r->measures_value);
	assert_memory_equal(plain->variance, r->variance, so.paths * ns * sizeof(double));
	lg = hc_measures_series_log_growth(p->raw_mean, 1, p->t, scratch);
	hc_measures_series(p->raw_mean, 1, p->t, HC_MEASURES_ALL, lg, uni, scratch);
	for (m = 0; m < HC_MEASURE_COUNT; m++)
		if (m != HC_MEASURE_LAG_UNIVERSE)
			assert_memory_equal(&uni[m], &r->universe_measures[m], sizeof(double));
	for (k = 0; k < so.paths; k++) {
		assert_int_equal(hc_periodic_order(so.seed, k, p->m, order, &err), HC_OK);
		for (j = 0; j < ns; j++) {
			const double *got = r->measures_value + (k * ns + j) * HC_MEASURE_COUNT;

			for (t = 0; t < p->t; t++) {
				double s = 0;
				size_t c = 0;

				for (i = 0; i < p->m && c < sizes[j]; i++) {
					double x = u->x[p->member[order[i]] * u->t + t];

					if (!isnan(x)) {
						s += x;
						c++;
					}
				}
				series[t] = c ? s / (double)c : 0.0;
			}
			hc_measures_series(series, 1, p->t, HC_MEASURES_ALL, lg, want, scratch);
			for (m = 0; m < HC_MEASURE_COUNT; m++)
				if (m == HC_MEASURE_LAG_UNIVERSE && sizes[j] == p->m)
					assert_true(got[m] == 0.0); /* everything alive: the universe itself */
				else if (m == HC_MEASURE_LAG_UNIVERSE)
					assert_true(got[m] == want[m]);
				else
					assert_true(rel(got[m], want[m]) < 1e-12);
			if (sizes[j] == p->m)
				for (m = 0; m < HC_MEASURE_LAG_UNIVERSE; m++)
					assert_memory_equal(&got[m], &uni[m], sizeof(double));
		}
	}
	so.threads = 1;
	assert_int_equal(hc_periodic_sample(&r1, p, u, 0, sizes, ns, &so, &err), HC_OK);
	assert_memory_equal(r->measures_value, r1->measures_value, so.paths * ns * HC_MEASURE_COUNT * sizeof(double));
	hc_sampler_result_free(r1);
	r1 = NULL;
	/* A budget that holds the universe and the sd-only results but not the
	 * measures' values and series: refused with the budget's message. */
	so.paths = 1000;
	p->max_bytes = u->max_bytes = (size_t)(12 * 50 * 8 + 1000 * 4 * 8 * 3);
	assert_int_equal(hc_periodic_sample(&r1, p, u, 0, sizes, ns, &so, &err), HC_ENOMEM);
	assert_null(r1);
	assert_non_null(strstr(err.message, "budget"));
	so.measures = 0;
	assert_int_equal(hc_periodic_sample(&r1, p, u, 0, sizes, ns, &so, &err), HC_OK);
	hc_sampler_result_free(r1);
	hc_sampler_result_free(r);
	hc_sampler_result_free(plain);
	hc_free(order);
	hc_periodic_free(p);
	hc_universe_free(u);
}

static void test_periodic_refuses_tiny(void **state)
{
	struct universe *u = make_universe(5, 10, 0, 18);
	struct hc_periodic *p = NULL;
	struct hc_error err;
	size_t i, k;

	(void)state;
	for (i = 1; i < 5; i++)
		for (k = 1; k < 10; k++)
			u->x[i * 10 + k] = NAN;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, 10, &err), HC_EDATA);
	assert_null(p);
	assert_int_equal(hc_periodic_alloc(&p, u, 5, 10, &err), HC_EUSAGE);
	hc_universe_free(u);
}

/* The data source kind: series with gaps under opt.ragged are read period
 * by period, and their moments reproduce the curve up to the smallest alive
 * count; without it they stay pairwise. */
static void test_periodic_source_kind(void **state)
{
	struct universe *u = make_universe(25, 40, 1, 19), *u2 = make_universe(25, 40, 1, 19);
	struct hc_source *s = NULL, *s2 = NULL;
	struct hc_source_options so;
	struct moments mo;
	struct hc_error err;
	size_t n;

	(void)state;
	hc_source_options_init(&so);
	so.ragged = 1;
	assert_int_equal(hc_source_from_universe(&s, u, &so, &err), HC_OK);
	assert_int_equal(s->kind, HC_SOURCE_RAGGED);
	assert_non_null(s->per);
	assert_null(hc_source_matrix(s));
	assert_int_equal(hc_moments_from_source(&mo, s, &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_PERIODIC);
	for (n = 1; n <= s->per->alive_min; n++)
		assert_true(rel(hc_curve_expected_variance(&mo, (double)n),
				hc_periodic_expected_variance(&s->per->curve, (double)n)) < 1e-12);
	so.ragged = 0;
	assert_int_equal(hc_source_from_universe(&s2, u2, &so, &err), HC_OK);
	assert_int_equal(s2->kind, HC_SOURCE_PAIRWISE);
	hc_source_free(s);
	hc_source_free(s2);
}

/* Alexeev & Tapon (2014) on a ragged history, against exact enumeration of
 * every order of a 7-security ragged universe (7! = 5040): the ragged
 * sampler draws a uniformly random order and holds, each period, the first
 * min(N, M_t) of it alive then, so the probability that a random
 * N-portfolio removes at least x of the removable variance is a count over
 * orders.  The variance of an order's portfolio (mean square of the
 * portfolio's centred returns, divisor T - 1) is recomputed here from the
 * raw cells; the removable variance runs from its mean over orders at
 * N = 1 down to the equal-weight alive portfolio's (N = M).  The sampled
 * rule's count must be the enumerated (settled) count, its share at the
 * count within 4.5 standard errors of the enumerated probability, and no
 * enumerated probability may sit within 4.5 standard errors of q (so the
 * count is not a coin toss: the check can fail). */
static void at_enumerate(const struct universe *u, size_t n, double *var, size_t norders)
{
	size_t m = u->m, t = u->t, i, k, o = 0;
	double mean[8];
	gsl_permutation *perm = gsl_permutation_calloc(m);

	assert_non_null(perm);
	assert_true(m <= 8);
	for (i = 0; i < m; i++) {
		double s = 0;
		size_t c = 0;

		for (k = 0; k < t; k++)
			if (!isnan(u->x[i * t + k])) {
				s += u->x[i * t + k];
				c++;
			}
		mean[i] = s / (double)c;
	}
	do {
		long double acc = 0;

		for (k = 0; k < t; k++) {
			long double s = 0;
			size_t held = 0, j;

			for (j = 0; j < m && held < n; j++) {
				size_t sec = gsl_permutation_get(perm, j);

				if (!isnan(u->x[sec * t + k])) {
					s += u->x[sec * t + k] - mean[sec];
					held++;
				}
			}
			if (held)
				acc += (s / held) * (s / held);
		}
		var[o++] = (double)(acc / (long double)(t - 1));
	} while (gsl_permutation_next(perm) == GSL_SUCCESS);
	assert_int_equal(o, norders);
	gsl_permutation_free(perm);
}

static void test_periodic_alexeev_tapon_sampled_enumeration(void **state)
{
	enum { M = 7, ORDERS = 5040 };
	static const double xq[][2] = { { 0.90, 0.90 }, { 0.75, 0.90 }, { 0.90, 0.60 } };
	struct universe *u = make_universe(M, 23, 1, 29);
	struct hc_periodic *p = NULL;
	struct sampler_options so;
	struct rules_config cfg;
	struct rule_result sr[3];
	struct hc_error err;
	static double var[M + 1][ORDERS];
	double one = 0, prob[M + 1];
	size_t n, k, c, K, want, paths = 40000;

	(void)state;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_int_equal(p->m, M);
	assert_true(p->alive_min < p->alive_max);   /* ragged indeed */
	for (n = 1; n <= M; n++)
		at_enumerate(u, n, var[n], ORDERS);
	for (k = 0; k < ORDERS; k++)
		one += var[1][k] / ORDERS;
	/* the two ends of the removable variance */
	assert_true(rel(one, hc_periodic_expected_variance(&p->curve, 1)) < 1e-12);
	for (k = 0; k < ORDERS; k++)
		assert_true(rel(var[M][k], p->curve.a) < 1e-12);
	hc_sampler_options_init(&so);
	so.paths = paths;
	so.seed = 7;
	so.threads = 2;
	for (c = 0; c < sizeof xq / sizeof xq[0]; c++) {
		double limit;

		hc_rules_config_init(&cfg);
		cfg.selected = RULES_FLAG(RULES_ALEXEEV_TAPON_SAMPLED);
		cfg.at_x = xq[c][0];
		cfg.at_q = xq[c][1];
		limit = one - cfg.at_x * (one - p->curve.a);
		want = 0;
		for (n = M; n >= 1; n--) {
			size_t removed = 0;

			for (k = 0; k < ORDERS; k++)
				removed += var[n][k] <= limit;
			prob[n] = (double)removed / ORDERS;
			/* no enumerated probability within sampling reach of q */
			assert_true(fabs(prob[n] - cfg.at_q) > 4.5 * sqrt(cfg.at_q * (1 - cfg.at_q) / (double)paths));
			if (want == n + 1 || (n == M && prob[n] >= cfg.at_q))
				want = prob[n] >= cfg.at_q ? n : want;
		}
		assert_true(want >= 2 && want <= M);   /* a count inside the universe, not trivially 1 */
		assert_int_equal(hc_periodic_rules_sampled(&cfg, p, u, &so, sr, &K, &err), HC_OK);
		assert_int_equal(K, M);
		assert_int_equal(sr[2].rule, RULES_ALEXEEV_TAPON_SAMPLED);
		assert_true(sr[2].defined && sr[2].met);
		assert_int_equal(sr[2].count, want);
		assert_true(fabs(sr[2].value - prob[want]) <=
			    4.5 * sqrt(prob[want] * (1 - prob[want]) / (double)paths) + 1e-12);
	}
	hc_periodic_free(p);
	hc_universe_free(u);
}

/*
 * The exact form of Alexeev & Tapon (2014) on a ragged history: a gamma
 * matched to the per-period curve's mean and to the spread of the variance
 * across fixed N-subsets under the pairwise-complete covariances
 * (hc_rules_alexeev_tapon_between), against the probability enumerated
 * over all 5040 orders of 7 securities (at_enumerate: the per-period
 * random portfolio exactly).  Two approximations: the gamma (as on
 * complete data) and the spread, which is that of a neighbouring portfolio
 * (fixed members, fewer held where some are not alive) and so larger than
 * the per-period portfolio's.  So:
 *   - a history of 8 with one missing cell (nearly complete): as on complete
 *     data (test_rules.c), the count within one holding of the enumerated
 *     count and the probability at the count within 0.05 of it;
 *   - a ragged history (late listings, delistings, gaps; 23 periods): the
 *     count within one holding only.  Measured here: enumerated 5, 4, 5
 *     against 6, 4, 5 for (x, q) = 90%/90%, 75%/90%, 90%/60%, the
 *     probabilities at the count 0.95 against 0.99 and 0.89 against 1.00:
 *     the larger spread pulls them towards the middle (docs/enough.md).
 */
static void at_exact_case(struct universe *u, int close)
{
	enum { MMAX = 8, ORDERS_MAX = 40320 };
	static const double xq[][2] = { { 0.90, 0.90 }, { 0.75, 0.90 }, { 0.90, 0.60 } };
	static double var[MMAX + 1][ORDERS_MAX];
	const size_t M = u->m, ORDERS = M == 8 ? 40320 : 5040;
	struct hc_periodic *p = NULL;
	struct moments spread;
	struct rules_config cfg;
	struct rule_result ra;
	struct hc_error err;
	double one = 0, prob[MMAX + 1], mean[MMAX];
	size_t n, k, c, want;

	assert_true(M == 7 || M == 8);
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_int_equal(p->m, M);
	assert_int_equal(hc_moments_from_universe_route(&spread, u, MOMENTS_ROUTE_PAIRWISE, &err), HC_OK);
	assert_true(spread.has_spread);
	for (n = 1; n <= M; n++) {
		at_enumerate(u, n, var[n], ORDERS);
		mean[n - 1] = hc_periodic_expected_variance(&p->curve, (double)n);
	}
	for (k = 0; k < ORDERS; k++)
		one += var[1][k] / ORDERS;
	assert_true(rel(one, mean[0]) < 1e-12);
	for (c = 0; c < sizeof xq / sizeof xq[0]; c++) {
		double limit;

		hc_rules_config_init(&cfg);
		cfg.at_x = xq[c][0];
		cfg.at_q = xq[c][1];
		limit = one - cfg.at_x * (one - p->curve.a);
		for (n = M, want = 0; n >= 1; n--) {
			size_t removed = 0;

			for (k = 0; k < ORDERS; k++)
				removed += var[n][k] <= limit;
			prob[n] = (double)removed / ORDERS;
			if (!(prob[n] >= cfg.at_q))
				break;
			want = n;
		}
		assert_true(want >= 2 && want <= M);
		assert_int_equal(hc_rules_alexeev_tapon_between(&cfg, &spread, mean, mean[0], p->curve.a, &ra, &err),
				 HC_OK);
		print_message("%s x=%g q=%g: enumerated %zu (%.4f), exact-spread gamma %zu (%.4f)\n",
			      close ? "nearly complete" : "ragged", cfg.at_x, cfg.at_q, want, prob[want], ra.count, ra.value);
		assert_true(ra.defined && ra.met);
		assert_true(ra.count + 1 >= want && ra.count <= want + 1);
		if (close)
			assert_true(ra.count != want || fabs(ra.value - prob[want]) < 0.05);
	}
	hc_periodic_free(p);
}

static void test_periodic_alexeev_tapon_exact_enumeration(void **state)
{
	struct universe *u = make_universe(7, 23, 1, 29);
	struct universe *v = make_universe(8, 60, 0, 31);

	(void)state;
	at_exact_case(u, 0);
	v->x[3 * v->t + 17] = NAN;   /* one missing cell: read period by period */
	v->has_missing = 1;
	at_exact_case(v, 1);
	hc_universe_free(u);
	hc_universe_free(v);
}

/* The exact spread on complete data: hc_curve_pairwise_spread (the masked
 * Gram products of the pairwise route) on the per-period curve gives the
 * complete-data variance_sd of hc_curve_exact (design.md section 3) to
 * 1e-12 relative, 0 at N = M. */
static void test_periodic_spread_matches_complete_route(void **state)
{
	struct universe *u = make_universe(37, 61, 0, 11);
	struct hc_periodic *p = NULL;
	struct curve *full = NULL, *per = NULL;
	struct moments mo, pmo;
	struct hc_error err;
	size_t sizes[37], n;

	(void)state;
	for (n = 0; n < 37; n++)
		sizes[n] = n + 1;
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&full, &mo, sizes, 37, 12.0, &err), HC_OK);
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_int_equal(hc_periodic_curve_exact(&per, p, sizes, 37, 12.0, &err), HC_OK);
	assert_true(isnan(per->points[0].variance_sd));
	assert_int_equal(hc_curve_pairwise_spread(per, u, &pmo, &err), HC_OK);
	for (n = 0; n < 36; n++) {
		assert_true(full->points[n].variance_sd > 0);
		assert_true(rel(per->points[n].variance_sd, full->points[n].variance_sd) < 1e-12);
	}
	assert_true(per->points[36].variance_sd == 0.0 && full->points[36].variance_sd == 0.0);
	hc_curve_free(full);
	hc_curve_free(per);
	hc_periodic_free(p);
	hc_universe_free(u);
}

/* Where the pairwise matrix cannot be built the spread is refused with the
 * reason, and the curve run keeps every other column: a security delisted
 * before another listed (found before any product), and a memory budget
 * too small for the M x M arrays. */
static void test_periodic_spread_refusals(void **state)
{
	struct universe *u = make_universe(12, 40, 1, 23), *u2 = make_universe(12, 40, 1, 23);
	struct hc_periodic *p = NULL;
	struct curve *c = NULL;
	struct hc_source *s = NULL;
	struct hc_source_options so;
	struct hc_curve_options co;
	struct hc_curve_result *res = NULL;
	struct moments pmo;
	struct hc_error err;
	size_t sizes[3] = {1, 2, 5}, k;

	(void)state;
	/* LIR001 delists after period 9, LIR002 lists at period 30 */
	for (k = 10; k < 40; k++)
		u->x[0 * 40 + k] = NAN;
	for (k = 0; k < 30; k++)
		u->x[1 * 40 + k] = NAN;
	u->has_missing = 1;
	assert_int_equal(hc_periodic_alloc(&p, u, 0, u->t, &err), HC_OK);
	assert_int_equal(hc_periodic_curve_exact(&c, p, sizes, 3, 12.0, &err), HC_OK);
	assert_int_equal(hc_curve_pairwise_spread(c, u, &pmo, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "'LIR002' and 'LIR001' have only 0 common periods"));
	assert_true(isnan(c->points[0].variance_sd));
	/* the budget: the returns held plus less than the M x M arrays */
	u2->max_bytes = (size_t)(12 * 40 * sizeof(double)) + 1000;
	assert_int_equal(hc_curve_pairwise_spread(c, u2, &pmo, &err), HC_ENOMEM);
	assert_non_null(strstr(err.message, "too large"));
	hc_curve_free(c);
	hc_periodic_free(p);
	hc_universe_free(u2);
	/* through the curve run: the column empty, the reason kept, the rest there */
	hc_source_options_init(&so);
	so.ragged = 1;
	assert_int_equal(hc_source_from_universe(&s, u, &so, &err), HC_OK);
	hc_curve_options_init(&co);
	co.paths = 0;
	assert_int_equal(hc_curve_run(&res, s, sizes, 3, &co, &err), HC_OK);
	assert_int_equal(res->spread_built, 0);
	assert_non_null(strstr(res->spread_reason, "not computed"));
	assert_non_null(strstr(res->spread_reason, "common periods"));
	for (k = 0; k < 3; k++) {
		assert_true(isnan(res->curve->points[k].variance_sd));
		assert_true(res->curve->points[k].expected_variance > 0);
	}
	hc_curve_result_free(res);
	hc_source_free(s);
}

/* A security observed once is left out of the per-period route; the
 * spread is then that of the securities kept (not a refusal): the same
 * figures as the pairwise moments of the universe without it. */
static void test_periodic_spread_kept_securities(void **state)
{
	struct universe *u = make_universe(10, 40, 1, 29), *w = make_universe(10, 40, 1, 29);
	struct hc_source *s = NULL;
	struct hc_source_options so;
	struct hc_curve_options co;
	struct hc_curve_result *res = NULL;
	struct moments mo;
	struct hc_error err;
	size_t sizes[3] = {1, 4, 9}, k, i;
	double sd;

	(void)state;
	for (k = 0; k < 40; k++)
		if (k != 17)
			u->x[3 * 40 + k] = NAN;
	u->has_missing = 1;
	/* w: the same universe without security 3 (rows 4..9 moved up) */
	for (i = 3; i < 9; i++)
		memcpy(w->x + i * 40, w->x + (i + 1) * 40, 40 * sizeof *w->x);
	hc_free(w->ids[3]);
	for (i = 3; i < 9; i++)
		w->ids[i] = w->ids[i + 1];
	w->ids[9] = NULL;
	w->m = w->m_read = 9;
	w->has_missing = 1;
	assert_int_equal(hc_moments_from_universe_route(&mo, w, MOMENTS_ROUTE_PAIRWISE, &err), HC_OK);
	hc_source_options_init(&so);
	so.ragged = 1;
	assert_int_equal(hc_source_from_universe(&s, u, &so, &err), HC_OK);
	assert_int_equal(s->per->m, 9);
	hc_curve_options_init(&co);
	co.paths = 0;
	assert_int_equal(hc_curve_run(&res, s, sizes, 3, &co, &err), HC_OK);
	assert_int_equal(res->spread_built, 1);
	for (k = 0; k < 3; k++) {
		assert_int_equal(hc_curve_variance_sd(&mo, sizes[k], &sd, &err), HC_OK);
		if (k < 2)
			assert_true(rel(res->curve->points[k].variance_sd, sd * 12.0) < 1e-12);
		else
			assert_true(res->curve->points[k].variance_sd == 0.0);
	}
	hc_curve_result_free(res);
	hc_source_free(s);
	hc_universe_free(w);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_periodic_matches_complete_route),
		cmocka_unit_test(test_periodic_rules_match_complete_route),
		cmocka_unit_test(test_periodic_continuous_counts_match_complete_route),
		cmocka_unit_test(test_periodic_continuous_counts_ragged),
		cmocka_unit_test(test_periodic_matches_enumeration_ragged),
		cmocka_unit_test(test_periodic_window_equals_cut),
		cmocka_unit_test(test_periodic_rules_scan_ragged),
		cmocka_unit_test(test_periodic_bootstrap_replicates),
		cmocka_unit_test(test_periodic_sampler_matches_exact),
		cmocka_unit_test(test_periodic_measures_hook),
		cmocka_unit_test(test_periodic_refuses_tiny),
		cmocka_unit_test(test_periodic_source_kind),
		cmocka_unit_test(test_periodic_alexeev_tapon_sampled_enumeration),
		cmocka_unit_test(test_periodic_alexeev_tapon_exact_enumeration),
		cmocka_unit_test(test_periodic_spread_matches_complete_route),
		cmocka_unit_test(test_periodic_spread_refusals),
		cmocka_unit_test(test_periodic_spread_kept_securities),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
