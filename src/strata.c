/*
 * strata.c - stratified draws: allocation and uniform subsets within
 * strata (strata.h; design.md section 4).
 *
 * Proportional allocation is Hamilton's largest-remainder method, with the
 * remainders compared exactly as integers (n m_s mod M), so no rounding can
 * reorder them.  The cap mode's "uniform over all subsets with at most k
 * per stratum" factorises: the number of subsets with allocation (n_s) is
 * prod_s C(m_s, n_s), so drawing the allocation with that weight and then a
 * uniform subset inside each stratum gives every admissible subset the same
 * probability.  The weights' sums over the remaining strata are a dynamic
 * programme kept in log space (binomials of a thousand securities overflow
 * a double long before the sums are done).
 *
 * Sampling cost: a path shuffles all M securities (stratum by stratum) and
 * moves from one size's portfolio to the next by adding or removing the
 * columns whose stratum share changed, so a path costs O(M + T sum_j
 * |n_j - n_{j-1}|) with return columns; from a matrix each portfolio's
 * quadratic form costs O(n^2).
 */
#include "holdcount/strata.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_rng.h>
#include <gsl/gsl_sort.h>
#include <gsl/gsl_statistics_double.h>

#include "holdcount/memory.h"
#include "holdcount/paths.h"

#define STRATA_SCHEDULE_CHUNK 8   /* paths per dynamic work unit */
/* Stream tags, so stratified paths do not reuse the unconstrained ones'
 * seeds and the allocation stream differs from the shuffle's. */
#define STRATA_SHUFFLE_TAG 0x5bd1e9955bd1e995ULL
#define STRATA_ALLOC_TAG 0xc2b2ae3d27d4eb4fULL

/* ---- the partition ---- */

void hc_strata_free(struct strata *s)
{
	if (!s)
		return;
	hc_free(s->count);
	hc_free(s->start);
	hc_free(s->members);
	hc_free(s);
}

int hc_strata_alloc(struct strata **out, const size_t *stratum_of, size_t m,
		 size_t nstrata, struct hc_error *err)
{
	struct strata *s;
	size_t i, *fill = NULL;

	*out = NULL;
	if (m == 0 || nstrata == 0)
		return hc_error(err, HC_EUSAGE, "no securities or no strata to stratify");
	for (i = 0; i < m; i++)
		if (stratum_of[i] >= nstrata)
			return hc_error(err, HC_EUSAGE, "security %zu is in stratum %zu of %zu",
					i + 1, stratum_of[i], nstrata);
	s = hc_calloc(1, sizeof *s);
	if (!s || !(s->count = hc_calloc(nstrata, sizeof *s->count)) ||
	    !(s->start = hc_calloc(nstrata + 1, sizeof *s->start)) ||
	    !(s->members = hc_mallocarray(m, sizeof *s->members)) ||
	    !(fill = hc_calloc(nstrata, sizeof *fill))) {
		hc_strata_free(s);
		return hc_error(err, HC_ENOMEM, "out of memory for %zu strata", nstrata);
	}
	s->m = m;
	s->nstrata = nstrata;
	for (i = 0; i < m; i++)
		s->count[stratum_of[i]]++;
	for (i = 0; i < nstrata; i++)
		s->start[i + 1] = s->start[i] + s->count[i];
	for (i = 0; i < m; i++)
		s->members[s->start[stratum_of[i]] + fill[stratum_of[i]]++] = i;
	hc_free(fill);
	*out = s;
	return HC_OK;
}

/* ---- Hamilton's method ---- */

int hc_strata_proportional(const struct strata *s, size_t n, size_t *alloc,
			struct hc_error *err)
{
	size_t j, left = n, best;
	unsigned long long rem_best, rem;
	unsigned char *got;

	if (n < 1 || n > s->m)
		return hc_error(err, HC_EUSAGE, "size %zu is not between 1 and the %zu securities", n, s->m);
	for (j = 0; j < s->nstrata; j++) {
		alloc[j] = (size_t)((unsigned long long)n * s->count[j] / s->m);
		left -= alloc[j];
	}
	/* At most S seats are left; hand them out one at a time (S is small). */
	got = hc_calloc(s->nstrata, 1);
	if (!got)
		return hc_error(err, HC_ENOMEM, "out of memory for an allocation");
	while (left-- > 0) {
		best = s->nstrata;
		rem_best = 0;
		for (j = 0; j < s->nstrata; j++) {
			if (got[j])
				continue;
			rem = (unsigned long long)n * s->count[j] % s->m;
			if (best == s->nstrata || rem > rem_best ||
			    (rem == rem_best && s->count[j] > s->count[best])) {
				best = j;
				rem_best = rem;
			}
		}
		got[best] = 1;
		alloc[best]++;
	}
	hc_free(got);
	return HC_OK;
}

/* ---- the cap's dynamic programme ---- */

static double log_choose(size_t m, size_t a)
{
	return lgamma((double)m + 1) - lgamma((double)a + 1) - lgamma((double)(m - a) + 1);
}

static double log_add(double a, double b)
{
	if (a == -INFINITY)
		return b;
	if (b == -INFINITY)
		return a;
	return a > b ? a + log1p(exp(b - a)) : b + log1p(exp(a - b));
}

