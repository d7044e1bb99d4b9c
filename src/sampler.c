/*
 * sampler.c - random equal-weight portfolios by nested random permutations
 * (design.md section 4).
 *
 * Each path draws a random ordering by a partial Fisher-Yates shuffle
 * (Fisher & Yates, 1938, Statistical Tables; in place as Durstenfeld, 1964,
 * CACM 7(7), Algorithm 235); the first n members of the ordering are a
 * uniform random n-subset, so one path yields one portfolio of every size.
 *
 * Column route: the portfolio's centred return series is a running sum of
 * the members' centred series, T contiguous doubles that stay in L1; its
 * variance ||s||^2/(n^2 (T-1)) is needed only at the grid sizes.  Because
 * the members of the first n are the complement of the last M-n, a size
 * above M/2 is reached from the universe's total series by subtracting the
 * last M-n columns (with sizes up to M, about a quarter of the work is
 * skipped).  Sums are grouped canonically (fours aligned on the ordering),
 * so a portfolio's figure has the same bits whatever other sizes are asked
 * for.
 *
 * Reproducibility: path k's generator is GSL's taus2 (L'Ecuyer, 1996,
 * Mathematics of Computation 65(213), a maximally equidistributed combined
 * Tausworthe generator, chosen over mt19937 because re-seeding it for every
 * path costs a few words instead of 624) seeded with the k-th splitmix64
 * output from the user's seed, and each path writes its own row of the
 * result; every reduction happens later, serially, in path order.  So the
 * bytes are the same whatever the thread count.
 */
#include "holdcount/sampler.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_rng.h>
#include <gsl/gsl_statistics_double.h>

#include "holdcount/memory.h"
#include "holdcount/paths.h"

/* Defaults named once. */
#define SAMPLER_DEFAULT_PATHS 10000
#define SAMPLER_SCHEDULE_CHUNK 8 /* paths per dynamic work unit */

void hc_sampler_options_init(struct sampler_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->paths = SAMPLER_DEFAULT_PATHS;
	opt->periods_per_year = 1.0;
}

void hc_sampler_result_free(struct sampler_result *r)
{
	if (!r)
		return;
	hc_free(r->sizes);
	hc_free(r->variance);
	hc_free(r->annual_return);
	hc_free(r->feasible);
	hc_free(r);
}

/* ---- the plan shared by every path ---- */

struct plan {
	size_t nsizes, nuniq;
	size_t *uniq;     /* sorted distinct sizes */
	size_t *slot;     /* slot[j]: index into uniq of sizes[j] */
	size_t split;     /* uniq[0..split-1] forward, uniq[split..] backward */
	size_t shuffle;   /* Fisher-Yates steps a path needs */
};

static int cmp_size(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	return (x > y) - (x < y);
}

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;

	return (x > y) - (x < y);
}

static void plan_release(struct plan *p)
{
	hc_free(p->uniq);
	hc_free(p->slot);
}

/* Validate sizes, sort them and split them: uniq[0..split-1] are summed
 * forward from zero, the rest backward from the total.  allow_backward = 0
 * keeps every size forward. */
static int plan_init(struct plan *p, size_t m, const size_t *sizes, size_t nsizes,
		     int allow_backward, struct hc_error *err)
{
	size_t j, k, best, fwd, back_top;

	memset(p, 0, sizeof *p);
	if (nsizes == 0)
		return hc_error(err, HC_EUSAGE, "no sizes to sample");
	for (j = 0; j < nsizes; j++)
		if (sizes[j] < 1 || sizes[j] > m)
			return hc_error(err, HC_EUSAGE,
					"size %zu is larger than the %zu securities kept", sizes[j], m);
	p->uniq = hc_mallocarray(nsizes, sizeof *p->uniq);
	p->slot = hc_mallocarray(nsizes, sizeof *p->slot);
	if (!p->uniq || !p->slot) {
		plan_release(p);
		return hc_error(err, HC_ENOMEM, "out of memory for the sampling plan");
	}
	memcpy(p->uniq, sizes, nsizes * sizeof *sizes);
	qsort(p->uniq, nsizes, sizeof *p->uniq, cmp_size);
	for (j = k = 0; j < nsizes; j++)
		if (k == 0 || p->uniq[j] != p->uniq[k - 1])
			p->uniq[k++] = p->uniq[j];
	p->nuniq = k;
	p->nsizes = nsizes;
	for (j = 0; j < nsizes; j++) {
		size_t *hit = bsearch(&sizes[j], p->uniq, p->nuniq, sizeof *p->uniq, cmp_size);
		p->slot[j] = (size_t)(hit - p->uniq);
	}
	/* Forward when 2n <= M, backward otherwise: a rule of n and M alone, so
	 * a portfolio's figure does not depend on the other sizes asked for. */
	best = 0;
	while (best < p->nuniq && (!allow_backward || 2 * p->uniq[best] <= m))
		best++;
	p->split = best;
	fwd = best ? p->uniq[best - 1] : 0;
	/* A backward size below M needs the whole ordering drawn: the members
	 * past it are then the same, in the same order, whatever the sizes. */
	back_top = 0;
	for (j = best; j < p->nuniq; j++)
		if (p->uniq[j] < m)
			back_top = m - 1;
	p->shuffle = fwd > back_top ? fwd : back_top;
	return HC_OK;
}

