/*
 * horizon.c - ending wealth over H years by holding count, rebalanced and
 * buy-and-hold (horizon.h, docs/horizon.md).
 *
 * One path: the sampler's ordering of the securities (hc_sampler_members),
 * and h period indices (a window, or a stationary bootstrap path: Politis &
 * Romano, 1994, JASA 89(428), through hc_bootstrap_indices_n).  The history
 * is transposed once to period-major rows, so each period of the path reads
 * one row of M returns; the members' returns are summed in the ordering's
 * order, and each size's rebalanced wealth takes its factor when the
 * running sum reaches it, while every member's own compounded growth (for
 * buy-and-hold) is kept in the workspace: O(n_max h) a path, plus O(M h)
 * for the universe held the same two ways when it is the benchmark.
 */
#include "holdcount/horizon.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/bootstrap.h"
#include "holdcount/measures.h"
#include "holdcount/memory.h"
#include "holdcount/paths.h"
#include "holdcount/sampler.h"
#include "holdcount/universe.h"

/* The tag that keys the horizon's window and bootstrap streams (paths.h):
 * distinct from the sampler's own seeds. */
#define HORIZON_TAG 0x686f72697a6f6e31ULL

void hc_horizon_options_init(struct hc_horizon_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->years = HC_HORIZON_DEFAULT_YEARS;
	opt->paths = HC_HORIZON_DEFAULT_PATHS;
	opt->seed = 1;
	opt->route = HC_HORIZON_AUTO;
	opt->rate = NAN;
	opt->benchmark = NULL;
	opt->lag_limit = HC_HORIZON_DEFAULT_LAG_LIMIT;
}

static int draw_periods(uint64_t seed, size_t k, size_t t, size_t h, int route, size_t l, size_t *periods,
			struct hc_error *err)
{
	size_t s, start;
	uint64_t st;

	if (h < 1 || t < 1)
		return hc_error(err, HC_EUSAGE, "a path needs at least one period");
	if (route == HC_HORIZON_WINDOWS) {
		if (h > t)
			return hc_error(err, HC_EUSAGE, "a window of %zu periods does not fit in %zu", h, t);
		st = hc_paths_stream(seed ^ HORIZON_TAG, (uint64_t)k);
		start = (size_t)hc_paths_uniform_below(&st, (uint64_t)(t - h + 1));
		for (s = 0; s < h; s++)
			periods[s] = start + s;
		return HC_OK;
	}
	if (route != HC_HORIZON_BOOTSTRAP)
		return hc_error(err, HC_EUSAGE, "unknown horizon route %d", route);
	return hc_bootstrap_indices_n(BOOTSTRAP_STATIONARY, t, h, l, seed ^ HORIZON_TAG, k, periods, err);
}

int hc_horizon_draw(uint64_t seed, size_t k, size_t m, size_t t, size_t h, int route, size_t block_length,
		    uint32_t *members, size_t *periods, struct hc_error *err)
{
	int rc = hc_sampler_members(seed, k, m, members, err);

	return rc ? rc : draw_periods(seed, k, t, h, route, block_length, periods, err);
}

/* The growth factor of a return: a loss of 100% or more ends at 0. */
static inline double grow(double r)
{
	double f = 1.0 + r;

	return f > 0 ? f : 0.0;
}

struct hjob {
	size_t m, t, h, nmax, nsizes, nuniq, l;
	int route, universe_bench;
	int ragged;                /* a history with gaps (HC_SOURCE_RAGGED): ragged_path */
	uint64_t seed;
	const double *xt;          /* t*m period-major */
	const double *ubar;        /* t universe returns (index order): equal-weight, or by market value */
	const double *bench;       /* t benchmark returns, or NULL */
	const double *cw;          /* m market values (security order), or NULL: equal weights */
	double *bwealth;           /* paths: the benchmark's wealth on each path (bench given) */
	const size_t *sizes;       /* nsizes as asked */
	const size_t *uniq;        /* nuniq ascending distinct sizes */
	const size_t *slot;        /* nsizes: index into uniq */
	double rate_wealth;
	double cw_total;           /* sum of cw over the universe, in security order */
	double *wealth;            /* paths * nsizes * 2 */
	double *uwealth;           /* paths * 2 (NaN when not computed) */
	int failed;
};

struct hws {
	uint32_t *idx;             /* m */
	size_t *per;               /* h */
	double *g;                 /* nmax member growths */
	double *ug;                /* m, the universe's growths (universe benchmark) */
	double *reb;               /* nuniq */
	double *bh;                /* nuniq */
	double *csum;              /* nuniq: market value of each size's members (weighted) */
	/* ragged histories (ragged_path), nuniq + 1 entries (the last the universe) */
	uint32_t *ord;             /* m: the ordering's securities listed at the window's start */
	unsigned char *state;      /* m: HELD, GONE (delisted), or DYING (this period) */
	double *f, *cash;          /* reinvestment factor; the value once every holding is gone (NaN: not) */
	size_t *lim;               /* each size, then the universe's count */
};

static void ws_release(void *wsv)
{
	struct hws *w = wsv;

	hc_free(w->idx);
	hc_free(w->per);
	hc_free(w->g);
	hc_free(w->ug);
	hc_free(w->reb);
	hc_free(w->bh);
	hc_free(w->csum);
	hc_free(w->ord);
	hc_free(w->state);
	hc_free(w->f);
	hc_free(w->cash);
	hc_free(w->lim);
	memset(w, 0, sizeof *w);
}

