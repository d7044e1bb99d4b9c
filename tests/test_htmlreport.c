/*
 * Unit tests for the HTML report writer (htmlreport.h).
 *
 * Small result objects are built here and the document is checked for what
 * the writer promises: the sections in order, text escaped (HTML 5, section
 * 13.1.2.6: '<' and '&' in text, '"' in attribute values), the SVG inlined
 * with its ids prefixed and an accessible name, the committee's curve table
 * at the readable grid with the self-check column z only in the appendix,
 * the recommendation from the rules table or from a chosen recommendation,
 * and a write error reported as HC_EIO.  How it looks in a browser is
 * tests/cli_report_html.sh's job.
 */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "holdcount/htmlreport.h"

struct fixture {
	struct report *universe, *curve, *enough;
	struct htmlreport_figure fig[2];
	struct htmlreport_input in;
};

static const char svg[] =
	"<?xml version=\"1.0\" encoding=\"utf-8\"  standalone=\"no\"?>\n"
	"<svg \n viewBox=\"0 0 1000 640\"\n xmlns=\"http://www.w3.org/2000/svg\">\n<title>Gnuplot</title>\n"
	"<g id=\"gnuplot_canvas\"><defs><path id='gpPt0' d='M-1,0 h2'/></defs>"
	"<use xlink:href='#gpPt0' x='3'/><rect fill='url(#gpPat1)'/></g></svg>\n";

static void build(struct fixture *f)
{
	static const long long grid[] = { 1, 4, 10, 139 };
	struct report_table *t;
	size_t i;

	memset(f, 0, sizeof *f);
	f->universe = hc_report_alloc();
	f->curve = hc_report_alloc();
	f->enough = hc_report_alloc();
	assert_non_null(f->universe);
	assert_int_equal(hc_report_add_text(f->universe, "source", "source", "data/a<b&c.csv"), HC_OK);
	assert_int_equal(hc_report_add_text(f->universe, "first_date", "first", "2005-01-31"), HC_OK);
	assert_int_equal(hc_report_add_text(f->universe, "last_date", "last", "2024-12-31"), HC_OK);
	assert_int_equal(hc_report_add_int(f->universe, "securities", "kept", 139), HC_OK);
	assert_int_equal(hc_report_add_cautions(f->universe), HC_OK);
	t = hc_report_add_table(f->curve, "curve", NULL);
	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "n", "holdings", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "expected_sd", "sqrt E[var]", REPORT_STYLE_PERCENT), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "z_score", "z", REPORT_STYLE_FIXED2), HC_OK);
	for (i = 0; i < 4; i++) {
		assert_int_equal(hc_report_table_add_row(t), HC_OK);
		hc_report_table_set_int(t, i, 0, grid[i]);
		hc_report_table_set_real(t, i, 1, 0.3433 / (double)(i + 1));
		hc_report_table_set_real(t, i, 2, 0.41);
	}
	t = hc_report_add_table(f->enough, "rules", NULL);
	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "rule", "rule", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "parameters", "parameters", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "count", "count", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "count_p05", "5%", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "count_p95", "95%", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "met", "met", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	assert_int_equal(hc_report_table_set_text(t, 0, 0, "marginal"), HC_OK);
	hc_report_table_set_int(t, 0, 2, 17);
	hc_report_table_set_bool(t, 0, 5, 1);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	assert_int_equal(hc_report_table_set_text(t, 1, 0, "near-floor"), HC_OK);
	assert_int_equal(hc_report_table_set_text(t, 1, 1, "x=10%"), HC_OK);
	hc_report_table_set_int(t, 1, 2, 21);
	hc_report_table_set_int(t, 1, 3, 18);
	hc_report_table_set_int(t, 1, 4, 24);
	hc_report_table_set_bool(t, 1, 5, 1);
	f->fig[0] = (struct htmlreport_figure){ "risk", "Risk by count", "How to read it.", svg, HTMLREPORT_CURVE };
	f->fig[1] = (struct htmlreport_figure){ "share", "Share", "Not drawn.", NULL, HTMLREPORT_CURVE };
	f->in.version = "9.9.9";
	f->in.date = "2026-12-03";
	f->in.universe = f->universe;
	f->in.curve = f->curve;
	f->in.enough = f->enough;
	f->in.rolling_why = "`--window 0` was given";
	f->in.figures = f->fig;
	f->in.nfigures = 2;
}

static void release(struct fixture *f)
{
	hc_report_free(f->universe);
	hc_report_free(f->curve);
	hc_report_free(f->enough);
}

