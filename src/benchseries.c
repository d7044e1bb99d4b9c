/*
 * benchseries.c - a benchmark's return series from a two-column CSV,
 * aligned on a universe's periods (benchseries.h, docs/formats.md).
 *
 * The rows are read whole (a date, a value and the line of each), then
 * turned into returns (prices: from consecutive rows, as the universe's
 * loader does), then matched to the universe's dates by one merge of the
 * two sorted lists.
 */
#include "holdcount/benchseries.h"

#include <math.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"
#include "holdcount/universe.h"

struct brow {
	int32_t date;
	double v;                  /* NaN: missing */
	size_t line;
};

struct breader {
	const char *name;
	int percent;
	char *header;              /* the value column's name */
	struct brow *rows;
	size_t n, cap;
	struct brow cur;
};

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct breader *r = ctx;
	char q[CSVREAD_QUOTE_BUF];
	int pct = 0;

	if (f->column > 2)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: a third column; expected two: a date and the benchmark's "
				"value", r->name, f->line, f->column);
	if (f->record == 0) {
		if (f->column == 2) {
			if (f->len == 0)
				return hc_error(err, HC_EDATA, "%s:%zu:2: an empty header; expected the benchmark's "
						"name above its values", r->name, f->line);
			if (!(r->header = hc_strndup(f->text, f->len)))
				return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
		}
		return HC_OK;
	}
	if (f->column == 1) {
		memset(&r->cur, 0, sizeof r->cur);
		r->cur.line = f->line;
		r->cur.v = NAN;
		if (hc_universe_parse_date(f->text, f->len, &r->cur.date))
			return hc_error(err, HC_EDATA, "%s:%zu:1: expected a date as YYYY-MM-DD or YYYY-MM, found '%s'",
					r->name, f->line, hc_csvread_quote(f->text, f->len, q));
		return HC_OK;
	}
	if (hc_csvread_is_missing(f->text, f->len))
		return HC_OK;
	if (hc_csvread_parse_number(f->text, f->len, &r->cur.v, &pct))
		return hc_error(err, HC_EDATA, "%s:%zu:2: expected a number or a missing marker, found '%s'", r->name,
				f->line, hc_csvread_quote(f->text, f->len, q));
	if (r->percent && !pct)
		r->cur.v /= 100.0;
	return HC_OK;
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line, struct hc_error *err)
{
	struct breader *r = ctx;
	struct brow *nr;

	if (nfields != 2)
		return hc_error(err, HC_EDATA, "%s:%zu: %zu field%s; expected two: a date and the benchmark's value",
				r->name, line, nfields, nfields == 1 ? "" : "s");
	if (record == 0)
		return HC_OK;
	if (r->n && r->cur.date <= r->rows[r->n - 1].date) {
		char a[16], b[16];

		hc_universe_format_date(r->cur.date, a);
		hc_universe_format_date(r->rows[r->n - 1].date, b);
		return hc_error(err, HC_EDATA, "%s:%zu:1: date %s is not after %s on line %zu; expected dates strictly "
				"increasing", r->name, line, a, b, r->rows[r->n - 1].line);
	}
	if (!(nr = hc_grow(r->rows, &r->cap, r->n, sizeof *nr, 256)))
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	r->rows = nr;
	r->rows[r->n++] = r->cur;
	return HC_OK;
}

/* Prices to returns in place: row k's value becomes its return from row
 * k-1 (row 0: NaN, it only starts the series). */
static int to_returns(struct breader *r, int values, struct hc_error *err)
{
	double prev = NAN;
	size_t k;

	for (k = 0; k < r->n; k++) {
		double p = r->rows[k].v;

		if (!isnan(p) && !(p > 0))
			return hc_error(err, HC_EDATA, "%s:%zu:2: a price of %g; expected prices above 0", r->name,
					r->rows[k].line, p);
		r->rows[k].v = isnan(p) || isnan(prev) ? NAN : values == BENCHSERIES_PRICES_LOG ? log(p / prev)
			: p / prev - 1.0;
		prev = p;
	}
	return HC_OK;
}

static int align(struct breader *r, const int32_t *dates, size_t t, int values, struct benchseries *b,
		 struct hc_error *err)
{
	char d[16];
	size_t k = 0, s;