static int ws_init(void *job, void *wsv)
{
	const struct hjob *j = job;
	struct hws *w = wsv;

	w->idx = hc_mallocarray(j->m, sizeof *w->idx);
	w->per = hc_mallocarray(j->h, sizeof *w->per);
	w->g = hc_mallocarray(j->ragged ? j->m : j->nmax, sizeof *w->g);
	w->ug = hc_mallocarray(j->m, sizeof *w->ug);
	w->reb = hc_mallocarray(j->nuniq + 1, sizeof *w->reb);
	w->bh = hc_mallocarray(j->nuniq + 1, sizeof *w->bh);
	w->csum = hc_mallocarray(j->nuniq, sizeof *w->csum);
	if (j->ragged) {
		w->ord = hc_mallocarray(j->m, sizeof *w->ord);
		w->state = hc_mallocarray(j->m, sizeof *w->state);
		w->f = hc_mallocarray(j->nuniq + 1, sizeof *w->f);
		w->cash = hc_mallocarray(j->nuniq + 1, sizeof *w->cash);
		w->lim = hc_mallocarray(j->nuniq + 1, sizeof *w->lim);
	}
	if (!w->idx || !w->per || !w->g || !w->ug || !w->reb || !w->bh || !w->csum ||
	    (j->ragged && (!w->ord || !w->state || !w->f || !w->cash || !w->lim))) {
		ws_release(w);
		return -1;
	}
	return 0;
}

/* The benchmark universe weighted as the portfolios are: its return in each
 * period sum_i c_i r_is / sum_i c_i, in security order (replacing ubar). */
static void cap_weight_universe(struct hjob *J, const double *c, const double *xt, double *ubar, size_t m, size_t t)
{
	size_t s, i;

	J->cw = c;
	J->cw_total = 0.0;
	for (i = 0; i < m; i++)
		J->cw_total += c[i];
	for (s = 0; s < t; s++) {
		double sum = 0.0;

		for (i = 0; i < m; i++)
			sum += c[i] * xt[s * m + i];
		ubar[s] = sum / J->cw_total;
	}
}

/* Market value held by each size's members on this path: the running sum
 * over the ordering. */
static void weight_sums(const struct hjob *J, struct hws *w)
{
	double c = 0.0;
	size_t i = 0, q;

	for (q = 0; q < J->nuniq; q++) {
		for (; i < J->uniq[q]; i++)
			c += J->cw[w->idx[i]];
		w->csum[q] = c;
	}
}

/* One period with capitalisation weights: each size's rebalanced return is
 * sum c_i r_i / sum c_i over its members (a running sum over the
 * ordering), and every member's own growth is compounded for
 * buy-and-hold. */
static void weighted_period(const struct hjob *J, struct hws *w, const double *row)
{
	double sum = 0.0;
	size_t i = 0, q;

	for (q = 0; q < J->nuniq; q++) {
		for (; i < J->uniq[q]; i++) {
			double r = row[w->idx[i]];

			sum += J->cw[w->idx[i]] * r;
			w->g[i] *= grow(r);
		}
		w->reb[q] *= grow(sum / w->csum[q]);
	}
}

/* The benchmark series over the path's own periods: the same periods as
 * the portfolios', so their correlation is kept. */
static void bench_path(struct hjob *J, const struct hws *w, size_t k)
{
	double bw = 1.0;
	size_t s;

	if (!J->bench)
		return;
	for (s = 0; s < J->h; s++)
		bw *= grow(J->bench[w->per[s]]);
	J->bwealth[k] = bw;
}

enum { HELD = 0, GONE = 1, DYING = 2 };

/* Holdings delisted this period (state DYING) leave each portfolio that
 * holds them; buy-and-hold reinvests their value in the holdings left in
 * proportion to those holdings' current values.  Every holding left is then
 * scaled by the same factor, so each portfolio keeps one factor f: its
 * value is f sum_i G_i / n over the holdings left (G_i the holding's own
 * growth), and a departure multiplies f by (sum before) / (sum after).
 * When none is left the portfolio holds its value as cash. */
static void ragged_departures(struct hws *w, size_t nq, size_t na)
{
	double before = 0.0, after = 0.0;
	size_t q, i = 0;

	for (q = 0; q < nq; q++) {
		for (; i < w->lim[q]; i++)
			if (w->state[i] != GONE) {
				before += w->g[i];
				if (w->state[i] == HELD)
					after += w->g[i];
			}
		if (!isnan(w->cash[q]))
			continue;
		if (after > 0)
			w->f[q] *= before / after;
		else
			w->cash[q] = w->f[q] * before / (double)w->lim[q];
	}
	for (i = 0; i < na; i++)
		if (w->state[i] == DYING)
			w->state[i] = GONE;
}

/*
 * One path on a history with gaps (windows only): the portfolio of n holds
 * the first n securities of the ordering listed at the window's first
 * period (a return there); the universe, the last "size", holds all of
 * them.  A holding with no return in a later period of the window has been
 * delisted then (a later return of it is not used): rebalanced portfolios
 * take equal weights over the holdings left each period, buy-and-hold ones
 * reinvest its value in the rest (ragged_departures).  A portfolio with no
 * holding left keeps its value (cash, no return).
 */
