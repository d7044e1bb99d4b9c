/*
 * moments.c - the sums behind the exact curve (design.md section 3).
 *
 * Three routes from returns, chosen by the data's shape:
 *   Gram     complete data, T < M: V, r_i and C from column sums in O(MT),
 *            S + Q = ||A||_F^2 = ||X X^T||_F^2 / (T-1)^2 from the T x T Gram
 *            matrix in O(T^2 M); no M x M matrix is formed.
 *   matrix   complete data, T >= M: A = X^T X/(T-1) by BLAS dgemm in blocks
 *            of MOMENTS_BLOCK_ROWS rows, O(M^2 T), never held whole.
 *   pairwise data with gaps: each covariance over the periods both
 *            securities have (pairwise-complete), O(M^2 T).
 * Sums over M or M^2 terms are accumulated in long double so that the
 * spread formula's cancellation (E[X^2] - E[X]^2) starts from accurate sums.
 */
#include "holdcount/moments.h"
#include "holdcount/periodic.h"
#include "holdcount/source.h"

#include <math.h>
#include <omp.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_cblas.h>

#include "holdcount/covmatrix.h"
#include "holdcount/memory.h"

/*
 * OpenBLAS's own thread control (the build links OpenBLAS, design.md).
 * Its pthread build keeps worker threads spinning with sched_yield for
 * about 0.1 s after every threaded call, which steals the cores from the
 * OpenMP sampler that runs next.  One BLAS thread does the Gram or
 * covariance product fast enough (about 2 GFlop for 5000 x 600, some
 * 0.05 s), so each product runs single-threaded and the setting is put
 * back afterwards.
 */
void openblas_set_num_threads(int num_threads);
int openblas_get_num_threads(void);
int blas_thread_shutdown_(void);

/*
 * The pthread build also starts its worker threads when the library loads,
 * and they spin the same way from then on (measured: a process that makes
 * no BLAS call at all spends a second core on sched_yield for its first
 * 0.1 s).  Only OPENBLAS_NUM_THREADS=1 in the environment, read at load,
 * prevents that; a program can instead put BLAS on one thread and stop the
 * idle workers (blas_thread_shutdown_ is what OpenBLAS's own fork handler
 * calls; a later threaded call would start them again).
 */
void hc_moments_blas_serial(void)
{
	openblas_set_num_threads(1);
	blas_thread_shutdown_();
}

/* One BLAS thread for a product; the count it replaced (to give to
 * blas_restore).  The count is set only when it differs: setting it
 * re-creates the worker threads hc_moments_blas_serial stopped, and they
 * spin again. */
static int blas_single(void)
{
	int saved = openblas_get_num_threads();

	if (saved != 1)
		openblas_set_num_threads(1);
	return saved;
}

static void blas_restore(int saved)
{
	if (saved != 1)
		openblas_set_num_threads(saved);
}

static void syrk(enum CBLAS_TRANSPOSE trans, size_t n, size_t k, double alpha,
		 const double *a, size_t lda, double *c, size_t ldc)
{
	int saved = blas_single();

	cblas_dsyrk(CblasRowMajor, CblasUpper, trans, (int)n, (int)k, alpha,
		    a, (int)lda, 0.0, c, (int)ldc);
	blas_restore(saved);
}

static const char *security_name(const struct universe *u, size_t i, char *buf, size_t len)
{
	if (u->ids && u->ids[i])
		return u->ids[i];
	snprintf(buf, len, "#%zu", i + 1);
	return buf;
}

/* Derived figures common to every route with a finite universe. */
static void finish(struct moments *mo)
{
	double m = (double)mo->m;

	mo->average_variance = mo->sum_var / m;
	mo->average_covariance = mo->sum_cov / (m * (m - 1.0));
	mo->universe_variance = (mo->sum_var + mo->sum_cov) / (m * m);
}

/* Store every route's sums (design.md section 3: V, C, S, Q, W, Z) and the
 * sum R of the off-diagonal correlations, then the derived figures. */
static void store_sums(struct moments *mo, long double V, long double C, long double S,
		       long double Q, long double W, long double Z, long double R)
{
	long double m = (long double)mo->m;

	mo->has_spread = 1;
	mo->has_correlation = 1;
	mo->sum_var = (double)V;
	mo->sum_cov = (double)C;
	mo->sum_var2 = (double)S;
	mo->sum_cov2 = (double)Q;
	mo->sum_var_rowcov = (double)W;
	mo->sum_rowcov2 = (double)Z;
	mo->average_correlation = (double)(R / (m * (m - 1)));
	finish(mo);
}

/*
 * V, C, S, Q, W, Z and the average correlation from a full M x M matrix.
 * Off-diagonal entries are read as given (the caller supplies a symmetric
 * matrix), each row sum r_i over j != i.
 */
static int sums_from_matrix(struct moments *mo, const double *a, size_t m,
			    struct hc_error *err)
{
	long double V = 0, C = 0, S = 0, Q = 0, W = 0, Z = 0, R = 0, r, c;
	size_t i, j;

	for (i = 0; i < m; i++) {
		double v = a[i * m + i];
		if (!isfinite(v) || v <= 0)
			return hc_error(err, HC_EDATA,
					"the covariances: the variance in row %zu is %g, expected a positive number",
					i + 1, v);
	}
	for (i = 0; i < m; i++) {
		double v = a[i * m + i];
		r = 0;
		for (j = 0; j < m; j++) {
			if (j == i)
				continue;
			c = a[i * m + j];
			if (!isfinite(a[i * m + j]))
				return hc_error(err, HC_EDATA,
						"the covariances: the entry in row %zu, column %zu is not a finite number",
						i + 1, j + 1);
			r += c;
			Q += c * c;
			R += c / sqrtl((long double)v * a[j * m + j]);
		}
		V += v;
		S += (long double)v * v;
		W += v * r;
		Z += r * r;
		C += r;
	}
	mo->m = m;
	store_sums(mo, V, C, S, Q, W, Z, R);
	return HC_OK;
}

static int from_matrix(struct moments *mo, const double *a, size_t m, struct hc_error *err)
{
	memset(mo, 0, sizeof *mo);
	if (m < 2)
		return hc_error(err, HC_EDATA,
				"covariance matrix has %zu securities, expected at least 2", m);
	mo->route = MOMENTS_ROUTE_GIVEN;
	return sums_from_matrix(mo, a, m, err);
}