	for (s = 0; s < t; s++) {
		while (k < r->n && r->rows[k].date < dates[s]) {
			if (s > 0) {
				hc_universe_format_date(r->rows[k].date, d);
				return hc_error(err, HC_EDATA, "%s:%zu:1: date %s falls between two periods of the universe "
						"and is not one of them; expected the universe's own period dates inside its "
						"sample (another frequency, or dates shifted?)", r->name, r->rows[k].line, d);
			}
			k++;
		}
		hc_universe_format_date(dates[s], d);
		if (k == r->n || r->rows[k].date != dates[s])
			return hc_error(err, HC_EDATA, "%s: no row dated %s, a period of the universe; expected a value for "
					"every period of the sample", r->name, d);
		if (isnan(r->rows[k].v))
			return hc_error(err, HC_EDATA, "%s:%zu:2: no %s for %s, a period of the universe%s", r->name,
					r->rows[k].line, values == BENCHSERIES_RETURNS ? "value" : "return", d,
					values != BENCHSERIES_RETURNS && k == 0
					? " (a price on an earlier row is the base of its return)"
					: values != BENCHSERIES_RETURNS ? " (this price or the one before it is missing)" : "");
		if (fabs(r->rows[k].v) > HC_UNIVERSE_MAX_RETURN)
			return hc_error(err, HC_EDATA, "%s:%zu:2: a return of %g for %s; expected at most %g in size",
					r->name, r->rows[k].line, r->rows[k].v, d, HC_UNIVERSE_MAX_RETURN);
		b->r[s] = r->rows[k].v;
		k++;
	}
	return HC_OK;
}

static int load(struct benchseries **out, const char *name, const char *path, const char *data, size_t len,
		const int32_t *dates, size_t t, int values, int percent, struct hc_error *err)
{
	struct csvread_handler h;
	struct breader r;
	struct benchseries *b = NULL;
	int rc;

	*out = NULL;
	if (t < 1 || !dates)
		return hc_error(err, HC_EUSAGE, "%s: a benchmark series needs the universe's periods", name);
	if (values != BENCHSERIES_RETURNS && values != BENCHSERIES_PRICES && values != BENCHSERIES_PRICES_LOG)
		return hc_error(err, HC_EUSAGE, "%s: unknown kind of benchmark values %d", name, values);
	if (percent && values != BENCHSERIES_RETURNS)
		return hc_error(err, HC_EUSAGE, "%s: percents and prices exclude each other", name);
	memset(&r, 0, sizeof r);
	r.name = name;
	r.percent = percent;
	h.field = on_field;
	h.record = on_record;
	h.ctx = &r;
	rc = path ? hc_csvread_file(path, NULL, &h, NULL, err) : hc_csvread_buffer(name, data, len, NULL, &h, NULL, err);
	if (rc == HC_OK && r.n == 0)
		rc = hc_error(err, HC_EDATA, "%s: no data rows after the header", name);
	if (rc == HC_OK && values != BENCHSERIES_RETURNS)
		rc = to_returns(&r, values, err);
	if (rc == HC_OK) {
		b = hc_calloc(1, sizeof *b);
		if (!b || !(b->r = hc_mallocarray(t, sizeof *b->r)) || !(b->source = hc_strdup(name)))
			rc = hc_error(err, HC_ENOMEM, "%s: out of memory", name);
	}
	if (rc == HC_OK)
		rc = align(&r, dates, t, values, b, err);
	if (rc == HC_OK) {
		b->t = t;
		b->name = r.header;
		r.header = NULL;
		*out = b;
		b = NULL;
	}
	hc_benchseries_free(b);
	hc_free(r.header);
	hc_free(r.rows);
	return rc;
}

int hc_benchseries_load(struct benchseries **out, const char *path, const int32_t *dates, size_t t, int values,
			int percent, struct hc_error *err)
{
	return load(out, path, path, NULL, 0, dates, t, values, percent, err);
}

int hc_benchseries_load_buffer(struct benchseries **out, const char *name, const char *data, size_t len,
			       const int32_t *dates, size_t t, int values, int percent, struct hc_error *err)
{
	return load(out, name, NULL, data, len, dates, t, values, percent, err);
}

void hc_benchseries_free(struct benchseries *b)
{
	if (!b)
		return;
	hc_free(b->name);
	hc_free(b->source);
	hc_free(b->r);
	hc_free(b);
}
