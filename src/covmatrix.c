/*
 * covmatrix.c - covariance matrices: read from CSV, computed from returns,
 * and repaired to the nearest positive semi-definite matrix.
 */
#include "holdcount/covmatrix.h"
#include "holdcount/universe.h"

#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_cblas.h>
#include <gsl/gsl_eigen.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_matrix.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"


void hc_covmatrix_free(struct covmatrix *c)
{
	size_t i;

	if (!c)
		return;
	if (c->ids)
		for (i = 0; i < c->m; i++)
			hc_free(c->ids[i]);
	hc_free(c->ids);
	hc_free(c->a);
	hc_free(c);
}

long hc_covmatrix_find(const struct covmatrix *c, const char *id)
{
	size_t i;

	for (i = 0; i < c->m; i++)
		if (strcmp(c->ids[i], id) == 0)
			return (long)i;
	return -1;
}

/* Copy the upper triangle of the m*m row-major a into the lower one. */
static void mirror_upper(double *a, size_t m)
{
	size_t i, j;

	for (i = 0; i < m; i++)
		for (j = i + 1; j < m; j++)
			a[j * m + i] = a[i * m + j];
}

/* ---- reading ------------------------------------------------------------ */

struct reader {
	const char *name;
	size_t max_bytes;
	struct covmatrix *c;
	size_t nids, cap_ids;
	size_t rows;          /* data rows read */
	size_t *row_line;     /* line of each row */
};

static int header_field(struct reader *r, const struct csvread_field *f,
			struct hc_error *err)
{
	struct covmatrix *c = r->c;
	char **ids;
	int rc;

	if (f->column == 1)
		return HC_OK;   /* the corner: empty or a label */
	rc = hc_universe_check_id(r->name, f->line, f->column, f->text, f->len, err);
	if (rc != HC_OK)
		return rc;
	ids = hc_grow(c->ids, &r->cap_ids, c->m, sizeof *ids, 64);
	if (!ids)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	c->ids = ids;
	c->ids[c->m] = hc_strndup(f->text, f->len);
	if (!c->ids[c->m])
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	c->m++;
	return HC_OK;
}

static int header_done(struct reader *r, struct hc_error *err)
{
	struct covmatrix *c = r->c;
	size_t a, b, n;
	int rc;

	if (c->m < 2)
		return hc_error(err, HC_EDATA,
			"%s:1: the header has %zu id%s; expected a corner cell then at least 2 ids",
			r->name, c->m, c->m == 1 ? "" : "s");
	rc = hc_universe_id_clash(c->ids, c->m, &a, &b);
	if (rc < 0)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	if (rc > 0) {
		if (strcmp(c->ids[a], c->ids[b]) == 0)
			return hc_error(err, HC_EDATA,
				"%s:1:%zu: duplicate security id '%s' (also in column %zu); expected unique ids",
				r->name, b + 2, c->ids[b], a + 2);
		return hc_error(err, HC_EDATA,
			"%s:1:%zu: security id '%s' differs only in case or surrounding spaces from '%s' in column %zu; expected distinct ids",
			r->name, b + 2, c->ids[b], c->ids[a], a + 2);
	}
	/* The header alone sets the size: check it before touching memory. */
	rc = hc_memory_check(r->max_bytes, 0.0, (double)c->m * (double)c->m * sizeof(double), err,
			     "%s: covariance matrix of %zu ids too large", r->name, c->m);
	if (rc != HC_OK)
		return rc;
	if (hc_mul_size(c->m, c->m, &n) || !(c->a = hc_reallocarray(NULL, n, sizeof(double))))
		return hc_error(err, HC_ENOMEM,
			"%s: out of memory for a %zu x %zu covariance matrix", r->name, c->m, c->m);
	r->row_line = hc_reallocarray(NULL, c->m, sizeof *r->row_line);
	if (!r->row_line)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	return HC_OK;
}

