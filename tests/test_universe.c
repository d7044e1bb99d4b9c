/*
 * Unit tests for universe loading.
 *
 * Outside references, named beside each check:
 *  - numpy (Debian python3-numpy): simple and log returns from prices,
 *    computed with the command quoted in the test;
 *  - Python's datetime (proleptic Gregorian calendar): day numbers;
 *  - the calendar itself for periods per year (common practice: 252 trading
 *    days, 52 weeks, 12 months, 4 quarters a year).
 * Error messages are checked against the wording documented in
 * docs/formats.md.
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

#include "holdcount/memory.h"
#include "holdcount/universe.h"

#include "check.h"
#include "heapcheck.h"

/* |a - b| <= tol, with both values shown on failure (cmocka's float
 * assertion works in single precision). */
#define assert_close(a, b, tol) do { \
	double a_ = (a), b_ = (b); \
	if (!(fabs(a_ - b_) <= (tol))) \
		fail_msg("%.17g != %.17g (tolerance %g)", a_, b_, (double)(tol)); \
} while (0)

static int load(struct universe **u, const char *text, const struct universe_options *o,
		struct hc_error *err)
{
	return hc_universe_load_buffer(u, "u.csv", text, strlen(text), o, err);
}

/* Expect failure with status code and a message starting with prefix. */
static void expect_error(const char *text, const struct universe_options *o,
			 int code, const char *prefix)
{
	struct universe *u = (struct universe *)1;
	struct hc_error err;
	int rc = load(&u, text, o, &err);

	check_status_prefix(rc, code, err.message, prefix);
	assert_null(u);
}

static const char wide3[] =
	"date,A,B,C\n"
	"2021-01-31,0.0213,-0.0117,0.0342\n"
	"2021-02-28,-0.0385,0.0266,0.0051\n"
	"2021-03-31,0.0172,0.0093,-0.0228\n"
	"2021-04-30,0.0051,-0.0204,0.0137\n";

static void test_universe_wide_returns(void **state)
{
	struct universe *u;
	struct hc_error err;
	char d[11];

	assert_int_equal(load(&u, wide3, NULL, &err), HC_OK);
	assert_int_equal(u->m, 3);
	assert_int_equal(u->t, 4);
	assert_string_equal(u->ids[1], "B");
	/* security-major: B's series is contiguous */
	assert_true(u->x[1 * 4 + 0] == -0.0117);
	assert_true(u->x[1 * 4 + 3] == -0.0204);
	assert_true(u->x[2 * 4 + 1] == 0.0051);
	/* 2021-01-31 is day 18658 (Python: date(2021,1,31).toordinal() - date(1970,1,1).toordinal()) */
	assert_int_equal(u->dates[0], 18658);
	hc_universe_format_date(u->dates[3], d);
	assert_string_equal(d, "2021-04-30");
	assert_true(u->periods_per_year == 12);   /* month ends: 12 a year */
	assert_int_equal(u->periods_detected, 1);
	assert_int_equal(u->has_missing, 0);
	assert_int_equal(u->m_read, 3);
	assert_int_equal(u->ndropped, 0);
	assert_string_equal(u->source, "u.csv");
	assert_int_equal(hc_universe_find(u, "C"), 2);
	assert_int_equal(hc_universe_find(u, "c"), -1);
	hc_universe_free(u);
	hc_universe_free(NULL);
}

/* numpy reference:
 *   p = np.array([[2.385,2.517,2.401,2.644],[41.73,40.96,43.02,42.88]])
 *   p[:,1:]/p[:,:-1]-1 ; np.diff(np.log(p), axis=1) */
static void test_universe_prices_to_returns(void **state)
{
	static const char text[] =
		"date,P,Q\n"
		"2021-01-29,2.385,41.73\n"
		"2021-02-26,2.517,40.96\n"
		"2021-03-31,2.401,43.02\n"
		"2021-04-30,2.644,42.88\n";
	static const double simple[2][3] = {
		{ 0.05534591194968552, -0.046086611044894754, 0.10120783007080392 },
		{ -0.018451953031392243, 0.05029296875, -0.0032543003254300595 } };
	static const double logr[2][3] = {
		{ 0.05386859181287429, -0.04718239891406262, 0.09640760475032373 },
		{ -0.018624313872209086, 0.04906914310833166, -0.0032596070770374297 } };
	struct universe_options o;
	struct universe *u;
	struct hc_error err;
	size_t i, k;
	char d[11];

	hc_universe_options_init(&o);
	o.values = UNIVERSE_PRICES;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_int_equal(u->t, 3);   /* the first date is consumed */
	hc_universe_format_date(u->dates[0], d);
	assert_string_equal(d, "2021-02-26");
	/* 4e-16 relative: b/a - 1 and numpy's division differ at most in the last bit of the ratio */
	for (i = 0; i < 2; i++)
		for (k = 0; k < 3; k++)
			assert_close(u->x[i * 3 + k], simple[i][k], 4e-16 * fabs(simple[i][k]) + 1e-18);
	hc_universe_free(u);
	o.values = UNIVERSE_PRICES_LOG;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	/* log(b/a) vs numpy's log(b) - log(a): 1e-13 relative covers the cancellation in the difference */
	for (i = 0; i < 2; i++)
		for (k = 0; k < 3; k++)
			assert_close(u->x[i * 3 + k], logr[i][k], 1e-13 * fabs(logr[i][k]));
	hc_universe_free(u);
}

