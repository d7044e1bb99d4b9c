/*
 * fuzz_sectors.c - libFuzzer target for hc_sectors_load_buffer (the sector map).
 * fuzz-needs: sectors csvread universe memory error
 *
 * The first byte picks the column names (the defaults, or "sector" for the
 * label), the rest is the file.  A loaded map must match sectors.h: label
 * indices in range, by_id sorted so that hc_sectors_find finds every id.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/error.h"
#include "holdcount/sectors.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	struct sectors *s = NULL;
	struct hc_error err;
	size_t i;
	int rc;

	if (size < 1)
		return 0;
	hc_error_clear(&err);
	rc = hc_sectors_load_buffer(&s, "fuzz.csv", (const char *)data + 1, size - 1, NULL,
				 (data[0] & 1) ? "sector" : NULL, &err);
	if (rc == HC_OK) {
		if (!s || s->n == 0)
			__builtin_trap();
		for (i = 0; i < s->n; i++) {
			if (!s->ids[i] || s->label_of[i] >= s->nlabels || !s->labels[s->label_of[i]])
				__builtin_trap();
			if (hc_sectors_find(s, s->ids[i]) != (long)s->label_of[i])
				__builtin_trap();
			if (i && strcmp(s->ids[s->by_id[i - 1]], s->ids[s->by_id[i]]) >= 0)
				__builtin_trap();
		}
	} else if (s || rc < HC_EUSAGE || rc > HC_EINTERNAL || err.code != rc || !err.message[0]) {
		__builtin_trap();
	}
	hc_sectors_free(s);
	return 0;
}
