/*
 * rolling.c - the averages and the count needed through rolling windows
 * (design.md section 7; why counts drift: Campbell, Lettau, Malkiel & Xu,
 * 2001, "Have Individual Stocks Become More Volatile? An Empirical
 * Exploration of Idiosyncratic Risk", Journal of Finance 56(1)).
 *
 * Which sums slide exactly.  With the kept set fixed, a window's
 *   V     = sum_i var_i, from each security's running sum and sum of squares,
 *   V + C = the variance of the row-sum series s_t = sum_i x_ti,
 * and s_t does not depend on the window, so both move by adding the
 * entering periods and removing the leaving ones: O(M * step) a window.
 * The average correlation is (||sum_i (x_i - mu_i)/|x_i - mu_i| ||^2 - M)
 * / (M(M-1)), the standardised row sums of the window's own means and
 * norms; those change with every window, so nothing M-sized slides and it
 * costs one O(M * W) pass over the window's columns (read in memory order).
 *
 * Drift.  The running sums are of returns shifted by each security's mean
 * in the window where the sums were last built, so sum of squares minus
 * (sum)^2/W does not cancel; every add/remove pair rounds at most a few
 * units in the last place of a sum of W squares, so after R windows the
 * error is of order R * 2^-52 relative, and the sums are rebuilt from
 * scratch every ROLLING_DEFAULT_REFRESH (64) windows and whenever the kept
 * set changes, so it stays near 1e-14.  A rebuilt window's figures are
 * hc_universe_window + hc_moments_from_universe, exactly what `describe` and
 * `enough` compute for that stretch of data.
 */
#include "holdcount/rolling.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/periodic.h"

void hc_rolling_options_init(struct rolling_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->window = 60;
	opt->step = 12;
	opt->missing = UNIVERSE_MISSING_COMPLETE;
	opt->min_coverage = UNIVERSE_DEFAULT_MIN_COVERAGE;
	opt->refresh = ROLLING_DEFAULT_REFRESH;
	hc_rules_config_init(&opt->rules);
	hc_bootstrap_options_init(&opt->boot);
}

void hc_rolling_result_free(struct rolling_result *r)
{
	if (!r)
		return;
	hc_free(r->windows);
	hc_free(r);
}

/* ---- the sliding state ---- */

struct slide {
	const struct universe *u;
	size_t w;
	uint32_t *nanpre;       /* m*(t+1): NaNs among periods before k, security-major */
	uint32_t *run;          /* m*t: equal values in a row ending at period k */
	unsigned char *in;      /* m: kept in the current sums */
	unsigned char *want;    /* m: kept in the window being examined */
	size_t *kept, nkept;    /* the kept securities, in the universe's order */
	double *shift, *sd, *sdd; /* m: shift, running sum and sum of squares of x - shift */
	double *rs;             /* t: row sums of shifted returns over the kept set */
	double ss, sss;         /* running sum and sum of squares of rs */
	double *z;              /* w: standardised row sums */
	int valid;              /* the sums describe the window starting at `at` */
	size_t at;
};

static void slide_release(struct slide *s)
{
	hc_free(s->nanpre);
	hc_free(s->run);
	hc_free(s->in);
	hc_free(s->want);
	hc_free(s->kept);
	hc_free(s->shift);
	hc_free(s->sd);
	hc_free(s->sdd);
	hc_free(s->rs);
	hc_free(s->z);
}

/* Prefix NaN counts and equal-value runs: whether a security is complete
 * and not constant in any window is then O(1). */
