/*
 * test_plots.c - plot data, scripts and rendering.
 *
 * References: the exact curve's closed form E[var(N)] = vbar/N + (1-1/N) cbar
 * (Elton & Gruber, 1977, Journal of Business 50(4); their averages 46.619 and
 * 7.058, from memory, scaled here to a monthly 0.0046619 and 0.0007058 per
 * period), computed independently in the test; the PNG specification 1.2
 * (signature, section 12.12; IHDR width and height, section 4.1.1).
 * gnuplot-nox is installed by scripts/setup.sh: a missing gnuplot fails the
 * render tests rather than skipping them.
 */
#define _GNU_SOURCE 1
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <gsl/gsl_errno.h>

#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/plots.h"
#include "holdcount/rolling.h"
#include "holdcount/rules.h"
#include "holdcount/universe.h"

#define VBAR 0.0046619
#define CBAR 0.0007058
#define M 40

static char tmpdir[4096];

static struct curve *make_curve(void)
{
	struct moments mo;
	struct curve *c = NULL;
	size_t sizes[M], i;

	for (i = 0; i < M; i++)
		sizes[i] = i + 1;
	assert_int_equal(hc_moments_from_summary(&mo, VBAR, CBAR, M, NULL), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, M, 12.0, NULL), HC_OK);
	return c;
}

static void make_tmpdir(const char *name)
{
	const char *base = getenv("HOLDCOUNT_TEST_TMP");

	snprintf(tmpdir, sizeof tmpdir, "%s/test_plots_%s", base ? base : "/tmp", name);
	mkdir(tmpdir, 0777);
}

static FILE *open_in(const char *name)
{
	char p[4200];
	FILE *fp;

	snprintf(p, sizeof p, "%s/%s", tmpdir, name);
	fp = fopen(p, "w");
	assert_non_null(fp);
	return fp;
}

/* exact.dat row n: 100 sqrt(12 (vbar/n + (1 - 1/n) cbar)) to its 10 digits
 * (rtol 1e-9 covers the printed rounding, 5e-10 at most). */
static void test_plots_exact_data_follows_the_closed_form(void **state)
{
	struct curve *c = make_curve();
	struct plots_input in = { c, NULL, NULL, 0, NAN, NULL, "invented", NULL, NULL, NULL, 0, 0 };
	char *buf = NULL, *line;
	size_t len = 0, rows = 0, n;
	double sd, share, te;
	FILE *mem = open_memstream(&buf, &len);

	(void)state;
	assert_int_equal(hc_plots_write_data(mem, PLOTS_DATA_EXACT, &in, NULL), HC_OK);
	fclose(mem);
	for (line = strtok(buf, "\n"); line; line = strtok(NULL, "\n")) {
		if (line[0] == '#')
			continue;
		assert_int_equal(sscanf(line, "%zu %lf %lf %lf", &n, &sd, &share, &te), 4);
		double ev = VBAR / n + (1.0 - 1.0 / n) * CBAR;
		assert_true(fabs(sd - 100 * sqrt(12 * ev)) <= 1e-9 * sd);
		assert_true(fabs(share - 100 * ((VBAR - CBAR) / n) / ev) <= 1e-9 * 100);
		assert_true(fabs(te - 100 * sqrt(12 * (VBAR - CBAR) * (1.0 / n - 1.0 / M))) <= 1e-9 * 100);
		rows++;
	}
	assert_int_equal(rows, M);
	free(buf);
	hc_curve_free(c);
}

static void test_plots_formats_and_availability(void **state)
{
	struct curve *c = make_curve();
	struct plots_input in = { c, NULL, NULL, 0, NAN, NULL, NULL, NULL, NULL, NULL, 0, 0 };

	(void)state;
	assert_int_equal(hc_plots_parse_format("svg"), PLOTS_SVG);
	assert_int_equal(hc_plots_parse_format("gif"), -1);
	assert_true(hc_plots_available(PLOTS_RISK, &in));
	assert_false(hc_plots_available(PLOTS_FUNDS, &in));   /* no audit */
	assert_false(hc_plots_available(PLOTS_ROLLING, &in)); /* no rolling result given */
	assert_int_equal(hc_plots_write_script(stdout, PLOTS_FUNDS, &in, PLOTS_PNG, NULL), HC_EUSAGE);
	hc_curve_free(c);
}