static void ragged_path(struct hjob *J, struct hws *w, size_t k)
{
	size_t m = J->m, nq = J->nuniq + 1, na = 0, i, q, s, j;
	const double *first;

	first = J->xt + w->per[0] * m;
	for (i = 0; i < m; i++)
		if (!isnan(first[w->idx[i]]))
			w->ord[na++] = w->idx[i];
	for (q = 0; q < nq; q++) {
		w->lim[q] = q < J->nuniq ? (J->uniq[q] < na ? J->uniq[q] : na) : na;
		w->reb[q] = w->f[q] = 1.0;
		w->cash[q] = NAN;
	}
	for (i = 0; i < na; i++) {
		w->g[i] = 1.0;
		w->state[i] = HELD;
	}
	for (s = 0; s < J->h; s++) {
		const double *row = J->xt + w->per[s] * m;
		double sum = 0.0;
		size_t cnt = 0, dying = 0;

		for (i = 0; i < na; i++)
			if (w->state[i] == HELD && isnan(row[w->ord[i]])) {
				w->state[i] = DYING;
				dying++;
			}
		if (dying)
			ragged_departures(w, nq, na);
		for (i = 0, q = 0; q < nq; q++) {
			for (; i < w->lim[q]; i++)
				if (w->state[i] == HELD) {
					double r = row[w->ord[i]];

					sum += r;
					cnt++;
					w->g[i] *= grow(r);
				}
			if (cnt)
				w->reb[q] *= grow(sum / (double)cnt);
		}
	}
	{
		double sum = 0.0;

		for (i = 0, q = 0; q < nq; q++) {
			for (; i < w->lim[q]; i++)
				if (w->state[i] == HELD)
					sum += w->g[i];
			w->bh[q] = !isnan(w->cash[q]) ? w->cash[q] : w->f[q] * sum / (double)w->lim[q];
		}
	}
	J->uwealth[k * 2 + HC_HORIZON_REBALANCED] = w->reb[J->nuniq];
	J->uwealth[k * 2 + HC_HORIZON_BUY_HOLD] = w->bh[J->nuniq];
	for (j = 0; j < J->nsizes; j++) {
		double *out = J->wealth + (k * J->nsizes + j) * 2;

		out[HC_HORIZON_REBALANCED] = w->reb[J->slot[j]];
		out[HC_HORIZON_BUY_HOLD] = w->bh[J->slot[j]];
	}
}

static void horizon_path(void *job, void *wsv, size_t k)
{
	struct hjob *J = job;
	struct hws *w = wsv;
	size_t m = J->m, i, q, s, j;
	double ureb = 1.0, ubh = NAN, sum, *out;

	if (hc_horizon_draw(J->seed, k, m, J->t, J->h, J->route, J->l, w->idx, w->per, NULL)) {
#pragma omp atomic write
		J->failed = 1;
		return;
	}
	bench_path(J, w, k);
	if (J->ragged) {
		ragged_path(J, w, k);
		return;
	}
	for (i = 0; i < J->nmax; i++)
		w->g[i] = 1.0;
	for (q = 0; q < J->nuniq; q++)
		w->reb[q] = 1.0;
	if (J->universe_bench)
		for (i = 0; i < m; i++)
			w->ug[i] = 1.0;
	if (J->cw)
		weight_sums(J, w);
	for (s = 0; s < J->h; s++) {
		const double *row = J->xt + w->per[s] * m;

		if (J->cw) {
			weighted_period(J, w, row);
		} else {
			sum = 0.0;
			i = 0;
			for (q = 0; q < J->nuniq; q++) {
				size_t n = J->uniq[q];
				double a0 = 0.0, a1 = 0.0, a2 = 0.0, a3 = 0.0;

				/* Four fixed lanes between two sizes, so the adds do not
				 * wait on each other; the grouping depends on the sizes
				 * alone, never on the thread. */
				for (; i + 4 <= n; i += 4) {
					double r0 = row[w->idx[i]], r1 = row[w->idx[i + 1]];
					double r2 = row[w->idx[i + 2]], r3 = row[w->idx[i + 3]];

					a0 += r0;
					a1 += r1;
					a2 += r2;
					a3 += r3;
					w->g[i] *= grow(r0);
					w->g[i + 1] *= grow(r1);
					w->g[i + 2] *= grow(r2);
					w->g[i + 3] *= grow(r3);
				}
				for (; i < n; i++) {
					double r = row[w->idx[i]];

					a0 += r;
					w->g[i] *= grow(r);
				}
				sum += (a0 + a1) + (a2 + a3);
				w->reb[q] *= grow(sum / (double)n);
			}
		}
		if (J->universe_bench) {
			ureb *= grow(J->ubar[w->per[s]]);
			if (J->nmax < m)
				for (i = 0; i < m; i++)
					w->ug[i] *= grow(row[i]);
		}
	}
	sum = 0.0;
	i = 0;
	for (q = 0; q < J->nuniq; q++) {
		size_t n = J->uniq[q];

		for (; i < n; i++)
			sum += J->cw ? J->cw[w->idx[i]] * w->g[i] : w->g[i];
		w->bh[q] = sum / (J->cw ? w->csum[q] : (double)n);
	}
	if (J->universe_bench) {
		/* With every security drawn, each one's growth is already in g,
		 * the same factors multiplied in the same order (the same bits):
		 * put them back in security order rather than compound them again. */
		if (J->nmax == m)
			for (i = 0; i < m; i++)
				w->ug[w->idx[i]] = w->g[i];
		sum = 0.0;
		for (i = 0; i < m; i++)
			sum += J->cw ? J->cw[i] * w->ug[i] : w->ug[i];
		ubh = sum / (J->cw ? J->cw_total : (double)m);
	} else {
		ureb = NAN;
	}
	J->uwealth[k * 2 + HC_HORIZON_REBALANCED] = ureb;
	J->uwealth[k * 2 + HC_HORIZON_BUY_HOLD] = ubh;
	out = J->wealth + k * J->nsizes * 2;
	for (j = 0; j < J->nsizes; j++) {
		q = J->slot[j];
		if (J->universe_bench && J->sizes[j] == m) {
			/* The portfolio of all M is the universe: the same figures,
			 * bit for bit (its members summed in another order could
			 * differ by rounding and "lag" themselves). */
			out[j * 2 + HC_HORIZON_REBALANCED] = ureb;
			out[j * 2 + HC_HORIZON_BUY_HOLD] = ubh;
		} else {
			out[j * 2 + HC_HORIZON_REBALANCED] = w->reb[q];
			out[j * 2 + HC_HORIZON_BUY_HOLD] = w->bh[q];
		}
	}
}

static int cmp_size(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	return (x > y) - (x < y);
}

/* Mean, s.e. and quantiles of v[0..K) (reordered), lag share against
 * bench (per path, stride bstride; NULL: no lag). */