/* ---- per-thread workspace ---- */

struct workspace {
	gsl_rng *rng;
	uint32_t *idx;   /* the permutation being drawn */
	double *acc;     /* running series, T doubles */
	double *out_v;   /* nuniq variances of the current path */
	double *out_r;   /* nuniq returns of the current path */
	uint32_t *ridx;  /* the ordering reversed, for the backward sweep */
	double *scratch; /* T doubles: a size's series between group boundaries */
};

static void workspace_release(struct workspace *w)
{
	gsl_rng_free(w->rng);
	hc_free(w->idx);
	hc_free(w->acc);
	hc_free(w->out_v);
	hc_free(w->out_r);
	hc_free(w->ridx);
	hc_free(w->scratch);
}

static int workspace_init(struct workspace *w, size_t m, size_t t, size_t nuniq)
{
	memset(w, 0, sizeof *w);
	w->rng = gsl_rng_alloc(gsl_rng_taus2);
	w->idx = hc_mallocarray(m, sizeof *w->idx);
	w->acc = hc_mallocarray((t ? t : 1), sizeof *w->acc);
	w->out_v = hc_mallocarray(nuniq, sizeof *w->out_v);
	w->out_r = hc_mallocarray(nuniq, sizeof *w->out_r);
	w->ridx = hc_mallocarray(m, sizeof *w->ridx);
	w->scratch = hc_mallocarray((t ? t : 1), sizeof *w->scratch);
	if (!w->rng || !w->idx || !w->acc || !w->out_v || !w->out_r || !w->ridx || !w->scratch) {
		workspace_release(w);
		return -1;
	}
	return 0;
}

/*
 * A uniform integer in [0, s), s >= 1, from 32-bit outputs: Lemire's
 * multiply-and-reject method (Lemire, 2019, "Fast Random Integer Generation
 * in an Interval", ACM TOMACS 29(1)), exact, and without the division that
 * gsl_rng_uniform_int spends on every draw.  taus2 gives 32 uniform bits
 * (gsl_rng_min 0, gsl_rng_max 2^32 - 1).
 */
static uint32_t bounded(gsl_rng *r, uint32_t s)
{
	uint64_t p = (uint64_t)gsl_rng_get(r) * s;
	uint32_t low = (uint32_t)p, floor_;

	if (low < s) {
		floor_ = (uint32_t)(-s) % s;
		while (low < floor_) {
			p = (uint64_t)gsl_rng_get(r) * s;
			low = (uint32_t)p;
		}
	}
	return (uint32_t)(p >> 32);
}

/* Partial Fisher-Yates (Durstenfeld's in-place form): after `steps` swaps
 * idx[0..steps-1] is a uniform random ordered sample without replacement
 * and idx[steps..m-1] holds the rest. */
static void shuffle(struct workspace *w, size_t m, size_t steps, unsigned long seed)
{
	size_t j, u;
	uint32_t tmp;

	gsl_rng_set(w->rng, seed);
	for (j = 0; j < m; j++)
		w->idx[j] = (uint32_t)j;
	for (j = 0; j < steps && j + 1 < m; j++) {
		u = j + bounded(w->rng, (uint32_t)(m - j));
		tmp = w->idx[j];
		w->idx[j] = w->idx[u];
		w->idx[u] = tmp;
	}
}

