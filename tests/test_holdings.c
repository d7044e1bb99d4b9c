/*
 * Unit tests for the holdings reader and the id,label map.
 *
 * References: the expected weights are exact arithmetic on the values in
 * each buffer (worked beside each check); the messages are the contract in
 * holdings.h ("FILE:LINE:COLUMN: found ..., expected ...").
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include <cmocka.h>

#include "holdcount/holdings.h"
#include "holdcount/memory.h"

#include "heapcheck.h"

/* cmocka 1.1 has no double assertion: |got - want| <= tol, values printed. */
static void near(double got, double want, double tol, const char *what, int line)
{
	if (!(fabs(got - want) <= tol)) {
		print_error("%s = %.17g, expected %.17g within %g\n", what, got, want, tol);
		_fail(__FILE__, line);
	}
}
#define assert_near(got, want, tol) near((got), (want), (tol), #got, __LINE__)

static int load(struct holdings **h, const char *text, const struct holdings_options *opt,
		struct hc_error *err)
{
	hc_error_clear(err);
	return hc_holdings_load_buffer(h, "f.csv", text, strlen(text), opt, err);
}

static void test_holdings_reads_weights_by_fund(void **state)
{
	/* Rows of two funds interleaved; fund order is first appearance. */
	const char *text =
		"fund,id,weight\n"
		"Lirrand Growth Fund F,QX101,0.4125\n"
		"Lirrand Income Fund G,QX205,0.25\n"
		"Lirrand Growth Fund F,QX117,0.3375\n"
		"Lirrand Income Fund G,QX101,0.75\n"
		"Lirrand Growth Fund F,QX140,0.25\n";
	struct holdings *h;
	struct hc_error err;

	assert_int_equal(load(&h, text, NULL, &err), HC_OK);
	assert_int_equal(h->nfunds, 2);
	assert_int_equal(h->kind, HOLDINGS_WEIGHTS);
	assert_string_equal(h->funds[0].name, "Lirrand Growth Fund F");
	assert_int_equal(h->funds[0].n, 3);
	assert_string_equal(h->funds[0].h[1].id, "QX117");
	assert_string_equal(h->funds[0].h[1].issuer, "QX117");   /* issuer = id without the column */
	assert_int_equal(h->funds[0].h[1].line, 4);
	/* 0.4125 + 0.3375 + 0.25 = 1 (exact arithmetic): weights unchanged within rounding */
	assert_near(h->funds[0].raw_sum, 1.0, 1e-15);
	assert_near(h->funds[0].h[0].weight, 0.4125, 1e-15);
	assert_string_equal(h->funds[1].name, "Lirrand Income Fund G");
	assert_int_equal(h->funds[1].n, 2);
	assert_near(h->funds[1].h[1].weight, 0.75, 1e-15);
	assert_int_equal(h->nwarnings, 0);
	hc_holdings_free(h);
}

static void test_holdings_normalises_values_and_reads_issuers(void **state)
{
	/* Market values 137500 + 412500 + 550000 = 1100000, so the weights are
	 * 0.125, 0.375 and 0.5 exactly; ';' as the delimiter, CRLF line ends. */
	const char *text =
		"Fund;ID;Value;Issuer\r\n"
		"Cedar;QX301;137500.00;ISS-A\r\n"
		"Cedar;QX302;412500.00;ISS-A\r\n"
		"Cedar;QX303;550000.00;ISS-B\r\n";
	struct holdings *h;
	struct hc_error err;

	assert_int_equal(load(&h, text, NULL, &err), HC_OK);
	assert_int_equal(h->kind, HOLDINGS_VALUES);
	assert_true(h->has_issuer);
	assert_near(h->funds[0].raw_sum, 1100000.0, 0);
	assert_near(h->funds[0].h[0].weight, 0.125, 1e-15);
	assert_near(h->funds[0].h[1].weight, 0.375, 1e-15);
	assert_near(h->funds[0].h[2].weight, 0.5, 1e-15);
	assert_string_equal(h->funds[0].h[1].issuer, "ISS-A");
	assert_int_equal(h->nwarnings, 0);   /* values are not expected to sum to 1 */
	hc_holdings_free(h);
}

