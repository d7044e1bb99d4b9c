/*
 * Unit tests for the fund audit.
 *
 * References, named beside each check:
 *   - exact arithmetic on hand-built weights (HHI, effective count, screens);
 *   - the sample covariance matrix A formed explicitly here by its textbook
 *     definition (divisor T-1) and the quadratic form w'Aw, which the audit
 *     never forms (it takes the variance of the portfolio series);
 *   - exact enumeration of every same-count portfolio of a small universe
 *     for the percentile;
 *   - for the audit from a covariance matrix, the same textbook A handed
 *     to hc_audit_run on a matrix source, checked against the quadratic form and against
 *     the audit of the return series A came from;
 *   - the screens' limits from memory of the published texts (UCITS
 *     Directive 2009/65/EC Art. 52; Investment Company Act of 1940 s. 5(b)(1);
 *     Internal Revenue Code s. 851(b)(3)), as the tool states them.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>
#include <gsl/gsl_errno.h>

#include "fixture.h"
#include "holdcount/audit.h"
#include "holdcount/covmatrix.h"
#include "holdcount/curve.h"
#include "holdcount/holdings.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/periodic.h"
#include "holdcount/report.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

/* cmocka 1.1 has no double assertion: |got - want| <= tol, values printed. */
static void near(double got, double want, double tol, const char *what, int line)
{
	if (!(fabs(got - want) <= tol)) {
		print_error("%s = %.17g, expected %.17g within %g\n", what, got, want, tol);
		_fail(__FILE__, line);
	}
}
#define assert_near(got, want, tol) near((got), (want), (tol), #got, __LINE__)
#define assert_rel(got, want, rtol) near((got), (want), (rtol) * fabs(want), #got, __LINE__)

/* ---- a generated universe ---- */

/* A small linear congruential generator (Knuth's MMIX constants), so the
 * returns are the same on every platform. */
static double lcg_uniform(uint64_t *s)
{
	*s = *s * 6364136223846793005ULL + 1442695040888963407ULL;
	return (double)(*s >> 11) / 9007199254740992.0;
}

/*
 * m securities "QX01".., t monthly periods: a common factor with loadings
 * 0.6..1.4, idiosyncratic noise scaled 0.5..2.5 by security (so variances
 * differ), plus optionally security 2 as the near mirror image of security 1
 * (a hedge pair whose 50/50 mix is below the floor).
 */
static char *universe_text(size_t m, size_t t, uint64_t seed, int hedge)
{
	size_t cap = 64 + m * 8 + t * (16 + m * 26), used = 0, i, k;
	char *buf = malloc(cap);
	double *row = malloc(m * sizeof *row);

	assert_non_null(buf);
	assert_non_null(row);
	used += (size_t)snprintf(buf + used, cap - used, "date");
	for (i = 0; i < m; i++)
		used += (size_t)snprintf(buf + used, cap - used, ",QX%02zu", i + 1);
	used += (size_t)snprintf(buf + used, cap - used, "\n");
	for (k = 0; k < t; k++) {
		double f = 0.04 * (lcg_uniform(&seed) - 0.45);
		used += (size_t)snprintf(buf + used, cap - used, "%04zu-%02zu", 2001 + k / 12, k % 12 + 1);
		for (i = 0; i < m; i++) {
			double beta = 0.6 + 0.8 * (double)i / (double)(m > 1 ? m - 1 : 1);
			double scale = 0.5 + 2.0 * (double)((i * 7) % m) / (double)m;
			row[i] = beta * f + 0.03 * scale * (lcg_uniform(&seed) - 0.5);
			if (hedge && i == 1)
				row[i] = -row[0] + 0.001 * (lcg_uniform(&seed) - 0.5);
			used += (size_t)snprintf(buf + used, cap - used, ",%.17g", row[i]);
		}
		used += (size_t)snprintf(buf + used, cap - used, "\n");
		assert_true(used < cap);
	}
	free(row);
	return buf;
}

struct fixture {
	struct universe *u;
	struct moments mo;
};

static void fixture_load(struct fixture *fx, size_t m, size_t t, uint64_t seed, int hedge)
{
	char *text = universe_text(m, t, seed, hedge);
	struct universe_options uo;
	struct hc_error err;
	int rc;

	hc_universe_options_init(&uo);
	rc = hc_universe_load_buffer(&fx->u, "u.csv", text, strlen(text), &uo, &err);
	free(text);
	if (rc != HC_OK)
		print_error("%s\n", err.message);
	assert_int_equal(rc, HC_OK);
	assert_int_equal(fx->u->m, m);
	assert_near(fx->u->periods_per_year, 12, 0);
	assert_int_equal(hc_moments_from_universe(&fx->mo, fx->u, &err), HC_OK);
}

static struct holdings *holdings_text(const char *text)
{
	struct holdings *h;
	struct hc_error err;
	int rc = hc_holdings_load_buffer(&h, "h.csv", text, strlen(text), NULL, &err);

	if (rc != HC_OK)
		print_error("%s\n", err.message);
	assert_int_equal(rc, HC_OK);
	return h;
}

static struct audit_result *run(const struct holdings *h, const struct fixture *fx,
				const struct audit_options *opt)
{
	struct audit_result *a;
	struct hc_error err;
	int rc = hc_audit_run(&a, h, fixture_series(fx->u), &fx->mo, opt, &err);

	if (rc != HC_OK)
		print_error("%s\n", err.message);
	assert_int_equal(rc, HC_OK);
	return a;
}

/* The textbook sample covariance of securities i and j (divisor T-1). */
static double cov_ij(const struct universe *u, size_t i, size_t j)
{
	const double *x = u->x + i * u->t, *y = u->x + j * u->t;
	double mx = 0, my = 0, s = 0;
	size_t k;

	for (k = 0; k < u->t; k++) {
		mx += x[k];
		my += y[k];
	}
	mx /= (double)u->t;
	my /= (double)u->t;
	for (k = 0; k < u->t; k++)
		s += (x[k] - mx) * (y[k] - my);
	return s / (double)(u->t - 1);
}

/* w'Aw with A formed entry by entry; idx are universe indices. */
static double quad_form(const struct universe *u, const size_t *idx, const double *w, size_t n)
{
	double s = 0;
	size_t a, b;

	for (a = 0; a < n; a++)
		for (b = 0; b < n; b++)
			s += w[a] * w[b] * cov_ij(u, idx[a], idx[b]);
	return s;
}

/* v-bar and c-bar by their definitions (design.md section 3). */
static void averages(const struct universe *u, double *vbar, double *cbar)
{
	double v = 0, c = 0;
	size_t i, j;

	for (i = 0; i < u->m; i++)
		for (j = 0; j < u->m; j++)
			if (i == j)
				v += cov_ij(u, i, i);
			else
				c += cov_ij(u, i, j);
	*vbar = v / (double)u->m;
	*cbar = c / ((double)u->m * (double)(u->m - 1));
}

static void options(struct audit_options *opt, size_t paths)
{
	hc_audit_options_init(opt);
	opt->paths = paths;
	opt->seed = 20240917;
	opt->threads = 1;
}

/* ---- concentration and risk ---- */

