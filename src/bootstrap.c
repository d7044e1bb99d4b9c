/*
 * bootstrap.c - moving-block and stationary bootstrap of periods, with each
 * replicate's average variance and covariance in O(T^2) (or O(MT)) from
 * sums computed once, never from an M x M covariance matrix.
 *
 * Methods: the moving-block bootstrap of Kuensch (1989), "The Jackknife and
 * the Bootstrap for General Stationary Observations", Annals of Statistics
 * 17(3); the stationary bootstrap of Politis & Romano (1994), "The
 * Stationary Bootstrap", Journal of the American Statistical Association
 * 89(428).  Block length round(T^(1/3)) by default: common practice for
 * its order, no single source.
 */
#include "holdcount/bootstrap.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cblas.h>
#include <gsl/gsl_cdf.h>

#include "holdcount/memory.h"
#include "holdcount/paths.h"
#include "holdcount/threads.h"
#include "holdcount/sampler.h"

void hc_bootstrap_options_init(struct bootstrap_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->replicates = BOOTSTRAP_DEFAULT_REPLICATES;
	opt->kind = BOOTSTRAP_BLOCK;
	opt->seed = 1;
}

size_t hc_bootstrap_default_block_length(size_t t)
{
	double l = floor(cbrt((double)t) + 0.5);

	return l < 1 ? 1 : (size_t)l;
}

const char *hc_bootstrap_kind_name(int kind)
{
	switch (kind) {
	case BOOTSTRAP_BLOCK: return "block";
	case BOOTSTRAP_STATIONARY: return "stationary";
	default: return NULL;
	}
}

/* The replicate's stream generator is splitmix64 itself (Steele, Lea &
 * Flood, 2014, OOPSLA; hc_paths_splitmix64): its output passes BigCrush, and
 * a replicate needs only about T draws. */
static uint64_t splitmix64(uint64_t *state)
{
	return hc_paths_splitmix64(state);
}

/* Replicate rep's stream state from (seed, rep): the replicate number is
 * mixed first so that neighbouring (seed, rep) pairs give unrelated
 * streams. */
static uint64_t replicate_state(uint64_t seed, size_t rep)
{
	return hc_paths_stream(seed, (uint64_t)rep);
}

/* Uniform double in [0, 1) from the top 53 bits. */
static double uniform01(uint64_t *state)
{
	return (double)(splitmix64(state) >> 11) * 0x1.0p-53;
}

int hc_bootstrap_indices(int kind, size_t t, size_t block_length, uint64_t seed,
		      size_t rep, size_t *idx, struct hc_error *err)
{
	return hc_bootstrap_indices_n(kind, t, t, block_length, seed, rep, idx, err);
}

int hc_bootstrap_indices_n(int kind, size_t t, size_t n, size_t block_length, uint64_t seed,
			   size_t rep, size_t *idx, struct hc_error *err)
{
	uint64_t st = replicate_state(seed, rep);
	size_t k, pos, l = block_length;

	if (t == 0 || l < 1 || l > t)
		return hc_error(err, HC_EUSAGE, "bad block length %zu: expected 1 to %zu periods", l, t);
	if (n == 0)
		return HC_OK;
	if (kind == BOOTSTRAP_BLOCK) {
		/* Kuensch (1989): blocks start uniformly in 0..T-L. */
		for (k = 0; k < n; k += l) {
			size_t start = (size_t)hc_paths_uniform_below(&st, t - l + 1), j;

			for (j = 0; j < l && k + j < n; j++)
				idx[k + j] = start + j;
		}
		return HC_OK;
	}
	if (kind != BOOTSTRAP_STATIONARY)
		return hc_error(err, HC_EUSAGE, "unknown bootstrap kind %d", kind);
	/* Politis & Romano (1994): each period starts a new block with
	 * probability 1/L at a uniform position, else follows the previous one,
	 * wrapping circularly. */
	pos = (size_t)hc_paths_uniform_below(&st, t);
	idx[0] = pos;
	for (k = 1; k < n; k++) {
		if (uniform01(&st) * (double)l < 1.0)
			pos = (size_t)hc_paths_uniform_below(&st, t);
		else
			pos = pos + 1 == t ? 0 : pos + 1;
		idx[k] = pos;
	}
	return HC_OK;
}

