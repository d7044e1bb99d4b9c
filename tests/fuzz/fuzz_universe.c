/*
 * fuzz_universe.c - libFuzzer target for hc_universe_load_buffer.
 * fuzz-needs: universe csvread memory error
 *
 * The first byte picks the options (wide or long layout; returns, prices or
 * log prices; percent; missing-data policy; delimiter), the rest is the
 * file.  A loaded universe is checked against universe.h's contract; a
 * refusal must carry a status from error.h and a message.
 */
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/error.h"
#include "holdcount/universe.h"

/* Keeps the fuzzer's allocations bounded (libFuzzer's own limit is 2 GB of
 * RSS); the budget path is itself under test this way. */
#define FUZZ_MAX_BYTES ((size_t)64 << 20)

static void check_universe(const struct universe *u)
{
	size_t i, k;

	if (u->m < 2 || u->t < 2 || !u->ids || !u->x || !u->dates)
		__builtin_trap();
	if (u->m > u->m_read || !(u->periods_per_year > 0))
		__builtin_trap();
	for (i = 0; i < u->m; i++)
		if (!u->ids[i])
			__builtin_trap();
	for (k = 1; k < u->t; k++)
		if (u->dates[k] <= u->dates[k - 1])
			__builtin_trap(); /* periods are in strictly increasing date order */
	for (i = 0; i < u->m * u->t; i++) {
		if (isinf(u->x[i]))
			__builtin_trap();
		if (isnan(u->x[i]) && !u->has_missing)
			__builtin_trap();
	}
	for (i = 0; i < u->ndropped; i++)
		if (!u->dropped[i].id || !u->dropped[i].reason)
			__builtin_trap();
	(void)hc_universe_find(u, u->ids[u->m - 1]);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static const char delims[4] = { 0, ',', ';', 0 };
	struct universe_options opt;
	struct universe *u = NULL;
	struct hc_error err;
	int rc;

	if (size < 1)
		return 0;
	hc_universe_options_init(&opt);
	opt.layout = (data[0] & 1) ? UNIVERSE_LONG : UNIVERSE_WIDE;
	opt.values = ((data[0] >> 1) & 3) % 3;
	opt.percent = (data[0] >> 3) & 1;
	opt.missing = ((data[0] >> 4) & 3) % 3;
	opt.delimiter = delims[(data[0] >> 6) & 3];
	opt.max_bytes = FUZZ_MAX_BYTES;
	hc_error_clear(&err);
	rc = hc_universe_load_buffer(&u, "fuzz.csv", (const char *)data + 1, size - 1, &opt, &err);
	if (rc == HC_OK) {
		if (!u)
			__builtin_trap();
		check_universe(u);
	} else {
		if (u || rc < HC_EUSAGE || rc > HC_EINTERNAL || err.code != rc || !err.message[0])
			__builtin_trap();
	}
	hc_universe_free(u);
	return 0;
}