/* ---- the column route's hot loops ---- */

/*
 * acc += (or -=) the sum of columns idx[from..to-1].  Four columns are added
 * per sweep of acc, so acc is loaded and stored a quarter as often; the loop
 * over k is contiguous and vectorises (an AVX2 clone where the CPU has it,
 * SSE2 otherwise).  Each element is the same expression in the same order
 * in both clones (elementwise, no reassociation; -std=c11 turns FMA
 * contraction off), and the callers fix the grouping by the ordering
 * alone, so the result depends neither on the thread count nor on the clone.
 */
__attribute__((target_clones("avx2", "default")))
static void sweep(double *restrict acc, const double *restrict x, size_t t,
		  const uint32_t *idx, size_t from, size_t to, int subtract)
{
	size_t j = from, k;

	for (; j + 4 <= to; j += 4) {
		const double *restrict c0 = x + (size_t)idx[j] * t;
		const double *restrict c1 = x + (size_t)idx[j + 1] * t;
		const double *restrict c2 = x + (size_t)idx[j + 2] * t;
		const double *restrict c3 = x + (size_t)idx[j + 3] * t;
		if (subtract) {
#pragma omp simd
			for (k = 0; k < t; k++)
				acc[k] -= (c0[k] + c1[k]) + (c2[k] + c3[k]);
		} else {
#pragma omp simd
			for (k = 0; k < t; k++)
				acc[k] += (c0[k] + c1[k]) + (c2[k] + c3[k]);
		}
	}
	for (; j < to; j++) {
		const double *restrict c0 = x + (size_t)idx[j] * t;
		if (subtract) {
#pragma omp simd
			for (k = 0; k < t; k++)
				acc[k] -= c0[k];
		} else {
#pragma omp simd
			for (k = 0; k < t; k++)
				acc[k] += c0[k];
		}
	}
}

/* ||acc||^2 with four fixed lanes: the same bits from either clone. */
__attribute__((target_clones("avx2", "default")))
static double norm2(const double *restrict a, size_t t)
{
	double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
	size_t k = 0;

	for (; k + 4 <= t; k += 4) {
		s0 += a[k] * a[k];
		s1 += a[k + 1] * a[k + 1];
		s2 += a[k + 2] * a[k + 2];
		s3 += a[k + 3] * a[k + 3];
	}
	for (; k < t; k++)
		s0 += a[k] * a[k];
	return (s0 + s1) + (s2 + s3);
}

struct column_job {
	const double *xc;      /* centred series, security-major */
	const double *mean;    /* each security's mean return */
	const double *total;   /* sum of all centred series */
	double total_mean;     /* sum of all means */
	size_t m, t;
	const struct plan *plan;
	int want_returns;
	double periods_per_year;
};

/* Compound annualised return of the equal-weight portfolio rebalanced each
 * period: prod(1 + r_p)^(P/T) - 1 with r_p = (acc + mean_sum)/n.
 *
 * The shortfall rule needs this for every size of every path, so it is the
 * sampler's hottest loop when returns are asked for.
 *   - A total loss (a factor 1 + r_p of 0 or less) is caught by the
 *     smallest factor, kept per lane beside the product: a minimum is
 *     exact in any order.
 *   - The growth factors are multiplied in eight fixed lanes (period k in
 *     lane k mod 8, two four-wide vectors of GCC's vector extension), so
 *     the products do not wait on one another and keep to registers; the
 *     lanes are the same whatever the vector width, so either clone gives
 *     the same bits.
 *   - After every COMPOUND_BLOCK factors a lane is split into a mantissa in
 *     [0.5, 1) and a power of two (split_exponent, exact), so no product can
 *     overflow or underflow however long the history, and one logarithm at
 *     the end replaces one a block.  Between two splits a lane multiplies
 *     COMPOUND_BLOCK factors; factors between 1e-9 and 1e9 (a period return
 *     from -99.9999999% to a billionfold gain) keep it inside a double's
 *     normal range.
 *   - 1/n is taken once: a multiplication instead of a division per
 *     factor, at most one more rounding (about 1e-16 relative) per factor,
 *     far below any threshold the shortfall rule compares with.
 * Elementwise operations in a fixed order and no reassociation (FMA
 * contraction is off under -std=c11): the same bits from either clone and
 * any thread count.
 */
