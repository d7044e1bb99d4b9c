/*
 * Unit tests for the report model and its writers.
 *
 * Golden outputs: the expected strings below were worked out by hand from
 * the writer contract in report.h; the 17-digit spellings of the numbers
 * were taken from Python 3's '%.17g' % x (CPython formats through the C
 * library's correctly rounded printf), and the JSON is also re-parsed with
 * cJSON's own parser and every number compared bit for bit with the value
 * put in, which is the round-trip property the contract promises.
 */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <math.h>
#include <cmocka.h>

#include <cjson/cJSON.h>

#include "holdcount/error.h"
#include "holdcount/memory.h"
#include "holdcount/report.h"

/* Build the small report every golden test renders; HC_OK or the first
 * failing status (for the allocation-failure sweep). */
static int build(struct report **out)
{
	struct report *r = hc_report_alloc();
	struct report_table *t;
	int rc = HC_ENOMEM;

	*out = NULL;
	if (!r)
		return HC_ENOMEM;
	if (hc_report_add_int(r, "securities", "securities kept", 37) ||
	    hc_report_add_real(r, "average_correlation", "average correlation", 0.2385, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(r, "floor_sd", "floor sd", 0.1915815, REPORT_STYLE_PERCENT) ||
	    hc_report_add_text(r, "first_date", "first date", "2004-01-31") ||
	    hc_report_add_bool(r, "complete", "complete data", 1) ||
	    hc_report_add_none(r, "periods_per_year", "periods per year"))
		goto fail;
	t = hc_report_add_table(r, "curve", "risk by count");
	if (!t)
		goto fail;
	if (hc_report_table_add_column(t, "n", "N", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "expected_sd", "expected sd", REPORT_STYLE_PERCENT) ||
	    hc_report_table_add_column(t, "variance", "variance", REPORT_STYLE_SCI) ||
	    hc_report_table_add_column(t, "label", "label", REPORT_STYLE_PLAIN))
		goto fail;
	if (hc_report_table_add_row(t))
		goto fail;
	hc_report_table_set_int(t, 0, 0, 1);
	hc_report_table_set_real(t, 0, 1, 0.49236);
	hc_report_table_set_real(t, 0, 2, -0.0123456789);
	if (hc_report_table_set_text(t, 0, 3, "one, \"a\""))
		goto fail;
	if (hc_report_table_add_row(t))
		goto fail;
	hc_report_table_set_int(t, 1, 0, 10);
	hc_report_table_set_real(t, 1, 1, 0.23932);
	hc_report_table_set_real(t, 1, 2, NAN);
	if (hc_report_table_set_text(t, 1, 3, "ten"))
		goto fail;
	if (hc_report_add_note(r, "check the inputs"))
		goto fail;
	*out = r;
	return HC_OK;
fail:
	hc_report_free(r);
	return rc;
}

/* Render r with writer w into a heap string (open_memstream). */
static char *render(const struct report_writer *w, const struct report *r, int *rc)
{
	char *buf = NULL;
	size_t len = 0;
	FILE *fp = open_memstream(&buf, &len);
	struct hc_error err;

	assert_non_null(fp);
	hc_error_clear(&err);
	*rc = w->write(fp, r, &err);
	fclose(fp);
	return buf;
}

/* Render r with writer w: status HC_OK and exactly the text want. */
static void expect_render(const struct report_writer *w, const struct report *r, const char *want)
{
	int rc;
	char *s = render(w, r, &rc);

	assert_int_equal(rc, HC_OK);
	assert_string_equal(s, want);
	free(s);
}

static const char golden_text[] =
	"securities kept:     37\n"
	"average correlation: 0.2385\n"
	"floor sd:            19.16%\n"
	"first date:          2004-01-31\n"
	"complete data:       yes\n"
	"periods per year:    -\n"
	"\n"
	"risk by count\n"
	" N  expected sd     variance  label\n"
	" 1       49.24%  -1.2346e-02  one, \"a\"\n"
	"10       23.93%            -  ten\n"
	"\n"
	"cautions:\n"
	"- check the inputs\n";

static void test_report_text_golden(void **state)
{
	struct report *r;

	assert_int_equal(build(&r), HC_OK);
	expect_render(hc_report_writer_text, r, golden_text);
	hc_report_free(r);
}

/* RFC 4180 section 2: a field with a comma or a quote is quoted, inner
 * quotes doubled; the no-value cell is empty. */
static const char golden_csv[] =
	"n,expected_sd,variance,label\n"
	"1,0.49236000000000002,-0.0123456789,\"one, \"\"a\"\"\"\n"
	"10,0.23932,,ten\n";

static void test_report_csv_golden(void **state)
{
	struct report *r;

	assert_int_equal(build(&r), HC_OK);
	expect_render(hc_report_writer_csv, r, golden_csv);
	hc_report_free(r);
}

static void test_report_csv_fields_without_table(void **state)
{
	struct report *r = hc_report_alloc();

	assert_non_null(r);
	assert_int_equal(hc_report_add_real(r, "average_variance", "average variance", 46.619, REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_add_real(r, "floor", "floor", -0.0, REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_add_real(r, "infinite", "infinite", INFINITY, REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_add_text(r, "id", "id", "Q7,\nline"), HC_OK);
	/* -0 prints as 0, a non-finite value has no spelling (empty), and the
	 * text with a comma and a line break is quoted (RFC 4180). */
	expect_render(hc_report_writer_csv, r, "key,value\naverage_variance,46.619\nfloor,0\ninfinite,\nid,\"Q7,\nline\"\n");
	hc_report_free(r);
}

/* hc_report_write_csv_part: the second table, by key, and the fields, in the
 * form of the CSV writer above (RFC 4180 section 2 quoting); an unknown
 * table is a usage error that writes nothing. */
static void test_report_csv_part_chooses_a_table_or_the_fields(void **state)
{
	struct report *r;
	struct report_table *t;
	struct hc_error err;
	char *buf = NULL;
	size_t len = 0;
	FILE *fp;

	(void)state;
	assert_int_equal(build(&r), HC_OK);
	t = hc_report_add_table(r, "weights", "weights");
	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "sector", "sector", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "weight", "weight", REPORT_STYLE_PERCENT), HC_OK);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	assert_int_equal(hc_report_table_set_text(t, 0, 0, "Fen, north"), HC_OK);
	hc_report_table_set_real(t, 0, 1, 0.2385);
	assert_ptr_equal(hc_report_find_table(r, "weights"), t);
	assert_null(hc_report_find_table(r, "sectors"));

	fp = open_memstream(&buf, &len);
	assert_non_null(fp);
	hc_error_clear(&err);
	assert_int_equal(hc_report_write_csv_part(fp, r, "weights", &err), HC_OK);
	assert_int_equal(hc_report_write_csv_part(fp, r, "curve", &err), HC_OK);
	assert_int_equal(hc_report_write_csv_part(fp, r, NULL, &err), HC_OK);
	fflush(fp);
	assert_string_equal(buf, "sector,weight\n\"Fen, north\",0.23849999999999999\n"
			    "n,expected_sd,variance,label\n"
			    "1,0.49236000000000002,-0.0123456789,\"one, \"\"a\"\"\"\n"
			    "10,0.23932,,ten\n"
			    "key,value\nsecurities,37\naverage_correlation,0.23849999999999999\n"
			    "floor_sd,0.19158149999999999\nfirst_date,2004-01-31\ncomplete,true\nperiods_per_year,\n");
	assert_int_equal(hc_report_write_csv_part(fp, r, "sectors", &err), HC_EUSAGE);
	assert_string_equal(err.message, "the output has no table 'sectors'");
	fclose(fp);
	free(buf);
	hc_report_free(r);
}

static const char golden_json[] =
	"{\n"
	"\t\"securities\":\t37,\n"
	"\t\"average_correlation\":\t0.23849999999999999,\n"
	"\t\"floor_sd\":\t0.19158149999999999,\n"
	"\t\"first_date\":\t\"2004-01-31\",\n"
	"\t\"complete\":\ttrue,\n"
	"\t\"periods_per_year\":\tnull,\n"
	"\t\"curve\":\t[{\n"
	"\t\t\t\"n\":\t1,\n"
	"\t\t\t\"expected_sd\":\t0.49236000000000002,\n"
	"\t\t\t\"variance\":\t-0.0123456789,\n"
	"\t\t\t\"label\":\t\"one, \\\"a\\\"\"\n"
	"\t\t}, {\n"
	"\t\t\t\"n\":\t10,\n"
	"\t\t\t\"expected_sd\":\t0.23932,\n"
	"\t\t\t\"variance\":\tnull,\n"
	"\t\t\t\"label\":\t\"ten\"\n"
	"\t\t}],\n"
	"\t\"cautions\":\t[\"check the inputs\"]\n"
	"}\n";

static void test_report_json_golden_and_round_trip(void **state)
{
	struct report *r;
	cJSON *root, *curve, *row;
	char *s;
	int rc;

	assert_int_equal(build(&r), HC_OK);
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_OK);
	assert_string_equal(s, golden_json);
	root = cJSON_Parse(s);
	assert_non_null(root);
	/* Exact equality on purpose: 17 significant digits read back to the
	 * same double (IEEE 754-2008, 5.12.2). */
	assert_true(cJSON_GetObjectItem(root, "average_correlation")->valuedouble == 0.2385);
	assert_true(cJSON_GetObjectItem(root, "floor_sd")->valuedouble == 0.1915815);
	assert_true(cJSON_IsNull(cJSON_GetObjectItem(root, "periods_per_year")));
	curve = cJSON_GetObjectItem(root, "curve");
	assert_int_equal(cJSON_GetArraySize(curve), 2);
	row = cJSON_GetArrayItem(curve, 0);
	assert_true(cJSON_GetObjectItem(row, "expected_sd")->valuedouble == 0.49236);
	assert_true(cJSON_GetObjectItem(row, "variance")->valuedouble == -0.0123456789);
	assert_string_equal(cJSON_GetObjectItem(row, "label")->valuestring, "one, \"a\"");
	assert_int_equal(cJSON_GetObjectItem(cJSON_GetArrayItem(curve, 1), "n")->valueint, 10);
	cJSON_Delete(root);
	free(s);
	hc_report_free(r);
}

/* Round trip over awkward doubles (subnormal, near 1, large): 17 digits
 * must give back the very same bits. */
static void test_report_json_numbers_round_trip(void **state)
{
	static const double xs[] = { 5e-324, 0.1, 1.0 - 0x1p-53, 2.385e300, -7.058e-7, 123456789012.25 };
	struct report *r = hc_report_alloc();
	cJSON *root;
	char key[8], *s;
	size_t i;
	int rc;

	assert_non_null(r);
	for (i = 0; i < sizeof xs / sizeof xs[0]; i++) {
		snprintf(key, sizeof key, "x%zu", i);
		assert_int_equal(hc_report_add_real(r, key, key, xs[i], REPORT_STYLE_PLAIN), HC_OK);
	}
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_OK);
	root = cJSON_Parse(s);
	assert_non_null(root);
	for (i = 0; i < sizeof xs / sizeof xs[0]; i++) {
		snprintf(key, sizeof key, "x%zu", i);
		assert_true(cJSON_GetObjectItem(root, key)->valuedouble == xs[i]);
	}
	cJSON_Delete(root);
	free(s);
	hc_report_free(r);
}