static void test_universe_percent(void **state)
{
	static const char text[] =
		"date,A,B\n"
		"2021-01-31,2.13,-1.17%\n"
		"2021-02-28,-3.85%,2.66\n"
		"2021-03-31,1.72,0.93\n";
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	/* without the option only the cells with '%' are scaled */
	assert_int_equal(load(&u, text, NULL, &err), HC_OK);
	assert_true(u->x[0] == 2.13);
	assert_true(u->x[1] == strtod("-0.0385", NULL));
	assert_true(u->x[3] == strtod("-0.0117", NULL));
	hc_universe_free(u);
	hc_universe_options_init(&o);
	o.percent = 1;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_close(u->x[0], 0.0213, 1e-17);   /* 2.13/100: one rounding */
	assert_true(u->x[1] == strtod("-0.0385", NULL)); /* not divided twice */
	assert_close(u->x[5], 0.0093, 1e-17);
	hc_universe_free(u);
}

/* BOM, CRLF, ';' delimiter with decimal points, quoted ids holding the
 * delimiter and a line break (RFC 4180). */
static void test_universe_bom_crlf_semicolon_quotes(void **state)
{
	static const char text[] =
		"\xEF\xBB\xBF" "date;\"X;1\";\"Y\r\nZ\"\r\n"
		"2021-01-04;0.0213;-0.0117\r\n"
		"2021-01-05;-0.0385;0.0266\r\n"
		"2021-01-06;0.0172;0.0093\r\n";
	struct universe *u;
	struct hc_error err;

	assert_int_equal(load(&u, text, NULL, &err), HC_OK);
	assert_int_equal(u->m, 2);
	assert_string_equal(u->ids[0], "X;1");
	assert_string_equal(u->ids[1], "Y\r\nZ");
	assert_true(u->x[3 + 2] == 0.0093);
	hc_universe_free(u);
	/* ';' files with decimal commas are refused at the cell */
	expect_error("date;A;B\n2021-01-04;1,5;2\n2021-01-05;1;2\n", NULL, HC_EDATA,
		     "u.csv:2:2: expected a number or a missing marker, found '1,5'");
}

static void test_universe_date_column_option(void **state)
{
	static const char text[] =
		"A,when,B\n"
		"0.0213,2021-01-31,-0.0117\n"
		"-0.0385,2021-02-28,0.0266\n"
		"0.0172,2021-03-31,0.0093\n";
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	hc_universe_options_init(&o);
	o.date_column = "When";
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_string_equal(u->ids[0], "A");
	assert_string_equal(u->ids[1], "B");
	assert_true(u->x[3 + 1] == 0.0266);
	assert_int_equal(u->dates[2], 18717);   /* Python: date(2021,3,31) - date(1970,1,1) */
	hc_universe_free(u);
	o.date_column = "day";
	expect_error(text, &o, HC_EDATA, "u.csv:1: no column named 'day' in the header");
	o.date_column = NULL;
	expect_error(text, &o, HC_EDATA, "u.csv:2:1: expected a date as YYYY-MM-DD or YYYY-MM, found '0.0213'");
}

static void test_universe_long_layout(void **state)
{
	static const char text[] =
		"sym,dt,ret,note\n"
		"B,2021-02-28,0.0266,x\n"
		"A,2021-01-31,0.0213,y\n"
		"A,2021-02-28,-0.0385,\n"
		"B,2021-01-31,-0.0117,\n"
		"A,2021-03-31,0.0172,\n"
		"B,2021-03-31,0.0093,\n"
		"C,2021-01-31,0.0342,\n"
		"C,2021-03-31,-0.0228,\n";
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	hc_universe_options_init(&o);
	o.layout = UNIVERSE_LONG;
	o.date_column = "DT";
	o.id_column = "sym";
	o.value_column = "ret";
	o.missing = UNIVERSE_MISSING_KEEP;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_int_equal(u->m, 3);
	assert_int_equal(u->t, 3);
	assert_string_equal(u->ids[0], "B");     /* order of first appearance */
	assert_string_equal(u->ids[1], "A");
	assert_true(u->x[0] == -0.0117);          /* B on 2021-01-31, after sorting dates */
	assert_true(u->x[1] == 0.0266);
	assert_true(u->x[3 + 1] == -0.0385);
	assert_true(isnan(u->x[6 + 1]));          /* C has no 2021-02-28 row */
	assert_int_equal(u->has_missing, 1);
	hc_universe_free(u);
	o.missing = UNIVERSE_MISSING_COMPLETE;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_int_equal(u->m, 2);
	assert_int_equal(u->ndropped, 1);
	assert_string_equal(u->dropped[0].id, "C");
	assert_string_equal(u->dropped[0].reason, "missing 1 of 3 periods");
	hc_universe_free(u);
	o.id_column = "ticker";
	expect_error(text, &o, HC_EDATA, "u.csv:1: no column named 'ticker' in the header");
}