static int slide_init(struct slide *s, const struct universe *u, size_t w)
{
	size_t m = u->m, t = u->t, i, k, cells;

	memset(s, 0, sizeof *s);
	s->u = u;
	s->w = w;
	if (hc_mul_size(m, t + 1, &cells))
		return -1;
	s->nanpre = hc_mallocarray(cells, sizeof *s->nanpre);
	s->run = hc_mallocarray(cells, sizeof *s->run);
	s->in = hc_calloc(m, 1);
	s->want = hc_calloc(m, 1);
	s->kept = hc_mallocarray(m, sizeof *s->kept);
	s->shift = hc_mallocarray(m, sizeof *s->shift);
	s->sd = hc_mallocarray(m, sizeof *s->sd);
	s->sdd = hc_mallocarray(m, sizeof *s->sdd);
	s->rs = hc_mallocarray(t, sizeof *s->rs);
	s->z = hc_mallocarray(w, sizeof *s->z);
	if (!s->nanpre || !s->run || !s->in || !s->want || !s->kept || !s->shift ||
	    !s->sd || !s->sdd || !s->rs || !s->z)
		return -1;
	for (i = 0; i < m; i++) {
		const double *x = u->x + i * t;
		uint32_t *np = s->nanpre + i * (t + 1), *rn = s->run + i * t;
		np[0] = 0;
		for (k = 0; k < t; k++) {
			np[k + 1] = np[k] + (isnan(x[k]) != 0);
			rn[k] = (k > 0 && x[k] == x[k - 1]) ? rn[k - 1] + 1 : 1;
		}
	}
	return 0;
}

/* The complete-data policy in the window at a: complete and not constant
 * (hc_universe_window's rule).  Returns 1 when the set differs from the sums'. */
static int slide_examine(struct slide *s, size_t a)
{
	size_t i, m = s->u->m, t = s->u->t, w = s->w;
	int changed = 0;

	for (i = 0; i < m; i++) {
		const uint32_t *np = s->nanpre + i * (t + 1);
		s->want[i] = np[a + w] == np[a] && s->run[i * t + a + w - 1] < w;
		changed |= s->want[i] != s->in[i];
	}
	return changed;
}

/* Build the sums for the window at a over the wanted set. */
static void slide_build(struct slide *s, size_t a)
{
	const struct universe *u = s->u;
	size_t i, j, k, t = u->t, w = s->w;

	s->nkept = 0;
	for (i = 0; i < u->m; i++) {
		s->in[i] = s->want[i];
		if (s->in[i])
			s->kept[s->nkept++] = i;
	}
	memset(s->rs + a, 0, w * sizeof *s->rs);
	for (j = 0; j < s->nkept; j++) {
		const double *x = u->x + s->kept[j] * t + a;
		long double m0 = 0;
		double d, sd = 0, sdd = 0;
		i = s->kept[j];
		for (k = 0; k < w; k++)
			m0 += x[k];
		s->shift[i] = (double)(m0 / w);
		for (k = 0; k < w; k++) {
			d = x[k] - s->shift[i];
			sd += d;
			sdd += d * d;
			s->rs[a + k] += d;
		}
		s->sd[i] = sd;
		s->sdd[i] = sdd;
	}
	s->ss = s->sss = 0;
	for (k = 0; k < w; k++) {
		s->ss += s->rs[a + k];
		s->sss += s->rs[a + k] * s->rs[a + k];
	}
	s->at = a;
	s->valid = 1;
}

/* Move the sums from the window at s->at to the one at a (a - s->at < w). */
static void slide_move(struct slide *s, size_t a)
{
	const struct universe *u = s->u;
	size_t j, p, from = s->at, t = u->t, w = s->w;

	memset(s->rs + from + w, 0, (a - from) * sizeof *s->rs);
	for (j = 0; j < s->nkept; j++) {
		size_t i = s->kept[j];
		const double *x = u->x + i * t;
		double sh = s->shift[i], sd = s->sd[i], sdd = s->sdd[i], din, dout;
		for (p = from; p < a; p++) {
			dout = x[p] - sh;
			din = x[p + w] - sh;
			sd += din - dout;
			sdd += din * din - dout * dout;
			s->rs[p + w] += din;
		}
		s->sd[i] = sd;
		s->sdd[i] = sdd;
	}
	for (p = from; p < a; p++) {
		s->ss += s->rs[p + w] - s->rs[p];
		s->sss += s->rs[p + w] * s->rs[p + w] - s->rs[p] * s->rs[p];
	}
	s->at = a;
}

