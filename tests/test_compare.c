/*
 * Unit tests for the comparison of two report summaries (compare.h).
 *
 * The summaries are written here by hand, in summary.json's shape, with
 * figures chosen so that every expected row can be worked out on paper:
 * a fund that passes last quarter and fails now (its verdict must be the
 * first row), a rule whose count moves from 21 to 24, a security that
 * leaves the kept list and one that joins it, and a figure one summary
 * lacks ("absent").  Allocation failure at every step must return
 * HC_ENOMEM with nothing half-built (the fault-injecting allocator,
 * memory.h).
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>

#include "holdcount/compare.h"
#include "holdcount/memory.h"

static const char old_json[] =
	"{\"holdcount_version\": \"0.2.0\","
	" \"universe\": {\"first_date\": \"2011-03-31\", \"last_date\": \"2020-12-31\", \"periods\": 118,"
	"  \"securities\": 3, \"floor_sd\": 0.1385, \"average_correlation\": 0.2385,"
	"  \"kept\": [{\"id\": \"LIR901\"}, {\"id\": \"LIR902\"}, {\"id\": \"LIR903\"}]},"
	" \"enough\": {\"rules\": [{\"rule\": \"near-floor\", \"count\": 21, \"count_p05\": 18, \"count_p95\": 25, \"met\": true},"
	"  {\"rule\": \"marginal\", \"count\": 17, \"count_p05\": 16, \"count_p95\": 17, \"met\": true}]},"
	" \"audit\": {\"failed_funds\": 0, \"funds\": ["
	"  {\"fund\": \"Alder Value\", \"passed\": true, \"holdings\": 26, \"sd\": 0.1593},"
	"  {\"fund\": \"Birch Core\", \"passed\": true, \"holdings\": 64, \"sd\": 0.1606}]}}";

static const char new_json[] =
	"{\"holdcount_version\": \"0.2.0\","
	" \"universe\": {\"first_date\": \"2011-03-31\", \"last_date\": \"2021-12-31\", \"periods\": 130,"
	"  \"securities\": 3, \"floor_sd\": 0.1262, \"average_correlation\": 0.1786,"
	"  \"kept\": [{\"id\": \"LIR901\"}, {\"id\": \"LIR903\"}, {\"id\": \"LIR904\"}]},"
	" \"enough\": {\"rules\": [{\"rule\": \"near-floor\", \"count\": 24, \"count_p05\": 20, \"count_p95\": 29, \"met\": true},"
	"  {\"rule\": \"marginal\", \"count\": 17, \"count_p05\": 16, \"count_p95\": 18, \"met\": true}]},"
	" \"audit\": {\"failed_funds\": 1, \"funds\": ["
	"  {\"fund\": \"Alder Value\", \"passed\": true, \"holdings\": 26, \"sd\": 0.1611},"
	"  {\"fund\": \"Birch Core\", \"passed\": false, \"holdings\": 58, \"sd\": 0.1633,"
	"   \"missing_weight\": 0.0125}]}}";

static const struct report_field *field(const struct report *r, const char *key)
{
	size_t i;

	for (i = 0; i < r->nfields; i++)
		if (strcmp(r->fields[i].key, key) == 0)
			return &r->fields[i];
	fail_msg("no field '%s'", key);
	return NULL;
}

static const struct report_value *at(const struct report_table *t, size_t row, size_t col)
{
	return &t->cells[row * t->ncols + col];
}

/* The row of "changes" whose item is item; fails when there is none. */
static size_t row_of(const struct report_table *t, const char *item)
{
	size_t i;

	for (i = 0; i < t->nrows; i++)
		if (at(t, i, 1)->kind == REPORT_TEXT && strcmp(at(t, i, 1)->text, item) == 0)
			return i;
	fail_msg("no row '%s'", item);
	return 0;
}

static void test_compare_verdict_first(void **state)
{
	struct report *r = NULL;
	struct hc_error err;
	const struct report_table *t;

	(void)state;
	assert_int_equal(hc_compare_summaries(&r, old_json, "q3", new_json, "q4", &err), HC_OK);
	t = hc_report_find_table(r, "changes");
	assert_non_null(t);
	assert_int_equal(t->ncols, 6);
	/* Birch Core's verdict changed: first row, although Alder comes first in both */
	assert_string_equal(at(t, 0, 0)->text, "verdict");
	assert_string_equal(at(t, 0, 1)->text, "Birch Core passes the policy");
	assert_int_equal(at(t, 0, 2)->kind, REPORT_BOOL);
	assert_int_equal(at(t, 0, 2)->integer, 1);
	assert_int_equal(at(t, 0, 3)->integer, 0);
	assert_int_equal(at(t, 0, 5)->integer, 1);
	assert_string_equal(at(t, 1, 1)->text, "Alder Value passes the policy");
	assert_int_equal(at(t, 1, 5)->integer, 0);
	assert_int_equal(field(r, "verdict_changes")->value.integer, 1);
	assert_string_equal(field(r, "headline")->value.text, "1 fund changed policy verdict: see the first rows");
	assert_string_equal(field(r, "old_period")->value.text, "2011-03-31 to 2020-12-31");
	assert_string_equal(field(r, "new_period")->value.text, "2011-03-31 to 2021-12-31");
	hc_report_free(r);
}