void hc_strata_cap_free(struct strata_cap *c)
{
	if (!c)
		return;
	hc_free(c->cap);
	hc_free(c->count);
	hc_free(c->logw);
	hc_free(c);
}

int hc_strata_cap_alloc(struct strata_cap **out, const struct strata *s, size_t k,
		     size_t nmax, struct hc_error *err)
{
	struct strata_cap *c;
	size_t S = s->nstrata, st, j, a, cells;
	double *row, *next;

	*out = NULL;
	if (k == 0)
		return hc_error(err, HC_EUSAGE, "a cap of 0 per stratum leaves nothing to hold");
	c = hc_calloc(1, sizeof *c);
	if (!c || hc_mul_size(S + 1, nmax + 1, &cells) ||
	    !(c->cap = hc_mallocarray(S, sizeof *c->cap)) || !(c->count = hc_mallocarray(S, sizeof *c->count)) ||
	    !(c->logw = hc_mallocarray(cells, sizeof *c->logw))) {
		hc_strata_cap_free(c);
		return hc_error(err, HC_ENOMEM, "out of memory for the per-stratum cap's table");
	}
	c->nstrata = S;
	c->nmax = nmax;
	c->k = k;
	for (st = 0; st < S; st++) {
		c->count[st] = s->count[st];
		c->cap[st] = s->count[st] < k ? s->count[st] : k;
	}
	row = c->logw + S * (nmax + 1);
	for (j = 0; j <= nmax; j++)
		row[j] = j == 0 ? 0.0 : -INFINITY;
	for (st = S; st-- > 0;) {
		row = c->logw + st * (nmax + 1);
		next = row + (nmax + 1);
		for (j = 0; j <= nmax; j++) {
			double acc = -INFINITY;
			for (a = 0; a <= c->cap[st] && a <= j; a++)
				if (next[j - a] != -INFINITY)
					acc = log_add(acc, log_choose(c->count[st], a) + next[j - a]);
			row[j] = acc;
		}
	}
	*out = c;
	return HC_OK;
}

size_t hc_strata_cap_most(const struct strata *s, size_t k)
{
	size_t st, most = 0;

	if (k == 0)
		return s->m;
	for (st = 0; st < s->nstrata; st++)
		most += s->count[st] < k ? s->count[st] : k;
	return most;
}

int hc_strata_cap_feasible(const struct strata_cap *c, size_t n)
{
	return n <= c->nmax && c->logw[n] != -INFINITY;
}

double hc_strata_cap_log_total(const struct strata_cap *c, size_t n)
{
	return n <= c->nmax ? c->logw[n] : -INFINITY;
}

double hc_strata_cap_log_probability(const struct strata_cap *c, size_t n, const size_t *alloc)
{
	double lp = 0;
	size_t st, sum = 0;

	if (!hc_strata_cap_feasible(c, n))
		return -INFINITY;
	for (st = 0; st < c->nstrata; st++) {
		if (alloc[st] > c->cap[st])
			return -INFINITY;
		sum += alloc[st];
		lp += log_choose(c->count[st], alloc[st]);
	}
	return sum == n ? lp - c->logw[n] : -INFINITY;
}

/* Stratum by stratum: P(n_s = a | r left) = C(m_s, a) W_{s+1}(r - a) / W_s(r). */
void hc_strata_cap_draw(const struct strata_cap *c, size_t n,
		     double (*uniform)(void *ctx), void *ctx, size_t *alloc)
{
	size_t st, a, r = n, last;
	double u, cum, p;

	for (st = 0; st < c->nstrata; st++) {
		const double *row = c->logw + st * (c->nmax + 1), *next = row + (c->nmax + 1);
		u = uniform(ctx);
		cum = 0;
		last = 0;
		for (a = 0; a <= c->cap[st] && a <= r; a++) {
			if (next[r - a] == -INFINITY)
				continue;
			last = a;
			p = exp(log_choose(c->count[st], a) + next[r - a] - row[r]);
			cum += p;
			if (u < cum)
				break;
		}
		/* Rounding can leave cum a hair under 1: the last possible a. */
		if (a > c->cap[st] || a > r)
			a = last;
		alloc[st] = a;
		r -= a;
	}
}

/* ---- exact expected variance for a fixed allocation ---- */

void hc_strata_moments_free(struct strata_moments *sm)
{
	if (!sm)
		return;
	hc_free(sm->sum_var);
	hc_free(sm->block);
	hc_free(sm);
}

static struct strata_moments *moments_new(size_t S)
{
	struct strata_moments *sm = hc_calloc(1, sizeof *sm);

	if (!sm || !(sm->sum_var = hc_calloc(S, sizeof *sm->sum_var)) ||
	    !(sm->block = hc_calloc(S * S, sizeof *sm->block))) {
		hc_strata_moments_free(sm);
		return NULL;
	}
	sm->nstrata = S;
	return sm;
}

