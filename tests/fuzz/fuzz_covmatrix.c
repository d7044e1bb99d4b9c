/*
 * fuzz_covmatrix.c - libFuzzer target for hc_covmatrix_load_buffer.
 * fuzz-needs: covmatrix csvread universe memory error
 *
 * The first byte picks the symmetry tolerance (exact, the default, or a
 * loose 1e-2), the rest is the file.  A loaded matrix must match
 * covmatrix.h: m >= 2, ids present, finite entries, a positive diagonal and
 * exact symmetry (the loader averages the two triangles).
 */
#include <math.h>
#include <stddef.h>
#include <stdint.h>

#include "holdcount/covmatrix.h"
#include "holdcount/error.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static const double tols[4] = { 0, COVMATRIX_DEFAULT_SYMMETRY_TOL, 1e-2, COVMATRIX_DEFAULT_SYMMETRY_TOL };
	struct covmatrix *c = NULL;
	struct hc_error err;
	size_t i, j;
	int rc;

	if (size < 1)
		return 0;
	hc_error_clear(&err);
	rc = hc_covmatrix_load_buffer(&c, "fuzz.csv", (const char *)data + 1, size - 1, tols[data[0] & 3], &err);
	if (rc == HC_OK) {
		if (!c || c->m < 2 || !c->ids || !c->a)
			__builtin_trap();
		for (i = 0; i < c->m; i++) {
			if (!c->ids[i] || !(c->a[i * c->m + i] > 0))
				__builtin_trap();
			for (j = 0; j < c->m; j++)
				if (!isfinite(c->a[i * c->m + j]) || c->a[i * c->m + j] != c->a[j * c->m + i])
					__builtin_trap();
		}
	} else if (c || rc < HC_EUSAGE || rc > HC_EINTERNAL || err.code != rc || !err.message[0]) {
		__builtin_trap();
	}
	hc_covmatrix_free(c);
	return 0;
}
