/*
 * Unit tests for marketvalues.c: market values by id, put in the
 * universe's order.  Outside reference: the file's own values, matched by
 * id by hand in the comments; each refusal's message and status.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "heapcheck.h"
#include "holdcount/marketvalues.h"
#include "holdcount/memory.h"

static char *ids[] = { "KV02", "KV07", "KV03" };

static int load(double **v, const char *text, struct hc_error *err)
{
	hc_error_clear(err);
	return hc_marketvalues_load_buffer(v, "mv.csv", text, strlen(text), ids, 3, err);
}

static void test_marketvalues_by_id(void **state)
{
	double *v = NULL;
	struct hc_error err;

	(void)state;
	/* Columns found by name (any case, blanks around), others ignored; an
	 * id the universe lacks (KV99) ignored; the universe's order kept:
	 * KV02 -> 812.25, KV07 -> 93.5, KV03 -> 4410. */
	assert_int_equal(load(&v, "sector, Market_Value ,ID\nTidal,4410,KV03\nSalt,17,KV99\nKelp,812.25,KV02\n"
			      "Salt,93.5,KV07\n", &err), HC_OK);
	assert_true(v[0] == 812.25 && v[1] == 93.5 && v[2] == 4410.0);
	hc_free(v);
}

static void expect(const char *text, const char *message)
{
	double *v = (double *)1;
	struct hc_error err;

	assert_int_equal(load(&v, text, &err), HC_EDATA);
	assert_null(v);
	if (!strstr(err.message, message))
		fail_msg("message '%s' lacks '%s'", err.message, message);
}

static void test_marketvalues_refusals(void **state)
{
	(void)state;
	expect("id,value\nKV02,1\n", "mv.csv:1: the header has no 'market_value' column");
	expect("code,market_value\nKV02,1\n", "mv.csv:1: the header has no 'id' column");
	expect("id,market_value\nKV02,1\nKV07,0\nKV03,1\n", "mv.csv:3:2: expected a market value above 0, found '0'");
	expect("id,market_value\nKV02,1\nKV07,-4\nKV03,1\n", "found '-4'");
	expect("id,market_value\nKV02,1\nKV07,5%\nKV03,1\n", "found '5%'");
	expect("id,market_value\nKV02,1\nKV07,NA\nKV03,1\n", "found 'NA'");
	expect("id,market_value\nKV02,1\nKV07\nKV03,1\n", "mv.csv:3: no market value on this row");
	expect("id,market_value\nKV02,1\nKV07,2\nKV02,3\nKV03,1\n", "mv.csv:4: id 'KV02' again (first on line 2)");
	expect("id,market_value\nKV02,1\nKV03,1\n", "mv.csv: no market value for 'KV07', a security of the universe");
	expect("id,market_value,id\nKV02,1,KV02\n", "mv.csv:1:3: a second 'id' column");
}

struct sweep {
	double *v;
};

static int sweep_run(void *ctx, struct hc_error *err)
{
	const char *t = "id,market_value\nKV03,4410\nKV02,812.25\nKV07,93.5\nKV11,8\n";

	return hc_marketvalues_load_buffer(&((struct sweep *)ctx)->v, "mv.csv", t, strlen(t), ids, 3, err);
}

static void sweep_release(void *ctx)
{
	hc_free(((struct sweep *)ctx)->v);
	((struct sweep *)ctx)->v = NULL;
}

static void sweep_failed(void *ctx)
{
	assert_null(((struct sweep *)ctx)->v);
}

static void test_marketvalues_allocation_failure(void **state)
{
	struct sweep w = { NULL };
	struct heapcheck_call call = { sweep_run, sweep_release, sweep_failed, &w };

	(void)state;
	assert_true(heapcheck_sweep(&call) > 3);
}

int main(int argc, char **argv)
{
	(void)argc;
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_marketvalues_by_id),
		cmocka_unit_test(test_marketvalues_refusals),
		cmocka_unit_test(test_marketvalues_allocation_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