/* y_s = sum of the centred series of stratum s; B_st = y_s.y_t/(T-1). */
static int moments_series(struct strata_moments **out, const struct universe *u,
			  const struct strata *s, struct hc_error *err)
{
	size_t S = s->nstrata, t = u->t, i, k, a, b;
	struct strata_moments *sm;
	double *y = NULL, mean, d = (double)(t - 1);
	long double acc, v;

	*out = NULL;
	if (u->has_missing || u->t < 2 || u->m != s->m)
		return hc_error(err, HC_EUSAGE, "stratum moments need complete data of the strata's %zu securities",
				s->m);
	sm = moments_new(S);
	if (!sm || !(y = hc_calloc(S * t, sizeof *y))) {
		hc_strata_moments_free(sm);
		return hc_error(err, HC_ENOMEM, "out of memory for the stratum sums");
	}
	for (a = 0; a < S; a++)
		for (i = s->start[a]; i < s->start[a + 1]; i++) {
			const double *x = u->x + s->members[i] * t;
			for (acc = 0, k = 0; k < t; k++)
				acc += x[k];
			mean = (double)(acc / t);
			for (v = 0, k = 0; k < t; k++) {
				y[a * t + k] += x[k] - mean;
				v += (long double)(x[k] - mean) * (x[k] - mean);
			}
			sm->sum_var[a] += (double)(v / d);
		}
	for (a = 0; a < S; a++)
		for (b = a; b < S; b++) {
			for (acc = 0, k = 0; k < t; k++)
				acc += (long double)y[a * t + k] * y[b * t + k];
			sm->block[a * S + b] = sm->block[b * S + a] = (double)(acc / d);
		}
	hc_free(y);
	*out = sm;
	return HC_OK;
}

static int moments_matrix(struct strata_moments **out, const double *a, size_t m,
			  const struct strata *s, struct hc_error *err)
{
	size_t S = s->nstrata, p, q, i, j;
	struct strata_moments *sm;
	long double acc;

	*out = NULL;
	if (m != s->m)
		return hc_error(err, HC_EUSAGE, "a %zu x %zu matrix for strata of %zu securities", m, m, s->m);
	if (!(sm = moments_new(S)))
		return hc_error(err, HC_ENOMEM, "out of memory for the stratum sums");
	for (p = 0; p < S; p++) {
		for (acc = 0, i = s->start[p]; i < s->start[p + 1]; i++)
			acc += a[s->members[i] * m + s->members[i]];
		sm->sum_var[p] = (double)acc;
		for (q = 0; q < S; q++) {
			for (acc = 0, i = s->start[p]; i < s->start[p + 1]; i++)
				for (j = s->start[q]; j < s->start[q + 1]; j++)
					acc += a[s->members[i] * m + s->members[j]];
			sm->block[p * S + q] = (double)acc;
		}
	}
	*out = sm;
	return HC_OK;
}

int hc_strata_moments_from_source(struct strata_moments **out, const struct hc_source *src,
				  const struct strata *s, struct hc_error *err)
{
	const double *a = hc_source_matrix(src);

	*out = NULL;
	if (a)
		return moments_matrix(out, a, hc_source_m(src), s, err);
	return moments_series(out, src->u, s, err);
}

double hc_strata_expected_variance(const struct strata_moments *sm, const struct strata *s,
				const size_t *alloc)
{
	size_t S = s->nstrata, p, q, n = 0;
	long double x = 0;

	for (p = 0; p < S; p++) {
		double np = (double)alloc[p], mp = (double)s->count[p];
		n += alloc[p];
		if (!alloc[p])
			continue;
		x += np / mp * sm->sum_var[p];
		if (alloc[p] >= 2)
			x += np * (np - 1) / (mp * (mp - 1)) * (sm->block[p * S + p] - sm->sum_var[p]);
		for (q = 0; q < S; q++)
			if (q != p && alloc[q])
				x += np * (double)alloc[q] / (mp * (double)s->count[q]) * sm->block[p * S + q];
	}
	return n ? (double)(x / ((long double)n * n)) : NAN;
}

/* ---- drawing ---- */

#define mix hc_paths_mix

struct alloc_stream {
	uint64_t state;
};

/* Uniform in [0, 1) from the top 53 bits of splitmix64. */
static double stream_uniform(void *ctx)
{
	struct alloc_stream *a = ctx;

	return (double)(hc_paths_splitmix64(&a->state) >> 11) * 0x1.0p-53;
}

/* Every stratum shuffled completely by Durstenfeld's in-place Fisher-Yates
 * (Durstenfeld, 1964, CACM 7(7)): perm holds each stratum's members in a
 * uniform random order, in the strata's own segments. */
static void shuffle_strata(const struct strata *s, gsl_rng *g, uint64_t seed, size_t k,
			   uint32_t *perm)
{
	size_t st, j, u, len;
	uint32_t tmp, *seg;
	uint64_t z = mix(seed, STRATA_SHUFFLE_TAG, k, 0);

	gsl_rng_set(g, (unsigned long)((z ^ (z >> 32)) & 0xffffffffUL));
	for (j = 0; j < s->m; j++)
		perm[j] = (uint32_t)s->members[j];
	for (st = 0; st < s->nstrata; st++) {
		seg = perm + s->start[st];
		len = s->count[st];
		for (j = 0; j + 1 < len; j++) {
			u = j + (size_t)gsl_rng_uniform_int(g, (unsigned long)(len - j));
			tmp = seg[j];
			seg[j] = seg[u];
			seg[u] = tmp;
		}
	}
}

