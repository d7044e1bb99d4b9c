/*
 * reportset.c - the report pipeline (reportset.h): every analysis of the
 * report through the calls the commands make, then the folder: the
 * commands' CSVs, summary.json as one JSON tree, summary.md (the Markdown
 * writer of these results, with the text writer's number formatting), the
 * plots and report.html (htmlreport.h); with a previous report, the
 * comparison (compare.h) as a section of summary.md and report.html.
 */
#define _GNU_SOURCE 1

#include "holdcount/reportset.h"

#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "holdcount/bootstrap.h"
#include "holdcount/compare.h"
#include "holdcount/datacheck.h"
#include "holdcount/htmlreport.h"
#include "holdcount/memory.h"
#include "holdcount/plots.h"
#include "holdcount/rules.h"

void hc_reportset_choose_window(struct hc_reportset_options *opt, size_t t, double ppy,
				int window_given, size_t window, size_t step)
{
	size_t year = ppy >= 1.5 ? (size_t)llround(ppy) : 1;

	opt->window_why[0] = '\0';
	opt->window_default = 0;
	opt->step = step ? step : year;
	/* no step given: calendar windows a year apart, the newest ending at
	 * the last observation (daily data: each earlier one at a month's last
	 * trading day), as `holdcount rolling` does by default */
	opt->step_months = step ? 0 : 12;
	if (window_given) {
		opt->window = window;
		if (!opt->window)
			snprintf(opt->window_why, sizeof opt->window_why, "`--window 0` was given");
		return;
	}
	opt->window_default = 1;
	opt->window = REPORTSET_WINDOW_YEARS * year;
	if (t < REPORTSET_WINDOW_MIN_SPANS * opt->window) {
		snprintf(opt->window_why, sizeof opt->window_why, "the history has %zu periods, fewer than two windows "
			 "of %zu (five years at %.10g periods a year); `--window W` with a shorter W gives it", t,
			 opt->window, ppy);
		opt->window = 0;
	}
}

void hc_reportset_free(struct hc_reportset *r)
{
	if (!r)
		return;
	hc_report_free(r->rep_universe);
	hc_report_free(r->rep_audit);
	hc_report_free(r->rep_plots);
	hc_report_free(r->rep_rolling);
	hc_report_free(r->rep_compare);
	hc_report_free(r->rep_tail);
	hc_horizon_result_free(r->horizon);
	hc_free(r->horizon_sizes);
	hc_free(r->previous_json);
	for (int k = 0; k < PLOTS_NKINDS; k++)
		hc_free(r->svg[k]);
	hc_rolling_result_free(r->rolling);
	hc_audit_result_free(r->audit);
	hc_enough_free(r->enough);
	hc_curve_result_free(r->curve_run);
	hc_free(r);
}

/* ---- computing ----------------------------------------------------------------- */

static void stage(const struct hc_reportset *r, const char *what)
{
	hc_progress_begin(&r->o.progress, what, NULL, NULL);
}

static unsigned tail_mask(const struct hc_reportset_options *o)
{
	return (o->tail_measures ? o->tail_measures : REPORTSET_TAIL_MEASURES) | (1u << HC_MEASURE_ES95);
}

/* The curve as `holdcount curve` computes and reports it: exact at the
 * grid, sampled there (with the tail section, with its measures: `curve
 * --measures`); and the exact curve at every count for the plots. */
static int compute_curve(struct hc_reportset *r, struct hc_error *err)
{
	struct hc_curve_options co = r->o.curve;
	int rc;

	co.full = 1;
	co.moments = &r->mo;
	co.strata = NULL;
	co.progress = r->o.progress;
	/* the tail measures ride on the same random portfolios, in the same pass */
	co.measures = r->o.tail && co.paths ? tail_mask(&r->o) : 0;
	if ((rc = hc_curve_run(&r->curve_run, r->src, r->o.sizes, r->o.nsizes, &co, err)) != HC_OK)
		return rc;
	r->tail = r->curve_run->measures;
	r->curve = r->curve_run->curve;
	r->full = r->curve_run->full;
	r->rep_curve = r->curve_run->report;
	return HC_OK;
}

/* Every rule as `holdcount enough` runs them. */
static int compute_rules(struct hc_reportset *r, struct hc_error *err)
{
	struct hc_enough_options eo = r->o.enough;
	int rc;

	eo.moments = &r->mo;
	eo.strata = NULL;
	eo.sentence_column = 1;   /* enough.csv carries the recommendation on its own */
	eo.progress = r->o.progress;
	if ((rc = hc_enough_run(&r->enough, r->src, &eo, err)) != HC_OK)
		return rc;
	r->rules = r->enough->rules;
	r->nrules = r->enough->nrules;
	r->rep_enough = r->enough->report;
	return HC_OK;
}

/* The funds as `holdcount audit` audits them. */
static int compute_audit(struct hc_reportset *r, struct hc_error *err)
{
	struct audit_options ao = r->o.audit;
	int rc;

	hc_progress_begin(&r->o.progress, NULL, "sampling the funds' counts", "paths");
	ao.progress = r->o.progress.update;
	ao.progress_ctx = r->o.progress.ctx;
	/* a ragged history: funds' risk from their own holdings' pairwise-complete
	 * covariances, compared with the per-period averages (hc_audit_run
	 * computes them) */
	rc = hc_audit_run(&r->audit, r->o.holdings, r->src, r->src->kind == HC_SOURCE_RAGGED ? NULL : &r->mo, &ao, err);
	hc_progress_end(&r->o.progress);
	if (rc == HC_OK)
		rc = hc_audit_report(&r->rep_audit, r->audit, r->o.holdings, err);
	/* as `holdcount audit` says it (nothing for a ragged history, which builds no matrix) */
	if (rc == HC_OK && r->src->kind == HC_SOURCE_RAGGED && hc_source_report_psd(r->src, r->rep_audit))
		rc = hc_error(err, HC_ENOMEM, "out of memory building the audit report");
	return rc;
}

/* The exact rules, with the report's parameters, in every window; no
 * bootstrap per window (that is `holdcount rolling --bootstrap`). */
static int compute_rolling(struct hc_reportset *r, const struct universe *every, struct hc_error *err)
{
	struct rolling_options ro;
	struct hc_source view;
	int rc;

	hc_rolling_options_init(&ro);
	ro.window = r->window;
	ro.step = r->step;
	ro.step_months = r->o.step_months;
	ro.rules = r->o.enough.rules;
	ro.rules.selected &= RULES_EXACT_MASK;
	/* a ragged history's windows are read period by period too */
	if (r->src->kind == HC_SOURCE_RAGGED)
		ro.missing = UNIVERSE_MISSING_KEEP;
	hc_progress_begin(&r->o.progress, NULL, "windows", "windows");
	ro.progress = r->o.progress.update;
	ro.progress_ctx = r->o.progress.ctx;
	hc_source_init_series(&view, every);   /* every security as read, gaps kept */
	rc = hc_rolling_run(&r->rolling, &view, &ro, err);
	hc_progress_end(&r->o.progress);
	if (rc != HC_OK)
		return rc;
	r->rep_rolling = hc_report_alloc();
	if (!r->rep_rolling || hc_rolling_report(r->rep_rolling, r->rolling, err) ||
	    hc_rolling_report_context(r->rep_rolling, r->rolling) || hc_report_add_cautions(r->rep_rolling))
		return hc_error(err, HC_ENOMEM, "out of memory building the rolling report");
	return HC_OK;
}

/*
 * Ending wealth by count as `holdcount horizon --years H --paths K --seed
 * S --sizes GRID` computes it, on a complete history only: a history read
 * period by period is left out with the reason (hc_horizon_run takes no
 * gaps yet, and the securities with no gap alone would leave out those
 * that failed).
 */
