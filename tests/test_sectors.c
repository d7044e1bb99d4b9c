/*
 * Unit tests for sectors: map loading, its errors, strata of a universe.
 *
 * The expected strata are worked out by hand from the invented map and
 * universe below (every security looked up, labels numbered in the map's
 * order of first appearance, unmapped last) - an exact enumeration of a
 * case small enough to check on paper.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/memory.h"
#include "holdcount/sectors.h"
#include "holdcount/universe.h"

#include "check.h"
#include "heapcheck.h"

static const char MAP[] =
	"\xEF\xBB\xBF" "Label;weight;ID\r\n"
	"Harbour works;1;KV01\r\n"
	"Orchards;2;KV02\r\n"
	"\"Salt; brine\";3;KV03\r\n"
	"Orchards;4;KV04\r\n"
	"Harbour works;5;KV05\r\n"
	"Glassmakers;6;KV06\r\n";

static const char UNIVERSE[] =
	"date,KV04,QX9,KV01,KV03,KV05,ZZ1\n"
	"2021-01-31,0.0213,-0.0117,0.0342,0.0042,0.011,0.0071\n"
	"2021-02-28,-0.0385,0.0266,0.0051,-0.0093,-0.004,0.0133\n"
	"2021-03-31,0.0172,0.0093,-0.0228,0.0311,0.0075,-0.0052\n";

static void test_sectors_load_and_find(void **state)
{
	struct sectors *s;
	struct hc_error err;

	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", MAP, strlen(MAP), NULL, NULL, &err), HC_OK);
	assert_int_equal(s->n, 6);
	assert_int_equal(s->nlabels, 4);
	assert_string_equal(s->labels[0], "Harbour works");
	assert_string_equal(s->labels[1], "Orchards");
	assert_string_equal(s->labels[2], "Salt; brine");
	assert_string_equal(s->labels[3], "Glassmakers");
	assert_string_equal(s->ids[2], "KV03");
	assert_int_equal(hc_sectors_find(s, "KV05"), 0);
	assert_int_equal(hc_sectors_find(s, "KV04"), 1);
	assert_int_equal(hc_sectors_find(s, "KV06"), 3);
	assert_int_equal(hc_sectors_find(s, "kv06"), -1);
	assert_int_equal(hc_sectors_find(s, "KV07"), -1);
	hc_sectors_free(s);
	hc_sectors_free(NULL);
}

static void test_sectors_column_names(void **state)
{
	static const char text[] = "code,group\nA1,Mills\nB2,Ferries\n";
	struct sectors *s;
	struct hc_error err;

	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", text, strlen(text), "CODE", "Group", &err), HC_OK);
	assert_int_equal(hc_sectors_find(s, "B2"), 1);
	hc_sectors_free(s);
	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", text, strlen(text), NULL, NULL, &err), HC_EDATA);
	assert_null(s);
	assert_string_equal(err.message,
		"map.csv:1: no column named 'id' in the header; expected it to hold the security ids");
	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", text, strlen(text), "code", NULL, &err), HC_EDATA);
	assert_string_equal(err.message,
		"map.csv:1: no column named 'label' in the header; expected it to hold the sector labels");
	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", text, strlen(text), "code", "Code", &err), HC_EUSAGE);
}

static void expect_error(const char *text, const char *prefix)
{
	struct sectors *s = (struct sectors *)1;
	struct hc_error err;
	int rc = hc_sectors_load_buffer(&s, "map.csv", text, strlen(text), NULL, NULL, &err);

	check_status_prefix(rc, HC_EDATA, err.message, prefix);
	assert_null(s);
}

static void test_sectors_errors(void **state)
{
	expect_error("", "map.csv: empty file");
	expect_error("id,label\n", "map.csv: no rows after the header; expected one row per security");
	expect_error("id,label\nA1,Mills\nB2,Ferries\nA1,Ferries\n",
		     "map.csv:4:1: duplicate id 'A1' (first on line 2); expected each id once");
	expect_error("id,label\nA1,Mills\nB2,Ferries\na1,Ferries\n",
		     "map.csv:4:1: id 'a1' differs only in case or surrounding spaces from 'A1' on line 2");
	expect_error("id,label\n,Mills\n", "map.csv:2:1: empty security id");
	expect_error("id,label\nA1,\n", "map.csv:2:2: empty sector label; expected a label");
	expect_error("id,label\nA1,\"\xC3\x28\"\n", "map.csv:2:2: sector label is not valid UTF-8");
	expect_error("id,label\nA1,(unmapped)\n", "map.csv:2:2: the label '(unmapped)' is reserved");
	expect_error("id,label\nA1\n", "map.csv:2:1: row has 1 fields; expected 2 as in the header");
	expect_error("id,label\nA1,Mills,x\n", "map.csv:2:3: row has more fields than the header's 2");
}

static struct universe *universe(void)
{
	struct universe *u;
	struct hc_error err;

	if (hc_universe_load_buffer(&u, "u.csv", UNIVERSE, strlen(UNIVERSE), NULL, &err) != HC_OK)
		fail_msg("%s", err.message);
	return u;
}

static void test_sectors_strata(void **state)
{
	struct universe *u = universe();
	struct sectors *s;
	struct hc_error err;
	size_t *st, nlabels, unmapped;
	char **labels;
	/* KV04 Orchards, QX9 unmapped, KV01 Harbour, KV03 Salt, KV05 Harbour,
	 * ZZ1 unmapped; Glassmakers unused: labels Harbour, Orchards, Salt, (unmapped) */
	static const size_t want[6] = { 1, 3, 0, 2, 0, 3 };
	size_t i;

	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", MAP, strlen(MAP), NULL, NULL, &err), HC_OK);
	assert_int_equal(hc_sectors_strata(s, u, &st, &labels, &nlabels, &unmapped, &err), HC_OK);
	assert_int_equal(nlabels, 4);
	assert_int_equal(unmapped, 2);
	assert_string_equal(labels[0], "Harbour works");
	assert_string_equal(labels[1], "Orchards");
	assert_string_equal(labels[2], "Salt; brine");
	assert_string_equal(labels[3], SECTORS_UNMAPPED_LABEL);
	for (i = 0; i < 6; i++)
		assert_int_equal(st[i], want[i]);
	hc_sectors_strata_free(st, labels, nlabels);
	hc_sectors_free(s);
	hc_universe_free(u);
}

