/*
 * reportset.h - the whole report pipeline as library calls: on one data
 * source, the curve (curverun.h), every rule (enough.h), the audit of funds
 * (audit.h) and the rolling windows (rolling.h), each the very call the
 * matching command makes with the same options; then the report folder
 * (reportdir.h): their CSVs, summary.json (one JSON tree), summary.md (the
 * Markdown writer of these results), the plots (plots.h) and report.html
 * (htmlreport.h: the committee's document, the plots inline as SVG); with a
 * previous report, what changed since it (compare.h) in both documents.
 */
#ifndef HOLDCOUNT_REPORTSET_H
#define HOLDCOUNT_REPORTSET_H

#include <stddef.h>

#include "holdcount/analysis.h"
#include "holdcount/audit.h"
#include "holdcount/curverun.h"
#include "holdcount/enough.h"
#include "holdcount/error.h"
#include "holdcount/holdings.h"
#include "holdcount/horizon.h"
#include "holdcount/measures.h"
#include "holdcount/plots.h"
#include "holdcount/report.h"
#include "holdcount/reportdir.h"
#include "holdcount/rolling.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The rolling windows a report shows unless told otherwise: five years of
 * periods, one starting every year, when the history holds at least this
 * many windows' worth of periods (common practice for a committee's look
 * back, no single source; two windows' length gives six windows a year
 * apart, enough for a line to show a drift). */
#define REPORTSET_WINDOW_YEARS 5
#define REPORTSET_WINDOW_MIN_SPANS 2

/* The tail-and-horizon section unless told otherwise: the measures the
 * curve's random portfolios carry besides the sd (expected shortfall at 95%
 * and 99%, maximum drawdown; measures.h), and ending wealth (horizon.h)
 * over ten years, a planning horizon a committee commonly states (this
 * tool's choice; no single source), from 2000 paths a count: the plotted
 * shares within about a percentage point (0.5/sqrt(2000) = 1.1 points, one
 * Monte Carlo s.e. at most) for about 0.05 s on the demo's size
 * (docs/performance.md). */
#define REPORTSET_TAIL_MEASURES ((1u << HC_MEASURE_ES95) | (1u << HC_MEASURE_ES99) | \
				 (1u << HC_MEASURE_MAX_DRAWDOWN))
#define REPORTSET_HORIZON_YEARS 10.0
#define REPORTSET_HORIZON_PATHS 2000

/* Room for the path of gnuplot found on the PATH (Linux's PATH_MAX). */
#define REPORTSET_GNUPLOT_PATH_MAX 4096

struct hc_reportset_options {
	const size_t *sizes;          /* the curve's grid (hc_curve_parse_sizes or _default_sizes) */
	size_t nsizes;
	struct hc_curve_options curve;    /* paths, seed, threads */
	struct hc_enough_options enough;  /* rules, sampling, bootstrap */
	const struct holdings *holdings;  /* NULL: no audit */
	const char *holdings_name;        /* its file, for summary.md */
	struct audit_options audit;       /* policy, sectors, paths, seed */
	size_t window, step;              /* rolling windows (hc_reportset_choose_window); window 0 = none */
	int window_default;               /* the window was chosen by default */
	char window_why[256];             /* why there are none, when window is 0 */
	int plot_format;                  /* enum plots_format */
	const char *previous;             /* an earlier report folder or its summary.json; NULL: none */
	const char *label;                /* this report's name in the comparison (its folder) */
	struct hc_progress progress;      /* stages and counted steps */
	size_t step_months;               /* > 0: the windows step by calendar months (rolling.h), the
	                                   * newest ending at the last period; 0: by `step` periods */
	int tail;                         /* 1: the tail-and-horizon section (curve.paths random portfolios
	                                   * carry tail_measures; ending wealth over horizon_years) */
	unsigned tail_measures;           /* measures.h set; 0 = REPORTSET_TAIL_MEASURES (es95 is always in) */
	double horizon_years;             /* > 0: ending wealth over this many years (windows of the history
	                                   * when they fit, else a stationary bootstrap); 0: none */
	size_t horizon_paths;             /* random portfolios (and paths) a count; 0 = REPORTSET_HORIZON_PATHS */
	char tail_why[256];               /* why the section is left out, when tail is 0 */
};

