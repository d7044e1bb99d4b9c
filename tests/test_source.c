/*
 * test_source.c - the data source type: kinds, the missing-data and
 * positive semi-definite policies applied inside it, accessors, moments,
 * and allocation failure.
 *
 * References: the pairwise-complete matrix of GAPS and its nearest positive
 * semi-definite matrix are numpy's (the values of test_covmatrix.c:
 * np.ma.cov with allow_masked pairs, then w, V = np.linalg.eigh(A);
 * V @ np.diag(np.maximum(w, 0)) @ V.T).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>

#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/source.h"

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

/* numpy (test_covmatrix.c): eigenvalues -9.72e-05, 2.61e-04, 6.91e-04, 9.58e-04 */
static const double NUMPY_PAIRWISE[16] = {
	0.0006371180952380951, -0.000367278, 0.00014310466666666666, 0.0002496175,
	-0.000367278, 0.00033733299999999994, -0.00010556500000000001, 0.00012823500000000004,
	0.00014310466666666666, -0.00010556500000000001, 0.0004950736666666666, -0.00022291583333333332,
	0.0002496175, 0.00012823500000000004, -0.00022291583333333332, 0.00034350699999999995 };
static const double NUMPY_PAIRWISE_PSD[16] = {
	0.0006642507286292167, -0.00033854319826522305, 0.00013030361196723095, 0.0002194150284492426,
	-0.000338543198265223, 0.0003677645773126222, -0.00011912195053561189, 9.624908770756309e-05,
	0.00013030361196723092, -0.00011912195053561188, 0.000501113146840072, -0.00020866644276345566,
	0.00021941502844924262, 9.624908770756309e-05, -0.00020866644276345568, 0.00037712663708516417 };

/* 1e-15 relative to the largest variance, as test_covmatrix.c; the repair
 * goes through an eigen decomposition: 1e-14 absolute there. */
#define COV_TOL (1e-15 * 6.4e-4)
#define PSD_TOL 1e-14

static struct universe *load(const char *text, int missing)
{
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	hc_universe_options_init(&o);
	o.missing = missing;
	o.min_coverage = 0.5;
	if (hc_universe_load_buffer(&u, "u.csv", text, strlen(text), &o, &err) != HC_OK)
		fail_msg("%s", err.message);
	return u;
}

