/*
 * Unit tests for covmatrix: CSV loading and its errors, covariances from
 * returns (complete and pairwise), nearest positive semi-definite repair.
 *
 * Reference values come from numpy (Debian python3-numpy 1.24), computed
 * with /usr/bin/python3 on the data below:
 *   X = the 4 x 7 returns of RETURNS below (rows = securities)
 *   complete:  np.cov(X)                      (ddof = 1)
 *   pairwise:  Y = X with NaN at the gaps of GAPS below;
 *              P[i,j] = np.cov(Y[i][k], Y[j][k])[0,1],
 *              k = ~np.isnan(Y[i]) & ~np.isnan(Y[j])
 *   repair:    w, V = np.linalg.eigh(A); V @ np.diag(np.maximum(w, 0)) @ V.T
 *   distance:  np.linalg.norm(A - B, 'fro'), np.linalg.norm(A, 'fro'),
 *              (abs(A - B) / sqrt(outer(diag(A), diag(A)))).max()
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>

#include "holdcount/covmatrix.h"
#include "holdcount/memory.h"
#include "holdcount/universe.h"

#include "check.h"
#include "heapcheck.h"

#define assert_close(a, b, tol) do { \
	double a_ = (a), b_ = (b); \
	if (!(fabs(a_ - b_) <= (tol))) \
		fail_msg("%.17g != %.17g (tolerance %g)", a_, b_, (double)(tol)); \
} while (0)

static const char RETURNS[] =
	"date,A,B,C,D\n"
	"2021-01-31,0.0213,-0.0117,0.0342,0.0042\n"
	"2021-02-28,-0.0385,0.0266,0.0051,-0.0093\n"
	"2021-03-31,0.0172,0.0093,-0.0228,0.0311\n"
	"2021-04-30,0.0051,-0.0204,0.0137,-0.0128\n"
	"2021-05-31,0.0094,0.0077,-0.0319,0.0184\n"
	"2021-06-30,-0.0217,0.0148,0.0089,-0.0036\n"
	"2021-07-31,0.0332,-0.0061,0.0205,0.0157\n";

/* The same with gaps: B at periods 0 and 4, C at 2, D at 5 and 6. */
static const char GAPS[] =
	"date,A,B,C,D\n"
	"2021-01-31,0.0213,NA,0.0342,0.0042\n"
	"2021-02-28,-0.0385,0.0266,0.0051,-0.0093\n"
	"2021-03-31,0.0172,0.0093,,0.0311\n"
	"2021-04-30,0.0051,-0.0204,0.0137,-0.0128\n"
	"2021-05-31,0.0094,NA,-0.0319,0.0184\n"
	"2021-06-30,-0.0217,0.0148,0.0089,NA\n"
	"2021-07-31,0.0332,-0.0061,0.0205,NA\n";

static const double NUMPY_COMPLETE[16] = {
	0.0006371180952380951, -0.0002906197619047618, 4.9090714285714295e-05, 0.00025452595238095233,
	-0.0002906197619047618, 0.0002673914285714286, -0.00017914904761904762, 2.005904761904763e-05,
	4.9090714285714295e-05, -0.00017914904761904762, 0.0005517728571428571, -0.00020971785714285712,
	0.00025452595238095233, 2.005904761904763e-05, -0.00020971785714285712, 0.00026006285714285705 };

static const double NUMPY_PAIRWISE[16] = {
	0.0006371180952380951, -0.000367278, 0.00014310466666666666, 0.0002496175,
	-0.000367278, 0.00033733299999999994, -0.00010556500000000001, 0.00012823500000000004,
	0.00014310466666666666, -0.00010556500000000001, 0.0004950736666666666, -0.00022291583333333332,
	0.0002496175, 0.00012823500000000004, -0.00022291583333333332, 0.00034350699999999995 };

/* numpy: eigenvalues of NUMPY_PAIRWISE are -9.72e-05, 2.61e-04, 6.91e-04,
 * 9.58e-04, so it is not positive semi-definite; its repair: */
static const double NUMPY_PAIRWISE_PSD[16] = {
	0.0006642507286292167, -0.00033854319826522305, 0.00013030361196723095, 0.0002194150284492426,
	-0.000338543198265223, 0.0003677645773126222, -0.00011912195053561189, 9.624908770756309e-05,
	0.00013030361196723092, -0.00011912195053561188, 0.000501113146840072, -0.00020866644276345566,
	0.00021941502844924262, 9.624908770756309e-05, -0.00020866644276345568, 0.00037712663708516417 };