int hc_moments_from_summary(struct moments *mo, double vbar, double cbar,
			 size_t m, struct hc_error *err)
{
	memset(mo, 0, sizeof *mo);
	if (!isfinite(vbar) || vbar <= 0)
		return hc_error(err, HC_EUSAGE,
				"average variance %g is not a positive number", vbar);
	if (!isfinite(cbar) || cbar > vbar)
		return hc_error(err, HC_EUSAGE,
				"average covariance %g is not a number at most the average variance %g",
				cbar, vbar);
	if (m > HC_MOMENTS_MAX_SECURITIES)
		return hc_error(err, HC_EUSAGE, "%zu securities is more than the %u a summary may name", m,
				HC_MOMENTS_MAX_SECURITIES);
	if (m == 1)
		return hc_error(err, HC_EUSAGE,
				"a universe of 1 security has nothing to diversify; expected at least 2");
	/* A covariance matrix with equal variances and covariances is positive
	 * semi-definite only when cbar >= -vbar/(M-1). */
	if (m > 1 && cbar < -vbar / (double)(m - 1))
		return hc_error(err, HC_EUSAGE,
				"average covariance %g is below -%g/(%zu-1) (an average correlation below -1/%zu), "
				"which no %zu securities can have",
				cbar, vbar, m, m - 1, m);
	if (m == 0 && cbar < 0)
		return hc_error(err, HC_EUSAGE,
				"average covariance %g is negative, which no unbounded universe can have", cbar);
	mo->m = m;
	mo->route = MOMENTS_ROUTE_SUMMARY;
	mo->average_variance = vbar;
	mo->average_covariance = cbar;
	mo->average_correlation = cbar / vbar;
	if (m > 0) {
		mo->sum_var = vbar * (double)m;
		mo->sum_cov = cbar * (double)m * (double)(m - 1);
		mo->universe_variance = (mo->sum_var + mo->sum_cov) / ((double)m * (double)m);
	} else {
		mo->sum_var = NAN;
		mo->sum_cov = NAN;
		mo->universe_variance = cbar;
	}
	return HC_OK;
}

/* Centred copy of u's series (security-major), two-pass means; rejects a
 * zero-variance security, which has no risk to diversify. */
static int centred_copy(const struct universe *u, double **out, struct hc_error *err)
{
	size_t i, k, t = u->t, n;
	double *xc, mean, ss;
	char buf[32];

	if (hc_mul_size(u->m, u->t, &n) || !(xc = hc_mallocarray(n, sizeof *xc)))
		return hc_error(err, HC_ENOMEM, "out of memory for %zu x %zu returns", u->m, u->t);
	for (i = 0; i < u->m; i++) {
		const double *x = u->x + i * t;
		double *y = xc + i * t;
		long double s = 0;
		for (k = 0; k < t; k++)
			s += x[k];
		mean = (double)(s / t);
		ss = 0;
		for (k = 0; k < t; k++) {
			y[k] = x[k] - mean;
			ss += y[k] * y[k];
		}
		if (!(ss > 0)) {
			hc_free(xc);
			return hc_error(err, HC_EDATA, "security '%s' has zero variance",
					security_name(u, i, buf, sizeof buf));
		}
	}
	*out = xc;
	return HC_OK;
}

static double dot(const double *a, const double *b, size_t n)
{
	double s = 0;
	size_t k;

	for (k = 0; k < n; k++)
		s += a[k] * b[k];
	return s;
}

/*
 * Gram route.  With x_i the centred series and s = sum_i x_i,
 *   v_i = x_i.x_i/(T-1),  r_i = x_i.s/(T-1) - v_i,  C = s.s/(T-1) - V,
 *   Q = ||X X^T||_F^2/(T-1)^2 - S,
 *   average correlation = (||sum_i x_i/|x_i| ||^2 - M)/(M(M-1)).
 */
static int route_gram(struct moments *mo, const struct universe *u, const double *xc,
		      struct hc_error *err)
{
	size_t m = u->m, t = u->t, i, a, b;
	double *s = NULL, *z = NULL, *g = NULL, d = (double)(t - 1);
	long double V = 0, S = 0, W = 0, Z = 0, F = 0, zz = 0, ss = 0;
	int rc = HC_OK;

	s = hc_calloc(t, sizeof *s);
	z = hc_calloc(t, sizeof *z);
	g = hc_mallocarray(t * t, sizeof *g);
	if (!s || !z || !g) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu Gram matrix", t, t);
		goto cleanup;
	}
	for (i = 0; i < m; i++) {
		const double *x = xc + i * t;
		double nrm = sqrt(dot(x, x, t));
		for (a = 0; a < t; a++) {
			s[a] += x[a];
			z[a] += x[a] / nrm;
		}
	}
	for (a = 0; a < t; a++) {
		ss += (long double)s[a] * s[a];
		zz += (long double)z[a] * z[a];
	}
	for (i = 0; i < m; i++) {
		const double *x = xc + i * t;
		long double v = dot(x, x, t) / d;
		long double r = dot(x, s, t) / d - v;
		V += v;
		S += v * v;
		W += v * r;
		Z += r * r;
	}
	/* G = Xc^T Xc with Xc the M x T row-major centred matrix. */
	syrk(CblasTrans, t, m, 1.0, xc, t, g, t);
	for (a = 0; a < t; a++) {
		F += (long double)g[a * t + a] * g[a * t + a];
		for (b = a + 1; b < t; b++)
			F += 2.0L * g[a * t + b] * g[a * t + b];
	}
	store_sums(mo, V, ss / d - V, S, F / ((long double)d * d) - S, W, Z, zz - m);
cleanup:
	hc_free(s);
	hc_free(z);
	hc_free(g);
	return rc;
}

static void gemm_nt(size_t n, size_t w, size_t k, double alpha, const double *a,
		    const double *b, size_t ld, double *c)
{
	int saved = blas_single();

	cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)n, (int)w, (int)k, alpha,
		    a, (int)ld, b, (int)ld, 0.0, c, (int)w);
	blas_restore(saved);
}

