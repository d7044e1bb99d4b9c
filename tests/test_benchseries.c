/*
 * Unit tests for benchseries.c: a benchmark's series read and aligned on a
 * universe's dates.  Outside reference: the returns of a price series by
 * the common-practice definition p[k]/p[k-1] - 1 (and log(p[k]/p[k-1]))
 * worked out by hand in the comments; each refusal's message and status.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "heapcheck.h"
#include "holdcount/benchseries.h"
#include "holdcount/memory.h"
#include "holdcount/universe.h"

/* The universe's periods: three month ends of 2011. */
static int32_t dates[3];

static void set_dates(void)
{
	assert_int_equal(hc_universe_parse_date("2011-02-28", 10, &dates[0]), 0);
	assert_int_equal(hc_universe_parse_date("2011-03-31", 10, &dates[1]), 0);
	assert_int_equal(hc_universe_parse_date("2011-04-30", 10, &dates[2]), 0);
}

static int load(struct benchseries **b, const char *text, int values, int percent, struct hc_error *err)
{
	set_dates();
	hc_error_clear(err);
	return hc_benchseries_load_buffer(b, "bench.csv", text, strlen(text), dates, 3, values, percent, err);
}

static void test_benchseries_returns_aligned(void **state)
{
	struct benchseries *b = NULL;
	struct hc_error err;

	(void)state;
	/* Rows before and after the sample are ignored; percents per cell. */
	assert_int_equal(load(&b, "date,Bill Index\n2011-01-31,0.9\n2011-02-28,0.0031\n2011-03-31,0.27%\n"
			      "2011-04-30,-0.0012\n2011-05-31,NA\n", BENCHSERIES_RETURNS, 0, &err), HC_OK);
	assert_string_equal(b->name, "Bill Index");
	assert_int_equal(b->t, 3);
	assert_true(b->r[0] == 0.0031 && fabs(b->r[1] - 0.0027) < 1e-17 && b->r[2] == -0.0012);
	hc_benchseries_free(b);
	/* --percent: every cell a percent. */
	assert_int_equal(load(&b, "date,B\n2011-02-28,0.31\n2011-03-31,0.27\n2011-04-30,-1.2\n",
			      BENCHSERIES_RETURNS, 1, &err), HC_OK);
	assert_true(fabs(b->r[0] - 0.0031) < 1e-17 && fabs(b->r[2] + 0.012) < 1e-17);
	hc_benchseries_free(b);
}

static void test_benchseries_prices(void **state)
{
	struct benchseries *b = NULL;
	struct hc_error err;
	const char *px = "date,Bond Index\n2011-01-31,102.4\n2011-02-28,103.1\n2011-03-31,101.9\n2011-04-30,104.0\n";

	(void)state;
	/* 103.1/102.4 - 1 = 0.0068359375; 101.9/103.1 - 1 = -0.01163918...;
	 * 104.0/101.9 - 1 = 0.02060843... */
	assert_int_equal(load(&b, px, BENCHSERIES_PRICES, 0, &err), HC_OK);
	assert_true(fabs(b->r[0] - 0.0068359375) < 1e-15);
	assert_true(fabs(b->r[1] - (101.9 / 103.1 - 1)) < 1e-15);
	assert_true(fabs(b->r[2] - (104.0 / 101.9 - 1)) < 1e-15);
	hc_benchseries_free(b);
	assert_int_equal(load(&b, px, BENCHSERIES_PRICES_LOG, 0, &err), HC_OK);
	assert_true(fabs(b->r[2] - log(104.0 / 101.9)) < 1e-15);
	hc_benchseries_free(b);
	/* The first period's price with no earlier one has no return. */
	assert_int_equal(load(&b, "date,B\n2011-02-28,103.1\n2011-03-31,101.9\n2011-04-30,104.0\n",
			      BENCHSERIES_PRICES, 0, &err), HC_EDATA);
	assert_null(b);
	assert_non_null(strstr(err.message, "bench.csv:2:2: no return for 2011-02-28, a period of the universe"));
	assert_int_equal(load(&b, "date,B\n2011-01-31,100\n2011-02-28,0\n2011-03-31,1\n2011-04-30,1\n",
			      BENCHSERIES_PRICES, 0, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "bench.csv:3:2: a price of 0; expected prices above 0"));
	assert_int_equal(load(&b, px, BENCHSERIES_PRICES, 1, &err), HC_EUSAGE);
}

static void expect(const char *text, int status, const char *message)
{
	struct benchseries *b = (struct benchseries *)1;
	struct hc_error err;

	assert_int_equal(load(&b, text, BENCHSERIES_RETURNS, 0, &err), status);
	assert_null(b);
	if (!strstr(err.message, message))
		fail_msg("message '%s' lacks '%s'", err.message, message);
}

static void test_benchseries_refusals(void **state)
{
	(void)state;
	expect("date,B\n2011-02-28,0.1\n2011-03-15,0.2\n2011-03-31,0.1\n2011-04-30,0.1\n", HC_EDATA,
	       "bench.csv:3:1: date 2011-03-15 falls between two periods of the universe");
	expect("date,B\n2011-02-28,0.1\n2011-04-30,0.1\n", HC_EDATA,
	       "bench.csv: no row dated 2011-03-31, a period of the universe");
	expect("date,B\n2011-02-28,0.1\n2011-03-31,\n2011-04-30,0.1\n", HC_EDATA,
	       "bench.csv:3:2: no value for 2011-03-31, a period of the universe");
	expect("date,B\n2011-03-31,0.1\n2011-02-28,0.1\n", HC_EDATA,
	       "bench.csv:3:1: date 2011-02-28 is not after 2011-03-31 on line 2");
	expect("date,B,C\n", HC_EDATA, "bench.csv:1:3: a third column");
	expect("date\n2011-02-28\n", HC_EDATA, "bench.csv:1: 1 field; expected two");
	expect("date,B\n2011-02-30,0.1\n", HC_EDATA, "bench.csv:2:1: expected a date");
	expect("date,B\n2011-02-28,abc\n", HC_EDATA, "bench.csv:2:2: expected a number or a missing marker, found 'abc'");
	expect("date,B\n2011-02-28,2e6\n2011-03-31,0\n2011-04-30,0\n", HC_EDATA, "bench.csv:2:2: a return of 2e+06");
	expect("date,B\n", HC_EDATA, "bench.csv: no data rows after the header");
}

struct sweep {
	struct benchseries *b;
};

static int sweep_run(void *ctx, struct hc_error *err)
{
	struct sweep *w = ctx;
	const char *px = "date,B\n2011-01-31,102.4\n2011-02-28,103.1\n2011-03-31,101.9\n2011-04-30,104.0\n";

	return hc_benchseries_load_buffer(&w->b, "px.csv", px, strlen(px), dates, 3, BENCHSERIES_PRICES, 0, err);
}

static void sweep_release(void *ctx)
{
	struct sweep *w = ctx;

	hc_benchseries_free(w->b);
	w->b = NULL;
}

static void sweep_failed(void *ctx)
{
	assert_null(((struct sweep *)ctx)->b);
}

static void test_benchseries_allocation_failure(void **state)
{
	struct sweep w = { NULL };
	struct heapcheck_call call = { sweep_run, sweep_release, sweep_failed, &w };

	(void)state;
	set_dates();
	assert_true(heapcheck_sweep(&call) > 3);
}

int main(int argc, char **argv)
{
	(void)argc;
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_benchseries_returns_aligned),
		cmocka_unit_test(test_benchseries_prices),
		cmocka_unit_test(test_benchseries_refusals),
		cmocka_unit_test(test_benchseries_allocation_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