static void test_universe_long_errors(void **state)
{
	struct universe_options o;

	hc_universe_options_init(&o);
	o.layout = UNIVERSE_LONG;
	expect_error("date,id,value\n2021-01-31,A,0.01\n2021-02-28,A,0.02\n2021-01-31,A,0.03\n",
		     &o, HC_EDATA,
		     "u.csv:4:1: second row for security 'A' on 2021-01-31 (first on line 2)");
	expect_error("date,id,value\n2021-01-31,Ab,0.01\n2021-02-28,\"AB \",0.02\n",
		     &o, HC_EDATA,
		     "u.csv:3:2: security id 'AB ' differs only in case or surrounding spaces from 'Ab' (line 2)");
	expect_error("date,id,value\n2021-01-31,,0.01\n", &o, HC_EDATA,
		     "u.csv:2:2: empty security id");
	expect_error("date,id,value\n2021-01-31,A,abc\n", &o, HC_EDATA,
		     "u.csv:2:3: expected a number or a missing marker, found 'abc'");
	expect_error("date,id,value\n2021-01-31,A\n", &o, HC_EDATA,
		     "u.csv:2:2: row has 2 fields; expected 3 as in the header");
	expect_error("date,id,value\n", &o, HC_EDATA, "u.csv: no data rows after the header");  /* found by fuzzing */
	o.id_column = "date";
	expect_error("date,id,value\n2021-01-31,A,1\n", &o, HC_EUSAGE,
		     "u.csv: the date, id and value columns must be three different columns");
}

static void test_universe_missing_policies(void **state)
{
	static const char text[] =
		"date,A,B,C,D\n"
		"2021-01-31,0.0213,NA,0.0342,0.011\n"
		"2021-02-28,-0.0385,0.0266,,-0.02\n"
		"2021-03-31,0.0172,0.0093,.,0.013\n"
		"2021-04-30,0.0051,-0.0204,NaN,0.002\n"
		"2021-05-31,0.0094,0.0077,null,-0.004\n";
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	assert_int_equal(load(&u, text, NULL, &err), HC_OK);
	assert_int_equal(u->m, 2);
	assert_int_equal(u->m_read, 4);
	assert_string_equal(u->ids[1], "D");
	assert_true(u->x[5 + 4] == -0.004);
	assert_int_equal(u->ndropped, 2);
	assert_string_equal(u->dropped[0].id, "B");
	assert_string_equal(u->dropped[0].reason, "missing 1 of 5 periods");
	assert_string_equal(u->dropped[1].reason, "missing 4 of 5 periods");
	hc_universe_free(u);

	hc_universe_options_init(&o);
	o.missing = UNIVERSE_MISSING_PAIRWISE;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);   /* default 80% coverage keeps B */
	assert_int_equal(u->m, 3);
	assert_string_equal(u->ids[1], "B");
	assert_true(isnan(u->x[5 + 0]));
	assert_int_equal(u->has_missing, 1);
	assert_string_equal(u->dropped[0].reason, "coverage 20.0% below the minimum 80.0% (missing 4 of 5 periods)");
	hc_universe_free(u);
	o.min_coverage = 0.85;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_int_equal(u->m, 2);
	hc_universe_free(u);
	o.missing = UNIVERSE_MISSING_KEEP;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_int_equal(u->m, 4);
	assert_int_equal(u->ndropped, 0);
	hc_universe_free(u);
}

static void test_universe_too_few_left(void **state)
{
	expect_error("date,A,B,C\n2021-01-31,0.01,NA,0.03\n2021-02-28,0.02,0.01,\n2021-03-31,0.015,0.02,0.01\n",
		     NULL, HC_EDATA,
		     "u.csv: 1 of 3 securities left after 2 dropped under the complete-data policy "
		     "('B': missing 1 of 3 periods; 'C': missing 1 of 3 periods); expected at least 2");
	expect_error("date,A\n2021-01-31,0.01\n2021-02-28,0.02\n", NULL, HC_EDATA,
		     "u.csv: only 1 security in the file; expected at least 2");
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n", NULL, HC_EDATA,
		     "u.csv: only 1 period of returns; expected at least 2");
	expect_error("date,A,B\n", NULL, HC_EDATA,
		     "u.csv: no data rows after the header");
	expect_error("", NULL, HC_EDATA, "u.csv: empty file");
	expect_error("date\n2021-01-31\n", NULL, HC_EDATA, "u.csv:1: the header has no security ids");
}