static void test_sectors_strata_all_mapped(void **state)
{
	static const char map[] = "id,label\nZZ1,Mills\nQX9,Mills\nKV01,Ferries\nKV03,Ferries\nKV04,Mills\nKV05,Kilns\n";
	struct universe *u = universe();
	struct sectors *s;
	struct hc_error err;
	size_t *st, nlabels, unmapped;
	char **labels;
	static const size_t want[6] = { 0, 0, 1, 1, 2, 0 };
	size_t i;

	assert_int_equal(hc_sectors_load_buffer(&s, "map.csv", map, strlen(map), NULL, NULL, &err), HC_OK);
	assert_int_equal(hc_sectors_strata(s, u, &st, &labels, &nlabels, &unmapped, &err), HC_OK);
	assert_int_equal(nlabels, 3);
	assert_int_equal(unmapped, 0);
	assert_string_equal(labels[2], "Kilns");
	for (i = 0; i < 6; i++)
		assert_int_equal(st[i], want[i]);
	hc_sectors_strata_free(st, labels, nlabels);
	hc_sectors_free(s);
	hc_universe_free(u);
}

static void test_sectors_file(void **state)
{
	char path[4096];
	struct sectors *s;
	struct hc_error err;

	check_write_temp(path, sizeof path, "sectors.csv", MAP);
	assert_int_equal(hc_sectors_load(&s, path, NULL, NULL, &err), HC_OK);
	assert_int_equal(s->n, 6);
	hc_sectors_free(s);
	assert_int_equal(hc_sectors_load(&s, "/nonexistent/map.csv", NULL, NULL, &err), HC_EIO);
	assert_null(s);
}

/* Allocation-failure sweeps (heapcheck.h): HC_ENOMEM each time and
 * nothing leaked.  A sweep's context: the map loaded, or the strata of
 * universe u under map m. */
struct made {
	struct sectors *s;
	const struct sectors *m;
	const struct universe *u;
	size_t *st, nlabels, unmapped;
	char **labels;
};

static int made_map(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	return hc_sectors_load_buffer(&w->s, "map.csv", MAP, strlen(MAP), NULL, NULL, err);
}

static void made_map_release(void *ctx)
{
	hc_sectors_free(((struct made *)ctx)->s);
}

static void made_map_none(void *ctx)
{
	assert_null(((struct made *)ctx)->s);
}

static int made_strata(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	return hc_sectors_strata(w->m, w->u, &w->st, &w->labels, &w->nlabels, &w->unmapped, err);
}

static void made_strata_release(void *ctx)
{
	struct made *w = ctx;

	hc_sectors_strata_free(w->st, w->labels, w->nlabels);
}

static void made_strata_none(void *ctx)
{
	struct made *w = ctx;

	assert_null(w->st);
	assert_null(w->labels);
}

static void test_sectors_allocation_failure(void **state)
{
	struct universe *u = universe();
	struct sectors *m;
	struct hc_error err;
	struct made w = { NULL, NULL, u, NULL, 0, 0, NULL };
	struct heapcheck_call map = { made_map, made_map_release, made_map_none, &w };
	struct heapcheck_call strata = { made_strata, made_strata_release, made_strata_none, &w };

	assert_true(heapcheck_sweep(&map) > 10);
	assert_int_equal(hc_sectors_load_buffer(&m, "map.csv", MAP, strlen(MAP), NULL, NULL, &err), HC_OK);
	w.m = m;
	/* 3 arrays, 3 labels, the unmapped label */
	assert_int_equal(heapcheck_sweep(&strata), 7);
	hc_sectors_free(m);
	hc_universe_free(u);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_sectors_load_and_find),
		cmocka_unit_test(test_sectors_column_names),
		cmocka_unit_test(test_sectors_errors),
		cmocka_unit_test(test_sectors_strata),
		cmocka_unit_test(test_sectors_strata_all_mapped),
		cmocka_unit_test(test_sectors_file),
		cmocka_unit_test(test_sectors_allocation_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