/*
 * The rolling windows for a history of t periods at periods_per_year:
 * given (window_given 1) as window and step (step 0 = 12 calendar months:
 * the newest window ends at the last period, each earlier one at the last
 * period of the month 12 months before), else REPORTSET_WINDOW_YEARS years
 * 12 calendar months apart when the history holds
 * REPORTSET_WINDOW_MIN_SPANS such windows, else none with the reason in
 * opt->window_why.  Sets opt->window, step, step_months, window_default,
 * window_why.
 */
void hc_reportset_choose_window(struct hc_reportset_options *opt, size_t t, double periods_per_year,
				int window_given, size_t window, size_t step);

struct hc_reportset {
	struct hc_reportset_options o;    /* a copy; its pointers are the caller's */
	const struct hc_source *src;
	const struct universe *u;         /* src's complete series */
	struct moments mo;
	struct hc_curve_result *curve_run;
	struct curve *curve, *full;       /* into curve_run */
	struct hc_enough *enough;
	const struct rule_result *rules;  /* into enough */
	size_t nrules;
	struct audit_result *audit;       /* NULL without holdings */
	struct rolling_result *rolling;   /* NULL without windows */
	struct report *rep_universe, *rep_audit, *rep_rolling, *rep_plots;
	char *previous_json;              /* o.previous's summary.json, read first */
	struct report *rep_compare;       /* what changed since o.previous (hc_reportset_write) */
	char *svg[PLOTS_NKINDS];          /* the rendered plots as SVG, for report.html */
	const struct report *rep_curve, *rep_enough;   /* into curve_run and enough */
	const struct hc_measures_curve *tail; /* into curve_run; NULL when not computed (tail_why) */
	struct report *rep_tail;          /* the measures by count: table "tail" (tail.csv) */
	struct hc_horizon_result *horizon; /* NULL when not computed (horizon_why) */
	char tail_why[256];               /* why the measures are left out; "" when computed */
	char horizon_why[640];            /* why ending wealth is left out; "" when computed */
	size_t *horizon_sizes, horizon_nsizes; /* a history with gaps: the counts its windows allow */
	size_t window, step;
	int rendered;                     /* gnuplot was found (hc_reportset_write) */
	char gnuplot[REPORTSET_GNUPLOT_PATH_MAX]; /* its path */
};

/*
 * Every analysis of the report on src (complete return series), with
 * every_security (the same file with no security dropped: rolling windows
 * apply the missing-data policy each; hc_universe_apply_missing makes src's
 * universe from it), required when opt->window is set; when given, the
 * universe report also counts the securities with a return in each year's
 * periods (table "alive").  With opt->tail, the curve's random portfolios
 * also carry the tail measures (rs->tail, rs->rep_tail; not with paths 0),
 * and ending wealth by count is computed (hc_horizon_run, seeded with the
 * curve's seed) over opt->horizon_years on a complete history; a history
 * read period by period, horizon_years 0 or paths 0 leave a part out with
 * the reason in rs->horizon_why or rs->tail_why.  opt->previous is read first
 * (HC_EIO naming it, before any analysis).  *out is new (hc_reportset_free)
 * or NULL on error: the analyses' errors.
 */
int hc_reportset_run(struct hc_reportset **out, const struct hc_source *src,
		     const struct universe *every_security, const struct hc_reportset_options *opt,
		     struct hc_error *err);

/*
 * Write rs into the report folder rd (reportdir.h) and commit it: the plots'
 * data and scripts (rendered when gnuplot is on the PATH, else
 * README-plots.txt), curve.csv, enough.csv, audit.csv, audit-screens.csv,
 * audit-sectors.csv, audit-failures.csv, rolling.csv, tail.csv, horizon.csv (the commands' CSVs),
 * summary.json, summary.md and report.html; with o.previous, the comparison
 * of its summary.json with the one just written (rs->rep_compare) as a
 * section of both documents.  HC_EIO, HC_ENOMEM, HC_EDATA (the previous
 * summary is not one), HC_ERENDER (gnuplot failed).
 */
int hc_reportset_write(struct hc_reportset *rs, struct reportdir *rd, struct hc_error *err);

/* Free rs and what it owns; NULL is a no-op. */
void hc_reportset_free(struct hc_reportset *rs);

#ifdef __cplusplus
}
#endif

#endif