/* Add the entries right of the diagonal in rows i0..i0+nb of A (block
 * row blk: nb x (m - i0), column j at j - i0) to the row sums r, to Q and
 * to the correlation sum R, each twice for its mirror image below. */
static int block_sums(const struct universe *u, const double *blk, size_t i0, size_t nb,
		      const double *v, long double *r, long double *Q, long double *R,
		      struct hc_error *err)
{
	size_t m = u->m, w = m - i0, i, j;
	char b1[32], b2[32];

	for (i = i0; i < i0 + nb; i++) {
		const double *row = blk + (i - i0) * w;
		long double ri = 0, q = 0, rr = 0;

		for (j = i + 1; j < m; j++) {
			double c = row[j - i0];
			if (!isfinite(c))
				return hc_error(err, HC_EDATA,
						"the covariance of securities '%s' and '%s' is not a finite number",
						security_name(u, i, b1, sizeof b1), security_name(u, j, b2, sizeof b2));
			ri += c;
			r[j] += c;
			q += (long double)c * c;
			rr += c / sqrtl((long double)v[i] * v[j]);
		}
		r[i] += ri;
		*Q += 2.0L * q;
		*R += 2.0L * rr;
	}
	return HC_OK;
}

/*
 * Matrix route, in row blocks, so that no M x M matrix is held: the
 * variances v_i = x_i.x_i/(T-1) come first (O(MT)); then each block of
 * MOMENTS_BLOCK_ROWS rows i0.. of A right of column i0, Xc[i0..] Xc[i0..M]^T
 * /(T-1), is one BLAS dgemm into a buffer of MOMENTS_BLOCK_ROWS x M
 * doubles, whose entries right of the diagonal (the upper triangle) feed
 * the row sums r_i and r_j, Q and the correlation sum.  V, S, W, Z and C
 * then follow from v and r.  Work: about M^2 T multiply-adds as for
 * dsyrk on the whole matrix; memory: the centred copy and
 * (MOMENTS_BLOCK_ROWS + 3) M numbers besides the universe.
 */
static int route_matrix(struct moments *mo, const struct universe *u, const double *xc,
			struct hc_error *err)
{
	size_t m = u->m, t = u->t, b = m < MOMENTS_BLOCK_ROWS ? m : MOMENTS_BLOCK_ROWS, i, i0, n;
	double d = (double)(t - 1), *v, *blk = NULL;
	long double *r, V = 0, C = 0, S = 0, Q = 0, W = 0, Z = 0, R = 0;
	char buf[32];
	int rc = HC_OK;

	v = hc_mallocarray(m, sizeof *v);
	r = hc_calloc(m, sizeof *r);
	if (!v || !r || hc_mul_size(b, m, &n) || !(blk = hc_mallocarray(n, sizeof *blk))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the covariance blocks of %zu securities", m);
		goto cleanup;
	}
	for (i = 0; i < m; i++) {
		v[i] = dot(xc + i * t, xc + i * t, t) / d;
		if (!isfinite(v[i])) {
			rc = hc_error(err, HC_EDATA, "the variance of security '%s' is not a finite number",
				      security_name(u, i, buf, sizeof buf));
			goto cleanup;
		}
	}
	for (i0 = 0; i0 < m; i0 += b) {
		size_t nb = m - i0 < b ? m - i0 : b;

		gemm_nt(nb, m - i0, t, 1.0 / d, xc + i0 * t, xc + i0 * t, t, blk);
		if ((rc = block_sums(u, blk, i0, nb, v, r, &Q, &R, err)) != HC_OK)
			goto cleanup;
	}
	for (i = 0; i < m; i++) {
		V += v[i];
		S += (long double)v[i] * v[i];
		W += v[i] * r[i];
		Z += r[i] * r[i];
		C += r[i];
	}
	store_sums(mo, V, C, S, Q, W, Z, R);
cleanup:
	hc_free(v);
	hc_free(r);
	hc_free(blk);
	return rc;
}

/*
 * A threaded BLAS run for the masked products below, which are large
 * (O(M^2 T)) enough for the workers to pay: omp_get_max_threads() BLAS
 * threads, then back to one with the idle workers stopped
 * (hc_moments_blas_serial), so they do not spin beside the sampler.
 */
/* Work (flops) below which a product stays on one thread: starting the
 * workers costs more than they save there (and a small universe then runs
 * no BLAS thread at all, as tests/cli_environment.sh counts). */
#define MOMENTS_THREADED_WORK 1e9

static void blas_threaded(double work)
{
	int n = omp_get_max_threads();

	if (work < MOMENTS_THREADED_WORK)
		return;

	if (n > 1)
		openblas_set_num_threads(n);
}

static void blas_threaded_end(void)
{
	if (openblas_get_num_threads() != 1)
		hc_moments_blas_serial();
}

/*
 * The pairwise-complete matrix into a new *out, and the sum of the
 * off-diagonal pairwise correlations (each on its own overlap) into *rsum.
 * With Z the returns shifted by each security's own mean (0 at gaps), K the
 * 0/1 indicator of an observation and Z2 = Z*Z elementwise, over the
 * periods common to i and j:
 *   n_ij = (K K')_ij, sum z_i = (Z K')_ij, sum z_j = (Z K')_ji,
 *   sum z_i z_j = (Z Z')_ij, sum z_i^2 = (Z2 K')_ij,
 *   cov_ij = (sum z_i z_j - sum z_i sum z_j / n_ij) / (n_ij - 1),
 * each pair with its own means over the overlap (pandas' DataFrame.cov,
 * R's use = "pairwise.complete.obs"); the shift makes the one-pass formula
 * subtract small numbers (Chan, Golub & LeVeque, 1983, The American
 * Statistician 37(3)).  Z Z' is one dsyrk on threaded BLAS either way; the
 * rest comes one of two ways (enum moments_pairwise_way):
 *   dense  K K' (ssyrk), Z K' and Z2 K' (dgemm) as masked Gram products;
 *   gaps   with few gaps (at most 1 cell in PAIRWISE_SPARSE_SHARE), from
 *          each security's list of missing periods, pair by pair (below).
 */
#define PAIRWISE_SPARSE_SHARE 8

/* Rows and columns of the tiles the gaps way walks.  A row of Z is
 * gathered from at the gaps of a whole tile's width of securities while it
 * is in cache (with 32, most of its cache lines were fetched for one or
 * two gathers each and the gathers waited on memory); each thread holds
 * two tiles of sums (2 x 256^2 x 24 bytes, 3 MB). */