/* A key used twice in one JSON object is refused, not written: a parser
 * keeps one of the two (RFC 8259 section 4: names "SHOULD be unique"), so a
 * figure would vanish from scripts unseen. */
static void test_report_json_refuses_a_key_used_twice(void **state)
{
	struct report *r = hc_report_alloc();
	struct report_table *t;
	char *s;
	int rc;

	(void)state;
	assert_non_null(r);
	assert_int_equal(hc_report_add_int(r, "funds", "funds", 3), HC_OK);
	assert_non_null(t = hc_report_add_table(r, "funds", "funds"));
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_EINTERNAL);
	free(s);
	hc_report_free(r);
	/* the same within one table's rows */
	assert_non_null(r = hc_report_alloc());
	assert_non_null(t = hc_report_add_table(r, "rows", "rows"));
	assert_int_equal(hc_report_table_add_column(t, "sd", "sd", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "sd", "sd again", REPORT_STYLE_PLAIN), HC_OK);
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_EINTERNAL);
	free(s);
	/* text and CSV have no such constraint and still render */
	s = render(hc_report_writer_csv, r, &rc);
	assert_int_equal(rc, HC_OK);
	free(s);
	hc_report_free(r);
}

/* hc_report_table_nest: in JSON a parent row's cell becomes the array of
 * the child rows with the same join text, each without the join column;
 * CSV keeps the cell as set; a missing column is refused. */