static int data_field(struct reader *r, const struct csvread_field *f,
		      struct hc_error *err)
{
	struct covmatrix *c = r->c;
	size_t i = f->record - 1, j;
	char q[CSVREAD_QUOTE_BUF];
	double v;

	if (i >= c->m)
		return hc_error(err, HC_EDATA,
			"%s:%zu: more rows than the header's %zu ids; expected a square matrix with one row per id",
			r->name, f->line, c->m);
	if (f->column == 1) {
		if (f->len != strlen(c->ids[i]) || memcmp(f->text, c->ids[i], f->len) != 0)
			return hc_error(err, HC_EDATA,
				"%s:%zu:1: row id '%s' does not match '%s' in column %zu of the header; expected the same ids in the same order",
				r->name, f->line, hc_csvread_quote(f->text, f->len, q), c->ids[i], i + 2);
		r->row_line[i] = f->line;
		return HC_OK;
	}
	j = f->column - 2;
	if (j >= c->m)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has more fields than the header's %zu; expected %zu fields",
			r->name, f->line, f->column, c->m + 1, c->m + 1);
	if (hc_csvread_parse_number(f->text, f->len, &v, NULL) != 0)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: expected a number, found '%s'",
				r->name, f->line, f->column, hc_csvread_quote(f->text, f->len, q));
	/* The square of the largest return a universe may hold
	 * (HC_UNIVERSE_MAX_RETURN): beyond it the spread's fourth powers
	 * overflow, and no real covariance is so large. */
	if (fabs(v) > HC_UNIVERSE_MAX_RETURN * HC_UNIVERSE_MAX_RETURN)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: expected a covariance of at most %g in size, found '%s'",
				r->name, f->line, f->column, HC_UNIVERSE_MAX_RETURN * HC_UNIVERSE_MAX_RETURN,
				hc_csvread_quote(f->text, f->len, q));
	if (i == j && !(v > 0))
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: variance of '%s' is %s; expected a positive number on the diagonal",
			r->name, f->line, f->column, c->ids[i], hc_csvread_quote(f->text, f->len, q));
	c->a[i * c->m + j] = v;
	return HC_OK;
}

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct reader *r = ctx;

	return f->record == 0 ? header_field(r, f, err) : data_field(r, f, err);
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line,
		     struct hc_error *err)
{
	struct reader *r = ctx;

	if (record == 0)
		return header_done(r, err);
	if (nfields < r->c->m + 1)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has %zu fields; expected %zu as in the header",
			r->name, line, nfields, nfields, r->c->m + 1);
	r->rows++;
	return HC_OK;
}

/* Check symmetry within tol (relative to sqrt(a_ii a_jj)), then average
 * the two triangles so the matrix is exactly symmetric. */
static int symmetrize(struct reader *r, double tol, struct hc_error *err)
{
	struct covmatrix *c = r->c;
	size_t i, j, m = c->m;

	for (i = 0; i < m; i++) {
		for (j = i + 1; j < m; j++) {
			double x = c->a[i * m + j], y = c->a[j * m + i];
			double scale = sqrt(c->a[i * m + i] * c->a[j * m + j]);

			if (!(fabs(x - y) <= tol * scale))
				return hc_error(err, HC_EDATA,
					"%s:%zu:%zu: covariance of '%s' and '%s' is %.17g here but %.17g on line %zu, column %zu; expected a symmetric matrix (relative tolerance %g)",
					r->name, r->row_line[j], i + 2, c->ids[j], c->ids[i], y, x,
					r->row_line[i], j + 2, tol);
			c->a[i * m + j] = c->a[j * m + i] = 0.5 * (x + y);
		}
	}
	return HC_OK;
}

