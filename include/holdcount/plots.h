/*
 * plots.h - gnuplot scripts and their data files from the result types.
 *
 * Each plot is one gnuplot script (NAME.gp) reading whitespace-separated
 * data files (*.dat) that sit beside it, so that `cd DIR && gnuplot NAME.gp`
 * renders it anywhere.  The fixed parts of the scripts are templates kept in
 * the plots/ folder (one NAME.gp each) and built into the library (hc_plots_template); the parts that
 * depend on the figures (the plot command, tick marks, the floor) are filled
 * in here.  Figures in the data files are percent a year (annualised as the
 * curve is), but for tail.dat (expected shortfall, percent of one period:
 * a tail mean is not annualised) and horizon.dat (ending wealth of 1
 * invested, and percent of portfolios); printed with 10 significant digits
 * and no dates or times, so the same results give the same bytes.
 *
 * Labels are laid out here (plotlayout.h) so that no line strikes them:
 * each script fixes its frame in screen coordinates, and the data files
 * carry where each rule's label and each fund's name go.
 *
 * Library code never runs a program it was not asked to: hc_plots_render is
 * the only function that starts gnuplot, and it reports gnuplot's messages
 * instead of printing them.
 */
#ifndef HOLDCOUNT_PLOTS_H
#define HOLDCOUNT_PLOTS_H

#include <stddef.h>
#include <stdio.h>

#include "holdcount/audit.h"
#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/horizon.h"
#include "holdcount/measures.h"
#include "holdcount/rolling.h"
#include "holdcount/rules.h"

