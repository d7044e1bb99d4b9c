/*
 * universe.h - a return history for M securities over T periods.
 *
 * Loaded from a wide CSV (date column, then one column per security id) or a
 * long CSV (date,id,value), of returns or prices; see docs/formats.md.
 * Storage is security-major: the T returns of security i are contiguous at
 * x[i*t .. i*t + t-1], in date order, so that summing whole series (the
 * sampler's and the moments' hot loops) reads memory in order.
 * Returns are per period, as decimals (0.012 = 1.2%), simple returns unless
 * the user asked for log returns computed from prices.
 */
#ifndef HOLDCOUNT_UNIVERSE_H
#define HOLDCOUNT_UNIVERSE_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

enum universe_layout {
	UNIVERSE_WIDE = 0,  /* date,ID1,ID2,... */
	UNIVERSE_LONG = 1   /* date,id,value rows (column names by option) */
};

enum universe_values {
	UNIVERSE_RETURNS = 0,      /* cells are returns */
	UNIVERSE_PRICES = 1,       /* cells are prices: simple returns computed */
	UNIVERSE_PRICES_LOG = 2    /* cells are prices: log returns computed */
};

enum universe_missing {
	UNIVERSE_MISSING_COMPLETE = 0, /* keep only securities with no gap */
	UNIVERSE_MISSING_PAIRWISE = 1, /* keep securities with coverage >= min_coverage; NaN marks gaps */
	UNIVERSE_MISSING_KEEP = 2      /* keep every security as read (for rolling windows) */
};

/* Cells that are not a number: a spreadsheet's error values (#N/A,
 * #DIV/0!, #VALUE!, #REF!, #NUM!, #NAME?, #NULL!, any cell starting with
 * '#') and, for prices, zero or negative prices. */
enum universe_bad_cells {
	UNIVERSE_BAD_REFUSE = 0,   /* an error naming file, line, column and the cell */
	UNIVERSE_BAD_MISSING = 1   /* read as missing, counted (universe.bad_cells) and named (bad_first) */
};

/* Conversion of the periods read to calendar periods: returns compounded
 * within each calendar week, month or quarter (prices: the last price of
 * each period); the period's date is the last date of the data in it. */
enum universe_frequency {
	UNIVERSE_FREQ_AS_READ = 0,
	UNIVERSE_FREQ_WEEKLY = 1,    /* weeks start the day after the calendar's weekend (the weekday
	                              * run the dates use least: Saturday-Sunday gives Monday) */
	UNIVERSE_FREQ_MONTHLY = 2,
	UNIVERSE_FREQ_QUARTERLY = 3  /* calendar quarters (January-March, ...) */
};

/* Defaults named once. */
#define UNIVERSE_DEFAULT_MIN_COVERAGE 0.8

/*
 * The largest return, in size, a universe may hold: 1e6 per period (a
 * gain of 100 000 000%).  No security earns that in one period; a cell
 * beyond it is a data error (a price in a return column, a missing
 * decimal point), refused with its file, line and column (or, for returns
 * computed from prices, its security and date).  The bound also keeps
 * every later stage finite and in range: squares and sums of squares of
 * returns stay far below DBL_MAX (a return of 1e154 made a variance
 * overflow), and the report's plot axes and gnuplot's own arithmetic work
 * on values it can handle (returns of 1e9 and up made gnuplot fail).
 */
#define HC_UNIVERSE_MAX_RETURN 1e6

struct universe_options {
	int layout;                 /* enum universe_layout */
	int values;                 /* enum universe_values */
	int percent;                /* cells are percents (a trailing '%' also says so per cell) */
	int missing;                /* enum universe_missing */
	double min_coverage;        /* fraction of periods a security must have (pairwise/keep) */
	double periods_per_year;    /* > 0 overrides detection from the dates */
	char delimiter;             /* ',' or ';'; 0 = detect from the header line */
	const char *date_column;    /* name of the date column; NULL = first column (wide) or "date" (long) */
	const char *id_column;      /* long layout: NULL = "id" */
	const char *value_column;   /* long layout: NULL = "value" */
	size_t max_bytes;           /* budget for the numbers; 0 = from available memory */
	int bad_cells;              /* enum universe_bad_cells */
	int frequency;              /* enum universe_frequency */
};

/* Defaults: wide layout of returns (not percents), complete series only,
 * min_coverage UNIVERSE_DEFAULT_MIN_COVERAGE, periods per year and delimiter
 * detected, default column names, memory budget from available memory. */
void hc_universe_options_init(struct universe_options *opt);

struct universe_dropped {
	char *id;
	char *reason;   /* e.g. "missing 14 of 240 periods" */
};

/* What the data checks (datacheck.h) found on this history, kept by
 * hc_datacheck_keep so that every analysis's output can carry the count
 * (hc_datacheck_report_kept).  run is 0 until they ran. */
#define HC_UNIVERSE_CHECK_KINDS 6
struct universe_checks {
	int run;
	size_t total;
	size_t count[HC_UNIVERSE_CHECK_KINDS];   /* by enum datacheck_kind */
	char first[320];                        /* the first finding, as hc_datacheck_describe words it */
};