static int load(struct covmatrix **out, const char *name, const char *path,
		const char *data, size_t len, double tol, size_t max_bytes, struct hc_error *err)
{
	struct csvread_handler h;
	struct reader r;
	int rc;

	*out = NULL;
	if (!(tol >= 0) || isinf(tol))
		return hc_error(err, HC_EUSAGE,
			"symmetry tolerance %g is out of range; expected a number >= 0", tol);
	memset(&r, 0, sizeof r);
	r.name = name;
	r.max_bytes = max_bytes;
	r.c = hc_calloc(1, sizeof *r.c);
	if (!r.c)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", name);
	r.c->max_bytes = max_bytes;
	h.field = on_field;
	h.record = on_record;
	h.ctx = &r;
	rc = path ? hc_csvread_file(path, NULL, &h, NULL, err)
		  : hc_csvread_buffer(name, data, len, NULL, &h, NULL, err);
	if (rc == HC_OK && r.rows < r.c->m)
		rc = hc_error(err, HC_EDATA,
			"%s: %zu rows for %zu ids; expected a square matrix with one row per id",
			name, r.rows, r.c->m);
	if (rc == HC_OK)
		rc = symmetrize(&r, tol, err);
	hc_free(r.row_line);
	if (rc != HC_OK) {
		hc_covmatrix_free(r.c);
		return rc;
	}
	*out = r.c;
	return HC_OK;
}

int hc_covmatrix_load(struct covmatrix **out, const char *path, double symmetry_tol,
		   struct hc_error *err)
{
	return load(out, path, path, NULL, 0, symmetry_tol, 0, err);
}

int hc_covmatrix_load_buffer(struct covmatrix **out, const char *name,
			  const char *data, size_t len, double symmetry_tol,
			  struct hc_error *err)
{
	return load(out, name, NULL, data, len, symmetry_tol, 0, err);
}

int hc_covmatrix_load_within(struct covmatrix **out, const char *path, double symmetry_tol,
			  size_t max_bytes, struct hc_error *err)
{
	return load(out, path, path, NULL, 0, symmetry_tol, max_bytes, err);
}

int hc_covmatrix_load_buffer_within(struct covmatrix **out, const char *name,
				 const char *data, size_t len, double symmetry_tol,
				 size_t max_bytes, struct hc_error *err)
{
	return load(out, name, NULL, data, len, symmetry_tol, max_bytes, err);
}

/* ---- from returns ---------------------------------------------------------- */

static struct covmatrix *alloc_like(const struct universe *u)
{
	struct covmatrix *c = hc_calloc(1, sizeof *c);
	size_t i, n;

	if (!c)
		return NULL;
	c->ids = hc_calloc(u->m, sizeof *c->ids);
	if (!c->ids || hc_mul_size(u->m, u->m, &n) ||
	    !(c->a = hc_reallocarray(NULL, n, sizeof(double)))) {
		hc_covmatrix_free(c);
		return NULL;
	}
	for (c->m = 0; c->m < u->m; c->m++) {
		c->ids[c->m] = hc_strdup(u->ids[c->m]);
		if (!c->ids[c->m]) {
			hc_covmatrix_free(c);
			return NULL;
		}
	}
	for (i = 0; i < n; i++)
		c->a[i] = 0;
	c->max_bytes = u->max_bytes;
	return c;
}

/* Complete data: A = Xc Xc' / (T-1) with Xc the centred m x t returns. */
static int complete_cov(const struct universe *u, double *a, struct hc_error *err)
{
	size_t i, k, m = u->m, t = u->t, n;
	double *xc;

	if (hc_mul_size(m, t, &n) || !(xc = hc_reallocarray(NULL, n, sizeof *xc)))
		return hc_error(err, HC_ENOMEM, "out of memory for the centred returns");
	for (i = 0; i < m; i++) {
		const double *x = u->x + i * t;
		double mean = 0;

		for (k = 0; k < t; k++)
			mean += x[k];
		mean /= (double)t;
		for (k = 0; k < t; k++)
			xc[i * t + k] = x[k] - mean;
	}
	cblas_dsyrk(CblasRowMajor, CblasUpper, CblasNoTrans, (int)m, (int)t,
		    1.0 / (double)(t - 1), xc, (int)t, 0.0, a, (int)m);
	mirror_upper(a, m);
	hc_free(xc);
	return HC_OK;
}