/* The document for f->in, as a string the caller frees. */
static char *write_doc(const struct fixture *f)
{
	char *buf = NULL;
	size_t len = 0;
	struct hc_error err;
	FILE *fp = open_memstream(&buf, &len);

	assert_non_null(fp);
	assert_int_equal(hc_htmlreport_write(fp, &f->in, &err), HC_OK);
	assert_int_equal(fclose(fp), 0);
	return buf;
}

static void test_htmlreport_sections_in_order(void **state)
{
	struct fixture f;
	const char *prev;
	char *doc, id[64];
	size_t s;

	(void)state;
	build(&f);
	doc = write_doc(&f);
	assert_true(strncmp(doc, "<!DOCTYPE html>\n<html lang=\"en\">", 32) == 0);
	prev = doc;
	for (s = 0; s < hc_htmlreport_nsections; s++) {
		snprintf(id, sizeof id, "<section id=\"%s\"", hc_htmlreport_sections[s][0]);
		if (strcmp(hc_htmlreport_sections[s][0], "since") == 0) {
			assert_null(strstr(doc, id));    /* no previous report given */
			continue;
		}
		assert_non_null(strstr(prev, id));
		prev = strstr(prev, id);
	}
	assert_non_null(strstr(doc, "No holdings were given"));
	assert_non_null(strstr(doc, "Left out: `--window 0` was given."));
	assert_null(strstr(doc, "<script"));
	assert_non_null(strstr(doc, "@media print"));
	assert_non_null(strstr(doc, "not investment advice"));
	free(doc);
	release(&f);
}

/* The tail section sits between the rules and the funds: with the measures,
 * its figure, the universe's own value and the table at the readable grid,
 * and the reason ending wealth is left out; with --tail off, only why. */
static void test_htmlreport_tail_section(void **state)
{
	struct fixture f;
	struct report *tail;
	struct report_table *t;
	struct htmlreport_figure fig[3];
	char *doc, *sec, *end;
	size_t i;

	(void)state;
	build(&f);
	tail = hc_report_alloc();
	assert_non_null(tail);
	assert_int_equal(hc_report_add_real(tail, "universe_es95", "es95", 0.0855, REPORT_STYLE_PERCENT), HC_OK);
	t = hc_report_add_table(tail, "tail", NULL);
	assert_non_null(t);
	assert_int_equal(hc_report_table_add_column(t, "n", "holdings", REPORT_STYLE_PLAIN), HC_OK);
	assert_int_equal(hc_report_table_add_column(t, "es95_mean", "es95", REPORT_STYLE_PERCENT), HC_OK);
	for (i = 0; i < 4; i++) {
		assert_int_equal(hc_report_table_add_row(t), HC_OK);
		hc_report_table_set_int(t, i, 0, (long long[]){ 1, 7, 10, 139 }[i]);
		hc_report_table_set_real(t, i, 1, 0.2035 / (double)(i + 1));
	}
	fig[0] = f.fig[0];
	fig[1] = (struct htmlreport_figure){ "shortfall", "Expected shortfall", "Shortfall caption.", NULL, HTMLREPORT_TAIL };
	fig[2] = (struct htmlreport_figure){ "wealth", "Ending wealth", "Wealth caption.", NULL, HTMLREPORT_HORIZON };
	f.in.figures = fig;
	f.in.nfigures = 3;
	f.in.tail = tail;
	f.in.horizon_years = 10;
	f.in.horizon_why = "the history has gaps";
	doc = write_doc(&f);
	sec = strstr(doc, "<section id=\"tail\"");
	assert_non_null(sec);
	end = strstr(sec, "</section>");
	assert_non_null(end);
	*end = '\0';
	assert_true(strstr(doc, "<section id=\"rules\"") < sec && strstr(end + 1, "<section id=\"funds\"") != NULL);
	assert_non_null(strstr(sec, "<h2 id=\"h-tail\">Tail risk and long horizons</h2>"));
	assert_non_null(strstr(sec, "<figure id=\"fig-shortfall\">"));
	assert_non_null(strstr(sec, "<dd>8.55%</dd>"));
	assert_non_null(strstr(sec, "<th scope=\"row\">10</th><td class=\"n\">6.78%</td>"));
	assert_null(strstr(sec, "<th scope=\"row\">7</th>"));     /* off the readable grid */
	assert_non_null(strstr(sec, "<h3>Ending wealth over 10 years</h3>\n<p>Left out: the history has gaps.</p>"));
	assert_null(strstr(sec, "fig-wealth"));                     /* its figure goes with ending wealth only */
	free(doc);
	f.in.tail_off = 1;
	f.in.tail_why = "`--tail off` was given";
	doc = write_doc(&f);
	sec = strstr(doc, "<section id=\"tail\"");
	assert_non_null(sec);
	assert_non_null(strstr(sec, "<p>Left out: `--tail off` was given.</p>\n</section>"));
	free(doc);
	hc_report_free(tail);
	release(&f);
}