static void test_universe_bad_cells(void **state)
{
	struct universe_options o;

	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-02-28,abc,0.01\n", NULL, HC_EDATA,
		     "u.csv:3:2: expected a number or a missing marker, found 'abc'");
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-02-28,\"x\ny\",0.01\n", NULL, HC_EDATA,
		     "u.csv:4:2: expected a number or a missing marker, found 'x\\ny'");   /* one-line message */
	expect_error("date,A,B\n2021-01-31,0.01,inf\n2021-02-28,0.2,0.01\n", NULL, HC_EDATA,
		     "u.csv:2:3: expected a number or a missing marker, found 'inf'");
	expect_error("date,A,B\n2021-01-31,0.01,-Infinity\n2021-02-28,0.2,0.01\n", NULL, HC_EDATA,
		     "u.csv:2:3: expected a number or a missing marker, found '-Infinity'");
	expect_error("date,A,B\n2021-01-31,0.01,1e400\n2021-02-28,0.2,0.01\n", NULL, HC_EDATA,
		     "u.csv:2:3: expected a number or a missing marker, found '1e400'");
	expect_error("date,A,B\n2021-02-30,0.01,0.02\n", NULL, HC_EDATA,
		     "u.csv:2:1: expected a date as YYYY-MM-DD or YYYY-MM, found '2021-02-30' (no such day)");
	expect_error("date,A,B\n31/01/2021,0.01,0.02\n", NULL, HC_EDATA,
		     "u.csv:2:1: expected a date as YYYY-MM-DD or YYYY-MM, found '31/01/2021'");
	hc_universe_options_init(&o);
	o.values = UNIVERSE_PRICES;
	expect_error("date,A,B\n2021-01-31,2.385,1\n2021-02-28,0,1.1\n2021-03-31,1,1\n", &o, HC_EDATA,
		     "u.csv:3:2: expected a positive price, found '0'");
	expect_error("date,A,B\n2021-01-31,2.385,1\n2021-02-28,-1.5,1.1\n", &o, HC_EDATA,
		     "u.csv:3:2: expected a positive price, found '-1.5'");
	expect_error("date,A,B\n2021-01-31,2.385,1%\n", &o, HC_EDATA,
		     "u.csv:2:3: expected a price, found the percent '1%'");
	/* A price ratio that overflows: prices parse, the return is infinite. */
	expect_error("date,A,B\n2021-01-31,1e-300,1\n2021-02-28,1e300,1.1\n2021-03-31,1,1.2\n", &o, HC_EDATA,
		     "u.csv: security 'A' has an infinite return on 2021-02-28; expected finite values");
}

static void test_universe_bad_ids(void **state)
{
	expect_error("date,A,B,A\n2021-01-31,0.01,0.02,0.03\n", NULL, HC_EDATA,
		     "u.csv:1:4: duplicate security id 'A' (also in column 2); expected unique ids");
	expect_error("date,Acme1,B,\" acme1\"\n2021-01-31,0.01,0.02,0.03\n", NULL, HC_EDATA,
		     "u.csv:1:4: security id ' acme1' differs only in case or surrounding spaces from 'Acme1' in column 2");
	expect_error("date,A,,C\n2021-01-31,0.01,0.02,0.03\n", NULL, HC_EDATA,
		     "u.csv:1:3: empty security id; expected a non-empty id");
	expect_error("date,A,\"\xC3\x28\"\n2021-01-31,0.01,0.02\n", NULL, HC_EDATA,
		     "u.csv:1:3: security id is not valid UTF-8");
}

static void test_universe_bad_rows_and_dates(void **state)
{
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-02-28,0.03\n", NULL, HC_EDATA,
		     "u.csv:3:2: row has 2 fields; expected 3 as in the header");
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-02-28,0.03,0.01,0.02\n", NULL, HC_EDATA,
		     "u.csv:3:4: row has more fields than the header's 3; expected 3 fields");
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-02-28,0.03,0.01\n2021-02-28,0.02,0.05\n", NULL, HC_EDATA,
		     "u.csv:4:1: duplicate date 2021-02-28 (also on line 3); expected each date once");
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-03-31,0.03,0.01\n\n2021-02-28,0.02,0.05\n", NULL, HC_EDATA,
		     "u.csv:5:1: date 2021-02-28 comes after 2021-03-31 on line 3; expected increasing dates");
	/* YYYY-MM means the month's last day, so it collides with that day */
	expect_error("date,A,B\n2021-01-31,0.01,0.02\n2021-01,0.03,0.01\n", NULL, HC_EDATA,
		     "u.csv:3:1: duplicate date 2021-01-31 (also on line 2)");
}

