/*
 * test_strata.c - stratified draws (strata.h).
 *
 * Outside references: exact enumeration of every subset of small universes
 * (bit masks), Hamilton's largest-remainder method worked by hand, and the
 * portfolio variance and compound return computed in this file from the
 * members' return series (two-pass, long double).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>

#include <cmocka.h>
#include <gsl/gsl_errno.h>

#include "fixture.h"
#include "holdcount/paths.h"
#include "holdcount/memory.h"
#include "holdcount/report.h"
#include "holdcount/strata.h"

static double rel(double a, double b)
{
	return fabs(a - b) / fmax(fabs(b), 1e-300);
}

/* Variance (divisor T-1) of the equal-weight portfolio of the members in
 * mask (or list), from the return series: the reference for the sampler. */
static double subset_variance(const struct universe *u, const size_t *mem, size_t n)
{
	long double mean = 0, ss = 0, p;
	size_t k, j;

	for (k = 0; k < u->t; k++) {
		for (p = 0, j = 0; j < n; j++)
			p += u->x[mem[j] * u->t + k];
		mean += p / n;
	}
	mean /= u->t;
	for (k = 0; k < u->t; k++) {
		for (p = 0, j = 0; j < n; j++)
			p += u->x[mem[j] * u->t + k];
		ss += (p / n - mean) * (p / n - mean);
	}
	return (double)(ss / (u->t - 1));
}

static size_t mask_members(unsigned mask, size_t m, size_t *mem)
{
	size_t i, n = 0;

	for (i = 0; i < m; i++)
		if (mask & (1u << i))
			mem[n++] = i;
	return n;
}

static void per_stratum(const size_t *of, const size_t *mem, size_t n, size_t S, size_t *cnt)
{
	size_t j;

	memset(cnt, 0, S * sizeof *cnt);
	for (j = 0; j < n; j++)
		cnt[of[mem[j]]]++;
}

/* Uniforms for hc_strata_cap_draw: splitmix64's top 53 bits. */
static double splitmix_uniform(void *ctx)
{
	return (double)(hc_paths_splitmix64(ctx) >> 11) * 0x1.0p-53;
}

static void options(struct sampler_options *o, const size_t *of, size_t S, int mode, size_t k,
		    size_t paths, uint64_t seed)
{
	hc_sampler_options_init(o);
	o->strata = of;
	o->nstrata = S;
	o->stratify = mode;
	o->per_stratum_max = k;
	o->paths = paths;
	o->seed = seed;
	o->threads = 1;
}

/* Hamilton's method by hand: strata of 7, 5, 3, 2 (M = 17), n = 6: quotas
 * 2.47, 1.76, 1.06, 0.71, floors 2, 1, 1, 0; remainders 42, 30, 18, 12
 * mod 17 = 8, 13, 1, 12, so the two seats left go to the second and the
 * fourth: 2, 2, 1, 1.  n = 10: quotas 4.12, 2.94, 1.76, 1.18, floors
 * 4, 2, 1, 1 (8), remainders 2, 16, 13, 3: 4, 3, 2, 1.  Ties (3 and 3,
 * n = 1) go to the earlier stratum. */
static void test_strata_proportional_by_hand(void **state)
{
	size_t of[17], i, alloc[4];
	const size_t sizes[4] = { 7, 5, 3, 2 };
	size_t tie_of[6] = { 0, 0, 0, 1, 1, 1 };
	struct strata *s = NULL, *t = NULL;
	struct hc_error err;

	(void)state;
	for (i = 0; i < 17; i++)
		of[i] = i < 7 ? 0 : i < 12 ? 1 : i < 15 ? 2 : 3;
	assert_int_equal(hc_strata_alloc(&s, of, 17, 4, &err), HC_OK);
	for (i = 0; i < 4; i++)
		assert_int_equal(s->count[i], sizes[i]);
	assert_int_equal(hc_strata_proportional(s, 6, alloc, &err), HC_OK);
	assert_int_equal(alloc[0], 2);
	assert_int_equal(alloc[1], 2);
	assert_int_equal(alloc[2], 1);
	assert_int_equal(alloc[3], 1);
	assert_int_equal(hc_strata_proportional(s, 10, alloc, &err), HC_OK);
	assert_int_equal(alloc[0], 4);
	assert_int_equal(alloc[1], 3);
	assert_int_equal(alloc[2], 2);
	assert_int_equal(alloc[3], 1);
	assert_int_equal(hc_strata_proportional(s, 17, alloc, &err), HC_OK);
	assert_int_equal(alloc[0], 7);
	assert_int_equal(alloc[3], 2);
	assert_int_equal(hc_strata_proportional(s, 18, alloc, &err), HC_EUSAGE);
	assert_int_equal(hc_strata_alloc(&t, tie_of, 6, 2, &err), HC_OK);
	assert_int_equal(hc_strata_proportional(t, 1, alloc, &err), HC_OK);
	assert_int_equal(alloc[0], 1);
	assert_int_equal(alloc[1], 0);
	hc_strata_free(t);
	hc_strata_free(s);
}