void hc_bootstrap_base_free(struct bootstrap_base *b)
{
	if (!b)
		return;
	hc_free(b->rowsum);
	hc_free(b->gram);
	hc_free(b->xc);
	hc_free(b);
}

/* Centre each security's series by its mean (two passes). */
static void centre(const struct universe *u, double *xc)
{
	size_t i, t;

	for (i = 0; i < u->m; i++) {
		const double *x = u->x + i * u->t;
		double *y = xc + i * u->t, mean = 0;

		for (t = 0; t < u->t; t++)
			mean += x[t];
		mean /= (double)u->t;
		for (t = 0; t < u->t; t++)
			y[t] = x[t] - mean;
	}
}

int hc_bootstrap_base_alloc(struct bootstrap_base **out, const struct universe *u,
			 struct hc_error *err)
{
	struct bootstrap_base *b = NULL;
	size_t mt, tt, i, t;
	int status = HC_OK;

	*out = NULL;
	if (u->has_missing)
		return hc_error(err, HC_EDATA, "the bootstrap needs complete data: '%s' has missing returns", u->source ? u->source : "universe");
	if (u->m < 2 || u->t < 2)
		return hc_error(err, HC_EDATA, "the bootstrap needs at least two securities and two periods");
	if (hc_mul_size(u->m, u->t, &mt) || hc_mul_size(u->t, u->t, &tt))
		return hc_error(err, HC_ENOMEM, "universe too large for the bootstrap");
	if ((status = hc_memory_check(u->max_bytes, (double)mt * 8.0,
				      ((double)mt + (u->t <= u->m ? (double)tt : 0.0) + (double)u->t) * 8.0, err,
				      "the bootstrap's centred copy of %zu x %zu returns", u->m, u->t)))
		return status;
	b = hc_calloc(1, sizeof *b);
	if (!b)
		return hc_error(err, HC_ENOMEM, "out of memory for the bootstrap");
	b->max_bytes = u->max_bytes;
	b->m = u->m;
	b->t = u->t;
	b->rowsum = hc_calloc(u->t, sizeof *b->rowsum);
	b->xc = hc_mallocarray(mt, sizeof *b->xc);
	if (!b->rowsum || !b->xc) {
		status = hc_error(err, HC_ENOMEM, "out of memory for the bootstrap");
		goto cleanup;
	}
	centre(u, b->xc);
	for (i = 0; i < u->m; i++)
		for (t = 0; t < u->t; t++)
			b->rowsum[t] += b->xc[i * u->t + t];
	if (u->t <= u->m) {
		b->gram = hc_mallocarray(tt, sizeof *b->gram);
		if (!b->gram) {
			status = hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu Gram matrix", u->t, u->t);
			goto cleanup;
		}
		/* G = X^T X with X the m x t security-major centred data. */
		cblas_dsyrk(CblasRowMajor, CblasUpper, CblasTrans, (int)u->t, (int)u->m,
			    1.0, b->xc, (int)u->t, 0.0, b->gram, (int)u->t);
		for (t = 0; t < u->t; t++)
			for (i = 0; i < t; i++)
				b->gram[t * u->t + i] = b->gram[i * u->t + t];
		hc_free(b->xc);
		b->xc = NULL;
	}
cleanup:
	if (status != HC_OK) {
		hc_bootstrap_base_free(b);
		return status;
	}
	*out = b;
	return HC_OK;
}

/* sum_i A_ii times (T-1), by the Gram matrix: sum_t w_t G_tt - w^T G w / T. */
static double trace_gram(const struct bootstrap_base *b, const double *w)
{
	size_t n = b->t, s, k;
	double diag = 0, quad = 0;

	for (s = 0; s < n; s++) {
		const double *g = b->gram + s * n;
		double dot = 0;

		if (w[s] == 0)
			continue;
		diag += w[s] * g[s];
#pragma omp simd reduction(+:dot)
		for (k = 0; k < n; k++)
			dot += g[k] * w[k];
		quad += w[s] * dot;
	}
	return diag - quad / (double)n;
}