/* v-bar, c-bar and the average correlation from the sums.  Returns -1 when
 * a security's sliding variance is not positive (rebuild instead). */
static int slide_figures(struct slide *s, double *vbar, double *cbar, double *corr)
{
	const struct universe *u = s->u;
	size_t j, k, t = u->t, w = s->w, a = s->at;
	double d = (double)(w - 1), m = (double)s->nkept;
	long double V = 0, zz = 0;

	memset(s->z, 0, w * sizeof *s->z);
	for (j = 0; j < s->nkept; j++) {
		size_t i = s->kept[j];
		const double *x = u->x + i * t + a;
		double ssq = s->sdd[i] - s->sd[i] * s->sd[i] / (double)w, mu, inv;
		if (!(ssq > 0))
			return -1;
		V += ssq / d;
		mu = s->shift[i] + s->sd[i] / (double)w;
		inv = 1.0 / sqrt(ssq);
		for (k = 0; k < w; k++)
			s->z[k] += (x[k] - mu) * inv;
	}
	for (k = 0; k < w; k++)
		zz += (long double)s->z[k] * s->z[k];
	*vbar = (double)(V / m);
	*cbar = (double)(((s->sss - s->ss * s->ss / (double)w) / d - V) / (m * (m - 1)));
	*corr = (double)((zz - m) / (m * (m - 1)));
	return 0;
}

/* ---- one window ---- */

struct job {
	const struct universe *u;
	const struct rolling_options *opt;
	struct slide slide;
	int sliding;            /* the policy and step allow sliding */
	size_t since;           /* windows since the last rebuild */
};

static void window_dates(struct rolling_window *w, const struct universe *u, size_t len)
{
	w->start_date = u->dates[w->first];
	w->end_date = u->dates[w->first + len - 1];
}

/* The selected exact rules, and the bootstrap interval when asked. */
static int window_rules(const struct job *jb, struct rolling_window *w,
			const struct universe *wu, struct hc_error *err)
{
	const struct rolling_options *opt = jb->opt;
	struct bootstrap_base *base = NULL;
	struct bootstrap_result *br = NULL;
	struct bootstrap_options bo;
	int id, rc = HC_OK;

	w->nrules = 0;
	for (id = 0; id < RULES_COUNT; id++) {
		if (!(opt->rules.selected & RULES_EXACT_MASK & RULES_FLAG(id)))
			continue;
		rc = hc_rules_exact(&opt->rules, id, w->average_variance, w->average_covariance,
				 w->securities, jb->u->periods_per_year, &w->rules[w->nrules++], err);
		if (rc)
			return rc;
	}
	if (!opt->replicates || !wu)
		return HC_OK;
	bo = opt->boot;
	bo.replicates = opt->replicates;
	bo.progress = NULL;
	if ((rc = hc_bootstrap_base_alloc(&base, wu, err)) ||
	    (rc = hc_bootstrap_run(&br, base, &bo, err)))
		goto cleanup;
	rc = hc_rules_bootstrap_exact(&opt->rules, br->vbar, br->cbar, br->replicates, w->securities,
				   jb->u->periods_per_year, w->rules, w->nrules, err);
cleanup:
	hc_bootstrap_result_free(br);
	hc_bootstrap_base_free(base);
	return rc;
}

/* A window without figures: keep why (data problems only; the run goes on). */
static int window_unusable(struct rolling_window *w, struct hc_error *err)
{
	if (err->code != HC_EDATA)
		return err->code;
	w->status = err->code;
	snprintf(w->note, sizeof w->note, "%.*s", (int)(sizeof w->note - 1), err->message);
	hc_error_clear(err);
	return HC_OK;
}