static void test_universe_zero_variance(void **state)
{
	struct universe_options o;

	expect_error("date,A,B\n2021-01-31,0.01,0.0125\n2021-02-28,0.03,0.0125\n2021-03-31,0.02,0.0125\n",
		     NULL, HC_EDATA,
		     "u.csv: security 'B' has zero variance (the same return 0.0125 in all 3 periods)");
	hc_universe_options_init(&o);
	o.values = UNIVERSE_PRICES;
	expect_error("date,A,B\n2021-01-31,2.385,7\n2021-02-28,2.4,7\n2021-03-31,2.5,7\n", &o, HC_EDATA,
		     "u.csv: security 'B' has zero variance (the same return 0 in all 2 periods)");
}

static void test_universe_bad_options(void **state)
{
	struct universe_options o;

	hc_universe_options_init(&o);
	o.min_coverage = 1.5;
	expect_error(wide3, &o, HC_EUSAGE, "minimum coverage 1.5 is out of range");
	hc_universe_options_init(&o);
	o.percent = 1;
	o.values = UNIVERSE_PRICES;
	expect_error(wide3, &o, HC_EUSAGE, "percent cells and prices exclude each other");
	hc_universe_options_init(&o);
	o.id_column = "id";
	expect_error(wide3, &o, HC_EUSAGE, "id and value column names apply only to the long layout");
	hc_universe_options_init(&o);
	o.periods_per_year = -12;
	expect_error(wide3, &o, HC_EUSAGE, "periods per year -12 is out of range");
	hc_universe_options_init(&o);
	o.delimiter = '|';
	expect_error(wide3, &o, HC_EUSAGE, "unsupported delimiter '|'");
}

static void test_universe_memory_budget(void **state)
{
	struct universe_options o;
	struct universe *u;
	struct hc_error err;
	char *text;
	size_t i, n = 0, cap = 1 << 20;

	/* 200 rows x 100 securities need 200*100*16 bytes = 0.31 MiB at the
	 * peak (row buffer plus transpose); a 200000-byte budget refuses it. */
	text = malloc(cap);
	assert_non_null(text);
	n += (size_t)snprintf(text + n, cap - n, "date");
	for (i = 0; i < 100; i++)
		n += (size_t)snprintf(text + n, cap - n, ",S%03zu", i);
	n += (size_t)snprintf(text + n, cap - n, "\n");
	for (i = 0; i < 200; i++) {
		size_t j;

		n += (size_t)snprintf(text + n, cap - n, "%04zu-01-31", 1800 + i);
		for (j = 0; j < 100; j++)
			n += (size_t)snprintf(text + n, cap - n, ",%.4f", 0.001 * (double)((i * 7 + j * 13) % 29) - 0.0145);
		n += (size_t)snprintf(text + n, cap - n, "\n");
	}
	hc_universe_options_init(&o);
	o.max_bytes = 200000;
	assert_int_equal(load(&u, text, &o, &err), HC_ENOMEM);
	assert_null(u);
	/* 200000 / 1600 bytes a row = 125 rows fit; the 126th needs 201600
	 * bytes = 0.19226 MiB, shown rounded up; the budget 0.19073 rounded down */
	assert_string_equal(err.message, "u.csv: universe too large: needs at least 0.2 MiB, budget 0.1 MiB");
	o.max_bytes = 1 << 20;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	assert_int_equal(u->m, 100);
	assert_int_equal(u->t, 200);
	assert_true(u->periods_per_year == 1);   /* year ends */
	hc_universe_free(u);
	free(text);
}

static int32_t day(const char *s)
{
	int32_t d = 0;

	assert_int_equal(hc_universe_parse_date(s, strlen(s), &d), 0);
	return d;
}

static void test_universe_dates(void **state)
{
	int32_t d;
	char buf[11];

	/* Python: date.fromisoformat(s).toordinal() - date(1970,1,1).toordinal() */
	assert_int_equal(day("2021-03-01"), 18687);
	assert_int_equal(day("2024-02-29"), 19782);
	assert_int_equal(day("2024-02"), 19782);     /* a month is its last day (leap year) */
	assert_int_equal(day("1969-12-31"), -1);
	assert_int_equal(day("2000-01-31"), 10987);
	assert_int_equal(day("1900-03-01"), -25508);
	assert_int_equal(hc_universe_parse_date("2023-02-29", 10, &d), -1);
	assert_int_equal(hc_universe_parse_date("1900-02-29", 10, &d), -1);  /* 1900 was not a leap year */
	assert_int_equal(hc_universe_parse_date("2021-13", 7, &d), -1);
	assert_int_equal(hc_universe_parse_date("2021-1-05", 9, &d), -1);
	assert_int_equal(hc_universe_parse_date("20210105", 8, &d), -1);
	hc_universe_format_date(-25508, buf);
	assert_string_equal(buf, "1900-03-01");
	hc_universe_format_date(19782, buf);
	assert_string_equal(buf, "2024-02-29");
}

