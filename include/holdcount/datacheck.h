/*
 * datacheck.h - checks on a loaded return history before any figure.
 *
 * Each finding names the security (or none, for the calendar), the date and
 * the cell's value.  The checks look for the usual ways a real file goes
 * wrong (common practice, no single source):
 *   prices read as returns   every observed cell of a security positive and
 *                            its median above DATACHECK_PRICE_MEDIAN;
 *   percents read as decimals  median |r| above DATACHECK_PERCENT_MEDIAN
 *                            (and not prices);
 *   total loss               a return of -100% or worse;
 *   split-like jump          a log price ratio within DATACHECK_SPLIT_MADS
 *                            robust sds (at least DATACHECK_SPLIT_TOL, at
 *                            most DATACHECK_SPLIT_TOL_MAX; weekly and
 *                            daily data only: coarser data keep
 *                            DATACHECK_SPLIT_TOL) of
 *                            the log of a simple ratio, the nearest named (-50%, -66.7%, -75%, -80%, -90%, +100%,
 *                            +200%, +300%, +400%, +900%; the day's own move
 *                            rides on a split) and at least
 *                            DATACHECK_JUMP_MADS robust sds from the
 *                            security's median; "reversed" when the product
 *                            of (1 + r) over it and one of the next
 *                            DATACHECK_REVERSAL_PERIODS returns is within the
 *                            tolerance of 1 (a bad print), else not (an
 *                            unadjusted split);
 *   stale run                DATACHECK_STALE_RUN or more consecutive returns
 *                            of exactly 0 (identical prices);
 *   isolated extreme cell    any other return DATACHECK_JUMP_MADS robust sds
 *                            from the security's median, above 50% in size,
 *                            and undone (to within DATACHECK_SPIKE_TOL) within
 *                            the next DATACHECK_REVERSAL_PERIODS returns: a
 *                            spike, not a collapse that stays;
 *   calendar                 the weekdays the dates fall on, days a week,
 *                            month-end or mid-month dates, and periods per
 *                            year counted from the calendar itself (periods
 *                            between the first and last date over the years
 *                            they span).
 * The robust sd is 1.4826 times the median absolute deviation.
 */
#ifndef HOLDCOUNT_DATACHECK_H
#define HOLDCOUNT_DATACHECK_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

#define DATACHECK_PRICE_MEDIAN 1.5
#define DATACHECK_PERCENT_MEDIAN 0.25
#define DATACHECK_SPLIT_TOL 0.005
#define DATACHECK_SPLIT_MADS 3.0
#define DATACHECK_SPLIT_TOL_MAX 0.03
#define DATACHECK_SPLIT_MIN_PPY 50.0
#define DATACHECK_JUMP_MADS 8.0
#define DATACHECK_REVERSAL_PERIODS 5
#define DATACHECK_STALE_RUN 5
#define DATACHECK_SPIKE_TOL 0.10

enum datacheck_kind {
	DATACHECK_PRICES = 0,
	DATACHECK_PERCENTS = 1,
	DATACHECK_TOTAL_LOSS = 2,
	DATACHECK_SPLIT = 3,
	DATACHECK_STALE = 4,
	DATACHECK_EXTREME = 5,
	DATACHECK_NKINDS = 6
};

struct datacheck_finding {
	int kind;              /* enum datacheck_kind */
	size_t security;       /* index in the universe */
	size_t period;         /* index of the period (date u->dates[period]) */
	double value;          /* the cell (a return), or the run length for a stale run */
	int reversed;          /* split-like: 1 when undone within the next periods */
};

struct datacheck_result {
	size_t nfindings;
	struct datacheck_finding *findings;   /* in security, then date order */
	size_t count[DATACHECK_NKINDS];
	unsigned weekdays;                    /* bit d set: some date falls on weekday d (0 = Monday) */
	double days_a_week;                   /* distinct weekdays used, for daily data; 0 otherwise */
	int month_end;                        /* monthly or slower: 1 when every date is a month's last day */
	double calendar_periods_per_year;     /* (T - 1) / years spanned, 0 when one date */
};

/* The short name of a kind ("prices", "percents", "total-loss", "split",
 * "stale", "extreme"); NULL when out of range. */
const char *hc_datacheck_name(int kind);

/* Run every check on u (returns, NaN at gaps).  O(M T log T).  HC_ENOMEM;
 * *out is NULL on error.  Free with hc_datacheck_free. */
int hc_datacheck_run(struct datacheck_result **out, const struct universe *u, struct hc_error *err);
void hc_datacheck_free(struct datacheck_result *r);

/* One finding as a sentence: "LIR007 2019-03-29: return -50.1% looks like
 * an unadjusted 2-for-1 split (not reversed)". */
void hc_datacheck_describe(const struct datacheck_finding *f, const struct universe *u,
			   char *buf, size_t size);

/*
 * The report `holdcount check` prints: the source, the calendar (weekdays,
 * days a week, month ends, periods a year from the dates and as used),
 * the count of findings of each kind, the cells read as missing under
 * --bad-cells missing, the table "findings" (security, date, check, cell,
 * finding) and the cautions.  *out is new (hc_report_free) or NULL on
 * HC_ENOMEM.
 */
int hc_datacheck_report(struct report **out, const struct universe *u, const struct datacheck_result *d,
			struct hc_error *err);

/*
 * The count of findings in another report (the report folder's universe):
 * data_check_findings, and when there are any data_check_first (the first
 * as hc_datacheck_describe words it) and data_check_KIND for each kind
 * found.  HC_OK, or HC_ENOMEM.
 */
int hc_datacheck_add_counts(struct report *r, const struct universe *u, const struct datacheck_result *d);

/* Keep d's count on u (u->checks), so that the analyses that read u later
 * carry it in their output. */
void hc_datacheck_keep(struct universe *u, const struct datacheck_result *d);

/* The fields of hc_datacheck_add_counts from a count kept on a universe
 * (u->checks, hc_datacheck_keep); nothing when c is NULL or the checks did
 * not run (a window or copy of the history, or a library caller that did
 * not run them).  HC_OK, or HC_ENOMEM. */
int hc_datacheck_report_kept(struct report *r, const struct universe_checks *c);

#ifdef __cplusplus
}
#endif

#endif