static void test_audit_concentration_and_risk_match_definitions(void **state)
{
	/* Weights 0.385 0.245 0.17 0.12 0.08 (sum 1).  By hand:
	 * HHI = 0.148225 + 0.060025 + 0.0289 + 0.0144 + 0.0064 = 0.25795,
	 * effective = 1/0.25795, top-10 = 1 (five holdings), largest 0.385. */
	static const char *text =
		"fund,id,weight\n"
		"Alder,QX03,0.385\nAlder,QX11,0.245\nAlder,QX07,0.17\nAlder,QX02,0.12\nAlder,QX19,0.08\n";
	static const size_t idx[] = { 2, 10, 6, 1, 18 };
	static const double w[] = { 0.385, 0.245, 0.17, 0.12, 0.08 };
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;
	const struct audit_fund *af;
	double s2, vbar, cbar, wsd = 0, hhi = 0.25795;
	size_t k;

	fixture_load(&fx, 20, 60, 7, 0);
	h = holdings_text(text);
	options(&opt, 0);
	a = run(h, &fx, &opt);
	af = &a->funds[0];
	assert_int_equal(af->holdings, 5);
	assert_near(af->hhi, hhi, 1e-15);
	assert_near(af->effective_holdings, 1 / hhi, 1e-13);
	assert_near(af->top10_share, 1.0, 1e-15);
	assert_near(af->max_weight, 0.385, 0);
	assert_string_equal(af->max_id, "QX03");
	/* sigma: w'Aw with A formed explicitly (the audit never forms A),
	 * annualised by 12; agreement to 1e-12 relative is rounding only. */
	s2 = quad_form(fx.u, idx, w, 5);
	assert_rel(af->variance, 12 * s2, 1e-12);
	assert_rel(af->sd, sqrt(12 * s2), 1e-12);
	/* Choueifaty & Coignard (2008): sum w_i sigma_i / sigma_p */
	for (k = 0; k < 5; k++)
		wsd += w[k] * sqrt(cov_ij(fx.u, idx[k], idx[k]));
	assert_rel(af->diversification_ratio, wsd / sqrt(s2), 1e-12);
	/* design.md section 3: E[w'Aw] over random placements */
	averages(fx.u, &vbar, &cbar);
	assert_rel(af->weighted_random_sd, sqrt(12 * (hhi * vbar + (1 - hhi) * cbar)), 1e-12);
	/* the same with equal weights over 5 holdings: E[sigma^2(5)] */
	assert_rel(af->equal_random_sd, sqrt(12 * (vbar / 5 + (1 - 1.0 / 5) * cbar)), 1e-12);
	/* equivalent count (v-bar - c-bar)/(s2 - c-bar), from the explicit averages */
	assert_true(s2 > cbar);
	assert_false(af->below_floor);
	assert_rel(af->equivalent_count, (vbar - cbar) / (s2 - cbar), 1e-10);
	assert_true(isnan(af->sd_percentile));   /* paths = 0: not sampled */
	assert_int_equal(af->nmissing, 0);
	assert_false(af->risk_subset);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_equivalent_count_inverts_exact_curve(void **state)
{
	/* Feeding E[sigma^2(N)] back must give N (design.md section 3): the
	 * inversion is algebraic, so 1e-9 leaves room only for rounding. */
	static const double counts[] = { 1, 2, 3.5, 7, 13, 19.25 };
	struct fixture fx;
	size_t k;
	double n;

	fixture_load(&fx, 20, 60, 11, 0);
	for (k = 0; k < sizeof counts / sizeof counts[0]; k++) {
		double s2 = hc_curve_expected_variance(&fx.mo, counts[k]);
		assert_int_equal(hc_curve_equivalent_count(&fx.mo, s2, &n), 0);
		assert_near(n, counts[k], 1e-9);
	}
	hc_universe_free(fx.u);
}

static void test_audit_below_the_floor_is_not_a_number(void **state)
{
	/* QX02 is QX01's mirror image plus tiny noise: the 50/50 pair's
	 * variance is far below the average covariance (the floor). */
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;
	struct report *r;
	struct hc_error err;
	double vbar, cbar;
	const struct report_table *t;
	size_t col;
	char line[4096];
	FILE *fp;
	int json_null = 0, json_flag = 0, json_text = 0;

	fixture_load(&fx, 12, 48, 5, 1);
	averages(fx.u, &vbar, &cbar);
	h = holdings_text("fund,id,weight\nBirch,QX01,0.5\nBirch,QX02,0.5\n");
	options(&opt, 0);
	a = run(h, &fx, &opt);
	assert_true(a->funds[0].variance / 12 < cbar);
	assert_true(a->funds[0].below_floor);
	assert_true(isnan(a->funds[0].equivalent_count));
	assert_int_equal(hc_audit_report(&r, a, h, &err), HC_OK);
	t = r->tables[0];
	assert_string_equal(t->key, "funds");
	for (col = 0; col < t->ncols; col++)
		if (strcmp(t->cols[col].key, "equivalent_count") == 0)
			break;
	assert_true(col < t->ncols);
	/* no number, with the reason: CSV (and the text table) say "below the
	 * floor", JSON has null there and below_floor true */
	assert_int_equal(t->cells[col].kind, REPORT_NONE);
	assert_string_equal(t->cells[col].text, "below the floor");
	fp = tmpfile();
	assert_non_null(fp);
	assert_int_equal(hc_report_writer_csv->write(fp, r, &err), HC_OK);
	rewind(fp);
	assert_non_null(fgets(line, sizeof line, fp));
	assert_non_null(fgets(line, sizeof line, fp));
	assert_non_null(strstr(line, ",below the floor,"));
	fclose(fp);
	fp = tmpfile();
	assert_non_null(fp);
	assert_int_equal(hc_report_writer_json->write(fp, r, &err), HC_OK);
	rewind(fp);
	while (fgets(line, sizeof line, fp)) {     /* cJSON prints "key":<tab>value */
		json_null |= strstr(line, "\"equivalent_count\":\tnull,") != NULL;
		json_flag |= strstr(line, "\"below_floor\":\ttrue,") != NULL;
		json_text |= strstr(line, "below the floor") != NULL;
	}
	fclose(fp);
	assert_true(json_null);
	assert_true(json_flag);
	assert_false(json_text);
	hc_report_free(r);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* ---- screens at and just beyond each limit ---- */

/* A one-fund holdings text from percent weights; ids QX01.. in order. */
static struct holdings *fund_of(const double *pct, size_t n, const char *issuers)
{
	char buf[4096];
	size_t used = 0, k;
	struct holdings *h;

	used += (size_t)snprintf(buf, sizeof buf, issuers ? "fund,id,weight,issuer\n" : "fund,id,weight\n");
	for (k = 0; k < n; k++) {
		used += (size_t)snprintf(buf + used, sizeof buf - used, "Cedar,QX%02zu,%.6g%%", k + 1, pct[k]);
		if (issuers)
			used += (size_t)snprintf(buf + used, sizeof buf - used, ",I%c", issuers[k]);
		used += (size_t)snprintf(buf + used, sizeof buf - used, "\n");
	}
	h = holdings_text(buf);
	assert_int_equal(h->nwarnings, 0);   /* the percents sum to 100 */
	return h;
}

static const struct audit_fund *screen_fund(const struct fixture *fx, const double *pct,
					    size_t n, const char *issuers,
					    struct audit_result **a, struct holdings **h)
{
	struct audit_options opt;

	options(&opt, 0);
	*h = fund_of(pct, n, issuers);
	*a = run(*h, fx, &opt);
	return &(*a)->funds[0];
}

#define SCREEN_CASE(pct, issuers, body) do { \
		struct audit_result *a_; struct holdings *h_; \
		const struct audit_fund *af = screen_fund(&fx, pct, sizeof pct / sizeof pct[0], issuers, &a_, &h_); \
		body; \
		hc_audit_result_free(a_); hc_holdings_free(h_); \
	} while (0)

static void test_audit_screens_ucits_art52(void **state)
{
	/* UCITS 2009/65/EC Art. 52 (from memory): no issuer above 10%, issuers
	 * above 5% together at most 40%.  Each fund sums to 100% exactly in
	 * decimal; figures are compared within 1e-14, room for the dozen
	 * roundings of parsing, normalising and summing. */
	static const double at_limit[] = { 10, 10, 10, 10, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };   /* 40 + 60 */
	static const double issuer_over[] = { 10.01, 9.99, 10, 10, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };
	static const double aggregate_over[] = { 10, 10, 10, 5.005, 5.005, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 4.99 };  /* 40.01 above 5% */
	struct fixture fx;

	fixture_load(&fx, 20, 36, 3, 0);
	SCREEN_CASE(at_limit, NULL, {
		assert_true(af->checks[AUDIT_PART_UCITS_ISSUER].passed);
		assert_near(af->checks[AUDIT_PART_UCITS_ISSUER].figure, 0.10, 1e-14);
		assert_true(af->checks[AUDIT_PART_UCITS_AGGREGATE].passed);
		assert_near(af->checks[AUDIT_PART_UCITS_AGGREGATE].figure, 0.40, 1e-14);
		assert_true(af->screen_passed[0]);
	});
	SCREEN_CASE(issuer_over, NULL, {
		assert_false(af->checks[AUDIT_PART_UCITS_ISSUER].passed);
		assert_near(af->checks[AUDIT_PART_UCITS_ISSUER].figure, 0.1001, 1e-14);
		assert_string_equal(af->checks[AUDIT_PART_UCITS_ISSUER].issuer, "QX01");
		assert_false(af->screen_passed[0]);
	});
	SCREEN_CASE(aggregate_over, NULL, {
		assert_true(af->checks[AUDIT_PART_UCITS_ISSUER].passed);
		assert_false(af->checks[AUDIT_PART_UCITS_AGGREGATE].passed);
		assert_near(af->checks[AUDIT_PART_UCITS_AGGREGATE].figure, 0.4001, 1e-14);
		assert_false(af->screen_passed[0]);
	});
	hc_universe_free(fx.u);
}

static void test_audit_screens_1940act_5b1(void **state)
{
	/* Investment Company Act of 1940 s. 5(b)(1), weight part (from memory):
	 * at least 75% of assets in issuers of at most 5% each. */
	static const double at_limit[] = { 12.5, 12.5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };      /* 75 in <= 5% */
	static const double beyond[] = { 12.505, 12.505, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 4.99 };     /* 74.99 */
	struct fixture fx;

	fixture_load(&fx, 20, 36, 3, 0);
	SCREEN_CASE(at_limit, NULL, {
		assert_true(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_1940ACT_SMALL].figure, 0.75, 1e-14);
		assert_true(af->screen_passed[1]);
		assert_false(af->screen_passed[0]);   /* 12.5% breaks UCITS's 10% */
	});
	SCREEN_CASE(beyond, NULL, {
		assert_false(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_1940ACT_SMALL].figure, 0.7499, 1e-14);
		assert_false(af->screen_passed[1]);
	});
	hc_universe_free(fx.u);
}