/* From scratch: the figures `describe` prints for this stretch of data. */
static int window_scratch(struct job *jb, struct rolling_window *w, struct hc_error *err)
{
	const struct rolling_options *opt = jb->opt;
	struct universe *wu = NULL;
	struct moments mo;
	int rc;

	w->recomputed = 1;
	jb->slide.valid = 0;
	rc = hc_universe_window(&wu, jb->u, w->first, opt->window, opt->missing, opt->min_coverage, err);
	if (rc == HC_OK)
		rc = hc_moments_from_universe(&mo, wu, err);
	if (rc) {
		w->securities = wu ? wu->m : 0;
		w->dropped = jb->u->m - w->securities;
		hc_universe_free(wu);
		return window_unusable(w, err);
	}
	w->securities = wu->m;
	w->dropped = jb->u->m - wu->m;
	w->average_variance = mo.average_variance;
	w->average_covariance = mo.average_covariance;
	w->average_correlation = mo.average_correlation;
	rc = window_rules(jb, w, wu, err);
	hc_universe_free(wu);
	if (rc)
		return rc == HC_EDATA ? window_unusable(w, err) : rc;
	if (jb->sliding) {
		slide_examine(&jb->slide, w->first);
		slide_build(&jb->slide, w->first);
		jb->since = 0;
		/* The policy is the loader's; a disagreement would be a bug. */
		if (jb->slide.nkept != w->securities)
			return hc_error(err, HC_EINTERNAL,
					"window at period %zu: %zu securities kept by the sliding sums, %zu by the loader",
					w->first, jb->slide.nkept, w->securities);
	}
	return HC_OK;
}

/* A ragged window (UNIVERSE_MISSING_KEEP): per-period sums of the window,
 * each security centred on its own mean within the window (O(M W)); the
 * exact rules on that curve and the interval from O(W) replicates. */
static int window_ragged(struct job *jb, struct rolling_window *w, struct hc_error *err)
{
	const struct rolling_options *opt = jb->opt;
	struct hc_periodic *p = NULL;
	struct bootstrap_options bo;
	double ppy = jb->u->periods_per_year;
	int id, rc;

	w->recomputed = 1;
	rc = hc_periodic_alloc(&p, jb->u, w->first, opt->window, err);
	if (rc) {
		w->securities = 0;
		w->dropped = jb->u->m;
		return window_unusable(w, err);
	}
	w->securities = p->m;
	w->dropped = jb->u->m - p->m;
	w->average_covariance = p->curve.floor;
	w->average_variance = p->curve.floor + p->curve.spread;
	w->average_correlation = NAN;
	w->nrules = 0;
	for (id = 0; id < RULES_COUNT && rc == HC_OK; id++)
		if (opt->rules.selected & RULES_EXACT_MASK & RULES_FLAG(id))
			rc = hc_periodic_rule(&opt->rules, id, &p->curve, ppy, &w->rules[w->nrules++], err);
	if (rc == HC_OK && opt->replicates) {
		bo = opt->boot;
		bo.replicates = opt->replicates;
		bo.progress = NULL;
		rc = hc_periodic_bootstrap(&opt->rules, p, &bo, ppy, w->rules, w->nrules, err);
	}
	hc_periodic_free(p);
	return rc;
}

static int window_one(struct job *jb, struct rolling_window *w, struct hc_error *err)
{
	struct slide *s = &jb->slide;
	size_t refresh = jb->opt->refresh ? jb->opt->refresh : ROLLING_DEFAULT_REFRESH;
	struct universe *wu = NULL;
	int rc;

	w->status = HC_OK;
	window_dates(w, jb->u, jb->opt->window);
	if (jb->opt->missing == UNIVERSE_MISSING_KEEP)
		return window_ragged(jb, w, err);
	/* calendar steps vary: a window that shares no period with the sums' rebuilds them */
	if (!jb->sliding || !s->valid || jb->since + 1 >= refresh || w->first - s->at >= jb->opt->window ||
	    slide_examine(s, w->first))
		return window_scratch(jb, w, err);
	slide_move(s, w->first);
	if (slide_figures(s, &w->average_variance, &w->average_covariance, &w->average_correlation))
		return window_scratch(jb, w, err);
	jb->since++;
	w->recomputed = 0;
	w->securities = s->nkept;
	w->dropped = jb->u->m - s->nkept;
	if (jb->opt->replicates &&
	    (rc = hc_universe_window(&wu, jb->u, w->first, jb->opt->window, jb->opt->missing,
				  jb->opt->min_coverage, err)))
		return rc;
	rc = window_rules(jb, w, wu, err);
	hc_universe_free(wu);
	return rc;
}