/* The allocation of path k's portfolio of n (feasible). */
static void allocation(const struct strata *s, const struct strata_cap *cap, int mode,
		       const size_t *fixed, size_t n, uint64_t seed, size_t k, size_t *alloc)
{
	struct alloc_stream as;

	if (mode == SAMPLER_STRATA_PROPORTIONAL) {
		memcpy(alloc, fixed, s->nstrata * sizeof *alloc);
		return;
	}
	as.state = mix(seed, STRATA_ALLOC_TAG, k, n);
	hc_strata_cap_draw(cap, n, stream_uniform, &as, alloc);
}

static int cmp_size(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	return (x > y) - (x < y);
}

int hc_strata_portfolio(const struct strata *s, const struct strata_cap *cap, int mode,
		     size_t n, uint64_t seed, size_t k, size_t *members, size_t *alloc,
		     struct hc_error *err)
{
	gsl_rng *g = NULL;
	uint32_t *perm = NULL;
	size_t st, j, c = 0;
	int rc;

	if (mode == SAMPLER_STRATA_PROPORTIONAL) {
		if ((rc = hc_strata_proportional(s, n, alloc, err)))
			return rc;
	} else if (mode != SAMPLER_STRATA_CAP || !cap || !hc_strata_cap_feasible(cap, n)) {
		return hc_error(err, HC_EUSAGE, "no portfolio of %zu meets the stratification", n);
	}
	g = gsl_rng_alloc(gsl_rng_mt19937);
	perm = hc_mallocarray(s->m, sizeof *perm);
	if (!g || !perm) {
		gsl_rng_free(g);
		hc_free(perm);
		return hc_error(err, HC_ENOMEM, "out of memory for a stratified draw");
	}
	shuffle_strata(s, g, seed, k, perm);
	if (mode == SAMPLER_STRATA_CAP)
		allocation(s, cap, mode, NULL, n, seed, k, alloc);
	for (st = 0; st < s->nstrata; st++)
		for (j = 0; j < alloc[st]; j++)
			members[c++] = perm[s->start[st] + j];
	qsort(members, c, sizeof *members, cmp_size);
	gsl_rng_free(g);
	hc_free(perm);
	return HC_OK;
}

/* ---- stratified runs ---- */

struct srun {
	const struct strata *s;
	const struct strata_cap *cap;
	int mode;
	size_t m, t, nsizes, nuniq;
	size_t *uniq, *slot;       /* sorted distinct sizes; slot of each caller size */
	unsigned char *feas;       /* nuniq */
	size_t *fixed;             /* nuniq * S proportional allocations */
	const double *xc, *mean;   /* column route */
	const double *a;           /* matrix route */
	int want_returns;
	double periods_per_year;
	uint64_t seed;
};

struct sws {
	gsl_rng *g;
	uint32_t *perm;
	size_t *alloc, *prev;
	double *acc, *out_v, *out_r;
	uint32_t *mem;             /* matrix route: the portfolio's members */
};

static void sws_release(struct sws *w)
{
	gsl_rng_free(w->g);
	hc_free(w->perm);
	hc_free(w->alloc);
	hc_free(w->prev);
	hc_free(w->acc);
	hc_free(w->out_v);
	hc_free(w->out_r);
	hc_free(w->mem);
}

static int sws_init(struct sws *w, const struct srun *r)
{
	memset(w, 0, sizeof *w);
	w->g = gsl_rng_alloc(gsl_rng_mt19937);
	w->perm = hc_mallocarray(r->m, sizeof *w->perm);
	w->alloc = hc_mallocarray(r->s->nstrata, sizeof *w->alloc);
	w->prev = hc_mallocarray(r->s->nstrata, sizeof *w->prev);
	w->acc = hc_mallocarray((r->t ? r->t : 1), sizeof *w->acc);
	w->out_v = hc_mallocarray(r->nuniq, sizeof *w->out_v);
	w->out_r = hc_mallocarray(r->nuniq, sizeof *w->out_r);
	w->mem = hc_mallocarray(r->m, sizeof *w->mem);
	if (!w->g || !w->perm || !w->alloc || !w->prev || !w->acc || !w->out_v || !w->out_r ||
	    !w->mem) {
		sws_release(w);
		return -1;
	}
	return 0;
}

/* acc += sign * the columns perm[from..to-1]; the mean sum alike. */
static double move_columns(const struct srun *r, double *acc, const uint32_t *perm,
			   size_t from, size_t to, double sign)
{
	size_t j, k, t = r->t;
	double msum = 0;

	for (j = from; j < to; j++) {
		const double *x = r->xc + (size_t)perm[j] * t;
		for (k = 0; k < t; k++)
			acc[k] += sign * x[k];
		if (r->want_returns)
			msum += r->mean[perm[j]];
	}
	return sign * msum;
}