static void test_audit_screens_1940act_issuer_above_5pct_excluded(void **state)
{
	/* Investment Company Act of 1940 s. 5(b)(1) (from memory of the
	 * statute): the 75% basket holds only issuers of "not more than 5 per
	 * centum" of assets each, so an issuer at exactly 5.00% counts towards
	 * it and one at 5.01% does not.
	 *   at_limit: fifteen 5.00% issuers = 75.00%, in; passes.
	 *   one_over: one of them at 5.01% (12.49 + 12.5 + 5.01 + fourteen
	 *     5.00%): the basket is 70.00%, not 75.01%; fails.
	 *   kept_out: 5.01 + 19.99 + fifteen 5.00%: the basket is exactly the
	 *     fifteen, 75.00% (80.01% were 5.01% let in); passes. */
	static const double at_limit[] = { 12.5, 12.5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };
	static const double one_over[] = { 12.49, 12.5, 5.01, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };
	static const double kept_out[] = { 5.01, 19.99, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };
	struct fixture fx;

	fixture_load(&fx, 20, 36, 3, 0);
	SCREEN_CASE(at_limit, NULL, {
		assert_true(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_1940ACT_SMALL].figure, 0.75, 1e-14);
	});
	SCREEN_CASE(one_over, NULL, {
		assert_false(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_1940ACT_SMALL].figure, 0.70, 1e-14);
		assert_false(af->screen_passed[1]);
		/* UCITS Art. 52 (from memory): 5.01% is "above 5%" there too,
		 * 12.49 + 12.5 + 5.01 = 30% together */
		assert_near(af->checks[AUDIT_PART_UCITS_AGGREGATE].figure, 0.30, 1e-14);
	});
	SCREEN_CASE(kept_out, NULL, {
		assert_true(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_1940ACT_SMALL].figure, 0.75, 1e-14);
		assert_true(af->screen_passed[1]);
	});
	hc_universe_free(fx.u);
}

static void test_audit_screens_ric_851b3(void **state)
{
	/* Internal Revenue Code s. 851(b)(3) (from memory): at least 50% of
	 * assets in issuers of at most 5% each; no issuer above 25%. */
	static const double at_limit[] = { 25, 25, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };
	static const double issuer_over[] = { 25.01, 24.99, 5, 5, 5, 5, 5, 5, 5, 5, 5, 5 };
	static const double small_under[] = { 25, 19.99, 5.02, 5, 5, 5, 5, 5, 5, 5, 5, 5, 4.99 };   /* 49.99 in <= 5% */
	struct fixture fx;

	fixture_load(&fx, 20, 36, 3, 0);
	SCREEN_CASE(at_limit, NULL, {
		assert_true(af->checks[AUDIT_PART_RIC_ISSUER].passed);
		assert_true(af->checks[AUDIT_PART_RIC_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_RIC_SMALL].figure, 0.50, 1e-14);
		assert_true(af->screen_passed[2]);
		assert_false(af->screen_passed[1]);   /* 50 < 75: fails the 1940 Act part */
	});
	SCREEN_CASE(issuer_over, NULL, {
		assert_false(af->checks[AUDIT_PART_RIC_ISSUER].passed);
		assert_near(af->checks[AUDIT_PART_RIC_ISSUER].figure, 0.2501, 1e-14);
		assert_true(af->checks[AUDIT_PART_RIC_SMALL].passed);
		assert_false(af->screen_passed[2]);
	});
	SCREEN_CASE(small_under, NULL, {
		assert_true(af->checks[AUDIT_PART_RIC_ISSUER].passed);
		assert_false(af->checks[AUDIT_PART_RIC_SMALL].passed);
		assert_near(af->checks[AUDIT_PART_RIC_SMALL].figure, 0.4999, 1e-14);
	});
	hc_universe_free(fx.u);
}

static void test_audit_screens_aggregate_by_issuer(void **state)
{
	/* Issuer = the issuer column: QX01 (6%) and QX02 (5%) share issuer IA,
	 * so IA holds 11% and breaks UCITS Art. 52's 10%, though no single
	 * position does.  The other 89% are twenty 4.45% positions, one issuer
	 * each. */
	static const double pct[] = { 6, 5, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45,
				      4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45, 4.45 };
	struct fixture fx;

	fixture_load(&fx, 24, 36, 3, 0);
	SCREEN_CASE(pct, "AABCDEFGHIJKLMNOPQRSTU", {
		assert_near(af->max_weight, 0.06, 1e-15);
		assert_false(af->checks[AUDIT_PART_UCITS_ISSUER].passed);
		assert_near(af->checks[AUDIT_PART_UCITS_ISSUER].figure, 0.11, 1e-14);
		assert_string_equal(af->checks[AUDIT_PART_UCITS_ISSUER].issuer, "IA");
	});
	hc_universe_free(fx.u);
}