static int check_options(const struct universe *u, const struct rolling_options *opt,
			 struct hc_error *err)
{
	int rc;

	if (opt->window < 2)
		return hc_error(err, HC_EUSAGE, "window of %zu periods is too short; expected at least 2",
				opt->window);
	if (opt->window > u->t)
		return hc_error(err, HC_EUSAGE,
				"window of %zu periods is longer than the %zu periods of data; --window sets a shorter one",
				opt->window, u->t);
	if (opt->step < 1 && !opt->step_months)
		return hc_error(err, HC_EUSAGE, "window step of 0 periods; expected at least 1");
	if (opt->step_months > 12 * 10000)
		return hc_error(err, HC_EUSAGE, "window step of %zu months; expected at most 120000", opt->step_months);
	if (opt->missing != UNIVERSE_MISSING_COMPLETE && opt->missing != UNIVERSE_MISSING_PAIRWISE &&
	    opt->missing != UNIVERSE_MISSING_KEEP)
		return hc_error(err, HC_EUSAGE,
				"rolling windows need the complete-data, pairwise or per-period (keep) policy");
	if (opt->replicates && opt->missing == UNIVERSE_MISSING_PAIRWISE)
		return hc_error(err, HC_EUSAGE,
				"bootstrap intervals need the complete-data policy in each window");
	if (!(opt->rules.selected & RULES_EXACT_MASK))
		return hc_error(err, HC_EUSAGE,
				"no exact rule selected; rolling windows evaluate the exact rules");
	if ((rc = hc_rules_config_check(&opt->rules, err)))
		return rc;
	if (u->t > UINT32_MAX)
		return hc_error(err, HC_ENOMEM, "%zu periods are too many for rolling windows", u->t);
	return HC_OK;
}

/* The calendar month of a date, counted from year 0. */
static long month_of(int32_t day)
{
	char d[11];

	hc_universe_format_date(day, d);
	return atol(d) * 12 + atol(d + 5) - 1;
}

/* The last period of each window, oldest first, into *ends (*n of them):
 * by periods, every opt->step back from the last period; by calendar
 * months (opt->step_months), the last period, then the last period dated
 * in the month step_months before the previous target month, and so on,
 * while a window of opt->window periods fits. */
static int window_ends(const struct universe *u, const struct rolling_options *opt, size_t **ends, size_t *n)
{
	size_t t = u->t, w = opt->window, k, j, cap;
	size_t *e;
	long target;

	*n = 0;
	cap = opt->step_months ? t : (t - w) / opt->step + 1;
	if (!(e = hc_mallocarray(cap, sizeof *e)))
		return -1;
	*ends = e;
	if (!opt->step_months) {
		for (j = 0; j < cap; j++)
			e[j] = t - 1 - (cap - 1 - j) * opt->step;
		*n = cap;
		return 0;
	}
	e[(*n)++] = t - 1;
	target = month_of(u->dates[t - 1]);
	k = t - 1;
	for (;;) {
		target -= (long)opt->step_months;
		while (k > 0 && month_of(u->dates[k]) > target)
			k--;
		if (month_of(u->dates[k]) > target || k + 1 < w)
			break;
		if (k != e[*n - 1])
			e[(*n)++] = k;
	}
	for (j = 0; j < *n / 2; j++) {   /* oldest first */
		size_t x = e[j];
		e[j] = e[*n - 1 - j];
		e[*n - 1 - j] = x;
	}
	return 0;
}