static void test_report_json_nests_a_table(void **state)
{
	struct report *r = hc_report_alloc();
	struct report_table *p, *c;
	cJSON *doc, *rows, *arr, *o;
	char *s;
	int rc;

	(void)state;
	assert_non_null(r);
	assert_non_null(p = hc_report_add_table(r, "funds", "funds"));
	assert_int_equal(hc_report_table_add_column(p, "fund", "fund", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(p, "failed", "failed", REPORT_STYLE_PLAIN), HC_OK);
	assert_non_null(c = hc_report_add_table(r, "failures", "failures"));
	assert_int_equal(hc_report_table_add_column(c, "fund", "fund", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(c, "check", "check", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(c, "figure", "figure", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_row(p), HC_OK);
	assert_int_equal(hc_report_table_set_text(p, 0, 0, "A"), HC_OK);
	assert_int_equal(hc_report_table_set_text(p, 0, 1, "x;y"), HC_OK);
	assert_int_equal(hc_report_table_add_row(p), HC_OK);
	assert_int_equal(hc_report_table_set_text(p, 1, 0, "B"), HC_OK);
	assert_int_equal(hc_report_table_set_text(p, 1, 1, ""), HC_OK);
	assert_int_equal(hc_report_table_add_row(c), HC_OK);
	assert_int_equal(hc_report_table_set_text(c, 0, 0, "A"), HC_OK);
	assert_int_equal(hc_report_table_set_text(c, 0, 1, "x"), HC_OK);
	hc_report_table_set_real(c, 0, 2, 0.25);
	assert_int_equal(hc_report_table_add_row(c), HC_OK);
	assert_int_equal(hc_report_table_set_text(c, 1, 0, "A"), HC_OK);
	assert_int_equal(hc_report_table_set_text(c, 1, 1, "y"), HC_OK);
	hc_report_table_set_real(c, 1, 2, 1.5);
	assert_int_equal(hc_report_table_nest(p, "failed", c, "nofund"), HC_EINTERNAL);
	assert_int_equal(hc_report_table_nest(p, "nothing", c, "fund"), HC_EINTERNAL);
	assert_null(p->nest);
	assert_int_equal(hc_report_table_nest(p, "failed", c, "fund"), HC_OK);
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_OK);
	assert_non_null(doc = cJSON_Parse(s));
	free(s);
	rows = cJSON_GetObjectItemCaseSensitive(doc, "funds");
	assert_int_equal(cJSON_GetArraySize(rows), 2);
	arr = cJSON_GetObjectItemCaseSensitive(cJSON_GetArrayItem(rows, 0), "failed");
	assert_true(cJSON_IsArray(arr));
	assert_int_equal(cJSON_GetArraySize(arr), 2);
	o = cJSON_GetArrayItem(arr, 1);
	assert_null(cJSON_GetObjectItemCaseSensitive(o, "fund"));
	assert_string_equal(cJSON_GetObjectItemCaseSensitive(o, "check")->valuestring, "y");
	assert_true(cJSON_GetObjectItemCaseSensitive(o, "figure")->valuedouble == 1.5);
	arr = cJSON_GetObjectItemCaseSensitive(cJSON_GetArrayItem(rows, 1), "failed");
	assert_true(cJSON_IsArray(arr));
	assert_int_equal(cJSON_GetArraySize(arr), 0);
	/* the child table is still written on its own */
	assert_int_equal(cJSON_GetArraySize(cJSON_GetObjectItemCaseSensitive(doc, "failures")), 2);
	cJSON_Delete(doc);
	expect_render(hc_report_writer_csv, r, "fund,failed\nA,x;y\nB,\n");
	hc_report_free(r);
}

/* JSON is valid UTF-8 whatever the text: a byte that starts no valid
 * sequence (a Latin-1 e-acute 0xE9, a lone continuation byte 0x80, an
 * overlong 0xC0 0xAF, a surrogate 0xED 0xA0 0x80: RFC 3629 section 3) becomes
 * U+FFFD, valid sequences stay; CSV keeps the bytes as given. */
static void test_report_json_replaces_invalid_utf8(void **state)
{
	struct report *r = hc_report_alloc();
	cJSON *doc;
	char *s;
	int rc;

	(void)state;
	assert_non_null(r);
	assert_int_equal(hc_report_add_text(r, "input", "input", "caf\xe9 \xc3\xa9\x80|\xc0\xaf|\xed\xa0\x80|\xf0\x9f\x98\x80"), HC_OK);
	assert_int_equal(hc_report_add_note(r, "from 'x\xe9.csv'"), HC_OK);
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_OK);
	assert_non_null(doc = cJSON_Parse(s));
	free(s);
	assert_string_equal(cJSON_GetObjectItemCaseSensitive(doc, "input")->valuestring,
			    "caf\xef\xbf\xbd \xc3\xa9\xef\xbf\xbd|\xef\xbf\xbd\xef\xbf\xbd|"
			    "\xef\xbf\xbd\xef\xbf\xbd\xef\xbf\xbd|\xf0\x9f\x98\x80");
	assert_string_equal(cJSON_GetArrayItem(cJSON_GetObjectItemCaseSensitive(doc, "cautions"), 0)->valuestring,
			    "from 'x\xef\xbf\xbd.csv'");
	cJSON_Delete(doc);
	s = render(hc_report_writer_csv, r, &rc);
	assert_int_equal(rc, HC_OK);
	assert_non_null(strstr(s, "caf\xe9 "));
	free(s);
	hc_report_free(r);
}

/* Long notes wrap at 79 columns with a two-space hanging indent; short
 * ones stay on one line (the golden test above). */
static void test_report_text_wraps_notes(void **state)
{
	struct report *r = hc_report_alloc();

	assert_non_null(r);
	assert_int_equal(hc_report_add_note(r, "alpha bravo charlie delta echo foxtrot golf hotel india juliett "
					 "kilo lima mike november oscar papa"), HC_OK);
	expect_render(hc_report_writer_text, r, "\ncautions:\n"
		      "- alpha bravo charlie delta echo foxtrot golf hotel india juliett kilo lima\n"
		      "  mike november oscar papa\n");
	hc_report_free(r);
}

static void test_report_writer_find(void **state)
{
	assert_ptr_equal(hc_report_writer_find("table"), hc_report_writer_text);
	assert_ptr_equal(hc_report_writer_find("csv"), hc_report_writer_csv);
	assert_ptr_equal(hc_report_writer_find("json"), hc_report_writer_json);
	assert_ptr_equal(hc_report_writer_find("markdown"), hc_report_writer_markdown);
	assert_null(hc_report_writer_find("xml"));
	assert_null(hc_report_writer_find(NULL));
}

/* The Markdown writer: the text writer's number formatting (a value that
 * rounds to zero prints as zero, never "-0.00%"), '|' escaped, numbers
 * right-aligned, words left. */
static void test_report_markdown_golden(void **state)
{
	struct report *r = hc_report_alloc();
	struct report_table *t;

	assert_non_null(r);
	assert_int_equal(hc_report_add_real(r, "drift", "drift", -0.00002385, REPORT_STYLE_PERCENT), 0);
	assert_int_equal(hc_report_add_text(r, "input", "input", "a|b"), 0);
	t = hc_report_add_table(r, "curve", "risk by count");
	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "label", "label", REPORT_STYLE_PLAIN), 0);
	assert_int_equal(hc_report_table_add_column(t, "sd", "sd", REPORT_STYLE_PERCENT), 0);
	assert_int_equal(hc_report_table_add_row(t), 0);
	assert_int_equal(hc_report_table_set_text(t, 0, 0, "one"), 0);
	hc_report_table_set_real(t, 0, 1, 0.4924);
	assert_int_equal(hc_report_table_add_row(t), 0);
	assert_int_equal(hc_report_table_set_text(t, 1, 0, "ten"), 0);
	hc_report_table_set_real(t, 1, 1, -0.00003);
	assert_int_equal(hc_report_add_note(r, "check the inputs"), 0);
	expect_render(hc_report_writer_markdown, r,
		      "- drift: 0.00%\n"
		      "- input: a\\|b\n"
		      "\n"
		      "### risk by count\n"
		      "\n"
		      "| label | sd |\n"
		      "|:--|--:|\n"
		      "| one | 49.24% |\n"
		      "| ten | 0.00% |\n"
		      "\n"
		      "- check the inputs\n");
	hc_report_free(r);
}