#define COMPOUND_BLOCK 32
#define COMPOUND_LN2 0.69314718055994530941723212145817657 /* log(2), not in strict C11's math.h */

typedef double compound_v4 __attribute__((vector_size(4 * sizeof(double))));
typedef long long compound_m4 __attribute__((vector_size(4 * sizeof(long long))));

/* lo = the elementwise smaller of g and lo (lo where they compare equal or
 * g is NaN), by a mask blend, as C has no ?: on vectors.  A macro: a
 * function taking vectors by value draws GCC's ABI warning without AVX. */
#define COMPOUND_MIN(lo, g) do { \
	compound_m4 lt_ = (g) < (lo); \
	(lo) = (compound_v4)((lt_ & (compound_m4)(g)) | (~lt_ & (compound_m4)(lo))); \
} while (0)

/* *p = m 2^e with m in [0.5, 1), as frexp; the exponent added to *expo.
 * Normal numbers by their bits (the common case, no call); zero, subnormal
 * or non-finite values by frexp. */
static inline void split_exponent(double *p, long *expo)
{
	uint64_t b;
	unsigned ex;
	int e;

	memcpy(&b, p, sizeof b);
	ex = (unsigned)(b >> 52) & 0x7ffu;
	if (ex == 0 || ex == 0x7ffu) {
		*p = frexp(*p, &e);
		*expo += e;
		return;
	}
	*expo += (long)ex - 1022;
	b = (b & ~(UINT64_C(0x7ff) << 52)) | (UINT64_C(1022) << 52);
	memcpy(p, &b, sizeof b);
}

__attribute__((target_clones("avx2", "default")))
static double compound(const double *restrict acc, size_t t, double mean_sum, double n, double ppy)
{
	const double inv = 1.0 / n;
	const compound_v4 one = { 1.0, 1.0, 1.0, 1.0 }, vinv = { inv, inv, inv, inv };
	const compound_v4 vms = { mean_sum, mean_sum, mean_sum, mean_sum };
	compound_v4 pa = one, pb = one, la = one, lb = one, ga, gb;
	double lane[8], low[8], prod, least = 1.0;
	long expo = 0;
	size_t k, end, l;

	if (t == 0)
		return 0.0; /* no periods, no growth (the sampler needs two) */
	for (k = 0; k < t;) {
		end = t - k > 8 * COMPOUND_BLOCK ? k + 8 * COMPOUND_BLOCK : t;
		for (; k + 8 <= end; k += 8) {
			memcpy(&ga, acc + k, sizeof ga);
			memcpy(&gb, acc + k + 4, sizeof gb);
			ga = one + (ga + vms) * vinv;
			gb = one + (gb + vms) * vinv;
			pa *= ga;
			pb *= gb;
			COMPOUND_MIN(la, ga);
			COMPOUND_MIN(lb, gb);
		}
		memcpy(lane, &pa, sizeof pa);
		memcpy(lane + 4, &pb, sizeof pb);
		memcpy(low, &la, sizeof la);
		memcpy(low + 4, &lb, sizeof lb);
		for (l = 0; k < end; k++, l++) {
			double g = 1.0 + (acc[k] + mean_sum) * inv;

			lane[l] *= g;
			low[l] = g < low[l] ? g : low[l];
		}
		for (l = 0; l < 8; l++) {
			least = low[l] < least ? low[l] : least;
			split_exponent(&lane[l], &expo);
		}
		if (!(least > 0.0))
			return -1.0; /* the portfolio lost everything in some period */
		memcpy(&pa, lane, sizeof pa);
		memcpy(&pb, lane + 4, sizeof pb);
		memcpy(&la, low, sizeof la);
		memcpy(&lb, low + 4, sizeof lb);
	}
	prod = ((lane[0] * lane[1]) * (lane[2] * lane[3])) * ((lane[4] * lane[5]) * (lane[6] * lane[7]));
	return expm1((log(prod) + (double)expo * COMPOUND_LN2) * ppy / (double)t);
}

static void record(const struct column_job *job, struct workspace *w, size_t slot,
		   const double *series, double mean_sum)
{
	double n = (double)job->plan->uniq[slot];

	w->out_v[slot] = norm2(series, job->t) / (n * n * (double)(job->t - 1));
	if (job->want_returns)
		w->out_r[slot] = compound(series, job->t, mean_sum, n, job->periods_per_year);
}