static struct universe *load_universe(const char *text, int missing)
{
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	hc_universe_options_init(&o);
	o.missing = missing;
	if (hc_universe_load_buffer(&u, "u.csv", text, strlen(text), &o, &err) != HC_OK)
		fail_msg("%s", err.message);
	return u;
}

/* Tolerance: 1e-15 relative to the largest variance (6.4e-4): sums of 7
 * products of numbers near 0.02 carry about 7 ulp of rounding each way. */
#define COV_TOL (1e-15 * 6.4e-4)

static void test_covmatrix_complete_against_numpy(void **state)
{
	struct universe *u = load_universe(RETURNS, UNIVERSE_MISSING_COMPLETE);
	struct covmatrix *c;
	struct hc_error err;
	size_t i;

	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_OK);
	assert_int_equal(c->m, 4);
	assert_string_equal(c->ids[3], "D");
	for (i = 0; i < 16; i++)
		assert_close(c->a[i], NUMPY_COMPLETE[i], COV_TOL);
	assert_true(c->a[1 * 4 + 2] == c->a[2 * 4 + 1]);   /* exactly symmetric */
	assert_int_equal(hc_covmatrix_find(c, "C"), 2);
	assert_int_equal(hc_covmatrix_find(c, "E"), -1);
	hc_covmatrix_free(c);
	hc_covmatrix_free(NULL);
	hc_universe_free(u);
}

static void test_covmatrix_pairwise_against_numpy(void **state)
{
	struct universe_options o;
	struct universe *u;
	struct covmatrix *c;
	struct hc_error err;
	size_t i;

	hc_universe_options_init(&o);
	o.missing = UNIVERSE_MISSING_PAIRWISE;
	o.min_coverage = 0.7;
	assert_int_equal(hc_universe_load_buffer(&u, "u.csv", GAPS, strlen(GAPS), &o, &err), HC_OK);
	assert_int_equal(u->m, 4);
	assert_int_equal(u->has_missing, 1);
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_OK);
	for (i = 0; i < 16; i++)
		assert_close(c->a[i], NUMPY_PAIRWISE[i], COV_TOL);
	hc_covmatrix_free(c);
	hc_universe_free(u);
}

static void test_covmatrix_pairwise_too_few_common(void **state)
{
	static const char text[] =
		"date,A,B,C\n"
		"2021-01-31,0.0213,NA,0.0342\n"
		"2021-02-28,-0.0385,NA,0.0051\n"
		"2021-03-31,0.0172,0.0093,NA\n"
		"2021-04-30,0.0051,-0.0204,NA\n"
		"2021-05-31,0.0094,0.0077,-0.0319\n"
		"2021-06-30,-0.0217,0.0148,0.0089\n";
	struct universe *u = load_universe(text, UNIVERSE_MISSING_KEEP);
	struct covmatrix *c = (struct covmatrix *)1;
	struct hc_error err;

	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_EDATA);
	assert_null(c);
	assert_string_equal(err.message,
		"u.csv: securities 'B' and 'C' have only 2 common periods; expected at least 3 for a pairwise covariance");
	hc_universe_free(u);
}

static void test_covmatrix_repair_psd_against_numpy(void **state)
{
	/* numpy: eigenvalues -0.79256, 3.54223, 4.55333 */
	double a[9] = { 2.385, 2.1, -1.4, 2.1, 2.517, 1.3, -1.4, 1.3, 2.401 };
	static const double ref[9] = {
		2.688682035192451, 1.8083836049693134, -1.148162777661336,
		1.8083836049693136, 2.797030136773818, 1.0581685631604707,
		-1.148162777661336, 1.0581685631604707, 2.609843392777781 };
	double p[16];
	struct hc_error err;
	int changed = -1;
	size_t i;

	gsl_set_error_handler_off();
	assert_int_equal(hc_covmatrix_repair_psd(a, 3, &changed, &err), HC_OK);
	assert_int_equal(changed, 1);
	/* 1e-14 absolute on entries near 2.5: a symmetric eigensolver is
	 * backward stable, error about m * eps * ||A|| (||A|| ~ 4.6) */
	for (i = 0; i < 9; i++)
		assert_close(a[i], ref[i], 1e-14);
	memcpy(p, NUMPY_PAIRWISE, sizeof p);
	assert_int_equal(hc_covmatrix_repair_psd(p, 4, &changed, &err), HC_OK);
	assert_int_equal(changed, 1);
	for (i = 0; i < 16; i++)
		assert_close(p[i], NUMPY_PAIRWISE_PSD[i], 1e-17);   /* same reasoning, ||P|| ~ 1e-3 */
}