static void test_compare_figures(void **state)
{
	struct report *r = NULL;
	struct hc_error err;
	const struct report_table *t, *s;
	size_t i;

	(void)state;
	assert_int_equal(hc_compare_summaries(&r, old_json, "q3", new_json, "q4", &err), HC_OK);
	t = hc_report_find_table(r, "changes");
	/* the recommendation is the near-floor rule: 21 -> 24, change 3 */
	i = row_of(t, "count");
	assert_string_equal(at(t, i, 0)->text, "recommendation");
	assert_int_equal(at(t, i, 2)->integer, 21);
	assert_int_equal(at(t, i, 3)->integer, 24);
	assert_true(at(t, i, 4)->real == 3.0);
	/* periods 118 -> 130; the floor 0.1385 -> 0.1262, change exactly new - old */
	i = row_of(t, "periods");
	assert_true(at(t, i, 4)->real == 12.0);
	i = row_of(t, "floor sd a year");
	assert_true(at(t, i, 4)->real == 0.1262 - 0.1385);
	assert_int_equal(at(t, i, 4)->style, REPORT_STYLE_PERCENT);
	/* an unchanged rule figure: marginal's count 17 -> 17 */
	i = row_of(t, "marginal: count");
	assert_int_equal(at(t, i, 5)->integer, 0);
	i = row_of(t, "marginal: interval 95%");
	assert_int_equal(at(t, i, 5)->integer, 1);
	/* a figure only the new summary has: absent in the old */
	i = row_of(t, "Birch Core: weight missing from the universe");
	assert_int_equal(at(t, i, 2)->kind, REPORT_NONE);
	assert_string_equal(at(t, i, 2)->text, "absent");
	assert_true(at(t, i, 3)->real == 0.0125);
	/* the kept lists: LIR904 in, LIR902 out */
	s = hc_report_find_table(r, "securities");
	assert_non_null(s);
	assert_int_equal(s->nrows, 2);
	assert_string_equal(at(s, 0, 0)->text, "LIR904");
	assert_string_equal(at(s, 0, 1)->text, "in");
	assert_string_equal(at(s, 1, 0)->text, "LIR902");
	assert_string_equal(at(s, 1, 1)->text, "out");
	i = row_of(t, "securities out (kept before, not now)");
	assert_int_equal(at(t, i, 3)->integer, 1);
	assert_true(r->nnotes >= 2);
	hc_report_free(r);
}

static void test_compare_same(void **state)
{
	struct report *r = NULL;
	struct hc_error err;

	(void)state;
	assert_int_equal(hc_compare_summaries(&r, old_json, "a", old_json, "b", &err), HC_OK);
	assert_int_equal(field(r, "changed_figures")->value.integer, 0);
	assert_int_equal(hc_report_find_table(r, "securities")->nrows, 0);
	assert_string_equal(field(r, "headline")->value.text,
			    "No fund changed policy verdict; the near-floor count stays at 21");
	hc_report_free(r);
}


/* An audit that gives a verdict in words (pass, fail, insufficient data):
 * a change of it is a changed verdict, even when "passed" stays. */
static void test_compare_verdict_words(void **state)
{
	static const char a[] = "{\"holdcount_version\": \"0.2.0\", \"universe\": {},"
		" \"audit\": {\"funds\": [{\"fund\": \"Cedar Income\", \"passed\": true, \"verdict\": \"pass\"}]}}";
	static const char b[] = "{\"holdcount_version\": \"0.2.0\", \"universe\": {},"
		" \"audit\": {\"funds\": [{\"fund\": \"Cedar Income\", \"passed\": true,"
		" \"verdict\": \"insufficient data\"}]}}";
	struct report *r = NULL;
	struct hc_error err;
	const struct report_table *t;

	(void)state;
	assert_int_equal(hc_compare_summaries(&r, a, "a", b, "b", &err), HC_OK);
	t = hc_report_find_table(r, "changes");
	assert_int_equal(field(r, "verdict_changes")->value.integer, 1);
	assert_string_equal(at(t, 0, 1)->text, "Cedar Income passes the policy");
	assert_int_equal(at(t, 0, 5)->integer, 0);
	assert_string_equal(at(t, 1, 1)->text, "Cedar Income: verdict");
	assert_string_equal(at(t, 1, 2)->text, "pass");
	assert_string_equal(at(t, 1, 3)->text, "insufficient data");
	assert_int_equal(at(t, 1, 5)->integer, 1);
	hc_report_free(r);
}