static void test_holdings_warns_and_normalises_off_sums(void **state)
{
	/* Sum 0.9871 is off 1 by 1.29% > 0.5%: warned, then 0.4936/0.9871 etc.
	 * Sum 0.997 is within 0.5%: normalised silently.  Percent cells
	 * divide by 100 (csvread's contract). */
	const char *text =
		"fund,id,weight\n"
		"Dogwood,QX1,0.4936\n"
		"Dogwood,QX2,0.4935\n"
		"Elm,QX1,49.85%\n"
		"Elm,QX2,49.85%\n"
		"Elm,QX3,0\n";
	struct holdings *h;
	struct hc_error err;

	assert_int_equal(load(&h, text, NULL, &err), HC_OK);
	assert_near(h->funds[0].raw_sum, 0.9871, 1e-15);
	assert_near(h->funds[0].h[0].weight, 0.4936 / 0.9871, 1e-15);
	assert_near(h->funds[1].raw_sum, 0.997, 1e-15);
	assert_near(h->funds[1].h[0].weight, 0.5, 1e-15);
	assert_int_equal(h->funds[1].n, 2);          /* the zero row is not a holding */
	assert_int_equal(h->funds[1].zero_rows, 1);
	assert_int_equal(h->nwarnings, 2);
	assert_non_null(strstr(h->warnings[0], "f.csv:2: fund 'Dogwood': weights sum to 0.9871"));
	assert_non_null(strstr(h->warnings[1], "fund 'Elm': 1 row with zero weight"));
	hc_holdings_free(h);
}

static void test_holdings_column_names_by_option(void **state)
{
	const char *text =
		"portfolio,ticker,pct,extra\n"
		"Fir,QX9,60,x\n"
		"Fir,QX8,40,y\n";
	struct holdings_options opt;
	struct holdings *h;
	struct hc_error err;

	hc_holdings_options_init(&opt);
	opt.fund_column = "portfolio";
	opt.id_column = "ticker";
	opt.value_column = "pct";
	assert_int_equal(load(&h, text, &opt, &err), HC_OK);
	assert_int_equal(h->kind, HOLDINGS_VALUES);
	assert_near(h->funds[0].h[0].weight, 0.6, 1e-15);   /* 60/100 */
	hc_holdings_free(h);
	opt.weight_column = "pct";
	assert_int_equal(load(&h, text, &opt, &err), HC_EUSAGE);
	assert_null(h);
}