/*
 * The sum of the first n columns of order[] in a canonical grouping: acc
 * holds the sum of the first `*at` (a multiple of 4) in groups of four, is
 * advanced to the last multiple of 4 not above n, and the remaining n mod 4
 * columns are added one by one to a copy.  The bits of a size's series
 * thus depend on the ordering and n only, not on the other sizes.  Returns
 * the series (acc or w->scratch).
 */
static const double *prefix_series(const struct column_job *job, struct workspace *w,
				   const uint32_t *order, size_t *at, size_t n)
{
	size_t q = n & ~(size_t)3, t = job->t;

	sweep(w->acc, job->xc, t, order, *at, q, 0);
	*at = q;
	if (q == n)
		return w->acc;
	memcpy(w->scratch, w->acc, t * sizeof *w->scratch);
	sweep(w->scratch, job->xc, t, order, q, n, 0);
	return w->scratch;
}

/* Sum of job->mean over order[from..to-1], one by one in order (a
 * sequential sum is the same whatever the breakpoints). */
static double mean_run(const struct column_job *job, const uint32_t *order, size_t from,
		       size_t to, double s)
{
	size_t j;

	for (j = from; j < to; j++)
		s += job->mean[order[j]];
	return s;
}

/* One path of the column route into w->out_v / w->out_r (nuniq slots).
 * Sizes with 2n <= M: the prefix sum of the ordering.  Larger sizes: the
 * total series minus the sum of the last M - n members, which touches
 * fewer columns (the first n members are the complement of the last M-n). */
static void column_path(const struct column_job *job, struct workspace *w, unsigned long seed)
{
	const struct plan *p = job->plan;
	const double *series;
	size_t j, k, at = 0, ms = 0, t = job->t, m = job->m, n;
	double msum = 0, *d;

	shuffle(w, m, p->shuffle, seed);
	memset(w->acc, 0, t * sizeof *w->acc);
	for (j = 0; j < p->split; j++) {
		n = p->uniq[j];
		series = prefix_series(job, w, w->idx, &at, n);
		if (job->want_returns)
			msum = mean_run(job, w->idx, ms, n, msum), ms = n;
		record(job, w, j, series, msum);
	}
	if (p->split == p->nuniq)
		return;
	for (k = 0; k < m; k++)
		w->ridx[k] = w->idx[m - 1 - k];
	memset(w->acc, 0, t * sizeof *w->acc);
	at = ms = 0;
	msum = 0;
	for (j = p->nuniq; j-- > p->split;) {
		n = m - p->uniq[j]; /* members past the size */
		series = prefix_series(job, w, w->ridx, &at, n);
		d = w->scratch;
		for (k = 0; k < t; k++)
			d[k] = job->total[k] - series[k];
		if (job->want_returns)
			msum = mean_run(job, w->ridx, ms, n, msum), ms = n;
		record(job, w, j, d, job->total_mean - msum);
	}
}

/* ---- driving the paths ---- */

struct run {
	size_t paths;
	int threads;
	const struct plan *plan;
	struct sampler_result *res;
	const struct sampler_options *opt;
	void (*path)(const void *job, struct workspace *w, unsigned long seed);
	const void *job;
	size_t m, t;
};

static void column_path_cb(const void *job, struct workspace *w, unsigned long seed)
{
	column_path(job, w, seed);
}

/* Copy a path's per-slot figures into its row, in the caller's size order. */
static void store(struct sampler_result *res, const struct plan *p, const struct workspace *w,
		  size_t k)
{
	size_t j;

	for (j = 0; j < p->nsizes; j++) {
		res->variance[k * p->nsizes + j] = w->out_v[p->slot[j]];
		if (res->annual_return)
			res->annual_return[k * p->nsizes + j] = w->out_r[p->slot[j]];
	}
}

static int run_ws_init(void *job, void *ws)
{
	const struct run *r = job;

	return workspace_init(ws, r->m, r->t, r->plan->nuniq);
}

static void run_ws_release(void *ws)
{
	workspace_release(ws);
}

/* Path k: drawn from its own seed, stored in its own row. */
static void run_path(void *job, void *ws, size_t k)
{
	const struct run *r = job;

	r->path(r->job, ws, hc_paths_seed32(r->opt->seed, k));
	store(r->res, r->plan, ws, k);
}

