/*
 * marketvalues.h - each security's market value, read from a CSV, for
 * weights proportional to market value (capitalisation weights).
 *
 * The file (docs/formats.md, "Market values"):
 *     id,market_value
 *     LIR001,1843.5
 *     ...
 * A header naming an `id` and a `market_value` column (matched ignoring
 * ASCII case and surrounding blanks; other columns ignored), then one row
 * per security: the id as the universe spells it, and a market value
 * above 0 in any one currency unit (only the ratios matter).  Ids the
 * universe does not hold are ignored (the file may cover a wider market);
 * every security of the universe needs one.
 */
#ifndef HOLDCOUNT_MARKETVALUES_H
#define HOLDCOUNT_MARKETVALUES_H

#include <stddef.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

/*
 * Read path and give *out = values[0..m) in the order of ids[0..m) (the
 * caller frees it with hc_free).  *out NULL on error: HC_EIO (cannot open),
 * HC_EDATA "PATH:LINE:COLUMN: ..." (no id or market_value column, a bad
 * or non-positive number, a missing value, an id given twice), "PATH: no
 * market value for 'ID', a security of the universe", HC_ENOMEM.
 */
int hc_marketvalues_load(double **out, const char *path, char *const *ids, size_t m, struct hc_error *err);

/* The same from a buffer; name is used in messages (tests). */
int hc_marketvalues_load_buffer(double **out, const char *name, const char *data, size_t len, char *const *ids,
				size_t m, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