/* Every proportional draw holds exactly the allocation, distinct members
 * of the right strata. */
static void test_strata_proportional_draws_meet_allocation(void **state)
{
	size_t of[23], mem[23], cnt[4], alloc[4], want[4], n, k, j;
	struct strata *s = NULL;
	struct hc_error err;

	(void)state;
	for (j = 0; j < 23; j++)
		of[j] = (j * 7 + 3) % 4;
	assert_int_equal(hc_strata_alloc(&s, of, 23, 4, &err), HC_OK);
	for (n = 1; n <= 23; n += 3)
		for (k = 0; k < 200; k++) {
			assert_int_equal(hc_strata_proportional(s, n, want, &err), HC_OK);
			assert_int_equal(hc_strata_portfolio(s, NULL, SAMPLER_STRATA_PROPORTIONAL, n, 2385, k,
							  mem, alloc, &err), HC_OK);
			per_stratum(of, mem, n, 4, cnt);
			for (j = 0; j < 4; j++) {
				assert_int_equal(cnt[j], want[j]);
				assert_int_equal(alloc[j], want[j]);
			}
			for (j = 1; j < n; j++)
				assert_true(mem[j] > mem[j - 1]);
		}
	hc_strata_free(s);
}

/* One security per stratum, at most one each, N = M: every draw is the
 * same portfolio, the whole universe; its variance is the universe's. */
static void test_strata_one_per_stratum_is_one_portfolio(void **state)
{
	struct universe *u = fixture_random_universe(7, 36, 77);
	size_t of[7], mem[7], alloc[7], all[7], j, k;
	const size_t sizes[] = { 3, 7 };
	struct sampler_options o;
	struct sampler_result *r = NULL;
	struct strata *s = NULL;
	struct strata_cap *cap = NULL;
	struct hc_error err;
	double v;

	(void)state;
	for (j = 0; j < 7; j++)
		of[j] = all[j] = j;
	assert_int_equal(hc_strata_alloc(&s, of, 7, 7, &err), HC_OK);
	assert_int_equal(hc_strata_cap_alloc(&cap, s, 1, 7, &err), HC_OK);
	for (k = 0; k < 50; k++) {
		assert_int_equal(hc_strata_portfolio(s, cap, SAMPLER_STRATA_CAP, 7, 9, k, mem, alloc, &err), HC_OK);
		assert_memory_equal(mem, all, sizeof all);
	}
	v = subset_variance(u, all, 7);
	options(&o, of, 7, SAMPLER_STRATA_CAP, 1, 300, 9);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err), HC_OK);
	for (k = 0; k < 300; k++)
		assert_true(rel(r->variance[k * 2 + 1], v) < 1e-13);  /* rounding of 7-term sums */
	assert_true(r->feasible[0] && r->feasible[1]);
	hc_sampler_result_free(r);
	hc_strata_cap_free(cap);
	hc_strata_free(s);
	fixture_free(u);
}

/* Nine securities in strata of 4, 3 and 2, at most 2 each: the table's
 * count of admissible subsets and each allocation's probability agree with
 * enumerating all 512 subsets (to 1e-12: lgamma's rounding). */