/* Compound annualised return of the portfolio rebalanced to equal weights
 * each period (as the unconstrained sampler computes it). */
static double compound(const double *acc, size_t t, double mean_sum, double n, double ppy)
{
	long double lg = 0;
	double ret;
	size_t k;

	for (k = 0; k < t; k++) {
		ret = (acc[k] + mean_sum) / n;
		if (!(ret > -1.0))
			return -1.0;
		lg += log1p(ret);
	}
	return expm1((double)(lg * ppy / (long double)t));
}

static void column_path(const struct srun *r, struct sws *w, size_t k)
{
	const struct strata *s = r->s;
	size_t u, st, S = s->nstrata, t = r->t, n, q;
	double msum = 0, nrm;

	shuffle_strata(s, w->g, r->seed, k, w->perm);
	memset(w->acc, 0, t * sizeof *w->acc);
	memset(w->prev, 0, S * sizeof *w->prev);
	for (u = 0; u < r->nuniq; u++) {
		if (!r->feas[u]) {
			w->out_v[u] = INFINITY;
			w->out_r[u] = -1.0;
			continue;
		}
		n = r->uniq[u];
		allocation(s, r->cap, r->mode, r->fixed + u * S, n, r->seed, k, w->alloc);
		for (st = 0; st < S; st++) {
			const uint32_t *seg = w->perm + s->start[st];
			if (w->alloc[st] > w->prev[st])
				msum += move_columns(r, w->acc, seg, w->prev[st], w->alloc[st], 1.0);
			else if (w->alloc[st] < w->prev[st])
				msum += move_columns(r, w->acc, seg, w->alloc[st], w->prev[st], -1.0);
			w->prev[st] = w->alloc[st];
		}
		for (nrm = 0, q = 0; q < t; q++)
			nrm += w->acc[q] * w->acc[q];
		w->out_v[u] = nrm / ((double)n * (double)n * (double)(t - 1));
		if (r->want_returns)
			w->out_r[u] = compound(w->acc, t, msum, (double)n, r->periods_per_year);
	}
}

static void matrix_path(const struct srun *r, struct sws *w, size_t k)
{
	const struct strata *s = r->s;
	size_t u, st, S = s->nstrata, n, p, q, m = r->m;
	uint32_t *mem = w->mem;
	long double x;

	shuffle_strata(s, w->g, r->seed, k, w->perm);
	for (u = 0; u < r->nuniq; u++) {
		if (!r->feas[u]) {
			w->out_v[u] = INFINITY;
			continue;
		}
		n = r->uniq[u];
		allocation(s, r->cap, r->mode, r->fixed + u * S, n, r->seed, k, w->alloc);
		for (p = 0, st = 0; st < S; st++)
			for (q = 0; q < w->alloc[st]; q++)
				mem[p++] = w->perm[s->start[st] + q];
		for (x = 0, p = 0; p < n; p++) {
			const double *row = r->a + (size_t)mem[p] * m;
			double cross = 0;
			for (q = 0; q < p; q++)
				cross += row[mem[q]];
			x += row[mem[p]] + 2 * cross;
		}
		w->out_v[u] = (double)(x / ((long double)n * n));
	}
}

/* What one run of paths shares: the plan, the result rows to fill. */
struct sjob {
	const struct srun *r;
	struct sampler_result *res;
};

static int sjob_ws_init(void *job, void *ws)
{
	return sws_init(ws, ((const struct sjob *)job)->r);
}

static void sjob_ws_release(void *ws)
{
	sws_release(ws);
}

/* Path k, drawn from (seed, k) alone, stored in its own row. */
static void sjob_path(void *job, void *ws, size_t k)
{
	const struct sjob *sj = job;
	const struct srun *r = sj->r;
	struct sws *w = ws;
	size_t j;

	if (r->a)
		matrix_path(r, w, k);
	else
		column_path(r, w, k);
	for (j = 0; j < r->nsizes; j++) {
		sj->res->variance[k * r->nsizes + j] = w->out_v[r->slot[j]];
		if (sj->res->annual_return)
			sj->res->annual_return[k * r->nsizes + j] = w->out_r[r->slot[j]];
	}
}

static int drive(const struct srun *r, struct sampler_result *res,
		 const struct sampler_options *opt, struct hc_error *err)
{
	struct sjob sj = { r, res };
	struct hc_paths p = {
		opt->paths, opt->threads, STRATA_SCHEDULE_CHUNK, &sj, sizeof(struct sws), sjob_ws_init,
		sjob_ws_release, sjob_path, opt->progress, opt->progress_ctx, "stratified sampler's", "sampling", "paths"
	};

	return hc_paths_run(&p, err);
}