static void summarise(struct hc_horizon_point *p, double *v, size_t K, const double *bench, size_t bstride,
		      const double *wealth_for_lag, size_t wstride)
{
	long double s1 = 0, ss = 0, lag = 0;
	double mean, var;
	size_t k;

	for (k = 0; k < K; k++)
		s1 += v[k];
	mean = (double)(s1 / (long double)K);
	for (k = 0; k < K; k++)
		ss += ((long double)v[k] - mean) * ((long double)v[k] - mean);
	var = K > 1 ? (double)(ss / (long double)(K - 1)) : NAN;
	p->mean = mean;
	p->se = sqrt(var / (double)K);
	if (bench) {
		for (k = 0; k < K; k++)
			lag += wealth_for_lag[k * wstride] < bench[k * bstride];
		p->lag = (double)(lag / (long double)K);
		p->lag_se = K > 1 ? sqrt(p->lag * (1 - p->lag) * (double)K / (double)(K - 1) / (double)K) : NAN;
	} else {
		p->lag = p->lag_se = NAN;
	}
	p->p05 = hc_measures_quantile(v, K, 0.05);
	p->p50 = hc_measures_quantile(v, K, 0.50);
	p->p95 = hc_measures_quantile(v, K, 0.95);
}

/* The benchmark's own ending wealth across the paths: a series' varies
 * with the path, a rate's does not; the universe's is in r->universe. */
static void summarise_benchmark(struct hc_horizon_result *r, const struct hjob *J, double *col, size_t K,
				const struct hc_horizon_options *opt)
{
	size_t k;

	if (!J->bwealth && !opt->rate_given) {
		struct hc_horizon_point *b = &r->bench;

		b->mean = b->se = b->p05 = b->p50 = b->p95 = b->lag = b->lag_se = NAN;
		return;
	}
	for (k = 0; k < K; k++)
		col[k] = J->bwealth ? J->bwealth[k] : J->rate_wealth;
	summarise(&r->bench, col, K, NULL, 0, NULL, 0);
}

/* Domian, Louton & Racine (2007, The Financial Review 42(4), 557-570):
 * the smallest holding count whose buy-and-hold portfolios end behind the
 * benchmark with probability at most p.  Here: the smallest count asked
 * (uniq ascending) whose sampled lag share is at most p; no monotony is
 * assumed, the grid is read from the smallest count up. */
static void lag_rule(struct hc_horizon_result *r, const size_t *uniq, size_t nuniq, double p)
{
	size_t q, j;

	r->lag_limit = p;
	r->rule_count = 0;
	r->rule_lag = r->rule_lag_se = NAN;
	for (q = 0; q < nuniq; q++)
		for (j = 0; j < r->nsizes; j++)
			if (r->sizes[j] == uniq[q]) {
				const struct hc_horizon_point *pt = &r->pts[j * HC_HORIZON_WEIGHTINGS + HC_HORIZON_BUY_HOLD];

				if (pt->lag <= p) {
					r->rule_count = uniq[q];
					r->rule_lag = pt->lag;
					r->rule_lag_se = pt->lag_se;
					return;
				}
				break;
			}
}

static const char *const wkey[HC_HORIZON_WEIGHTINGS] = { "rebal", "hold" };
static const char *const wtitle[HC_HORIZON_WEIGHTINGS] = { "rebal.", "hold" };

/* The benchmark's name and its ending wealth across the paths (a series
 * or a rate; none for the universe, whose figures are the universe_ ones). */
static int add_benchmark_fields(struct report *rep, const struct hc_horizon_result *r,
				const struct hc_horizon_options *opt)
{
	const char *name = opt->benchmark ? opt->benchmark->name : NULL;
	int none = !opt->benchmark && !opt->rate_given;
	char text[160];

	if (opt->benchmark)
		snprintf(text, sizeof text, "%s", name ? name : "-");
	else if (opt->rate_given)
		snprintf(text, sizeof text, "a fixed rate of %g%% a year", opt->rate * 100);
	else
		snprintf(text, sizeof text, "%s", opt->market_values ? "the universe weighted by market value"
			 : "the equal-weight universe");
	if (hc_report_add_text(rep, "benchmark_name", "benchmark name", text))
		return -1;
	if (none)
		return hc_report_add_none(rep, "benchmark_p05", "benchmark ending wealth: 5%") ||
		       hc_report_add_none(rep, "benchmark_p50", "benchmark ending wealth: median") ||
		       hc_report_add_none(rep, "benchmark_p95", "benchmark ending wealth: 95%");
	return hc_report_add_real(rep, "benchmark_p05", "benchmark ending wealth: 5%", r->bench.p05, REPORT_STYLE_FIXED4) ||
	       hc_report_add_real(rep, "benchmark_p50", "benchmark ending wealth: median", r->bench.p50,
				  REPORT_STYLE_FIXED4) ||
	       hc_report_add_real(rep, "benchmark_p95", "benchmark ending wealth: 95%", r->bench.p95, REPORT_STYLE_FIXED4);
}