#define PAIRWISE_TILE 256

/* Runs of at least this many gaps in a row (a late listing, an early
 * delisting, a suspension) are summed as ranges, not gathered period by
 * period. */
#define PAIRWISE_LONG_RUN 16

struct gap_run {
	uint32_t start, len;
};

/* The shifted returns and what both ways share.  d[i] counts i's gaps;
 * the gaps way also has miss (the M x T 0/1 mask of gaps), i's missing
 * periods outside long runs in order at idx[off[i] .. off[i+1]) and its
 * runs of PAIRWISE_LONG_RUN gaps or more at run[roff[i] .. roff[i+1]). */
struct pairwise_data {
	size_t m, t, gaps;
	double *z, *w1, *w2;       /* Z; sum_k z_ik and sum_k z_ik^2 */
	size_t *d, *off, *roff;
	uint32_t *idx;
	struct gap_run *run;
	unsigned char *miss;
	float *find;               /* dense: K in single precision */
	double *ind, *z2;          /* dense: K and Z2 */
};

static void pairwise_data_release(struct pairwise_data *p)
{
	hc_free(p->z);
	hc_free(p->w1);
	hc_free(p->w2);
	hc_free(p->d);
	hc_free(p->off);
	hc_free(p->idx);
	hc_free(p->roff);
	hc_free(p->run);
	hc_free(p->miss);
	hc_free(p->find);
	hc_free(p->ind);
	hc_free(p->z2);
}

/* Each security's gaps and mean, then Z and its sums, rows in parallel
 * (each row's own sums in the same order as on one thread). */
static int pairwise_data_fill(struct pairwise_data *p, const struct universe *u, int way,
			      struct hc_error *err)
{
	size_t m = u->m, t = u->t, nmt = m * t, i;
	double *mean = NULL;
	int sparse, threads = (double)nmt >= MOMENTS_THREADED_WORK / 64;
	long ii;

	memset(p, 0, sizeof *p);
	p->m = m;
	p->t = t;
	p->d = hc_mallocarray(m, sizeof *p->d);
	p->off = hc_mallocarray(m + 1, sizeof *p->off);
	p->roff = hc_mallocarray(m + 1, sizeof *p->roff);
	mean = hc_mallocarray(m, sizeof *mean);
	if (!p->d || !p->off || !p->roff || !mean)
		goto nomem;
#pragma omp parallel for schedule(static) if (threads)
	for (ii = 0; ii < (long)m; ii++) {
		const double *x = u->x + (size_t)ii * t;
		double s = 0;
		size_t k = 0, e, obs = 0, shortgaps = 0, runs = 0;

		while (k < t) {
			if (!isnan(x[k])) {
				s += x[k++];
				obs++;
				continue;
			}
			for (e = k; e < t && isnan(x[e]); e++)
				;
			if (e - k >= PAIRWISE_LONG_RUN)
				runs++;
			else
				shortgaps += e - k;
			k = e;
		}
		mean[ii] = obs ? s / (double)obs : 0;
		p->d[ii] = t - obs;
		p->off[ii + 1] = shortgaps;
		p->roff[ii + 1] = runs;
	}
	p->off[0] = p->roff[0] = 0;
	for (i = 0; i < m; i++) {
		p->off[i + 1] += p->off[i];
		p->roff[i + 1] += p->roff[i];
		p->gaps += p->d[i];
	}
	sparse = way == MOMENTS_PAIRWISE_GAPS ||
		 (way == MOMENTS_PAIRWISE_AUTO && p->gaps <= nmt / PAIRWISE_SPARSE_SHARE);
	p->z = hc_mallocarray(nmt, sizeof *p->z);
	hc_memory_advise_huge(p->z, nmt * sizeof *p->z);   /* first touches: 0.2 s of page faults in 4 KiB */
	p->w1 = hc_mallocarray(m, sizeof *p->w1);
	p->w2 = hc_mallocarray(m, sizeof *p->w2);
	if (!p->z || !p->w1 || !p->w2)
		goto nomem;
	if (sparse) {
		p->idx = hc_mallocarray(p->off[m] ? p->off[m] : 1, sizeof *p->idx);
		p->run = hc_mallocarray(p->roff[m] ? p->roff[m] : 1, sizeof *p->run);
		p->miss = hc_malloc(nmt);
		hc_memory_advise_huge(p->miss, nmt);
		if (!p->idx || !p->run || !p->miss)
			goto nomem;
	} else {
		p->find = hc_mallocarray(nmt, sizeof *p->find);
		p->ind = hc_mallocarray(nmt, sizeof *p->ind);
		p->z2 = hc_mallocarray(nmt, sizeof *p->z2);
		if (!p->find || !p->ind || !p->z2)
			goto nomem;
	}
#pragma omp parallel for schedule(static) if (threads)
	for (ii = 0; ii < (long)m; ii++) {
		size_t k, e, r = (size_t)ii * t, g = p->off[ii], q = p->roff[ii];
		const double *x = u->x + r;
		double w1 = 0, w2 = 0;

		for (k = 0; sparse && k < t; k = e) {   /* the gaps, short ones and long runs */
			for (e = k; e < t && isnan(x[e]); e++)
				;
			if (e - k >= PAIRWISE_LONG_RUN)
				p->run[q++] = (struct gap_run){ (uint32_t)k, (uint32_t)(e - k) };
			else
				while (k < e)
					p->idx[g++] = (uint32_t)k++;
			e += e < t;
		}
		for (k = 0; k < t; k++) {
			int seen = !isnan(x[k]);
			double v = seen ? x[k] - mean[ii] : 0.0;

			p->z[r + k] = v;
			w1 += v;
			w2 += v * v;
			if (sparse) {
				p->miss[r + k] = (unsigned char)!seen;
			} else {
				p->find[r + k] = (float)seen;
				p->ind[r + k] = seen;
				p->z2[r + k] = v * v;
			}
		}
		p->w1[ii] = w1;
		p->w2[ii] = w2;
	}
	hc_free(mean);
	return HC_OK;
nomem:
	hc_free(mean);
	pairwise_data_release(p);
	return hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu pairwise covariances", m, m);
}