static int compute_horizon(struct hc_reportset *r, struct hc_error *err)
{
	struct hc_horizon_options ho;
	char line[96];

	if (!(r->o.horizon_years > 0)) {
		snprintf(r->horizon_why, sizeof r->horizon_why, "`--horizon 0` was given");
		return HC_OK;
	}
	if (r->src->kind == HC_SOURCE_RAGGED) {
		/* A history with gaps is followed in windows of its own dates only
		 * (hc_horizon_run): the horizon must fit in the sample and the
		 * counts stop at the fewest securities listed at a window's start. */
		double hp = r->o.horizon_years * r->u->periods_per_year;
		size_t h = hp >= 0.5 && hp <= 1e7 ? (size_t)llround(hp) : 0, bound, j;

		if (h == 0 || h > r->u->t) {
			snprintf(r->horizon_why, sizeof r->horizon_why, "the history has gaps (securities listed or "
				 "delisted inside the sample), so ending wealth is followed in windows of its own dates, "
				 "and %g years (%g periods) do not fit in its %zu periods; give a shorter `--horizon`",
				 r->o.horizon_years, hp, r->u->t);
			return HC_OK;
		}
		bound = hc_horizon_count_bound(r->u, h, NULL);
		hc_free(r->horizon_sizes);
		r->horizon_sizes = hc_malloc((r->o.nsizes ? r->o.nsizes : 1) * sizeof *r->horizon_sizes);
		if (!r->horizon_sizes)
			return hc_error(err, HC_ENOMEM, "out of memory for the horizon's counts");
		r->horizon_nsizes = 0;
		for (j = 0; j < r->o.nsizes; j++)
			if (r->o.sizes[j] <= bound)
				r->horizon_sizes[r->horizon_nsizes++] = r->o.sizes[j];
		if (r->horizon_nsizes == 0) {
			snprintf(r->horizon_why, sizeof r->horizon_why, "no count of the curve is at most the %zu "
				 "securities listed at the start of every %zu-period window", bound, h);
			return HC_OK;
		}
	}
	hc_horizon_options_init(&ho);
	ho.years = r->o.horizon_years;
	ho.paths = r->o.horizon_paths ? r->o.horizon_paths : REPORTSET_HORIZON_PATHS;
	ho.seed = r->o.curve.seed;
	ho.threads = r->o.curve.threads;
	ho.progress = r->o.progress;
	snprintf(line, sizeof line, "ending wealth over %g years", ho.years);
	stage(r, line);
	if (r->horizon_sizes)
		return hc_horizon_run(&r->horizon, r->src, r->horizon_sizes, r->horizon_nsizes, &ho, err);
	return hc_horizon_run(&r->horizon, r->src, r->o.sizes, r->o.nsizes, &ho, err);
}

/* The measures by count as a report of their own (tail.csv, summary.json's
 * "tail"): the curve's counts, five columns a measure and the universe's
 * own values, with the measures' notes on scale. */