/* The Domian, Louton & Racine rule's count, its lag and s.e., in words. */
static int add_rule_fields(struct report *rep, const struct hc_horizon_result *r, const struct hc_horizon_options *opt)
{
	const char *bname = opt->benchmark ? (opt->benchmark->name ? opt->benchmark->name : "the series")
		: opt->rate_given ? "the fixed rate" : opt->market_values ? "the universe weighted by market value"
		: "the equal-weight universe";
	char text[400];

	if (r->rule_count)
		snprintf(text, sizeof text, "%zu holdings: the fewest of the counts asked whose buy-and-hold portfolios end "
			 "behind %s over %g years on at most %g%% of the paths (%.2f%%, s.e. %.2f%%; Domian, Louton & "
			 "Racine, 2007)", r->rule_count, bname, opt->years, r->lag_limit * 100, r->rule_lag * 100,
			 r->rule_lag_se * 100);
	else
		snprintf(text, sizeof text, "none of the counts asked: every one's buy-and-hold portfolios end behind %s "
			 "over %g years on more than %g%% of the paths (Domian, Louton & Racine, 2007); ask larger counts "
			 "(--sizes)", bname, opt->years, r->lag_limit * 100);
	if (hc_report_add_real(rep, "lag_limit", "lag limit (buy-and-hold)", r->lag_limit, REPORT_STYLE_PERCENT) ||
	    hc_report_add_text(rep, "lag_rule", "fewest holdings within the lag limit", text))
		return -1;
	if (!r->rule_count)
		return hc_report_add_none(rep, "lag_rule_count", "lag rule: holdings") ||
		       hc_report_add_none(rep, "lag_rule_lag", "lag rule: lag at that count") ||
		       hc_report_add_none(rep, "lag_rule_lag_se", "lag rule: its Monte Carlo s.e.");
	return hc_report_add_int(rep, "lag_rule_count", "lag rule: holdings", (long long)r->rule_count) ||
	       hc_report_add_real(rep, "lag_rule_lag", "lag rule: lag at that count", r->rule_lag, REPORT_STYLE_PERCENT) ||
	       hc_report_add_real(rep, "lag_rule_lag_se", "lag rule: its Monte Carlo s.e.", r->rule_lag_se,
				  REPORT_STYLE_PERCENT);
}