static void test_audit_largest_ties_go_to_the_smallest_id(void **state)
{
	/* Constructed tie: QX09 and QX04 both hold 30%, QX09 first in the file.
	 * The documented rule (docs/audit.md) names the smallest id in byte
	 * order, QX04, for the largest position and the largest issuer alike.
	 * With an issuer column the same rule picks issuer "Ib" over "Iz" (QX09
	 * and QX04 map to them), and the largest position stays QX04. */
	static const char *plain =
		"fund,id,weight\nOak,QX09,0.3\nOak,QX04,0.3\nOak,QX06,0.2\nOak,QX02,0.2\n";
	static const char *issued =
		"fund,id,weight,issuer\nOak,QX09,0.3,Ib\nOak,QX04,0.3,Iz\nOak,QX06,0.2,Ic\nOak,QX02,0.2,Id\n";
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;

	fixture_load(&fx, 12, 36, 43, 0);
	options(&opt, 0);
	h = holdings_text(plain);
	a = run(h, &fx, &opt);
	assert_near(a->funds[0].max_weight, 0.3, 1e-15);
	assert_string_equal(a->funds[0].max_id, "QX04");
	assert_string_equal(a->funds[0].issuer_max_id, "QX04");
	assert_string_equal(a->funds[0].checks[AUDIT_PART_UCITS_ISSUER].issuer, "QX04");
	hc_audit_result_free(a);
	hc_holdings_free(h);
	h = holdings_text(issued);
	a = run(h, &fx, &opt);
	assert_string_equal(a->funds[0].max_id, "QX04");
	assert_string_equal(a->funds[0].issuer_max_id, "Ib");
	assert_near(a->funds[0].issuer_max, 0.3, 1e-15);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* ---- percentile ---- */

/* The variance of the equal-weight portfolio of the securities in mask. */
static double subset_variance(const struct universe *u, unsigned mask)
{
	size_t idx[32], n = 0, i;
	double w[32];

	for (i = 0; i < u->m; i++)
		if (mask & (1u << i))
			idx[n++] = i;
	for (i = 0; i < n; i++)
		w[i] = 1.0 / (double)n;
	return quad_form(u, idx, w, n);
}

/* Exact mid-rank of s2 among all n-subsets, by enumeration. */
static double enumerated_rank(const struct universe *u, size_t n, double s2)
{
	unsigned mask;
	double below = 0, equal = 0, total = 0;

	for (mask = 0; mask < (1u << u->m); mask++) {
		double v;
		if ((size_t)__builtin_popcount(mask) != n)
			continue;
		v = subset_variance(u, mask);
		total++;
		if (fabs(v - s2) <= 1e-12 * s2)
			equal++;
		else if (v < s2)
			below++;
	}
	return (below + equal / 2) / total;
}

static void test_audit_percentile_against_enumeration(void **state)
{
	/* M = 8, n = 3: all 56 subsets enumerated.  With K = 20000 sampled
	 * portfolios the sampled rank has binomial standard error
	 * sqrt(p(1-p)/K) <= 0.0036; 4.5 standard errors is the tolerance.
	 * Four funds: Middle and Lowest equal-weight; Tilted holds QX01, QX04
	 * and QX08 at 0.55/0.30/0.15, ranked (as every fund is) among the
	 * equal-weight 3-subsets; Level holds the same three equally, so the
	 * two ranks differ only by the weighting. */
	static const size_t tilt_idx[] = { 0, 3, 7 };
	static const double tilt_w[] = { 0.55, 0.30, 0.15 };
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;
	double var[8], exact, tol, rank[4];
	size_t order[8], i, j, K = 20000;
	char text[512];

	fixture_load(&fx, 8, 30, 17, 0);
	for (i = 0; i < 8; i++) {
		var[i] = cov_ij(fx.u, i, i);
		order[i] = i;
	}
	for (i = 0; i < 8; i++)                   /* order by variance, lowest first */
		for (j = i + 1; j < 8; j++)
			if (var[order[j]] < var[order[i]]) {
				size_t s = order[i]; order[i] = order[j]; order[j] = s;
			}
	snprintf(text, sizeof text,
		 "fund,id,weight\n"
		 "Middle,QX02,1\nMiddle,QX05,1\nMiddle,QX07,1\n"
		 "Lowest,%s,1\nLowest,%s,1\nLowest,%s,1\n"
		 "Tilted,QX01,0.55\nTilted,QX04,0.30\nTilted,QX08,0.15\n"
		 "Level,QX01,1\nLevel,QX04,1\nLevel,QX08,1\n",
		 fx.u->ids[order[0]], fx.u->ids[order[1]], fx.u->ids[order[2]]);
	h = holdings_text(text);
	options(&opt, K);
	a = run(h, &fx, &opt);
	assert_int_equal(a->nfunds, 4);
	/* Tilted's variance is w'Aw with A formed explicitly */
	assert_rel(a->funds[2].variance, 12 * quad_form(fx.u, tilt_idx, tilt_w, 3), 1e-12);
	for (i = 0; i < 4; i++) {
		exact = enumerated_rank(fx.u, 3, a->funds[i].variance / 12);
		tol = 4.5 * sqrt(fmax(exact * (1 - exact), 0.5 / (double)K) / (double)K);
		assert_near(a->funds[i].sd_percentile, exact, tol);
		rank[i] = exact;
	}
	/* the weighting moves the exact rank by more than one subset in 56 */
	assert_true(fabs(rank[2] - rank[3]) > 1.0 / 56);
	/* the three lowest-variance securities make a low-ranking portfolio */
	assert_true(a->funds[1].sd_percentile < 0.2);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_percentile_ties_at_full_count(void **state)
{
	/* n = M: every random equal-weight portfolio is the whole universe, the
	 * same portfolio as the fund; mid-rank counts each tie half, so the
	 * percentile is exactly (0 + K/2)/K = 0.5. */
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;

	fixture_load(&fx, 6, 30, 23, 0);
	h = holdings_text("fund,id,weight\nDogwood,QX01,1\nDogwood,QX02,1\nDogwood,QX03,1\n"
			  "Dogwood,QX04,1\nDogwood,QX05,1\nDogwood,QX06,1\n");
	options(&opt, 500);
	a = run(h, &fx, &opt);
	assert_near(a->funds[0].sd_percentile, 0.5, 0);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* ---- from a covariance matrix ---- */

/* The textbook covariance matrix of fx's universe as a struct covmatrix
 * (ids borrowed from u; free c->a with free()). */
static void textbook_matrix(const struct universe *u, struct covmatrix *c)
{
	size_t i, j;

	c->m = u->m;
	c->ids = u->ids;
	c->a = malloc(u->m * u->m * sizeof *c->a);
	assert_non_null(c->a);
	for (i = 0; i < u->m; i++)
		for (j = 0; j < u->m; j++)
			c->a[i * u->m + j] = cov_ij(u, i, j);
}

static struct audit_result *run_matrix(const struct holdings *h, const struct covmatrix *c,
				       double ppy, int annualised, const struct audit_options *opt)
{
	struct hc_source am;
	struct audit_result *a;
	struct moments mo;
	struct hc_error err;
	int rc;

	hc_source_init_matrix(&am, c, annualised ? ppy : 0);
	am.name = "cov.csv";
	assert_int_equal(hc_moments_from_source(&mo, &am, &err), HC_OK);
	rc = hc_audit_run(&a, h, &am, &mo, opt, &err);
	if (rc != HC_OK)
		print_error("%s\n", err.message);
	assert_int_equal(rc, HC_OK);
	return a;
}

static void test_audit_matrix_agrees_with_returns(void **state)
{
	/* The same funds audited from the return series and from their textbook
	 * covariance matrix A: the series variance and w'Aw are the same number
	 * up to rounding (1e-12 relative; the equivalent count divides by
	 * s2 - c-bar, 1e-10).  The percentile must agree exactly: the sampler's
	 * matrix route draws the same portfolios from the same seed
	 * (sampler.h), and their variances differ by rounding only, far inside
	 * the tie tolerance's reach of no fund.  One id is missing from both. */
	static const char *text =
		"fund,id,weight\n"
		"Alder,QX03,0.385\nAlder,QX11,0.245\nAlder,QX07,0.17\nAlder,QX02,0.12\nAlder,QX19,0.08\n"
		"Hazel,QX05,0.3\nHazel,ZZ404,0.1\nHazel,QX14,0.25\nHazel,QX16,0.35\n"
		"Larch,QX01,1\nLarch,QX04,1\nLarch,QX09,1\nLarch,QX12,1\nLarch,QX13,1\nLarch,QX20,1\n";
	static const size_t idx[] = { 2, 10, 6, 1, 18 };
	static const double w[] = { 0.385, 0.245, 0.17, 0.12, 0.08 };
	struct fixture fx;
	struct covmatrix c;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *ar, *am;
	size_t f;

	fixture_load(&fx, 20, 60, 7, 0);
	textbook_matrix(fx.u, &c);
	h = holdings_text(text);
	options(&opt, 3000);
	ar = run(h, &fx, &opt);
	am = run_matrix(h, &c, 12, 1, &opt);
	assert_int_equal(am->nfunds, 3);
	assert_int_equal(am->m, 20);
	assert_int_equal(am->t, 0);
	assert_string_equal(am->input, "covariance matrix");
	assert_true(am->annualised);
	/* Alder against the quadratic form itself, annualised by 12 */
	assert_rel(am->funds[0].variance, 12 * quad_form(fx.u, idx, w, 5), 1e-12);
	for (f = 0; f < 3; f++) {
		const struct audit_fund *x = &ar->funds[f], *y = &am->funds[f];

		assert_rel(y->sd, x->sd, 1e-12);
		assert_rel(y->diversification_ratio, x->diversification_ratio, 1e-12);
		assert_rel(y->equivalent_count, x->equivalent_count, 1e-10);
		assert_rel(y->weighted_random_sd, x->weighted_random_sd, 1e-12);
		assert_rel(y->equal_random_sd, x->equal_random_sd, 1e-12);
		assert_near(y->sd_percentile, x->sd_percentile, 0);
		assert_true(y->sd_percentile > 0 && y->sd_percentile < 1);
		assert_int_equal(y->nmissing, x->nmissing);
		assert_int_equal(y->risk_holdings, x->risk_holdings);
	}
	assert_int_equal(am->funds[1].nmissing, 1);
	assert_true(am->funds[1].risk_subset);
	hc_audit_result_free(ar);
	hc_audit_result_free(am);
	hc_holdings_free(h);
	free(c.a);
	hc_universe_free(fx.u);
}

static void test_audit_matrix_own_scale_and_errors(void **state)
{
	/* Not annualised: the figures are the matrix's own, w'Aw exactly as
	 * formed here (1e-13 relative: sums in another order). */
	static const size_t idx[] = { 4, 13, 15 };
	static const double w[] = { 0.3, 0.25, 0.35 };
	struct fixture fx;
	struct covmatrix c;
	struct audit_options opt;
	struct hc_source bad;
	struct holdings *h;
	struct audit_result *a;
	struct moments mo;
	struct hc_error err;
	double wn[3];
	size_t k;

	fixture_load(&fx, 20, 60, 7, 0);
	textbook_matrix(fx.u, &c);
	h = holdings_text("fund,id,weight\nHazel,QX05,0.3\nHazel,ZZ404,0.1\nHazel,QX14,0.25\nHazel,QX16,0.35\n");
	options(&opt, 0);
	a = run_matrix(h, &c, 1, 0, &opt);
	for (k = 0; k < 3; k++)
		wn[k] = w[k] / 0.9;     /* the in-matrix weights, renormalised */
	assert_rel(a->funds[0].variance, quad_form(fx.u, idx, wn, 3), 1e-13);
	assert_false(a->annualised);
	assert_near(a->periods_per_year, 1, 0);
	hc_audit_result_free(a);
	/* strict: the missing id is named with the matrix's file */
	opt.strict = 1;
	hc_source_init_matrix(&bad, &c, 0);
	bad.name = "cov.csv";
	assert_int_equal(hc_moments_from_source(&mo, &bad, &err), HC_OK);
	assert_int_equal(hc_audit_run(&a, h, &bad, &mo, &opt, &err), HC_EDATA);
	assert_null(a);
	assert_string_equal(err.message, "h.csv:3:2: id 'ZZ404' of fund 'Hazel' is not in the universe 'cov.csv', "
			    "expected an id of the universe (without --strict the fund's risk is computed on the rest)");
	/* the moments left out: taken from the matrix itself, the same figures */
	opt.strict = 0;
	assert_int_equal(hc_audit_run(&a, h, &bad, NULL, &opt, &err), HC_OK);
	assert_rel(a->funds[0].variance, quad_form(fx.u, idx, wn, 3), 1e-13);
	hc_audit_result_free(a);
	/* a scale that is not a number of periods is refused where the
	 * source is built (hc_source_from_covmatrix, test_source.c) */
	hc_holdings_free(h);
	free(c.a);
	hc_universe_free(fx.u);
}

static void test_audit_matrix_percentile_against_enumeration(void **state)
{
	/* As test_audit_percentile_against_enumeration, through the matrix
	 * route: every 3-subset of 8 enumerated, K = 20000, 4.5 standard errors. */
	struct fixture fx;
	struct covmatrix c;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;
	double exact, tol;
	size_t K = 20000;

	fixture_load(&fx, 8, 30, 17, 0);
	textbook_matrix(fx.u, &c);
	h = holdings_text("fund,id,weight\nMiddle,QX02,1\nMiddle,QX05,1\nMiddle,QX07,1\n");
	options(&opt, K);
	a = run_matrix(h, &c, 12, 1, &opt);
	exact = enumerated_rank(fx.u, 3, a->funds[0].variance / 12);
	tol = 4.5 * sqrt(fmax(exact * (1 - exact), 0.5 / (double)K) / (double)K);
	assert_near(a->funds[0].sd_percentile, exact, tol);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	free(c.a);
	hc_universe_free(fx.u);
}

/* ---- missing ids, strict ---- */

static void test_audit_missing_ids_renormalised_or_refused(void **state)
{
	static const char *text =
		"fund,id,weight\nElm,QX04,0.45\nElm,ZZ999,0.1\nElm,QX09,0.45\n"
		"Fern,ZZ1,0.6\nFern,ZZ2,0.4\n";
	static const size_t idx[] = { 3, 8 };
	static const double w[] = { 0.5, 0.5 };   /* 0.45/0.9 each */
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;
	struct hc_error err;

	fixture_load(&fx, 12, 36, 29, 0);
	h = holdings_text(text);
	options(&opt, 0);
	a = run(h, &fx, &opt);
	assert_int_equal(a->funds[0].nmissing, 1);
	assert_string_equal(a->funds[0].missing[0].id, "ZZ999");
	assert_int_equal(a->funds[0].missing[0].line, 3);
	assert_near(a->funds[0].missing_weight, 0.1, 1e-15);
	assert_true(a->funds[0].risk_subset);
	assert_int_equal(a->funds[0].risk_holdings, 2);
	assert_int_equal(a->funds[0].holdings, 3);
	assert_rel(a->funds[0].variance, 12 * quad_form(fx.u, idx, w, 2), 1e-12);
	hc_audit_result_free(a);
	/* Fern holds nothing the universe knows: concentration yes, risk none,
	 * and no percentile even when sampling */
	options(&opt, 50);
	a = run(h, &fx, &opt);
	assert_false(a->funds[1].risk_known);
	assert_near(a->funds[1].hhi, 0.52, 1e-15);          /* 0.36 + 0.16 */
	assert_near(a->funds[1].missing_weight, 1.0, 1e-15);
	assert_true(isnan(a->funds[1].sd));
	assert_true(isnan(a->funds[1].sd_percentile));
	assert_false(isnan(a->funds[0].sd_percentile));
	hc_audit_result_free(a);
	options(&opt, 0);
	opt.strict = 1;
	assert_int_equal(hc_audit_run(&a, h, fixture_series(fx.u), &fx.mo, &opt, &err), HC_EDATA);
	assert_null(a);
	assert_string_equal(err.message, "h.csv:3:2: id 'ZZ999' of fund 'Elm' is not in the universe 'u.csv', expected an id of the universe (without --strict the fund's risk is computed on the rest)");
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* ---- policy and sectors ---- */

static void test_audit_policy_and_sectors(void **state)
{
	/* Fir: 4 holdings 0.4/0.3/0.2/0.1, HHI 0.30, effective 3.33...,
	 * sectors Energy 0.4+0.2 = 0.6, Utilities 0.3, unmapped 0.1: sector HHI
	 * 0.36 + 0.09 + 0.01 = 0.46.  Gum: 20 x 5%, one sector each.  */
	static const char *text =
		"fund,id,weight\n"
		"Fir,QX01,0.4\nFir,QX02,0.3\nFir,QX03,0.2\nFir,QX20,0.1\n";
	static const char *map =
		"id,sector\nQX01,Energy\nQX02,Utilities\nQX03,Energy\nQX04,Health\n";
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct holdings_labels *l;
	struct audit_result *a;
	struct hc_error err;
	const struct audit_fund *af;

	fixture_load(&fx, 20, 36, 31, 0);
	h = holdings_text(text);
	assert_int_equal(hc_holdings_labels_load_buffer(&l, "s.csv", map, strlen(map), 0, &err), HC_OK);
	options(&opt, 0);
	opt.policy.max_sector_weight = 0.5;
	assert_int_equal(hc_audit_run(&a, h, fixture_series(fx.u), &fx.mo, &opt, &err), HC_EUSAGE);   /* no map */
	assert_string_equal(err.message, "a maximum sector weight needs a sector map");
	opt.sectors = l;
	opt.policy.min_holdings = 5;
	opt.policy.min_effective = 3.3;
	opt.policy.max_weight = 0.35;
	opt.policy.screens = AUDIT_SCREEN_UCITS | AUDIT_SCREEN_RIC;
	a = run(h, &fx, &opt);
	af = &a->funds[0];
	assert_near(af->hhi, 0.30, 1e-15);
	assert_near(af->sector_hhi, 0.46, 1e-15);
	assert_int_equal(af->nsectors, 3);
	assert_string_equal(af->sectors[0].label, "Energy");
	assert_near(af->sectors[0].weight, 0.6, 1e-15);
	assert_int_equal(af->sectors[0].count, 2);
	assert_null(af->sectors[2].label);            /* the unmapped bucket last */
	assert_near(af->max_sector_weight, 0.6, 1e-15);
	/* 4 < 5 holdings; 3.33 >= 3.3 effective; 0.4 > 0.35; sector 0.6 > 0.5;
	 * UCITS fails (40% > 10%); RIC fails (40% > 25%); the 1940 Act screen
	 * also fails but was not asked for. */
	assert_int_equal(af->failed, AUDIT_RULE_MIN_HOLDINGS | AUDIT_RULE_MAX_WEIGHT |
			 AUDIT_RULE_MAX_SECTOR_WEIGHT | AUDIT_RULE_UCITS | AUDIT_RULE_RIC);
	assert_false(af->passed);
	assert_false(af->screen_passed[1]);
	assert_int_equal(a->failed_funds, 1);
	hc_audit_result_free(a);
	hc_holdings_labels_free(l);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_parse_screens(void **state)
{
	unsigned s;
	struct hc_error err;

	assert_int_equal(hc_audit_parse_screens("ric, UCITS", &s, &err), HC_OK);
	assert_int_equal(s, AUDIT_SCREEN_UCITS | AUDIT_SCREEN_RIC);
	assert_int_equal(hc_audit_parse_screens("all", &s, &err), HC_OK);
	assert_int_equal(s, AUDIT_SCREEN_UCITS | AUDIT_SCREEN_1940ACT | AUDIT_SCREEN_RIC);
	assert_int_equal(hc_audit_parse_screens("ucits,40act", &s, &err), HC_EUSAGE);
	assert_string_equal(err.message, "unknown screen '40act' in 'ucits,40act', expected ucits, 1940act, ric, all or none");
	assert_string_equal(hc_audit_rule_name(AUDIT_RULE_MAX_SECTOR_WEIGHT), "max-sector-weight");
	assert_null(hc_audit_rule_name(3));
}

/* ---- the report ---- */

static void test_audit_report_csv_columns_and_json_screens(void **state)
{
	static const char *want =
		"fund,holdings,weight_sum,max_weight,top10_share,hhi,effective_holdings,sd,"
		"diversification_ratio,equivalent_count,sd_percentile,weighted_random_sd,passed,failed_rules,";
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct audit_result *a;
	struct report *r;
	struct hc_error err;
	char line[2048];
	FILE *fp;
	int json_has_screens = 0, json_has_failed = 0;

	fixture_load(&fx, 12, 36, 37, 0);
	h = holdings_text("fund,id,weight\nGum,QX01,0.7\nGum,QX02,0.3\nHolly,QX03,0.5\nHolly,QX04,0.5\n");
	options(&opt, 200);
	opt.policy.min_holdings = 2;
	opt.policy.max_weight = 0.6;
	a = run(h, &fx, &opt);
	assert_int_equal(hc_audit_report(&r, a, h, &err), HC_OK);
	fp = tmpfile();
	assert_non_null(fp);
	assert_int_equal(hc_report_writer_csv->write(fp, r, &err), HC_OK);
	rewind(fp);
	assert_non_null(fgets(line, sizeof line, fp));
	assert_int_equal(strncmp(line, want, strlen(want)), 0);
	fclose(fp);
	fp = tmpfile();
	assert_int_equal(hc_report_writer_json->write(fp, r, &err), HC_OK);
	rewind(fp);
	while (fgets(line, sizeof line, fp)) {
		json_has_screens |= strstr(line, "\"screens\"") != NULL;
		json_has_failed |= strstr(line, "\"max-weight\"") != NULL;
	}
	fclose(fp);
	assert_true(json_has_screens);
	assert_true(json_has_failed);      /* Gum's 70% breaks the 60% maximum */
	assert_int_equal(a->failed_funds, 1);
	hc_report_free(r);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* ---- allocation failures ---- */

static void test_audit_allocation_failures(void **state)
{
	struct fixture fx;
	struct audit_options opt;
	struct holdings *h;
	struct holdings_labels *l;
	struct audit_result *a;
	struct report *r;
	struct hc_error err;
	long k;
	int rc = HC_ENOMEM;

	fixture_load(&fx, 10, 24, 41, 0);
	h = holdings_text("fund,id,weight\nIvy,QX01,0.6\nIvy,ZZ1,0.1\nIvy,QX02,0.3\nJuniper,QX03,1\n");
	assert_int_equal(hc_holdings_labels_load_buffer(&l, "s.csv", "id,s\nQX01,A\n", strlen("id,s\nQX01,A\n"), 0, &err), HC_OK);
	options(&opt, 50);
	opt.sectors = l;
	opt.policy.min_holdings = 2;          /* Juniper fails: the failures table has a row */
	opt.benchmark = &h->funds[1];         /* active share's sorted benchmark */
	for (k = 0; rc == HC_ENOMEM; k++) {
		hc_alloc_fail_after(k);
		rc = hc_audit_run(&a, h, fixture_series(fx.u), &fx.mo, &opt, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_ENOMEM)
			assert_null(a);
		assert_true(k < 1000);
	}
	assert_int_equal(rc, HC_OK);
	for (k = 0, rc = HC_ENOMEM; rc == HC_ENOMEM; k++) {
		hc_alloc_fail_after(k);
		rc = hc_audit_report(&r, a, h, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_ENOMEM)
			assert_null(r);
		assert_true(k < 5000);
	}
	assert_int_equal(rc, HC_OK);
	hc_report_free(r);
	hc_audit_result_free(a);
	/* the matrix route: its own allocations, the sampler's matrix route */
	{
		struct covmatrix c;
		struct hc_source am;
		struct moments mo;

		textbook_matrix(fx.u, &c);
		hc_source_init_matrix(&am, &c, 12);
		am.name = "cov.csv";
		assert_int_equal(hc_moments_from_source(&mo, &am, &err), HC_OK);
		for (k = 0, rc = HC_ENOMEM; rc == HC_ENOMEM; k++) {
			hc_alloc_fail_after(k);
			rc = hc_audit_run(&a, h, &am, &mo, &opt, &err);
			hc_alloc_fail_after(-1);
			if (rc == HC_ENOMEM)
				assert_null(a);
			assert_true(k < 1000);
		}
		assert_int_equal(rc, HC_OK);
		hc_audit_result_free(a);
		free(c.a);
	}
	hc_holdings_labels_free(l);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* ---- a history with gaps read period by period ---- */

/* The pairwise-complete covariance of securities i and j by its textbook
 * definition: over the periods both are observed, each with its own mean
 * over those periods, divisor n - 1. */
static double cov_pairwise(const struct universe *u, size_t i, size_t j)
{
	const double *x = u->x + i * u->t, *y = u->x + j * u->t;
	double mx = 0, my = 0, s = 0;
	size_t k, n = 0;

	for (k = 0; k < u->t; k++)
		if (!isnan(x[k]) && !isnan(y[k])) {
			mx += x[k];
			my += y[k];
			n++;
		}
	mx /= (double)n;
	my /= (double)n;
	for (k = 0; k < u->t; k++)
		if (!isnan(x[k]) && !isnan(y[k]))
			s += (x[k] - mx) * (y[k] - my);
	return s / (double)(n - 1);
}

/* 8 securities over 40 months: QX01 delisted after month 15, QX08 listed
 * at month 21 (the two share no period), QX03 and QX05 with gaps inside. */
static struct hc_source *ragged_source(void)
{
	struct fixture fx;
	struct hc_source_options so;
	struct hc_source *s = NULL;
	struct hc_error err;
	size_t k;

	fixture_load(&fx, 8, 40, 53, 0);
	for (k = 15; k < 40; k++)
		fx.u->x[0 * 40 + k] = NAN;
	for (k = 0; k < 20; k++)
		fx.u->x[7 * 40 + k] = NAN;
	fx.u->x[2 * 40 + 4] = fx.u->x[2 * 40 + 17] = fx.u->x[2 * 40 + 31] = NAN;
	fx.u->x[4 * 40 + 9] = fx.u->x[4 * 40 + 10] = NAN;
	fx.u->has_missing = 1;
	hc_source_options_init(&so);
	so.ragged = 1;
	so.need_fund_matrix = 1;        /* as the audit command asks: no M x M matrix all the same */
	assert_int_equal(hc_source_from_universe(&s, fx.u, &so, &err), HC_OK);
	assert_int_equal(s->kind, HC_SOURCE_RAGGED);
	assert_null(s->cm);
	return s;
}

/* A fund's risk from its own holdings' pairwise-complete covariances: the
 * universe holds a pair that never overlaps (the whole matrix could not be
 * formed) and the audit goes on; a fund holding that pair has no risk
 * figures and says why, naming both; the comparisons come from the
 * per-period route. */
static void test_audit_ragged_own_pairs(void **state)
{
	static const char *text =
		"fund,id,weight\n"
		"Oak,QX02,0.415\nOak,QX03,0.265\nOak,QX08,0.2\nOak,QX05,0.12\n"
		"Elm,QX01,0.6\nElm,QX08,0.4\n"
		"Yew,QX01,0.55\nYew,QX03,0.45\n";
	static const size_t idx[] = { 1, 2, 7, 4 };
	static const double w[] = { 0.415, 0.265, 0.2, 0.12 };
	struct hc_source *s = ragged_source();
	struct audit_options opt;
	struct audit_result *a = NULL;
	struct holdings *h = holdings_text(text);
	struct moments mo;
	struct hc_error err;
	const struct audit_fund *oak, *elm;
	double s2 = 0, wsd = 0, ev;
	size_t i, j;
	int rc;

	(void)state;
	options(&opt, 400);
	rc = hc_audit_run(&a, h, s, NULL, &opt, &err);
	if (rc != HC_OK)
		print_error("%s\n", err.message);
	assert_int_equal(rc, HC_OK);
	assert_int_equal(a->ragged, 1);
	oak = &a->funds[0];
	elm = &a->funds[1];
	/* w'Aw over the textbook pairwise-complete covariances of Oak's four */
	for (i = 0; i < 4; i++) {
		for (j = 0; j < 4; j++)
			s2 += w[i] * w[j] * cov_pairwise(s->u, idx[i], idx[j]);
		wsd += w[i] * sqrt(cov_pairwise(s->u, idx[i], idx[i]));
	}
	assert_true(oak->risk_known);
	assert_false(oak->risk_repaired);
	assert_null(oak->risk_reason);
	assert_rel(oak->variance, 12 * s2, 1e-12);
	assert_rel(oak->diversification_ratio, wsd / sqrt(s2), 1e-12);
	/* the comparisons: the per-period averages and exact curve */
	assert_int_equal(hc_periodic_moments(s->per, &mo, &err), HC_OK);
	assert_rel(oak->equivalent_count, (mo.average_variance - mo.average_covariance) /
		   (s2 - mo.average_covariance), 1e-10);
	ev = hc_periodic_expected_variance(&s->per->curve, 4.0);
	assert_rel(oak->equal_random_sd, sqrt(12 * ev), 1e-12);
	assert_true(oak->sd_percentile >= 0 && oak->sd_percentile <= 1);
	assert_int_equal(oak->verdict, AUDIT_VERDICT_PASSED);
	/* Elm: QX01 and QX08 share no period */
	assert_false(elm->risk_known);
	assert_true(elm->risk_unpaired);
	assert_non_null(elm->risk_reason);
	assert_non_null(strstr(elm->risk_reason, "'QX01' and 'QX08' have only 0 common periods"));
	assert_true(isnan(elm->sd) && isnan(elm->sd_percentile) && isnan(elm->equivalent_count));
	assert_near(elm->covered_weight, 0, 0);
	assert_int_equal(elm->risk_holdings, 0);
	assert_int_equal(elm->verdict, AUDIT_VERDICT_INSUFFICIENT);
	/* Yew: QX01 and QX03 share 14 of QX01's 15 periods */
	assert_true(a->funds[2].risk_known);
	assert_int_equal(a->unpaired_funds, 1);
	assert_int_equal(a->insufficient_funds, 1);
	assert_int_equal(a->failed_funds, 0);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_source_free(s);
}

/* The ragged route's allocations (its rows, each fund's matrix and repair
 * scratch, the reason, the per-period sampler) fail cleanly. */
static void test_audit_ragged_allocation_failures(void **state)
{
	struct hc_source *s = ragged_source();
	struct holdings *h = holdings_text("fund,id,weight\nOak,QX02,0.5\nOak,QX03,0.3\nOak,QX08,0.2\n"
					   "Elm,QX01,0.6\nElm,QX08,0.4\n");
	struct audit_options opt;
	struct audit_result *a = NULL;
	struct report *r = NULL;
	struct hc_error err;
	long k;
	int rc = HC_ENOMEM;

	(void)state;
	options(&opt, 30);
	for (k = 0; rc == HC_ENOMEM; k++) {
		hc_alloc_fail_after(k);
		rc = hc_audit_run(&a, h, s, NULL, &opt, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_ENOMEM)
			assert_null(a);
		assert_true(k < 1000);
	}
	assert_int_equal(rc, HC_OK);
	for (k = 0, rc = HC_ENOMEM; rc == HC_ENOMEM; k++) {
		hc_alloc_fail_after(k);
		rc = hc_audit_report(&r, a, h, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_ENOMEM)
			assert_null(r);
		assert_true(k < 5000);
	}
	assert_int_equal(rc, HC_OK);
	hc_report_free(r);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_source_free(s);
}

/* ---- holdings as administrators send them (issue 16) ---- */

static void test_audit_statute_readings_sixteen_issuers(void **state)
{
	/* Sixteen issuers at 6.25% each (100%).  1940 Act s. 5(b)(1) and IRC
	 * s. 851(b)(3)(A), from memory of the text ("limited in respect of any
	 * one issuer to an amount not greater than 5 per centum"; verify with
	 * counsel): read as "excluded", no issuer is within 5%, so the basket is
	 * 0% and both screens fail; read as "capped", each counts 5%, so the
	 * basket is 16 x 5% = 80%, above 75% and 50%, and both pass (the
	 * s. 851(b)(3)(B) 25% issuer limit holds: 6.25%). */
	static const double pct[] = { 6.25, 6.25, 6.25, 6.25, 6.25, 6.25, 6.25, 6.25,
				      6.25, 6.25, 6.25, 6.25, 6.25, 6.25, 6.25, 6.25 };
	struct audit_options opt;
	struct audit_result *a;
	struct holdings *h;
	struct fixture fx;
	const struct audit_fund *af;

	fixture_load(&fx, 20, 36, 3, 0);
	h = fund_of(pct, 16, NULL);
	options(&opt, 0);
	a = run(h, &fx, &opt);
	af = &a->funds[0];
	assert_near(af->basket_1940[AUDIT_READING_EXCLUDED], 0, 0);
	assert_near(af->basket_1940[AUDIT_READING_CAPPED], 0.80, 1e-14);
	assert_near(af->basket_ric[AUDIT_READING_EXCLUDED], 0, 0);
	assert_near(af->basket_ric[AUDIT_READING_CAPPED], 0.80, 1e-14);
	assert_false(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
	assert_false(af->checks[AUDIT_PART_RIC_SMALL].passed);
	assert_true(af->checks[AUDIT_PART_1940ACT_OTHER].passed);    /* capped, shown beside */
	assert_near(af->checks[AUDIT_PART_1940ACT_OTHER].figure, 0.80, 1e-14);
	assert_true(af->checks[AUDIT_PART_RIC_OTHER].passed);
	assert_true(af->checks[AUDIT_PART_RIC_ISSUER].passed);
	assert_false(af->screen_passed[1]);
	assert_false(af->screen_passed[2]);
	hc_audit_result_free(a);
	opt.reading = AUDIT_READING_CAPPED;
	a = run(h, &fx, &opt);
	af = &a->funds[0];
	assert_true(af->checks[AUDIT_PART_1940ACT_SMALL].passed);
	assert_near(af->checks[AUDIT_PART_1940ACT_SMALL].figure, 0.80, 1e-14);
	assert_false(af->checks[AUDIT_PART_1940ACT_OTHER].passed);  /* excluded, shown beside */
	assert_near(af->checks[AUDIT_PART_1940ACT_OTHER].figure, 0, 0);
	assert_true(af->screen_passed[1]);
	assert_true(af->screen_passed[2]);
	assert_false(af->screen_passed[0]);   /* UCITS: 100% in issuers above 5%, over 40% */
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

/* Birch: cash 8%, a government security 12%, another fund's shares 5%,
 * issuer IA in two share classes (5% + 4%), IB 7%, IC 5%, ID 4.5% and
 * eleven issuers at 4.5% (49.5%): 100% of net assets. */
static const char birch_text[] =
	"fund,id,value,issuer,type\n"
	"Birch,CASH-EUR,\"80,000.00\",,cash\n"
	"Birch,QX17,\"120,000.00\",Treasury N,government security\n"
	"Birch,QX18,\"50,000.00\",Fund F,investment-company share\n"
	"Birch,QX01,\"50,000.00\",IA,security\n"
	"Birch,QX02,\"40,000.00\",IA,security\n"
	"Birch,QX03,\"70,000.00\",IB,\n"
	"Birch,QX04,\"50,000.00\",IC,security\n"
	"Birch,QX05,\"45,000.00\",ID,other\n"
	"Birch,QX06,\"45,000.00\",I6,security\nBirch,QX07,\"45,000.00\",I7,security\n"
	"Birch,QX08,\"45,000.00\",I8,security\nBirch,QX09,\"45,000.00\",I9,security\n"
	"Birch,QX10,\"45,000.00\",I10,security\nBirch,QX11,\"45,000.00\",I11,security\n"
	"Birch,QX12,\"45,000.00\",I12,security\nBirch,QX13,\"45,000.00\",I13,security\n"
	"Birch,QX14,\"45,000.00\",I14,security\nBirch,QX15,\"45,000.00\",I15,security\n"
	"Birch,QX16,\"45,000.00\",I16,security\n";

static void test_audit_cash_kinds_and_baskets_by_hand(void **state)
{
	/* By hand (of net assets, 1,000,000):
	 *   1940 Act / s. 851 basket, excluded: cash 8 + government 12 + fund
	 *     shares 5 + issuers within 5% (IC 5, ID 4.5, eleven x 4.5 = 49.5)
	 *     = 84%; capped: the same plus IA and IB at 5% each = 94%.
	 *   UCITS: largest issuer IA 9% (two share classes); above 5%: IA 9 +
	 *     IB 7 = 16% (IC at exactly 5% is not above); largest government
	 *     issuer 12%.
	 *   Cash is not a holding: 18 positions; 17 issuers (IA..ID, I6..I16,
	 *     Treasury N, Fund F).  Invested (gross)
	 *     92%: HHI = sum w^2 / 0.92^2 by line and by issuer. */
	double line2 = 0.12 * 0.12 + 0.05 * 0.05 + 0.05 * 0.05 + 0.04 * 0.04 + 0.07 * 0.07 + 0.05 * 0.05 +
		       12 * 0.045 * 0.045;
	double issuer2 = 0.12 * 0.12 + 0.05 * 0.05 + 0.09 * 0.09 + 0.07 * 0.07 + 0.05 * 0.05 + 12 * 0.045 * 0.045;
	struct holdings *h = holdings_text(birch_text);
	struct audit_options opt;
	struct audit_result *a;
	struct fixture fx;
	const struct audit_fund *af;

	fixture_load(&fx, 20, 36, 3, 0);
	options(&opt, 0);
	a = run(h, &fx, &opt);
	af = &a->funds[0];
	assert_int_equal(af->holdings, 18);
	assert_int_equal(af->issuers, 17);
	assert_near(af->cash_weight, 0.08, 1e-15);
	assert_near(af->government_weight, 0.12, 1e-15);
	assert_near(af->fund_share_weight, 0.05, 1e-15);
	assert_near(af->gross_exposure, 0.92, 1e-14);
	assert_near(af->net_exposure, 0.92, 1e-14);
	assert_near(af->max_weight, 0.12, 1e-15);
	assert_string_equal(af->max_id, "QX17");
	assert_near(af->hhi, line2 / (0.92 * 0.92), 1e-14);
	assert_near(af->effective_holdings, 0.92 * 0.92 / line2, 1e-12);
	assert_near(af->issuer_hhi, issuer2 / (0.92 * 0.92), 1e-14);
	assert_near(af->basket_1940[AUDIT_READING_EXCLUDED], 0.84, 1e-14);
	assert_near(af->basket_1940[AUDIT_READING_CAPPED], 0.94, 1e-14);
	assert_near(af->basket_ric[AUDIT_READING_EXCLUDED], 0.84, 1e-14);
	assert_near(af->basket_ric[AUDIT_READING_CAPPED], 0.94, 1e-14);
	assert_near(af->checks[AUDIT_PART_UCITS_ISSUER].figure, 0.09, 1e-15);
	assert_string_equal(af->checks[AUDIT_PART_UCITS_ISSUER].issuer, "IA");
	assert_near(af->checks[AUDIT_PART_UCITS_AGGREGATE].figure, 0.16, 1e-15);
	assert_near(af->checks[AUDIT_PART_UCITS_GOVERNMENT].figure, 0.12, 1e-15);
	assert_string_equal(af->checks[AUDIT_PART_UCITS_GOVERNMENT].issuer, "Treasury N");
	assert_near(af->checks[AUDIT_PART_RIC_ISSUER].figure, 0.09, 1e-15);
	assert_true(af->screen_passed[0] && af->screen_passed[1] && af->screen_passed[2]);
	assert_false(af->checks[AUDIT_PART_UCITS_GROUP].applies);   /* no group column */
	/* cash has no history and is not missing: coverage is whole */
	assert_int_equal(af->nmissing, 0);
	assert_near(af->covered_weight, 1, 1e-15);
	assert_int_equal(af->risk_holdings, 18);
	assert_int_equal(af->verdict, AUDIT_VERDICT_PASSED);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_shorts_gross_net_and_cash_risk(void **state)
{
	/* QX01 60%, QX02 50%, QX03 -20%, cash 10% of net assets.  Gross 130%,
	 * net 90%, short 20%; HHI on gross weights (0.36 + 0.25 + 0.04)/1.3^2;
	 * --max-weight 55% fails on |60%|.  Risk with cash excluded: weights
	 * over the net invested 0.9; with cash at zero variance: over 1, so the
	 * sd is exactly 0.9 times as large (against w'Aw formed entry by entry). */
	const char *text = "fund,id,weight,type\nAsh,QX01,0.6,\nAsh,QX02,0.5,\nAsh,QX03,-0.2,\nAsh,CASH,0.1,cash\n";
	struct holdings_options ho;
	struct holdings *h;
	struct audit_options opt;
	struct audit_result *a, *z;
	struct fixture fx;
	struct hc_error err;
	size_t idx[3] = { 0, 1, 2 };
	double w[3] = { 0.6 / 0.9, 0.5 / 0.9, -0.2 / 0.9 };

	fixture_load(&fx, 8, 36, 5, 0);
	hc_holdings_options_init(&ho);
	ho.allow_short = 1;
	assert_int_equal(hc_holdings_load_buffer(&h, "h.csv", text, strlen(text), &ho, &err), HC_OK);
	options(&opt, 0);
	opt.policy.max_weight = 0.55;
	a = run(h, &fx, &opt);
	assert_near(a->funds[0].gross_exposure, 1.3, 1e-15);
	assert_near(a->funds[0].net_exposure, 0.9, 1e-15);
	assert_near(a->funds[0].short_exposure, 0.2, 1e-15);
	assert_near(a->funds[0].hhi, 0.65 / 1.69, 1e-15);
	assert_int_equal(a->funds[0].holdings, 3);
	assert_true(a->funds[0].failed & AUDIT_RULE_MAX_WEIGHT);
	assert_int_equal(a->funds[0].verdict, AUDIT_VERDICT_FAILED);
	assert_rel(a->funds[0].variance, 12 * quad_form(fx.u, idx, w, 3), 1e-12);
	/* The 5% baskets count assets held: cash 10%, and under the capped
	 * reading 5% each of QX01 and QX02; the short QX03 is a liability and
	 * adds nothing (counting its |20%| would give a capped basket of 25%). */
	assert_near(a->funds[0].basket_1940[AUDIT_READING_EXCLUDED], 0.10, 1e-15);
	assert_near(a->funds[0].basket_1940[AUDIT_READING_CAPPED], 0.20, 1e-15);
	opt.cash_risk = AUDIT_CASH_ZERO;
	z = run(h, &fx, &opt);
	assert_rel(z->funds[0].sd, 0.9 * a->funds[0].sd, 1e-12);
	hc_audit_result_free(z);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_ucits_group_limit(void **state)
{
	/* UCITS Art. 52(5) (from memory): a group of companies counts as one
	 * body, 20% together.  G1 = IA 9% + IB 8% + IC 3% = 20% passes; moving
	 * 0.01% from the ungrouped QX05 into IC makes 20.01%, which fails. */
	const char *ok = "fund,id,weight,issuer,group\nElm,QX01,9%,IA,G1\nElm,QX02,8%,IB,G1\nElm,QX03,3%,IC,G1\n"
			 "Elm,QX04,5%,ID,G2\nElm,QX05,75%,IE,\n";
	const char *over = "fund,id,weight,issuer,group\nElm,QX01,9%,IA,G1\nElm,QX02,8%,IB,G1\nElm,QX03,3.01%,IC,G1\n"
			   "Elm,QX04,5%,ID,G2\nElm,QX05,74.99%,IE,\n";
	struct holdings *h;
	struct audit_options opt;
	struct audit_result *a;
	struct fixture fx;

	fixture_load(&fx, 8, 36, 5, 0);
	options(&opt, 0);
	h = holdings_text(ok);
	a = run(h, &fx, &opt);
	assert_true(a->has_groups);
	assert_true(a->funds[0].checks[AUDIT_PART_UCITS_GROUP].applies);
	assert_true(a->funds[0].checks[AUDIT_PART_UCITS_GROUP].passed);
	assert_near(a->funds[0].max_group_weight, 0.20, 1e-15);
	assert_string_equal(a->funds[0].max_group, "G1");
	hc_audit_result_free(a);
	hc_holdings_free(h);
	h = holdings_text(over);
	a = run(h, &fx, &opt);
	assert_false(a->funds[0].checks[AUDIT_PART_UCITS_GROUP].passed);
	assert_near(a->funds[0].checks[AUDIT_PART_UCITS_GROUP].figure, 0.2001, 1e-15);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_coverage_verdict(void **state)
{
	/* One id the universe lacks: at 4.99% of the invested weight the fund
	 * is 95.01% covered and passes; at 5.01%, 94.99%, it has insufficient
	 * data; with a failed rule it fails whatever its coverage. */
	const char *in = "fund,id,weight\nOak,QX01,50%\nOak,QX02,45.01%\nOak,ZZ99,4.99%\n";
	const char *out = "fund,id,weight\nOak,QX01,50%\nOak,QX02,44.99%\nOak,ZZ99,5.01%\n";
	struct holdings *h;
	struct audit_options opt;
	struct audit_result *a;
	struct fixture fx;

	fixture_load(&fx, 8, 36, 5, 0);
	options(&opt, 0);
	h = holdings_text(in);
	a = run(h, &fx, &opt);
	assert_near(a->funds[0].covered_weight, 0.9501, 1e-15);
	assert_int_equal(a->funds[0].risk_holdings, 2);
	assert_int_equal(a->funds[0].verdict, AUDIT_VERDICT_PASSED);
	assert_int_equal(a->insufficient_funds, 0);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	h = holdings_text(out);
	a = run(h, &fx, &opt);
	assert_near(a->funds[0].covered_weight, 0.9499, 1e-15);
	assert_int_equal(a->funds[0].verdict, AUDIT_VERDICT_INSUFFICIENT);
	assert_int_equal(a->insufficient_funds, 1);
	assert_int_equal(a->failed_funds, 0);
	hc_audit_result_free(a);
	opt.policy.min_holdings = 4;
	a = run(h, &fx, &opt);
	assert_int_equal(a->funds[0].verdict, AUDIT_VERDICT_FAILED);
	assert_int_equal(a->insufficient_funds, 0);
	hc_audit_result_free(a);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

static void test_audit_active_share(void **state)
{
	/* Cremers & Petajisto (2009), Review of Financial Studies 22(9): half
	 * the sum of |fund - benchmark| over every id.  Fund (cash 10% left
	 * out): 45/27/18 of 90 = 0.5, 0.3, 0.2; benchmark 0.4, 0.2 and QX04 0.4:
	 * (0.1 + 0.1 + 0.2 + 0.4)/2 = 0.4. */
	const char *fund = "fund,id,weight,type\nPine,QX01,45%,\nPine,QX02,27%,\nPine,QX03,18%,\nPine,CASH,10%,cash\n";
	const char *bench = "id,weight\nQX01,0.4\nQX02,0.2\nQX04,0.4\n";
	struct holdings_options ho;
	struct holdings *h, *b;
	struct audit_options opt;
	struct audit_result *a;
	struct fixture fx;
	struct hc_error err;

	fixture_load(&fx, 8, 36, 5, 0);
	h = holdings_text(fund);
	hc_holdings_options_init(&ho);
	ho.single_fund = "benchmark";
	assert_int_equal(hc_holdings_load_buffer(&b, "b.csv", bench, strlen(bench), &ho, &err), HC_OK);
	options(&opt, 0);
	opt.benchmark = &b->funds[0];
	a = run(h, &fx, &opt);
	assert_near(a->funds[0].active_share, 0.4, 1e-15);
	hc_audit_result_free(a);
	hc_holdings_free(b);
	hc_holdings_free(h);
	hc_universe_free(fx.u);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_audit_concentration_and_risk_match_definitions),
		cmocka_unit_test(test_audit_equivalent_count_inverts_exact_curve),
		cmocka_unit_test(test_audit_below_the_floor_is_not_a_number),
		cmocka_unit_test(test_audit_screens_ucits_art52),
		cmocka_unit_test(test_audit_screens_1940act_5b1),
		cmocka_unit_test(test_audit_screens_1940act_issuer_above_5pct_excluded),
		cmocka_unit_test(test_audit_screens_ric_851b3),
		cmocka_unit_test(test_audit_screens_aggregate_by_issuer),
		cmocka_unit_test(test_audit_largest_ties_go_to_the_smallest_id),
		cmocka_unit_test(test_audit_percentile_against_enumeration),
		cmocka_unit_test(test_audit_percentile_ties_at_full_count),
		cmocka_unit_test(test_audit_matrix_agrees_with_returns),
		cmocka_unit_test(test_audit_matrix_own_scale_and_errors),
		cmocka_unit_test(test_audit_matrix_percentile_against_enumeration),
		cmocka_unit_test(test_audit_missing_ids_renormalised_or_refused),
		cmocka_unit_test(test_audit_policy_and_sectors),
		cmocka_unit_test(test_audit_parse_screens),
		cmocka_unit_test(test_audit_report_csv_columns_and_json_screens),
		cmocka_unit_test(test_audit_allocation_failures),
		cmocka_unit_test(test_audit_statute_readings_sixteen_issuers),
		cmocka_unit_test(test_audit_cash_kinds_and_baskets_by_hand),
		cmocka_unit_test(test_audit_shorts_gross_net_and_cash_risk),
		cmocka_unit_test(test_audit_ucits_group_limit),
		cmocka_unit_test(test_audit_coverage_verdict),
		cmocka_unit_test(test_audit_active_share),
		cmocka_unit_test(test_audit_ragged_own_pairs),
		cmocka_unit_test(test_audit_ragged_allocation_failures),
	};
	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