static void test_htmlreport_escapes_text(void **state)
{
	struct fixture f;
	char *doc;

	(void)state;
	build(&f);
	doc = write_doc(&f);
	assert_non_null(strstr(doc, "data/a&lt;b&amp;c.csv"));
	assert_null(strstr(doc, "a<b&c"));
	free(doc);
	release(&f);
}

static void test_htmlreport_inlines_svg(void **state)
{
	struct fixture f;
	char *doc;

	(void)state;
	build(&f);
	doc = write_doc(&f);
	assert_null(strstr(doc, "<?xml"));
	assert_non_null(strstr(doc, "<svg role=\"img\" aria-label=\"Risk by count\" \n viewBox=\"0 0 1000 640\""));
	assert_non_null(strstr(doc, "<title>Risk by count</title>"));
	assert_non_null(strstr(doc, "id=\"risk-gnuplot_canvas\""));
	assert_non_null(strstr(doc, "id='risk-gpPt0'"));
	assert_non_null(strstr(doc, "xlink:href='#risk-gpPt0'"));
	assert_non_null(strstr(doc, "url(#risk-gpPat1)"));
	assert_null(strstr(doc, "id='gpPt0'"));
	/* the figure without a render says so, still with an accessible name */
	assert_non_null(strstr(doc, "role=\"img\" aria-label=\"Share\">Not rendered"));
	assert_non_null(strstr(doc, "<figcaption><strong>Risk by count.</strong> How to read it.</figcaption>"));
	free(doc);
	release(&f);
}

static void test_htmlreport_committee_tables(void **state)
{
	struct fixture f;
	char *doc, *appendix, *z;

	(void)state;
	build(&f);
	doc = write_doc(&f);
	appendix = strstr(doc, "<section id=\"appendix\"");
	assert_non_null(appendix);
	z = strstr(doc, "<th scope=\"col\">z</th>");
	assert_true(z != NULL && z > appendix);
	/* 1, 10 and 139 (= M, the last row) are on the readable grid; 4 is not */
	assert_non_null(strstr(doc, "<th scope=\"row\">1</th>"));
	assert_non_null(strstr(doc, "<th scope=\"row\">10</th>"));
	assert_non_null(strstr(doc, "<th scope=\"row\">139</th>"));
	assert_null(strstr(doc, "<th scope=\"row\">4</th>"));
	free(doc);
	release(&f);
}

static void test_htmlreport_recommendation(void **state)
{
	struct fixture f;
	char *doc;

	(void)state;
	build(&f);
	doc = write_doc(&f);
	/* the near-floor row, though it is not the first rule of the table */
	assert_non_null(strstr(doc, "21 holdings <small>(near-floor rule; 90% interval 18 to 24)</small>"));
	assert_non_null(strstr(doc, "The portfolio holds at least 24 securities of its universe"));
	assert_non_null(strstr(doc, "give counts from 17 (marginal) to 21 (near-floor)"));
	free(doc);
	/* a chosen recommendation takes its place */
	assert_int_equal(hc_report_add_text(f.enough, "recommended_rule", "rule", "marginal"), HC_OK);
	assert_int_equal(hc_report_add_int(f.enough, "recommended_count", "count", 19), HC_OK);
	assert_int_equal(hc_report_add_text(f.enough, "policy_sentence", "sentence", "Hold 19 or more."), HC_OK);
	doc = write_doc(&f);
	assert_non_null(strstr(doc, "19 holdings <small>(marginal rule)</small>"));
	assert_non_null(strstr(doc, "<blockquote class=\"policy\">Hold 19 or more.</blockquote>"));
	free(doc);
	release(&f);
}

/* needle occurs in [lo, hi) of the document */
static int between(const char *lo, const char *hi, const char *needle)
{
	const char *p = strstr(lo, needle);

	return p != NULL && p < hi;
}

/* An audit report with a funds table of the given columns (one fund, every
 * cell filled: texts "x", booleans yes, numbers 0.25). */
static struct report *audit_report(const char *const *keys, size_t n, const char *verdict)
{
	struct report *r = hc_report_alloc();
	struct report_table *t;
	size_t j;