static void test_universe_detect_periods(void **state)
{
	int32_t d[60];
	size_t i, n;

	/* trading days: weekdays from Monday 2021-01-04, no weekends */
	for (i = 0, n = 0; n < 60; i++) {
		int32_t x = day("2021-01-04") + (int32_t)i;

		if (((x % 7) + 7 + 4) % 7 != 0 && ((x % 7) + 7 + 4) % 7 != 6)
			d[n++] = x;
	}
	assert_true(hc_universe_detect_periods(d, n) == 252);
	for (i = 0; i < 60; i++)
		d[i] = day("2021-01-04") + (int32_t)i;
	assert_true(hc_universe_detect_periods(d, 60) == 365);   /* calendar days, weekends included */
	/* a Sunday-to-Thursday week is five trading days a week, as Monday to
	 * Friday is: 252, not 365 (weekdays from Sunday 2021-01-03) */
	for (i = 0, n = 0; n < 60; i++) {
		int32_t x = day("2021-01-03") + (int32_t)i, wd = ((x % 7) + 7 + 4) % 7;

		if (wd != 5 && wd != 6)
			d[n++] = x;
	}
	assert_true(hc_universe_detect_periods(d, n) == 252);
	/* six days (Monday to Saturday): 6/5 of 252 */
	for (i = 0, n = 0; n < 60; i++) {
		int32_t x = day("2021-01-04") + (int32_t)i;

		if (((x % 7) + 7 + 4) % 7 != 0)
			d[n++] = x;
	}
	assert_true(hc_universe_detect_periods(d, n) == 302);
	for (i = 0; i < 60; i++)
		d[i] = day("2021-01-08") + 7 * (int32_t)i;
	assert_true(hc_universe_detect_periods(d, 60) == 52);
	d[0] = day("2021-03-31");
	d[1] = day("2021-06-30");
	d[2] = day("2021-09-30");
	d[3] = day("2021-12-31");
	d[4] = day("2022-03-31");
	assert_true(hc_universe_detect_periods(d, 5) == 4);
	d[0] = day("2020-06-30");
	d[1] = day("2020-12-31");
	d[2] = day("2021-06-30");
	assert_true(hc_universe_detect_periods(d, 3) == 2);
	d[0] = day("2019-12-31");
	d[1] = day("2020-12-31");
	assert_true(hc_universe_detect_periods(d, 2) == 1);
	for (i = 0; i < 10; i++)
		d[i] = 10 * (int32_t)i;
	assert_true(hc_universe_detect_periods(d, 10) == 37);    /* round(365.25/10) */
	assert_true(hc_universe_detect_periods(d, 1) == 0);
	/* a missing month does not move the median */
	d[0] = day("2021-01-31");
	d[1] = day("2021-02-28");
	d[2] = day("2021-04-30");
	d[3] = day("2021-05-31");
	d[4] = day("2021-06-30");
	assert_true(hc_universe_detect_periods(d, 5) == 12);
}

static void test_universe_periods_override(void **state)
{
	struct universe_options o;
	struct universe *u;
	struct hc_error err;

	hc_universe_options_init(&o);
	o.periods_per_year = 13;
	assert_int_equal(load(&u, wide3, &o, &err), HC_OK);
	assert_true(u->periods_per_year == 13);
	assert_int_equal(u->periods_detected, 0);
	hc_universe_free(u);
}

static void test_universe_window_and_resample(void **state)
{
	static const char text[] =
		"date,A,B,C\n"
		"2021-01-31,0.0213,NA,0.0342\n"
		"2021-02-28,-0.0385,0.0266,0.0051\n"
		"2021-03-31,0.0172,0.0093,0.0051\n"
		"2021-04-30,0.0051,-0.0204,0.0051\n"
		"2021-05-31,0.0094,,0.0051\n";
	struct universe_options o;
	struct universe *u, *w, *r;
	struct hc_error err;
	size_t idx[4] = { 4, 0, 4, 2 };
	char d[11];

	hc_universe_options_init(&o);
	o.missing = UNIVERSE_MISSING_KEEP;
	assert_int_equal(load(&u, text, &o, &err), HC_OK);
	/* periods 1..3: B is complete there, C is constant there (dropped);
	 * periods 2..4: B has a gap and C is constant, only A is left */
	assert_int_equal(hc_universe_window(&w, u, 1, 3, UNIVERSE_MISSING_COMPLETE, 0.8, &err), HC_OK);
	assert_int_equal(w->m, 2);
	assert_int_equal(w->t, 3);
	assert_string_equal(w->ids[1], "B");
	assert_true(w->x[3 + 2] == -0.0204);
	assert_int_equal(w->ndropped, 1);
	assert_string_equal(w->dropped[0].id, "C");
	assert_string_equal(w->dropped[0].reason, "zero variance in the window");
	hc_universe_format_date(w->dates[0], d);
	assert_string_equal(d, "2021-02-28");
	hc_universe_free(w);
	/* periods 0..2: B is missing one, so complete-data keeps A and C */
	assert_int_equal(hc_universe_window(&w, u, 0, 3, UNIVERSE_MISSING_COMPLETE, 0.8, &err), HC_OK);
	assert_int_equal(w->m, 2);
	assert_string_equal(w->ids[1], "C");
	hc_universe_free(w);
	assert_int_equal(hc_universe_window(&w, u, 1, 3, UNIVERSE_MISSING_KEEP, 0.8, &err), HC_OK);
	assert_int_equal(w->m, 3);
	hc_universe_free(w);
	assert_int_equal(hc_universe_window(&w, u, 2, 3, UNIVERSE_MISSING_COMPLETE, 0.8, &err), HC_EDATA);
	assert_null(w);
	assert_string_equal(err.message, "window 2021-03-31 to 2021-05-31: 1 of 3 securities left after 2 dropped; expected at least 2");
	assert_int_equal(hc_universe_window(&w, u, 3, 3, UNIVERSE_MISSING_COMPLETE, 0.8, &err), HC_EUSAGE);

	assert_int_equal(hc_universe_resample(&r, u, idx, 4, &err), HC_OK);
	assert_int_equal(r->t, 4);
	assert_true(r->x[0] == 0.0094);
	assert_true(r->x[1] == 0.0213);
	assert_true(isnan(r->x[4 + 1]));
	assert_int_equal(r->has_missing, 1);
	assert_int_equal(r->dates[0], u->dates[4]);
	hc_universe_free(r);
	idx[3] = 5;
	assert_int_equal(hc_universe_resample(&r, u, idx, 4, &err), HC_EUSAGE);
	hc_universe_free(u);
}