static void test_strata_cap_probabilities_match_enumeration(void **state)
{
	const size_t of[9] = { 0, 1, 0, 2, 1, 0, 2, 1, 0 };
	size_t mem[9], cnt[3], n, a0, a1, a2, alloc[3];
	struct strata *s = NULL;
	struct strata_cap *cap = NULL;
	struct hc_error err;
	unsigned mask;
	double ways[10][3][3][3];

	(void)state;
	memset(ways, 0, sizeof ways);
	assert_int_equal(hc_strata_alloc(&s, of, 9, 3, &err), HC_OK);
	assert_int_equal(hc_strata_cap_alloc(&cap, s, 2, 9, &err), HC_OK);
	for (mask = 1; mask < 512; mask++) {
		n = mask_members(mask, 9, mem);
		per_stratum(of, mem, n, 3, cnt);
		if (cnt[0] <= 2 && cnt[1] <= 2 && cnt[2] <= 2)
			ways[n][cnt[0]][cnt[1]][cnt[2]] += 1;
	}
	for (n = 1; n <= 9; n++) {
		double total = 0;
		for (a0 = 0; a0 < 3; a0++)
			for (a1 = 0; a1 < 3; a1++)
				for (a2 = 0; a2 < 3; a2++)
					total += ways[n][a0][a1][a2];
		assert_int_equal(hc_strata_cap_feasible(cap, n), total > 0);
		if (total == 0) {
			assert_true(n > 6);
			continue;
		}
		assert_true(fabs(hc_strata_cap_log_total(cap, n) - log(total)) < 1e-12);
		for (a0 = 0; a0 < 3; a0++)
			for (a1 = 0; a1 < 3; a1++)
				for (a2 = 0; a2 < 3; a2++) {
					double lp;
					alloc[0] = a0, alloc[1] = a1, alloc[2] = a2;
					lp = hc_strata_cap_log_probability(cap, n, alloc);
					if (ways[n][a0][a1][a2] == 0)
						assert_true(lp == -INFINITY);
					else
						assert_true(fabs(exp(lp) - ways[n][a0][a1][a2] / total) < 1e-12);
				}
	}
	/* Draw frequencies of n = 4: each within 4 binomial standard errors of
	 * the enumerated share. */
	{
		static double freq[3][3][3];
		uint64_t st = 2385;
		double total = 0, pr, sd;
		size_t d, D = 60000;

		for (a0 = 0; a0 < 3; a0++)
			for (a1 = 0; a1 < 3; a1++)
				for (a2 = 0; a2 < 3; a2++)
					total += ways[4][a0][a1][a2];
		for (d = 0; d < D; d++) {
			hc_strata_cap_draw(cap, 4, splitmix_uniform, &st, alloc);
			assert_true(alloc[0] + alloc[1] + alloc[2] == 4);
			freq[alloc[0]][alloc[1]][alloc[2]] += 1;
		}
		for (a0 = 0; a0 < 3; a0++)
			for (a1 = 0; a1 < 3; a1++)
				for (a2 = 0; a2 < 3; a2++) {
					pr = ways[4][a0][a1][a2] / total;
					sd = sqrt(pr * (1 - pr) / (double)D);
					assert_true(fabs(freq[a0][a1][a2] / (double)D - pr) <= 4 * sd);
				}
	}
	hc_strata_cap_free(cap);
	hc_strata_free(s);
}

/* hc_strata_cap_most against enumeration: the largest subset of a 12-security
 * universe (strata of 5, 4, 2 and 1; one empty stratum) with at most k in
 * every stratum, found by trying all 4096 bit masks, for k = 0 (no cap) to
 * 6; and every size up to it is feasible in the cap table, none above. */
static void test_strata_cap_most_matches_enumeration(void **state)
{
	const size_t of[12] = { 0, 1, 0, 2, 1, 0, 3, 1, 0, 2, 1, 0 };
	size_t mem[12], cnt[5], k, n, st;
	struct strata *s = NULL;
	struct strata_cap *cap = NULL;
	struct hc_error err;
	unsigned mask;

	(void)state;
	assert_int_equal(hc_strata_alloc(&s, of, 12, 5, &err), HC_OK);
	for (k = 0; k <= 6; k++) {
		size_t best = 0;

		for (mask = 1; mask < 4096; mask++) {
			int ok = 1;

			n = mask_members(mask, 12, mem);
			per_stratum(of, mem, n, 5, cnt);
			for (st = 0; st < 5; st++)
				ok &= k == 0 || cnt[st] <= k;
			if (ok && n > best)
				best = n;
		}
		assert_int_equal(hc_strata_cap_most(s, k), best);
		if (k == 0)
			continue;
		assert_int_equal(hc_strata_cap_alloc(&cap, s, k, 12, &err), HC_OK);
		for (n = 1; n <= 12; n++)
			assert_int_equal(hc_strata_cap_feasible(cap, n), n <= best);
		hc_strata_cap_free(cap);
	}
	/* by hand: k = 2 gives 2 + 2 + 2 + 1 + 0 = 7; k = 1 gives 4 */
	assert_int_equal(hc_strata_cap_most(s, 2), 7);
	assert_int_equal(hc_strata_cap_most(s, 1), 4);
	hc_strata_free(s);
}