static void test_covmatrix_repair_psd_leaves_psd_alone(void **state)
{
	double a[16];
	struct hc_error err;
	int changed = -1;

	/* np.cov of RETURNS is positive definite (numpy eigvalsh > 0): untouched, bit for bit */
	memcpy(a, NUMPY_COMPLETE, sizeof a);
	gsl_set_error_handler_off();
	assert_int_equal(hc_covmatrix_repair_psd(a, 4, &changed, &err), HC_OK);
	assert_int_equal(changed, 0);
	assert_memory_equal(a, NUMPY_COMPLETE, sizeof a);
	assert_int_equal(hc_covmatrix_repair_psd(a, 0, &changed, &err), HC_OK);
	assert_int_equal(changed, 0);
}

/* hc_covmatrix_nearest_psd: the same clipping into a separate matrix, and what
 * it moved, against numpy (header).  Higham (1988) also gives the distance
 * in closed form: sqrt of the sum of the squared negative eigenvalues, here
 * |lambda_min| (one negative eigenvalue). */
static void test_covmatrix_nearest_psd_against_numpy(void **state)
{
	static const double a[9] = { 2.385, 2.1, -1.4, 2.1, 2.517, 1.3, -1.4, 1.3, 2.401 };
	static const double ref[9] = {
		2.688682035192451, 1.8083836049693134, -1.148162777661336,
		1.8083836049693136, 2.797030136773818, 1.0581685631604707,
		-1.148162777661336, 1.0581685631604707, 2.609843392777781 };
	struct covmatrix_psd st;
	struct hc_error err;
	double b[16];
	size_t i;

	gsl_set_error_handler_off();
	assert_int_equal(hc_covmatrix_nearest_psd(a, 3, b, &st, &err), HC_OK);
	/* 1e-14 absolute, as for hc_covmatrix_repair_psd above (||A|| ~ 5.8) */
	for (i = 0; i < 9; i++)
		assert_close(b[i], ref[i], 1e-14);
	assert_int_equal(st.negative, 1);
	assert_close(st.min_eigenvalue, -0.7925555647440514, 1e-14);
	assert_close(st.distance, 0.7925555647440526, 1e-14);
	assert_close(st.distance, -st.min_eigenvalue, 1e-14);
	assert_close(st.norm, 5.823084663646923, 1e-14);
	assert_close(st.max_relative_move, 0.12732999379138407, 1e-14);

	assert_int_equal(hc_covmatrix_nearest_psd(NUMPY_PAIRWISE, 4, b, &st, &err), HC_OK);
	for (i = 0; i < 16; i++)
		assert_close(b[i], NUMPY_PAIRWISE_PSD[i], 1e-17);   /* ||P|| ~ 1.2e-3 */
	assert_int_equal(st.negative, 1);
	assert_close(st.min_eigenvalue, -9.722332796231278e-05, 1e-17);
	assert_close(st.distance, 9.722332796231283e-05, 1e-17);
	assert_close(st.norm, 0.001213560572641531, 1e-17);
	assert_close(st.max_relative_move, 0.09787176705326077, 1e-13);

	/* np.cov of RETURNS is positive definite: b is a's copy, bit for bit */
	assert_int_equal(hc_covmatrix_nearest_psd(NUMPY_COMPLETE, 4, b, &st, &err), HC_OK);
	assert_memory_equal(b, NUMPY_COMPLETE, sizeof NUMPY_COMPLETE);
	assert_int_equal(st.negative, 0);
	assert_true(st.min_eigenvalue > 0);
	assert_true(st.distance == 0 && st.max_relative_move == 0);
	assert_int_equal(hc_covmatrix_nearest_psd(a, 0, b, &st, &err), HC_EINTERNAL);
}

