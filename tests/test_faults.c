/*
 * test_faults.c - allocation-failure sweeps over the loaders and the rules on
 * the measures (measrules.h: the staged run and its bootstrap).
 *
 * For each loader, the k-th allocation is made to fail for k = 0, 1, 2, ...
 * until a run succeeds (the idea behind SQLite's fault simulation: every
 * allocation site is reached once as a failure).  Each failed run must
 * return HC_ENOMEM with a message and leave *out NULL; whatever it built
 * must be freed, which the sanitizer build (LeakSanitizer) and the memcheck
 * label (valgrind) check on this very executable.  The run that finally
 * succeeds must give the same result as a run without faults, and that
 * result is checked against the input text itself (the numbers written in
 * the CSV below, parsed by hand here).
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>

#include "holdcount/csvread.h"
#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/holdings.h"
#include "holdcount/measrules.h"
#include "holdcount/memory.h"
#include "holdcount/universe.h"

/* No loader here makes more than a few hundred allocations on these inputs;
 * a sweep that has not succeeded by then is looping. */
#define SWEEP_LIMIT 100000L

/* An invented universe: 3 securities, 4 months, one quoted id, CRLF. */
static const char universe_csv[] =
	"date,LIR901,\"LIR902\",LIR903\r\n"
	"2021-01-29,0.0123,-0.0045,0.0310\r\n"
	"2021-02-26,0.0071,0.0213,-0.0152\r\n"
	"2021-03-31,-0.0264,0.0118,0.0047\r\n"
	"2021-04-30,0.0182,-0.0093,0.0221\r\n";

/* Security-major, as universe.h stores them: the cells above by column. */
static const double universe_x[12] = {
	0.0123, 0.0071, -0.0264, 0.0182,
	-0.0045, 0.0213, 0.0118, -0.0093,
	0.0310, -0.0152, 0.0047, 0.0221
};

static void expect_nomem(int rc, const void *out, const struct hc_error *err, long k)
{
	if (rc != HC_ENOMEM)
		fail_msg("allocation %ld failing gave status %d (%s), expected HC_ENOMEM",
			 k, rc, err->message);
	assert_null(out);
	assert_int_equal(err->code, HC_ENOMEM);
	assert_true(err->message[0] != '\0');
}

static void check_universe(const struct universe *u)
{
	size_t i;

	assert_int_equal(u->m, 3);
	assert_int_equal(u->t, 4);
	assert_string_equal(u->ids[0], "LIR901");
	assert_string_equal(u->ids[1], "LIR902");
	assert_string_equal(u->ids[2], "LIR903");
	/* The cells are parsed with strtod-like correct rounding: exact equality
	 * with the same literals compiled by the C compiler. */
	for (i = 0; i < 12; i++)
		assert_true(u->x[i] == universe_x[i]);
	/* 2021-01-29 is day 18656 since 1970-01-01 (Python: date(2021,1,29) -
	 * date(1970,1,1)). */
	assert_int_equal(u->dates[0], 18656);
}

static void test_faults_universe_load_buffer(void **state)
{
	struct universe_options opt;
	struct universe *u;
	struct hc_error err;
	long k;
	int rc;

	hc_universe_options_init(&opt);
	for (k = 0; k < SWEEP_LIMIT; k++) {
		u = NULL;
		hc_error_clear(&err);
		hc_alloc_fail_after(k);
		rc = hc_universe_load_buffer(&u, "faults.csv", universe_csv, sizeof universe_csv - 1, &opt, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		expect_nomem(rc, u, &err, k);
	}
	assert_true(k > 0); /* loading allocates, so the sweep did test failures */
	assert_true(k < SWEEP_LIMIT);
	check_universe(u);
	hc_universe_free(u);
}

static int count_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	(*(size_t *)ctx)++;
	return HC_OK;
}