/* The statute screens and both readings of the 5% baskets, and the count
 * of funds with insufficient data, when an audit gives them: 80% of the
 * fund in the capped basket last time and 75% now is a change of -5
 * points (worked out by hand); a screen that flips is a changed row. */
static void test_compare_statute_readings(void **state)
{
	static const char a[] = "{\"holdcount_version\": \"0.2.0\", \"universe\": {},"
		" \"audit\": {\"failed_funds\": 0, \"insufficient_funds\": 0, \"funds\": [{\"fund\": \"Cedar Income\","
		" \"passed\": true, \"1940act\": true, \"basket_1940act_capped\": 0.8, \"basket_1940act_excluded\": 0.0}]}}";
	static const char b[] = "{\"holdcount_version\": \"0.2.0\", \"universe\": {},"
		" \"audit\": {\"failed_funds\": 0, \"insufficient_funds\": 1, \"funds\": [{\"fund\": \"Cedar Income\","
		" \"passed\": true, \"1940act\": false, \"basket_1940act_capped\": 0.75, \"basket_1940act_excluded\": 0.0}]}}";
	struct report *r = NULL;
	struct hc_error err;
	const struct report_table *t;
	size_t i;

	(void)state;
	assert_int_equal(hc_compare_summaries(&r, a, "a", b, "b", &err), HC_OK);
	t = hc_report_find_table(r, "changes");
	i = row_of(t, "Cedar Income: 1940 Act basket, positions counted up to 5%");
	assert_true(at(t, i, 4)->kind == REPORT_REAL);
	assert_true(at(t, i, 4)->real > -0.05 - 1e-12 && at(t, i, 4)->real < -0.05 + 1e-12);
	assert_int_equal(at(t, i, 5)->integer, 1);
	i = row_of(t, "Cedar Income: 1940 Act basket, positions above 5% left out");
	assert_int_equal(at(t, i, 5)->integer, 0);
	i = row_of(t, "Cedar Income: 1940 Act 5(b)(1) screen");
	assert_int_equal(at(t, i, 5)->integer, 1);
	i = row_of(t, "funds with insufficient data");
	assert_int_equal(at(t, i, 2)->integer, 0);
	assert_int_equal(at(t, i, 3)->integer, 1);
	assert_int_equal(at(t, i, 5)->integer, 1);
	hc_report_free(r);
	/* neither summary has them: no such rows (test_compare_figures' pair) */
	assert_int_equal(hc_compare_summaries(&r, old_json, "old", new_json, "new", &err), HC_OK);
	t = hc_report_find_table(r, "changes");
	for (i = 0; i < t->nrows; i++) {
		assert_null(strstr(at(t, i, 1)->text, "basket"));
		assert_null(strstr(at(t, i, 1)->text, "screen"));
		assert_null(strstr(at(t, i, 1)->text, "insufficient"));
	}
	hc_report_free(r);
}

static void test_compare_not_a_summary(void **state)
{
	struct report *r = (struct report *)&r;
	struct hc_error err;

	(void)state;
	assert_int_equal(hc_compare_summaries(&r, "{\"a\": ", "broken.json", new_json, "q4", &err), HC_EDATA);
	assert_null(r);
	assert_non_null(strstr(err.message, "'broken.json': not JSON"));
	assert_int_equal(hc_compare_summaries(&r, old_json, "q3", "[1, 2]", "list.json", &err), HC_EDATA);
	assert_non_null(strstr(err.message, "'list.json': not a holdcount report summary"));
	assert_int_equal(hc_compare_paths(&r, "/nonexistent/holdcount", "/nonexistent/x", &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot read '/nonexistent/holdcount'"));
}

static void test_compare_out_of_memory(void **state)
{
	struct report *r;
	struct hc_error err;
	long k;
	int rc = HC_ENOMEM;

	(void)state;
	for (k = 0; rc == HC_ENOMEM && k < 100000; k++) {
		r = NULL;
		hc_alloc_fail_after(k);
		rc = hc_compare_summaries(&r, old_json, "q3", new_json, "q4", &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_ENOMEM)
			assert_null(r);
		else
			hc_report_free(r);
	}
	assert_int_equal(rc, HC_OK);
	assert_true(k > 10);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_compare_verdict_first),
		cmocka_unit_test(test_compare_figures),
		cmocka_unit_test(test_compare_same),
		cmocka_unit_test(test_compare_verdict_words),
		cmocka_unit_test(test_compare_statute_readings),
		cmocka_unit_test(test_compare_not_a_summary),
		cmocka_unit_test(test_compare_out_of_memory),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