/* The cautions of design.md section 9 and the project rules: each subject
 * must be present. */
static void test_report_cautions_cover_each_subject(void **state)
{
	static const char *const subjects[] = { "historical", "survivor", "estimation error",
		"independent", "not investment advice", "licensed advisers", "legal limits" };
	struct report *r = hc_report_alloc();
	size_t i, j;

	assert_non_null(r);
	assert_int_equal(hc_report_add_cautions(r), HC_OK);
	assert_int_equal(r->nnotes, 5);
	for (i = 0; i < sizeof subjects / sizeof subjects[0]; i++) {
		int found = 0;
		for (j = 0; j < r->nnotes; j++)
			found |= strstr(r->notes[j], subjects[i]) != NULL;
		assert_true(found);
	}
	hc_report_free(r);
}

/* A column added after rows (a caller appending its own column to a table
 * another module filled): existing cells keep their values, the new cells
 * are empty, and the CSV shows it (RFC 4180 empty field). */
static void test_report_column_after_rows_widens(void **state)
{
	struct report *r = hc_report_alloc();
	struct report_table *t = hc_report_add_table(r, "t", NULL);
	char *s;
	size_t i;
	int rc;

	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "a", NULL, 0), HC_OK);
	for (i = 0; i < 20; i++) { /* past the first growth of 16 rows */
		assert_int_equal(hc_report_table_add_row(t), HC_OK);
		hc_report_table_set_real(t, i, 0, 2.385 * (double)i);
	}
	assert_int_equal(hc_report_table_add_column(t, "b", NULL, 0), HC_OK);
	hc_report_table_set_int(t, 19, 1, 7);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	s = render(hc_report_writer_csv, r, &rc);
	assert_int_equal(rc, HC_OK);
	assert_non_null(strstr(s, "a,b\n0,\n2.3849999999999998,\n"));
	/* 19 * 2.385 = 45.315 in decimal; as doubles it prints as below
	 * (Python 3: '%.17g' % (2.385 * 19)). */
	assert_non_null(strstr(s, "\n45.314999999999998,7\n,\n"));
	free(s);
	/* A column with no value anywhere is left out of the text view only. */
	assert_int_equal(hc_report_table_add_column(t, "c", "never set", 0), HC_OK);
	s = render(hc_report_writer_text, r, &rc);
	assert_int_equal(rc, HC_OK);
	assert_null(strstr(s, "never set"));
	assert_int_equal(strncmp(s, "     a  b\n     0  -\n", 20), 0);
	free(s);
	s = render(hc_report_writer_csv, r, &rc);
	assert_non_null(strstr(s, "a,b,c\n0,,\n"));
	free(s);
	hc_report_free(r);
}