/* The figures of one pair over its common periods: n, the sums of z_i and
 * z_j, and of their squares. */
struct pair_sums {
	double n, si, sj, qi, qj;
};

/*
 * The pairs from the gaps.  Z is 0 at gaps, so the sum of z_i over the
 * periods where j is observed is z_i's whole sum w1_i less its values at
 * j's gaps, (Z K')_ij = w1_i - sum_{k : j missing} z_ik, the same for Z2
 * with w2; and the common periods are
 *   n_ij = T - d_i - d_j + (periods both miss),
 * the last counted over j's gaps in i's mask.  Integers: n is exact.
 * O(d_i + d_j) instead of O(T) per pair.
 */
struct gap_sums {
	double s1, s2;   /* sum of z_ik, z_ik^2 over the other's gaps k */
	size_t both;     /* periods both miss */
};

/* Row r's sums over the gaps of each c in c0..c1, into g[r - r0][c - c0]
 * (with the periods both miss when count is set): row r stays in the
 * cache while the gap lists stream past (g[r - r0][c - c0]
 * with rows of ld, or g[c - c0][r - r0] when transposed); a long run of gaps
 * is a range read in order.  Four partial sums, so that the additions do
 * not wait on each other. */
static void gather_tile(const struct pairwise_data *p, size_t r0, size_t r1, size_t c0, size_t c1, int count,
			struct gap_sums *g, size_t ld, int transposed)
{
	size_t r, c, k, q;

	for (r = r0; r < r1; r++) {
		const double *zr = p->z + r * p->t;
		const unsigned char *mr = p->miss + r * p->t;

		for (c = c0; c < c1; c++) {
			const uint32_t *gap = p->idx + p->off[c];
			size_t ng = p->off[c + 1] - p->off[c], b0 = 0, b1 = 0, b2 = 0, b3 = 0;
			double s0 = 0, s1 = 0, s2 = 0, s3 = 0, q0 = 0, q1 = 0, q2 = 0, q3 = 0;

			for (k = 0; k + 4 <= ng; k += 4) {
				double v0 = zr[gap[k]], v1 = zr[gap[k + 1]], v2 = zr[gap[k + 2]], v3 = zr[gap[k + 3]];

				s0 += v0;
				s1 += v1;
				s2 += v2;
				s3 += v3;
				q0 += v0 * v0;
				q1 += v1 * v1;
				q2 += v2 * v2;
				q3 += v3 * v3;
			}
			for (; k < ng; k++) {
				s0 += zr[gap[k]];
				q0 += zr[gap[k]] * zr[gap[k]];
			}
			if (count) {
				for (k = 0; k + 4 <= ng; k += 4) {
					b0 += mr[gap[k]];
					b1 += mr[gap[k + 1]];
					b2 += mr[gap[k + 2]];
					b3 += mr[gap[k + 3]];
				}
				for (; k < ng; k++)
					b0 += mr[gap[k]];
			}
			for (q = p->roff[c]; q < p->roff[c + 1]; q++) {
				const double *zz = zr + p->run[q].start;
				const unsigned char *mm = mr + p->run[q].start;
				size_t len = p->run[q].len;

				for (k = 0; k + 4 <= len; k += 4) {
					s0 += zz[k];
					s1 += zz[k + 1];
					s2 += zz[k + 2];
					s3 += zz[k + 3];
					q0 += zz[k] * zz[k];
					q1 += zz[k + 1] * zz[k + 1];
					q2 += zz[k + 2] * zz[k + 2];
					q3 += zz[k + 3] * zz[k + 3];
				}
				for (; k < len; k++) {
					s0 += zz[k];
					q0 += zz[k] * zz[k];
				}
				for (k = 0; count && k < len; k++)
					b1 += mm[k];
			}
			g[transposed ? (c - c0) * ld + (r - r0) : (r - r0) * ld + (c - c0)] =
				(struct gap_sums){ (s0 + s1) + (s2 + s3), (q0 + q1) + (q2 + q3), b0 + b1 + b2 + b3 };
		}
	}
}

/* One pair from its sums over each other's gaps (gij: i's over j's gaps,
 * with the count; gji: j's over i's). */
static inline void pair_from_gaps(const struct pairwise_data *p, size_t i, size_t j, const struct gap_sums *gij,
				  const struct gap_sums *gji, struct pair_sums *s)
{
	s->n = (double)(p->t - p->d[i] - p->d[j] + gij->both);
	s->si = p->w1[i] - gij->s1;
	s->sj = p->w1[j] - gji->s1;
	s->qi = p->w2[i] - gij->s2;
	s->qj = p->w2[j] - gji->s2;
}

/* The covariance of a pair (zz = sum z_i z_j over the overlap) and the
 * variances of each over the overlap; 0 when the pair cannot have a
 * correlation (too few common periods, or one does not vary there). */
static inline int pair_finish(const struct pair_sums *s, double zz, double *cov, double *vx, double *vy)
{
	double n = s->n;

	if (!(n >= COVMATRIX_MIN_COMMON_PERIODS))
		return 0;
	*cov = (zz - s->si * s->sj / n) / (n - 1);
	*vx = (s->qi - s->si * s->si / n) / (n - 1);
	*vy = (s->qj - s->sj * s->sj / n) / (n - 1);
	return *vx > 0 && *vy > 0;
}

/* The message for a pair pair_finish refused. */
static int pair_error(const struct universe *u, size_t i, size_t j, const struct pair_sums *s,
		      double vx, struct hc_error *err)
{
	char b1[32], b2[32];
	const char *ni, *nj;
	int rc;

	if ((rc = hc_covmatrix_check_overlap(u, i, j, (size_t)s->n, err)) != HC_OK)
		return rc;
	ni = security_name(u, i, b1, sizeof b1);
	nj = security_name(u, j, b2, sizeof b2);
	return hc_error(err, HC_EDATA,
			"securities '%s' and '%s': '%s' does not vary over their common periods, "
			"so they have no correlation", ni, nj, vx > 0 ? nj : ni);
}

/* Every security's own variance first (a holds Z Z'), so a constant one is
 * named as such; then the diagonal of a. */