static int build_tail(struct hc_reportset *r)
{
	const struct hc_measures_curve *c = r->tail;
	struct report *rep = r->rep_tail = hc_report_alloc();
	struct report_table *t;
	char seed[32];
	size_t j;

	snprintf(seed, sizeof seed, "%llu", (unsigned long long)r->curve->seed);
	if (!rep || hc_report_add_int(rep, "paths", "random portfolios per count", (long long)r->curve->paths) ||
	    hc_report_add_text(rep, "seed", "seed", seed) ||
	    hc_report_add_int(rep, "periods", "periods", (long long)r->u->t) ||
	    hc_report_add_real(rep, "periods_per_year", "periods per year", c->periods_per_year, REPORT_STYLE_PLAIN) ||
	    hc_report_add_bool(rep, "ragged", "history read period by period", c->ragged))
		return HC_ENOMEM;
	t = hc_report_add_table(rep, "tail", "tail and path measures by holding count");
	if (!t || hc_report_table_add_column(t, "n", "holdings", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (j = 0; j < c->npoints; j++) {
		if (hc_report_table_add_row(t))
			return HC_ENOMEM;
		hc_report_table_set_int(t, j, 0, (long long)c->sizes[j]);
	}
	if (hc_measures_report(c, rep, t))
		return HC_ENOMEM;
	return hc_report_add_cautions(rep);
}

static int build_universe(struct hc_reportset *r, const struct universe *every);

int hc_reportset_run(struct hc_reportset **out, const struct hc_source *src,
		     const struct universe *every_security, const struct hc_reportset_options *opt,
		     struct hc_error *err)
{
	struct hc_reportset *r;
	int rc;

	*out = NULL;
	if (!hc_source_has_series(src) && src->kind != HC_SOURCE_RAGGED)
		return hc_error(err, HC_EUSAGE, "the report needs return series, complete or read period by period");
	if (opt->window && !every_security)
		return hc_error(err, HC_EUSAGE, "rolling windows need the history with every security");
	if (!(r = hc_calloc(1, sizeof *r)))
		return hc_error(err, HC_ENOMEM, "out of memory");
	r->o = *opt;
	r->src = src;
	r->u = src->u;
	r->window = opt->window;
	r->step = opt->step;
	rc = HC_OK;
	/* the previous report first: a wrong folder fails before any work */
	if (opt->previous)
		rc = hc_compare_read(&r->previous_json, opt->previous, err);
	if (rc == HC_OK) {
		stage(r, "exact curve");
		rc = hc_moments_from_source(&r->mo, src, err);
	}
	if (rc == HC_OK)
		rc = compute_curve(r, err);
	if (rc == HC_OK) {
		stage(r, "exact rules");
		rc = compute_rules(r, err);
	}
	if (rc == HC_OK && !opt->tail) {
		snprintf(r->tail_why, sizeof r->tail_why, "%s", opt->tail_why[0] ? opt->tail_why : "not asked for");
		snprintf(r->horizon_why, sizeof r->horizon_why, "%s", r->tail_why);
	} else if (rc == HC_OK) {
		if (!r->tail)
			snprintf(r->tail_why, sizeof r->tail_why, "`--paths 0` draws no random portfolios, whose "
				 "measures these are");
		else if (build_tail(r))
			rc = hc_error(err, HC_ENOMEM, "out of memory building the tail report");
		if (rc == HC_OK)
			rc = compute_horizon(r, err);
		/* summary.json says why ending wealth is missing, beside the measures */
		if (rc == HC_OK && r->rep_tail && !r->horizon &&
		    hc_report_add_text(r->rep_tail, "horizon_left_out", "ending wealth left out", r->horizon_why))
			rc = hc_error(err, HC_ENOMEM, "out of memory building the tail report");
	}
	if (rc == HC_OK && opt->holdings) {
		stage(r, "audit of the funds");
		rc = compute_audit(r, err);
	}
	if (rc == HC_OK && r->window) {
		stage(r, "rolling windows");
		rc = compute_rolling(r, every_security, err);
	}
	if (rc == HC_OK && build_universe(r, every_security))
		rc = hc_error(err, HC_ENOMEM, "out of memory building the report");
	/* the data checks' count in the folder too (the command warned of them
	 * on standard error), from the history as read when there is one */
	if (rc == HC_OK) {
		struct datacheck_result *d = NULL;
		const struct universe *cu = every_security ? every_security : r->u;

		rc = hc_datacheck_run(&d, cu, err);
		if (rc == HC_OK && hc_datacheck_add_counts(r->rep_universe, cu, d))
			rc = hc_error(err, HC_ENOMEM, "out of memory building the report");
		hc_datacheck_free(d);
	}
	if (rc != HC_OK) {
		hc_reportset_free(r);
		return rc;
	}
	*out = r;
	return HC_OK;
}

/* The rows of the curve shown in summary.md (the CSV has every grid row). */
static const size_t readable_grid[] = { 1, 2, 3, 5, 10, 15, 20, 25, 30, 40, 50, 75, 100, 150, 200, 300, 500, 1000 };

/* ---- the report objects ----------------------------------------------------------- */

/* Table "alive" of the universe report: for each calendar year of the file
 * as read (every security, gaps kept), its periods and the fewest and most
 * securities with a return in one of them; so a reader sees how many
 * securities the history held when, and where the file thins out
 * (listings, delistings, gaps). */
static int build_alive(struct report *rep, const struct universe *every)
{
	struct report_table *t = hc_report_add_table(rep, "alive", "Securities with a return, by year (the file as read)");
	char date[16];
	size_t p, i, row = 0, n;
	long long year, prev = -1;

	if (!t || hc_report_table_add_column(t, "year", "year", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "periods", "periods", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "fewest", "fewest securities with a return", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "most", "most securities with a return", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (p = 0; p < every->t; p++) {
		hc_universe_format_date(every->dates[p], date);
		year = strtoll(date, NULL, 10);
		for (i = 0, n = 0; i < every->m; i++)
			n += !isnan(every->x[i * every->t + p]);
		if (year != prev) {
			if (hc_report_table_add_row(t))
				return HC_ENOMEM;
			row = t->nrows - 1;
			hc_report_table_set_int(t, row, 0, year);
			hc_report_table_set_int(t, row, 1, 0);
			hc_report_table_set_int(t, row, 2, (long long)n);
			hc_report_table_set_int(t, row, 3, (long long)n);
			prev = year;
		}
		t->cells[row * t->ncols + 1].integer++;
		if ((long long)n < t->cells[row * t->ncols + 2].integer)
			t->cells[row * t->ncols + 2].integer = (long long)n;
		if ((long long)n > t->cells[row * t->ncols + 3].integer)
			t->cells[row * t->ncols + 3].integer = (long long)n;
	}
	return HC_OK;
}

static int build_universe(struct hc_reportset *r, const struct universe *every)
{
	struct report *rep = r->rep_universe = hc_report_alloc();
	char first[16], last[16];
	struct report_table *t;
	size_t i;

	if (!rep)
		return HC_ENOMEM;
	hc_universe_format_date(r->u->dates[0], first);
	hc_universe_format_date(r->u->dates[r->u->t - 1], last);
	if (hc_report_add_text(rep, "source", "source", r->u->source ? r->u->source : "") ||
	    hc_report_add_int(rep, "securities_read", "securities read", (long long)r->u->m_read) ||
	    hc_report_add_int(rep, "securities", "securities kept", (long long)r->u->m) ||
	    hc_report_add_int(rep, "securities_dropped", "securities dropped", (long long)r->u->ndropped) ||
	    hc_report_add_int(rep, "periods", "periods", (long long)r->u->t) ||
	    hc_report_add_text(rep, "first_date", "first period", first) ||
	    hc_report_add_text(rep, "last_date", "last period", last) ||
	    hc_report_add_scale(rep, r->u->periods_per_year, 1) ||
	    hc_report_add_bool(rep, "periods_detected", "periods per year detected from the dates",
			    r->u->periods_detected) ||
	    hc_report_add_real(rep, "average_variance", "average variance", r->mo.average_variance * r->u->periods_per_year,
			    REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(rep, "average_covariance", "average covariance",
			    r->mo.average_covariance * r->u->periods_per_year, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(rep, "average_correlation", "average correlation",
			    r->mo.has_correlation ? r->mo.average_correlation : NAN, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(rep, "floor_sd", "floor sd (unbounded universe)",
			    r->curve->floor_variance >= 0 ? sqrt(r->curve->floor_variance) : NAN, REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(rep, "universe_sd", "equal-weight universe sd", sqrt(r->curve->universe_variance),
			    REPORT_STYLE_PERCENT) ||
	    hc_source_report_treatment(r->src, rep) || hc_source_report_reading(r->src, rep))
		return HC_ENOMEM;
	/* the kept ids, so that `holdcount compare` can say which securities
	 * came in and went out between two reports */
	t = hc_report_add_table(rep, "kept", "securities kept");
	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < r->u->m; i++)
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, r->u->ids[i]))
			return HC_ENOMEM;
	if (every && every->t == r->u->t && build_alive(rep, every))
		return HC_ENOMEM;
	if (r->u->ndropped) {
		t = hc_report_add_table(rep, "dropped", "securities dropped");
		if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
		    hc_report_table_add_column(t, "reason", "reason", REPORT_STYLE_PLAIN))
			return HC_ENOMEM;
		for (i = 0; i < r->u->ndropped; i++)
			if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, r->u->dropped[i].id) ||
			    hc_report_table_set_text(t, i, 1, r->u->dropped[i].reason))
				return HC_ENOMEM;
	}
	return hc_report_add_cautions(rep);
}

static int build_plots_report(struct hc_reportset *r, const struct plots_input *pin, const unsigned char *made)
{
	struct report *rep = r->rep_plots = hc_report_alloc();
	struct report_table *t;
	char name[REPORTDIR_NAME_MAX], cap[2048];
	size_t row;
	int k;

	if (!rep || hc_report_add_text(rep, "format", "plot format", hc_plots_format_name(r->o.plot_format)) ||
	    hc_report_add_bool(rep, "rendered", "rendered with gnuplot", r->rendered))
		return HC_ENOMEM;
	t = hc_report_add_table(rep, "plots", "plots");
	if (!t || hc_report_table_add_column(t, "name", "plot", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "title", "title", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "script", "script", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "image", "image", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "caption", "caption", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		if (hc_report_table_add_row(t))
			return HC_ENOMEM;
		row = t->nrows - 1;
		snprintf(name, sizeof name, "%s.gp", hc_plots_name(k));
		if (hc_report_table_set_text(t, row, 0, hc_plots_name(k)) || hc_report_table_set_text(t, row, 1, hc_plots_title(k)) ||
		    hc_report_table_set_text(t, row, 2, name) ||
		    hc_report_table_set_text(t, row, 4, hc_plots_caption(k, pin, cap, sizeof cap)))
			return HC_ENOMEM;
		snprintf(name, sizeof name, "%s.%s", hc_plots_name(k), hc_plots_format_name(r->o.plot_format));
		if (r->rendered && hc_report_table_set_text(t, row, 3, name))
			return HC_ENOMEM;
	}
	return HC_OK;
}

/* ---- writing the folder -------------------------------------------------------------- */

static int write_report_file(struct reportdir *rd, const char *name, const struct report *rep,
			     const struct report_writer *w, struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, name, &fp, err)) != HC_OK)
		return rc;
	rc = w->write(fp, rep, err);
	if (rc != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, name, err);
}

/* One table of rep as CSV (hc_report_write_csv_part), as `holdcount audit
 * --table KEY --format csv` prints it. */
static int write_part_file(struct reportdir *rd, const char *name, const struct report *rep, const char *table,
			   struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, name, &fp, err)) != HC_OK)
		return rc;
	rc = hc_report_write_csv_part(fp, rep, table, err);
	if (rc != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, name, err);
}

/* summary.json: every report of the folder under its name, one JSON tree. */
static int write_json(struct reportdir *rd, struct hc_reportset *r, struct hc_error *err)
{
	static const char *const keys[] = { "universe", "curve", "enough", "tail", "horizon", "audit", "rolling", "plots" };
	const struct report *reps[8];
	FILE *fp;
	int rc;

	reps[0] = r->rep_universe;
	reps[1] = r->rep_curve;
	reps[2] = r->rep_enough;
	reps[3] = r->rep_tail;
	reps[4] = r->horizon ? r->horizon->report : NULL;
	reps[5] = r->rep_audit;
	reps[6] = r->rep_rolling;
	reps[7] = r->rep_plots;
	if ((rc = hc_reportdir_open(rd, "summary.json", &fp, err)) != HC_OK)
		return rc;
	rc = hc_report_write_json_set(fp, HOLDCOUNT_VERSION, keys, reps, 8, err);
	if (rc != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, "summary.json", err);
}

/* ---- summary.md ------------------------------------------------------------------------ */