static void test_covmatrix_min_eigenvalue(void **state)
{
	double a[9] = { 2.385, 2.1, -1.4, 2.1, 2.517, 1.3, -1.4, 1.3, 2.401 }, lmin;
	struct hc_error err;

	gsl_set_error_handler_off();
	/* numpy: np.linalg.eigvalsh(A)[0] = -0.7925555647440522; 1e-14 as for the repair */
	assert_int_equal(hc_covmatrix_min_eigenvalue(a, 3, &lmin, &err), HC_OK);
	assert_close(lmin, -0.7925555647440522, 1e-14);
	/* numpy: eigvalsh(NUMPY_PAIRWISE)[0] = -9.722332796231278e-05 */
	assert_int_equal(hc_covmatrix_min_eigenvalue(NUMPY_PAIRWISE, 4, &lmin, &err), HC_OK);
	assert_close(lmin, -9.722332796231278e-05, 1e-17);
	assert_int_equal(hc_covmatrix_min_eigenvalue(a, 0, &lmin, &err), HC_EINTERNAL);
	hc_alloc_fail_after(1);
	assert_int_equal(hc_covmatrix_min_eigenvalue(a, 3, &lmin, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
}

static const char MATRIX[] =
	"\xEF\xBB\xBF" "risk model,A,B,C\r\n"
	"A,0.0004,0.00012,-0.00003\r\n"
	"B,0.000120000001,0.0009,0.0002\r\n"
	"C,-3e-5,0.0002,0.000625\r\n";

static void test_covmatrix_load(void **state)
{
	struct covmatrix *c;
	struct hc_error err;

	assert_int_equal(hc_covmatrix_load_buffer(&c, "cov.csv", MATRIX, strlen(MATRIX),
					       COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_OK);
	assert_int_equal(c->m, 3);
	assert_string_equal(c->ids[0], "A");
	assert_true(c->a[2 * 3 + 2] == 0.000625);
	assert_true(c->a[0 * 3 + 2] == -3e-5);
	/* within tolerance the triangles are averaged: (0.00012 + 0.000120000001)/2 */
	assert_true(c->a[0 * 3 + 1] == c->a[1 * 3 + 0]);
	assert_close(c->a[0 * 3 + 1], 0.0001200000005, 1e-19);
	hc_covmatrix_free(c);
	/* exact symmetry demanded: line 3 column 2 holds B's entry for A */
	assert_int_equal(hc_covmatrix_load_buffer(&c, "cov.csv", MATRIX, strlen(MATRIX), 0, &err), HC_EDATA);
	assert_null(c);
	assert_string_equal(err.message,
		"cov.csv:3:2: covariance of 'B' and 'A' is 0.000120000001 here but 0.00012 on line 2, column 3; "
		"expected a symmetric matrix (relative tolerance 0)");
	assert_int_equal(hc_covmatrix_load_buffer(&c, "cov.csv", MATRIX, strlen(MATRIX), -1, &err), HC_EUSAGE);
}

static void expect_load_error(const char *text, const char *prefix)
{
	struct covmatrix *c = (struct covmatrix *)1;
	struct hc_error err;
	int rc = hc_covmatrix_load_buffer(&c, "cov.csv", text, strlen(text),
				       COVMATRIX_DEFAULT_SYMMETRY_TOL, &err);

	check_status_prefix(rc, HC_EDATA, err.message, prefix);
	assert_null(c);
}

static void test_covmatrix_load_errors(void **state)
{
	expect_load_error("", "cov.csv: empty file");
	expect_load_error(",A\nA,0.04\n", "cov.csv:1: the header has 1 id; expected a corner cell then at least 2 ids");
	expect_load_error(",A,B\nA,0.04,0.01\n", "cov.csv: 1 rows for 2 ids; expected a square matrix");
	expect_load_error(",A,B\nA,0.04,0.01\nB,0.01,0.09\nC,1,2\n",
			  "cov.csv:4: more rows than the header's 2 ids");
	expect_load_error(",A,B\nB,0.04,0.01\nA,0.01,0.09\n",
			  "cov.csv:2:1: row id 'B' does not match 'A' in column 2 of the header");
	expect_load_error(",A,B,A\nA,1,0,0\n", "cov.csv:1:4: duplicate security id 'A' (also in column 2)");
	expect_load_error(",A,b,B\n", "cov.csv:1:4: security id 'B' differs only in case or surrounding spaces from 'b'");
	expect_load_error(",A,B\nA,0.04,x\nB,0.01,0.09\n", "cov.csv:2:3: expected a number, found 'x'");
	expect_load_error(",A,B\nA,0.04,\nB,0.01,0.09\n", "cov.csv:2:3: expected a number, found ''");
	expect_load_error(",A,B\nA,0.04,0.01\nB,0.01,0\n",
			  "cov.csv:3:3: variance of 'B' is 0; expected a positive number on the diagonal");
	expect_load_error(",A,B\nA,-0.04,0.01\nB,0.01,0.09\n", "cov.csv:2:2: variance of 'A' is -0.04");
	expect_load_error(",A,B\nA,0.04\nB,0.01,0.09\n", "cov.csv:2:2: row has 2 fields; expected 3 as in the header");
	expect_load_error(",A,B\nA,0.04,0.01,7\nB,0.01,0.09\n", "cov.csv:2:4: row has more fields than the header's 3");
	expect_load_error(",A,B\nA,0.04,0.01\nB,0.02,0.09\n",
			  "cov.csv:3:2: covariance of 'B' and 'A' is 0.02 here but 0.01 on line 2, column 3");
}

/* The memory budget: the header's 3 ids make a 3 x 3 matrix of 72 bytes,
 * checked before it is allocated; a header of 40 000 ids (12 800 000 000
 * bytes of numbers, 12207.1 MiB) is refused before any row is read.
 * Budget 0 is the memory available, and the plain loaders use it. */
static void test_covmatrix_load_within_budget(void **state)
{
	struct covmatrix *c = (struct covmatrix *)1;
	struct hc_error err;
	char *text;
	size_t i, len = 0;

	assert_int_equal(hc_covmatrix_load_buffer_within(&c, "cov.csv", MATRIX, strlen(MATRIX),
						      COVMATRIX_DEFAULT_SYMMETRY_TOL, 71, &err), HC_ENOMEM);
	assert_null(c);
	assert_string_equal(err.message,
		"cov.csv: covariance matrix of 3 ids too large: needs at least 0.1 MiB, budget 0.0 MiB");
	assert_int_equal(hc_covmatrix_load_buffer_within(&c, "cov.csv", MATRIX, strlen(MATRIX),
						      COVMATRIX_DEFAULT_SYMMETRY_TOL, 72, &err), HC_OK);
	assert_int_equal(c->m, 3);
	assert_int_equal(c->max_bytes, 72);
	hc_covmatrix_free(c);
	assert_int_equal(hc_covmatrix_load_buffer(&c, "cov.csv", MATRIX, strlen(MATRIX),
					       COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_OK);
	assert_int_equal(c->max_bytes, 0);
	hc_covmatrix_free(c);

	text = malloc(40000 * 7 + 2);
	assert_non_null(text);
	text[len++] = ',';
	for (i = 1; i <= 40000; i++)
		len += (size_t)sprintf(text + len, i < 40000 ? "I%05zu," : "I%05zu\n", i);
	assert_int_equal(hc_covmatrix_load_buffer_within(&c, "big.csv", text, len,
						      COVMATRIX_DEFAULT_SYMMETRY_TOL, (size_t)64 << 20, &err), HC_ENOMEM);
	assert_null(c);
	assert_string_equal(err.message,
		"big.csv: covariance matrix of 40000 ids too large: needs at least 12207.1 MiB, budget 64.0 MiB");
	free(text);
}

/* hc_covmatrix_from_universe keeps to the universe's budget: the 4 x 7
 * returns (224 bytes held) need the 4 x 4 result and a centred copy
 * (128 + 224 bytes) when complete, and 3 x 128 + 2 x 224 bytes when
 * pairwise (covmatrix.h). */
static void test_covmatrix_from_universe_budget(void **state)
{
	struct universe *u = load_universe(RETURNS, UNIVERSE_MISSING_COMPLETE);
	struct covmatrix *c = (struct covmatrix *)1;
	struct hc_error err;

	u->max_bytes = 224 + 128 + 224 - 1;
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_ENOMEM);
	assert_null(c);
	assert_string_equal(err.message,
		"u.csv: universe too large for its covariance matrix: needs at least 0.1 MiB, budget 0.0 MiB");
	u->max_bytes = 224 + 128 + 224;
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_OK);
	assert_int_equal(c->max_bytes, 224 + 128 + 224);
	hc_covmatrix_free(c);
	u->has_missing = 1;
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_ENOMEM);
	u->max_bytes = 224 + 3 * 128 + 2 * 224;
	assert_int_equal(hc_covmatrix_from_universe(u, &c, &err), HC_OK);
	hc_covmatrix_free(c);
	hc_universe_free(u);
}

static void test_covmatrix_load_file(void **state)
{
	char path[4096];
	struct covmatrix *c;
	struct hc_error err;

	check_write_temp(path, sizeof path, "cov.csv", MATRIX);
	assert_int_equal(hc_covmatrix_load(&c, path, COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_OK);
	assert_int_equal(c->m, 3);
	hc_covmatrix_free(c);
	assert_int_equal(hc_covmatrix_load(&c, "/nonexistent/cov.csv", COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_EIO);
	assert_null(c);
}

/* Every allocation index fails in turn: HC_ENOMEM, nothing leaked
 * (heapcheck.h).  A sweep's context: */
struct made {
	const struct universe *from;   /* NULL: load MATRIX instead */
	struct covmatrix *c;
	const double *a;               /* repair: the matrix, and its copy b */
	double b[9];
};

static int made_covmatrix(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	if (w->from)
		return hc_covmatrix_from_universe(w->from, &w->c, err);
	return hc_covmatrix_load_buffer(&w->c, "cov.csv", MATRIX, strlen(MATRIX),
				     COVMATRIX_DEFAULT_SYMMETRY_TOL, err);
}

static void made_release(void *ctx)
{
	hc_covmatrix_free(((struct made *)ctx)->c);
}

static void made_none(void *ctx)
{
	assert_null(((struct made *)ctx)->c);
}

static int made_repair(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;
	int changed;

	memcpy(w->b, w->a, sizeof w->b);
	return hc_covmatrix_repair_psd(w->b, 3, &changed, err);
}

static int made_nearest(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;
	struct covmatrix_psd st;

	return hc_covmatrix_nearest_psd(w->a, 3, w->b, &st, err);
}

static void made_untouched(void *ctx)
{
	struct made *w = ctx;

	assert_memory_equal(w->b, w->a, sizeof w->b);   /* untouched on failure */
}

static void test_covmatrix_allocation_failure(void **state)
{
	struct universe *u = load_universe(RETURNS, UNIVERSE_MISSING_COMPLETE);
	struct universe *g = load_universe(GAPS, UNIVERSE_MISSING_KEEP);
	const struct universe *src[3] = { u, g, NULL };
	static const double a[9] = { 2.385, 2.1, -1.4, 2.1, 2.517, 1.3, -1.4, 1.3, 2.401 };
	struct made w = { NULL, NULL, a, { 0 } };
	struct heapcheck_call make = { made_covmatrix, made_release, made_none, &w };
	struct heapcheck_call repair = { made_repair, NULL, made_untouched, &w };
	struct heapcheck_call nearest = { made_nearest, NULL, made_untouched, &w };
	int pass;

	gsl_set_error_handler_off();
	for (pass = 0; pass < 3; pass++) {
		w.from = src[pass];
		assert_true(heapcheck_sweep(&make) > 2);
	}
	assert_int_equal(heapcheck_sweep(&repair), 3);
	/* on failure b is a's copy, so a caller holding b still has a matrix;
	 * 7 allocations: the eigenvalue-only check (LAPACK dsyevd: copy,
	 * eigenvalues, two workspaces), then, a being indefinite, the
	 * decomposition's three */
	assert_int_equal(heapcheck_sweep(&nearest), 7);
	hc_universe_free(u);
	hc_universe_free(g);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_covmatrix_complete_against_numpy),
		cmocka_unit_test(test_covmatrix_pairwise_against_numpy),
		cmocka_unit_test(test_covmatrix_pairwise_too_few_common),
		cmocka_unit_test(test_covmatrix_repair_psd_against_numpy),
		cmocka_unit_test(test_covmatrix_repair_psd_leaves_psd_alone),
		cmocka_unit_test(test_covmatrix_nearest_psd_against_numpy),
		cmocka_unit_test(test_covmatrix_min_eigenvalue),
		cmocka_unit_test(test_covmatrix_load),
		cmocka_unit_test(test_covmatrix_load_errors),
		cmocka_unit_test(test_covmatrix_load_file),
		cmocka_unit_test(test_covmatrix_load_within_budget),
		cmocka_unit_test(test_covmatrix_from_universe_budget),
		cmocka_unit_test(test_covmatrix_allocation_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