/* A cell with no value but a reason (hc_report_table_set_none): the reason in
 * CSV and in the text table, null in JSON (RFC 8259 section 3: a number
 * field that has no number is null, not a string), and the column is not
 * dropped from the text view as an empty one would be. */
static void test_report_none_with_a_reason(void **state)
{
	struct report *r = hc_report_alloc();
	struct report_table *t = hc_report_add_table(r, "funds", NULL);
	cJSON *doc, *rows;
	char *s;
	int rc;

	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "fund", "fund", 0), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "count", "count", REPORT_STYLE_FIXED2), HC_OK);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	assert_int_equal(hc_report_table_set_text(t, 0, 0, "Alder"), HC_OK);
	hc_report_table_set_real(t, 0, 1, 23.85);
	assert_int_equal(hc_report_table_set_text(t, 1, 0, "Birch"), HC_OK);
	hc_report_table_set_real(t, 1, 1, 4.5);            /* replaced below: no leak */
	assert_int_equal(hc_report_table_set_none(t, 1, 1, "below the floor"), HC_OK);
	assert_int_equal(t->cells[3].kind, REPORT_NONE);
	expect_render(hc_report_writer_csv, r, "fund,count\nAlder,23.850000000000001\nBirch,below the floor\n");
	expect_render(hc_report_writer_text, r,
		      "fund   count\n"
		      "Alder  23.85\n"
		      "Birch  below the floor\n");
	s = render(hc_report_writer_json, r, &rc);
	assert_int_equal(rc, HC_OK);
	doc = cJSON_Parse(s);
	assert_non_null(doc);
	rows = cJSON_GetObjectItemCaseSensitive(doc, "funds");
	assert_int_equal(cJSON_GetArraySize(rows), 2);
	assert_true(cJSON_IsNumber(cJSON_GetObjectItemCaseSensitive(cJSON_GetArrayItem(rows, 0), "count")));
	assert_true(cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(cJSON_GetArrayItem(rows, 1), "count")));
	cJSON_Delete(doc);
	free(s);
	hc_report_free(r);
}

