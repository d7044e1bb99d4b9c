/*
 * fuzz_labels.c - libFuzzer target for the sector-map loader
 * (hc_holdings_labels_load_buffer: id,label rows).
 * fuzz-needs: holdings csvread memory error
 *
 * The first byte picks the delimiter, the rest is the file.  A loaded map
 * must be sorted by id without duplicates (hc_holdings_labels_find's binary
 * search depends on it), and every id must be found again.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/error.h"
#include "holdcount/holdings.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static const char delims[4] = { 0, ',', ';', 0 };
	struct holdings_labels *l = NULL;
	struct hc_error err;
	size_t i;
	int rc;

	if (size < 1)
		return 0;
	hc_error_clear(&err);
	rc = hc_holdings_labels_load_buffer(&l, "fuzz.csv", (const char *)data + 1, size - 1,
					 delims[data[0] & 3], &err);
	if (rc == HC_OK) {
		if (!l)
			__builtin_trap();
		for (i = 0; i < l->n; i++) {
			if (!l->ids[i] || !l->labels[i] || !l->ids[i][0] || !l->labels[i][0])
				__builtin_trap();
			if (i && strcmp(l->ids[i - 1], l->ids[i]) >= 0)
				__builtin_trap();
			if (hc_holdings_labels_find(l, l->ids[i]) != l->labels[i])
				__builtin_trap();
		}
	} else if (l || rc < HC_EUSAGE || rc > HC_EINTERNAL || err.code != rc || !err.message[0]) {
		__builtin_trap();
	}
	hc_holdings_labels_free(l);
	return 0;
}