static void test_universe_file(void **state)
{
	char path[4096];
	struct universe *u;
	struct hc_error err;

	check_write_temp(path, sizeof path, "universe_small.csv", wide3);
	assert_int_equal(hc_universe_load(&u, path, NULL, &err), HC_OK);
	assert_int_equal(u->m, 3);
	assert_string_equal(u->source, path);
	hc_universe_free(u);
	assert_int_equal(hc_universe_load(&u, "/nonexistent/u.csv", NULL, &err), HC_EIO);
	assert_null(u);
	assert_string_equal(err.message, "cannot open '/nonexistent/u.csv': No such file or directory");
}

/* Allocation-failure sweeps (heapcheck.h): HC_ENOMEM each time and
 * nothing leaked (glibc mallinfo2).  A sweep's context: the universe made
 * and what it is made from. */
struct made {
	struct universe *u;              /* the result */
	const char *text;                /* load: the CSV text and options */
	const struct universe_options *o;
	const struct universe *from;     /* window and resample: the source */
	const size_t *idx;
};

static int made_load(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	return load(&w->u, w->text, w->o, err);
}

static void made_release(void *ctx)
{
	hc_universe_free(((struct made *)ctx)->u);
}

static void made_none(void *ctx)
{
	assert_null(((struct made *)ctx)->u);
}

/* Every allocation index of a small load fails in turn. */
static void alloc_loop(const char *text, const struct universe_options *o)
{
	struct made w = { NULL, text, o, NULL, NULL };
	struct heapcheck_call call = { made_load, made_release, made_none, &w };

	assert_true(heapcheck_sweep(&call) > 5);
}

static void test_universe_allocation_failure(void **state)
{
	struct universe_options o;
	static const char missing[] =
		"date,A,B,C\n2021-01-31,0.01,NA,0.03\n2021-02-28,0.02,0.01,0.02\n2021-03-31,0.015,0.02,0.01\n";

	alloc_loop(wide3, NULL);
	alloc_loop(missing, NULL);
	hc_universe_options_init(&o);
	o.layout = UNIVERSE_LONG;
	alloc_loop("date,id,value\n2021-02-28,B,0.02\n2021-01-31,A,0.01\n2021-02-28,A,0.03\n"
		   "2021-01-31,B,-0.01\n2021-03-31,A,0.01\n2021-03-31,B,0.04\n", &o);
}

static int made_window(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	return hc_universe_window(&w->u, w->from, 1, 3, UNIVERSE_MISSING_COMPLETE, 0.8, err);
}

static int made_resample(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	return hc_universe_resample(&w->u, w->from, w->idx, 3, err);
}

static void test_universe_derived_allocation_failure(void **state)
{
	struct universe *u;
	struct hc_error err;
	size_t idx[3] = { 2, 0, 1 };
	struct made w = { NULL, NULL, NULL, NULL, idx };
	struct heapcheck_call window = { made_window, made_release, NULL, &w };
	struct heapcheck_call resample = { made_resample, made_release, NULL, &w };

	assert_int_equal(load(&u, wide3, NULL, &err), HC_OK);
	w.from = u;
	heapcheck_sweep(&window);
	heapcheck_sweep(&resample);
	hc_universe_free(u);
}

/* --frequency monthly on returns: (1 + r_1)(1 + r_2) - 1 within each month,
 * missing when none is observed; dated by the month's last date read.
 * Values worked by hand (exact in binary: 0.5, 0.25, 1.0, -0.5). */