/*
 * Pairwise-complete covariances through three matrix products, so BLAS
 * does the O(m^2 t) work.  With Z the returns (0 at gaps) and K the 0/1
 * indicator of an observation, over the periods common to i and j:
 *   n_ij = (K K')_ij, sum x_i = (Z K')_ij, sum x_j = (Z K')_ji,
 *   sum x_i x_j = (Z Z')_ij,
 *   cov_ij = (sum x_i x_j - sum x_i sum x_j / n_ij) / (n_ij - 1),
 * which uses each pair's own means.  Each series is first shifted by its
 * own mean: covariances do not change, and the one-pass formula then
 * subtracts small numbers rather than large ones (the shifted-data
 * algorithm; Chan, Golub & LeVeque, 1983, "Algorithms for computing the
 * sample variance: analysis and recommendations", The American
 * Statistician 37(3)).
 */
static int pairwise_cov(const struct universe *u, double *a, struct hc_error *err)
{
	size_t i, j, k, m = u->m, t = u->t, nmt, nmm;
	double *z = NULL, *ind = NULL, *cnt = NULL, *sx = NULL;
	int rc = HC_OK;

	if (hc_mul_size(m, t, &nmt) || hc_mul_size(m, m, &nmm))
		return hc_error(err, HC_ENOMEM, "out of memory for pairwise covariances");
	z = hc_reallocarray(NULL, nmt, sizeof *z);
	ind = hc_reallocarray(NULL, nmt, sizeof *ind);
	cnt = hc_reallocarray(NULL, nmm, sizeof *cnt);
	sx = hc_reallocarray(NULL, nmm, sizeof *sx);
	if (!z || !ind || !cnt || !sx) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for pairwise covariances");
		goto cleanup;
	}
	for (i = 0; i < m; i++) {
		const double *x = u->x + i * t;
		double mean = 0;
		size_t obs = 0;

		for (k = 0; k < t; k++)
			if (!isnan(x[k])) {
				mean += x[k];
				obs++;
			}
		mean = obs ? mean / (double)obs : 0;
		for (k = 0; k < t; k++) {
			int seen = !isnan(x[k]);

			z[i * t + k] = seen ? x[k] - mean : 0.0;
			ind[i * t + k] = seen;
		}
	}
	cblas_dsyrk(CblasRowMajor, CblasUpper, CblasNoTrans, (int)m, (int)t,
		    1.0, z, (int)t, 0.0, a, (int)m);
	cblas_dsyrk(CblasRowMajor, CblasUpper, CblasNoTrans, (int)m, (int)t,
		    1.0, ind, (int)t, 0.0, cnt, (int)m);
	cblas_dgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)m, (int)m, (int)t,
		    1.0, z, (int)t, ind, (int)t, 0.0, sx, (int)m);
	for (i = 0; i < m; i++) {
		for (j = i; j < m; j++) {
			double n = cnt[i * m + j];

			/* n counts 0/1 indicators exactly (integers below 2^53) */
			if ((rc = hc_covmatrix_check_overlap(u, i, j, (size_t)n, err)) != HC_OK)
				goto cleanup;
			a[i * m + j] = (a[i * m + j] - sx[i * m + j] * sx[j * m + i] / n) / (n - 1);
		}
	}
	mirror_upper(a, m);
cleanup:
	hc_free(z);
	hc_free(ind);
	hc_free(cnt);
	hc_free(sx);
	return rc;
}

/* The id of security i, or "#i+1" for a universe built without ids. */
static const char *id_or_number(const struct universe *u, size_t i, char *buf, size_t len)
{
	if (u->ids && u->ids[i])
		return u->ids[i];
	snprintf(buf, len, "#%zu", i + 1);
	return buf;
}

