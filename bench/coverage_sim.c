/*
 * coverage_sim.c - measured coverage of enough's 90% intervals for the
 * holding count, on simulated one-factor universes whose true averages, and
 * so whose true counts, are known.
 *
 * usage: coverage_sim [--trials N] [--replicates B] [--sampled-trials N]
 *                     [--sampled-replicates B] [--seed S] [--securities M]
 *                     [--block-length L] [--calibrate C] [--laws normal,t4,garch]
 *
 * Model (invented, no real data): r_it = beta_i f_t + e_it with M
 * securities, betas fixed from the seed (0.6..1.4), factor sd 4% and
 * idiosyncratic sd 8% a month (unconditional), under three laws:
 *   normal   i.i.d. Gaussian f and e;
 *   t4       i.i.d. Student t(4) scaled to unit variance;
 *   garch    every series GARCH(1,1) (a = 0.05, b = 0.90) with t(5)
 *            innovations scaled to unit variance (Bollerslev, 1986, Journal
 *            of Econometrics 31(3)), 500 periods of burn-in;
 * at T = 120 and 240 periods.  Per trial, the exact rules' intervals as
 * `holdcount enough` computes them by default (stationary bootstrap,
 * Politis & Romano 1994, with the Politis & White 2004 / Patton, Politis &
 * White 2009 block length; studentized on the log count, Hall 1988) and,
 * for comparison, BCa (Efron 1987, delete-a-block jackknife acceleration)
 * and plain percentile intervals from the same replicates.  A cell counts the trials whose interval holds the count
 * computed from the true averages.  With --sampled-trials N > 0 the sampled
 * rules band and alexeev-tapon-sampled are also run (N trials; percentile
 * intervals from --bootstrap-sampled's route, 200 portfolios a size), their
 * true counts from 20000 portfolios drawn from the true covariance matrix.
 *
 * With --calibrate C > 0, also the calibrated (double-bootstrap) percentile
 * interval with C inner replicates per outer one (an experiment: see
 * calibrated() and docs/enough.md); --laws picks the laws simulated.
 *
 * Output: one Markdown table on stdout (docs/enough.md pastes it).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#include "holdcount/bootstrap.h"
#include "holdcount/enough.h"
#include "holdcount/memory.h"
#include "holdcount/rules.h"
#include "holdcount/sampler.h"
#include "holdcount/source.h"
#include "holdcount/covmatrix.h"
#include "holdcount/universe.h"

#define FACTOR_VAR 0.0016
#define IDIO_VAR 0.0064
#define GARCH_A 0.05
#define GARCH_B 0.90
#define BURN 500

enum law { LAW_NORMAL, LAW_T4, LAW_GARCH, NLAWS };
static const char *const law_names[NLAWS] = {
	"i.i.d. normal", "i.i.d. t(4)", "GARCH(1,1) t(5)"
};

static const int exact_rules[] = {
	RULES_NEAR_FLOOR, RULES_MARGINAL, RULES_NEXT_HOLDING, RULES_TRACKING_ERROR,
	RULES_STATMAN_BORROWING, RULES_STATMAN_LENDING
};
#define NEXACT (sizeof exact_rules / sizeof exact_rules[0])

/* One unit-variance innovation. */
static double innovation(gsl_rng *g, int law)
{
	switch (law) {
	case LAW_T4: return gsl_ran_tdist(g, 4) / sqrt(2.0);
	case LAW_GARCH: return gsl_ran_tdist(g, 5) * sqrt(3.0 / 5.0);
	default: return gsl_ran_ugaussian(g);
	}
}

/* T periods of one series with unconditional variance var, into y[0..t-1]. */
static void series(gsl_rng *g, int law, double var, size_t t, double *y)
{
	size_t k;

	if (law != LAW_GARCH) {
		for (k = 0; k < t; k++)
			y[k] = sqrt(var) * innovation(g, law);
		return;
	}
	{
		double omega = var * (1 - GARCH_A - GARCH_B), h = var, prev = 0;

		for (k = 0; k < BURN + t; k++) {
			double r;

			h = omega + GARCH_A * prev * prev + GARCH_B * h;
			r = sqrt(h) * innovation(g, law);
			prev = r;
			if (k >= BURN)
				y[k - BURN] = r;
		}
	}
}