static void test_source_series_kind_and_accessors(void **state)
{
	struct hc_source_options so;
	struct hc_source *s;
	struct moments a, b;
	struct hc_error err;
	struct universe *u = load(RETURNS, UNIVERSE_MISSING_COMPLETE);

	(void)state;
	hc_source_options_init(&so);
	so.need_matrix = 1;   /* complete series need none: none is built */
	assert_int_equal(hc_source_from_universe(&s, u, &so, &err), HC_OK);
	assert_int_equal(s->kind, HC_SOURCE_SERIES);
	assert_int_equal(hc_source_m(s), 4);
	assert_string_equal(hc_source_id(s, 2), "C");
	assert_int_equal(hc_source_find(s, "D"), 3);
	assert_int_equal(hc_source_find(s, "E"), -1);
	assert_int_equal(hc_source_periods(s), 7);
	assert_null(hc_source_matrix(s));
	assert_true(hc_source_has_series(s));
	assert_int_equal(s->annualised, 1);
	assert_close(s->periods_per_year, 12.0, 0);
	assert_int_equal(hc_moments_from_source(&a, s, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe(&b, s->u, &err), HC_OK);
	assert_memory_equal(&a, &b, sizeof a);
	hc_source_free(s);
	hc_source_free(NULL);
}

static void test_source_pairwise_matrix_refused_or_repaired(void **state)
{
	struct hc_source_options so;
	struct hc_source *s;
	struct hc_error err;
	char text[600];
	size_t i;

	(void)state;
	gsl_set_error_handler_off();
	hc_source_options_init(&so);
	/* no matrix asked for: the gaps are read through the pairwise route */
	assert_int_equal(hc_source_from_universe(&s, load(GAPS, UNIVERSE_MISSING_PAIRWISE), &so, &err), HC_OK);
	assert_int_equal(s->kind, HC_SOURCE_PAIRWISE);
	assert_null(hc_source_matrix(s));
	assert_false(hc_source_has_series(s));
	hc_source_free(s);
	/* asked for and not positive semi-definite: refused with the caller's words */
	so.need_matrix = 1;
	so.psd_refusal = "no good";
	assert_int_equal(hc_source_from_universe(&s, load(GAPS, UNIVERSE_MISSING_PAIRWISE), &so, &err), HC_EDATA);
	assert_null(s);
	assert_string_equal(err.message, "u.csv: no good");
	/* repaired */
	so.repair_psd = 1;
	assert_int_equal(hc_source_from_universe(&s, load(GAPS, UNIVERSE_MISSING_PAIRWISE), &so, &err), HC_OK);
	assert_int_equal(s->psd.repaired, 1);
	assert_int_equal(s->psd.negative, 1);
	assert_close(s->psd.min_eigenvalue, -9.72e-05, 0.005e-05);
	for (i = 0; i < 16; i++)
		assert_close(hc_source_matrix(s)[i], NUMPY_PAIRWISE_PSD[i], PSD_TOL);
	hc_source_psd_text(s, text, sizeof text);
	assert_non_null(strstr(text, "the pairwise-complete covariance matrix was not positive semi-definite"));
	assert_non_null(strstr(text, "1 negative eigenvalue set to zero"));
	hc_source_free(s);
}

static void test_source_matrix_scale_and_policy(void **state)
{
	/* NUMPY_PAIRWISE printed as a file: not positive semi-definite */
	char csv[2000];
	size_t used, i, j;
	struct covmatrix *cm;
	struct hc_source_options so;
	struct hc_source *s;
	struct moments mo;
	struct hc_error err;

	(void)state;
	gsl_set_error_handler_off();
	used = (size_t)snprintf(csv, sizeof csv, ",A,B,C,D\n");
	for (i = 0; i < 4; i++) {
		used += (size_t)snprintf(csv + used, sizeof csv - used, "%c", "ABCD"[i]);
		for (j = 0; j < 4; j++)
			used += (size_t)snprintf(csv + used, sizeof csv - used, ",%.17g", NUMPY_PAIRWISE[i * 4 + j]);
		used += (size_t)snprintf(csv + used, sizeof csv - used, "\n");
	}
	hc_source_options_init(&so);
	assert_int_equal(hc_covmatrix_load_buffer(&cm, "m.csv", csv, used, COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_OK);
	assert_int_equal(hc_source_from_covmatrix(&s, cm, "m.csv", &so, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "m.csv: not a covariance matrix: it is not positive semi-definite"));
	so.repair_psd = 1;
	so.periods_per_year = 12;
	assert_int_equal(hc_covmatrix_load_buffer(&cm, "m.csv", csv, used, COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_OK);
	assert_int_equal(hc_source_from_covmatrix(&s, cm, "m.csv", &so, &err), HC_OK);
	assert_int_equal(s->kind, HC_SOURCE_MATRIX);
	assert_int_equal(s->annualised, 1);
	assert_int_equal(hc_source_periods(s), 0);
	assert_string_equal(hc_source_id(s, 1), "B");
	assert_int_equal(hc_source_find(s, "C"), 2);
	for (i = 0; i < 16; i++)
		assert_close(hc_source_matrix(s)[i], NUMPY_PAIRWISE_PSD[i], PSD_TOL);
	assert_int_equal(hc_moments_from_source(&mo, s, &err), HC_OK);
	assert_int_equal(mo.route, MOMENTS_ROUTE_GIVEN);
	/* V = the trace of the repaired matrix (numpy above) */
	assert_close(mo.sum_var, 0.0006642507286292167 + 0.0003677645773126222 + 0.000501113146840072 +
		     0.00037712663708516417, 4 * PSD_TOL);
	hc_source_free(s);
	so.periods_per_year = -1;
	assert_int_equal(hc_covmatrix_load_buffer(&cm, "m.csv", csv, used, COVMATRIX_DEFAULT_SYMMETRY_TOL, &err), HC_OK);
	assert_int_equal(hc_source_from_covmatrix(&s, cm, "m.csv", &so, &err), HC_EUSAGE);
	assert_null(s);
}

static void test_source_view_of_series(void **state)
{
	struct universe *u = load(RETURNS, UNIVERSE_MISSING_COMPLETE);
	struct hc_source s;

	(void)state;
	hc_source_init_series(&s, u);
	assert_int_equal(s.kind, HC_SOURCE_SERIES);
	assert_ptr_equal(s.u, u);
	assert_int_equal(hc_source_m(&s), 4);
	hc_universe_free(u);
}

struct made {
	const char *text;
	struct hc_source *s;
};

static int made_source(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;
	struct hc_source_options so;

	hc_source_options_init(&so);
	so.repair_psd = 1;
	/* the universe is loaded inside the sweep: its allocations fail too */
	struct universe_options uo;
	hc_universe_options_init(&uo);
	uo.missing = UNIVERSE_MISSING_PAIRWISE;
	uo.min_coverage = 0.5;
	struct universe *u = NULL;
	int rc = hc_universe_load_buffer(&u, "u.csv", w->text, strlen(w->text), &uo, err);
	return rc ? rc : hc_source_from_universe(&w->s, u, &so, err);
}

static void made_release(void *ctx)
{
	struct made *w = ctx;

	hc_source_free(w->s);
	w->s = NULL;
}

static void made_failed(void *ctx)
{
	assert_null(((struct made *)ctx)->s);
}

static void test_source_allocation_failure(void **state)
{
	struct made w = { GAPS, NULL };
	struct heapcheck_call call = { made_source, made_release, made_failed, &w };

	(void)state;
	gsl_set_error_handler_off();
	assert_true(heapcheck_sweep(&call) > 3);
	w.text = RETURNS;
	assert_true(heapcheck_sweep(&call) > 1);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_source_series_kind_and_accessors),
		cmocka_unit_test(test_source_pairwise_matrix_refused_or_repaired),
		cmocka_unit_test(test_source_matrix_scale_and_policy),
		cmocka_unit_test(test_source_view_of_series),
		cmocka_unit_test(test_source_allocation_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