static void test_faults_csvread_buffer(void **state)
{
	struct csvread_handler h = { count_field, NULL, NULL };
	struct hc_error err;
	size_t fields;
	long k;
	int rc;

	h.ctx = &fields;
	for (k = 0; k < SWEEP_LIMIT; k++) {
		fields = 0;
		hc_error_clear(&err);
		hc_alloc_fail_after(k);
		rc = hc_csvread_buffer("faults.csv", universe_csv, sizeof universe_csv - 1, NULL, &h, NULL, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		expect_nomem(rc, NULL, &err, k);
	}
	assert_true(k < SWEEP_LIMIT);
	assert_int_equal(fields, 20); /* 5 records of 4 fields in the text above */
}

static const char holdings_csv[] =
	"fund,id,weight\n"
	"Lirrand Balanced Fund D,LIR901,0.35\n"
	"Lirrand Balanced Fund D,LIR902,0.40\n"
	"Lirrand Value Fund E,LIR903,0.60\n"
	"Lirrand Balanced Fund D,LIR903,0.25\n"
	"Lirrand Value Fund E,LIR901,0.40\n";

static void test_faults_holdings_load_buffer(void **state)
{
	struct holdings_options opt;
	struct holdings *h;
	struct hc_error err;
	long k;
	int rc;

	hc_holdings_options_init(&opt);
	for (k = 0; k < SWEEP_LIMIT; k++) {
		h = NULL;
		hc_error_clear(&err);
		hc_alloc_fail_after(k);
		rc = hc_holdings_load_buffer(&h, "funds.csv", holdings_csv, sizeof holdings_csv - 1, &opt, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		expect_nomem(rc, h, &err, k);
	}
	assert_true(k > 0 && k < SWEEP_LIMIT);
	assert_int_equal(h->nfunds, 2);
	assert_string_equal(h->funds[0].name, "Lirrand Balanced Fund D");
	assert_int_equal(h->funds[0].n, 3);
	assert_int_equal(h->funds[1].n, 2);
	/* The weights in the text sum to exactly 1 per fund (0.35+0.40+0.25,
	 * 0.60+0.40), so normalising leaves them within rounding: 1e-15. */
	assert_float_equal(h->funds[1].h[0].weight, 0.60, 1e-15);
	hc_holdings_free(h);
}

static const char labels_csv[] =
	"id,sector\nLIR903,Materials\nLIR901,Utilities\nLIR902,\"Consumer, Staples\"\n";

static void test_faults_labels_load_buffer(void **state)
{
	struct holdings_labels *l;
	struct hc_error err;
	long k;
	int rc;

	for (k = 0; k < SWEEP_LIMIT; k++) {
		l = NULL;
		hc_error_clear(&err);
		hc_alloc_fail_after(k);
		rc = hc_holdings_labels_load_buffer(&l, "sectors.csv", labels_csv, sizeof labels_csv - 1, 0, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		expect_nomem(rc, l, &err, k);
	}
	assert_true(k > 0 && k < SWEEP_LIMIT);
	assert_int_equal(l->n, 3);
	assert_string_equal(hc_holdings_labels_find(l, "LIR902"), "Consumer, Staples");
	hc_holdings_labels_free(l);
}

static void test_faults_curve_parse_sizes(void **state)
{
	struct hc_error err;
	size_t *sizes, n;
	long k;
	int rc;

	for (k = 0; k < SWEEP_LIMIT; k++) {
		sizes = NULL;
		hc_error_clear(&err);
		hc_alloc_fail_after(k);
		rc = hc_curve_parse_sizes("40,1-3,12,3", 500, &sizes, &n, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		expect_nomem(rc, sizes, &err, k);
	}
	assert_true(k < SWEEP_LIMIT);
	/* "40,1-3,12,3" sorted without duplicates, by hand: 1 2 3 12 40. */
	assert_int_equal(n, 5);
	assert_int_equal(sizes[0], 1);
	assert_int_equal(sizes[2], 3);
	assert_int_equal(sizes[3], 12);
	assert_int_equal(sizes[4], 40);
	hc_free(sizes);
}


/* The rules on the measures (measrules.h) on the universe above, and their
 * bootstrap: every allocation failing in turn gives HC_ENOMEM and nothing
 * filled; the run that succeeds gives the fault-free counts. */
static void test_faults_measrules_run_and_bootstrap(void **state)
{
	struct universe_options uo;
	struct universe *u = NULL;
	struct hc_source src;
	struct rules_config cfg;
	struct sampler_options so;
	struct bootstrap_options bo;
	struct rule_result want[4], got[4];
	struct hc_error err;
	size_t nwant, ngot, k2;
	long k;
	int rc;

	(void)state;
	hc_universe_options_init(&uo);
	assert_int_equal(hc_universe_load_buffer(&u, "faults.csv", universe_csv, sizeof universe_csv - 1, &uo, &err),
			 HC_OK);
	hc_source_init_series(&src, u);
	hc_rules_config_init(&cfg);
	cfg.selected = RULES_MEASURE_MASK;
	hc_sampler_options_init(&so);
	so.paths = 40;
	so.seed = 3;
	so.threads = 1;
	assert_int_equal(hc_measrules_run(&cfg, &src, &so, want, &nwant, NULL, &err), HC_OK);
	assert_int_equal(nwant, 4);
	for (k = 0; k < SWEEP_LIMIT; k++) {
		hc_error_clear(&err);
		ngot = 99;
		hc_alloc_fail_after(k);
		rc = hc_measrules_run(&cfg, &src, &so, got, &ngot, NULL, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
		assert_int_equal(ngot, 0);
		assert_true(err.message[0] != '\0');
	}
	assert_true(k > 0 && k < SWEEP_LIMIT);
	assert_int_equal(ngot, nwant);
	for (k2 = 0; k2 < nwant; k2++)
		assert_true(got[k2].met == want[k2].met && got[k2].count == want[k2].count);
	hc_bootstrap_options_init(&bo);
	bo.replicates = 2;
	bo.block_length = 2;
	bo.seed = 5;
	for (k = 0; k < SWEEP_LIMIT; k++) {
		memcpy(got, want, sizeof want);
		hc_error_clear(&err);
		hc_alloc_fail_after(k);
		rc = hc_measrules_bootstrap(&cfg, &src, &bo, &so, got, nwant, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
	}
	assert_true(k > 0 && k < SWEEP_LIMIT);
	for (k2 = 0; k2 < nwant; k2++)
		if (want[k2].defined)
			assert_int_equal(got[k2].replicates, 2);
	hc_universe_free(u);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_faults_csvread_buffer),
		cmocka_unit_test(test_faults_universe_load_buffer),
		cmocka_unit_test(test_faults_holdings_load_buffer),
		cmocka_unit_test(test_faults_labels_load_buffer),
		cmocka_unit_test(test_faults_curve_parse_sizes),
		cmocka_unit_test(test_faults_measrules_run_and_bootstrap),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