static void simulate(gsl_rng *g, int law, const double *beta, size_t m, size_t t, double *x, double *f)
{
	size_t i, k;

	series(g, law, FACTOR_VAR, t, f);
	for (i = 0; i < m; i++) {
		series(g, law, IDIO_VAR, t, x + i * t);
		for (k = 0; k < t; k++)
			x[i * t + k] += beta[i] * f[k];
	}
}

static int covers(const struct rule_result *r, int true_met, size_t true_count)
{
	double lo = r->count_p05, hi = r->count_p95;

	if (!true_met)
		return isnan(hi);
	if (isnan(lo))
		return 0;
	return (double)true_count >= lo && (isnan(hi) || (double)true_count <= hi);
}

static int excludes(const struct rule_result *r)
{
	return r->met && ((!isnan(r->count_p05) && (double)r->count < r->count_p05) ||
			  (!isnan(r->count_p95) && (double)r->count > r->count_p95));
}

/* The count at order statistic ceil(B alpha) of sorted continuous counts
 * (inf: not met, NaN). */
static double order_count(const double *sorted, size_t n, double alpha)
{
	double k = ceil((double)n * alpha);
	size_t i = k < 1 ? 0 : k > (double)n ? n - 1 : (size_t)k - 1;

	return isfinite(sorted[i]) ? fmax(ceil(sorted[i]), 1) : NAN;
}

static int cmp_dbl(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;

	return (x > y) - (x < y);
}

/*
 * The calibrated (double-bootstrap) percentile interval of each exact rule's
 * continuous count: Beran (1987), "Prepivoting to Reduce Level Error of
 * Confidence Sets", Biometrika 74(3), and Hall & Martin (1988), the
 * calibration of a bootstrap interval by a second level of resampling
 * (Davison & Hinkley, 1997, section 3.9, from memory).  For outer replicate
 * b (bo's draw), `inner` replicates resample its period sequence with the
 * same scheme and block length (streams from a seed of their own), each
 * one's averages from hc_bootstrap_moments (exact re-centring, O(MT)); u_b
 * is the share of inner counts below the estimate (ties half).  Then the
 * interval is [Q*(u_(0.05)), Q*(u_(0.95))], Q* the outer replicates'
 * quantile: the levels at which the percentile interval held the estimate
 * in 90% of the outer worlds, equal-tailed.  res[k] (a copy of the
 * estimate's result) gets count_p05 and count_p95.
 */
static void calibrated(const struct rules_config *cfg, const struct bootstrap_base *b,
		       const struct bootstrap_options *bo, const struct bootstrap_result *br, size_t inner,
		       double vhat, double chat, size_t m, struct rule_result *res)
{
	size_t t = b->t, B = br->replicates, L = bo->block_length, ob, c, k, q;
	size_t *oidx = malloc(t * sizeof *oidx), *iidx = malloc(t * sizeof *iidx);
	double *w = malloc(t * sizeof *w), *u = malloc(NEXACT * B * sizeof *u), *x = malloc(B * sizeof *x);
	double est[NEXACT];

	for (q = 0; q < NEXACT; q++)
		est[q] = hc_rules_exact_real(cfg, exact_rules[q], vhat, chat, m, 12);
	for (ob = 0; ob < B; ob++) {
		double less[NEXACT] = { 0 };

		hc_bootstrap_indices(bo->kind, t, L, bo->seed, ob, oidx, NULL);
		for (c = 0; c < inner; c++) {
			double v2, c2;

			hc_bootstrap_indices(bo->kind, t, L, bo->seed ^ 0x5bd1e995u, ob * inner + c, iidx, NULL);
			memset(w, 0, t * sizeof *w);
			for (k = 0; k < t; k++)
				w[oidx[iidx[k]]] += 1;
			hc_bootstrap_moments(b, w, &v2, &c2);
			for (q = 0; q < NEXACT; q++) {
				double th = hc_rules_exact_real(cfg, exact_rules[q], v2, c2, m, 12);

				if (isnan(th))
					th = INFINITY;
				less[q] += th < est[q] ? 1.0 : th == est[q] ? 0.5 : 0.0;
			}
		}
		for (q = 0; q < NEXACT; q++)
			u[q * B + ob] = less[q] / (double)inner;
	}
	for (q = 0; q < NEXACT; q++) {
		double *uq = u + q * B, lo, hi;

		if (!isfinite(est[q]))
			continue;
		qsort(uq, B, sizeof *uq, cmp_dbl);
		lo = uq[(size_t)fmax(ceil(0.05 * (double)B) - 1, 0)];
		hi = uq[(size_t)fmax(ceil(0.95 * (double)B) - 1, 0)];
		for (ob = 0; ob < B; ob++) {
			double th = hc_rules_exact_real(cfg, exact_rules[q], br->vbar[ob], br->cbar[ob], m, 12);

			x[ob] = isnan(th) ? INFINITY : th;
		}
		qsort(x, B, sizeof *x, cmp_dbl);
		/* a level of 0 or 1 reaches past every replicate: the extreme one */
		res[q].count_p05 = order_count(x, B, lo);
		res[q].count_p95 = order_count(x, B, hi > 0 ? hi : 1.0 / (double)B);
		res[q].bootstrapped = 1;
	}
	free(oidx);
	free(iidx);
	free(w);
	free(u);
	free(x);
}