static int check(const struct sampler_options *opt, size_t m, const size_t *sizes,
		 size_t nsizes, struct hc_error *err)
{
	size_t j;

	if (!opt->strata || opt->nstrata == 0)
		return hc_error(err, HC_EUSAGE, "stratified sampling needs every security's stratum");
	if (opt->stratify != SAMPLER_STRATA_PROPORTIONAL && opt->stratify != SAMPLER_STRATA_CAP)
		return hc_error(err, HC_EUSAGE,
				"strata given without a way to use them: proportional, or a cap per stratum");
	if (opt->stratify == SAMPLER_STRATA_CAP && opt->per_stratum_max == 0)
		return hc_error(err, HC_EUSAGE, "a cap of 0 per stratum leaves nothing to hold");
	if (opt->paths == 0)
		return hc_error(err, HC_EUSAGE, "no paths to sample");
	if (opt->threads < 0)
		return hc_error(err, HC_EUSAGE, "thread count %d is negative", opt->threads);
	if (opt->want_returns && !(opt->periods_per_year > 0 && isfinite(opt->periods_per_year)))
		return hc_error(err, HC_EUSAGE, "periods per year %g is not a positive number",
				opt->periods_per_year);
	if (nsizes == 0)
		return hc_error(err, HC_EUSAGE, "no sizes to sample");
	for (j = 0; j < nsizes; j++)
		if (sizes[j] < 1 || sizes[j] > m)
			return hc_error(err, HC_EUSAGE, "size %zu is larger than the %zu securities kept",
					sizes[j], m);
	if (m > UINT32_MAX)
		return hc_error(err, HC_ENOMEM, "%zu securities are too many to sample", m);
	return HC_OK;
}

static void srun_release(struct srun *r, struct strata *s, struct strata_cap *cap)
{
	hc_free(r->uniq);
	hc_free(r->slot);
	hc_free(r->feas);
	hc_free(r->fixed);
	hc_strata_free(s);
	hc_strata_cap_free(cap);
}

/* Sizes, feasibility and fixed allocations shared by every path. */
static int srun_plan(struct srun *r, struct strata **s, struct strata_cap **cap, size_t m,
		     const size_t *sizes, size_t nsizes, const struct sampler_options *opt,
		     struct hc_error *err)
{
	size_t j, k;
	int rc;

	memset(r, 0, sizeof *r);
	*s = NULL;
	*cap = NULL;
	if ((rc = hc_strata_alloc(s, opt->strata, m, opt->nstrata, err)))
		return rc;
	r->uniq = hc_mallocarray(nsizes, sizeof *r->uniq);
	r->slot = hc_mallocarray(nsizes, sizeof *r->slot);
	r->feas = hc_malloc(nsizes);
	if (!r->uniq || !r->slot || !r->feas || hc_mul_size(nsizes, opt->nstrata, &j) ||
	    !(r->fixed = hc_calloc(j, sizeof *r->fixed)))
		return hc_error(err, HC_ENOMEM, "out of memory for the stratified plan");
	memcpy(r->uniq, sizes, nsizes * sizeof *sizes);
	qsort(r->uniq, nsizes, sizeof *r->uniq, cmp_size);
	for (j = k = 0; j < nsizes; j++)
		if (k == 0 || r->uniq[j] != r->uniq[k - 1])
			r->uniq[k++] = r->uniq[j];
	r->nuniq = k;
	r->nsizes = nsizes;
	for (j = 0; j < nsizes; j++)
		r->slot[j] = (size_t)((size_t *)bsearch(&sizes[j], r->uniq, r->nuniq, sizeof *r->uniq,
							cmp_size) - r->uniq);
	if (opt->stratify == SAMPLER_STRATA_CAP &&
	    (rc = hc_strata_cap_alloc(cap, *s, opt->per_stratum_max, r->uniq[r->nuniq - 1], err)))
		return rc;
	for (j = 0; j < r->nuniq; j++) {
		if (opt->stratify == SAMPLER_STRATA_CAP) {
			r->feas[j] = (unsigned char)hc_strata_cap_feasible(*cap, r->uniq[j]);
		} else {
			r->feas[j] = 1;
			if ((rc = hc_strata_proportional(*s, r->uniq[j], r->fixed + j * opt->nstrata, err)))
				return rc;
		}
	}
	r->s = *s;
	r->cap = *cap;
	r->mode = opt->stratify;
	r->m = m;
	r->seed = opt->seed;
	return HC_OK;
}

static int result_new(struct sampler_result **out, const struct srun *r, const size_t *sizes,
		      const struct sampler_options *opt, int want_returns, struct hc_error *err)
{
	struct sampler_result *res;
	size_t cells, j;

	*out = NULL;
	if (hc_mul_size(opt->paths, r->nsizes, &cells))
		return hc_error(err, HC_ENOMEM, "%zu paths of %zu sizes is too many", opt->paths, r->nsizes);
	res = hc_calloc(1, sizeof *res);
	if (!res || !(res->sizes = hc_mallocarray(r->nsizes, sizeof *res->sizes)) ||
	    !(res->variance = hc_calloc(cells, sizeof *res->variance)) ||
	    !(res->feasible = hc_malloc(r->nsizes)) ||
	    (want_returns && !(res->annual_return = hc_calloc(cells, sizeof *res->annual_return)))) {
		hc_sampler_result_free(res);
		return hc_error(err, HC_ENOMEM, "out of memory for %zu sampled portfolios", cells);
	}
	res->paths = opt->paths;
	res->nsizes = r->nsizes;
	res->seed = opt->seed;
	memcpy(res->sizes, sizes, r->nsizes * sizeof *sizes);
	for (j = 0; j < r->nsizes; j++)
		res->feasible[j] = r->feas[r->slot[j]];
	*out = res;
	return HC_OK;
}