static void test_universe_frequency_compounds(void **state)
{
	static const char text[] =
		"date,LIR901,LIR902\n"
		"2024-01-30,0.5,\n"
		"2024-01-31,0.5,\n"
		"2024-02-01,0.25,1.0\n"
		"2024-02-29,-0.5,\n"
		"2024-03-04,0.25,-0.5\n"
		"2024-03-28,0.5,0.25\n";
	struct universe_options o;
	struct universe *u = NULL;
	struct hc_error err;

	(void)state;
	hc_universe_options_init(&o);
	o.missing = UNIVERSE_MISSING_KEEP;
	o.frequency = UNIVERSE_FREQ_MONTHLY;
	assert_int_equal(hc_universe_load_buffer(&u, "u.csv", text, strlen(text), &o, &err), HC_OK);
	assert_int_equal(u->t, 3);
	assert_int_equal(u->periods_read, 6);
	assert_close(u->x[0], 1.25, 0);            /* 1.5 x 1.5 - 1 */
	assert_close(u->x[1], -0.375, 0);          /* 1.25 x 0.5 - 1 */
	assert_close(u->x[2], 0.875, 0);           /* 1.25 x 1.5 - 1 */
	assert_true(isnan(u->x[3]));                      /* nothing in January */
	assert_close(u->x[4], 1.0, 0);
	assert_close(u->x[5], -0.375, 0);          /* 0.5 x 1.25 - 1 */
	assert_int_equal(u->dates[0], 19753);             /* 2024-01-31 */
	assert_int_equal(u->dates[1], 19782);             /* 2024-02-29 */
	assert_int_equal(u->dates[2], 19810);             /* 2024-03-28 */
	hc_universe_free(u);
}

/* --bad-cells: a zero price and #N/A stop the load naming line and column,
 * or (missing) become gaps, counted, the first named. */
static void test_universe_bad_cells_option(void **state)
{
	static const char text[] =
		"date,LIR901,LIR902\n"
		"2024-01-02,10,20\n"
		"2024-01-03,#N/A,25\n"
		"2024-01-04,12.5,0\n"
		"2024-01-05,15,30\n";
	struct universe_options o;
	struct universe *u = NULL;
	struct hc_error err;

	(void)state;
	hc_universe_options_init(&o);
	o.values = UNIVERSE_PRICES;
	o.missing = UNIVERSE_MISSING_KEEP;
	assert_int_equal(hc_universe_load_buffer(&u, "u.csv", text, strlen(text), &o, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "u.csv:3:2:"));
	assert_non_null(strstr(err.message, "#N/A"));
	o.bad_cells = UNIVERSE_BAD_MISSING;
	assert_int_equal(hc_universe_load_buffer(&u, "u.csv", text, strlen(text), &o, &err), HC_OK);
	assert_int_equal(u->bad_cells, 2);
	assert_string_equal(u->bad_first, "u.csv:3:2: '#N/A' (a spreadsheet error value)");
	assert_int_equal(u->t, 3);
	assert_true(isnan(u->x[0]) && isnan(u->x[1]));   /* around the #N/A */
	assert_close(u->x[2], 0.2, 1e-15);         /* 15 / 12.5 - 1 */
	assert_close(u->x[3], 0.25, 0);            /* 25 / 20 - 1 */
	assert_true(isnan(u->x[4]) && isnan(u->x[5]));   /* around the zero */
	hc_universe_free(u);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_universe_wide_returns),
		cmocka_unit_test(test_universe_prices_to_returns),
		cmocka_unit_test(test_universe_percent),
		cmocka_unit_test(test_universe_bom_crlf_semicolon_quotes),
		cmocka_unit_test(test_universe_date_column_option),
		cmocka_unit_test(test_universe_long_layout),
		cmocka_unit_test(test_universe_long_errors),
		cmocka_unit_test(test_universe_missing_policies),
		cmocka_unit_test(test_universe_too_few_left),
		cmocka_unit_test(test_universe_bad_cells_option),
		cmocka_unit_test(test_universe_bad_ids),
		cmocka_unit_test(test_universe_bad_rows_and_dates),
		cmocka_unit_test(test_universe_zero_variance),
		cmocka_unit_test(test_universe_bad_options),
		cmocka_unit_test(test_universe_memory_budget),
		cmocka_unit_test(test_universe_dates),
		cmocka_unit_test(test_universe_detect_periods),
		cmocka_unit_test(test_universe_periods_override),
		cmocka_unit_test(test_universe_window_and_resample),
		cmocka_unit_test(test_universe_file),
		cmocka_unit_test(test_universe_frequency_compounds),
		cmocka_unit_test(test_universe_bad_cells),
		cmocka_unit_test(test_universe_allocation_failure),
		cmocka_unit_test(test_universe_derived_allocation_failure),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