/* A row of the readable grid (and the last, N = M).  A grid given with
 * --sizes that shares few counts with it is shown whole instead.  ctx is a
 * struct readable: the count column's key and M. */
struct readable {
	const char *key;
	size_t m;
};

static int on_readable_grid(const struct report_table *t, size_t row, const void *ctx);

static int readable_row(const struct report_table *t, size_t row, const void *ctx)
{
	size_t i, kept = 0;

	for (i = 0; i < t->nrows; i++)
		kept += (size_t)on_readable_grid(t, i, ctx);
	return kept >= 6 || kept == t->nrows ? on_readable_grid(t, row, ctx) : 1;
}

static int on_readable_grid(const struct report_table *t, size_t row, const void *ctx)
{
	const struct readable *rd = ctx;
	const struct report_value *v = hc_report_md_cell(t, row, rd->key);
	size_t m = rd->m, k;

	if (v->kind != REPORT_INT)
		return 0;
	if ((size_t)v->integer == m)
		return 1;
	for (k = 0; k < sizeof readable_grid / sizeof readable_grid[0]; k++)
		if ((size_t)v->integer == readable_grid[k])
			return 1;
	return 0;
}

static void md_field(FILE *fp, const struct report *rep, const char *key, const char *label)
{
	size_t i;

	for (i = 0; i < rep->nfields; i++)
		if (strcmp(rep->fields[i].key, key) == 0) {
			fprintf(fp, "- %s: ", label);
			hc_report_md_value(fp, &rep->fields[i].value, rep->fields[i].value.style);
			fputc('\n', fp);
		}
}

static void md_universe(FILE *fp, const struct hc_reportset *r)
{
	static const char *const fields[][2] = {
		{ "source", "source" }, { "securities_read", "securities read" },
		{ "securities", "securities kept" },
		{ "securities_dropped", "securities dropped" }, { "treatment", "treatment" },
		{ "alive_min", "securities alive per period, fewest" },
		{ "alive_median", "securities alive per period, median" },
		{ "alive_max", "securities alive per period, most" },
		{ "securities_complete", "securities with no gap" }, { "periods", "periods" },
		{ "periods_read", "periods read (before --frequency or --from/--to)" },
		{ "bad_cells", "cells read as missing (--bad-cells missing)" }, { "bad_cell_first", "the first of them" },
		{ "data_check_findings", "data-check findings (`holdcount check` lists them)" },
		{ "data_check_first", "the first finding" },
		{ "first_date", "first period" }, { "last_date", "last period" },
		{ "periods_per_year", "periods per year" }, { "annualisation", "annualisation" },
		{ "average_variance", "average variance (a year)" }, { "average_covariance", "average covariance (a year)" },
		{ "average_correlation", "average correlation" },
		{ "floor_sd", "floor sd, sqrt of the average covariance (a year)" },
		{ "universe_sd", "sd of the equal-weight portfolio of all securities (a year)" },
	};
	static const char *const alive[][2] = {
		{ "year", "year" }, { "periods", "periods" }, { "fewest", "fewest securities with a return" },
		{ "most", "most securities with a return" },
	};
	const struct report_table *t = hc_report_find_table(r->rep_universe, "alive");
	size_t i;

	fputs("## The universe\n\n", fp);
	for (i = 0; i < sizeof fields / sizeof fields[0]; i++)
		md_field(fp, r->rep_universe, fields[i][0], fields[i][1]);
	fputc('\n', fp);
	if (t) {
		fputs("Securities with a return in the file as read, by year:\n\n", fp);
		hc_report_md_table(fp, t, alive, sizeof alive / sizeof alive[0], NULL, NULL);
	}
}

static void md_curve(FILE *fp, const struct hc_reportset *r)
{
	static const char *const cols[][2] = {
		{ "n", "holdings" }, { "expected_sd", "sqrt E[var] a year" },
		{ "diversifiable_share", "share above the floor" }, { "expected_tracking_error", "RMS tracking error a year" },
		{ "sampled_mean_sd", "mean sd (random)" }, { "sd_p05", "sd 5%" }, { "sd_p95", "sd 95%" },
		{ "z_score", "z (sampled vs exact)" },
	};
	const struct report_table *t = hc_report_find_table(r->rep_curve, "curve");

	fputs("## Risk by holding count\n\n", fp);
	fprintf(fp, "Exact figures for a random equal-weight portfolio of N holdings drawn without replacement, "
		"and %zu random portfolios per count (seed %llu) to check them: z is the sampled mean variance's "
		"distance from the exact one in Monte Carlo standard errors. Every grid row is in `curve.csv`.\n\n",
		r->curve->paths, (unsigned long long)r->curve->seed);
	if (t)
		hc_report_md_table(fp, t, cols, sizeof cols / sizeof cols[0], readable_row,
				   &(struct readable){ "n", r->u->m });
}

/* What each rule asks, in a line a committee reader can follow; sources as
 * in docs/enough.md. */
static const char *const rule_legend[] = {
	"near-floor: the expected sd is within x of the floor, the sd no number of holdings gets below",
	"marginal: one more holding lowers the expected sd by less than eps a year",
	"band: the q-quantile of random portfolios' sd is within x of the floor, so even an unlucky "
	"draw of that many holdings is near it",
	"next-holding (this tool's own rule): the premium earned on the risk one more holding removes is "
	"at most that holding's yearly cost",
	"tracking-error: the root mean square tracking error against the equal-weight portfolio of the whole "
	"universe is within the budget",
	"lag-share (this tool's own rule): fewer than p of random portfolios, rebalanced every period, lag "
	"the universe's return over the sample by more than d a year",
	"statman-borrowing (Statman, 1987, Journal of Financial and Quantitative Analysis 22(3)): the extra "
	"return of the index levered to the portfolio's sd, premium over the borrowing rate times "
	"(sd(N)/sd(index) - 1), is at most the index fund's cost disadvantage",
	"statman-lending (Statman, 1987): the same with the premium over the lending rate",
	"alexeev-tapon (Alexeev & Tapon, 2014, Journal of Banking & Finance 46): a random portfolio removes "
	"at least x of the removable variance with probability at least q (gamma approximation from the "
	"exact mean and spread)",
	"alexeev-tapon-sampled: the same rule counted over sampled random portfolios",
	"es95-near-floor: the mean expected shortfall (95%) of random portfolios is within x of the "
	"equal-weight universe's own",
	"es99-near-floor: the same at 99%",
	"drawdown-near-floor: the mean maximum drawdown of random portfolios is within x of the "
	"equal-weight universe's own",
	"alexeev-tapon-es (after Alexeev & Tapon, 2014): a random portfolio removes at least x of the "
	"removable expected shortfall (95%) with probability at least q",
};
_Static_assert(sizeof rule_legend / sizeof rule_legend[0] == RULES_COUNT, "a legend line per rule");