static int build_report(struct hc_horizon_result *r, const struct hc_source *src, const struct hc_horizon_options *opt,
			double ppy, size_t t)
{
	struct report *rep = hc_report_alloc();
	struct report_table *tab;
	char text[400];
	size_t j, w, c;
	int rc = HC_ENOMEM;
	static const char *const ckey[] = { "mean", "se", "p05", "p50", "p95", "lag", "lag_se" };
	static const char *const ctitle[] = { "mean", "s.e.", "5%", "median", "95%", "lag", "lag s.e." };

	if (!rep)
		return HC_ENOMEM;
	r->report = rep;
	if (hc_report_add_text(rep, "source", "source", src->name ? src->name : "-") ||
	    hc_report_add_text(rep, "input", "input", "return history") ||
	    hc_report_add_int(rep, "securities", "securities", (long long)hc_source_m(src)) ||
	    hc_report_add_int(rep, "periods", "periods in the sample", (long long)t) ||
	    hc_report_add_real(rep, "periods_per_year", "periods per year", ppy, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(rep, "horizon_years", "horizon (years)", opt->years, REPORT_STYLE_PLAIN) ||
	    hc_report_add_int(rep, "horizon_periods", "horizon (periods)", (long long)r->periods) ||
	    hc_report_add_int(rep, "paths", "random portfolios (and paths) per count", (long long)r->paths) ||
	    hc_report_add_int(rep, "seed", "seed", (long long)opt->seed))
		goto done;
	if (r->route == HC_HORIZON_WINDOWS)
		snprintf(text, sizeof text, "overlapping windows: each path a window of %zu consecutive periods, its start "
			 "uniform over the %zu starts", r->periods, t - r->periods + 1);
	else
		snprintf(text, sizeof text, "stationary bootstrap (Politis & Romano, 1994) of whole periods, mean block "
			 "length %zu period%s%s", r->block_length, r->block_length == 1 ? "" : "s",
			 opt->block_length ? " (given)" : " (Politis & White, 2004, on the equal-weight universe's returns)");
	if (hc_report_add_text(rep, "paths_from", "paths from", text))
		goto done;
	if (r->route == HC_HORIZON_BOOTSTRAP) {
		if (hc_report_add_int(rep, "block_length", "mean block length (periods)", (long long)r->block_length))
			goto done;
	} else if (hc_report_add_none(rep, "block_length", "mean block length (periods)")) {
		goto done;
	}
	if (opt->benchmark) {
		snprintf(text, sizeof text, "%s (%s): its returns on the same periods as the portfolios', path by path",
			 opt->benchmark->name ? opt->benchmark->name : "-",
			 opt->benchmark->source ? opt->benchmark->source : "-");
		if (hc_report_add_text(rep, "benchmark", "benchmark", text) ||
		    hc_report_add_none(rep, "benchmark_rate", "benchmark rate (a year)") ||
		    hc_report_add_none(rep, "benchmark_wealth", "benchmark ending wealth"))
			goto done;
	} else if (opt->rate_given) {
		snprintf(text, sizeof text, "a fixed rate of %g%% a year: ending wealth %.6g", opt->rate * 100,
			 r->rate_wealth);
		if (hc_report_add_text(rep, "benchmark", "benchmark", text) ||
		    hc_report_add_real(rep, "benchmark_rate", "benchmark rate (a year)", opt->rate, REPORT_STYLE_PERCENT) ||
		    hc_report_add_real(rep, "benchmark_wealth", "benchmark ending wealth", r->rate_wealth,
				       REPORT_STYLE_FIXED4))
			goto done;
	} else if (hc_report_add_text(rep, "benchmark", "benchmark", opt->market_values
				      ? "the universe weighted by market value on the same path, held the same way"
				      : "the equal-weight universe on the same path, held the same way") ||
		   hc_report_add_none(rep, "benchmark_rate", "benchmark rate (a year)") ||
		   hc_report_add_none(rep, "benchmark_wealth", "benchmark ending wealth")) {
		goto done;
	}
	for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++) {
		const struct hc_horizon_point *u = &r->universe[w];
		char key[64], title[96];
		const char *wt = w == HC_HORIZON_REBALANCED ? "rebalanced" : "buy-and-hold";
		const char *uw = opt->market_values ? "value-weighted" : "equal-weight";

		snprintf(key, sizeof key, "universe_%s_p05", wkey[w]);
		snprintf(title, sizeof title, "%s universe, %s: 5%%", uw, wt);
		if (hc_report_add_real(rep, key, title, u->p05, REPORT_STYLE_FIXED4))
			goto done;
		snprintf(key, sizeof key, "universe_%s_p50", wkey[w]);
		snprintf(title, sizeof title, "%s universe, %s: median", uw, wt);
		if (hc_report_add_real(rep, key, title, u->p50, REPORT_STYLE_FIXED4))
			goto done;
		snprintf(key, sizeof key, "universe_%s_p95", wkey[w]);
		snprintf(title, sizeof title, "%s universe, %s: 95%%", uw, wt);
		if (hc_report_add_real(rep, key, title, u->p95, REPORT_STYLE_FIXED4))
			goto done;
	}
	if (opt->market_values)
		snprintf(text, sizeof text, "proportional to market value (%s): each portfolio's members weighted by their "
			 "share of its market value", opt->market_values_name ? opt->market_values_name : "given");
	else
		snprintf(text, sizeof text, "equal");
	if (hc_report_add_text(rep, "weights", "weights", text) || add_benchmark_fields(rep, r, opt) ||
	    add_rule_fields(rep, r, opt))
		goto done;
	tab = hc_report_add_table(rep, "horizon", "ending wealth of 1 invested, by holding count");
	if (!tab || hc_report_table_add_column(tab, "holdings", "holdings", REPORT_STYLE_PLAIN))
		goto done;
	for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++)
		for (c = 0; c < sizeof ckey / sizeof ckey[0]; c++) {
			char key[32], title[48];

			snprintf(key, sizeof key, "%s_%s", wkey[w], ckey[c]);
			snprintf(title, sizeof title, "%s %s", wtitle[w], ctitle[c]);
			if (hc_report_table_add_column(tab, key, title,
						       c >= 5 ? REPORT_STYLE_PERCENT : REPORT_STYLE_FIXED4))
				goto done;
		}
	for (j = 0; j < r->nsizes; j++) {
		if (hc_report_table_add_row(tab))
			goto done;
		hc_report_table_set_int(tab, j, 0, (long long)r->sizes[j]);
		for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++) {
			const struct hc_horizon_point *p = &r->pts[j * HC_HORIZON_WEIGHTINGS + w];
			double v[7] = { p->mean, p->se, p->p05, p->p50, p->p95, p->lag, p->lag_se };

			for (c = 0; c < 7; c++)
				hc_report_table_set_real(tab, j, 1 + w * 7 + c, v[c]);
		}
	}
	if (hc_report_add_note(rep, opt->market_values
			       ? "Ending wealth of 1 unit invested over the horizon, weights proportional to market value "
			       "(c_i, the values given, fixed over the horizon): 'rebal.' restores each member's share "
			       "c_i / sum c of the portfolio every period, W = prod_s (1 + sum_i c_i r_is / sum c); 'hold' "
			       "buys in those proportions and lets them drift, W = sum_i c_i prod_s (1 + r_is) / sum c. The "
			       "universe compared with is weighted the same way. 5%, median and 95% are quantiles across the "
			       "random portfolios (and their paths); 'lag' is the share of them ending below the benchmark "
			       "on the same path, with its Monte Carlo standard error."
			       : "Ending wealth of 1 unit invested over the horizon. 'rebal.': equal weights restored "
			       "every period, W = prod_s (1 + mean of the members' returns in period s); 'hold': equal "
			       "amounts bought at the start and held, weights drifting with returns, W = mean over members "
			       "of prod_s (1 + r). 5%, median and 95% are quantiles across the random portfolios (and their "
			       "paths); 'lag' is the share of them ending below the benchmark on the same path, with its "
			       "Monte Carlo standard error.") ||
	    hc_report_add_note(rep, r->route == HC_HORIZON_BOOTSTRAP
			       ? "The paths are a resampling of the history: a bootstrap of the past is not a forecast; it "
			       "repeats the sample's own returns, good and bad periods alike, in new orders."
			       : "The paths are windows of the history, which overlap: neighbouring windows share most of "
			       "their periods, so the spread understates what independent horizons would show.") ||
	    hc_report_add_note(rep, src->kind == HC_SOURCE_RAGGED
			       ? "No costs, taxes or cash flows; a return of -100% or worse ends a holding at 0. History "
			       "with gaps: each portfolio holds securities listed at its window's start; a holding with no "
			       "return later in the window is taken as delisted then (its later returns unused): "
			       "rebalanced portfolios weight the holdings left equally, buy-and-hold ones reinvest its value "
			       "in the rest in proportion to their values (a delisting's own last price move is whatever "
			       "the file's last return holds). The universe compared with is every security listed at the "
			       "window's start, held the same way; securities listed later are not bought."
			       : "No costs, taxes or cash flows; a return of -100% or worse ends a holding at 0. "
			       "Complete histories only: securities that left the market are not in the file "
			       "(survivorship bias flatters every count and most the smaller ones)."))
		goto done;
	rc = hc_report_add_cautions(rep);
done:
	return rc;
}

size_t hc_horizon_count_bound(const struct universe *u, size_t h, size_t *first)
{
	size_t s, i, best = u->m, at = 0;

	for (s = 0; h >= 1 && s + h <= u->t; s++) {
		size_t n = 0;

		for (i = 0; i < u->m; i++)
			n += !isnan(u->x[i * u->t + s]);
		if (n < best) {
			best = n;
			at = s;
		}
	}
	if (first)
		*first = at;
	return best;
}

/* A history with gaps: windows only, equal weights, and no count above the
 * securities listed at the start of the emptiest window. */