/* The same from the centred data, O(MT): for T > M. */
static double trace_direct(const struct bootstrap_base *b, const double *w)
{
	size_t i, k, n = b->t;
	double tr = 0;

	for (i = 0; i < b->m; i++) {
		const double *x = b->xc + i * n;
		double s1 = 0, s2 = 0;

#pragma omp simd reduction(+:s1, s2)
		for (k = 0; k < n; k++) {
			s1 += w[k] * x[k];
			s2 += w[k] * x[k] * x[k];
		}
		tr += s2 - s1 * s1 / (double)n;
	}
	return tr;
}

void hc_bootstrap_moments(const struct bootstrap_base *b, const double *w,
		       double *vbar, double *cbar)
{
	size_t k, n = b->t;
	double s1 = 0, s2 = 0, total, trace, m = (double)b->m;

	for (k = 0; k < n; k++) {
		s1 += w[k] * b->rowsum[k];
		s2 += w[k] * b->rowsum[k] * b->rowsum[k];
	}
	/* Sum of every entry of A = sample variance of the row-sum series. */
	total = (s2 - s1 * s1 / (double)n) / (double)(n - 1);
	trace = (b->gram ? trace_gram(b, w) : trace_direct(b, w)) / (double)(n - 1);
	*vbar = trace / m;
	*cbar = (total - trace) / (m * (m - 1));
}

void hc_bootstrap_result_free(struct bootstrap_result *r)
{
	if (!r)
		return;
	hc_free(r->vbar);
	hc_free(r->cbar);
	hc_free(r);
}

/* One replicate into slot rep, with the thread's own idx and w (t each). */
static void run_one(const struct bootstrap_base *b, const struct bootstrap_options *opt,
		    size_t l, size_t rep, size_t *idx, double *w,
		    struct bootstrap_result *r)
{
	size_t k;

	/* Arguments were checked before the parallel region, so this cannot fail. */
	hc_bootstrap_indices(opt->kind, b->t, l, opt->seed, rep, idx, NULL);
	memset(w, 0, b->t * sizeof *w);
	for (k = 0; k < b->t; k++)
		w[idx[k]] += 1;
	hc_bootstrap_moments(b, w, &r->vbar[rep], &r->cbar[rep]);
}

/* One thread's indices and period weights. */
struct bws {
	size_t *idx;
	double *w;
};

struct bjob {
	const struct bootstrap_base *b;
	const struct bootstrap_options *opt;
	size_t l;
	struct bootstrap_result *r;
};

static int bjob_ws_init(void *job, void *ws)
{
	const struct bjob *j = job;
	struct bws *w = ws;

	w->idx = hc_mallocarray(j->b->t, sizeof *w->idx);
	w->w = hc_mallocarray(j->b->t, sizeof *w->w);
	if (w->idx && w->w)
		return 0;
	hc_free(w->idx);
	hc_free(w->w);
	return -1;
}

static void bjob_ws_release(void *ws)
{
	struct bws *w = ws;

	hc_free(w->idx);
	hc_free(w->w);
}

static void bjob_path(void *job, void *ws, size_t rep)
{
	const struct bjob *j = job;
	struct bws *w = ws;

	run_one(j->b, j->opt, j->l, rep, w->idx, w->w, j->r);
}