static void md_rules(FILE *fp, const struct hc_reportset *r)
{
	static const char *const cols[][2] = {
		{ "rule", "rule" }, { "parameters", "parameters" }, { "count", "count" },
		{ "count_p05", "5%" }, { "count_p50", "median" }, { "count_p95", "95%" },
		{ "value_at_count", "value at count" }, { "unit", "value is" }, { "note", "note" },
	};
	const struct report_table *t = hc_report_find_table(r->rep_enough, "rules");
	size_t k;
	int sampled = 0, intervals = 0;

	for (k = 0; k < r->nrules; k++) {
		sampled |= (RULES_FLAG(r->rules[k].rule) & RULES_SAMPLED_MASK) && r->rules[k].defined;
		intervals |= r->rules[k].bootstrapped;
	}
	fputs("## How many holdings are enough\n\n", fp);
	fputs("Each rule turns the curve into one count: the smallest number of equal-weight holdings that "
	      "meets it.\n\n", fp);
	for (k = 0; k < r->nrules; k++)
		if (r->rules[k].rule >= 0 && r->rules[k].rule < RULES_COUNT)
			fprintf(fp, "- %s\n", rule_legend[r->rules[k].rule]);
	fputc('\n', fp);
	if (intervals)
		fprintf(fp, "How to read it: the count is the estimate from the whole history; 5%% to 95%% is a 90%% "
			"interval for it from the data's own estimation error when the periods are resampled (%s "
			"bootstrap, %zu replicates; %s), and the median is the replicates' median count. A narrow "
			"interval means the history pins the count down; a wide one means a minimum-holdings rule "
			"should lean to its upper end. The ends are whole numbers of holdings. \"not met\" in an "
			"interval means its end falls among replicates that never meet the rule.%s\n\n",
			hc_bootstrap_kind_name(r->o.enough.bootstrap_kind), r->o.enough.bootstrap,
			r->enough->interval == HC_ENOUGH_INTERVAL_STUDENTIZED ? "studentized on the log count for the "
			"exact rules, Hall 1988" : r->enough->interval == HC_ENOUGH_INTERVAL_BCA ? "bias-corrected and "
			"accelerated for the exact rules, Efron 1987" : "percentiles of the replicates' counts",
			sampled && !r->o.enough.bootstrap_sampled
			? " The sampled rules (band, lag-share, alexeev-tapon-sampled) are drawn from random portfolios and have no interval "
			  "here: `--bootstrap-sampled` gives them one, at some cost in time." : "");
	else
		fputs("How to read it: the count is the estimate from the whole history; no bootstrap was run "
		      "(`--bootstrap 0`), so there is no interval for the estimation error in it.\n\n", fp);
	if (t)
		hc_report_md_table(fp, t, cols, sizeof cols / sizeof cols[0], NULL, NULL);
	/* How often such an interval holds the true count, and whether this
	 * history shows the clustering under which it falls short. */
	for (k = 0; intervals && r->rep_enough && k < r->rep_enough->nnotes; k++)
		if (strncmp(r->rep_enough->notes[k], "coverage: ", 10) == 0 ||
		    strncmp(r->rep_enough->notes[k], "volatility clusters", 19) == 0 ||
		    strncmp(r->rep_enough->notes[k], "no volatility clustering", 24) == 0)
			fprintf(fp, "%s%s.\n\n", strncmp(r->rep_enough->notes[k], "coverage: ", 10) == 0 ? "Coverage: " : "",
				r->rep_enough->notes[k] + (strncmp(r->rep_enough->notes[k], "coverage: ", 10) == 0 ? 10 : 0));
	fputs("Thresholds and every replicate count are in `enough.csv` and `summary.json`.\n\n", fp);
	for (k = 0; r->rep_enough && k < r->rep_enough->nfields; k++)
		if (strcmp(r->rep_enough->fields[k].key, "policy_sentence") == 0 &&
		    r->rep_enough->fields[k].value.kind == REPORT_TEXT)
			fprintf(fp, "**Recommendation** (`--policy`, `--policy-at`; a sentence for a policy statement):\n\n> %s\n\n",
				r->rep_enough->fields[k].value.text);
}

/* A field's value as text (hc_report_value_text), "-" when r lacks it. */
static const char *field_text(const struct report *r, const char *key, char *buf, size_t size)
{
	size_t i;

	for (i = 0; r && i < r->nfields; i++)
		if (strcmp(r->fields[i].key, key) == 0)
			return hc_report_value_text(buf, size, &r->fields[i].value);
	return "-";
}

/* Tail risk and long horizons: the measures of the curve's random
 * portfolios by count, then ending wealth over the horizon, or why either
 * is left out. */
static void md_tail(FILE *fp, const struct hc_reportset *r)
{
	static const char *const cols[][2] = {
		{ "n", "holdings" }, { "es95_mean", "ES 95% mean" }, { "es95_p05", "ES 95% 5%" },
		{ "es95_p95", "ES 95% 95%" }, { "es99_mean", "ES 99% mean" }, { "max_drawdown_mean", "max drawdown mean" },
		{ "max_drawdown_p95", "max drawdown 95%" },
	};
	static const char *const hcols[][2] = {
		{ "holdings", "holdings" }, { "rebal_p05", "rebal. 5%" }, { "rebal_p50", "rebal. median" },
		{ "rebal_p95", "rebal. 95%" }, { "rebal_lag", "rebal. behind" }, { "hold_p05", "held 5%" },
		{ "hold_p50", "held median" }, { "hold_p95", "held 95%" }, { "hold_lag", "held behind" },
	};
	const char *per = hc_plots_period_word(r->u->periods_per_year);
	char a[64], b[64], c[64], d[64];

	fputs("## Tail risk and long horizons\n\n", fp);
	if (r->tail_why[0] && !r->o.tail) {
		fprintf(fp, "Left out: %s.\n\n", r->tail_why);
		return;
	}
	if (r->tail_why[0]) {
		fprintf(fp, "Tail measures left out: %s.\n\n", r->tail_why);
	} else {
		fprintf(fp, "Beyond the standard deviation, for the same %zu random portfolios per count as the curve "
			"(seed %llu): each one's expected shortfall at 95%% and 99%% (the mean loss in its worst 5%% and "
			"1%% of %ss, per %s and not annualised) and its maximum drawdown (the largest fall from a peak "
			"over the whole sample); the mean over the portfolios of each count and the 5%% and 95%% "
			"quantiles across them (for the drawdown the 95%%: the unlucky draw). The whole equal-weight universe (N = M): ES "
			"95%% %s, ES 99%% %s, maximum drawdown %s. %sEvery count and the Monte Carlo standard errors "
			"are in `tail.csv`.\n\n", r->curve->paths, (unsigned long long)r->curve->seed, per, per,
			field_text(r->rep_tail, "universe_es95", a, sizeof a),
			field_text(r->rep_tail, "universe_es99", b, sizeof b),
			field_text(r->rep_tail, "universe_max_drawdown", c, sizeof c),
			r->tail->ragged ? "The history is read period by period: each period a portfolio holds the "
			"first N securities of its random order alive then, and the universe is every security alive "
			"then. " : "");
		hc_report_md_table(fp, hc_report_find_table(r->rep_tail, "tail"), cols, sizeof cols / sizeof cols[0],
				   readable_row, &(struct readable){ "n", r->u->m });
	}
	fprintf(fp, "### Ending wealth over %g years\n\n", r->o.horizon_years);
	if (!r->horizon) {
		fprintf(fp, "Left out: %s.\n\n", r->horizon_why);
		return;
	}
	fprintf(fp, "Ending wealth of 1 invested over %g years (%zu %ss), %zu random portfolios per count (seed "
		"%llu), rebalanced to equal weights every %s and bought in equal amounts and held. Paths: %s. "
		"Benchmark: %s; \"behind\" is the share of portfolios ending below it on the same path. The whole "
		"universe's median is %s rebalanced and %s held. Every count, the means and the Monte Carlo "
		"standard errors are in `horizon.csv` (what `holdcount horizon --years %g --paths %zu` prints with "
		"`--format csv`).\n\n", r->o.horizon_years, r->horizon->periods, per, r->horizon->paths,
		(unsigned long long)r->o.curve.seed, per, field_text(r->horizon->report, "paths_from", a, sizeof a),
		field_text(r->horizon->report, "benchmark", b, sizeof b),
		field_text(r->horizon->report, "universe_rebal_p50", c, sizeof c),
		field_text(r->horizon->report, "universe_hold_p50", d, sizeof d), r->o.horizon_years, r->horizon->paths);
	hc_report_md_table(fp, hc_report_find_table(r->horizon->report, "horizon"), hcols,
			   sizeof hcols / sizeof hcols[0], readable_row, &(struct readable){ "holdings", r->u->m });
}

/* The failed rules and screen parts with their deciding figures, when a
 * fund fails. */