static int run_series(struct rolling_result **out, const struct universe *u,
		      const struct rolling_options *opt, struct hc_error *err)
{
	struct rolling_result *r = NULL;
	struct job jb;
	size_t j, *ends = NULL;
	int rc;

	*out = NULL;
	memset(&jb, 0, sizeof jb);
	if ((rc = check_options(u, opt, err)))
		return rc;
	jb.u = u;
	jb.opt = opt;
	jb.sliding = opt->missing == UNIVERSE_MISSING_COMPLETE && (opt->step_months || opt->step < opt->window) &&
		     !opt->from_scratch;
	r = hc_calloc(1, sizeof *r);
	if (!r || (jb.sliding && slide_init(&jb.slide, u, opt->window)) ||
	    window_ends(u, opt, &ends, &r->nwindows) ||
	    hc_universe_alive(u, &r->alive_min, &r->alive_median, &r->alive_max)) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for rolling windows over %zu x %zu returns",
			      u->m, u->t);
		goto cleanup;
	}
	r->window = opt->window;
	r->step = opt->step_months ? 0 : opt->step;
	r->step_months = opt->step_months;
	r->missing = opt->missing;
	r->checks = u->checks;
	r->periods_per_year = u->periods_per_year;
	r->replicates = opt->replicates;
	r->rules = opt->rules.selected & RULES_EXACT_MASK;
	r->windows = hc_calloc(r->nwindows, sizeof *r->windows);
	if (!r->windows) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for %zu windows", r->nwindows);
		goto cleanup;
	}
	/* Anchored at the last period: the newest window always ends at the
	 * last observation, and the oldest periods that do not fill a step
	 * are the ones left out. */
	for (j = 0; j < r->nwindows; j++) {
		r->windows[j].first = ends[j] + 1 - opt->window;
		if ((rc = window_one(&jb, &r->windows[j], err)))
			goto cleanup;
		if (opt->progress && opt->progress(opt->progress_ctx, j + 1, r->nwindows)) {
			rc = hc_error(err, HC_EINTERRUPT, "rolling windows stopped after %zu of %zu",
				      j + 1, r->nwindows);
			goto cleanup;
		}
	}
	*out = r;
	r = NULL;
cleanup:
	hc_free(ends);
	slide_release(&jb.slide);
	hc_rolling_result_free(r);
	return rc;
}

/* ---- the report ---- */

static int add_columns(struct report_table *t, const struct rolling_result *r)
{
	static const char *const pct[] = { "p05", "p50", "p95" };
	char key[64], title[96], name[48];
	size_t q, c;
	int id, rc = 0;

	rc |= hc_report_table_add_column(t, "window_start", "from", REPORT_STYLE_PLAIN);
	rc |= hc_report_table_add_column(t, "window_end", "to", REPORT_STYLE_PLAIN);
	rc |= hc_report_table_add_column(t, "securities", "securities", REPORT_STYLE_PLAIN);
	rc |= hc_report_table_add_column(t, "average_variance", "avg variance", REPORT_STYLE_SCI);
	rc |= hc_report_table_add_column(t, "average_covariance", "avg covariance", REPORT_STYLE_SCI);
	rc |= hc_report_table_add_column(t, "average_correlation", "avg corr", REPORT_STYLE_FIXED4);
	rc |= hc_report_table_add_column(t, "floor_sd", "floor sd", REPORT_STYLE_PERCENT);
	for (id = 0; id < RULES_COUNT; id++) {
		if (!(r->rules & RULES_FLAG(id)))
			continue;
		snprintf(name, sizeof name, "%s", hc_rules_name(id));
		for (c = 0; name[c]; c++)
			if (name[c] == '-')
				name[c] = '_';
		snprintf(key, sizeof key, "count_%s", name);
		snprintf(title, sizeof title, "%s", hc_rules_name(id));
		rc |= hc_report_table_add_column(t, key, title, REPORT_STYLE_PLAIN);
		for (q = 0; r->replicates && q < 3; q++) {
			snprintf(key, sizeof key, "count_%s_%s", name, pct[q]);
			snprintf(title, sizeof title, "%s %s", hc_rules_name(id), pct[q]);
			rc |= hc_report_table_add_column(t, key, title, REPORT_STYLE_PLAIN);
		}
	}
	rc |= hc_report_table_add_column(t, "dropped", "dropped", REPORT_STYLE_PLAIN);
	rc |= hc_report_table_add_column(t, "note", "note", REPORT_STYLE_PLAIN);
	return rc;
}