int hc_covmatrix_check_overlap(const struct universe *u, size_t i, size_t j, size_t n,
			    struct hc_error *err)
{
	const char *src = u->source ? u->source : "universe";
	char b1[32], b2[32];

	if (n >= COVMATRIX_MIN_COMMON_PERIODS)
		return HC_OK;
	if (i == j)
		return hc_error(err, HC_EDATA,
			"%s: security '%s' has only %zu period%s; expected at least %d for a covariance",
			src, id_or_number(u, i, b1, sizeof b1), n, n == 1 ? "" : "s",
			COVMATRIX_MIN_COMMON_PERIODS);
	return hc_error(err, HC_EDATA,
		"%s: securities '%s' and '%s' have only %zu common period%s; expected at least %d for a pairwise covariance",
		src, id_or_number(u, i, b1, sizeof b1), id_or_number(u, j, b2, sizeof b2),
		n, n == 1 ? "" : "s", COVMATRIX_MIN_COMMON_PERIODS);
}

int hc_covmatrix_from_universe(const struct universe *u, struct covmatrix **out,
			    struct hc_error *err)
{
	struct covmatrix *c;
	double mm, mt;
	int rc;

	*out = NULL;
	if (u->m < 1 || u->t < 2)
		return hc_error(err, HC_EDATA,
			"a covariance matrix needs at least 1 security and 2 periods; found %zu and %zu",
			u->m, u->t);
	/* the result, and the centred copy (complete) or pairwise_cov's arrays */
	mm = (double)u->m * (double)u->m;
	mt = (double)u->m * (double)u->t;
	rc = hc_memory_check(u->max_bytes, mt * sizeof(double),
			     (u->has_missing ? 3 * mm + 2 * mt : mm + mt) * sizeof(double), err,
			     "%s: universe too large for its covariance matrix", u->source ? u->source : "universe");
	if (rc != HC_OK)
		return rc;
	c = alloc_like(u);
	if (!c)
		return hc_error(err, HC_ENOMEM, "out of memory for a %zu x %zu covariance matrix", u->m, u->m);
	rc = u->has_missing ? pairwise_cov(u, c->a, err) : complete_cov(u, c->a, err);
	if (rc != HC_OK) {
		hc_covmatrix_free(c);
		return rc;
	}
	*out = c;
	return HC_OK;
}

/* ---- nearest positive semi-definite matrix ------------------------------- */

/*
 * For a symmetric A = V diag(l) V', the nearest positive semi-definite
 * matrix in the Frobenius norm is V diag(max(l, 0)) V' (Higham, 1988,
 * "Computing a nearest symmetric positive semidefinite matrix", Linear
 * Algebra and its Applications 103, Theorem 2.1): eigenvalue clipping.  It
 * is rebuilt as B B' with B = V diag(sqrt(max(l, 0))), so the result is
 * symmetric and positive semi-definite by construction, not only up to
 * rounding.
 *
 * w holds a copy of A and is destroyed.  out is written only when some
 * eigenvalue is negative (*neg then counts them); *lmin gets the smallest.
 */
static int eigen_clip(double *w, size_t m, double *out, size_t *neg, double *lmin,
		      struct hc_error *err)
{
	double *eval = NULL, *evec = NULL;
	gsl_eigen_symmv_workspace *ws = NULL;
	size_t i, k;
	int rc = HC_OK, st;