static int run_paths(struct run *r, struct hc_error *err)
{
	struct hc_paths p = {
		r->paths, r->threads, SAMPLER_SCHEDULE_CHUNK, r, sizeof(struct workspace), run_ws_init,
		run_ws_release, run_path, r->opt->progress, r->opt->progress_ctx, "sampler's", "sampling", "paths"
	};

	return hc_paths_run(&p, err);
}

static int check_options(const struct sampler_options *opt, struct hc_error *err)
{
	if (opt->paths == 0)
		return hc_error(err, HC_EUSAGE, "no paths to sample");
	if (opt->want_returns && !(opt->periods_per_year > 0 && isfinite(opt->periods_per_year)))
		return hc_error(err, HC_EUSAGE, "periods per year %g is not a positive number",
				opt->periods_per_year);
	if (opt->threads < 0)
		return hc_error(err, HC_EUSAGE, "thread count %d is negative", opt->threads);
	return HC_OK;
}

/* max_bytes and held: the budget (memory.h) and the bytes of the input
 * still held (the universe's numbers), so that K paths of every size,
 * the sampler's largest arrays, are refused with a message rather than
 * killed by the kernel. */
static int result_alloc(struct sampler_result **out, const size_t *sizes, size_t nsizes,
			size_t paths, int want_returns, uint64_t seed, size_t max_bytes, double held,
			struct hc_error *err)
{
	struct sampler_result *r;
	size_t cells;
	int rc;

	*out = NULL;
	if (hc_mul_size(paths, nsizes, &cells))
		return hc_error(err, HC_ENOMEM, "%zu paths of %zu sizes is too many", paths, nsizes);
	if ((rc = hc_memory_check(max_bytes, held, (double)cells * 8.0 * (want_returns ? 2 : 1), err,
				  "%zu sampled portfolios (%zu paths of %zu sizes)", cells, paths, nsizes)))
		return rc;
	r = hc_calloc(1, sizeof *r);
	if (!r)
		goto nomem;
	r->paths = paths;
	r->nsizes = nsizes;
	r->sizes = hc_mallocarray(nsizes, sizeof *r->sizes);
	r->variance = hc_calloc(cells, sizeof *r->variance);
	r->feasible = hc_malloc(nsizes);
	if (want_returns)
		r->annual_return = hc_calloc(cells, sizeof *r->annual_return);
	if (!r->sizes || !r->variance || !r->feasible || (want_returns && !r->annual_return))
		goto nomem;
	memcpy(r->sizes, sizes, nsizes * sizeof *sizes);
	memset(r->feasible, 1, nsizes);
	r->seed = seed;
	*out = r;
	return HC_OK;
nomem:
	hc_sampler_result_free(r);
	return hc_error(err, HC_ENOMEM, "out of memory for %zu sampled portfolios", cells);
}

/* Centred series, means and their totals for the column route. */
static int column_data(const struct universe *u, double **xc, double **mean, double **total,
		       double *total_mean, struct hc_error *err)
{
	size_t i, k, t = u->t, cells;
	long double s, tm = 0;

	*xc = *mean = *total = NULL;
	if (hc_mul_size(u->m, t, &cells) || !(*xc = hc_mallocarray(cells, sizeof **xc)) ||
	    !(*mean = hc_mallocarray(u->m, sizeof **mean)) || !(*total = hc_calloc(t, sizeof **total))) {
		hc_free(*xc);
		hc_free(*mean);
		*xc = *mean = NULL;
		return hc_error(err, HC_ENOMEM, "out of memory for %zu x %zu returns", u->m, t);
	}
	for (i = 0; i < u->m; i++) {
		const double *x = u->x + i * t;
		for (s = 0, k = 0; k < t; k++)
			s += x[k];
		(*mean)[i] = (double)(s / t);
		tm += (*mean)[i];
		for (k = 0; k < t; k++) {
			(*xc)[i * t + k] = x[k] - (*mean)[i];
			(*total)[k] += (*xc)[i * t + k];
		}
	}
	*total_mean = (double)tm;
	return HC_OK;
}