int hc_bootstrap_run(struct bootstrap_result **out, const struct bootstrap_base *b,
		  const struct bootstrap_options *opt, struct hc_error *err)
{
	struct bootstrap_result *r = NULL;
	struct bjob job;
	size_t l;
	int status, nthreads;

	*out = NULL;
	if (opt->replicates == 0)
		return hc_error(err, HC_EUSAGE, "the bootstrap needs at least one replicate");
	if (opt->replicates > HC_BOOTSTRAP_MAX_REPLICATES)
		return hc_error(err, HC_EUSAGE, "%zu bootstrap replicates is more than the %u allowed",
				opt->replicates, HC_BOOTSTRAP_MAX_REPLICATES);
	if (!hc_bootstrap_kind_name(opt->kind))
		return hc_error(err, HC_EUSAGE, "unknown bootstrap kind %d", opt->kind);
	l = opt->block_length ? opt->block_length : hc_bootstrap_default_block_length(b->t);
	if (l > b->t)
		return hc_error(err, HC_EUSAGE, "bad block length %zu: longer than the %zu periods", l, b->t);
	nthreads = hc_threads_usable(opt->threads, NULL);
	/* Two averages per replicate and two t-long arrays per thread, with
	 * the base's arrays still held. */
	if ((status = hc_memory_check(b->max_bytes,
				      ((double)b->m * (double)b->t + (b->gram ? (double)b->t * (double)b->t : 0.0)) * 8.0,
				      (double)opt->replicates * 16.0 + (double)nthreads * (double)b->t * 16.0, err,
				      "%zu bootstrap replicates", opt->replicates)))
		return status;
	r = hc_calloc(1, sizeof *r);
	if (!r || !(r->vbar = hc_mallocarray(opt->replicates, sizeof *r->vbar)) ||
	    !(r->cbar = hc_mallocarray(opt->replicates, sizeof *r->cbar))) {
		hc_bootstrap_result_free(r);
		return hc_error(err, HC_ENOMEM, "out of memory for %zu bootstrap replicates", opt->replicates);
	}
	r->replicates = opt->replicates;
	r->block_length = l;
	r->kind = opt->kind;
	job.b = b;
	job.opt = opt;
	job.l = l;
	job.r = r;
	{
		struct hc_paths p = {
			opt->replicates, opt->threads, 4, &job, sizeof(struct bws), bjob_ws_init, bjob_ws_release,
			bjob_path, opt->progress, opt->progress_ctx, "bootstrap's", "bootstrap", "replicates"
		};
		status = hc_paths_run(&p, err);
	}
	if (status != HC_OK) {
		hc_bootstrap_result_free(r);
		return status;
	}
	*out = r;
	return HC_OK;
}

/* ---- data-driven block length and the block jackknife ------------------ */

/* Sample autocovariance of x at lag k (divisor n, mean removed). */
static double autocov(const double *x, size_t n, double mean, size_t k)
{
	double s = 0;
	size_t t;

	for (t = k; t < n; t++)
		s += (x[t] - mean) * (x[t - k] - mean);
	return s / (double)n;
}

/* The flat-top lag window of Politis & Romano (1995). */
static double flat_top(double t)
{
	t = fabs(t);
	return t <= 0.5 ? 1.0 : t <= 1.0 ? 2.0 * (1.0 - t) : 0.0;
}

/*
 * Politis & White (2004), "Automatic Block-Length Selection for the
 * Dependent Bootstrap", Econometric Reviews 23(1), with the correction of
 * Patton, Politis & White (2009), Econometric Reviews 28(4), for the
 * stationary bootstrap:
 *   m-hat: the smallest lag after which K_n = max(5, ceil(sqrt(log10 n)))
 *          autocorrelations in a row are within 2 sqrt(log10(n)/n);
 *   M = min(2 m-hat, ceil(sqrt(n)) + K_n);
 *   G = sum_{|k|<=M} lambda(k/M) |k| R(k),  g = sum_{|k|<=M} lambda(k/M) R(k),
 *   D_SB = 2 g^2 (the corrected constant);
 *   b = (2 G^2 / D_SB)^(1/3) n^(1/3), at most min(3 sqrt(n), n/3).
 * Returns b (at least 1) as a real number.
 */