static void test_holdings_short_positions(void **state)
{
	/* 1.3 - 0.3 = 1: accepted only with allow_short. */
	const char *text = "fund,id,weight\nGinkgo,QX1,1.3\nGinkgo,QX2,-0.3\n";
	struct holdings_options opt;
	struct holdings *h;
	struct hc_error err;

	assert_int_equal(load(&h, text, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "f.csv:3:3: found negative weight '-0.3', expected zero or more (short positions need --allow-short)");
	hc_holdings_options_init(&opt);
	opt.allow_short = 1;
	assert_int_equal(load(&h, text, &opt, &err), HC_OK);
	assert_near(h->funds[0].h[1].weight, -0.3, 1e-15);
	hc_holdings_free(h);
	/* a net short fund cannot be normalised */
	assert_int_equal(load(&h, "fund,id,weight\nHazel,QX1,0.2\nHazel,QX2,-0.45\n", &opt, &err), HC_EDATA);
	assert_string_equal(err.message, "f.csv:2:3: fund 'Hazel' has a net weight of -0.25, expected a positive total");
}

struct bad_case {
	const char *text;
	const char *message;
};

static void test_holdings_bad_input_messages(void **state)
{
	static const struct bad_case cases[] = {
		{ "fund,id,weight\nIvy,QX1,0.5\nIvy,QX2,abc\n",
		  "f.csv:3:3: found 'abc', expected a number (a weight such as 0.052 or 5.2%)" },
		{ "fund,id,weight,issuer\nIvy,QX1,0.5,ISS-A\nJuniper,QX1,1,ISS-A\nIvy,QX1,0.5,ISS-B\n",
		  "f.csv:4:2: id 'QX1' of fund 'Ivy' repeats line 2 with another issuer, group or type, expected the same (repeated rows of an id are summed)" },
		{ "fund,id,weight\nIvy,QX1,0.5\nKapok,QX1,0\nKapok,QX2,0.0\n",
		  "f.csv:3:3: fund 'Kapok' holds nothing: all its 2 weights are zero, expected at least one non-zero weight" },
		{ "fund,id,weight\n",
		  "f.csv: no holdings after the header, expected rows of fund,id,weight" },
		{ "fund,id,weight\n,QX1,1\n",
		  "f.csv:2:1: empty fund name, expected the fund the position belongs to" },
		{ "fund,id,weight\nLarch, ,1\n",
		  "f.csv:2:2: empty security id, expected an id" },
		{ "fund,id,weight\nLarch,QX1\n",
		  "f.csv:2:3: found 2 fields, expected 3 as in the header" },
		{ "fund,id,shares\nLarch,QX1,10\n",
		  "f.csv:1: no 'weight' or 'value' column in the header; expected fund,id,weight or fund,id,value" },
		{ "name,id,weight\nLarch,QX1,1\n",
		  "f.csv:1: no 'fund' column in the header; expected fund,id,weight" },
		{ "fund,id,value\nMaple,QX1,\n",
		  "f.csv:2:3: found '', expected a number (a market value such as 125000.00, \"1,250,000.00\" or (1,250.00))" },
	};
	struct holdings *h = (void *)1;
	struct hc_error err;
	size_t k;

	for (k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		assert_int_equal(load(&h, cases[k].text, NULL, &err), HC_EDATA);
		assert_null(h);
		assert_string_equal(err.message, cases[k].message);
	}
}

/* Allocation-failure sweeps (heapcheck.h): each failure is HC_ENOMEM
 * with nothing returned and nothing leaked.  A sweep's context: */
struct made {
	struct holdings *h;
	struct holdings_labels *l;
};

static int made_holdings(void *ctx, struct hc_error *err)
{
	static const char text[] =
		"fund,id,weight,issuer\n"
		"Nyssa,QX1,0.3,I1\nNyssa,QX2,0.3,I2\nOak,QX1,0.5,I1\nNyssa,QX3,0.39,I1\nOak,QX4,0.5,I3\nOak,QX5,0,I3\n";

	return load(&((struct made *)ctx)->h, text, NULL, err);
}

static void made_holdings_release(void *ctx)
{
	struct holdings *h = ((struct made *)ctx)->h;

	assert_int_equal(h->nwarnings, 2);   /* the loaded result, once it loads */
	hc_holdings_free(h);
}

static void made_holdings_none(void *ctx)
{
	assert_null(((struct made *)ctx)->h);
}

/* The administrator's file: Latin-1 transcoded, types, groups, quoted
 * amounts, a repeated id summed (one warning). */
static int made_admin(void *ctx, struct hc_error *err)
{
	static const char text[] =
		"fund,id,value,issuer,type,group\n"
		"Fond\xe9,CASH,\"10,000.00\",,cash,\nFond\xe9,QX1,\"250,000.00\",I\xc9,security,G1\n"
		"Fond\xe9,QX2,\"(1,000.00)\",I2,other,\nFond\xe9,QX1,\"5,000.00\",I\xc9,security,G1\n";
	struct holdings_options opt;

	hc_holdings_options_init(&opt);
	opt.encoding = HOLDINGS_LATIN1;
	opt.allow_short = 1;
	hc_error_clear(err);
	return hc_holdings_load_buffer(&((struct made *)ctx)->h, "f.csv", text, sizeof text - 1, &opt, err);
}

static void made_admin_release(void *ctx)
{
	struct holdings *h = ((struct made *)ctx)->h;

	assert_int_equal(h->nwarnings, 1);
	assert_int_equal(h->funds[0].n, 3);
	hc_holdings_free(h);
}

static void test_holdings_allocation_failures(void **state)
{
	struct made w = { NULL, NULL };
	struct heapcheck_call call = { made_holdings, made_holdings_release, made_holdings_none, &w };
	struct heapcheck_call admin = { made_admin, made_admin_release, made_holdings_none, &w };

	long k = heapcheck_sweep(&call);

	assert_true(k > 5);
	assert_true(k < 1000);
	k = heapcheck_sweep(&admin);
	assert_true(k > 5);
	assert_true(k < 1000);
}

static int labels(struct holdings_labels **l, const char *text, struct hc_error *err)
{
	return hc_holdings_labels_load_buffer(l, "s.csv", text, strlen(text), 0, err);
}

static const char label_text[] = "id,sector\nQX3,Utilities\nQX1,Energy\n\"QX2\",\"Health, care\"\n";

static int made_labels(void *ctx, struct hc_error *err)
{
	return labels(&((struct made *)ctx)->l, label_text, err);
}

static void made_labels_release(void *ctx)
{
	hc_holdings_labels_free(((struct made *)ctx)->l);
}

static void test_holdings_labels_map(void **state)
{
	const char *text = label_text;
	struct holdings_labels *l;
	struct hc_error err;
	struct made w = { NULL, NULL };
	struct heapcheck_call call = { made_labels, made_labels_release, NULL, &w };

	assert_int_equal(hc_holdings_labels_load_buffer(&l, "s.csv", text, strlen(text), 0, &err), HC_OK);
	assert_int_equal(l->n, 3);
	assert_string_equal(hc_holdings_labels_find(l, "QX2"), "Health, care");
	assert_string_equal(hc_holdings_labels_find(l, "QX3"), "Utilities");
	assert_null(hc_holdings_labels_find(l, "QX4"));
	hc_holdings_labels_free(l);
	assert_int_equal(labels(&l, "id,sector\nQX1,A\nQX2,B\nQX1,C\n", &err), HC_EDATA);
	assert_string_equal(err.message, "s.csv:4:1: duplicate id 'QX1' (also at line 2), expected each id once");
	assert_int_equal(labels(&l, "id,sector\nQX1,\n", &err), HC_EDATA);
	assert_string_equal(err.message, "s.csv:2:2: empty label, expected a label for the id");
	assert_int_equal(labels(&l, "id,sector\nQX1,A,B\n", &err), HC_EDATA);
	assert_string_equal(err.message, "s.csv:2:3: found 3 fields, expected 2 (id,label)");
	assert_true(heapcheck_sweep(&call) < 1000);
}

static void test_holdings_amounts_as_administrators_write_them(void **state)
{
	/* Each cell and the number it means (exact decimal arithmetic). */
	static const struct { const char *cell; char delim; double want; int ok; } cases[] = {
		{ "1,234,567.89", ',', 1234567.89, 1 }, { "(1,250.00)", ',', -1250.0, 1 },
		{ "1.234.567,89", ';', 1234567.89, 1 }, { "12,5", ';', 12.5, 1 },
		{ "(12,5)", ';', -12.5, 1 },            { "137500.00", ';', 137500.0, 1 },
		{ " 5.2% ", ',', 0.052, 1 },            { "-0.2", ',', -0.2, 1 },
		{ "1,234", ',', 1234.0, 1 },            { "1e3", ',', 1000.0, 1 },
		{ "1,23,456", ',', 0, 0 },              { "12,34", ',', 0, 0 },
		{ "(-5)", ',', 0, 0 },                  { "1,234.5.6", ',', 0, 0 },
		{ "1.2.3", ';', 0, 0 },                 { "()", ',', 0, 0 },
		{ "1e999", ',', 0, 0 },                 { "--1", ',', 0, 0 },
	};
	size_t k;

	for (k = 0; k < sizeof cases / sizeof cases[0]; k++) {
		double v = -99;
		int pct = 0;
		int rc = hc_holdings_parse_amount(cases[k].cell, strlen(cases[k].cell), cases[k].delim, &v, &pct);
		if (rc != (cases[k].ok ? 0 : -1))
			print_error("cell '%s': rc %d\n", cases[k].cell, rc);
		assert_int_equal(rc, cases[k].ok ? 0 : -1);
		if (cases[k].ok)
			assert_near(v, cases[k].want, 1e-15 * fabs(cases[k].want));
	}
}

static void test_holdings_types_repeats_and_quoted_values(void **state)
{
	/* Values 80,000 + 400,000 + 250,000 + (30,000) + 300,000 = 1,000,000;
	 * QX1's two rows (lots) are summed: 250,000 + 150,000 = 400,000. */
	const char *text =
		"fund,id,value,issuer,type,group\n"
		"Fir,CASH,\"80,000.00\",,cash,\n"
		"Fir,QX1,\"250,000.00\",ISS-A,security,G1\n"
		"Fir,QX2,\"250,000.00\",,Government Security,\n"
		"Fir,QX3,\"(30,000.00)\",ISS-C,other,G1\n"
		"Fir,QX4,\"300,000.00\",ISS-D,investment company,\n"
		"Fir,QX1,\"150,000.00\",ISS-A,security,G1\n";
	struct holdings_options opt;
	struct holdings *h;
	struct hc_error err;

	hc_holdings_options_init(&opt);
	opt.allow_short = 1;
	assert_int_equal(load(&h, text, &opt, &err), HC_OK);
	assert_true(h->has_type && h->has_group && h->has_issuer);
	assert_int_equal(h->funds[0].n, 5);
	assert_near(h->funds[0].raw_sum, 1000000.0, 0);
	assert_int_equal(h->funds[0].h[0].type, HOLDING_CASH);
	assert_string_equal(h->funds[0].h[0].issuer, "CASH");       /* empty issuer: the id */
	assert_near(h->funds[0].h[1].weight, 0.4, 1e-15);
	assert_int_equal(h->funds[0].h[1].rows, 2);
	assert_string_equal(h->funds[0].h[1].group, "G1");
	assert_int_equal(h->funds[0].h[2].type, HOLDING_GOVERNMENT);
	assert_null(h->funds[0].h[2].group);
	assert_near(h->funds[0].h[3].weight, -0.03, 1e-15);
	assert_int_equal(h->funds[0].h[3].type, HOLDING_OTHER);
	assert_int_equal(h->funds[0].h[4].type, HOLDING_FUND_SHARE);
	assert_int_equal(h->nwarnings, 1);
	assert_string_equal(h->warnings[0], "f.csv:2: fund 'Fir': 1 repeated row of an id summed into one position");
	hc_holdings_free(h);
	/* decimal commas in a ';' file */
	assert_int_equal(load(&h, "fund;id;weight\nFir;QX1;62,5%\nFir;QX2;37,5%\n", NULL, &err), HC_OK);
	assert_near(h->funds[0].h[0].weight, 0.625, 1e-15);
	hc_holdings_free(h);
	assert_int_equal(load(&h, "fund,id,weight,type\nFir,QX1,1,bond fund\n", NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "f.csv:2:4: found type 'bond fund', expected security (or equity, stock), cash, government security, investment-company share (or ETF, mutual fund) or other");
	/* administrators' words for the types (common practice) */
	assert_int_equal(load(&h, "fund,id,weight,type\nFir,QX1,0.5,Equity\nFir,QX2,0.2,ETF\n"
			      "Fir,QX3,0.2,Government Bond\nFir,,0.1,Cash & Equivalents\n", NULL, &err), HC_OK);
	assert_int_equal(h->funds[0].h[0].type, HOLDING_SECURITY);
	assert_int_equal(h->funds[0].h[1].type, HOLDING_FUND_SHARE);
	assert_int_equal(h->funds[0].h[2].type, HOLDING_GOVERNMENT);
	assert_int_equal(h->funds[0].h[3].type, HOLDING_CASH);
	hc_holdings_free(h);
}

static void test_holdings_encodings(void **state)
{
	/* "Fond\xe9" is Latin-1 for "Fondé" (U+00E9, UTF-8 C3 A9); 0x80 is the
	 * euro sign in Windows-1252 (U+20AC, E2 82 AC) and a control in
	 * Latin-1 (U+0080, C2 80); 0x81 is undefined in Windows-1252. */
	const char *latin = "fund,id,weight\nFond\xe9 \x80,QX1,1\n";
	struct holdings_options opt;
	struct holdings *h;
	struct hc_error err;

	assert_int_equal(load(&h, latin, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "f.csv:2:1: found byte 0xE9 at byte 5 of the cell, which is not UTF-8; expected UTF-8 text (a Latin-1 or Windows-1252 file needs --holdings-encoding latin-1 or windows-1252)");
	hc_holdings_options_init(&opt);
	opt.encoding = HOLDINGS_LATIN1;
	assert_int_equal(load(&h, latin, &opt, &err), HC_OK);
	assert_string_equal(h->funds[0].name, "Fond\xc3\xa9 \xc2\x80");
	hc_holdings_free(h);
	opt.encoding = HOLDINGS_WINDOWS1252;
	assert_int_equal(load(&h, latin, &opt, &err), HC_OK);
	assert_string_equal(h->funds[0].name, "Fond\xc3\xa9 \xe2\x82\xac");
	hc_holdings_free(h);
	assert_int_equal(load(&h, "fund,id,weight\nA\x81,QX1,1\n", &opt, &err), HC_EDATA);
	assert_string_equal(err.message, "f.csv:2:1: found byte 0x81 at byte 2 of the cell, which Windows-1252 leaves undefined; expected Windows-1252 text");
	/* already UTF-8: kept as it is */
	assert_int_equal(load(&h, "fund,id,weight\nFond\xc3\xa9,QX1,1\n", NULL, &err), HC_OK);
	assert_string_equal(h->funds[0].name, "Fond\xc3\xa9");
	hc_holdings_free(h);
}

static void test_holdings_overflow_and_merge(void **state)
{
	/* 1e308 + 1e308 overflows a double: refused at the row that did it. */
	const char *big = "fund,id,value\nGum,QX1,1e308\nGum,QX2,1e308\n";
	struct holdings *a, *b;
	struct hc_error err;

	assert_int_equal(load(&a, big, NULL, &err), HC_EDATA);
	assert_string_equal(err.message, "f.csv:3:3: fund 'Gum': adding this value makes the fund's total inf, expected a finite total (values too large: give them in thousands or as weights)");
	assert_int_equal(hc_holdings_load_buffer(&a, "a.csv", "fund,id,weight\nGum,QX1,1\n", 25, NULL, &err), HC_OK);
	assert_int_equal(hc_holdings_load_buffer(&b, "b.csv", "fund,id,weight\nHolly,QX1,1\nGum,QX2,1\n", 37, NULL, &err), HC_OK);
	assert_int_equal(hc_holdings_merge(a, &b, &err), HC_EDATA);
	assert_string_equal(err.message, "b.csv:3: fund 'Gum' is also in 'a.csv' (line 2), expected each fund in one holdings file");
	assert_non_null(b);
	assert_int_equal(a->nfunds, 1);
	hc_holdings_free(b);
	assert_int_equal(hc_holdings_load_buffer(&b, "b.csv", "fund,id,weight\nHolly,QX1,1\n", 27, NULL, &err), HC_OK);
	assert_int_equal(hc_holdings_merge(a, &b, &err), HC_OK);
	assert_null(b);
	assert_int_equal(a->nfunds, 2);
	assert_string_equal(a->source, "a.csv, b.csv");
	assert_string_equal(a->funds[1].source, "b.csv");
	hc_holdings_free(a);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_holdings_reads_weights_by_fund),
		cmocka_unit_test(test_holdings_normalises_values_and_reads_issuers),
		cmocka_unit_test(test_holdings_warns_and_normalises_off_sums),
		cmocka_unit_test(test_holdings_column_names_by_option),
		cmocka_unit_test(test_holdings_short_positions),
		cmocka_unit_test(test_holdings_bad_input_messages),
		cmocka_unit_test(test_holdings_allocation_failures),
		cmocka_unit_test(test_holdings_labels_map),
		cmocka_unit_test(test_holdings_amounts_as_administrators_write_them),
		cmocka_unit_test(test_holdings_types_repeats_and_quoted_values),
		cmocka_unit_test(test_holdings_encodings),
		cmocka_unit_test(test_holdings_overflow_and_merge),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