static int run_series(struct sampler_result **out, const struct universe *u,
		      const size_t *sizes, size_t nsizes,
		      const struct sampler_options *opt, struct hc_error *err)
{
	struct plan plan;
	struct column_job job = {0};
	struct run run = {0};
	double *xc = NULL, *mean = NULL, *total = NULL;
	int rc;

	*out = NULL;
	if ((rc = check_options(opt, err)))
		return rc;
	if (u->has_missing)
		return hc_error(err, HC_EUSAGE,
				"sampling from returns needs complete data; sample from the covariance matrix instead");
	if (u->m < 2 || u->t < 2)
		return hc_error(err, HC_EDATA,
				"universe has %zu securities over %zu periods, expected at least 2 of each",
				u->m, u->t);
	if (u->m > UINT32_MAX)
		return hc_error(err, HC_ENOMEM, "%zu securities are too many to sample", u->m);
	if ((rc = plan_init(&plan, u->m, sizes, nsizes, 1, err)))
		return rc;
	if ((rc = result_alloc(out, sizes, nsizes, opt->paths, opt->want_returns, opt->seed, u->max_bytes,
			       (double)u->m * (double)u->t * 8.0, err)))
		goto cleanup;
	if ((rc = column_data(u, &xc, &mean, &total, &job.total_mean, err)))
		goto cleanup;
	job.xc = xc;
	job.mean = mean;
	job.total = total;
	job.m = u->m;
	job.t = u->t;
	job.plan = &plan;
	job.want_returns = opt->want_returns;
	job.periods_per_year = opt->periods_per_year;
	run.paths = opt->paths;
	run.threads = opt->threads;
	run.plan = &plan;
	run.res = *out;
	run.opt = opt;
	run.path = column_path_cb;
	run.job = &job;
	run.m = u->m;
	run.t = u->t;
	rc = run_paths(&run, err);
cleanup:
	if (rc) {
		hc_sampler_result_free(*out);
		*out = NULL;
	}
	plan_release(&plan);
	hc_free(xc);
	hc_free(mean);
	hc_free(total);
	return rc;
}

/* ---- the matrix route ---- */

struct matrix_job {
	const double *a;
	size_t m;
	const struct plan *plan;
};

/* Running quadratic form: adding member p to a portfolio of sum X gives
 * X + a_pp + 2 sum_{q before p} a_pq; variance X/n^2 at the grid sizes. */
static void matrix_path(const void *vjob, struct workspace *w, unsigned long seed)
{
	const struct matrix_job *job = vjob;
	const struct plan *p = job->plan;
	size_t j, q, g = 0, m = job->m;
	long double x = 0;
	double cross;

	shuffle(w, m, p->shuffle, seed);
	for (j = 0; j < p->uniq[p->nuniq - 1]; j++) {
		const double *row = job->a + (size_t)w->idx[j] * m;
		cross = 0;
		for (q = 0; q < j; q++)
			cross += row[w->idx[q]];
		x += row[w->idx[j]] + 2 * cross;
		if (j + 1 == p->uniq[g]) {
			w->out_v[g] = (double)(x / ((long double)(j + 1) * (j + 1)));
			g++;
		}
	}
}

static int run_matrix(struct sampler_result **out, const double *a, size_t m,
		      const size_t *sizes, size_t nsizes,
		      const struct sampler_options *opt, struct hc_error *err)
{
	struct plan plan;
	struct matrix_job job;
	struct run run = {0};
	int rc;

	*out = NULL;
	if ((rc = check_options(opt, err)))
		return rc;
	if (opt->want_returns)
		return hc_error(err, HC_EUSAGE, "a covariance matrix has no returns to compound");
	if (m < 2)
		return hc_error(err, HC_EDATA, "covariance matrix has %zu securities, expected at least 2", m);
	if (m > UINT32_MAX)
		return hc_error(err, HC_ENOMEM, "%zu securities are too many to sample", m);
	if ((rc = plan_init(&plan, m, sizes, nsizes, 0, err)))
		return rc;
	if ((rc = result_alloc(out, sizes, nsizes, opt->paths, 0, opt->seed, 0, (double)m * (double)m * 8.0, err)))
		goto cleanup;
	job.a = a;
	job.m = m;
	job.plan = &plan;
	run.paths = opt->paths;
	run.threads = opt->threads;
	run.plan = &plan;
	run.res = *out;
	run.opt = opt;
	run.path = matrix_path;
	run.job = &job;
	run.m = m;
	run.t = 0;
	rc = run_paths(&run, err);
	if (rc) {
		hc_sampler_result_free(*out);
		*out = NULL;
	}
cleanup:
	plan_release(&plan);
	return rc;
}

