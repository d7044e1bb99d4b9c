/*
 * test_analysis.c - the analyses as library calls (curverun.h, enough.h,
 * describe.h): each is the composition of the modules it runs, checked
 * against those modules called one by one (whose own tests check them
 * against numpy and enumeration); their refusals; allocation failure.
 */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_errno.h>

#include "holdcount/bootstrap.h"
#include "holdcount/curverun.h"
#include "holdcount/describe.h"
#include "holdcount/enough.h"
#include "holdcount/holdings.h"
#include "holdcount/memory.h"
#include "holdcount/reportset.h"
#include "holdcount/sampler.h"

#include "fixture.h"
#include "heapcheck.h"

/* 24 securities over 90 months of a one-factor model (fixture.h). */
static struct universe *universe(void)
{
	struct universe *u = fixture_random_universe(24, 90, 2385);

	assert_non_null(u);
	return u;
}

static void test_analysis_curve_is_its_modules(void **state)
{
	struct universe *u = universe();
	const struct hc_source *src = fixture_series(u);
	static const size_t sizes[] = { 1, 3, 7, 24 };
	struct hc_curve_options co;
	struct hc_curve_result *res;
	struct sampler_options so;
	struct sampler_result *sr;
	struct moments mo;
	struct curve *c;
	struct hc_error err;
	size_t j;

	(void)state;
	hc_curve_options_init(&co);
	co.paths = 300;
	co.seed = 17;
	co.threads = 2;
	co.full = 1;
	assert_int_equal(hc_curve_run(&res, src, sizes, 4, &co, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	assert_int_equal(hc_curve_exact(&c, &mo, sizes, 4, u->periods_per_year, &err), HC_OK);
	hc_sampler_options_init(&so);
	so.paths = 300;
	so.seed = 17;
	so.threads = 1;   /* another thread count: the same portfolios */
	so.periods_per_year = u->periods_per_year;
	assert_int_equal(hc_sampler_run(&sr, src, sizes, 4, &so, &err), HC_OK);
	assert_int_equal(hc_sampler_summarise(c, sr, &err), HC_OK);
	for (j = 0; j < 4; j++) {
		assert_true(res->curve->points[j].expected_variance == c->points[j].expected_variance);
		assert_true(res->curve->points[j].sampled_mean_variance == c->points[j].sampled_mean_variance);
		assert_true(res->curve->points[j].sd_p95 == c->points[j].sd_p95);
	}
	assert_int_equal(res->full->npoints, 24);
	assert_true(res->full->points[6].expected_variance == c->points[2].expected_variance);
	assert_non_null(hc_report_find_table(res->report, "curve"));
	hc_sampler_result_free(sr);
	hc_curve_free(c);
	hc_curve_result_free(res);
	hc_universe_free(u);
}

static void test_analysis_enough_is_its_modules(void **state)
{
	struct universe *u = universe();
	const struct hc_source *src = fixture_series(u);
	struct hc_enough_options eo;
	struct hc_enough *e;
	struct rule_result want[RULES_COUNT];
	struct rules_input in;
	struct moments mo;
	struct hc_error err;
	size_t n, k;

	(void)state;
	hc_enough_options_init(&eo);
	eo.rules.selected = RULES_EXACT_MASK;
	eo.bootstrap = 0;
	assert_int_equal(hc_enough_run(&e, src, &eo, &err), HC_OK);
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	memset(&in, 0, sizeof in);
	in.vbar = mo.average_variance;
	in.cbar = mo.average_covariance;
	in.m = mo.m;
	in.periods_per_year = u->periods_per_year;
	assert_int_equal(hc_rules_evaluate(&eo.rules, &in, want, &n, &err), HC_OK);
	assert_int_equal(e->nrules, n);
	for (k = 0; k < n; k++) {
		assert_int_equal(e->rules[k].rule, want[k].rule);
		assert_int_equal(e->rules[k].met, want[k].met);
		assert_int_equal(e->rules[k].count, want[k].count);
	}
	assert_string_equal(e->no_interval, "no interval: --bootstrap 0");
	assert_non_null(hc_report_find_table(e->report, "rules"));
	hc_enough_free(e);
	/* refusals: a sampled rule with no paths; shortfall from a matrix */
	eo.rules.selected = RULES_FLAG(RULES_BAND);
	eo.paths = 0;
	assert_int_equal(hc_enough_run(&e, src, &eo, &err), HC_EUSAGE);
	assert_null(e);
	{
		double a[4] = { 0.0412, 0.0097, 0.0097, 0.0385 };
		eo.paths = 50;
		eo.rules.selected = RULES_FLAG(RULES_LAG_SHARE);
		assert_int_equal(hc_enough_run(&e, fixture_matrix(a, 2), &eo, &err), HC_EUSAGE);
		assert_non_null(strstr(err.message, "lag-share"));
	}
	hc_universe_free(u);
}

struct made {
	const struct hc_source *src;
	struct hc_enough *e;
	struct hc_curve_result *c;
	struct report *d;
};

static int made_enough(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;
	struct hc_enough_options eo;

	hc_enough_options_init(&eo);
	eo.paths = 40;
	eo.bootstrap = 20;
	eo.threads = 1;
	return hc_enough_run(&w->e, w->src, &eo, err);
}

static int made_curve(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;
	struct hc_curve_options co;
	static const size_t sizes[] = { 2, 5 };

	hc_curve_options_init(&co);
	co.paths = 30;
	co.threads = 1;
	co.full = 1;
	return hc_curve_run(&w->c, w->src, sizes, 2, &co, err);
}

static int made_describe(void *ctx, struct hc_error *err)
{
	struct made *w = ctx;

	return hc_describe(&w->d, w->src, err);
}

static void made_release(void *ctx)
{
	struct made *w = ctx;

	hc_enough_free(w->e);
	hc_curve_result_free(w->c);
	hc_report_free(w->d);
	w->e = NULL;
	w->c = NULL;
	w->d = NULL;
}

static void made_failed(void *ctx)
{
	struct made *w = ctx;

	assert_null(w->e);
	assert_null(w->c);
	assert_null(w->d);
}

/*
 * hc_enough_run's interval, clustering check and recommendation are their
 * modules called one by one: the default interval is
 * hc_rules_bootstrap_exact_t on hc_bootstrap_run's replicates with the
 * data-driven block length, the clustering fields hc_bootstrap_clustering's,
 * and the policy count near-floor's upper end (or its estimate with
 * HC_ENOUGH_POLICY_ESTIMATE, or the rule asked for), with the sentence
 * naming that count.
 */
static void test_analysis_enough_interval_and_policy(void **state)
{
	struct universe *u = universe();
	const struct hc_source *src = fixture_series(u);
	struct hc_enough_options eo;
	struct hc_enough *e = NULL;
	struct bootstrap_base *b = NULL;
	struct bootstrap_result *br = NULL;
	struct bootstrap_options bo;
	struct rule_result want[RULES_COUNT];
	struct rules_input in;
	struct moments mo;
	struct hc_error err;
	size_t n, k, lags = 0, upper;
	double q, p;
	char sentence[40];
	int found = 0;

	(void)state;
	hc_enough_options_init(&eo);
	eo.rules.selected = RULES_EXACT_MASK;
	eo.bootstrap = 60;
	eo.threads = 1;
	assert_int_equal(hc_enough_run(&e, src, &eo, &err), HC_OK);
	/* one by one */
	assert_int_equal(hc_moments_from_universe(&mo, u, &err), HC_OK);
	memset(&in, 0, sizeof in);
	in.vbar = mo.average_variance;
	in.cbar = mo.average_covariance;
	in.m = mo.m;
	in.periods_per_year = u->periods_per_year;
	assert_int_equal(hc_rules_evaluate(&eo.rules, &in, want, &n, &err), HC_OK);
	assert_int_equal(hc_bootstrap_base_alloc(&b, u, &err), HC_OK);
	hc_bootstrap_clustering(b, &lags, &q, &p);
	hc_bootstrap_options_init(&bo);
	bo.replicates = 60;
	bo.kind = BOOTSTRAP_STATIONARY;
	bo.seed = eo.seed;
	bo.threads = 1;
	assert_int_equal(hc_bootstrap_auto_block_length(b, &bo.block_length, &err), HC_OK);
	assert_int_equal(hc_bootstrap_run(&br, b, &bo, &err), HC_OK);
	assert_int_equal(hc_rules_bootstrap_exact_t(&eo.rules, b, &bo, bo.block_length, br->vbar, br->cbar,
						    br->replicates, mo.average_variance, mo.average_covariance,
						    u->periods_per_year, want, n, &err), HC_OK);
	assert_int_equal(e->nrules, n);
	assert_int_equal(e->block_length, bo.block_length);
	assert_true(e->auto_block && e->interval == HC_ENOUGH_INTERVAL_STUDENTIZED);
	for (k = 0; k < n; k++) {
		assert_int_equal(e->rules[k].count, want[k].count);
		assert_true(e->rules[k].count_p05 == want[k].count_p05 ||
			    (isnan(e->rules[k].count_p05) && isnan(want[k].count_p05)));
		assert_true(e->rules[k].count_p95 == want[k].count_p95 ||
			    (isnan(e->rules[k].count_p95) && isnan(want[k].count_p95)));
	}
	assert_int_equal(e->clustering_lags, lags);
	assert_true(e->clustering_q == q && e->clustering_p == p);
	/* the recommendation: near-floor (rules[0]) at its upper end */
	assert_int_equal(e->policy_rule, RULES_NEAR_FLOOR);
	assert_false(isnan(want[0].count_p95));
	upper = (size_t)want[0].count_p95 > want[0].count ? (size_t)want[0].count_p95 : want[0].count;
	assert_int_equal(e->policy_count, upper);
	assert_true(e->policy_at_upper);
	snprintf(sentence, sizeof sentence, "shall hold at least %zu securities", upper);
	for (k = 0; k < e->report->nfields; k++)
		if (strcmp(e->report->fields[k].key, "policy_sentence") == 0)
			found = strstr(e->report->fields[k].value.text, sentence) != NULL;
	assert_true(found);
	hc_enough_free(e);
	/* at the estimate, and another rule */
	eo.policy_at = HC_ENOUGH_POLICY_ESTIMATE;
	eo.policy = RULES_TRACKING_ERROR;
	assert_int_equal(hc_enough_run(&e, src, &eo, &err), HC_OK);
	assert_int_equal(e->policy_rule, RULES_TRACKING_ERROR);
	for (k = 0; k < n; k++)
		if (want[k].rule == RULES_TRACKING_ERROR)
			assert_int_equal(e->policy_count, want[k].count);
	assert_false(e->policy_at_upper);
	hc_enough_free(e);
	hc_bootstrap_result_free(br);
	hc_bootstrap_base_free(b);
	hc_universe_free(u);
}

static void test_analysis_allocation_failure(void **state)
{
	struct universe *u = universe();
	struct made w = { fixture_series(u), NULL, NULL, NULL };
	struct heapcheck_call enough = { made_enough, made_release, made_failed, &w };
	struct heapcheck_call curve = { made_curve, made_release, made_failed, &w };
	struct heapcheck_call describe = { made_describe, made_release, made_failed, &w };

	(void)state;
	assert_true(heapcheck_sweep(&enough) > 10);
	assert_true(heapcheck_sweep(&curve) > 5);
	assert_true(heapcheck_sweep(&describe) > 5);
	hc_universe_free(u);
}

/* The report pipeline: its curve, rules and audit are the very results of
 * hc_curve_run, hc_enough_run and hc_audit_run with the same options; the
 * window choice; allocation failure over the whole pipeline. */
struct pipeline {
	const struct hc_source *src;
	const struct universe *every;
	struct hc_reportset_options ro;
	struct hc_reportset *rs;
};

static int made_pipeline(void *ctx, struct hc_error *err)
{
	struct pipeline *p = ctx;

	return hc_reportset_run(&p->rs, p->src, p->every, &p->ro, err);
}

static void pipeline_release(void *ctx)
{
	struct pipeline *p = ctx;

	hc_reportset_free(p->rs);
	p->rs = NULL;
}

static void pipeline_failed(void *ctx)
{
	assert_null(((struct pipeline *)ctx)->rs);
}

static void test_analysis_report_pipeline(void **state)
{
	static const char funds[] = "fund,id,weight\nAlder,S03,0.5\nAlder,S11,0.3\nAlder,S19,0.2\n"
				    "Birch,S02,0.25\nBirch,S05,0.25\nBirch,S07,0.25\nBirch,S23,0.25\n";
	static const size_t sizes[] = { 1, 4, 12 };
	struct universe *u = universe();
	struct holdings_options ho;
	struct holdings *h = NULL;
	struct pipeline p;
	struct hc_curve_result *cr;
	struct hc_enough *e;
	struct hc_error err;
	struct heapcheck_call call = { made_pipeline, pipeline_release, pipeline_failed, &p };
	size_t k;

	(void)state;
	hc_holdings_options_init(&ho);
	assert_int_equal(hc_holdings_load_buffer(&h, "f.csv", funds, strlen(funds), &ho, &err), HC_OK);
	memset(&p, 0, sizeof p);
	p.src = fixture_series(u);
	p.every = u;
	p.ro.sizes = sizes;
	p.ro.nsizes = 3;
	hc_curve_options_init(&p.ro.curve);
	p.ro.curve.paths = 60;
	p.ro.curve.threads = 1;
	hc_enough_options_init(&p.ro.enough);
	p.ro.enough.paths = 60;
	p.ro.enough.bootstrap = 25;
	p.ro.enough.threads = 1;
	hc_audit_options_init(&p.ro.audit);
	p.ro.audit.paths = 40;
	p.ro.audit.threads = 1;
	p.ro.holdings = h;
	p.ro.holdings_name = "f.csv";
	/* 90 months: five-year windows do not fit twice, so none by default */
	hc_reportset_choose_window(&p.ro, u->t, u->periods_per_year, 0, 0, 0);
	assert_int_equal(p.ro.window, 0);
	assert_non_null(strstr(p.ro.window_why, "fewer than two windows of 60"));
	hc_reportset_choose_window(&p.ro, u->t, u->periods_per_year, 1, 36, 0);
	assert_int_equal(p.ro.window, 36);
	assert_int_equal(p.ro.step, 12);
	assert_int_equal(made_pipeline(&p, &err), HC_OK);
	assert_int_equal(hc_curve_run(&cr, p.src, sizes, 3, &p.ro.curve, &err), HC_OK);
	assert_int_equal(hc_enough_run(&e, p.src, &p.ro.enough, &err), HC_OK);
	for (k = 0; k < 3; k++)
		assert_true(p.rs->curve->points[k].sd_p05 == cr->curve->points[k].sd_p05);
	for (k = 0; k < e->nrules; k++) {
		assert_int_equal(p.rs->rules[k].count, e->rules[k].count);
		assert_true(p.rs->rules[k].count_p95 == e->rules[k].count_p95 ||
			    (isnan(p.rs->rules[k].count_p95) && isnan(e->rules[k].count_p95)));
	}
	assert_int_equal(p.rs->audit->nfunds, 2);
	assert_non_null(p.rs->rolling);
	assert_int_equal(p.rs->rolling->nwindows, (90 - 36) / 12 + 1);
	hc_curve_result_free(cr);
	hc_enough_free(e);
	pipeline_release(&p);
	assert_true(heapcheck_sweep(&call) > 20);
	hc_holdings_free(h);
	hc_universe_free(u);
}

int main(int argc, char **argv)
{
	heapcheck_rerun_without_tcache(argv);
	gsl_set_error_handler_off();
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_analysis_curve_is_its_modules),
		cmocka_unit_test(test_analysis_enough_is_its_modules),
		cmocka_unit_test(test_analysis_enough_interval_and_policy),
		cmocka_unit_test(test_analysis_allocation_failure),
		cmocka_unit_test(test_analysis_report_pipeline),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