	assert_non_null(r);
	assert_int_equal(hc_report_add_text(r, "policy", "policy", "none"), HC_OK);
	assert_int_equal(hc_report_add_int(r, "failed_funds", "failing", 0), HC_OK);
	t = hc_report_add_table(r, "funds", NULL);
	assert_non_null(t);
	for (j = 0; j < n; j++)
		assert_int_equal(hc_report_table_add_column(t, keys[j], keys[j], REPORT_STYLE_PERCENT), HC_OK);
	assert_int_equal(hc_report_table_add_row(t), HC_OK);
	for (j = 0; j < n; j++) {
		if (strcmp(keys[j], "fund") == 0)
			assert_int_equal(hc_report_table_set_text(t, 0, j, "Lirrand Test Fund"), HC_OK);
		else if (strcmp(keys[j], "verdict") == 0)
			assert_int_equal(hc_report_table_set_text(t, 0, j, verdict), HC_OK);
		else if (strcmp(keys[j], "passed") == 0 || strcmp(keys[j], "1940act") == 0 || strcmp(keys[j], "ric") == 0 ||
			 strcmp(keys[j], "ucits") == 0)
			hc_report_table_set_bool(t, 0, j, 1);
		else
			hc_report_table_set_real(t, 0, j, 0.25);
	}
	return r;
}

/* The audited funds in two tables (the verdict; coverage and the statute
 * screens), columns the audit lacks left out, the coverage and the two
 * readings explained only when the audit gives them, and a table of more
 * than ten columns set in the compact style. */