static void md_failures(FILE *fp, const struct hc_reportset *r)
{
	static const char *const cols[][2] = {
		{ "fund", "fund" }, { "check", "check" }, { "figure", "figure" }, { "test", "test" }, { "limit", "limit" },
	};
	const struct report_table *t = hc_report_find_table(r->rep_audit, "failures");

	if (!t || !t->nrows)
		return;
	fputs("What fails, with the figure that decided it:\n\n", fp);
	hc_report_md_table(fp, t, cols, sizeof cols / sizeof cols[0], NULL, NULL);
}

static void md_audit(FILE *fp, const struct hc_reportset *r)
{
	static const char *const cols[][2] = {
		{ "fund", "fund" }, { "holdings", "holdings" }, { "effective_holdings", "effective (1/HHI)" },
		{ "max_weight", "largest weight" }, { "top10_share", "top 10" }, { "sd", "sd a year" },
		{ "equivalent_count", "equivalent count" }, { "sd_percentile", "sd percentile" },
		{ "risk_holdings", "holdings its risk uses" }, { "covered_weight", "covered weight" },
		{ "ucits", "UCITS" }, { "1940act", "1940 Act" }, { "ric", "RIC" },
		{ "passed", "passes policy" }, { "failed_rules", "fails" }, { "verdict", "verdict" },
	};
	const struct report_table *t = hc_report_find_table(r->rep_audit, "funds");

	fputs("## Audited funds\n\n", fp);
	if (!t) {
		fputs("No holdings were given (`--holdings FILE` audits funds).\n\n", fp);
		return;
	}
	fprintf(fp, "From `%s`, against the universe above.\n\n", r->o.holdings_name);
	md_field(fp, r->rep_audit, "policy", "policy");
	md_field(fp, r->rep_audit, "failed_funds", "funds failing it");
	md_field(fp, r->rep_audit, "insufficient_funds", "funds with insufficient data");
	md_field(fp, r->rep_audit, "min_covered_weight", "least covered weight for a verdict");
	md_field(fp, r->rep_audit, "basket_reading", "5% basket reading deciding");
	fputs("\nThe covered weight is the share of a fund's invested weight (cash left out) whose history "
	      "is usable: its sd, equivalent count and percentile rest on that share alone, over the holdings "
	      "its risk uses; below the least covered weight the verdict is \"insufficient data\" (exit 10) "
	      "unless the fund fails the policy. Statute figures are from memory of the text; verify with "
	      "counsel.\n", fp);
	fputs("\nThe effective count 1/HHI is the number of equal weights with the same concentration; the "
	      "equivalent count is the number of random equal-weight holdings with the fund's own sd (\"below "
	      "the floor\" when no count of them is that low); the sd percentile places the fund's sd among "
	      "random equal-weight portfolios of its own count (50% is typical, high is riskier). UCITS, 1940 "
	      "Act and RIC are the weight screens of Directive 2009/65/EC Art. 52, the Investment Company Act "
	      "of 1940 s. 5(b)(1) and Internal Revenue Code s. 851(b)(3), written from memory of the texts: "
	      "verify against the current text and defer to compliance counsel. A screen decides the policy "
	      "only when `--screens` names it.\n\n", fp);
	hc_report_md_table(fp, t, cols, sizeof cols / sizeof cols[0], NULL, NULL);
	fprintf(fp, "Each screen's parts with the figure that decided them are in `audit-screens.csv`%s, each "
		"failed rule or screen part with its figure and limit in `audit-failures.csv`, and everything in "
		"`summary.json` under `audit`.\n\n",
		hc_report_find_table(r->rep_audit, "sectors") ? ", each fund's sector weights in `audit-sectors.csv`" : "");
	md_failures(fp, r);
}

/* Whether some row of t has a non-empty text in column key. */
static int any_text(const struct report_table *t, const char *key)
{
	size_t i;

	for (i = 0; i < t->nrows; i++) {
		const struct report_value *v = hc_report_md_cell(t, i, key);
		if (v->kind == REPORT_TEXT && v->text && v->text[0])
			return 1;
	}
	return 0;
}

static void md_rolling(FILE *fp, const struct hc_reportset *r)
{
	static const char *const fixed[][2] = {
		{ "window_start", "from" }, { "window_end", "to" }, { "securities", "securities" },
		{ "average_correlation", "avg correlation" }, { "floor_sd", "floor sd a year" },
	};
	const char *cols[RULES_COUNT + 8][2];
	const struct report_table *t = hc_report_find_table(r->rep_rolling, "windows");
	size_t n = 0, j;
	char spacing[128];

	fputs("## Count needed through time\n\n", fp);
	if (!r->window || !t) {
		fprintf(fp, "Left out: %s.\n\n", r->o.window_why[0] ? r->o.window_why : "no rolling windows");
		return;
	}
	hc_rolling_step_text(r->rolling, spacing, sizeof spacing);
	fprintf(fp, "Each exact rule's count from the averages of each window of %zu periods (%s), "
		"%s: %zu windows. The sampled rules (band, lag-share, alexeev-tapon-sampled) and the bootstrap "
		"interval are not run per window (`holdcount rolling --bootstrap` gives the interval). Averages "
		"drift over decades (Campbell, Lettau, Malkiel & Xu, 2001, Journal of Finance 56(1)), so a count "
		"set once is worth revisiting. Every window's averages are in `rolling.csv`.\n\n",
		r->window, r->o.window_default ? "five years, the report's default; `--window W` sets another length "
		"and `--window 0` leaves this out" : "set with `--window`", spacing, r->rolling->nwindows);
	for (j = 0; j < sizeof fixed / sizeof fixed[0]; j++) {
		cols[n][0] = fixed[j][0];
		cols[n++][1] = fixed[j][1];
	}
	for (j = 0; j < t->ncols && n < sizeof cols / sizeof cols[0] - 1; j++)
		if (strncmp(t->cols[j].key, "count_", 6) == 0) {
			cols[n][0] = t->cols[j].key;
			cols[n++][1] = t->cols[j].title;
		}
	if (any_text(t, "note")) {
		cols[n][0] = "note";
		cols[n++][1] = "note";
	}
	hc_report_md_table(fp, t, (const char *const (*)[2])cols, n, NULL, NULL);
}

/* "Since the last report": the changed rows of the comparison, policy
 * verdicts first (hc_compare_summaries puts them there). */
static int changed_row(const struct report_table *t, size_t row, const void *ctx)
{
	const struct report_value *v = hc_report_md_cell(t, row, "changed");

	(void)ctx;
	return v->kind == REPORT_BOOL && v->integer;
}

static void md_compare_field(FILE *fp, const struct report *rep, const char *key)
{
	size_t i;

	for (i = 0; i < rep->nfields; i++)
		if (strcmp(rep->fields[i].key, key) == 0)
			hc_report_md_value(fp, &rep->fields[i].value, REPORT_STYLE_PLAIN);
}

static void md_since(FILE *fp, const struct hc_reportset *r)
{
	static const char *const cols[][2] = {
		{ "item", "figure" }, { "section", "part" }, { "old", "last report" }, { "new", "this report" },
		{ "change", "change" },
	};
	const struct report_table *t, *sec;
	size_t i, n = 0;

	if (!r->rep_compare)
		return;
	t = hc_report_find_table(r->rep_compare, "changes");
	sec = hc_report_find_table(r->rep_compare, "securities");
	fputs("## Since the last report\n\n", fp);
	fprintf(fp, "Compared with `%s` (its data: ", r->o.previous);
	md_compare_field(fp, r->rep_compare, "old_period");
	fputs("). **", fp);
	md_compare_field(fp, r->rep_compare, "headline");
	fputs(".**\n\n", fp);
	for (i = 0; t && i < t->nrows; i++)
		n += (size_t)changed_row(t, i, NULL);
	if (n)
		hc_report_md_table(fp, t, cols, sizeof cols / sizeof cols[0], changed_row, NULL);
	else
		fputs("No compared figure changed.\n\n", fp);
	for (i = 0, n = 0; sec && i < sec->nrows; i++) {
		fputs(n++ ? ", " : "Securities in and out: ", fp);
		hc_report_md_value(fp, hc_report_md_cell(sec, i, "id"), REPORT_STYLE_PLAIN);
		fputs(" (", fp);
		hc_report_md_value(fp, hc_report_md_cell(sec, i, "change"), REPORT_STYLE_PLAIN);
		fputc(')', fp);
	}
	fputs(n ? ".\n\n" : "", fp);
	fputs("`holdcount compare` lists every compared figure.\n\n", fp);
}