static void test_plots_find_gnuplot_along_a_path(void **state)
{
	char found[4200], path[4200], exe[4200];
	FILE *fp;

	(void)state;
	make_tmpdir("path");
	snprintf(exe, sizeof exe, "%s/gnuplot", tmpdir);
	fp = fopen(exe, "w");
	assert_non_null(fp);
	fputs("#!/bin/sh\n", fp);
	fclose(fp);
	chmod(exe, 0755);
	snprintf(path, sizeof path, "/nonexistent:%s", tmpdir);
	assert_int_equal(hc_plots_find_gnuplot(path, found, sizeof found), 1);
	assert_string_equal(found, exe);
	assert_int_equal(hc_plots_find_gnuplot("/nonexistent", found, sizeof found), 0);
}

/* Render risk.gp (with rule marks) and read the PNG's IHDR. */
static void test_plots_risk_renders_a_png_of_the_stated_size(void **state)
{
	struct curve *c = make_curve();
	struct rule_result rules[2];
	struct plots_input in = { c, NULL, rules, 2, 0.02, NULL, "invented", NULL, NULL, NULL, 0, 0 };
	char gp[4200], png[4200];
	unsigned char head[24];
	struct hc_error err;
	FILE *fp;

	(void)state;
	memset(rules, 0, sizeof rules);
	rules[0].name = "near-floor", rules[0].defined = 1, rules[0].met = 1, rules[0].count = 17;
	rules[1].name = "tracking-error", rules[1].rule = RULES_TRACKING_ERROR;
	rules[1].defined = 1, rules[1].met = 1, rules[1].count = 33;
	make_tmpdir("render");
	assert_true(hc_plots_find_gnuplot(NULL, gp, sizeof gp));
	fp = open_in("exact.dat");
	assert_int_equal(hc_plots_write_data(fp, PLOTS_DATA_EXACT, &in, NULL), HC_OK);
	fclose(fp);
	fp = open_in("rules.dat");
	assert_int_equal(hc_plots_write_data(fp, PLOTS_DATA_RULES, &in, NULL), HC_OK);
	fclose(fp);
	fp = open_in("risk.gp");
	assert_int_equal(hc_plots_write_script(fp, PLOTS_RISK, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(fp);
	fp = open_in("tracking.gp");
	assert_int_equal(hc_plots_write_script(fp, PLOTS_TRACKING, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(fp);
	hc_error_clear(&err);
	assert_int_equal(hc_plots_render(gp, tmpdir, "risk.gp", &err), HC_OK);
	assert_int_equal(hc_plots_render(gp, tmpdir, "tracking.gp", &err), HC_OK);
	snprintf(png, sizeof png, "%s/risk.png", tmpdir);
	fp = fopen(png, "rb");
	assert_non_null(fp);
	assert_int_equal(fread(head, 1, 24, fp), 24);
	fclose(fp);
	assert_memory_equal(head, "\x89PNG\r\n\x1a\n", 8);
	assert_memory_equal(head + 12, "IHDR", 4);
	assert_int_equal((head[16] << 24) | (head[17] << 16) | (head[18] << 8) | head[19], PLOTS_WIDTH);
	assert_int_equal((head[20] << 24) | (head[21] << 16) | (head[22] << 8) | head[23], PLOTS_HEIGHT);
	hc_curve_free(c);
}

/* Funds on the curve: a passing and a failing invented fund.  The failing
 * one is drawn in its own series (style 9, in the key) and named so; with
 * no failing fund that series is left out, since gnuplot warns of a data
 * file with no valid points.  Both scripts render without a warning. */
static void test_plots_funds_mark_a_failing_fund(void **state)
{
	struct curve *c = make_curve();
	struct audit_fund funds[2];
	struct audit_result ar;
	struct plots_input in = { c, NULL, NULL, 0, NAN, &ar, "invented", NULL, NULL, NULL, 0, 0 };
	char gp[4200], *buf = NULL, line[4400];
	size_t len = 0, rows = 0, h;
	double e, sd, x, y;
	int passed, ends;
	struct hc_error err;
	FILE *fp, *mem;

	(void)state;
	memset(funds, 0, sizeof funds);
	memset(&ar, 0, sizeof ar);
	funds[0].name = "Tarn Ledger Fund", funds[0].holdings = 12, funds[0].effective_holdings = 9.385;
	funds[0].sd = 0.0905, funds[0].risk_known = 1, funds[0].passed = 1;
	funds[0].risk_holdings = 12, funds[0].covered_weight = 1;
	funds[1].name = "Moss Quill Fund", funds[1].holdings = 25, funds[1].effective_holdings = 21.85;
	funds[1].sd = 0.0815, funds[1].risk_known = 1, funds[1].passed = 0;
	/* its risk rests on 13 of its 25 holdings, 52% of its weight: the plot
	 * places it at 13 and says so beside its name */
	funds[1].risk_holdings = 13, funds[1].covered_weight = 0.52;
	ar.funds = funds;
	ar.nfunds = 2;
	make_tmpdir("funds");
	assert_true(hc_plots_find_gnuplot(NULL, gp, sizeof gp));
	fp = open_in("exact.dat");
	assert_int_equal(hc_plots_write_data(fp, PLOTS_DATA_EXACT, &in, NULL), HC_OK);
	fclose(fp);
	fp = open_in("funds.dat");
	assert_int_equal(hc_plots_write_data(fp, PLOTS_DATA_FUNDS, &in, NULL), HC_OK);
	fclose(fp);
	fp = open_in("funds.gp");
	assert_int_equal(hc_plots_write_script(fp, PLOTS_FUNDS, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(fp);
	hc_error_clear(&err);
	assert_int_equal(hc_plots_render(gp, tmpdir, "funds.gp", &err), HC_OK);
	snprintf(line, sizeof line, "%s/funds.dat", tmpdir);
	fp = fopen(line, "r");
	assert_non_null(fp);
	while (fgets(line, sizeof line, fp)) {
		if (line[0] == '#')
			continue;
		assert_int_equal(sscanf(line, "%zu %lf %lf %d %lf %lf %d", &h, &e, &sd, &passed, &x, &y, &ends), 7);
		assert_int_equal(passed, rows == 0);
		assert_non_null(strstr(line, rows == 0 ? "\"Tarn Ledger Fund\""
					      : "\"Moss Quill Fund (risk on 52%, 13 of 25 holdings) (fails the policy)\""));
		assert_int_equal(h, rows == 0 ? 12 : 13);
		rows++;
	}
	fclose(fp);
	assert_int_equal(rows, 2);
	mem = open_memstream(&buf, &len);
	assert_int_equal(hc_plots_write_script(mem, PLOTS_FUNDS, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(mem);
	assert_non_null(strstr(buf, "with points ls 9 title \"fund failing the policy"));
	free(buf);
	funds[1].passed = 1;
	buf = NULL;
	mem = open_memstream(&buf, &len);
	assert_int_equal(hc_plots_write_script(mem, PLOTS_FUNDS, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(mem);
	assert_null(strstr(buf, "ls 9"));
	free(buf);
	fp = open_in("funds.dat");
	assert_int_equal(hc_plots_write_data(fp, PLOTS_DATA_FUNDS, &in, NULL), HC_OK);
	fclose(fp);
	fp = open_in("funds.gp");
	assert_int_equal(hc_plots_write_script(fp, PLOTS_FUNDS, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(fp);
	assert_int_equal(hc_plots_render(gp, tmpdir, "funds.gp", &err), HC_OK);
	hc_curve_free(c);
}

/* gnuplot's "warning: Skipping data file with no valid points" on an empty
 * data file must come back as a failure carrying gnuplot's words. */
static void test_plots_render_treats_a_warning_as_failure(void **state)
{
	char gp[4200];
	struct hc_error err;
	FILE *fp;

	(void)state;
	make_tmpdir("warn");
	assert_true(hc_plots_find_gnuplot(NULL, gp, sizeof gp));
	fclose(open_in("empty.dat"));
	fp = open_in("bad.gp");
	fputs("set terminal png size 200,100\nset output 'bad.png'\nplot 'empty.dat' using 1:2 with lines\n", fp);
	fclose(fp);
	hc_error_clear(&err);
	assert_int_equal(hc_plots_render(gp, tmpdir, "bad.gp", &err), HC_ERENDER);
	assert_non_null(strstr(err.message, "arning"));
	assert_int_equal(hc_plots_render("/nonexistent/gnuplot", tmpdir, "bad.gp", &err), HC_EIO);
}

static void test_plots_script_allocation_failure(void **state)
{
	struct curve *c = make_curve();
	struct rule_result rule;
	struct plots_input in = { c, NULL, &rule, 1, 0.02, NULL, NULL, NULL, NULL, NULL, 0, 0 };
	struct hc_error err;
	char *buf = NULL;
	size_t len = 0;
	FILE *mem = open_memstream(&buf, &len);

	(void)state;
	memset(&rule, 0, sizeof rule);
	rule.name = "marginal", rule.defined = 1, rule.met = 1, rule.count = 9;
	hc_alloc_fail_after(0);
	assert_int_equal(hc_plots_write_script(mem, PLOTS_RISK, &in, PLOTS_SVG, &err), HC_ENOMEM);
	assert_int_equal(hc_plots_write_data(mem, PLOTS_DATA_RULES, &in, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	fclose(mem);
	free(buf);
	hc_curve_free(c);
}


/*
 * The rolling plot's date axis: ticks chosen by the span, each labelled
 * once.  gnuplot's own choice under format "%Y" labelled a span of three
 * years "2020 2020 2021 ..."; here 36 monthly windows get ticks a few
 * months apart labelled YYYY-MM, and 20 years of yearly windows get year
 * labels, never more than nine ticks.  The count axis is log-scaled with
 * whole-number ticks covering the counts drawn (12 to 200 here).
 */
static void rolling_ticks(size_t nwin, int months_apart, size_t *nticks, int *yearly)
{
	struct rolling_window *w = hc_calloc(nwin, sizeof *w);
	struct rolling_result r;
	struct curve *c = make_curve();
	struct plots_input in = { c, NULL, NULL, 0, NAN, NULL, NULL, NULL, NULL, NULL, 0, 0 };
	char *buf = NULL, *tics, *p, labels[16][16], date[16];
	size_t len = 0, j, k;
	FILE *mem;

	assert_non_null(w);
	memset(&r, 0, sizeof r);
	r.window = 24;
	r.step = (size_t)months_apart;
	r.periods_per_year = 12;
	r.rules = RULES_FLAG(RULES_NEAR_FLOOR);
	r.nwindows = nwin;
	r.windows = w;
	for (j = 0; j < nwin; j++) {
		int m = 2019 * 12 + 11 + (int)j * months_apart;   /* from 2019-12 */
		snprintf(date, sizeof date, "%04d-%02d-28", m / 12, m % 12 + 1);
		assert_int_equal(hc_universe_parse_date(date, strlen(date), &w[j].end_date), HC_OK);
		w[j].status = HC_OK;
		w[j].nrules = 1;
		w[j].rules[0].defined = 1;
		w[j].rules[0].met = 1;
		w[j].rules[0].count = j % 2 ? 12 : 200;
	}
	in.rolling = &r;
	assert_true(hc_plots_available(PLOTS_ROLLING, &in));
	mem = open_memstream(&buf, &len);
	assert_int_equal(hc_plots_write_script(mem, PLOTS_ROLLING, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(mem);
	assert_non_null(strstr(buf, "set logscale y\n"));
	assert_non_null(strstr(buf, "set ytics (10, 15, 20, 30, 50, 70, 100, 150, 200)"));
	tics = strstr(buf, "set xtics (");
	assert_non_null(tics);
	*nticks = 0;
	*yearly = 1;
	for (p = strchr(tics, '"'); p && p < strchr(tics, '\n'); p = strchr(p + 1, '"')) {
		/* "LABEL" "YYYY-MM-01": the label, then the tick's date */
		char *label_end = strchr(p + 1, '"'), *date_start = strchr(label_end + 1, '"');
		size_t n = (size_t)(label_end - p - 1);
		assert_true(n < 16 && *nticks < 16);
		memcpy(labels[*nticks], p + 1, n);
		labels[*nticks][n] = 0;
		*yearly &= n == 4;
		for (k = 0; k < *nticks; k++)
			assert_string_not_equal(labels[k], labels[*nticks]);
		(*nticks)++;
		assert_non_null(date_start);
		assert_int_equal(strncmp(date_start + 8, "-01\"", 4), 0);
		p = strchr(date_start + 1, '"');   /* the date's closing quote */
	}
	free(buf);
	hc_free(w);
	hc_curve_free(c);
}

/* Every rule line of the rolling plot has its own style, defined in the
 * script with its own colour, dash pattern and marker: with six rules the
 * four shared styles of before drew two pairs of rules alike. */
static void test_plots_rolling_rules_styled_apart(void **state)
{
	enum { NW = 4, NR = 6 };
	static const int ids[NR] = { RULES_NEAR_FLOOR, RULES_MARGINAL, RULES_NEXT_HOLDING, RULES_TRACKING_ERROR,
				     RULES_STATMAN_BORROWING, RULES_STATMAN_LENDING };
	struct rolling_window w[NW];
	struct rolling_result r;
	struct curve *c = make_curve();
	struct plots_input in = { c, NULL, NULL, 0, NAN, NULL, NULL, NULL, NULL, NULL, 0, 0 };
	char *buf = NULL, *p, seen[NR][128], date[16];
	size_t len = 0, j, k, n = 0;
	FILE *mem;

	(void)state;
	memset(w, 0, sizeof w);
	memset(&r, 0, sizeof r);
	r.window = 24;
	r.step = 12;
	r.periods_per_year = 12;
	for (k = 0; k < NR; k++)
		r.rules |= RULES_FLAG(ids[k]);
	r.nwindows = NW;
	r.windows = w;
	for (j = 0; j < NW; j++) {
		snprintf(date, sizeof date, "%04d-12-31", 2020 + (int)j);
		assert_int_equal(hc_universe_parse_date(date, strlen(date), &w[j].end_date), HC_OK);
		w[j].status = HC_OK;
		w[j].nrules = NR;
		for (k = 0; k < NR; k++) {
			w[j].rules[k].defined = 1;
			w[j].rules[k].met = 1;
			w[j].rules[k].count = 10 + 5 * k + j;
		}
	}
	in.rolling = &r;
	mem = open_memstream(&buf, &len);
	assert_int_equal(hc_plots_write_script(mem, PLOTS_ROLLING, &in, PLOTS_PNG, NULL), HC_OK);
	fclose(mem);
	for (p = strstr(buf, "with linespoints ls "); p; p = strstr(p + 1, "with linespoints ls ")) {
		int ls = atoi(p + strlen("with linespoints ls "));
		char def[32], *line, *end;

		assert_true(n < NR);
		snprintf(def, sizeof def, "set style line %d ", ls);
		line = strstr(buf, def);
		assert_non_null(line);
		end = strchr(line, '\n');
		assert_non_null(end);
		line += strlen(def);
		assert_true((size_t)(end - line) < sizeof seen[0]);
		memcpy(seen[n], line, (size_t)(end - line));
		seen[n][end - line] = 0;
		assert_non_null(strstr(seen[n], "linecolor rgb"));
		assert_non_null(strstr(seen[n], "dashtype"));
		assert_non_null(strstr(seen[n], "pointtype"));
		for (k = 0; k < n; k++)
			assert_string_not_equal(seen[k], seen[n]);
		n++;
	}
	assert_int_equal(n, NR);
	free(buf);
	hc_curve_free(c);
}

static void test_plots_rolling_date_ticks_by_span(void **state)
{
	size_t n;
	int yearly;

	(void)state;
	rolling_ticks(36, 1, &n, &yearly);      /* three years of monthly windows */
	assert_true(n >= 4 && n <= 9);
	assert_false(yearly);
	rolling_ticks(21, 12, &n, &yearly);     /* twenty years of yearly windows */
	assert_true(n >= 4 && n <= 9);
	assert_true(yearly);
}

/* numpy's default linear quantile of x[0..n) (sorted here): position
 * h = (n-1) q between the order statistics at floor(h) and floor(h)+1. */
static double linear_quantile(double *x, size_t n, double q)
{
	double h = (double)(n - 1) * q, t;
	size_t i, j, lo;

	for (i = 1; i < n; i++)
		for (j = i; j > 0 && x[j - 1] > x[j]; j--) {
			t = x[j];
			x[j] = x[j - 1];
			x[j - 1] = t;
		}
	lo = (size_t)floor(h);
	return lo + 1 < n ? x[lo] + (h - (double)lo) * (x[lo + 1] - x[lo]) : x[lo];
}

/*
 * tail.dat: 100 times the mean and numpy's 5/50/95% quantiles of three
 * portfolios' expected shortfall at each count (per period: no
 * annualisation); horizon.dat: ending wealth and the lag share, a total loss
 * (a 5% quantile of 0) drawn at the log axis's bottom; the three scripts,
 * and the data files refused without their results.
 */
static void test_plots_tail_and_horizon(void **state)
{
	static const size_t sizes[] = { 1, 4 };
	static const double es[2][3] = { { 0.2385, 0.1917, 0.3021 }, { 0.1102, 0.0987, 0.1213 } };
	struct curve *c = make_curve();
	struct plots_input in = { c, NULL, NULL, 0, NAN, NULL, "invented", NULL, NULL, NULL, 10.0, 120 };
	struct hc_measures_curve *mc = NULL;
	struct hc_horizon_result h;
	struct hc_horizon_point pts[4];
	double v[3 * 2 * HC_MEASURE_COUNT], uni[HC_MEASURE_COUNT], x[3], row[5], w[9];
	char *buf = NULL, *line;
	size_t len = 0, j, k, n = 0;
	struct hc_error err;
	FILE *mem;
	int kind;

	(void)state;
	for (k = 0; k < 3 * 2 * HC_MEASURE_COUNT; k++)
		v[k] = NAN;
	for (k = 0; k < HC_MEASURE_COUNT; k++)
		uni[k] = NAN;
	for (k = 0; k < 3; k++)
		for (j = 0; j < 2; j++)
			v[(k * 2 + j) * HC_MEASURE_COUNT + HC_MEASURE_ES95] = es[j][k];
	uni[HC_MEASURE_ES95] = 0.0855;
	assert_int_equal(hc_measures_summarise(&mc, v, 3, sizes, 2, 1u << HC_MEASURE_ES95, uni, 12.0, &err), HC_OK);
	assert_false(hc_plots_available(PLOTS_SHORTFALL, &in));
	assert_int_equal(hc_plots_write_data(stdout, PLOTS_DATA_TAIL, &in, &err), HC_EUSAGE);
	assert_int_equal(hc_plots_write_data(stdout, PLOTS_DATA_HORIZON, &in, &err), HC_EUSAGE);
	in.tail = mc;
	assert_true(hc_plots_available(PLOTS_SHORTFALL, &in));
	assert_false(hc_plots_available(PLOTS_WEALTH, &in));
	mem = open_memstream(&buf, &len);
	assert_int_equal(hc_plots_write_data(mem, PLOTS_DATA_TAIL, &in, &err), HC_OK);
	fclose(mem);
	assert_non_null(strstr(buf, "percent of value lost in one month (per period, not annualised)"));
	for (line = strtok(buf, "\n"); line; line = strtok(NULL, "\n")) {
		if (line[0] == '#')
			continue;
		assert_int_equal(sscanf(line, "%lf %lf %lf %lf %lf", &row[0], &row[1], &row[2], &row[3], &row[4]), 5);
		assert_true(n < 2 && row[0] == (double)sizes[n]);
		memcpy(x, es[n], sizeof x);
		/* 10 significant digits printed: rtol 1e-9 */
		assert_true(fabs(row[1] - 100.0 * (x[0] + x[1] + x[2]) / 3.0) <= 1e-9 * row[1]);
		assert_true(fabs(row[2] - 100.0 * linear_quantile(x, 3, 0.05)) <= 1e-9 * row[2]);
		assert_true(fabs(row[3] - 100.0 * linear_quantile(x, 3, 0.50)) <= 1e-9 * row[3]);
		assert_true(fabs(row[4] - 100.0 * linear_quantile(x, 3, 0.95)) <= 1e-9 * row[4]);
		n++;
	}
	assert_int_equal(n, 2);
	free(buf);

	memset(&h, 0, sizeof h);
	memset(pts, 0, sizeof pts);
	h.periods = 120;
	h.route = HC_HORIZON_WINDOWS;
	h.paths = 2000;
	h.nsizes = 2;
	h.sizes = (size_t *)sizes;
	h.pts = pts;
	h.rate_wealth = NAN;
	pts[0] = (struct hc_horizon_point){ 1.64, 0.02, 0.0, 1.0428, 5.0471, 0.653, 0.011 };    /* a total loss at 5% */
	pts[1] = (struct hc_horizon_point){ 1.64, 0.02, 0.1172, 1.0428, 5.0471, 0.6616, 0.011 };
	pts[2] = (struct hc_horizon_point){ 1.64, 0.01, 0.6630, 1.5266, 3.0064, 0.5277, 0.011 };
	pts[3] = (struct hc_horizon_point){ 1.64, 0.01, 0.6961, 1.5435, 2.9158, 0.5538, 0.011 };
	in.horizon = &h;
	assert_true(hc_plots_available(PLOTS_WEALTH, &in) && hc_plots_available(PLOTS_LAGGING, &in));
	buf = NULL;
	mem = open_memstream(&buf, &len);
	assert_int_equal(hc_plots_write_data(mem, PLOTS_DATA_HORIZON, &in, &err), HC_OK);
	fclose(mem);
	/* the axis: the 1-2-5 step below 0.1172/1.1 (0.1065) is 0.1, above 5.0471 * 1.1 is 10 */
	assert_non_null(strstr(buf, "a quantile below 0.1 (the wealth axis's bottom: a total loss) is written as 0.1"));
	line = strstr(buf, "\n1 ");
	assert_non_null(line);
	assert_int_equal(sscanf(line + 1, "%lf %lf %lf %lf %lf %lf %lf %lf %lf", &w[0], &w[1], &w[2], &w[3], &w[4], &w[5],
				&w[6], &w[7], &w[8]), 9);
	assert_true(w[1] == 0.1 && w[2] == 1.0428 && w[3] == 5.0471 && w[4] == 0.1172);
	assert_true(fabs(w[7] - 65.3) < 1e-9 && fabs(w[8] - 66.16) < 1e-9);
	free(buf);
	for (kind = PLOTS_SHORTFALL; kind <= PLOTS_LAGGING; kind++) {
		char cap[2048];

		buf = NULL;
		mem = open_memstream(&buf, &len);
		assert_int_equal(hc_plots_write_script(mem, kind, &in, PLOTS_PNG, &err), HC_OK);
		fclose(mem);
		assert_non_null(strstr(buf, "set logscale x"));
		assert_non_null(strstr(buf, kind == PLOTS_SHORTFALL ? "'tail.dat' using 1:3:5 with filledcurves"
					    : kind == PLOTS_WEALTH ? "set yrange [0.1:10]" : "'horizon.dat' using 1:9"));
		snprintf(cap, sizeof cap, "set output \"%s.svg\"", hc_plots_name(kind));   /* for report.html */
		assert_non_null(strstr(buf, cap));
		hc_plots_caption(kind, &in, cap, sizeof cap);
		assert_non_null(strstr(cap, kind == PLOTS_SHORTFALL ? "(6 of the 120), per month and not annualised"
					    : kind == PLOTS_WEALTH ? "the whole history, 120 months (one window"
					    : "at most 1.12 percentage points"));
		free(buf);
	}
	hc_measures_curve_free(mc);
	hc_curve_free(c);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_plots_exact_data_follows_the_closed_form),
		cmocka_unit_test(test_plots_tail_and_horizon),
		cmocka_unit_test(test_plots_formats_and_availability),
		cmocka_unit_test(test_plots_find_gnuplot_along_a_path),
		cmocka_unit_test(test_plots_risk_renders_a_png_of_the_stated_size),
		cmocka_unit_test(test_plots_funds_mark_a_failing_fund),
		cmocka_unit_test(test_plots_render_treats_a_warning_as_failure),
		cmocka_unit_test(test_plots_script_allocation_failure),
		cmocka_unit_test(test_plots_rolling_date_ticks_by_span),
		cmocka_unit_test(test_plots_rolling_rules_styled_apart),
	};

	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
