/*
 * rolling.h - the averages and the count needed, window by window.
 *
 * A universe loaded with UNIVERSE_MISSING_KEEP is cut into windows of W
 * consecutive periods, one every `step` periods counted back from the last
 * period (the newest window always ends at the last observation; oldest
 * periods that do not fill a step are not used).  In each window the
 * missing-data policy picks the securities (complete in the window, or,
 * under UNIVERSE_MISSING_KEEP, every security alive in each period of it,
 * read through per-period sums, periodic.h; either way late listings and
 * delistings enter and leave as they did; constant ones are dropped as
 * hc_universe_window does), and the
 * window's v-bar, c-bar and average correlation feed every selected exact
 * rule (rules.h).  Why it matters: Campbell, Lettau, Malkiel & Xu (2001,
 * Journal of Finance 56(1)) found security-specific volatility rising and
 * correlations falling over decades, so a count set once goes stale.
 *
 * Cost (complete-data policy): where the kept set does not change between
 * windows, v-bar and c-bar slide in O(M * step) per window from running
 * sums of each security's shifted returns and squares and of the row-sum
 * series; the average correlation needs each window's own means and
 * standard deviations, so it costs one O(M * W) pass; every `refresh`
 * windows, and whenever the kept set changes, the window is recomputed
 * from scratch through hc_universe_window and hc_moments_from_universe (the
 * figures `describe` prints).  The pairwise policy recomputes every window
 * (O(M^2 W) each).
 *
 * Units: the result holds per-period v-bar and c-bar; hc_rolling_report
 * annualises them by the universe's periods per year, as every command does.
 */
#ifndef HOLDCOUNT_ROLLING_H
#define HOLDCOUNT_ROLLING_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/bootstrap.h"
#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/rules.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Recompute from scratch every this many windows (defaults named once; see
 * rolling.c for why drift stays far below this bound's reach). */
#define ROLLING_DEFAULT_REFRESH 64
/* refresh value that never recomputes while the kept set holds (tests). */
#define ROLLING_REFRESH_NEVER ((size_t)-1)

#define ROLLING_NOTE_MAX 200

/* Progress: done of total windows; nonzero stops (HC_EINTERRUPT). */
typedef int (*rolling_progress_fn)(void *ctx, size_t done, size_t total);

struct rolling_options {
	size_t window;             /* W >= 2 periods */
	size_t step;               /* >= 1 period (used when step_months is 0) */
	int missing;               /* UNIVERSE_MISSING_COMPLETE, _PAIRWISE, or _KEEP: each window read
	                            * period by period (periodic.h), securities alive then */
	double min_coverage;       /* pairwise: fraction of the window (0, 1] */
	size_t refresh;            /* 0 = ROLLING_DEFAULT_REFRESH */
	int from_scratch;          /* 1: every window recomputed (reference, benchmarks) */
	struct rules_config rules; /* only the selected exact rules are evaluated */
	size_t replicates;         /* bootstrap replicates per window; 0 = none */
	struct bootstrap_options boot; /* seed, kind, block length, threads (replicates ignored) */
	rolling_progress_fn progress;
	void *progress_ctx;
	size_t step_months;        /* > 0: calendar windows.  The newest ends at the last period;
	                            * each earlier one ends at the last period dated in the calendar
	                            * month step_months months before the previous end's (for daily
	                            * or weekly data the month's last trading day present, for
	                            * monthly data the month end, for quarterly data with a step of
	                            * a multiple of 3 the quarter end; a month with no period gives
	                            * the last period before it).  Each window is the W periods
	                            * ending at its end. */
};

/* Window 60, step 12 periods (step_months 0; the command steps by calendar
 * months unless --step is given), complete data, default rules, no bootstrap. */
void hc_rolling_options_init(struct rolling_options *opt);

struct rolling_result;

/* How the windows of r are spaced, in words for captions and reports:
 * "one every S periods" or "12 calendar months apart, the newest ending at
 * the last period".  Always NUL-terminated (truncated to size). */
void hc_rolling_step_text(const struct rolling_result *r, char *buf, size_t size);

struct rolling_window {
	size_t first;              /* index of the first period */
	int32_t start_date, end_date; /* days since 1970-01-01 */
	size_t securities;         /* kept in the window */
	size_t dropped;            /* of the universe's, not kept */
	int status;                /* HC_OK, or why the window has no figures (note says) */
	int recomputed;            /* figures from scratch (1) or slid (0) */
	double average_variance;   /* per period */
	double average_covariance; /* per period */
	double average_correlation;
	size_t nrules;
	struct rule_result rules[RULES_COUNT]; /* the selected exact rules, in enum order */
	char note[ROLLING_NOTE_MAX];
};

struct rolling_result {
	size_t window, step;       /* step: periods, 0 when the windows step by calendar months */
	double periods_per_year;
	size_t replicates;         /* 0 = no intervals */
	unsigned rules;            /* RULES_FLAG mask of the exact rules evaluated */
	size_t nwindows;
	struct rolling_window *windows;
	size_t step_months;        /* the calendar step, 0 when the windows step by periods */
	int missing;               /* the policy each window applied */
	size_t alive_min, alive_median, alive_max; /* securities observed per period, whole history */
	struct universe_checks checks;  /* the history's data checks (copied from u->checks) */
};

/*
 * Run the windows over the return series of src (source.h; a covariance
 * matrix has no periods: HC_EUSAGE).  Build src from a universe loaded
 * under UNIVERSE_MISSING_KEEP to keep late listings: each window applies
 * opt's missing-data policy itself.  A window whose policy leaves fewer than two
 * securities, or whose figures cannot be computed, keeps status and a note
 * and no figures; the run goes on.  Errors: HC_EUSAGE (window < 2, window
 * longer than the sample, step 0, bad policy or rules, bootstrap with the
 * pairwise policy), HC_ENOMEM, HC_EINTERRUPT.  *out is NULL on error.
 */
int hc_rolling_run(struct rolling_result **out, const struct hc_source *src,
		   const struct rolling_options *opt, struct hc_error *err);

/* Free r and everything it owns; NULL is a no-op. */
void hc_rolling_result_free(struct rolling_result *r);

/*
 * Append the fields window, step (or step_months), how each window was
 * treated (treatment, alive_min, alive_median, alive_max over the whole
 * history) and the data checks' count when they ran on the history
 * (datacheck.h), then the table "windows" to rep: window_start, window_end,
 * securities, average_variance, average_covariance, average_correlation,
 * floor_sd (annualised; floor_sd empty when c-bar <= 0), then count_<rule>
 * per evaluated rule ('-' written '_': count_near_floor), with bootstrap
 * count_<rule>_p05/_p50/_p95, then dropped and note.  Also the fields
 * window, step, periods_per_year, window_count, windows_recomputed (the rest
 * slid).  HC_ENOMEM.
 */
int hc_rolling_report(struct report *rep, const struct rolling_result *r,
		   struct hc_error *err);

/* After hc_rolling_report: each rule's parameters as fields
 * (parameters_near_floor, ...) and the note on drifting averages.  0, or
 * non-zero when out of memory. */
int hc_rolling_report_context(struct report *r, const struct rolling_result *res);

#ifdef __cplusplus
}
#endif

#endif