#ifdef __cplusplus
extern "C" {
#endif

enum plots_kind {
	PLOTS_RISK = 0,        /* risk by count, linear count axis */
	PLOTS_RISK_LOG = 1,    /* the same, log-scaled count axis */
	PLOTS_SHARE = 2,       /* diversifiable share of variance by count */
	PLOTS_TRACKING = 3,    /* expected tracking error by count, budget line */
	PLOTS_FUNDS = 4,       /* audited funds on the risk curve */
	PLOTS_ROLLING = 5,     /* count needed through time, per rolling window */
	PLOTS_SHORTFALL = 6,   /* expected shortfall 95% by count: mean, 5-95% band, the universe's own */
	PLOTS_WEALTH = 7,      /* ending wealth by count: median and 5/95% quantiles, both weightings */
	PLOTS_LAGGING = 8,     /* chance of ending behind the benchmark by count, both weightings */
	PLOTS_NKINDS = 9
};

enum plots_data {
	PLOTS_DATA_EXACT = 0,   /* exact.dat: n, sqrt E[var], share, tracking error */
	PLOTS_DATA_SAMPLED = 1, /* sampled.dat: n, mean sd, 5% and 95% quantiles */
	PLOTS_DATA_RULES = 2,   /* rules.dat: count, sd at count, then for the linear and the log
				 * axis the label's height and side (hc_plotlayout_leaders), label */
	PLOTS_DATA_FUNDS = 3,   /* funds.dat: holdings, effective holdings, sd, passed, the name's
				 * anchor and side (hc_plotlayout_choose), name */
	PLOTS_DATA_ROLLING = 4, /* rolling.dat: window end date, each exact rule's count */
	PLOTS_DATA_TAIL = 5,    /* tail.dat: n, expected shortfall 95% mean, 5%, 50%, 95% (percent a period) */
	PLOTS_DATA_HORIZON = 6, /* horizon.dat: n, ending wealth 5/50/95% rebalanced then buy-and-hold,
				 * the chance of lagging (percent) each way */
	PLOTS_NDATA = 7
};

enum plots_format { PLOTS_PNG = 0, PLOTS_SVG = 1, PLOTS_PDF = 2 };

/* PNG and SVG canvas in pixels; PDF is the same shape in inches / 100. */
#define PLOTS_WIDTH 1000
#define PLOTS_HEIGHT 640

/* Everything a plot may show.  The pointers are borrowed. */
struct plots_input {
	const struct curve *exact;      /* exact columns at every count 1..M (required) */
	const struct curve *sampled;    /* grid with sampled columns; NULL = none */
	const struct rule_result *rules;/* nrules results; unmet or undefined ones are not marked */
	size_t nrules;
	double te_budget;               /* annualised decimal; NaN = no budget line */
	const struct audit_result *audit; /* NULL = no funds plot */
	const char *universe_name;      /* shown in titles; NULL = none */
	const struct rolling_result *rolling; /* NULL = no rolling plot */
	const struct hc_measures_curve *tail; /* measures by count with es95; NULL = no shortfall plot */
	const struct hc_horizon_result *horizon; /* NULL = no wealth and lagging plots */
	double horizon_years;           /* the horizon asked for, in years (captions) */
	size_t periods;                 /* the history's periods (captions); 0 = not said */
};

/* The template text of plots/NAME.gp, or NULL (defined in the generated
 * plots_embedded.c). */
const char *hc_plots_template(const char *name);

/* File names and words for each kind and data file. */
const char *hc_plots_name(int kind);          /* "risk", "risk-log", ... (script NAME.gp) */
const char *hc_plots_title(int kind);         /* the plot's title */
const char *hc_plots_data_name(int data);     /* "exact.dat", ... */
const char *hc_plots_format_name(int format); /* "png", "svg", "pdf" */
/* Parse "png", "svg" or "pdf"; -1 when unknown. */
int hc_plots_parse_format(const char *s);

/* 1 when in holds what plot kind needs (funds: an audit with some fund's
 * risk known; rolling: a rolling result with figures in some window), else 0. */
int hc_plots_available(int kind, const struct plots_input *in);
/* Bit d set when plot kind reads data file d. */
unsigned hc_plots_data_used(int kind);

/* Write data file d for in.  HC_EIO when the stream fails; HC_EUSAGE when in
 * lacks what d needs. */
int hc_plots_write_data(FILE *fp, int data, const struct plots_input *in, struct hc_error *err);

/* Write script NAME.gp of kind for in, drawing to NAME.<format> and, when
 * format is not SVG, to NAME.svg as well (the same canvas and fonts; the
 * HTML report embeds it).
 * HC_EUSAGE when the plot is not available for in or format is unknown,
 * HC_EINTERNAL when a template is missing or keeps a placeholder (a build
 * fault), HC_EIO when the stream fails, HC_ENOMEM. */
int hc_plots_write_script(FILE *fp, int kind, const struct plots_input *in, int format,
		       struct hc_error *err);

/* A caption line for summary.md: what the plot shows and how to read it
 * (static text or built into buf of size bytes; returns buf or static). */
const char *hc_plots_caption(int kind, const struct plots_input *in, char *buf, size_t size);

/* The period of a history of ppy periods a year, as a word: "month" (12),
 * "quarter" (4), "week" (52), "day" (250 to 262), "year" (1), else
 * "period". */
const char *hc_plots_period_word(double ppy);

/* Look for an executable "gnuplot" along the PATH given (the environment's
 * PATH when NULL).  Returns 1 and copies its path into buf (size bytes), or
 * 0 when there is none. */
int hc_plots_find_gnuplot(const char *path_env, char *buf, size_t size);

/*
 * Run gnuplot (the path from hc_plots_find_gnuplot) on script inside dir, with
 * dir as its working directory, its standard output discarded and its
 * standard error captured.  Any output on standard error containing
 * "warning" (any case), or a non-zero exit, is a failure: HC_ERENDER with
 * gnuplot's first message line in err (the scripts are ours, so a warning is
 * a fault to fix, not to hide).  HC_ERESOURCE when gnuplot cannot be
 * started for a process limit (EAGAIN), HC_EIO when it cannot be started
 * otherwise.
 */
int hc_plots_render(const char *gnuplot, const char *dir, const char *script,
		 struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