/* The notes of a window's rules, joined: "near-floor: not met ..." */
static int window_note(struct report_table *t, size_t row, size_t col,
		       const struct rolling_window *w)
{
	char buf[ROLLING_NOTE_MAX + RULES_COUNT * (RULES_TEXT_MAX + 24)];
	size_t j, len = 0;

	buf[0] = 0;
	if (w->status != HC_OK)
		len += (size_t)snprintf(buf, sizeof buf, "%s", w->note);
	for (j = 0; w->status == HC_OK && j < w->nrules; j++)
		if (w->rules[j].note[0] && len < sizeof buf)
			len += (size_t)snprintf(buf + len, sizeof buf - len, "%s%s: %s",
						len ? "; " : "", w->rules[j].name, w->rules[j].note);
	return buf[0] ? hc_report_table_set_text(t, row, col, buf) : 0;
}

/* A count percentile as enough prints it (hc_rules_set_interval): a whole
 * count, "not met" where it falls among replicates that never meet the
 * rule, empty without a bootstrap. */
static int set_percentile(struct report_table *t, size_t row, size_t col,
			  const struct rule_result *rr, double p)
{
	if (!rr->bootstrapped)
		return 0;
	if (isnan(p))
		return hc_report_table_set_text(t, row, col, "not met");
	hc_report_table_set_int(t, row, col, (long long)p);
	return 0;
}

static int add_row(struct report_table *t, const struct rolling_result *r,
		   const struct rolling_window *w)
{
	double ppy = r->periods_per_year;
	char d[11];
	size_t j, c = 0, row;
	int rc = 0;

	if (hc_report_table_add_row(t))
		return -1;
	row = t->nrows - 1;
	hc_universe_format_date(w->start_date, d);
	rc |= hc_report_table_set_text(t, row, c++, d);
	hc_universe_format_date(w->end_date, d);
	rc |= hc_report_table_set_text(t, row, c++, d);
	hc_report_table_set_int(t, row, c++, (long long)w->securities);
	if (w->status != HC_OK) {
		c = t->ncols - 2;
	} else {
		hc_report_table_set_real(t, row, c++, w->average_variance * ppy);
		hc_report_table_set_real(t, row, c++, w->average_covariance * ppy);
		hc_report_table_set_real(t, row, c++, w->average_correlation);
		hc_report_table_set_real(t, row, c++, w->average_covariance > 0
				      ? sqrt(w->average_covariance * ppy) : NAN);
		for (j = 0; j < w->nrules; j++) {
			const struct rule_result *rr = &w->rules[j];
			if (rr->defined && rr->met)
				hc_report_table_set_int(t, row, c, (long long)rr->count);
			c++;
			if (!r->replicates)
				continue;
			rc |= set_percentile(t, row, c++, rr, rr->count_p05);
			rc |= set_percentile(t, row, c++, rr, rr->count_p50);
			rc |= set_percentile(t, row, c++, rr, rr->count_p95);
		}
	}
	hc_report_table_set_int(t, row, c++, (long long)w->dropped);
	rc |= window_note(t, row, c, w);
	return rc;
}

int hc_rolling_report(struct report *rep, const struct rolling_result *r,
		   struct hc_error *err)
{
	struct report_table *t;
	size_t j, rebuilt = 0;
	int rc = 0;