struct universe {
	size_t m;                   /* securities kept */
	size_t t;                   /* periods (of returns) */
	char **ids;                 /* m ids, as in the file's header order */
	double *x;                  /* m*t returns, security-major; NaN = missing */
	int32_t *dates;             /* t period dates, days since 1970-01-01 */
	double periods_per_year;    /* detected or given */
	int periods_detected;       /* 1 when detected from the dates */
	int has_missing;            /* any NaN left in x */
	size_t m_read;              /* securities found in the file */
	size_t ndropped;
	struct universe_dropped *dropped;
	char *source;               /* the path it was read from */
	size_t bad_cells;           /* cells read as missing under UNIVERSE_BAD_MISSING */
	char bad_first[192];        /* the first of them: "FILE:LINE:COLUMN: 'CELL' (why)"; "" when none */
	size_t periods_read;        /* periods of returns before a frequency conversion */
	size_t max_bytes;           /* the budget it was loaded under (universe_options.max_bytes;
	                             * 0 = from available memory); the steps that compute on it
	                             * (moments.h, covmatrix.h) keep to it too, and windows and
	                             * resamples inherit it */
	struct universe_checks checks; /* the data checks' count (hc_datacheck_keep); kept by
	                             * hc_universe_apply_missing, not by windows or resamples */
};

/*
 * Read path into a new universe.  On failure *out is NULL, and err holds
 * "PATH:LINE:COLUMN: what was found, what was expected" with HC_EDATA, or
 * HC_EIO (cannot open/read), HC_ENOMEM (allocation or budget), HC_EUSAGE
 * (contradictory options).  Fewer than two securities or two periods left
 * after the missing-data policy is HC_EDATA.  A zero-variance security is
 * HC_EDATA (it has no risk to diversify; name it).
 */
int hc_universe_load(struct universe **out, const char *path,
		  const struct universe_options *opt, struct hc_error *err);

/* The same from a memory buffer; name is used in messages. */
int hc_universe_load_buffer(struct universe **out, const char *name,
			 const char *data, size_t len,
			 const struct universe_options *opt, struct hc_error *err);

/*
 * A window of periods [first, first+len) of src with the missing policy
 * applied inside the window (securities complete in the window are kept
 * under UNIVERSE_MISSING_COMPLETE).  The new universe owns copies.
 */
int hc_universe_window(struct universe **out, const struct universe *src,
		    size_t first, size_t len, int missing, double min_coverage,
		    struct hc_error *err);

/*
 * The missing-data policy applied to a universe already in memory: src as
 * loaded under UNIVERSE_MISSING_KEEP (securities it already left out, by a
 * date range or an exclusion, stay in the dropped list first), *out a new
 * universe with the securities the policy keeps, the dropped list and
 * messages hc_universe_load gives under that policy for the same file.
 * So a caller that needs both (every security for rolling windows, the
 * complete ones for the rest) reads the file once.  HC_EUSAGE (bad
 * policy), HC_EDATA (fewer than 2 left), HC_ENOMEM.
 */
int hc_universe_apply_missing(struct universe **out, const struct universe *src, int missing,
			      double min_coverage, struct hc_error *err);

/* A universe from a period-resampled copy: period k of the result is period
 * idx[k] of src (k < n).  Dates are copied from idx. */
int hc_universe_resample(struct universe **out, const struct universe *src,
		      const size_t *idx, size_t n, struct hc_error *err);

/* Leave out the securities named in ids[0..n-1] (in place; each is listed
 * as dropped, reason "excluded (--exclude)").  HC_EDATA naming an id that
 * is not in u, or when fewer than 2 securities are left; HC_ENOMEM. */
int hc_universe_exclude(struct universe *u, char *const *ids, size_t n, struct hc_error *err);

/* Free u and everything it owns; NULL is a no-op. */
void hc_universe_free(struct universe *u);

/* Index of id in u->ids, or -1. */
long hc_universe_find(const struct universe *u, const char *id);

/* Detect periods per year from the median spacing of sorted dates
 * (days since 1970-01-01): about 252 (daily, five or fewer trading days a
 * week, whichever weekdays they are), 302 (six), 365 (seven), 52, 12, 4, 2
 * or 1.
 * Returns 0 when fewer than two dates. */
double hc_universe_detect_periods(const int32_t *dates, size_t n);

/* Securities observed (not NaN) per period: the fewest, the median
 * (the ((t - 1) / 2)-th smallest) and the most over u's periods.  HC_OK, or
 * HC_ENOMEM. */
int hc_universe_alive(const struct universe *u, size_t *min, size_t *median, size_t *max);

/* Parse an ISO 8601 calendar date YYYY-MM-DD (or YYYY-MM, taken as the
 * month's last day) into days since 1970-01-01; validates the day of month.
 * Returns 0 on success, -1 when not a valid date. */
int hc_universe_parse_date(const char *s, size_t len, int32_t *days);

/* Format days since 1970-01-01 as YYYY-MM-DD into buf (at least 11 bytes). */
void hc_universe_format_date(int32_t days, char *buf);

/*
 * Security-id checks shared by every loader of ids (universe, covariance
 * matrix, sector map).
 * hc_universe_check_id: HC_OK when id[0..len) is non-empty (not only blanks)
 * and valid UTF-8; else HC_EDATA with "NAME:LINE:COL: ..." in err.
 * hc_universe_id_clash: looks for two of ids[0..n) that are equal, or equal
 * once ASCII case and surrounding blanks are ignored.  Returns 0 when all
 * are distinct, 1 with *first < *second the indices of a clashing pair,
 * -1 when out of memory.  O(n log n).
 */
int hc_universe_check_id(const char *name, size_t line, size_t col,
		      const char *id, size_t len, struct hc_error *err);
int hc_universe_id_clash(char *const *ids, size_t n, size_t *first, size_t *second);

#ifdef __cplusplus
}
#endif

#endif