/* The cap mode's sampled mean variance against the mean over every
 * admissible subset (enumeration): within 4 Monte Carlo standard errors
 * (a two-sided 6e-5 chance per size for a correct sampler; fixed seed).
 * Sizes past sum min(k, m_s) = 6 are infeasible and marked. */
static void test_strata_cap_mean_matches_enumeration(void **state)
{
	const size_t of[9] = { 0, 1, 0, 2, 1, 0, 2, 1, 0 };
	const size_t sizes[] = { 1, 2, 3, 4, 5, 6, 7 };
	struct universe *u = fixture_random_universe(9, 40, 1234);
	struct sampler_options o;
	struct sampler_result *r = NULL;
	size_t mem[9], cnt[3], n, j, k, K = 20000;
	double sum[10] = { 0 }, num[10] = { 0 };
	struct hc_error err;
	unsigned mask;

	(void)state;
	for (mask = 1; mask < 512; mask++) {
		n = mask_members(mask, 9, mem);
		per_stratum(of, mem, n, 3, cnt);
		if (cnt[0] <= 2 && cnt[1] <= 2 && cnt[2] <= 2) {
			sum[n] += subset_variance(u, mem, n);
			num[n] += 1;
		}
	}
	options(&o, of, 3, SAMPLER_STRATA_CAP, 2, K, 4242);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 7, &o, &err), HC_OK);
	for (j = 0; j < 7; j++) {
		long double s1 = 0, s2 = 0;
		double mean, se;
		n = sizes[j];
		if (n == 7) {
			assert_false(r->feasible[j]);
			assert_true(isinf(r->variance[j]));
			continue;
		}
		assert_true(r->feasible[j]);
		for (k = 0; k < K; k++) {
			s1 += r->variance[k * 7 + j];
			s2 += (long double)r->variance[k * 7 + j] * r->variance[k * 7 + j];
		}
		mean = (double)(s1 / K);
		se = sqrt((double)((s2 - s1 * s1 / K) / (K - 1)) / (double)K);
		assert_true(fabs(mean - sum[n] / num[n]) < 4 * se);
	}
	hc_sampler_result_free(r);
	fixture_free(u);
}

/* The exact expected variance of a fixed allocation is the mean over every
 * subset with that allocation (enumeration, 1e-12); the matrix route's
 * block sums give the same; the proportional sampled mean is within 4
 * standard errors of it. */
