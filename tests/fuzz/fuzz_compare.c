/*
 * fuzz_compare.c - libFuzzer target for hc_compare_summaries (`holdcount
 * compare` and `report --previous` read summary.json files a user names).
 * fuzz-needs: compare report memory error
 *
 * The input is two texts, split at the first NUL byte (no NUL: the same
 * text twice).  Any result must be a report with its "changes" table of six
 * columns; any refusal must be HC_EDATA or HC_ENOMEM with a message.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/compare.h"
#include "holdcount/error.h"
#include "holdcount/memory.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	const uint8_t *nul = memchr(data, 0, size);
	size_t first = nul ? (size_t)(nul - data) : size;
	char *a = hc_strndup((const char *)data, first);
	char *b = nul ? hc_strndup((const char *)nul + 1, size - first - 1) : hc_strndup((const char *)data, size);
	struct report *r = NULL;
	struct hc_error err;
	int rc;

	if (a && b) {
		hc_error_clear(&err);
		rc = hc_compare_summaries(&r, a, "old", b, "new", &err);
		if (rc == HC_OK) {
			const struct report_table *t = hc_report_find_table(r, "changes");
			if (!r || !t || t->ncols != 6)
				__builtin_trap();
		} else if ((rc != HC_EDATA && rc != HC_ENOMEM) || r || !err.message[0]) {
			__builtin_trap();
		}
		hc_report_free(r);
	}
	hc_free(a);
	hc_free(b);
	return 0;
}