int main(int argc, char **argv)
{
	size_t trials = 1000, nrep = 999, strials = 0, m = 60, tt[2] = { 120, 240 };
	unsigned long seed = 20261203;
	size_t snrep = 99, fixed_block = 0, lsum[NLAWS][2] = { { 0 } }, inner = 0;
	/* calibrated (--calibrate C) coverage and exclusions per cell and rule */
	size_t cov_cal[NLAWS][2][NEXACT] = { { { 0 } } }, excl_cal[NLAWS][2][NEXACT] = { { { 0 } } };
	size_t cov_stu_all[NLAWS][2][NEXACT] = { { { 0 } } };
	int use_law[NLAWS] = { 1, 1, 1 };
	/* McLeod-Li flags (p < HC_ENOUGH_CLUSTERING_ALPHA) per cell, and the
	 * near-floor studentized coverage among flagged and unflagged trials. */
	size_t flagged[NLAWS][2] = { { 0 } }, cov_flag[NLAWS][2] = { { 0 } }, cov_unflag[NLAWS][2] = { { 0 } };
	double *beta, *a, vtrue, ctrue, sb = 0, sb2 = 0;
	char **ids, *names;
	int32_t *dates;
	struct rules_config cfg;
	struct hc_error err;
	size_t i, j, it, law, k, true_count[NEXACT];
	int true_met[NEXACT];
	gsl_rng *g;

	for (k = 1; k + 1 < (size_t)argc; k += 2) {
		if (!strcmp(argv[k], "--trials")) trials = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--replicates")) nrep = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--sampled-trials")) strials = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--seed")) seed = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--securities")) m = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--block-length")) fixed_block = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--sampled-replicates")) snrep = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--calibrate")) inner = strtoul(argv[k + 1], NULL, 10);
		else if (!strcmp(argv[k], "--laws")) {
			use_law[LAW_NORMAL] = strstr(argv[k + 1], "normal") != NULL;
			use_law[LAW_T4] = strstr(argv[k + 1], "t4") != NULL;
			use_law[LAW_GARCH] = strstr(argv[k + 1], "garch") != NULL;
		} else {
			fprintf(stderr, "coverage_sim: unknown option '%s'\n", argv[k]);
			return 2;
		}
	}
	gsl_set_error_handler_off();
	g = gsl_rng_alloc(gsl_rng_mt19937);
	gsl_rng_set(g, seed);
	beta = malloc(m * sizeof *beta);
	a = malloc(m * m * sizeof *a);
	for (i = 0; i < m; i++) {
		beta[i] = 0.6 + 0.8 * gsl_rng_uniform(g);
		sb += beta[i];
		sb2 += beta[i] * beta[i];
	}
	for (i = 0; i < m; i++)
		for (j = 0; j < m; j++)
			a[i * m + j] = beta[i] * beta[j] * FACTOR_VAR + (i == j ? IDIO_VAR : 0);
	vtrue = sb2 / (double)m * FACTOR_VAR + IDIO_VAR;
	ctrue = (sb * sb - sb2) / ((double)m * (double)(m - 1)) * FACTOR_VAR;
	ids = malloc(m * sizeof *ids);
	names = malloc(m * 8);
	dates = malloc((tt[1] + 1) * sizeof *dates);
	for (i = 0; i < m; i++) {
		snprintf(names + 8 * i, 8, "LIR%03u", (unsigned)(i + 1) % 1000);
		ids[i] = names + 8 * i;
	}
	for (k = 0; k <= tt[1]; k++)
		dates[k] = (int32_t)(12784 + 30 * k);
	hc_rules_config_init(&cfg);
	for (k = 0; k < NEXACT; k++)
		true_met[k] = hc_rules_exact_count(&cfg, exact_rules[k], vtrue, ctrue, m, 12, &true_count[k]) == 1;

	printf("One-factor model, %zu securities; %zu trials a cell (exact rules), %zu bootstrap replicates, seed %lu.\n\n",
	       m, trials, nrep, seed);
	printf("| law | T | rule | true count | studentized covered | studentized %% | BCa %% | percentile %% | "
	       "studentized excludes estimate | BCa excludes estimate |\n");
	printf("|---|---|---|---|---|---|---|---|---|---|\n");
	for (law = 0; law < NLAWS; law++)
		for (it = 0; it < 2 && use_law[law]; it++) {
			size_t t = tt[it], cov_bca[NEXACT] = { 0 }, cov_pct[NEXACT] = { 0 }, excl[NEXACT] = { 0 };
			size_t cov_stu[NEXACT] = { 0 }, excl_stu[NEXACT] = { 0 };
			size_t trial;
			double *x = malloc(m * t * sizeof *x), *f = malloc(t * sizeof *f);

			for (trial = 0; trial < trials; trial++) {
				struct universe u;
				struct bootstrap_base *b = NULL;
				struct bootstrap_result *br = NULL;
				struct bootstrap_options bo;
				struct rule_result res[NEXACT], pct[NEXACT], stu[NEXACT];
				double *w = malloc(t * sizeof *w), vhat, chat, *jv = NULL, *jc = NULL;
				size_t nj = 0;
				int flag;

				simulate(g, (int)law, beta, m, t, x, f);
				memset(&u, 0, sizeof u);
				u.m = m;
				u.t = t;
				u.x = x;
				u.periods_per_year = 12;
				if (hc_bootstrap_base_alloc(&b, &u, &err) != HC_OK) {
					fprintf(stderr, "coverage_sim: %s\n", err.message);
					return 1;
				}
				for (k = 0; k < t; k++)
					w[k] = 1;
				hc_bootstrap_moments(b, w, &vhat, &chat);
				free(w);
				hc_bootstrap_options_init(&bo);
				bo.replicates = nrep;
				bo.kind = BOOTSTRAP_STATIONARY;
				bo.seed = seed + 7919 * trial + 104729 * (law * 2 + it);
				bo.threads = 1;
				if (fixed_block)
					bo.block_length = fixed_block;
				else if (hc_bootstrap_auto_block_length(b, &bo.block_length, &err) != HC_OK) {
					fprintf(stderr, "coverage_sim: %s\n", err.message);
					return 1;
				}
				lsum[law][it] += bo.block_length;
				{
					size_t lags = 0;
					double q, pv;

					hc_bootstrap_clustering(b, &lags, &q, &pv);
					flag = pv < HC_ENOUGH_CLUSTERING_ALPHA;
					flagged[law][it] += (size_t)flag;
				}
				if (
				    hc_bootstrap_run(&br, b, &bo, &err) != HC_OK ||
				    (t / bo.block_length >= 2 &&
				     hc_bootstrap_jackknife(b, bo.block_length, &jv, &jc, &nj, &err) != HC_OK)) {
					fprintf(stderr, "coverage_sim: %s\n", err.message);
					return 1;
				}
				for (k = 0; k < NEXACT; k++) {
					hc_rules_exact(&cfg, exact_rules[k], vhat, chat, m, 12, &res[k], &err);
					pct[k] = res[k];
					stu[k] = res[k];
				}
				hc_rules_bootstrap_exact_t(&cfg, b, &bo, bo.block_length, br->vbar, br->cbar, nrep, vhat, chat, 12,
							   stu, NEXACT, &err);
				hc_rules_bootstrap_exact_bca(&cfg, br->vbar, br->cbar, nrep, jv, jc, nj, vhat, chat, m, 12,
							     res, NEXACT, &err);
				hc_rules_bootstrap_exact(&cfg, br->vbar, br->cbar, nrep, m, 12, pct, NEXACT, &err);
				if (inner) {
					struct rule_result cal[NEXACT];

					for (k = 0; k < NEXACT; k++)
						hc_rules_exact(&cfg, exact_rules[k], vhat, chat, m, 12, &cal[k], &err);
					calibrated(&cfg, b, &bo, br, inner, vhat, chat, m, cal);
					for (k = 0; k < NEXACT; k++) {
						cov_cal[law][it][k] += covers(&cal[k], true_met[k], true_count[k]);
						excl_cal[law][it][k] += excludes(&cal[k]);
						cov_stu_all[law][it][k] += covers(&stu[k], true_met[k], true_count[k]);
					}
				}
				for (k = 0; k < NEXACT; k++) {
					cov_bca[k] += covers(&res[k], true_met[k], true_count[k]);
					cov_pct[k] += covers(&pct[k], true_met[k], true_count[k]);
					excl[k] += excludes(&res[k]);
					cov_stu[k] += covers(&stu[k], true_met[k], true_count[k]);
					excl_stu[k] += excludes(&stu[k]);
				}
				/* exact_rules[0] is near-floor */
				if (flag)
					cov_flag[law][it] += covers(&stu[0], true_met[0], true_count[0]);
				else
					cov_unflag[law][it] += covers(&stu[0], true_met[0], true_count[0]);
				hc_free(jv);
				hc_free(jc);
				hc_bootstrap_result_free(br);
				hc_bootstrap_base_free(b);
			}
			fprintf(stderr, "%s T=%zu: mean block length %.2f\n", law_names[law], t,
				(double)lsum[law][it] / (double)trials);
			for (k = 0; k < NEXACT; k++)
				printf("| %s | %zu | %s | %zu | %zu/%zu | %.1f | %.1f | %.1f | %zu | %zu |\n", law_names[law], t,
				       hc_rules_name(exact_rules[k]), true_count[k], cov_stu[k], trials,
				       100.0 * (double)cov_stu[k] / (double)trials,
				       100.0 * (double)cov_bca[k] / (double)trials,
				       100.0 * (double)cov_pct[k] / (double)trials, excl_stu[k], excl[k]);
			fflush(stdout);
			free(x);
			free(f);
		}

	printf("\nVolatility clustering check (McLeod & Li 1983, Q(12) on squared equal-weight returns, "
	       "p < %.0f%%): share of trials flagged, and near-floor's studentized coverage among the flagged "
	       "and the unflagged trials.\n\n", 100 * HC_ENOUGH_CLUSTERING_ALPHA);
	printf("| law | T | flagged | near-floor covered, flagged | near-floor covered, not flagged |\n"
	       "|---|---|---|---|---|\n");
	for (law = 0; law < NLAWS; law++)
		for (it = 0; it < 2 && use_law[law]; it++) {
			size_t nf = flagged[law][it], nu = trials - flagged[law][it];

			printf("| %s | %zu | %zu/%zu (%.1f%%) | %zu/%zu | %zu/%zu |\n", law_names[law], tt[it], nf, trials,
			       100.0 * (double)nf / (double)trials, cov_flag[law][it], nf, cov_unflag[law][it], nu);
		}
	fflush(stdout);

	if (inner) {
		printf("\nCalibrated (double-bootstrap) percentile interval, %zu inner replicates per outer replicate "
		       "(Beran 1987; Hall & Martin 1988), against the studentized interval of the same trials.\n\n", inner);
		printf("| law | T | rule | true count | studentized covered | calibrated covered | calibrated %% | "
		       "calibrated excludes estimate |\n|---|---|---|---|---|---|---|---|\n");
		for (law = 0; law < NLAWS; law++)
			for (it = 0; it < 2 && use_law[law]; it++)
				for (k = 0; k < NEXACT; k++)
					printf("| %s | %zu | %s | %zu | %zu/%zu | %zu/%zu | %.1f | %zu |\n", law_names[law], tt[it],
					       hc_rules_name(exact_rules[k]), true_count[k], cov_stu_all[law][it][k], trials,
					       cov_cal[law][it][k], trials, 100.0 * (double)cov_cal[law][it][k] / (double)trials,
					       excl_cal[law][it][k]);
		fflush(stdout);
	}

	if (strials) {
		struct rules_config sc = cfg;
		struct sampler_options so;
		struct rule_result tr[3];
		size_t nt, strue[2] = { 0, 0 };
		int smet[2] = { 0, 0 };

		sc.selected = RULES_FLAG(RULES_BAND) | RULES_FLAG(RULES_ALEXEEV_TAPON_SAMPLED);
		hc_sampler_options_init(&so);
		so.paths = 20000;
		so.seed = seed;
		so.threads = 1;
		so.periods_per_year = 12;
		struct covmatrix tcm = { 0 };
		struct hc_source tsrc;

		tcm.m = m;
		tcm.a = a;
		hc_source_init_matrix(&tsrc, &tcm, 0);
		if (hc_rules_sampled(&sc, &tsrc, &so, vtrue, ctrue, tr, &nt, NULL, &err) != HC_OK) {
			fprintf(stderr, "coverage_sim: %s\n", err.message);
			return 1;
		}
		for (k = 0; k < nt; k++) {
			smet[k] = tr[k].met;
			strue[k] = tr[k].count;
		}
		printf("\nSampled rules: %zu trials a cell, %zu bootstrap replicates, 200 portfolios a size in each "
		       "replicate (true counts from 20000 portfolios of the true covariance matrix); percentile "
		       "intervals.\n\n", strials, snrep);
		printf("| law | T | rule | true count | covered | %% | excludes estimate |\n|---|---|---|---|---|---|---|\n");
		for (law = 0; law < NLAWS; law++)
			for (it = 0; it < 2; it++) {
				size_t t = tt[it], cov[2] = { 0, 0 }, excl[2] = { 0, 0 }, trial;
				double *x = malloc(m * t * sizeof *x), *f = malloc(t * sizeof *f);

				for (trial = 0; trial < strials; trial++) {
					struct universe u;
					struct hc_source usrc;
					struct bootstrap_base *b = NULL;
					struct bootstrap_options bo;
					struct rule_result rr[3];
					double *w = malloc(t * sizeof *w), vhat, chat;
					size_t nr;

					simulate(g, (int)law, beta, m, t, x, f);
					memset(&u, 0, sizeof u);
					u.m = m;
					u.t = t;
					u.x = x;
					u.periods_per_year = 12;
					u.ids = ids;
					u.dates = dates;
					hc_bootstrap_base_alloc(&b, &u, &err);
					for (k = 0; k < t; k++)
						w[k] = 1;
					hc_bootstrap_moments(b, w, &vhat, &chat);
					free(w);
					so.paths = 200;
					so.seed = seed + trial;
					hc_source_init_series(&usrc, &u);
					if (hc_rules_sampled(&sc, &usrc, &so, vhat, chat, rr, &nr, NULL, &err) != HC_OK) {
						fprintf(stderr, "coverage_sim: %s\n", err.message);
						return 1;
					}
					hc_bootstrap_options_init(&bo);
					bo.replicates = snrep;
					bo.kind = BOOTSTRAP_STATIONARY;
					bo.seed = seed + 7919 * trial;
					bo.threads = 1;
					hc_bootstrap_auto_block_length(b, &bo.block_length, &err);
					if (hc_rules_bootstrap_sampled(&sc, &u, b, &bo, &so, rr, nr, &err) != HC_OK) {
						fprintf(stderr, "coverage_sim: %s\n", err.message);
						return 1;
					}
					for (k = 0; k < nr; k++) {
						cov[k] += covers(&rr[k], smet[k], strue[k]);
						excl[k] += excludes(&rr[k]);
					}
					hc_bootstrap_base_free(b);
				}
				for (k = 0; k < 2; k++)
					printf("| %s | %zu | %s | %zu | %zu/%zu | %.1f | %zu |\n", law_names[law], t,
					       k == 0 ? "band" : "alexeev-tapon-sampled", strue[k], cov[k], strials,
					       100.0 * (double)cov[k] / (double)strials, excl[k]);
				fflush(stdout);
				free(x);
				free(f);
			}
	}
	free(beta);
	free(a);
	free(ids);
	free(names);
	free(dates);
	gsl_rng_free(g);
	return 0;
}