	for (j = 0; j < r->nwindows; j++)
		rebuilt += r->windows[j].recomputed;
	rc |= hc_report_add_int(rep, "window", "window (periods)", (long long)r->window);
	if (r->step_months)
		rc |= hc_report_add_int(rep, "step_months", "step (calendar months)", (long long)r->step_months);
	else
		rc |= hc_report_add_int(rep, "step", "step (periods)", (long long)r->step);
	rc |= hc_report_add_real(rep, "periods_per_year", "periods per year", r->periods_per_year,
			      REPORT_STYLE_PLAIN);
	rc |= hc_report_add_int(rep, "window_count", "windows", (long long)r->nwindows);
	rc |= hc_report_add_int(rep, "windows_recomputed", "windows computed from scratch", (long long)rebuilt);
	if (r->replicates)
		rc |= hc_report_add_int(rep, "replicates", "bootstrap replicates", (long long)r->replicates);
	rc |= hc_report_add_text(rep, "treatment", "treatment",
			      r->missing == UNIVERSE_MISSING_KEEP
			      ? "return history read window by window, each period of a window using the securities "
				"alive then (survivorship-free); --missing complete keeps only securities complete in "
				"the window"
			      : r->missing == UNIVERSE_MISSING_PAIRWISE
			      ? "each window: securities meeting --min-coverage in it, pairwise-complete covariances"
			      : "each window: securities complete in it (survivors of the window only)");
	rc |= hc_report_add_int(rep, "alive_min", "securities alive per period, fewest", (long long)r->alive_min);
	rc |= hc_report_add_int(rep, "alive_median", "securities alive per period, median", (long long)r->alive_median);
	rc |= hc_report_add_int(rep, "alive_max", "securities alive per period, most", (long long)r->alive_max);
	rc |= hc_datacheck_report_kept(rep, &r->checks);
	t = hc_report_add_table(rep, "windows", "rolling windows");
	if (rc || !t)
		return hc_error(err, HC_ENOMEM, "out of memory for the rolling report");
	if (add_columns(t, r))
		return hc_error(err, HC_ENOMEM, "out of memory for the rolling report");
	for (j = 0; j < r->nwindows; j++)
		if (add_row(t, r, &r->windows[j]))
			return hc_error(err, HC_ENOMEM, "out of memory for the rolling report");
	return HC_OK;
}

void hc_rolling_step_text(const struct rolling_result *r, char *buf, size_t size)
{
	if (!size)
		return;
	if (r->step_months)
		snprintf(buf, size, "%zu calendar month%s apart, the newest at the last date",
			 r->step_months, r->step_months == 1 ? "" : "s");
	else
		snprintf(buf, size, "one every %zu period%s", r->step, r->step == 1 ? "" : "s");
}

int hc_rolling_run(struct rolling_result **out, const struct hc_source *src,
		   const struct rolling_options *opt, struct hc_error *err)
{
	*out = NULL;
	if (!src->u)
		return hc_error(err, HC_EUSAGE, "rolling windows need a return history; a covariance matrix has no periods");
	return run_series(out, src->u, opt, err);
}

/* The rules' parameters and what the windows mean, beside the table. */
int hc_rolling_report_context(struct report *r, const struct rolling_result *res)
{
	char key[64], title[96];
	size_t j, c;
	int rc = 0;

	for (j = 0; j < res->nwindows; j++)
		if (res->windows[j].status == HC_OK)
			break;
	for (c = 0; j < res->nwindows && c < res->windows[j].nrules; c++) {
		const struct rule_result *rr = &res->windows[j].rules[c];
		snprintf(key, sizeof key, "parameters_%s", rr->name);
		for (char *p = key; *p; p++)
			if (*p == '-')
				*p = '_';
		snprintf(title, sizeof title, "%s parameters", rr->name);
		rc |= hc_report_add_text(r, key, title, rr->parameters);
	}
	rc |= hc_report_add_note(r, "each window's figures come from that window's periods alone; "
			      "averages drift over decades (Campbell, Lettau, Malkiel & Xu, 2001, "
			      "Journal of Finance 56(1)), so a count set once is worth revisiting");
	return rc;
}