static void md_plots(FILE *fp, const struct hc_reportset *r, const struct plots_input *pin, const unsigned char *made)
{
	char cap[2048];
	int k;

	fputs("## Plots\n\n", fp);
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		if (r->rendered && r->o.plot_format != PLOTS_PDF)
			fprintf(fp, "![%s](%s.%s)\n\n", hc_plots_title(k), hc_plots_name(k), hc_plots_format_name(r->o.plot_format));
		else if (r->rendered)
			fprintf(fp, "[%s](%s.pdf)\n\n", hc_plots_title(k), hc_plots_name(k));
		fprintf(fp, "*%s* (`%s.gp`)\n\n", hc_plots_caption(k, pin, cap, sizeof cap), hc_plots_name(k));
	}
	if (!r->rendered)
		fputs("gnuplot was not found on the PATH, so the plots are scripts only. To render them, install "
		      "gnuplot and run, inside this folder, `gnuplot risk.gp` (and likewise for each `.gp` file); "
		      "see README-plots.txt.\n\n", fp);
}

static int write_markdown(struct reportdir *rd, struct hc_reportset *r, const struct plots_input *pin,
			  const unsigned char *made, struct hc_error *err)
{
	char date[16];
	time_t now = time(NULL);
	struct tm tm;
	FILE *fp;
	size_t i;
	int rc;

	if ((rc = hc_reportdir_open(rd, "summary.md", &fp, err)) != HC_OK)
		return rc;
	gmtime_r(&now, &tm);
	strftime(date, sizeof date, "%Y-%m-%d", &tm);
	fprintf(fp, "# Holding-count report\n\n");
	fprintf(fp, "Written by holdcount %s on %s (UTC; the only line that changes when the same inputs are run "
		"again).\n\n", HOLDCOUNT_VERSION, date);
	fputs("The committee's copy is `report.html`: one self-contained document (open it in a browser; it "
	      "prints a page per section).\n\n", fp);
	md_since(fp, r);
	md_universe(fp, r);
	md_curve(fp, r);
	md_rules(fp, r);
	md_tail(fp, r);
	md_audit(fp, r);
	md_rolling(fp, r);
	md_plots(fp, r, pin, made);
	fputs("## Cautions\n\n", fp);
	for (i = 0; i < r->rep_universe->nnotes; i++)
		fprintf(fp, "- %s\n", r->rep_universe->notes[i]);
	if (r->rep_audit)
		fputs("- regulatory screens: written from memory of the published texts and testing weights only; "
		      "verify against the current text and defer to compliance counsel\n", fp);
	/* the audit's own notes (the statutes' readings, the acquisition and
	 * quarter-end nature of the tests, the cure period, the index-tracking
	 * exceptions, the bases of the figures, coverage), those the universe's
	 * list does not already hold */
	for (i = 0; r->rep_audit && i < r->rep_audit->nnotes; i++) {
		size_t k;
		for (k = 0; k < r->rep_universe->nnotes; k++)
			if (strcmp(r->rep_audit->notes[i], r->rep_universe->notes[k]) == 0)
				break;
		if (k == r->rep_universe->nnotes)
			fprintf(fp, "- audit: %s\n", r->rep_audit->notes[i]);
	}
	fputs("\n## Files\n\n- `report.html`: the committee's document, one self-contained file (the plots inline as "
	      "SVG; `*.svg` are the same plots)\n- `summary.json`: every figure above, for scripts\n"
	      "- `curve.csv`, `enough.csv`, `audit.csv`: what `holdcount curve`, `enough` and `audit` print with "
	      "`--format csv` and the same options\n", fp);
	if (r->rep_audit)
		fprintf(fp, "- `audit-screens.csv`%s, `audit-failures.csv`: what `holdcount audit` prints with "
			"`--format csv --table screens`%s and `--table failures`\n",
			hc_report_find_table(r->rep_audit, "sectors") ? ", `audit-sectors.csv`" : "",
			hc_report_find_table(r->rep_audit, "sectors") ? ", `--table sectors`" : "");
	if (r->rep_rolling)
		fputs("- `rolling.csv`: what `holdcount rolling` prints with `--format csv` and the same window\n", fp);
	if (r->rep_tail)
		fputs("- `tail.csv`: the tail measures by count (five columns a measure: mean, its Monte Carlo standard "
		      "error, 5%, 50% and 95%), the same as those columns of `curve.csv`, which is what `holdcount "
		      "curve --measures es95,es99,max_drawdown` prints\n", fp);
	if (r->horizon)
		fputs("- `horizon.csv`: ending wealth by count, what `holdcount horizon` prints with `--format csv`, "
		      "the same horizon, paths, seed and counts\n", fp);
	fprintf(fp, "- `*.gp`, `*.dat`: gnuplot scripts and their data (percent a year%s)\n",
		r->rep_tail || r->horizon ? "; `tail.dat` percent of one period, `horizon.dat` ending wealth and percent "
		"of portfolios" : "");
	return hc_reportdir_close(rd, fp, "summary.md", err);
}

/* ---- report.html ----------------------------------------------------------------------- */

/* The previous summary (read by hc_reportset_run) against the one just
 * written into the temporary folder. */
static int compare_previous(struct reportdir *rd, struct hc_reportset *r, struct hc_error *err)
{
	char *now = NULL;
	int rc;

	if ((rc = hc_compare_read(&now, hc_reportdir_tmp_path(rd), err)) == HC_OK)
		rc = hc_compare_summaries(&r->rep_compare, r->previous_json, r->o.previous, now,
					  r->o.label ? r->o.label : "this report", err);
	hc_free(now);
	return rc;
}

static int write_html(struct reportdir *rd, struct hc_reportset *r, const struct plots_input *pin,
		      const unsigned char *made, struct hc_error *err)
{
	static const char *const screens_caution[] = {
		"regulatory screens: written from memory of the published texts and testing weights only; verify "
		"against the current text and defer to compliance counsel",
	};
	struct htmlreport_figure fig[PLOTS_NKINDS];
	char caps[PLOTS_NKINDS][2048], date[16];
	struct htmlreport_input in;
	time_t now = time(NULL);
	struct tm tm;
	size_t n = 0;
	FILE *fp;
	int k, rc;

	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		fig[n].name = hc_plots_name(k);
		fig[n].title = hc_plots_title(k);
		fig[n].caption = hc_plots_caption(k, pin, caps[k], sizeof caps[k]);
		fig[n].svg = r->svg[k];
		fig[n].place = k == PLOTS_FUNDS ? HTMLREPORT_FUNDS : k == PLOTS_ROLLING ? HTMLREPORT_TIME
			       : k == PLOTS_SHORTFALL ? HTMLREPORT_TAIL
			       : k == PLOTS_WEALTH || k == PLOTS_LAGGING ? HTMLREPORT_HORIZON : HTMLREPORT_CURVE;
		n++;
	}
	gmtime_r(&now, &tm);
	strftime(date, sizeof date, "%Y-%m-%d", &tm);
	memset(&in, 0, sizeof in);
	in.version = HOLDCOUNT_VERSION;
	in.date = date;
	in.universe = r->rep_universe;
	in.curve = r->rep_curve;
	in.enough = r->rep_enough;
	in.audit = r->rep_audit;
	in.rolling = r->rep_rolling;
	in.compare = r->rep_compare;
	in.rolling_why = r->o.window_why;
	in.tail = r->rep_tail;
	in.horizon = r->horizon ? r->horizon->report : NULL;
	in.tail_why = r->tail_why;
	in.horizon_why = r->horizon_why;
	in.tail_off = !r->o.tail;
	in.horizon_years = r->o.horizon_years;
	in.holdings_file = r->o.holdings_name;
	in.figures = fig;
	in.nfigures = n;
	in.cautions = screens_caution;
	in.ncautions = r->rep_audit ? 1 : 0;
	if ((rc = hc_reportdir_open(rd, "report.html", &fp, err)) != HC_OK)
		return rc;
	if ((rc = hc_htmlreport_write(fp, &in, err)) != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, "report.html", err);
}