static void test_strata_expected_variance_matches_enumeration(void **state)
{
	const size_t of[10] = { 2, 0, 1, 0, 2, 0, 1, 0, 2, 0 };
	const size_t sizes[] = { 2, 3, 5, 8 };
	struct universe *u = fixture_random_universe(10, 30, 8080);
	struct strata *s = NULL;
	struct strata_moments *sm = NULL, *smm = NULL;
	struct sampler_options o;
	struct sampler_result *r = NULL;
	struct strata_curve *c = NULL;
	size_t mem[10], cnt[3], alloc[3], n, j, q, K = 20000;
	double a[100];
	struct hc_error err;
	unsigned mask;

	(void)state;
	fixture_covariance(u, a);
	assert_int_equal(hc_strata_alloc(&s, of, 10, 3, &err), HC_OK);
	assert_int_equal(hc_strata_moments_from_source(&sm, fixture_series(u), s, &err), HC_OK);
	assert_int_equal(hc_strata_moments_from_source(&smm, fixture_matrix(a, 10), s, &err), HC_OK);
	for (n = 1; n <= 10; n++) {
		double sum = 0, num = 0, ex;
		assert_int_equal(hc_strata_proportional(s, n, alloc, &err), HC_OK);
		for (mask = 1; mask < 1024; mask++) {
			if (mask_members(mask, 10, mem) != n)
				continue;
			per_stratum(of, mem, n, 3, cnt);
			if (cnt[0] == alloc[0] && cnt[1] == alloc[1] && cnt[2] == alloc[2]) {
				sum += subset_variance(u, mem, n);
				num += 1;
			}
		}
		ex = hc_strata_expected_variance(sm, s, alloc);
		assert_true(rel(ex, sum / num) < 1e-12);
		assert_true(rel(hc_strata_expected_variance(smm, s, alloc), ex) < 1e-12);
	}
	options(&o, of, 3, SAMPLER_STRATA_PROPORTIONAL, 0, K, 5150);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 4, &o, &err), HC_OK);
	assert_int_equal(hc_strata_curve_alloc(&c, r, s, sm, SAMPLER_STRATA_PROPORTIONAL, 0, 12.0, &err), HC_OK);
	for (q = 0; q < 4; q++) {
		assert_int_equal(hc_strata_proportional(s, sizes[q], alloc, &err), HC_OK);
		assert_true(rel(c->points[q].expected_variance,
				12.0 * hc_strata_expected_variance(sm, s, alloc)) < 1e-15);
		assert_true(fabs(c->points[q].z_score) < 4);
		assert_true(c->points[q].sd_p05 < c->points[q].sd_p50);
		assert_true(c->points[q].sd_p50 < c->points[q].sd_p95);
	}
	(void)j;
	hc_strata_curve_free(c);
	hc_sampler_result_free(r);
	hc_strata_moments_free(sm);
	hc_strata_moments_free(smm);
	hc_strata_free(s);
	fixture_free(u);
}

/* Each sampled variance and compound return is that of the portfolio
 * hc_strata_portfolio names for (seed, path, size), computed here from the
 * returns; the same bytes on 1 and 2 threads; the matrix route agrees. */
static void test_strata_draws_reproducible(void **state)
{
	const size_t sizes[] = { 9, 1, 4, 12 };
	struct universe *u = fixture_random_universe(14, 48, 31);
	size_t of[14], mem[14], alloc[3], j, k, q;
	struct sampler_options o;
	struct sampler_result *r1 = NULL, *r2 = NULL, *rm = NULL;
	struct strata *s = NULL;
	struct strata_cap *cap = NULL;
	struct hc_error err;
	double a[196];

	(void)state;
	for (j = 0; j < 14; j++)
		of[j] = j % 3;
	fixture_covariance(u, a);
	assert_int_equal(hc_strata_alloc(&s, of, 14, 3, &err), HC_OK);
	assert_int_equal(hc_strata_cap_alloc(&cap, s, 4, 14, &err), HC_OK);
	options(&o, of, 3, SAMPLER_STRATA_CAP, 4, 64, 99);
	o.want_returns = 1;
	o.periods_per_year = 12;
	assert_int_equal(hc_strata_run(&r1, fixture_series(u), sizes, 4, &o, &err), HC_OK);
	o.threads = 2;
	assert_int_equal(hc_strata_run(&r2, fixture_series(u), sizes, 4, &o, &err), HC_OK);
	assert_memory_equal(r1->variance, r2->variance, 64 * 4 * sizeof(double));
	assert_memory_equal(r1->annual_return, r2->annual_return, 64 * 4 * sizeof(double));
	o.want_returns = 0;
	assert_int_equal(hc_strata_run(&rm, fixture_matrix(a, 14), sizes, 4, &o, &err), HC_OK);
	assert_true(r1->feasible[3]);   /* strata of 5, 5, 4 at most 4 each: 12 fits */
	for (k = 0; k < 64; k++)
		for (q = 0; q < 4; q++) {
			long double lg = 0;
			size_t t;
			if (!r1->feasible[q])
				continue;
			assert_int_equal(hc_strata_portfolio(s, cap, SAMPLER_STRATA_CAP, sizes[q], 99, k, mem,
							  alloc, &err), HC_OK);
			assert_true(rel(r1->variance[k * 4 + q], subset_variance(u, mem, sizes[q])) < 1e-12);
			assert_true(rel(rm->variance[k * 4 + q], subset_variance(u, mem, sizes[q])) < 1e-12);
			for (t = 0; t < u->t; t++) {
				long double p = 0;
				for (j = 0; j < sizes[q]; j++)
					p += u->x[mem[j] * u->t + t];
				lg += log1pl(p / sizes[q]);
			}
			assert_true(fabs(r1->annual_return[k * 4 + q] - expm1((double)(lg * 12 / u->t))) < 1e-13);
		}
	hc_sampler_result_free(r1);
	hc_sampler_result_free(r2);
	hc_sampler_result_free(rm);
	hc_strata_cap_free(cap);
	hc_strata_free(s);
	fixture_free(u);
}

