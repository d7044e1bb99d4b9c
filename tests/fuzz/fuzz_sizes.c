/*
 * fuzz_sizes.c - libFuzzer target for hc_curve_parse_sizes (the --sizes list).
 * fuzz-needs: curve memory error
 *
 * The first two bytes give the upper bound (0 = none), the rest is the text.
 * A parsed list must be sorted, free of duplicates and inside 1..max.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/memory.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	struct hc_error err;
	size_t *sizes = NULL, n = 0, max, i;
	char *text;
	int rc;

	if (size < 2)
		return 0;
	max = (size_t)data[0] | (size_t)data[1] << 8;
	text = hc_strndup((const char *)data + 2, size - 2);
	if (!text)
		return 0;
	hc_error_clear(&err);
	rc = hc_curve_parse_sizes(text, max, &sizes, &n, &err);
	if (rc == HC_OK) {
		if (!sizes || n == 0)
			__builtin_trap();
		for (i = 0; i < n; i++) {
			if (sizes[i] < 1 || (max && sizes[i] > max))
				__builtin_trap();
			if (i && sizes[i] <= sizes[i - 1])
				__builtin_trap();
		}
	} else if (rc != HC_EUSAGE && rc != HC_ENOMEM) {
		__builtin_trap();
	} else if (!err.message[0]) {
		__builtin_trap();
	}
	hc_free(sizes);
	hc_free(text);
	return 0;
}