/* A source that draws from a matrix (a covariance matrix, or the
 * pairwise-complete covariances of series with gaps) takes the matrix
 * route, complete series the column route.  Stratified draws are
 * strata.c's (hc_strata_run), which builds on this module, not the other
 * way round. */
int hc_sampler_run(struct sampler_result **out, const struct hc_source *src,
		   const size_t *sizes, size_t nsizes,
		   const struct sampler_options *opt, struct hc_error *err)
{
	const double *a = hc_source_matrix(src);

	*out = NULL;
	if (opt->strata || opt->stratify != SAMPLER_STRATA_NONE)
		return hc_error(err, HC_EUSAGE, "stratified draws are hc_strata_run's (strata.h)");
	if (a)
		return run_matrix(out, a, hc_source_m(src), sizes, nsizes, opt, err);
	if (src->kind == HC_SOURCE_RAGGED)
		return hc_error(err, HC_EUSAGE, "a ragged history is sampled period by period (hc_periodic_sample)");
	return run_series(out, src->u, sizes, nsizes, opt, err);
}

/* ---- summary ---- */

int hc_sampler_summarise(struct curve *c, const struct sampler_result *r,
		      struct hc_error *err)
{
	double *sd, ppy = c->periods_per_year, v, mean_v, mean_s, var_v;
	long double s1, ss;
	size_t j, k, K = r->paths;
	struct curve_point *pt;

	if (c->npoints != r->nsizes)
		return hc_error(err, HC_EUSAGE, "the curve has %zu sizes but the sample %zu",
				c->npoints, r->nsizes);
	for (j = 0; j < r->nsizes; j++)
		if (c->points[j].n != r->sizes[j])
			return hc_error(err, HC_EUSAGE, "the curve's size %zu does not match the sample's %zu",
					c->points[j].n, r->sizes[j]);
	if (K == 0)
		return hc_error(err, HC_EUSAGE, "no sampled paths to summarise");
	sd = hc_mallocarray(K, sizeof *sd);
	if (!sd)
		return hc_error(err, HC_ENOMEM, "out of memory for %zu sampled portfolios", K);
	for (j = 0; j < r->nsizes; j++) {
		pt = &c->points[j];
		s1 = 0;
		for (k = 0; k < K; k++) {
			v = r->variance[k * r->nsizes + j] * ppy;
			s1 += v;
			sd[k] = sqrt(v);
		}
		mean_v = (double)(s1 / K);
		/* Two-pass sample variance (divisor K-1), as numpy's var(ddof=1). */
		ss = 0;
		for (k = 0; k < K; k++) {
			long double d = r->variance[k * r->nsizes + j] * ppy - (long double)mean_v;
			ss += d * d;
		}
		var_v = K > 1 ? (double)(ss / (K - 1)) : NAN;
		s1 = 0;
		for (k = 0; k < K; k++)
			s1 += sd[k];
		mean_s = (double)(s1 / K);
		qsort(sd, K, sizeof *sd, cmp_double);
		pt->sampled = 1;
		pt->sampled_mean_variance = mean_v;
		pt->sampled_variance_se = sqrt(var_v / (double)K);
		pt->sampled_mean_sd = mean_s;
		/* GSL's quantile interpolates like numpy's default (linear). */
		pt->sd_p05 = gsl_stats_quantile_from_sorted_data(sd, 1, K, 0.05);
		pt->sd_p50 = gsl_stats_quantile_from_sorted_data(sd, 1, K, 0.50);
		pt->sd_p95 = gsl_stats_quantile_from_sorted_data(sd, 1, K, 0.95);
		/* Where every draw is the same portfolio (n = M, or a stratified
		 * allocation that leaves no choice) the sampled variances differ
		 * only by rounding, so their standard error measures rounding, not
		 * sampling, and a z-score from it would be noise over noise. */
		pt->z_score = pt->sampled_variance_se > SAMPLER_SPREAD_RTOL * fabs(mean_v)
			? (mean_v - pt->expected_variance) / pt->sampled_variance_se : NAN;
	}
	c->paths = K;
	c->seed = r->seed;
	hc_free(sd);
	return HC_OK;
}