static int pairwise_diagonal(const struct universe *u, const struct pairwise_data *p, double *a,
			     double *cnt, struct hc_error *err)
{
	size_t m = p->m, i;
	char b1[32];
	int rc;

	for (i = 0; i < m; i++) {
		double n = (double)(p->t - p->d[i]), si = p->w1[i];

		if ((rc = hc_covmatrix_check_overlap(u, i, i, p->t - p->d[i], err)) != HC_OK)
			return rc;
		if (!((a[i * m + i] - si * si / n) / (n - 1) > 0))
			return hc_error(err, HC_EDATA, "security '%s' has zero variance",
					security_name(u, i, b1, sizeof b1));
	}
	for (i = 0; i < m; i++) {
		double n = (double)(p->t - p->d[i]), si = p->w1[i];

		a[i * m + i] = (a[i * m + i] - si * si / n) / (n - 1);
		if (cnt)
			cnt[i * m + i] = n;
	}
	return HC_OK;
}

/* The pairs i < j of one tile; the correlations' sum into *rsum; 0 when
 * some pair has no correlation.  Both directions are gathered row by row
 * (gij: rows of block bi over the gaps
 * of block bj, gji the other way, stored transposed so that both are read
 * by [i][j]), each from a row in cache. */
static int gaps_tile(const struct pairwise_data *p, size_t bi, size_t bj, struct gap_sums *gij,
		     struct gap_sums *gji, double *a, double *cnt, long double *rsum)
{
	size_t m = p->m, i, j, i0 = bi * PAIRWISE_TILE, j0 = bj * PAIRWISE_TILE;
	size_t i1 = i0 + PAIRWISE_TILE < m ? i0 + PAIRWISE_TILE : m, j1 = j0 + PAIRWISE_TILE < m ? j0 + PAIRWISE_TILE : m;
	size_t ld = j1 - j0;
	long double r = 0;
	int ok = 1;

	gather_tile(p, i0, i1, j0, j1, 1, gij, ld, 0);
	if (bi != bj)
		gather_tile(p, j0, j1, i0, i1, 0, gji, ld, 1);
	for (i = i0; i < i1; i++)
		for (j = i + 1 > j0 ? i + 1 : j0; j < j1; j++) {
			const struct gap_sums *back = bi != bj ? &gji[(i - i0) * ld + (j - j0)]
							       : &gij[(j - j0) * ld + (i - i0)];
			struct pair_sums s;
			double cov, vx, vy;

			pair_from_gaps(p, i, j, &gij[(i - i0) * ld + (j - j0)], back, &s);
			if (!pair_finish(&s, a[i * m + j], &cov, &vx, &vy)) {
				ok = 0;
				continue;
			}
			a[i * m + j] = a[j * m + i] = cov;
			if (cnt)
				cnt[i * m + j] = cnt[j * m + i] = s.n;
			r += 2.0L * cov / sqrtl((long double)vx * vy);
		}
	*rsum = r;
	return ok;
}

/*
 * The gaps way, after Z Z' is in a's upper triangle: every pair from the
 * gaps and finished at once, in tiles of PAIRWISE_TILE x PAIRWISE_TILE
 * (on the OpenMP threads; each tile's correlations summed apart and the
 * tiles added in order, so the sum is the same for any thread count).  No
 * M x M array besides a (and cnt when asked for).  On a refused pair, the
 * first one in row order is found again and named.
 */
static int pairwise_from_gaps(const struct universe *u, const struct pairwise_data *p, double *a,
			      double *cnt, long double *rsum, struct hc_error *err)
{
	size_t m = p->m, nb = (m + PAIRWISE_TILE - 1) / PAIRWISE_TILE, b, i, j, per;
	int threaded = (double)m * (double)(p->gaps + m) >= MOMENTS_THREADED_WORK / 16;
	int nth = threaded ? omp_get_max_threads() : 1, ok = 1, rc;
	struct gap_sums *g = NULL;
	long double *part = NULL, R = 0;
	long bb;

	if ((rc = pairwise_diagonal(u, p, a, cnt, err)) != HC_OK)
		return rc;
	per = m < PAIRWISE_TILE ? m * m : PAIRWISE_TILE * PAIRWISE_TILE;   /* one tile's sums */
	part = hc_calloc(nb * nb, sizeof *part);
	g = hc_mallocarray(2 * (size_t)nth * per, sizeof *g);
	if (!part || !g) {
		hc_free(part);
		hc_free(g);
		return hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu pairwise covariances", m, m);
	}
#pragma omp parallel for schedule(dynamic) reduction(&& : ok) num_threads(nth) if (threaded)
	for (bb = 0; bb < (long)(nb * nb); bb++) {
		size_t bi = (size_t)bb / nb, bj = (size_t)bb % nb;
		struct gap_sums *gt = g + 2 * (size_t)omp_get_thread_num() * per;

		if (bj >= bi)
			ok = gaps_tile(p, bi, bj, gt, gt + per, a, cnt, &part[bb]) && ok;
	}
	for (b = 0; b < nb * nb; b++)
		R += part[b];
	hc_free(part);
	hc_free(g);
	for (i = 0; !ok && i < m; i++)
		for (j = i + 1; j < m; j++) {
			struct gap_sums gi, gj;
			struct pair_sums s;
			double cov, vx = 0, vy;

			gather_tile(p, i, i + 1, j, j + 1, 1, &gi, 1, 0);
			gather_tile(p, j, j + 1, i, i + 1, 0, &gj, 1, 0);
			pair_from_gaps(p, i, j, &gi, &gj, &s);
			if (!pair_finish(&s, 0.0, &cov, &vx, &vy))
				return pair_error(u, i, j, &s, vx, err);
		}
	*rsum = R;
	return HC_OK;
}

/* The dense way: K K', Z K' and Z2 K' as masked Gram products (after Z Z'
 * into a), then pair by pair. */