	*neg = 0;
	*lmin = NAN;
	evec = hc_reallocarray(NULL, m * m, sizeof *evec);
	eval = hc_reallocarray(NULL, m, sizeof *eval);
	ws = gsl_eigen_symmv_alloc(m);
	if (!evec || !eval || !ws) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the eigen decomposition");
		goto cleanup;
	}
	{
		gsl_matrix_view A = gsl_matrix_view_array(w, m, m);
		gsl_matrix_view V = gsl_matrix_view_array(evec, m, m);
		gsl_vector_view L = gsl_vector_view_array(eval, m);

		st = gsl_eigen_symmv(&A.matrix, &L.vector, &V.matrix, ws);
	}
	if (st != GSL_SUCCESS) {
		rc = hc_error(err, HC_EINTERNAL, "eigen decomposition failed: %s", gsl_strerror(st));
		goto cleanup;
	}
	*lmin = eval[0];
	for (k = 0; k < m; k++) {
		*neg += eval[k] < 0;
		if (eval[k] < *lmin)
			*lmin = eval[k];
	}
	if (!*neg)
		goto cleanup;
	for (k = 0; k < m; k++)
		eval[k] = eval[k] > 0 ? sqrt(eval[k]) : 0.0;
	for (i = 0; i < m; i++)
		for (k = 0; k < m; k++)
			evec[i * m + k] *= eval[k];   /* column k of V is eigenvector k */
	cblas_dsyrk(CblasRowMajor, CblasUpper, CblasNoTrans, (int)m, (int)m,
		    1.0, evec, (int)m, 0.0, out, (int)m);
	mirror_upper(out, m);
cleanup:
	if (ws)
		gsl_eigen_symmv_free(ws);
	hc_free(evec);
	hc_free(eval);
	return rc;
}

int hc_covmatrix_repair_psd(double *a, size_t m, int *changed, struct hc_error *err)
{
	double *w, lmin;
	size_t n, neg = 0;
	int rc;

	*changed = 0;
	if (m == 0)
		return HC_OK;
	if (hc_mul_size(m, m, &n) || !(w = hc_reallocarray(NULL, n, sizeof *w)))
		return hc_error(err, HC_ENOMEM, "out of memory for the eigen decomposition");
	memcpy(w, a, n * sizeof *w);
	rc = eigen_clip(w, m, a, &neg, &lmin, err);
	hc_free(w);
	*changed = rc == HC_OK && neg > 0;
	return rc;
}

/* LAPACK's divide-and-conquer symmetric eigensolver (in the OpenBLAS the
 * library links; Fortran calling convention). */
void dsyevd_(const char *jobz, const char *uplo, const int *n, double *a, const int *lda, double *w,
	     double *work, const int *lwork, int *iwork, const int *liwork, int *info);

/* The smallest eigenvalue of the symmetric m x m a, eigenvalues only
 * (LAPACK dsyevd with jobz = 'N': O(m^3/3) flops for the tridiagonal
 * reduction, no eigenvectors), for the check that needs nothing more. */
static int min_eigen_lapack(const double *a, size_t m, double *lmin, struct hc_error *err)
{
	int n = (int)m, lwork = -1, liwork = -1, info = 0, iw = 0;
	double wq = 0, *c = NULL, *w = NULL, *work = NULL;
	int *iwork = NULL, rc = HC_OK;
	size_t nn;

	if (m > (size_t)INT_MAX || hc_mul_size(m, m, &nn))
		return hc_error(err, HC_ENOMEM, "matrix of %zu securities too large for LAPACK", m);
	dsyevd_("N", "U", &n, &wq, &n, &wq, &wq, &lwork, &iw, &liwork, &info);
	lwork = (int)wq + 1;
	liwork = iw > 1 ? iw : 1;
	c = hc_reallocarray(NULL, nn, sizeof *c);
	w = hc_reallocarray(NULL, m, sizeof *w);
	work = hc_reallocarray(NULL, (size_t)lwork, sizeof *work);
	iwork = hc_reallocarray(NULL, (size_t)liwork, sizeof *iwork);
	if (!c || !w || !work || !iwork) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the eigenvalues");
		goto cleanup;
	}
	memcpy(c, a, nn * sizeof *c);
	dsyevd_("N", "U", &n, c, &n, w, work, &lwork, iwork, &liwork, &info);
	if (info != 0)
		rc = hc_error(err, HC_EINTERNAL, "eigenvalue computation failed (LAPACK dsyevd info %d)", info);
	else
		*lmin = w[0];   /* ascending order */