static int ragged_checks(const struct universe *u, size_t h, int route, const size_t *sizes, size_t nsizes,
			 const struct hc_horizon_options *opt, struct hc_error *err)
{
	size_t bound, at, j;
	char d[16];

	if (route != HC_HORIZON_WINDOWS || h > u->t)
		return hc_error(err, HC_EUSAGE, "%s has gaps (securities listed or delisted inside the sample): its "
				"horizons are windows of the history only, %zu periods at most (--years within the sample); "
				"a bootstrap would splice periods of different dates, so holdings would list and delist at "
				"random inside a path (--missing complete keeps the securities with no gap, which the "
				"bootstrap can resample)", u->source ? u->source : "the history", u->t);
	if (opt->market_values)
		return hc_error(err, HC_EUSAGE, "%s has gaps: weights by market value are provided on complete histories "
				"only (--missing complete)", u->source ? u->source : "the history");
	bound = hc_horizon_count_bound(u, h, &at);
	for (j = 0; j < nsizes; j++)
		if (sizes[j] > bound) {
			hc_universe_format_date(u->dates[at], d);
			return hc_error(err, HC_EUSAGE, "bad holding count %zu: the window starting %s has %zu securities "
					"listed at its start; expected at most %zu on this history with gaps", sizes[j], d,
					bound, bound);
		}
	return HC_OK;
}