/* Centred series and means, as the unconstrained column route uses. */
static int centred(const struct universe *u, double **xc, double **mean, struct hc_error *err)
{
	size_t i, k, t = u->t, cells;
	long double acc;

	*xc = *mean = NULL;
	if (hc_mul_size(u->m, t, &cells) || !(*xc = hc_mallocarray(cells, sizeof **xc)) ||
	    !(*mean = hc_mallocarray(u->m, sizeof **mean))) {
		hc_free(*xc);
		*xc = NULL;
		return hc_error(err, HC_ENOMEM, "out of memory for %zu x %zu returns", u->m, t);
	}
	for (i = 0; i < u->m; i++) {
		const double *x = u->x + i * t;
		for (acc = 0, k = 0; k < t; k++)
			acc += x[k];
		(*mean)[i] = (double)(acc / t);
		for (k = 0; k < t; k++)
			(*xc)[i * t + k] = x[k] - (*mean)[i];
	}
	return HC_OK;
}

static int run_series(struct sampler_result **out, const struct universe *u,
		      const size_t *sizes, size_t nsizes, const struct sampler_options *opt,
		      struct hc_error *err)
{
	struct srun r;
	struct strata *s = NULL;
	struct strata_cap *cap = NULL;
	double *xc = NULL, *mean = NULL;
	int rc;

	*out = NULL;
	memset(&r, 0, sizeof r);
	if ((rc = check(opt, u->m, sizes, nsizes, err)))
		return rc;
	if (u->has_missing)
		return hc_error(err, HC_EUSAGE, "stratified sampling from returns needs complete data");
	if (u->m < 2 || u->t < 2)
		return hc_error(err, HC_EDATA,
				"universe has %zu securities over %zu periods, expected at least 2 of each",
				u->m, u->t);
	if ((rc = srun_plan(&r, &s, &cap, u->m, sizes, nsizes, opt, err)) ||
	    (rc = centred(u, &xc, &mean, err)) ||
	    (rc = result_new(out, &r, sizes, opt, opt->want_returns, err)))
		goto cleanup;
	r.xc = xc;
	r.mean = mean;
	r.t = u->t;
	r.want_returns = opt->want_returns;
	r.periods_per_year = opt->periods_per_year;
	rc = drive(&r, *out, opt, err);
cleanup:
	if (rc) {
		hc_sampler_result_free(*out);
		*out = NULL;
	}
	srun_release(&r, s, cap);
	hc_free(xc);
	hc_free(mean);
	return rc;
}

static int run_matrix(struct sampler_result **out, const double *a, size_t m,
		      const size_t *sizes, size_t nsizes, const struct sampler_options *opt,
		      struct hc_error *err)
{
	struct srun r;
	struct strata *s = NULL;
	struct strata_cap *cap = NULL;
	int rc;

	*out = NULL;
	memset(&r, 0, sizeof r);
	if ((rc = check(opt, m, sizes, nsizes, err)))
		return rc;
	if (opt->want_returns)
		return hc_error(err, HC_EUSAGE, "a covariance matrix has no returns to compound");
	if (m < 2)
		return hc_error(err, HC_EDATA, "covariance matrix has %zu securities, expected at least 2", m);
	if ((rc = srun_plan(&r, &s, &cap, m, sizes, nsizes, opt, err)) ||
	    (rc = result_new(out, &r, sizes, opt, 0, err)))
		goto cleanup;
	r.a = a;
	rc = drive(&r, *out, opt, err);
cleanup:
	if (rc) {
		hc_sampler_result_free(*out);
		*out = NULL;
	}
	srun_release(&r, s, cap);
	return rc;
}

int hc_strata_run(struct sampler_result **out, const struct hc_source *src,
		  const size_t *sizes, size_t nsizes, const struct sampler_options *opt,
		  struct hc_error *err)
{
	const double *a = hc_source_matrix(src);

	*out = NULL;
	if (a)
		return run_matrix(out, a, hc_source_m(src), sizes, nsizes, opt, err);
	return run_series(out, src->u, sizes, nsizes, opt, err);
}

/* ---- the stratified curve ---- */

void hc_strata_curve_free(struct strata_curve *c)
{
	if (!c)
		return;
	hc_free(c->points);
	hc_free(c);
}

/* Mean, Monte Carlo standard error, mean sigma and sigma's quantiles of
 * column j of r (numpy's linear quantile rule, as hc_sampler_summarise). */
static void summarise_size(const struct sampler_result *r, size_t j, double ppy, double *sd,
			   struct strata_point *p)
{
	size_t k, K = r->paths;
	long double s1 = 0, ss = 0;
	double v;