double hc_bootstrap_politis_white(const double *x, size_t n)
{
	size_t kn, mmax, m, k, run = 0, mhat = 0, lagmax;
	double mean = 0, r0, crit, g = 0, G = 0, b, cap;

	if (n < 8)
		return 1.0;
	for (k = 0; k < n; k++)
		mean += x[k];
	mean /= (double)n;
	r0 = autocov(x, n, mean, 0);
	if (!(r0 > 0))
		return 1.0;
	kn = (size_t)ceil(sqrt(log10((double)n)));
	if (kn < 5)
		kn = 5;
	mmax = (size_t)ceil(sqrt((double)n)) + kn;
	crit = 2.0 * sqrt(log10((double)n) / (double)n);
	lagmax = mmax + kn < n - 1 ? mmax + kn : n - 1;
	for (k = 1; k <= lagmax; k++) {
		if (fabs(autocov(x, n, mean, k) / r0) < crit) {
			if (++run == kn) {
				mhat = k - kn;
				break;
			}
		} else
			run = 0;
	}
	if (run < kn)
		mhat = mmax;   /* no quiet stretch found: the largest lag allowed */
	m = 2 * mhat < mmax ? 2 * mhat : mmax;
	if (m == 0)
		m = 1;
	g = r0;
	for (k = 1; k <= m && k < n; k++) {
		double w = flat_top((double)k / (double)m), r = autocov(x, n, mean, k);

		g += 2 * w * r;
		G += 2 * w * (double)k * r;
	}
	if (!(g * g > 0) || G == 0)
		return 1.0;
	b = cbrt(2 * G * G / (2 * g * g)) * cbrt((double)n);
	cap = fmin(3 * sqrt((double)n), (double)n / 3);
	if (b > cap)
		b = cap;
	return b < 1 ? 1.0 : b;
}

/* The per-period series the averages are means of, for the block length:
 * rowsum^2 (the equal-weight universe's squared return, behind V + C) and
 * the row sum of squares (behind V). */
static double row_squares(const struct bootstrap_base *b, size_t t)
{
	size_t i;
	double s = 0;

	if (b->gram)
		return b->gram[t * b->t + t];
	for (i = 0; i < b->m; i++)
		s += b->xc[i * b->t + t] * b->xc[i * b->t + t];
	return s;
}

int hc_bootstrap_auto_block_length(const struct bootstrap_base *b, size_t *length,
				   struct hc_error *err)
{
	double *x = hc_malloc(b->t * sizeof *x), l1, l2, l;
	size_t t;

	if (!x)
		return hc_error(err, HC_ENOMEM, "out of memory for the block length");
	for (t = 0; t < b->t; t++)
		x[t] = b->rowsum[t] * b->rowsum[t];
	l1 = hc_bootstrap_politis_white(x, b->t);
	for (t = 0; t < b->t; t++)
		x[t] = row_squares(b, t);
	l2 = hc_bootstrap_politis_white(x, b->t);
	hc_free(x);
	l = floor(fmax(l1, l2) + 0.5);
	if (l < 1)
		l = 1;
	if (l > (double)b->t)
		l = (double)b->t;
	*length = (size_t)l;
	return HC_OK;
}

/*
 * Averages with the periods first..first+len-1 left out (the data are
 * centred on the whole sample, so the column sums over the rest are minus
 * those over the block):
 *   V_-B = (sum_t q_t - sum_B q_t - sum_i (sum_B x_ti)^2 / n') / (n' - 1),
 *   (V + C)_-B = sample variance of the row sums over the n' periods kept,
 * with q_t = sum_i x_ti^2 and sum_i (sum_B x_ti)^2 = sum_{t,u in B} G_tu.
 */
static void moments_without(const struct bootstrap_base *b, double qtotal, size_t first,
			    size_t len, double *vbar, double *cbar)
{
	double np = (double)(b->t - len), qb = 0, cross = 0, s1 = 0, s2 = 0, V, VC, m = (double)b->m;
	size_t t, u, i;

	for (t = first; t < first + len; t++)
		qb += row_squares(b, t);
	if (b->gram) {
		for (t = first; t < first + len; t++)
			for (u = first; u < first + len; u++)
				cross += b->gram[t * b->t + u];
	} else {
		for (i = 0; i < b->m; i++) {
			double c = 0;

			for (t = first; t < first + len; t++)
				c += b->xc[i * b->t + t];
			cross += c * c;
		}
	}
	V = (qtotal - qb - cross / np) / (np - 1);
	for (t = 0; t < b->t; t++) {
		if (t >= first && t < first + len)
			continue;
		s1 += b->rowsum[t];
		s2 += b->rowsum[t] * b->rowsum[t];
	}
	VC = (s2 - s1 * s1 / np) / (np - 1);
	*vbar = V / m;
	*cbar = (VC - V) / (m * (m - 1));
}