static int pairwise_dense(const struct universe *u, const struct pairwise_data *p, double *a,
			  double *cnt_out, long double *rsum, struct hc_error *err)
{
	size_t m = p->m, t = p->t, i, j, nmm = m * m;
	float *cnt = hc_mallocarray(nmm, sizeof *cnt);
	double *sx = hc_mallocarray(nmm, sizeof *sx), *q = hc_mallocarray(nmm, sizeof *q);
	long double R = 0;
	int rc = HC_OK;

	if (!cnt || !sx || !q) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu pairwise covariances", m, m);
		goto cleanup;
	}
	blas_threaded((double)m * (double)m * (double)t);
	/* counts in single precision: sums of 0/1 are exact below 2^24 periods,
	 * at half the cost of the double product */
	cblas_ssyrk(CblasRowMajor, CblasUpper, CblasNoTrans, (int)m, (int)t, 1.0f, p->find, (int)t, 0.0f, cnt, (int)m);
	cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)m, (int)m, (int)t, 1.0, p->z, (int)t, p->ind,
		    (int)t, 0.0, sx, (int)m);
	cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)m, (int)m, (int)t, 1.0, p->z2, (int)t, p->ind,
		    (int)t, 0.0, q, (int)m);
	blas_threaded_end();
	if ((rc = pairwise_diagonal(u, p, a, cnt_out, err)) != HC_OK)
		goto cleanup;
	for (i = 0; i < m; i++) {
		for (j = i + 1; j < m; j++) {
			/* exact: sums of 0/1 below 2^24 */
			struct pair_sums s = { cnt[i * m + j], sx[i * m + j], sx[j * m + i], q[i * m + j], q[j * m + i] };
			double cov, vx = 0, vy;

			if (!pair_finish(&s, a[i * m + j], &cov, &vx, &vy)) {
				rc = pair_error(u, i, j, &s, vx, err);
				goto cleanup;
			}
			a[i * m + j] = a[j * m + i] = cov;
			if (cnt_out)
				cnt_out[i * m + j] = cnt_out[j * m + i] = s.n;
			R += 2.0L * cov / sqrtl((long double)vx * vy);
		}
	}
	*rsum = R;
cleanup:
	hc_free(cnt);
	hc_free(sx);
	hc_free(q);
	return rc;
}

static int pairwise_matrix(const struct universe *u, int way, double **out, double **cnt_out,
			   long double *rsum, struct hc_error *err)
{
	size_t m = u->m, t = u->t, nmm, nmt;
	struct pairwise_data p;
	double *a = NULL, *cnt = NULL;
	int rc;

	*out = NULL;
	if (cnt_out)
		*cnt_out = NULL;
	if (hc_mul_size(m, m, &nmm) || hc_mul_size(m, t, &nmt))
		return hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu covariance matrix", m, m);
	if (t >= ((size_t)1 << 24))
		return hc_error(err, HC_ENOMEM, "%zu periods are too many for pairwise counts", t);
	if ((rc = pairwise_data_fill(&p, u, way, err)) != HC_OK)
		return rc;
	a = hc_mallocarray(nmm, sizeof *a);
	hc_memory_advise_huge(a, nmm * sizeof *a);
	if (!a || (cnt_out && !(cnt = hc_mallocarray(nmm, sizeof *cnt)))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu pairwise covariances", m, m);
		goto cleanup;
	}
	blas_threaded((double)m * (double)m * (double)t);
	cblas_dsyrk(CblasRowMajor, CblasUpper, CblasNoTrans, (int)m, (int)t, 1.0, p.z, (int)t, 0.0, a, (int)m);
	blas_threaded_end();
	rc = p.miss ? pairwise_from_gaps(u, &p, a, cnt, rsum, err) : pairwise_dense(u, &p, a, cnt, rsum, err);
cleanup:
	pairwise_data_release(&p);
	if (rc != HC_OK) {
		hc_free(a);
		hc_free(cnt);
		return rc;
	}
	*out = a;
	if (cnt_out)
		*cnt_out = cnt;
	return HC_OK;
}

/* Pairwise route.  The average correlation is the mean of pairwise
 * correlations, each on its own overlap, not a ratio of averages. */
static int route_pairwise(struct moments *mo, const struct universe *u, struct hc_error *err)
{
	double *a;
	long double R;
	int rc;

	if ((rc = pairwise_matrix(u, MOMENTS_PAIRWISE_AUTO, &a, NULL, &R, err)))
		return rc;
	rc = sums_from_matrix(mo, a, u->m, err);
	mo->average_correlation = (double)(R / ((long double)u->m * (u->m - 1)));
	hc_free(a);
	return rc;
}

/* Complete data: A = Xc Xc^T/(T-1) through dsyrk, both triangles filled. */
static int full_matrix(const struct universe *u, const double *xc, double **out,
		       struct hc_error *err)
{
	size_t m = u->m, t = u->t, i, j, n;
	double *a;

	*out = NULL;
	if (hc_mul_size(m, m, &n) || !(a = hc_mallocarray(n, sizeof *a)))
		return hc_error(err, HC_ENOMEM, "out of memory for the %zu x %zu covariance matrix", m, m);
	syrk(CblasNoTrans, m, t, 1.0 / (double)(t - 1), xc, t, a, m);
	for (i = 0; i < m; i++)
		for (j = 0; j < i; j++)
			a[i * m + j] = a[j * m + i];
	*out = a;
	return HC_OK;
}

/*
 * The memory budget (memory.h), checked before anything is allocated: the
 * universe's numbers stay held while need more bytes are made.  The sizes
 * are those of the allocations of each route.
 */
static int check_budget(const struct universe *u, double need, const char *what,
			struct hc_error *err)
{
	double held = (double)u->m * (double)u->t * sizeof(double);

	return hc_memory_check(u->max_bytes, held, need, err, "%s: universe too large for its %s",
			       u->source ? u->source : "universe", what);
}

static double route_bytes(const struct universe *u, int route)
{
	double m = (double)u->m, t = (double)u->t;
	double b = m < MOMENTS_BLOCK_ROWS ? m : MOMENTS_BLOCK_ROWS;

	switch (route) {
	case MOMENTS_ROUTE_GRAM:    /* centred copy, T x T Gram matrix, two T-vectors */
		return (m * t + t * t + 2 * t) * sizeof(double);
	case MOMENTS_ROUTE_MATRIX:  /* centred copy, one block of rows, v, and r in long double */
		return (m * t + b * m + m) * sizeof(double) + m * sizeof(long double);
	default:                    /* pairwise, the dense way (the larger): three M x M arrays
	                             * and three M x T copies in double, one of each in float */
		return (3 * m * m + 3 * m * t) * sizeof(double) + (m * m + m * t) * sizeof(float);
	}
}

