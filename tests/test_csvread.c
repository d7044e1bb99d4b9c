/*
 * Unit tests for csvread: field positions, quoting, delimiters, errors,
 * strict numbers, missing markers, UTF-8, allocation failure.
 *
 * References: RFC 4180 (CSV quoting: a quoted field may hold the delimiter,
 * a line break and doubled quotes); RFC 3629 and the Unicode Standard,
 * Table 3-7 "Well-Formed UTF-8 Byte Sequences"; glibc's strtod (correctly
 * rounded decimal conversion) as the reference for number parsing.
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

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

#include "heapcheck.h"

#define MAXF 64

struct got {
	char text[MAXF][64];
	size_t record[MAXF], column[MAXF], line[MAXF];
	int quoted[MAXF];
	size_t nf;
	size_t rec_fields[MAXF], rec_line[MAXF];
	size_t nr;
	char last_text[64];
	size_t last_line, last_rec_line;
	int stop_at;      /* field index at which to stop, or -1 */
};

static int got_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct got *g = ctx;

	if ((int)g->nf == g->stop_at)
		return hc_error(err, HC_EDATA, "stopped at field %zu", g->nf);
	if (g->nf < MAXF) {
		snprintf(g->text[g->nf], sizeof g->text[0], "%s", f->text);
		g->record[g->nf] = f->record;
		g->column[g->nf] = f->column;
		g->line[g->nf] = f->line;
		g->quoted[g->nf] = f->quoted;
	}
	snprintf(g->last_text, sizeof g->last_text, "%s", f->text);
	g->last_line = f->line;
	g->nf++;
	return HC_OK;
}

static int got_record(void *ctx, size_t record, size_t nfields, size_t line,
		      struct hc_error *err)
{
	struct got *g = ctx;

	if (g->nr < MAXF) {
		g->rec_fields[g->nr] = nfields;
		g->rec_line[g->nr] = line;
	}
	g->last_rec_line = line;
	g->nr++;
	return HC_OK;
}

static int run(struct got *g, const char *data, size_t len, char delim,
	       char *used, struct hc_error *err)
{
	struct csvread_options o;
	struct csvread_handler h = { got_field, got_record, g };

	memset(g, 0, sizeof *g);
	g->stop_at = -1;
	hc_csvread_options_init(&o);
	o.delimiter = delim;
	return hc_csvread_buffer("t.csv", data, len, &o, &h, used, err);
}

/* RFC 4180 section 2: quoted fields may contain the delimiter, CRLF and
 * doubled quotes; a BOM and CRLF line ends are accepted; positions are by
 * hand from the text below. */
static void test_csvread_positions_and_quoting(void **state)
{
	static const char data[] =
		"\xEF\xBB\xBF" "date,\"A,1\",B\r\n"
		"2021-01-29,\"x\r\ny\",\"say \"\"hi\"\"\"\r\n"
		"\r\n"
		"  \r\n"
		"2021-02-26, 2.385 ,\r\n";
	struct got g;
	struct hc_error err;
	char used = 0;

	assert_int_equal(run(&g, data, sizeof data - 1, 0, &used, &err), HC_OK);
	assert_int_equal(used, ',');
	assert_int_equal(g.nf, 9);
	assert_string_equal(g.text[0], "date");          /* BOM gone */
	assert_string_equal(g.text[1], "A,1");
	assert_int_equal(g.quoted[1], 1);
	assert_int_equal(g.quoted[0], 0);
	assert_string_equal(g.text[4], "x\r\ny");
	assert_int_equal(g.line[4], 3);                   /* ends on the later line */
	assert_int_equal(g.column[4], 2);
	assert_string_equal(g.text[5], "say \"hi\"");
	assert_int_equal(g.line[5], 3);
	assert_int_equal(g.record[5], 1);
	assert_string_equal(g.text[7], "2.385");         /* libcsv trims blanks */
	assert_int_equal(g.line[7], 6);                   /* blank lines skipped, still counted */
	assert_int_equal(g.record[7], 2);
	assert_string_equal(g.text[8], "");
	assert_int_equal(g.column[8], 3);
	assert_int_equal(g.nr, 3);
	assert_int_equal(g.rec_fields[0], 3);
	assert_int_equal(g.rec_line[1], 3);
	assert_int_equal(g.rec_line[2], 6);
}

