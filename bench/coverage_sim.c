/*
 * coverage_sim.c - measured coverage of enough's 90% intervals for the
 * holding count, on simulated one-factor universes whose true averages, and
 * so whose true counts, are known.
 *
 * usage: coverage_sim [--trials N] [--replicates B] [--sampled-trials N]
 *                     [--sampled-replicates B] [--seed S] [--securities M]
 *                     [--block-length L]
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

int main(int argc, char **argv)
{
	size_t trials = 1000, nrep = 999, strials = 0, m = 60, tt[2] = { 120, 240 };
	unsigned long seed = 20261203;
	size_t snrep = 99, fixed_block = 0, lsum[NLAWS][2] = { { 0 } };
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
		else {
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
		for (it = 0; it < 2; it++) {
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
		for (it = 0; it < 2; it++) {
			size_t nf = flagged[law][it], nu = trials - flagged[law][it];

			printf("| %s | %zu | %zu/%zu (%.1f%%) | %zu/%zu | %zu/%zu |\n", law_names[law], tt[it], nf, trials,
			       100.0 * (double)nf / (double)trials, cov_flag[law][it], nf, cov_unflag[law][it], nu);
		}
	fflush(stdout);

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