/* Writing to a full device: the writers report HC_EIO, not success. */
static void test_report_write_failure_is_eio(void **state)
{
	const struct report_writer *ws[] = { hc_report_writer_text, hc_report_writer_csv, hc_report_writer_json };
	struct report *r;
	struct hc_error err;
	size_t i;

	assert_int_equal(build(&r), HC_OK);
	for (i = 0; i < 3; i++) {
		FILE *fp = fopen("/dev/full", "w");
		assert_non_null(fp);
		setvbuf(fp, NULL, _IONBF, 0);
		hc_error_clear(&err);
		assert_int_equal(ws[i]->write(fp, r, &err), HC_EIO);
		assert_non_null(strstr(err.message, "cannot write output"));
		fclose(fp);
	}
	hc_report_free(r);
}

/* Fault injection: every allocation in building and writing may fail;
 * the result is HC_ENOMEM (never a crash, never a wrong success), and
 * once enough allocations succeed the output is the golden one. */
static void test_report_allocation_failure(void **state)
{
	const struct report_writer *ws[] = { hc_report_writer_text, hc_report_writer_json };
	const char *golden[] = { golden_text, golden_json };
	long k;
	size_t i;

	for (i = 0; i < 2; i++) {
		int succeeded = 0;
		for (k = 0; k < 400 && !succeeded; k++) {
			struct report *r;
			char *s;
			int rc;

			hc_alloc_fail_after(k);
			rc = build(&r);
			if (rc == HC_OK) {
				s = render(ws[i], r, &rc);
				hc_alloc_fail_after(-1);
				if (rc == HC_OK) {
					assert_string_equal(s, golden[i]);
					succeeded = 1;
				} else {
					assert_int_equal(rc, HC_ENOMEM);
				}
				free(s);
				hc_report_free(r);
			} else {
				hc_alloc_fail_after(-1);
				assert_int_equal(rc, HC_ENOMEM);
			}
		}
		assert_true(succeeded);
		assert_true(k > 10); /* the sweep really did fail allocations */
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_report_text_golden),
		cmocka_unit_test(test_report_markdown_golden),
		cmocka_unit_test(test_report_csv_golden),
		cmocka_unit_test(test_report_csv_fields_without_table),
		cmocka_unit_test(test_report_csv_part_chooses_a_table_or_the_fields),
		cmocka_unit_test(test_report_json_golden_and_round_trip),
		cmocka_unit_test(test_report_json_numbers_round_trip),
		cmocka_unit_test(test_report_json_refuses_a_key_used_twice),
		cmocka_unit_test(test_report_json_nests_a_table),
		cmocka_unit_test(test_report_json_replaces_invalid_utf8),
		cmocka_unit_test(test_report_text_wraps_notes),
		cmocka_unit_test(test_report_writer_find),
		cmocka_unit_test(test_report_cautions_cover_each_subject),
		cmocka_unit_test(test_report_column_after_rows_widens),
		cmocka_unit_test(test_report_none_with_a_reason),
		cmocka_unit_test(test_report_write_failure_is_eio),
		cmocka_unit_test(test_report_allocation_failure),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