static void test_csvread_detects_semicolon(void **state)
{
	static const char semi[] = "date;\"a,b\";c\n2021-01-29;1,5;2\n";
	static const char both[] = "date;a,b\n1;2,3\n";
	struct got g;
	struct hc_error err;
	char used = 0;

	assert_int_equal(run(&g, semi, sizeof semi - 1, 0, &used, &err), HC_OK);
	assert_int_equal(used, ';');                      /* the ',' is inside quotes */
	assert_string_equal(g.text[1], "a,b");
	assert_string_equal(g.text[4], "1,5");
	assert_int_equal(run(&g, both, sizeof both - 1, 0, &used, &err), HC_OK);
	assert_int_equal(used, ',');                      /* ';' only when no ',' */
	assert_int_equal(g.nf, 4);
	assert_int_equal(run(&g, both, sizeof both - 1, ';', &used, &err), HC_OK);
	assert_int_equal(used, ';');
	assert_string_equal(g.text[1], "a,b");
	assert_int_equal(run(&g, both, sizeof both - 1, '\t', &used, &err), HC_EUSAGE);
}

/* A given delimiter still drops the byte-order mark; a file with no line
 * break and no ',' is not held back whole: it fails on its first field. */
static void test_csvread_fixed_delimiter_and_long_first_line(void **state)
{
	static const char bom[] = "\xEF\xBB\xBF" "a;b\n1;2\n";
	struct got g;
	struct hc_error err;
	size_t n = 3 * 1024 * 1024;
	char *big = malloc(n), used = 0;

	assert_int_equal(run(&g, bom, sizeof bom - 1, ';', &used, &err), HC_OK);
	assert_string_equal(g.text[0], "a");
	assert_int_equal(g.nf, 4);
	assert_int_equal(run(&g, "ab", 2, ';', &used, &err), HC_OK);   /* shorter than a BOM */
	assert_string_equal(g.text[0], "ab");
	assert_non_null(big);
	memset(big, 'x', n);
	assert_int_equal(run(&g, big, n, 0, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "t.csv:1:1: field longer than 4096 bytes");
	free(big);
}

static void test_csvread_no_final_newline(void **state)
{
	static const char data[] = "a,b\n1,2";
	struct got g;
	struct hc_error err;

	assert_int_equal(run(&g, data, sizeof data - 1, 0, NULL, &err), HC_OK);
	assert_int_equal(g.nf, 4);
	assert_int_equal(g.nr, 2);
	assert_int_equal(g.rec_line[1], 2);
	assert_int_equal(g.line[3], 2);
}

static void test_csvread_empty_file(void **state)
{
	struct got g;
	struct hc_error err;

	assert_int_equal(run(&g, "", 0, 0, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "t.csv: empty file");
	assert_int_equal(run(&g, "\xEF\xBB\xBF", 3, 0, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "t.csv: empty file");
	assert_int_equal(run(&g, NULL, 0, 0, NULL, &err), HC_EDATA);   /* found by fuzzing: no pointer arithmetic on NULL */
	assert_string_equal(err.message, "t.csv: empty file");
	assert_int_equal(run(&g, "\n\r\n  \n", 6, 0, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "t.csv: empty file");
}

static void test_csvread_nul_byte(void **state)
{
	static const char data[] = "a,b\n1,x\0y\n";
	struct got g;
	struct hc_error err;

	assert_int_equal(run(&g, data, sizeof data - 1, 0, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "t.csv:2:2: NUL byte in the file; expected text");
}

static void test_csvread_unterminated_quote(void **state)
{
	static const char data[] = "a,b\n1,\"open\n2,3\n";
	struct got g;
	struct hc_error err;

	assert_int_equal(run(&g, data, sizeof data - 1, 0, NULL, &err), HC_EDATA);
	assert_string_equal(err.message,
		"t.csv:2:2: unterminated quoted field: the quote opened here is never closed");
}

static void test_csvread_stray_quote(void **state)
{
	static const char a[] = "a,b\n1,x\"y\n";
	static const char b[] = "a,b\n1,\"x\"y\n";
	struct got g;
	struct hc_error err;

	assert_int_equal(run(&g, a, sizeof a - 1, 0, NULL, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "t.csv:2:2: stray quote"));
	assert_int_equal(run(&g, b, sizeof b - 1, 0, NULL, &err), HC_EDATA);
	assert_non_null(strstr(err.message, "t.csv:2:2: stray quote"));
}

static void test_csvread_field_too_long(void **state)
{
	struct csvread_options o;
	struct csvread_handler h = { got_field, got_record, NULL };
	struct got g;
	struct hc_error err;
	static const char data[] = "a,b\n1,123456789\n";

	memset(&g, 0, sizeof g);
	g.stop_at = -1;
	h.ctx = &g;
	hc_csvread_options_init(&o);
	o.max_field = 8;
	assert_int_equal(hc_csvread_buffer("t.csv", data, sizeof data - 1, &o, &h, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "t.csv:2:2: field longer than 8 bytes");
}

static void test_csvread_callback_stops(void **state)
{
	struct csvread_options o;
	struct csvread_handler h = { got_field, got_record, NULL };
	struct got g;
	struct hc_error err;
	static const char data[] = "a,b\n1,2\n3,4\n";

	memset(&g, 0, sizeof g);
	g.stop_at = 3;
	h.ctx = &g;
	hc_csvread_options_init(&o);
	assert_int_equal(hc_csvread_buffer("t.csv", data, sizeof data - 1, &o, &h, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "stopped at field 3");
	assert_int_equal(g.nf, 3);
}

/* A file larger than one read chunk, with a quoted field straddling the
 * chunk boundary: fields and lines must come out as written. */
static void test_csvread_file_streams_across_chunks(void **state)
{
	const char *tmp = getenv("HOLDCOUNT_TEST_TMP");
	char path[4096];
	struct csvread_options o;
	struct csvread_handler h = { got_field, got_record, NULL };
	struct got g;
	struct hc_error err;
	FILE *fp;
	size_t i, n = 0;
	char used;

	assert_non_null(tmp);
	snprintf(path, sizeof path, "%s/csvread_chunks.csv", tmp);
	fp = fopen(path, "wb");
	assert_non_null(fp);
	n += (size_t)fprintf(fp, "k;v\n");
	for (i = 0; n < 65536 - 8; i++)
		n += (size_t)fprintf(fp, "%zu;x\n", i);
	fprintf(fp, "last;\"a;b\nc;d\"\n");
	fclose(fp);
	memset(&g, 0, sizeof g);
	g.stop_at = -1;
	h.ctx = &g;
	hc_csvread_options_init(&o);
	assert_int_equal(hc_csvread_file(path, &o, &h, &used, &err), HC_OK);
	assert_int_equal(used, ';');
	assert_int_equal(g.nr, i + 2);
	assert_int_equal(g.nf, 2 * (i + 2));
	assert_string_equal(g.last_text, "a;b\nc;d");
	assert_int_equal(g.last_line, i + 3);          /* header, i rows, then two lines */
	assert_int_equal(g.last_rec_line, i + 3);
	assert_int_equal(hc_csvread_file("/nonexistent/dir/u.csv", &o, &h, NULL, &err), HC_EIO);
	assert_string_equal(err.message, "cannot open '/nonexistent/dir/u.csv': No such file or directory");
	assert_int_equal(hc_csvread_file(tmp, &o, &h, NULL, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot read '"));
}

struct last_field {
	char text[64];
	size_t line, column;
	size_t count;
};

static int last_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct last_field *l = ctx;

	snprintf(l->text, sizeof l->text, "%s", f->text);
	l->line = f->line;
	l->column = f->column;
	l->count++;
	return HC_OK;
}

static void test_csvread_file_last_field_position(void **state)
{
	const char *tmp = getenv("HOLDCOUNT_TEST_TMP");
	char path[4096];
	struct csvread_options o;
	struct last_field l = { "", 0, 0, 0 };
	struct csvread_handler h = { last_field, NULL, &l };
	struct hc_error err;
	FILE *fp;
	size_t i, lines = 1, n = 0;

	snprintf(path, sizeof path, "%s/csvread_last.csv", tmp);
	fp = fopen(path, "wb");
	assert_non_null(fp);
	n += (size_t)fprintf(fp, "k,v\r\n");
	for (i = 0; n < 3 * 65536; i++, lines++)
		n += (size_t)fprintf(fp, "%zu,2.385\r\n", i);
	fprintf(fp, "end,\"multi\r\nline\"\r\n");
	lines += 2;
	fclose(fp);
	hc_csvread_options_init(&o);
	assert_int_equal(hc_csvread_file(path, &o, &h, NULL, &err), HC_OK);
	assert_string_equal(l.text, "multi\r\nline");
	assert_int_equal(l.line, lines);
	assert_int_equal(l.column, 2);
	assert_int_equal(l.count, 2 * (i + 2));
}

/* Every allocation of a small read fails in turn: HC_ENOMEM each time,
 * nothing leaked (glibc's mallinfo2 counts the heap in use). */
static int read_small(void *ctx, struct hc_error *err)
{
	static const char data[] = "date,\"A\",B\n2021-01-29,\"2.385\",1\n";

	return run(ctx, data, sizeof data - 1, 0, NULL, err);
}

static void test_csvread_allocation_failure(void **state)
{
	struct got g;
	struct heapcheck_call call = { read_small, NULL, NULL, &g };

	/* the first line and libcsv's field buffer */
	assert_true(heapcheck_sweep(&call) >= 2);
}

/* Numbers: accepted texts equal glibc strtod of the same text. */
static void test_csvread_parse_number_accepts(void **state)
{
	static const char *const ok[] = {
		"2.385", "-0.0417", "+12", ".5", "5.", "1e-3", "2.5E+2", "  7.125\t",
		"0.1", "123456789012345678901234567890", "9007199254740993",
		"1.7976931348623157e308", "4.9e-324", "0.000000000000000000000000012345",
		"3.14159265358979323846264338327950288"
	};
	double v;
	int pct;
	size_t i;

	for (i = 0; i < sizeof ok / sizeof ok[0]; i++) {
		assert_int_equal(hc_csvread_parse_number(ok[i], strlen(ok[i]), &v, &pct), 0);
		assert_true(v == strtod(ok[i], NULL));   /* bit-exact vs glibc strtod */
		assert_int_equal(pct, 0);
	}
	/* "-0" is negative zero, as strtod gives. */
	assert_int_equal(hc_csvread_parse_number("-0", 2, &v, &pct), 0);
	assert_true(v == 0.0 && signbit(v));
	/* A trailing '%' is exactly the decimal moved two places. */
	assert_int_equal(hc_csvread_parse_number("1.23%", 5, &v, &pct), 0);
	assert_int_equal(pct, 1);
	assert_true(v == strtod("0.0123", NULL));
	assert_int_equal(hc_csvread_parse_number("-12.5 %", 7, &v, &pct), 0);
	assert_true(v == -0.125);
	/* The length bounds the text: a digit past len is not read. */
	assert_int_equal(hc_csvread_parse_number("2.3859", 5, &v, &pct), 0);
	assert_true(v == strtod("2.385", NULL));
}

/* 20000 random decimals of the shapes return files hold, against strtod. */
static void test_csvread_parse_number_matches_strtod(void **state)
{
	char buf[64];
	double v;
	int i, pct;
	unsigned long s = 20240229UL;

	for (i = 0; i < 20000; i++) {
		int digits, exp10;
		long long mant;

		s = s * 6364136223846793005UL + 1442695040888963407UL;   /* fixed-seed LCG (Knuth's MMIX constants) */
		digits = (int)(s >> 60) + 1;
		mant = (long long)((s >> 8) % 10000000000000000ULL);
		exp10 = (int)((s >> 3) % 40) - 20;
		snprintf(buf, sizeof buf, "%s%lld.%.*de%d", (s & 1) ? "-" : "",
			 mant % 1000, digits, (int)(mant % 1000000000), exp10);
		assert_int_equal(hc_csvread_parse_number(buf, strlen(buf), &v, &pct), 0);
		assert_true(v == strtod(buf, NULL));
	}
}

static void test_csvread_parse_number_rejects(void **state)
{
	static const char *const bad[] = {
		"", "  ", "+", "-", ".", "1e", "1e+", "0x1A", "inf", "-Infinity", "nan",
		"1,5", "1 000", "1.2.3", "--1", "1e400", "-1e400", "12abc", "%", "1%%",
		"1e5.5", "e5", "1_000"
	};
	double v = 2.385;
	size_t i;

	for (i = 0; i < sizeof bad / sizeof bad[0]; i++) {
		assert_int_equal(hc_csvread_parse_number(bad[i], strlen(bad[i]), &v, NULL), -1);
		assert_true(v == 2.385);   /* untouched on failure */
	}
}

static void test_csvread_is_missing(void **state)
{
	static const char *const yes[] = { "", " ", "NA", "na", "NaN", "nan", "N/A", "n/a", ".", "null", "NULL", " NA " };
	static const char *const no[] = { "0", "NAN1", "none", "-", "..", "#N/A", "nil" };
	size_t i;

	for (i = 0; i < sizeof yes / sizeof yes[0]; i++)
		assert_int_equal(hc_csvread_is_missing(yes[i], strlen(yes[i])), 1);
	for (i = 0; i < sizeof no / sizeof no[0]; i++)
		assert_int_equal(hc_csvread_is_missing(no[i], strlen(no[i])), 0);
}

static void test_csvread_quote(void **state)
{
	char buf[CSVREAD_QUOTE_BUF];
	char long_cell[100];

	assert_string_equal(hc_csvread_quote("x\r\ny\tz\001", 7, buf), "x\\r\\ny\\tz?");
	memset(long_cell, 'k', sizeof long_cell);
	hc_csvread_quote(long_cell, sizeof long_cell, buf);
	assert_int_equal(strlen(buf), CSVREAD_QUOTE_MAX + 3);
	assert_string_equal(buf + CSVREAD_QUOTE_MAX, "...");
	/* the worst case fills the buffer exactly: every byte escaped, then "..." */
	memset(long_cell, '\n', sizeof long_cell);
	hc_csvread_quote(long_cell, sizeof long_cell, buf);
	assert_int_equal(strlen(buf), CSVREAD_QUOTE_BUF - 1);
}

/* Unicode Standard Table 3-7: well-formed sequences and classic ill-formed ones. */
static void test_csvread_utf8_valid(void **state)
{
	static const char *const good[] = {
		"ABC", "\xC3\xA9", "\xE2\x82\xAC", "\xF0\x9F\x98\x80", "\xED\x9F\xBF",
		"\xEE\x80\x80", "\xF4\x8F\xBF\xBF", ""
	};
	static const char *const bad[] = {
		"\xC0\x80", "\xC1\xBF", "\xE0\x80\x80", "\xED\xA0\x80", "\xF0\x80\x80\x80",
		"\xF4\x90\x80\x80", "\xF5\x80\x80\x80", "\x80", "\xC3", "\xE2\x82", "\xC3\x28", "\xFF"
	};
	size_t i;

	for (i = 0; i < sizeof good / sizeof good[0]; i++)
		assert_int_equal(hc_csvread_utf8_valid(good[i], strlen(good[i])), 1);
	for (i = 0; i < sizeof bad / sizeof bad[0]; i++)
		assert_int_equal(hc_csvread_utf8_valid(bad[i], strlen(bad[i])), 0);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_csvread_positions_and_quoting),
		cmocka_unit_test(test_csvread_detects_semicolon),
		cmocka_unit_test(test_csvread_fixed_delimiter_and_long_first_line),
		cmocka_unit_test(test_csvread_no_final_newline),
		cmocka_unit_test(test_csvread_empty_file),
		cmocka_unit_test(test_csvread_nul_byte),
		cmocka_unit_test(test_csvread_unterminated_quote),
		cmocka_unit_test(test_csvread_stray_quote),
		cmocka_unit_test(test_csvread_field_too_long),
		cmocka_unit_test(test_csvread_callback_stops),
		cmocka_unit_test(test_csvread_file_streams_across_chunks),
		cmocka_unit_test(test_csvread_file_last_field_position),
		cmocka_unit_test(test_csvread_allocation_failure),
		cmocka_unit_test(test_csvread_parse_number_accepts),
		cmocka_unit_test(test_csvread_parse_number_matches_strtod),
		cmocka_unit_test(test_csvread_parse_number_rejects),
		cmocka_unit_test(test_csvread_is_missing),
		cmocka_unit_test(test_csvread_quote),
		cmocka_unit_test(test_csvread_utf8_valid),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
