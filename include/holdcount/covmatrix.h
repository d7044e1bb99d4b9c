/*
 * covmatrix.h - a covariance matrix of M securities: read from a CSV (a
 * risk model's output), or computed from a universe's returns.
 *
 * CSV layout (docs/formats.md): the header row is a corner cell (empty or
 * any label) then the M ids; each of the M following rows is an id (the
 * same ids in the same order) then M numbers.  Units are whatever the file
 * holds (per period for computed matrices).
 */
#ifndef HOLDCOUNT_COVMATRIX_H
#define HOLDCOUNT_COVMATRIX_H

#include <stddef.h>

#include "holdcount/error.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Largest accepted |a_ij - a_ji|, relative to sqrt(a_ii * a_jj) (the
 * product of the two standard deviations, a covariance's natural scale):
 * room for a file printed with about 9 significant digits. */
#define COVMATRIX_DEFAULT_SYMMETRY_TOL 1e-8

/* Fewest common periods a pair needs for a pairwise covariance (and a
 * security alone for its variance), docs/formats.md. */
#define COVMATRIX_MIN_COMMON_PERIODS 3

struct covmatrix {
	size_t m;
	char **ids;     /* m ids, owned */
	double *a;      /* m*m, row-major, symmetric */
	size_t max_bytes; /* the memory budget it was made under (memory.h; 0 =
			   * from available memory), for later steps on it */
};

/*
 * Read a covariance-matrix CSV (',' or ';' detected).  symmetry_tol >= 0
 * is the relative tolerance above (COVMATRIX_DEFAULT_SYMMETRY_TOL is the
 * usual choice; 0 demands exact symmetry); within it the two triangles are
 * averaged.  Errors: HC_EIO (cannot open/read), HC_ENOMEM, HC_EUSAGE (bad
 * tolerance), HC_EDATA "PATH:LINE:COLUMN: ..." for a non-numeric or
 * missing cell, a row id that does not match the header, duplicate ids, a
 * ragged or non-square matrix, an asymmetric pair (naming both ids), a
 * diagonal entry that is not positive, or fewer than 2 ids.
 * On failure *out is NULL.
 */
int hc_covmatrix_load(struct covmatrix **out, const char *path, double symmetry_tol,
		   struct hc_error *err);

/* The same from a buffer; name is used in messages. */
int hc_covmatrix_load_buffer(struct covmatrix **out, const char *name,
			  const char *data, size_t len, double symmetry_tol,
			  struct hc_error *err);

/*
 * hc_covmatrix_load and hc_covmatrix_load_buffer within a memory budget of
 * max_bytes (0 = from available memory, which the two above use): the
 * m x m numbers are checked against it as soon as the header has given m,
 * before they are allocated; HC_ENOMEM "PATH: covariance matrix of M ids
 * too large: needs at least X MiB, budget Y MiB" (memory.h's
 * hc_memory_check).  The result's max_bytes is max_bytes.
 */
int hc_covmatrix_load_within(struct covmatrix **out, const char *path, double symmetry_tol,
			  size_t max_bytes, struct hc_error *err);
int hc_covmatrix_load_buffer_within(struct covmatrix **out, const char *name,
				 const char *data, size_t len, double symmetry_tol,
				 size_t max_bytes, struct hc_error *err);

/*
 * The sample covariance matrix (divisor T-1) of u's returns, per period.
 * Complete data: centred returns through BLAS dsyrk.  With gaps
 * (u->has_missing): pairwise-complete covariances, each pair using its own
 * means over its n_ij common periods and divisor n_ij - 1; HC_EDATA naming
 * the pair when n_ij < COVMATRIX_MIN_COMMON_PERIODS.  A pairwise matrix need
 * not be positive semi-definite (see hc_covmatrix_repair_psd).
 * Memory: one m*t copy and the m*m result (complete); two m*t and three
 * m*m arrays (pairwise).  They are checked first against u->max_bytes
 * (memory.h), HC_ENOMEM "SOURCE: universe too large for its covariance
 * matrix: ..." when they do not fit; HC_ENOMEM too when they cannot be
 * allocated.  The result's max_bytes is u->max_bytes.
 */
int hc_covmatrix_from_universe(const struct universe *u, struct covmatrix **out,
			    struct hc_error *err);

/*
 * The one place the minimum above is applied, by every pairwise-complete
 * computation (hc_covmatrix_from_universe here, the pairwise route of
 * moments.h): HC_OK when securities i and j of u share n >=
 * COVMATRIX_MIN_COMMON_PERIODS observed periods (i == j: security i alone
 * has n), else HC_EDATA "SOURCE: securities 'B' and 'C' have only 2 common
 * periods; expected at least 3 for a pairwise covariance" ("security 'B'
 * has only 2 periods; ..." when i == j).
 */
int hc_covmatrix_check_overlap(const struct universe *u, size_t i, size_t j, size_t n,
			    struct hc_error *err);

/*
 * Replace the symmetric m*m row-major matrix a by the nearest positive
 * semi-definite matrix in the Frobenius norm: eigenvalues below zero are
 * set to zero (Higham, 1988).  *changed is 1 when any eigenvalue was
 * negative (a is then rebuilt), 0 when a was already positive
 * semi-definite (a is left exactly as it was).  HC_ENOMEM, or
 * HC_EINTERNAL when the eigensolver fails (a unchanged).
 */
int hc_covmatrix_repair_psd(double *a, size_t m, int *changed, struct hc_error *err);

/* What replacing a matrix by its nearest positive semi-definite one moved. */
struct covmatrix_psd {
	size_t negative;          /* eigenvalues below zero (set to zero) */
	double min_eigenvalue;    /* the smallest eigenvalue of a */
	double distance;          /* ||a - b||_F, the Frobenius distance moved */
	double norm;              /* ||a||_F, to put the distance in proportion */
	double max_relative_move; /* max |a_ij - b_ij| / sqrt(a_ii a_jj) */
};

/*
 * Write into b (m*m, the caller's, not overlapping a) the nearest positive
 * semi-definite matrix to the symmetric m*m row-major a in the Frobenius
 * norm, by the same eigenvalue clipping as hc_covmatrix_repair_psd (Higham,
 * 1988), and into *st what it moved.  When a has no negative eigenvalue, b
 * is an exact copy of a and st->distance is 0.  a's diagonal must be
 * positive (moves are measured relative to sqrt(a_ii a_jj)).  HC_ENOMEM, or
 * HC_EINTERNAL when the eigensolver fails or m is 0 (b is then a copy of a,
 * when m > 0).  O(m^3); a is not modified.
 */
int hc_covmatrix_nearest_psd(const double *a, size_t m, double *b, struct covmatrix_psd *st,
			  struct hc_error *err);

/*
 * The smallest eigenvalue of the symmetric m*m row-major matrix a (a is
 * not modified), so a caller can refuse or repair a matrix that is not
 * positive semi-definite (*lambda_min < 0).  HC_ENOMEM, or HC_EINTERNAL
 * when the eigensolver fails.  O(m^3).
 */
int hc_covmatrix_min_eigenvalue(const double *a, size_t m, double *lambda_min,
			     struct hc_error *err);

/* Free c and everything it owns; NULL is a no-op. */
void hc_covmatrix_free(struct covmatrix *c);

/* Index of id in c->ids, or -1. */
long hc_covmatrix_find(const struct covmatrix *c, const char *id);

#ifdef __cplusplus
}
#endif

#endif