static int check_shape(const struct universe *u, struct hc_error *err)
{
	if (u->m < 2 || u->t < 2)
		return hc_error(err, HC_EDATA,
				"universe has %zu securities over %zu periods, expected at least 2 of each",
				u->m, u->t);
	if (u->m > INT32_MAX || u->t > INT32_MAX)
		return hc_error(err, HC_ENOMEM, "universe of %zu x %zu is too large for BLAS", u->m, u->t);
	return HC_OK;
}

int hc_moments_pairwise_matrix(struct moments *mo, const struct universe *u, double **a,
			       struct hc_error *err)
{
	long double R;
	int rc;

	memset(mo, 0, sizeof *mo);
	*a = NULL;
	if ((rc = check_shape(u, err)) ||
	    (rc = check_budget(u, route_bytes(u, MOMENTS_ROUTE_PAIRWISE), "covariances", err)))
		return rc;
	if ((rc = pairwise_matrix(u, MOMENTS_PAIRWISE_AUTO, a, NULL, &R, err)))
		return rc;
	mo->m = u->m;
	mo->route = MOMENTS_ROUTE_PAIRWISE;
	if ((rc = sums_from_matrix(mo, *a, u->m, err)) != HC_OK) {
		hc_free(*a);
		*a = NULL;
		memset(mo, 0, sizeof *mo);
		return rc;
	}
	mo->average_correlation = (double)(R / ((long double)u->m * (u->m - 1)));
	mo->t = u->t;
	return HC_OK;
}

int hc_moments_pairwise_by(const struct universe *u, int way, double **a, double **counts,
			   double *average_correlation, struct hc_error *err)
{
	long double R;
	int rc;

	*a = NULL;
	if (counts)
		*counts = NULL;
	if (way != MOMENTS_PAIRWISE_AUTO && way != MOMENTS_PAIRWISE_DENSE && way != MOMENTS_PAIRWISE_GAPS)
		return hc_error(err, HC_EUSAGE, "pairwise way %d is not one of auto, dense or gaps", way);
	if ((rc = check_shape(u, err)) ||
	    (rc = check_budget(u, route_bytes(u, MOMENTS_ROUTE_PAIRWISE), "covariances", err)) ||
	    (rc = pairwise_matrix(u, way, a, counts, &R, err)))
		return rc;
	*average_correlation = (double)(R / ((long double)u->m * (u->m - 1)));
	return HC_OK;
}

void hc_moments_blas_threaded(double work)
{
	blas_threaded(work);
}

int hc_moments_covariance(const struct universe *u, double **a, struct hc_error *err)
{
	double *xc;
	long double R;
	int rc;

	*a = NULL;
	if ((rc = check_shape(u, err)))
		return rc;
	/* the M x M result, and for complete data the centred copy */
	if ((rc = check_budget(u, ((double)u->m * u->m + (u->has_missing ? 0.0 : (double)u->m * u->t))
				      * sizeof(double), "covariance matrix", err)))
		return rc;
	if (u->has_missing)
		return pairwise_matrix(u, MOMENTS_PAIRWISE_AUTO, a, NULL, &R, err);
	if ((rc = centred_copy(u, &xc, err)))
		return rc;
	rc = full_matrix(u, xc, a, err);
	hc_free(xc);
	return rc;
}

int hc_moments_from_universe_route(struct moments *mo, const struct universe *u,
				int route, struct hc_error *err)
{
	double *xc = NULL;
	int rc;

	memset(mo, 0, sizeof *mo);
	if ((rc = check_shape(u, err)))
		return rc;
	if (route != MOMENTS_ROUTE_PAIRWISE && route != MOMENTS_ROUTE_GRAM &&
	    route != MOMENTS_ROUTE_MATRIX)
		return hc_error(err, HC_EUSAGE, "moments route %d is not one computed from returns", route);
	if (u->has_missing && route != MOMENTS_ROUTE_PAIRWISE)
		return hc_error(err, HC_EUSAGE, "data with gaps needs pairwise-complete covariances");
	if ((rc = check_budget(u, route_bytes(u, route), "covariances", err)))
		return rc;
	mo->m = u->m;
	mo->route = route;
	if (route == MOMENTS_ROUTE_PAIRWISE) {
		rc = route_pairwise(mo, u, err);
	} else {
		rc = centred_copy(u, &xc, err);
		if (rc)
			return rc;
		if (route == MOMENTS_ROUTE_GRAM)
			rc = route_gram(mo, u, xc, err);
		else
			rc = route_matrix(mo, u, xc, err);
		hc_free(xc);
	}
	if (rc) {
		memset(mo, 0, sizeof *mo);
		return rc;
	}
	mo->t = u->t;
	return HC_OK;
}

int hc_moments_from_universe(struct moments *mo, const struct universe *u,
			  struct hc_error *err)
{
	int route = MOMENTS_ROUTE_PAIRWISE;

	if (!u->has_missing)
		route = u->t < u->m ? MOMENTS_ROUTE_GRAM : MOMENTS_ROUTE_MATRIX;
	return hc_moments_from_universe_route(mo, u, route, err);
}

void hc_moments_summary_averages(double variance, double covariance, double sd, double correlation,
				 double *vbar, double *cbar)
{
	*vbar = !isnan(variance) ? variance : sd * sd;
	*cbar = !isnan(covariance) ? covariance : correlation * *vbar;
}

int hc_moments_from_source(struct moments *mo, const struct hc_source *src, struct hc_error *err)
{
	int rc;

	switch (src->kind) {
	case HC_SOURCE_SERIES:
		return hc_moments_from_universe(mo, src->u, err);
	case HC_SOURCE_PAIRWISE:
		return src->psd.repaired ? from_matrix(mo, src->cm->a, src->cm->m, err)
					 : hc_moments_from_universe(mo, src->u, err);
	case HC_SOURCE_RAGGED:
		return hc_periodic_moments(src->per, mo, err);
	case HC_SOURCE_MATRIX:
		rc = from_matrix(mo, src->cm->a, src->cm->m, err);
		if (rc)
			hc_error_prefix(err, src->name);
		return rc;
	}
	memset(mo, 0, sizeof *mo);
	return hc_error(err, HC_EUSAGE, "unknown data source kind %d", src->kind);
}