	for (k = 0; k < K; k++) {
		v = r->variance[k * r->nsizes + j] * ppy;
		s1 += v;
		sd[k] = sqrt(v);
	}
	p->mean_variance = (double)(s1 / K);
	for (k = 0; k < K; k++) {
		long double d = r->variance[k * r->nsizes + j] * ppy - (long double)p->mean_variance;
		ss += d * d;
	}
	p->variance_se = K > 1 ? sqrt((double)(ss / (K - 1)) / (double)K) : NAN;
	for (s1 = 0, k = 0; k < K; k++)
		s1 += sd[k];
	p->mean_sd = (double)(s1 / K);
	gsl_sort(sd, 1, K);
	p->sd_p05 = gsl_stats_quantile_from_sorted_data(sd, 1, K, 0.05);
	p->sd_p50 = gsl_stats_quantile_from_sorted_data(sd, 1, K, 0.50);
	p->sd_p95 = gsl_stats_quantile_from_sorted_data(sd, 1, K, 0.95);
	p->sampled = 1;
	p->z_score = p->variance_se > 0 && isfinite(p->expected_variance)
		? (p->mean_variance - p->expected_variance) / p->variance_se : NAN;
}

int hc_strata_curve_alloc(struct strata_curve **out, const struct sampler_result *r,
		       const struct strata *s, const struct strata_moments *sm, int mode,
		       size_t per_stratum_max, double periods_per_year, struct hc_error *err)
{
	struct strata_curve *c;
	size_t j, *alloc = NULL;
	double *sd = NULL;
	int rc = HC_OK;

	*out = NULL;
	if (r->paths == 0 || !(periods_per_year > 0))
		return hc_error(err, HC_EUSAGE, "no sampled paths, or periods per year not positive");
	c = hc_calloc(1, sizeof *c);
	if (!c || !(c->points = hc_calloc(r->nsizes, sizeof *c->points)) ||
	    !(sd = hc_mallocarray(r->paths, sizeof *sd)) ||
	    !(alloc = hc_mallocarray(s->nstrata, sizeof *alloc))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the stratified curve");
		goto cleanup;
	}
	c->npoints = r->nsizes;
	c->mode = mode;
	c->per_stratum_max = per_stratum_max;
	c->periods_per_year = periods_per_year;
	for (j = 0; j < r->nsizes; j++) {
		struct strata_point *p = &c->points[j];
		p->n = r->sizes[j];
		p->feasible = r->feasible ? r->feasible[j] : 1;
		p->expected_variance = NAN;
		if (!p->feasible)
			continue;
		if (sm && mode == SAMPLER_STRATA_PROPORTIONAL) {
			if ((rc = hc_strata_proportional(s, p->n, alloc, err)))
				goto cleanup;
			p->expected_variance = hc_strata_expected_variance(sm, s, alloc) * periods_per_year;
		}
		summarise_size(r, j, periods_per_year, sd, p);
		/* Every draw of all M is the same portfolio: its spread is
		 * rounding alone, so no z (as hc_sampler_summarise at n = M). */
		if (p->n == s->m)
			p->z_score = NAN;
	}
	*out = c;
	c = NULL;
cleanup:
	hc_strata_curve_free(c);
	hc_free(sd);
	hc_free(alloc);
	return rc;
}

int hc_strata_report_columns(const struct strata_curve *c, struct report_table *t)
{
	static const char *const keys[] = {
		"stratified_feasible", "stratified_expected_variance", "stratified_mean_variance",
		"stratified_variance_se", "stratified_mean_sd", "stratified_sd_p05",
		"stratified_sd_p50", "stratified_sd_p95", "stratified_z_score"
	};
	static const char *const titles[] = {
		"strat feasible", "strat exact var", "strat mean var", "strat var se",
		"strat mean sd", "strat sd p05", "strat sd p50", "strat sd p95", "strat z"
	};
	static const int styles[] = {
		REPORT_STYLE_PLAIN, REPORT_STYLE_SCI, REPORT_STYLE_SCI, REPORT_STYLE_SCI,
		REPORT_STYLE_PERCENT, REPORT_STYLE_PERCENT, REPORT_STYLE_PERCENT,
		REPORT_STYLE_PERCENT, REPORT_STYLE_FIXED2
	};
	size_t j, col0 = t->ncols, q;

	if (t->nrows != c->npoints)
		return HC_EUSAGE;
	for (q = 0; q < sizeof keys / sizeof *keys; q++)
		if (hc_report_table_add_column(t, keys[q], titles[q], styles[q]))
			return HC_ENOMEM;
	for (j = 0; j < c->npoints; j++) {
		const struct strata_point *p = &c->points[j];
		hc_report_table_set_bool(t, j, col0, p->feasible);
		if (!p->feasible)
			continue;
		hc_report_table_set_real(t, j, col0 + 1, p->expected_variance);
		hc_report_table_set_real(t, j, col0 + 2, p->mean_variance);
		hc_report_table_set_real(t, j, col0 + 3, p->variance_se);
		hc_report_table_set_real(t, j, col0 + 4, p->mean_sd);
		hc_report_table_set_real(t, j, col0 + 5, p->sd_p05);
		hc_report_table_set_real(t, j, col0 + 6, p->sd_p50);
		hc_report_table_set_real(t, j, col0 + 7, p->sd_p95);
		hc_report_table_set_real(t, j, col0 + 8, p->z_score);
	}
	return HC_OK;
}