int hc_horizon_run(struct hc_horizon_result **out, const struct hc_source *src, const size_t *sizes,
		   size_t nsizes, const struct hc_horizon_options *opt, struct hc_error *err)
{
	struct hc_horizon_result *r = NULL;
	const struct universe *u;
	struct hjob J;
	struct hc_paths P;
	size_t *uniq = NULL, *slot = NULL, m, t, h, j, q, i, s, K, w, mt, kw, k2;
	double *xt = NULL, *ubar = NULL, *col = NULL, ppy, hp;
	int rc = HC_OK;

	*out = NULL;
	memset(&J, 0, sizeof J);
	if (!src || (src->kind != HC_SOURCE_SERIES && src->kind != HC_SOURCE_RAGGED) || !src->u)
		return hc_error(err, HC_EUSAGE, "%s: ending wealth over a horizon needs a return history%s",
				src && src->name ? src->name : "the source",
				!src || src->kind == HC_SOURCE_MATRIX ? ", not a covariance matrix"
				: " read period by period (--missing alive, the default) or complete (--missing complete)");
	u = src->u;
	m = u->m;
	t = u->t;
	ppy = u->periods_per_year;
	if (!(opt->years > 0) || !isfinite(opt->years))
		return hc_error(err, HC_EUSAGE, "the horizon must be a positive number of years, not %g", opt->years);
	hp = opt->years * ppy;
	if (!(hp >= 0.5) || hp > 1e7)
		return hc_error(err, HC_EUSAGE, "a horizon of %g years is %g periods at %g a year: expected 1 to 10 million "
				"periods", opt->years, hp, ppy);
	h = (size_t)llround(hp);
	if (opt->paths < 1 || opt->paths > 100000000u)
		return hc_error(err, HC_EUSAGE, "bad number of paths %zu: expected 1 to 100000000", opt->paths);
	if (opt->rate_given && (!(opt->rate > -1) || !isfinite(opt->rate)))
		return hc_error(err, HC_EUSAGE, "the benchmark rate must be above -100%% a year, not %g", opt->rate);
	if (opt->benchmark && opt->rate_given)
		return hc_error(err, HC_EUSAGE, "one benchmark at a time: a return series or a fixed rate, not both");
	if (opt->benchmark && (opt->benchmark->t != t || !opt->benchmark->r))
		return hc_error(err, HC_EUSAGE, "the benchmark series '%s' has %zu periods, the universe %zu: expected "
				"it aligned on the universe's periods", opt->benchmark->name ? opt->benchmark->name : "-",
				opt->benchmark->t, t);
	if (!(opt->lag_limit > 0 && opt->lag_limit < 1))
		return hc_error(err, HC_EUSAGE, "the lag limit must be a share between 0 and 1 (as 1%% or 0.01), not %g",
				opt->lag_limit);
	if (opt->market_values)
		for (i = 0; i < m; i++)
			if (!(opt->market_values[i] > 0) || !isfinite(opt->market_values[i]))
				return hc_error(err, HC_EUSAGE, "the market value of '%s' is %g: expected a number above 0",
						u->ids[i], opt->market_values[i]);
	if (nsizes < 1)
		return hc_error(err, HC_EUSAGE, "no holding counts asked for");
	for (j = 0; j < nsizes; j++)
		if (sizes[j] < 1 || sizes[j] > m)
			return hc_error(err, HC_EUSAGE, "bad holding count %zu: expected 1 to %zu", sizes[j], m);
	J.route = opt->route;
	if (J.route == HC_HORIZON_AUTO)
		J.route = h <= t ? HC_HORIZON_WINDOWS : HC_HORIZON_BOOTSTRAP;
	else if (J.route != HC_HORIZON_WINDOWS && J.route != HC_HORIZON_BOOTSTRAP)
		return hc_error(err, HC_EUSAGE, "unknown horizon route %d", opt->route);
	J.ragged = src->kind == HC_SOURCE_RAGGED;
	if (J.ragged && (rc = ragged_checks(u, h, J.route, sizes, nsizes, opt, err)))
		return rc;
	if (J.route == HC_HORIZON_WINDOWS && h > t)
		return hc_error(err, HC_EUSAGE, "a horizon of %g years is %zu periods, longer than the sample's %zu: "
				"overlapping windows need the horizon (--years) within the sample; the stationary bootstrap "
				"(--resample bootstrap or auto) builds longer paths",
				opt->years, h, t);
	if (opt->block_length > t)
		return hc_error(err, HC_EUSAGE, "bad block length %zu: expected 1 to %zu periods", opt->block_length, t);
	K = opt->paths;
	if (hc_memory_check(u->max_bytes, 0,
			    ((double)m * (double)t + (double)t + (double)K * (double)nsizes * 2 + (double)K * 3) * 8.0,
			    err, "%s: ending wealth over %zu periods for %zu paths", src->name, h, K))
		return HC_ENOMEM;

	if (hc_mul_size(m, t, &mt) || hc_mul_size(K, nsizes * 2, &kw) || hc_mul_size(K, 2, &k2))
		return hc_error(err, HC_ENOMEM, "ending wealth over %zu paths: sizes too large", K);
	r = hc_calloc(1, sizeof *r);
	uniq = hc_mallocarray(nsizes, sizeof *uniq);
	slot = hc_mallocarray(nsizes, sizeof *slot);
	xt = hc_mallocarray(mt, sizeof *xt);
	ubar = hc_mallocarray(t, sizeof *ubar);
	col = hc_mallocarray(K, sizeof *col);
	if (r) {
		r->sizes = hc_mallocarray(nsizes, sizeof *r->sizes);
		r->pts = hc_mallocarray(nsizes * HC_HORIZON_WEIGHTINGS, sizeof *r->pts);
	}
	J.wealth = hc_mallocarray(kw, sizeof *J.wealth);
	J.uwealth = hc_mallocarray(k2, sizeof *J.uwealth);
	if (opt->benchmark)
		J.bwealth = hc_mallocarray(K, sizeof *J.bwealth);
	if (!r || !uniq || !slot || !xt || !ubar || !col || !r->sizes || !r->pts || !J.wealth || !J.uwealth ||
	    (opt->benchmark && !J.bwealth)) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for ending wealth over %zu paths", K);
		goto fail;
	}
	memcpy(r->sizes, sizes, nsizes * sizeof *sizes);
	memcpy(uniq, sizes, nsizes * sizeof *sizes);
	qsort(uniq, nsizes, sizeof *uniq, cmp_size);
	for (q = 0, j = 0; j < nsizes; j++)
		if (j == 0 || uniq[j] != uniq[q - 1])
			uniq[q++] = uniq[j];
	J.nuniq = q;
	for (j = 0; j < nsizes; j++)
		for (q = 0; q < J.nuniq; q++)
			if (uniq[q] == sizes[j])
				slot[j] = q;
	/* Period-major copy, and the equal-weight universe's returns summed in
	 * security order. */
	for (s = 0; s < t; s++) {
		double sum = 0.0;
		size_t n = 0;

		for (i = 0; i < m; i++) {
			xt[s * m + i] = u->x[i * t + s];
			if (!isnan(xt[s * m + i])) {
				sum += xt[s * m + i];
				n++;
			}
		}
		ubar[s] = n ? sum / (double)n : 0.0;
	}
	J.l = 0;
	if (J.route == HC_HORIZON_BOOTSTRAP) {
		if (opt->block_length) {
			J.l = opt->block_length;
		} else {
			double pw = hc_bootstrap_politis_white(ubar, t);

			J.l = isfinite(pw) && pw >= 1 ? (size_t)llround(pw) : 1;
			if (J.l > t)
				J.l = t;
		}
	}
	if (opt->market_values)
		cap_weight_universe(&J, opt->market_values, xt, ubar, m, t);
	J.m = m;
	J.t = t;
	J.h = h;
	J.nmax = uniq[J.nuniq - 1];
	J.nsizes = nsizes;
	J.seed = opt->seed;
	J.xt = xt;
	J.ubar = ubar;
	J.sizes = sizes;
	J.uniq = uniq;
	J.slot = slot;
	J.universe_bench = 1;
	J.bench = opt->benchmark ? opt->benchmark->r : NULL;
	J.rate_wealth = opt->rate_given ? pow(1.0 + opt->rate, (double)h / ppy) : NAN;

	memset(&P, 0, sizeof P);
	P.count = K;
	P.threads = opt->threads;
	P.chunk = 16;
	P.job = &J;
	P.ws_size = sizeof(struct hws);
	P.ws_init = ws_init;
	P.ws_release = ws_release;
	P.path = horizon_path;
	P.progress = opt->progress.update;
	P.progress_ctx = opt->progress.ctx;
	P.name = "horizon's";
	P.what = "ending wealth";
	P.unit = "paths";
	hc_progress_begin(&opt->progress, NULL, "horizon", "paths");
	rc = hc_paths_run(&P, err);
	hc_progress_end(&opt->progress);
	if (rc)
		goto fail;
	if (J.failed) {
		rc = hc_error(err, HC_ENOMEM, "out of memory drawing the horizon's portfolios");
		goto fail;
	}

	r->periods = h;
	r->route = J.route;
	r->block_length = J.l;
	r->paths = K;
	r->nsizes = nsizes;
	r->rate_wealth = J.rate_wealth;
	for (j = 0; j < nsizes; j++)
		for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++) {
			const double *wv = J.wealth + j * 2 + w;
			const double *bench = J.bwealth ? J.bwealth : opt->rate_given ? &J.rate_wealth : J.uwealth + w;

			for (i = 0; i < K; i++)
				col[i] = wv[i * nsizes * 2];
			summarise(&r->pts[j * 2 + w], col, K, bench, J.bwealth ? 1 : opt->rate_given ? 0 : 2, wv,
				  nsizes * 2);
		}
	for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++) {
		for (i = 0; i < K; i++)
			col[i] = J.uwealth[i * 2 + w];
		summarise(&r->universe[w], col, K, J.bwealth ? J.bwealth : opt->rate_given ? &J.rate_wealth : NULL,
			  J.bwealth ? 1 : 0, J.uwealth + w, 2);
	}
	summarise_benchmark(r, &J, col, K, opt);
	lag_rule(r, uniq, J.nuniq, opt->lag_limit);
	if (build_report(r, src, opt, ppy, t)) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the horizon's report");
		goto fail;
	}
	*out = r;
	r = NULL;
fail:
	hc_horizon_result_free(r);
	hc_free(uniq);
	hc_free(slot);
	hc_free(xt);
	hc_free(ubar);
	hc_free(col);
	hc_free(J.wealth);
	hc_free(J.uwealth);
	hc_free(J.bwealth);
	return rc;
}

void hc_horizon_result_free(struct hc_horizon_result *r)
{
	if (!r)
		return;
	hc_free(r->sizes);
	hc_free(r->pts);
	hc_report_free(r->report);
	hc_free(r);
}