/* ---- plots ----------------------------------------------------------------------------- */

static int write_plots(struct reportdir *rd, struct hc_reportset *r, struct plots_input *pin, unsigned char *made,
		       struct hc_error *err)
{
	unsigned need = 0;
	char name[REPORTDIR_NAME_MAX];
	FILE *fp;
	int k, rc;

	for (k = 0; k < PLOTS_NKINDS; k++) {
		made[k] = (unsigned char)hc_plots_available(k, pin);
		if (made[k])
			need |= hc_plots_data_used(k);
	}
	for (k = 0; k < PLOTS_NDATA; k++) {
		if (!(need & (1u << k)) || (k == PLOTS_DATA_SAMPLED && !pin->sampled))
			continue;
		if ((rc = hc_reportdir_open(rd, hc_plots_data_name(k), &fp, err)) != HC_OK)
			return rc;
		rc = hc_plots_write_data(fp, k, pin, err);
		if (rc != HC_OK) {
			fclose(fp);
			return rc;
		}
		if ((rc = hc_reportdir_close(rd, fp, hc_plots_data_name(k), err)) != HC_OK)
			return rc;
	}
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		snprintf(name, sizeof name, "%s.gp", hc_plots_name(k));
		if ((rc = hc_reportdir_open(rd, name, &fp, err)) != HC_OK)
			return rc;
		rc = hc_plots_write_script(fp, k, pin, r->o.plot_format, err);
		if (rc != HC_OK) {
			fclose(fp);
			return rc;
		}
		if ((rc = hc_reportdir_close(rd, fp, name, err)) != HC_OK)
			return rc;
	}
	return HC_OK;
}

static int render_plots(struct reportdir *rd, struct hc_reportset *r, const unsigned char *made, struct hc_error *err)
{
	char script[REPORTDIR_NAME_MAX], image[REPORTDIR_NAME_MAX], svg[REPORTDIR_NAME_MAX], line[128];
	int k, rc, done = 0, total = 0;

	for (k = 0; k < PLOTS_NKINDS; k++)
		total += made[k];
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		snprintf(script, sizeof script, "%s.gp", hc_plots_name(k));
		snprintf(image, sizeof image, "%s.%s", hc_plots_name(k), hc_plots_format_name(r->o.plot_format));
		snprintf(line, sizeof line, "rendering %s (%d of %d)", image, ++done, total);
		hc_progress_begin(&r->o.progress, line, NULL, NULL);
		snprintf(svg, sizeof svg, "%s.svg", hc_plots_name(k));
		if ((rc = hc_reportdir_expect(rd, image, err)) != HC_OK || (rc = hc_reportdir_expect(rd, svg, err)) != HC_OK ||
		    (rc = hc_plots_render(r->gnuplot, hc_reportdir_tmp_path(rd), script, err)) != HC_OK)
			return rc;
		if (!hc_reportdir_has(rd, image) || !hc_reportdir_has(rd, svg))
			return hc_error(err, HC_ERENDER, "gnuplot ran on '%s' but wrote no '%s'", script,
					hc_reportdir_has(rd, image) ? svg : image);
		if ((rc = hc_htmlreport_read_svg(&r->svg[k], hc_reportdir_tmp_path(rd), svg, err)) != HC_OK)
			return rc;
	}
	return HC_OK;
}

static int write_render_note(struct reportdir *rd, struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, "README-plots.txt", &fp, err)) != HC_OK)
		return rc;
	fputs("The plots in this folder are gnuplot scripts (*.gp) with their data (*.dat).\n"
	      "gnuplot was not on the PATH when the report was written, so they were not rendered.\n\n"
	      "To render them, install gnuplot 5 and run inside this folder:\n\n"
	      "    gnuplot risk.gp\n\n"
	      "and likewise for each .gp file (for f in *.gp; do gnuplot \"$f\"; done).\n"
	      "Each script writes an image of the same name next to it; the format was chosen with\n"
	      "--plot-format when the report was written (edit the 'set terminal' lines to change it).\n", fp);
	return hc_reportdir_close(rd, fp, "README-plots.txt", err);
}

int hc_reportset_write(struct hc_reportset *r, struct reportdir *rd, struct hc_error *err)
{
	struct plots_input pin;
	unsigned char made[PLOTS_NKINDS];
	int rc;

	memset(&pin, 0, sizeof pin);
	pin.exact = r->full;
	pin.sampled = r->curve->paths ? r->curve : NULL;
	pin.rules = r->rules;
	pin.nrules = r->nrules;
	pin.te_budget = r->o.enough.rules.te_budget;
	pin.audit = r->audit;
	pin.rolling = r->rolling;
	pin.tail = r->tail;
	pin.horizon = r->horizon;
	pin.horizon_years = r->o.horizon_years;
	pin.periods = r->u->t;
	pin.universe_name = r->u->source ? (strrchr(r->u->source, '/') ? strrchr(r->u->source, '/') + 1 : r->u->source)
					 : NULL;
	r->rendered = hc_plots_find_gnuplot(NULL, r->gnuplot, sizeof r->gnuplot);
	rc = write_plots(rd, r, &pin, made, err);
	if (rc == HC_OK)
		rc = r->rendered ? render_plots(rd, r, made, err) : write_render_note(rd, err);
	if (rc == HC_OK && (rc = build_plots_report(r, &pin, made)) != HC_OK)
		rc = hc_error(err, rc, "out of memory building the report");
	if (rc == HC_OK)
		rc = write_report_file(rd, "curve.csv", r->rep_curve, hc_report_writer_csv, err);
	if (rc == HC_OK)
		rc = write_report_file(rd, "enough.csv", r->rep_enough, hc_report_writer_csv, err);
	if (rc == HC_OK && r->rep_audit)
		rc = write_report_file(rd, "audit.csv", r->rep_audit, hc_report_writer_csv, err);
	if (rc == HC_OK && r->rep_audit)
		rc = write_part_file(rd, "audit-screens.csv", r->rep_audit, "screens", err);
	if (rc == HC_OK && r->rep_audit && hc_report_find_table(r->rep_audit, "sectors"))
		rc = write_part_file(rd, "audit-sectors.csv", r->rep_audit, "sectors", err);
	if (rc == HC_OK && r->rep_audit)
		rc = write_part_file(rd, "audit-failures.csv", r->rep_audit, "failures", err);
	if (rc == HC_OK && r->rep_rolling)
		rc = write_report_file(rd, "rolling.csv", r->rep_rolling, hc_report_writer_csv, err);
	if (rc == HC_OK && r->rep_tail)
		rc = write_report_file(rd, "tail.csv", r->rep_tail, hc_report_writer_csv, err);
	if (rc == HC_OK && r->horizon)
		rc = write_report_file(rd, "horizon.csv", r->horizon->report, hc_report_writer_csv, err);
	if (rc == HC_OK)
		rc = write_json(rd, r, err);
	if (rc == HC_OK && r->previous_json)
		rc = compare_previous(rd, r, err);
	if (rc == HC_OK)
		rc = write_markdown(rd, r, &pin, made, err);
	if (rc == HC_OK)
		rc = write_html(rd, r, &pin, made, err);
	if (rc == HC_OK)
		rc = hc_reportdir_commit(rd, err);
	return rc;
}