/* Strata of 5, 5 and 4 with at most 4 each: at most 12 holdings; 13 is
 * infeasible, left out of the report's stratified columns. */
static void test_strata_report_columns(void **state)
{
	const size_t sizes[] = { 2, 12, 13 };
	struct universe *u = fixture_random_universe(14, 24, 5);
	size_t of[14], j;
	struct sampler_options o;
	struct sampler_result *r = NULL;
	struct strata *s = NULL;
	struct strata_curve *c = NULL;
	struct report *rep = hc_report_alloc();
	struct report_table *t;
	struct hc_error err;

	(void)state;
	for (j = 0; j < 14; j++)
		of[j] = j % 3;
	assert_int_equal(hc_strata_alloc(&s, of, 14, 3, &err), HC_OK);
	options(&o, of, 3, SAMPLER_STRATA_CAP, 4, 50, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 3, &o, &err), HC_OK);
	assert_true(r->feasible[0] && r->feasible[1]);
	assert_false(r->feasible[2]);
	assert_int_equal(hc_strata_curve_alloc(&c, r, s, NULL, SAMPLER_STRATA_CAP, 4, 12.0, &err), HC_OK);
	t = hc_report_add_table(rep, "curve", NULL);
	assert_int_equal(hc_report_table_add_column(t, "n", "n", REPORT_STYLE_PLAIN), 0);
	assert_int_equal(hc_strata_report_columns(c, t), HC_EUSAGE);   /* no rows yet */
	for (j = 0; j < 3; j++) {
		assert_int_equal(hc_report_table_add_row(t), 0);
		hc_report_table_set_int(t, j, 0, (long long)sizes[j]);
	}
	assert_int_equal(hc_strata_report_columns(c, t), HC_OK);
	assert_int_equal(t->ncols, 10);
	assert_string_equal(t->cols[1].key, "stratified_feasible");
	assert_int_equal(t->cells[2 * 10 + 1].kind, REPORT_BOOL);
	assert_int_equal(t->cells[2 * 10 + 3].kind, REPORT_NONE);
	assert_int_equal(t->cells[0 * 10 + 2].kind, REPORT_NONE); /* no exact value under a cap */
	assert_true(rel(t->cells[0 * 10 + 3].real, c->points[0].mean_variance) == 0);
	hc_report_free(rep);
	hc_strata_curve_free(c);
	hc_sampler_result_free(r);
	hc_strata_free(s);
	fixture_free(u);
}

