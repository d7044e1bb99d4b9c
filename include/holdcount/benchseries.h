/*
 * benchseries.h - a benchmark's return series (a bond or bill index, a
 * capitalisation-weighted index) read from a two-column CSV and aligned on
 * a universe's periods, for comparisons on the same periods as the
 * universe's securities (horizon.h's joint resampling).
 *
 * The file (docs/formats.md, "Benchmark series"):
 *     date,NAME
 *     2004-01-31,0.0031
 *     ...
 * A header naming the date column (any name) and the value column, whose
 * name names the benchmark in the output; then one row per date, dates
 * strictly increasing, as the universe's wide layout has them.  Cells are
 * returns (a trailing '%' or percent given: percents), or prices when the
 * universe's are (BENCHSERIES_PRICES: simple returns p[k]/p[k-1] - 1 from
 * consecutive rows, dated at the later price, as the universe's loader
 * computes them; BENCHSERIES_PRICES_LOG: log returns).
 * Alignment: every period of the universe (its return dates) must have a
 * row with a value; a date inside the universe's first..last date that is
 * not one of its periods is an error (another frequency, or a shifted
 * calendar: compounding it away silently would misstate the benchmark);
 * dates before and after the sample are ignored (a price row before the
 * first period is the base of its return).
 */
#ifndef HOLDCOUNT_BENCHSERIES_H
#define HOLDCOUNT_BENCHSERIES_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

enum benchseries_values {
	BENCHSERIES_RETURNS = 0,
	BENCHSERIES_PRICES = 1,
	BENCHSERIES_PRICES_LOG = 2
};

struct benchseries {
	char *name;                /* the value column's header */
	char *source;              /* the path read */
	size_t t;                  /* the universe's periods */
	double *r;                 /* t returns per period, on the universe's dates */
};

/*
 * Read path and align it on dates[0..t) (days since 1970-01-01, strictly
 * increasing: a universe's u->dates).  values: enum benchseries_values;
 * percent: cells are percents.  *out NULL on error: HC_EIO (cannot open),
 * HC_EDATA "PATH:LINE:COLUMN: ..." (a header without two columns, a bad
 * date or number, dates out of order, a date inside the sample that is not
 * one of its periods, a missing or non-positive value where a period needs
 * it, |return| above HC_UNIVERSE_MAX_RETURN), "PATH: no row dated D, a
 * period of the universe", HC_EUSAGE (percent with prices, t < 1),
 * HC_ENOMEM.
 */
int hc_benchseries_load(struct benchseries **out, const char *path, const int32_t *dates, size_t t, int values,
			int percent, struct hc_error *err);

/* The same from a buffer; name is used in messages (tests). */
int hc_benchseries_load_buffer(struct benchseries **out, const char *name, const char *data, size_t len,
			       const int32_t *dates, size_t t, int values, int percent, struct hc_error *err);

/* Free b and what it owns; NULL is a no-op. */
void hc_benchseries_free(struct benchseries *b);

#ifdef __cplusplus
}
#endif

#endif