static void test_htmlreport_funds_tables(void **state)
{
	static const char *const full[] = {
		"fund", "verdict", "passed", "holdings", "effective_holdings", "sd", "missing_count", "missing_weight",
		"covered_weight", "risk_holdings", "ucits", "1940act", "basket_1940act_capped", "basket_1940act_excluded",
		"ric", "basket_ric_capped", "basket_ric_excluded",
	};
	static const char *const plain[] = { "fund", "passed", "holdings", "sd", "risk_holdings", "ucits", "1940act", "ric" };
	struct fixture f;
	char *doc, *first, *second, *end;

	(void)state;
	build(&f);
	f.in.audit = audit_report(full, sizeof full / sizeof full[0], "insufficient data");
	{
		/* an audit that judges coverage, names its basket reading and
		 * lists its failures with the deciding figures */
		struct report *a = (struct report *)f.in.audit;
		struct report_table *ft;
		assert_int_equal(hc_report_add_real(a, "min_covered_weight", "least", 0.95, REPORT_STYLE_PERCENT), HC_OK);
		assert_int_equal(hc_report_add_int(a, "insufficient_funds", "insufficient", 1), HC_OK);
		assert_int_equal(hc_report_add_text(a, "basket_reading", "reading", "capped"), HC_OK);
		ft = hc_report_add_table(a, "failures", NULL);
		assert_non_null(ft);
		assert_int_equal(hc_report_table_add_column(ft, "fund", "fund", REPORT_STYLE_PLAIN), HC_OK);
		assert_int_equal(hc_report_table_add_column(ft, "check", "check", REPORT_STYLE_PLAIN), HC_OK);
		assert_int_equal(hc_report_table_add_column(ft, "figure", "figure", REPORT_STYLE_PERCENT), HC_OK);
		assert_int_equal(hc_report_table_add_column(ft, "test", "test", REPORT_STYLE_PLAIN), HC_OK);
		assert_int_equal(hc_report_table_add_column(ft, "limit", "limit", REPORT_STYLE_PERCENT), HC_OK);
		assert_int_equal(hc_report_table_add_row(ft), HC_OK);
		assert_int_equal(hc_report_table_set_text(ft, 0, 0, "Lirrand Test Fund"), HC_OK);
		assert_int_equal(hc_report_table_set_text(ft, 0, 1, "max-weight"), HC_OK);
		hc_report_table_set_real(ft, 0, 2, 0.12);
		assert_int_equal(hc_report_table_set_text(ft, 0, 3, "<="), HC_OK);
		hc_report_table_set_real(ft, 0, 4, 0.10);
	}
	/* the audit's notes in the funds section, less those the cautions
	 * already list (the universe's) */
	assert_int_equal(hc_report_add_note((struct report *)f.in.audit, "s. 851(b)(3) is tested at quarter end <30 days>"),
			 HC_OK);
	assert_int_equal(hc_report_add_note((struct report *)f.in.audit, f.universe->notes[0]), HC_OK);
	doc = write_doc(&f);
	{
		char *sec = strstr(doc, "<section id=\"funds\""), *next = sec ? strstr(sec, "</section>") : NULL;
		assert_non_null(next);
		assert_true(between(sec, next, "<h3>How the audit reads the funds and the statutes</h3>"));
		assert_true(between(sec, next, "<li>s. 851(b)(3) is tested at quarter end &lt;30 days&gt;</li>"));
		assert_false(between(sec, next, f.universe->notes[0]));
	}
	first = strstr(doc, "<caption>Audited funds: the verdict</caption>");
	second = strstr(doc, "<caption>Audited funds: coverage and the statute screens</caption>");
	assert_true(first && second && first < second);
	end = strstr(second, "</table>");
	assert_non_null(end);
	/* the verdict in the first table, coverage and both readings in the second */
	assert_true(between(first, second, "<td>insufficient data</td>"));
	assert_true(between(first, second, "<th scope=\"col\">verdict</th>"));
	assert_false(between(first, second, "(coverage)</th>"));
	assert_true(between(second, end, "<th scope=\"col\">weight its risk uses (coverage)</th>"));
	assert_true(between(second, end, "<th scope=\"col\">1940 Act basket, positions counted up to 5%</th>"));
	assert_true(between(second, end, "<th scope=\"col\">IRC 851 basket, positions above 5% left out</th>"));
	assert_true(between(second, end, "<td class=\"n\">25.00%</td>"));
	assert_false(between(second, end, "<th scope=\"col\">verdict</th>"));
	/* 12 columns: the compact style; the first table (8) keeps the plain one */
	assert_non_null(strstr(doc, "<table class=\"wide\">\n<caption>Audited funds: coverage"));
	assert_non_null(strstr(doc, "<table>\n<caption>Audited funds: the verdict"));
	assert_non_null(strstr(doc, "gets the verdict \"insufficient data\""));
	assert_non_null(strstr(doc, "shown under both readings of the texts"));
	assert_non_null(strstr(doc, "Funds with insufficient data (risk figures on less than 95.00% of the invested "
				    "weight): 1."));
	assert_non_null(strstr(doc, "The 5% baskets' reading that decides the screens: capped."));
	assert_non_null(strstr(doc, "<caption>What fails, with the deciding figure and the limit</caption>"));
	assert_non_null(strstr(doc, "<td>max-weight</td><td class=\"n\">12.00%</td><td>&lt;=</td><td class=\"n\">10.00%</td>"));
	free(doc);
	hc_report_free((struct report *)f.in.audit);

	/* an audit without coverage or readings: no such columns, no such words */
	f.in.audit = audit_report(plain, sizeof plain / sizeof plain[0], NULL);
	doc = write_doc(&f);
	assert_non_null(strstr(doc, "<caption>Audited funds: the verdict</caption>"));
	assert_null(strstr(doc, "weight its risk uses (coverage)"));
	assert_null(strstr(doc, "basket, positions"));
	assert_null(strstr(doc, "insufficient data"));
	assert_null(strstr(doc, "both readings"));
	assert_null(strstr(doc, "How the audit reads"));
	assert_null(strstr(doc, "What fails"));
	assert_null(strstr(doc, "reading that decides"));
	assert_null(strstr(doc, "class=\"wide\""));
	assert_non_null(strstr(doc, "<th scope=\"col\">holdings its risk uses</th>"));
	free(doc);
	hc_report_free((struct report *)f.in.audit);
	release(&f);
}

static void test_htmlreport_errors(void **state)
{
	struct fixture f;
	struct hc_error err;
	FILE *fp;

	(void)state;
	build(&f);
	f.in.enough = NULL;
	assert_int_equal(hc_htmlreport_write(stdout, &f.in, &err), HC_EUSAGE);
	f.in.enough = f.enough;
	fp = fopen("/dev/full", "w");
	assert_non_null(fp);
	setvbuf(fp, NULL, _IONBF, 0);
	assert_int_equal(hc_htmlreport_write(fp, &f.in, &err), HC_EIO);
	fclose(fp);
	release(&f);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_htmlreport_sections_in_order),
		cmocka_unit_test(test_htmlreport_tail_section),
		cmocka_unit_test(test_htmlreport_escapes_text),
		cmocka_unit_test(test_htmlreport_inlines_svg),
		cmocka_unit_test(test_htmlreport_committee_tables),
		cmocka_unit_test(test_htmlreport_recommendation),
		cmocka_unit_test(test_htmlreport_funds_tables),
		cmocka_unit_test(test_htmlreport_errors),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