static void test_strata_rejects_bad_requests(void **state)
{
	const size_t of[6] = { 0, 0, 1, 1, 2, 2 }, bad_of[6] = { 0, 0, 1, 1, 2, 3 };
	const size_t sizes[] = { 2, 4 }, big[] = { 7 };
	struct universe *u = fixture_random_universe(6, 20, 2);
	struct sampler_options o;
	struct sampler_result *r = (void *)1;
	struct strata *s = (void *)1;
	struct strata_cap *cap = NULL;
	struct hc_error err;
	double a[36];

	(void)state;
	fixture_covariance(u, a);
	options(&o, of, 3, SAMPLER_STRATA_NONE, 0, 10, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "without a way to use them"));
	assert_null(r);
	options(&o, of, 3, SAMPLER_STRATA_CAP, 0, 10, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err), HC_EUSAGE);
	options(&o, of, 3, SAMPLER_STRATA_CAP, 2, 0, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err), HC_EUSAGE);
	options(&o, of, 3, SAMPLER_STRATA_CAP, 2, 10, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), big, 1, &o, &err), HC_EUSAGE);
	o.want_returns = 1;
	o.periods_per_year = 12;
	assert_int_equal(hc_strata_run(&r, fixture_matrix(a, 6), sizes, 2, &o, &err), HC_EUSAGE);
	o.want_returns = 0;
	options(&o, bad_of, 3, SAMPLER_STRATA_PROPORTIONAL, 0, 10, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "stratum 3 of 3"));
	assert_int_equal(hc_strata_alloc(&s, of, 0, 3, &err), HC_EUSAGE);
	assert_null(s);
	assert_int_equal(hc_strata_alloc(&s, of, 6, 3, &err), HC_OK);
	assert_int_equal(hc_strata_cap_alloc(&cap, s, 0, 6, &err), HC_EUSAGE);
	assert_int_equal(hc_strata_cap_alloc(&cap, s, 1, 6, &err), HC_OK);
	assert_int_equal(hc_strata_portfolio(s, cap, SAMPLER_STRATA_CAP, 4, 1, 0, (size_t[6]){0},
					  (size_t[3]){0}, &err), HC_EUSAGE);
	u->x[5] = NAN;
	u->has_missing = 1;
	options(&o, of, 3, SAMPLER_STRATA_PROPORTIONAL, 0, 10, 1);
	assert_int_equal(hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err), HC_EUSAGE);
	assert_int_equal(hc_strata_moments_from_source((struct strata_moments **)&r, fixture_series(u), s, &err), HC_EUSAGE);
	hc_strata_cap_free(cap);
	hc_strata_free(s);
	fixture_free(u);
}

/* Every allocation failure is HC_ENOMEM, with nothing returned. */
static void test_strata_allocation_failure(void **state)
{
	const size_t of[8] = { 0, 1, 2, 0, 1, 2, 0, 1 }, sizes[] = { 3, 6 };
	struct universe *u = fixture_random_universe(8, 16, 3);
	struct sampler_options o;
	struct sampler_result *r = NULL;
	struct strata *s = NULL;
	struct strata_moments *sm = NULL;
	struct strata_curve *c = NULL;
	struct hc_error err;
	long k;
	int rc, mode;

	(void)state;
	for (mode = SAMPLER_STRATA_PROPORTIONAL; mode <= SAMPLER_STRATA_CAP; mode++) {
		hc_sampler_result_free(r);   /* the last mode's sample is summarised below */
		r = NULL;
		options(&o, of, 3, mode, 2, 5, 1);
		for (k = 0;; k++) {
			hc_alloc_fail_after(k);
			rc = hc_strata_run(&r, fixture_series(u), sizes, 2, &o, &err);
			hc_alloc_fail_after(-1);
			if (rc == HC_OK)
				break;
			assert_int_equal(rc, HC_ENOMEM);
			assert_null(r);
		}
		assert_true(k > 5);
	}
	assert_int_equal(hc_strata_alloc(&s, of, 8, 3, &err), HC_OK);
	for (k = 0;; k++) {
		hc_alloc_fail_after(k);
		rc = hc_strata_moments_from_source(&sm, fixture_series(u), s, &err);
		if (rc == HC_OK)
			rc = hc_strata_curve_alloc(&c, r, s, sm, SAMPLER_STRATA_CAP, 2, 12.0, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
		assert_null(c);
		hc_strata_moments_free(sm);
		sm = NULL;
	}
	assert_true(k >= 3);
	hc_strata_curve_free(c);
	hc_strata_moments_free(sm);
	hc_strata_free(s);
	hc_sampler_result_free(r);
	fixture_free(u);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_strata_proportional_by_hand),
		cmocka_unit_test(test_strata_proportional_draws_meet_allocation),
		cmocka_unit_test(test_strata_one_per_stratum_is_one_portfolio),
		cmocka_unit_test(test_strata_cap_probabilities_match_enumeration),
		cmocka_unit_test(test_strata_cap_mean_matches_enumeration),
		cmocka_unit_test(test_strata_cap_most_matches_enumeration),
		cmocka_unit_test(test_strata_expected_variance_matches_enumeration),
		cmocka_unit_test(test_strata_draws_reproducible),
		cmocka_unit_test(test_strata_report_columns),
		cmocka_unit_test(test_strata_rejects_bad_requests),
		cmocka_unit_test(test_strata_allocation_failure),
	};

	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
