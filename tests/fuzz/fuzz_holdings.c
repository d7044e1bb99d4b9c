/*
 * fuzz_holdings.c - libFuzzer target for hc_holdings_load_buffer.
 * fuzz-needs: holdings csvread memory error
 *
 * The first byte picks the options (short positions allowed or not; a
 * delimiter; the value column named instead of detecting; the encoding),
 * the rest is the file.  Loaded funds are checked against holdings.h's
 * contract: every fund has positions, no duplicate id within a fund (repeats
 * are summed), finite weights summing to 1, a known type, and every text
 * valid UTF-8 whatever the input's encoding.
 */
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/error.h"
#include "holdcount/holdings.h"

/* Weights are normalised by one division per fund, so their sum is 1 up to
 * a few ulps per position; 1e-9 is far above that for the fuzzer's sizes
 * (fewer than 10^5 positions) and far below any real mistake. */
#define WEIGHT_SUM_SLACK 1e-9

static void check_fund(const struct holdings_fund *f, int allow_short)
{
	double sum = 0;
	size_t i, j;

	if (!f->name || f->n == 0 || !f->h || !hc_csvread_utf8_valid(f->name, strlen(f->name)))
		__builtin_trap();
	for (i = 0; i < f->n; i++) {
		if (!f->h[i].id || !f->h[i].issuer || !isfinite(f->h[i].weight))
			__builtin_trap();
		if (f->h[i].type < 0 || f->h[i].type >= HOLDING_NTYPES || f->h[i].rows < 1 ||
		    !hc_csvread_utf8_valid(f->h[i].id, strlen(f->h[i].id)) ||
		    !hc_csvread_utf8_valid(f->h[i].issuer, strlen(f->h[i].issuer)) ||
		    (f->h[i].group && !hc_csvread_utf8_valid(f->h[i].group, strlen(f->h[i].group))))
			__builtin_trap();
		if (!allow_short && f->h[i].weight < 0)
			__builtin_trap();
		sum += f->h[i].weight;
		for (j = 0; j < i && f->n < 2000; j++)
			if (strcmp(f->h[i].id, f->h[j].id) == 0)
				__builtin_trap();
	}
	if (fabs(sum - 1) > WEIGHT_SUM_SLACK * (double)f->n)
		__builtin_trap();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static const char delims[4] = { 0, ',', ';', 0 };
	struct holdings_options opt;
	struct holdings *h = NULL;
	struct hc_error err;
	size_t i;
	int rc;

	if (size < 1)
		return 0;
	hc_holdings_options_init(&opt);
	opt.allow_short = data[0] & 1;
	opt.delimiter = delims[(data[0] >> 1) & 3];
	if (data[0] & 8)
		opt.value_column = "value";
	opt.encoding = (data[0] >> 4) % 3;   /* utf-8, latin-1, windows-1252 */
	hc_error_clear(&err);
	rc = hc_holdings_load_buffer(&h, "fuzz.csv", (const char *)data + 1, size - 1, &opt, &err);
	if (rc == HC_OK) {
		if (!h || h->nfunds == 0)
			__builtin_trap();
		for (i = 0; i < h->nfunds; i++)
			check_fund(&h->funds[i], opt.allow_short);
		for (i = 0; i < h->nwarnings; i++)
			if (!h->warnings[i])
				__builtin_trap();
	} else if (h || rc < HC_EUSAGE || rc > HC_EINTERNAL || err.code != rc || !err.message[0]) {
		__builtin_trap();
	}
	hc_holdings_free(h);
	return 0;
}