int hc_bootstrap_jackknife(const struct bootstrap_base *b, size_t block_length, double **vbar,
			   double **cbar, size_t *n, struct hc_error *err)
{
	size_t nb, k, t;
	double qtotal = 0;

	*vbar = *cbar = NULL;
	*n = 0;
	if (block_length < 1 || b->t / block_length < 2 || b->t - block_length < 2)
		return hc_error(err, HC_EUSAGE, "the block jackknife needs at least two blocks of %zu periods", block_length);
	nb = b->t / block_length;
	*vbar = hc_malloc(nb * sizeof **vbar);
	*cbar = hc_malloc(nb * sizeof **cbar);
	if (!*vbar || !*cbar) {
		hc_free(*vbar);
		hc_free(*cbar);
		*vbar = *cbar = NULL;
		return hc_error(err, HC_ENOMEM, "out of memory for the jackknife");
	}
	for (t = 0; t < b->t; t++)
		qtotal += row_squares(b, t);
	for (k = 0; k < nb; k++)
		moments_without(b, qtotal, k * block_length, block_length, &(*vbar)[k], &(*cbar)[k]);
	*n = nb;
	return HC_OK;
}

void hc_bootstrap_period_series(const struct bootstrap_base *b, double *q, double *s2)
{
	size_t t;

	for (t = 0; t < b->t; t++) {
		q[t] = row_squares(b, t);
		s2[t] = b->rowsum[t] * b->rowsum[t];
	}
}

/* The long-run variance of the mean of g over the drawn periods with
 * Bartlett weights (Newey & West, 1987, Econometrica 55(3)) up to lag
 * bw - 1: dependence in the squares (volatility clustering) widens it. */
double hc_bootstrap_long_run_se(const double *g, const size_t *idx, size_t t, size_t bw)
{
	double mean = 0, lrv = 0, dt = (double)t;
	size_t i, lag;

	for (i = 0; i < t; i++)
		mean += g[idx ? idx[i] : i];
	mean /= dt;
	for (lag = 0; lag < bw && lag < t; lag++) {
		double c = 0, wgt = lag == 0 ? 1.0 : 2.0 * (1.0 - (double)lag / (double)bw);

		for (i = lag; i < t; i++)
			c += (g[idx ? idx[i] : i] - mean) * (g[idx ? idx[i - lag] : i - lag] - mean);
		lrv += wgt * c;
	}
	return sqrt(fmax(lrv, 0) / (dt * dt));
}

/* McLeod & Li (1983): Ljung-Box on the squares of the centred series r. */
void hc_bootstrap_mcleod_li(const double *r, size_t n, size_t *lags, double *q, double *p)
{
	size_t h = *lags ? *lags : HC_BOOTSTRAP_CLUSTERING_LAGS, t, k;
	double mean = 0, den = 0, sum = 0;

	*q = *p = NAN;
	if (h > n / 4)
		h = n / 4;
	if (h < 1)
		h = 1;
	*lags = h;
	if (n < 8)
		return;
	for (t = 0; t < n; t++)
		mean += r[t] * r[t];
	mean /= (double)n;
	for (t = 0; t < n; t++) {
		double d = r[t] * r[t] - mean;

		den += d * d;
	}
	if (!(den > 0))
		return;
	for (k = 1; k <= h; k++) {
		double c = 0, rk;

		for (t = k; t < n; t++)
			c += (r[t] * r[t] - mean) * (r[t - k] * r[t - k] - mean);
		rk = c / den;
		sum += rk * rk / (double)(n - k);
	}
	*q = (double)n * (double)(n + 2) * sum;
	*p = gsl_cdf_chisq_Q(*q, (double)h);
}

/* The equal-weight portfolio's squared return times M^2: the scale cancels. */
void hc_bootstrap_clustering(const struct bootstrap_base *b, size_t *lags, double *q, double *p)
{
	hc_bootstrap_mcleod_li(b->rowsum, b->t, lags, q, p);
}