cleanup:
	hc_free(c);
	hc_free(w);
	hc_free(work);
	hc_free(iwork);
	return rc;
}

int hc_covmatrix_nearest_psd(const double *a, size_t m, double *b, struct covmatrix_psd *st,
			  struct hc_error *err)
{
	double *w, d2 = 0, a2 = 0;
	size_t n, i, j;
	int rc;

	memset(st, 0, sizeof *st);
	if (m == 0)
		return hc_error(err, HC_EINTERNAL, "no nearest matrix to an empty one");
	if (hc_mul_size(m, m, &n))
		return hc_error(err, HC_ENOMEM, "out of memory for the eigen decomposition");
	memcpy(b, a, n * sizeof *b);
	/* The check first, eigenvalues only: a matrix with no negative
	 * eigenvalue is its own nearest one, and needs no eigenvectors. */
	if ((rc = min_eigen_lapack(a, m, &st->min_eigenvalue, err)) != HC_OK)
		return rc;
	if (st->min_eigenvalue >= 0) {
		for (i = 0; i < n; i++)
			a2 += a[i] * a[i];
		st->norm = sqrt(a2);
		return HC_OK;
	}
	if (!(w = hc_reallocarray(NULL, n, sizeof *w)))
		return hc_error(err, HC_ENOMEM, "out of memory for the eigen decomposition");
	memcpy(w, a, n * sizeof *w);
	rc = eigen_clip(w, m, b, &st->negative, &st->min_eigenvalue, err);
	hc_free(w);
	if (rc != HC_OK) {
		memcpy(b, a, n * sizeof *b);
		return rc;
	}
	for (i = 0; i < m; i++)
		for (j = 0; j < m; j++) {
			double x = a[i * m + j], d = b[i * m + j] - x;
			double rel = fabs(d) / sqrt(a[i * m + i] * a[j * m + j]);

			d2 += d * d;
			a2 += x * x;
			if (rel > st->max_relative_move)
				st->max_relative_move = rel;
		}
	st->distance = sqrt(d2);
	st->norm = sqrt(a2);
	return HC_OK;
}

int hc_covmatrix_min_eigenvalue(const double *a, size_t m, double *lambda_min,
			     struct hc_error *err)
{
	gsl_eigen_symm_workspace *ws = NULL;
	double *w = NULL, *eval = NULL;
	size_t k, n;
	int rc = HC_OK, st;

	*lambda_min = NAN;
	if (m == 0)
		return hc_error(err, HC_EINTERNAL, "no eigenvalues of an empty matrix");
	if (m > 1)
		return min_eigen_lapack(a, m, lambda_min, err);
	if (hc_mul_size(m, m, &n))
		return hc_error(err, HC_ENOMEM, "out of memory for the eigenvalues");
	w = hc_reallocarray(NULL, n, sizeof *w);
	eval = hc_reallocarray(NULL, m, sizeof *eval);
	ws = gsl_eigen_symm_alloc(m);
	if (!w || !eval || !ws) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the eigenvalues");
		goto cleanup;
	}
	memcpy(w, a, n * sizeof *w);
	{
		gsl_matrix_view A = gsl_matrix_view_array(w, m, m);
		gsl_vector_view L = gsl_vector_view_array(eval, m);

		st = gsl_eigen_symm(&A.matrix, &L.vector, ws);
	}
	if (st != GSL_SUCCESS) {
		rc = hc_error(err, HC_EINTERNAL, "eigenvalue computation failed: %s", gsl_strerror(st));
		goto cleanup;
	}
	*lambda_min = eval[0];
	for (k = 1; k < m; k++)
		if (eval[k] < *lambda_min)
			*lambda_min = eval[k];
cleanup:
	if (ws)
		gsl_eigen_symm_free(ws);
	hc_free(w);
	hc_free(eval);
	return rc;
}
