/*
 * sectors.h - a sector map (security id -> label) and the strata it gives
 * a universe: for stratified draws, sector weights and sector HHI.
 *
 * CSV layout (docs/formats.md): a header row naming an id column and a
 * label column ("id" and "label" unless chosen by option; names matched
 * ignoring case and surrounding blanks; other columns ignored), then one
 * row per security.  Ids follow the universe's rules (non-empty, valid
 * UTF-8, unique even ignoring case and surrounding blanks); labels are
 * non-empty valid UTF-8, compared exactly.
 */
#ifndef HOLDCOUNT_SECTORS_H
#define HOLDCOUNT_SECTORS_H

#include <stddef.h>

#include "holdcount/error.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The label of the stratum holding securities absent from the map; the
 * map itself may not use it. */
#define SECTORS_UNMAPPED_LABEL "(unmapped)"

struct sectors {
	size_t n;            /* entries, in file order */
	char **ids;          /* n ids */
	size_t *label_of;    /* n indices into labels */
	size_t nlabels;
	char **labels;       /* distinct labels, in order of first appearance */
	size_t *by_id;       /* n entry indices sorted by id, for lookups */
};

/*
 * Read a sector map.  id_column / label_column: header names, NULL for
 * "id" / "label".  Errors: HC_EIO, HC_ENOMEM, HC_EDATA "PATH:LINE:COLUMN:
 * ..." for a missing column, an empty or invalid id or label, a duplicate
 * id (naming the line of the first), a ragged row, the reserved label, or
 * a header with no rows.  On failure *out is NULL.
 */
int hc_sectors_load(struct sectors **out, const char *path, const char *id_column,
		 const char *label_column, struct hc_error *err);

/* The same from a buffer; name is used in messages. */
int hc_sectors_load_buffer(struct sectors **out, const char *name,
			const char *data, size_t len, const char *id_column,
			const char *label_column, struct hc_error *err);

/* Free s and everything it owns; NULL is a no-op. */
void hc_sectors_free(struct sectors *s);

/* Label index of id (exact match), or -1 when the map lacks it. O(log n). */
long hc_sectors_find(const struct sectors *s, const char *id);

/*
 * Strata of u's securities: *stratum_of_security (u->m entries) gets each
 * security's index into *labels (*nlabels copies, owned by the caller):
 * the map's labels used by at least one of u's securities, in the map's
 * order of first appearance, then SECTORS_UNMAPPED_LABEL when *unmapped
 * (the number of u's securities absent from the map) is not 0.
 * Free the results with hc_sectors_strata_free.  HC_ENOMEM on failure, with
 * the outputs set to NULL / 0.
 */
int hc_sectors_strata(const struct sectors *s, const struct universe *u,
		   size_t **stratum_of_security, char ***labels, size_t *nlabels,
		   size_t *unmapped, struct hc_error *err);

/* Free what hc_sectors_strata returned; NULL pointers are no-ops. */
void hc_sectors_strata_free(size_t *stratum_of_security, char **labels, size_t nlabels);

#ifdef __cplusplus
}
#endif

#endif
