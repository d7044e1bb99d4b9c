/*
 * fuzz_csvread.c - libFuzzer target for hc_csvread_buffer and its cell helpers.
 * fuzz-needs: csvread memory error
 *
 * The first byte picks the options (delimiter: detect, ',' or ';'; a small
 * or the default field limit); the rest is the file.  Every field handed to
 * the callback is checked against the header's contract (NUL-terminated at
 * len, 1-based line and column, records in order) and run through the cell
 * helpers, so a contract break traps even where ASan sees nothing.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/error.h"

struct fuzz_state {
	size_t last_record;
	size_t last_column;
	size_t max_field;
};

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct fuzz_state *st = ctx;
	double v;
	int pct = 0;

	if (!f->text || f->text[f->len] != '\0' || f->line < 1 || f->column < 1)
		__builtin_trap();
	if (f->len > st->max_field || memchr(f->text, '\0', f->len))
		__builtin_trap();
	if (f->record < st->last_record)
		__builtin_trap();
	if (f->record == st->last_record && f->column <= st->last_column && st->last_column)
		__builtin_trap();
	if (f->record != st->last_record)
		st->last_column = 0;
	st->last_record = f->record;
	st->last_column = f->column;
	(void)hc_csvread_utf8_valid(f->text, f->len);
	(void)hc_csvread_is_missing(f->text, f->len);
	if (hc_csvread_parse_number(f->text, f->len, &v, &pct) == 0 && (v != v || v - v != 0))
		__builtin_trap(); /* the contract: no NaN, no infinity */
	return HC_OK;
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line, struct hc_error *err)
{
	if (nfields < 1 || line < 1)
		__builtin_trap();
	return HC_OK;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	static const char delims[4] = { 0, ',', ';', 0 };
	struct csvread_options opt;
	struct csvread_handler h;
	struct fuzz_state st = { 0, 0, 0 };
	struct hc_error err;
	char used = 0;
	int rc;

	if (size < 1)
		return 0;
	hc_csvread_options_init(&opt);
	opt.delimiter = delims[data[0] & 3];
	opt.max_field = (data[0] & 4) ? 16 : 0;
	st.max_field = opt.max_field ? opt.max_field : CSVREAD_DEFAULT_MAX_FIELD;
	h.field = on_field;
	h.record = on_record;
	h.ctx = &st;
	hc_error_clear(&err);
	rc = hc_csvread_buffer("fuzz.csv", (const char *)data + 1, size - 1, &opt, &h, &used, &err);
	if (rc != HC_OK && (err.message[0] == '\0' || rc != err.code))
		__builtin_trap(); /* every failure must explain itself */
	if (rc == HC_OK && used != ',' && used != ';')
		__builtin_trap();
	return 0;
}
