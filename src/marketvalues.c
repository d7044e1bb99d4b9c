/*
 * marketvalues.c - market values by security id from a CSV
 * (marketvalues.h, docs/formats.md).  The rows are read whole, sorted by
 * id once (a repeated id is then a neighbour), and each of the universe's
 * ids is found by binary search.
 */
#include "holdcount/marketvalues.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

#define NO_COLUMN ((size_t)-1)

struct mvrow {
	char *id;
	double v;
	size_t line;
};

struct mvreader {
	const char *name;
	size_t id_col, v_col;
	struct mvrow *rows;
	size_t n, cap;
	struct mvrow cur;
	int have_v;
};

static int on_header(struct mvreader *r, const struct csvread_field *f, struct hc_error *err)
{
	if (hc_csvread_header_is(f->text, f->len, "id")) {
		if (r->id_col != NO_COLUMN)
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: a second 'id' column", r->name, f->line, f->column);
		r->id_col = f->column;
	} else if (hc_csvread_header_is(f->text, f->len, "market_value")) {
		if (r->v_col != NO_COLUMN)
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: a second 'market_value' column", r->name, f->line,
					f->column);
		r->v_col = f->column;
	}
	return HC_OK;
}

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct mvreader *r = ctx;
	char q[CSVREAD_QUOTE_BUF];
	int pct = 0;

	if (f->record == 0)
		return on_header(r, f, err);
	if (f->column == r->id_col) {
		if (f->len == 0)
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: an empty id", r->name, f->line, f->column);
		if (!(r->cur.id = hc_strndup(f->text, f->len)))
			return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
		r->cur.line = f->line;
	} else if (f->column == r->v_col) {
		if (hc_csvread_parse_number(f->text, f->len, &r->cur.v, &pct) || pct || !(r->cur.v > 0) ||
		    !isfinite(r->cur.v))
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: expected a market value above 0, found '%s'", r->name,
					f->line, f->column, hc_csvread_quote(f->text, f->len, q));
		r->have_v = 1;
	}
	return HC_OK;
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line, struct hc_error *err)
{
	struct mvreader *r = ctx;
	struct mvrow *nr;

	(void)nfields;
	if (record == 0) {
		if (r->id_col == NO_COLUMN || r->v_col == NO_COLUMN)
			return hc_error(err, HC_EDATA, "%s:%zu: the header has no '%s' column; expected 'id' and "
					"'market_value'", r->name, line, r->id_col == NO_COLUMN ? "id" : "market_value");
		return HC_OK;
	}
	if (!r->cur.id || !r->have_v) {
		const char *what = !r->cur.id ? "id" : "market value";

		hc_free(r->cur.id);
		r->cur.id = NULL;
		return hc_error(err, HC_EDATA, "%s:%zu: no %s on this row; expected an id and a market value", r->name,
				line, what);
	}
	if (!(nr = hc_grow(r->rows, &r->cap, r->n, sizeof *nr, 256))) {
		hc_free(r->cur.id);
		r->cur.id = NULL;
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	}
	r->rows = nr;
	r->rows[r->n++] = r->cur;
	memset(&r->cur, 0, sizeof r->cur);
	r->have_v = 0;
	return HC_OK;
}

static int row_cmp(const void *a, const void *b)
{
	const struct mvrow *x = a, *y = b;
	int c = strcmp(x->id, y->id);

	return c ? c : (x->line > y->line) - (x->line < y->line);
}

static int match(struct mvreader *r, char *const *ids, size_t m, double *v, struct hc_error *err)
{
	size_t i;

	qsort(r->rows, r->n, sizeof *r->rows, row_cmp);
	for (i = 1; i < r->n; i++)
		if (!strcmp(r->rows[i].id, r->rows[i - 1].id))
			return hc_error(err, HC_EDATA, "%s:%zu: id '%s' again (first on line %zu); expected one market "
					"value per security", r->name, r->rows[i].line, r->rows[i].id, r->rows[i - 1].line);
	for (i = 0; i < m; i++) {
		size_t lo = 0, hi = r->n;

		while (lo < hi) {
			size_t mid = lo + (hi - lo) / 2;

			if (strcmp(r->rows[mid].id, ids[i]) < 0)
				lo = mid + 1;
			else
				hi = mid;
		}
		if (lo == r->n || strcmp(r->rows[lo].id, ids[i]))
			return hc_error(err, HC_EDATA, "%s: no market value for '%s', a security of the universe", r->name,
					ids[i]);
		v[i] = r->rows[lo].v;
	}
	return HC_OK;
}

static int load(double **out, const char *name, const char *path, const char *data, size_t len, char *const *ids,
		size_t m, struct hc_error *err)
{
	struct csvread_handler h;
	struct mvreader r;
	double *v = NULL;
	size_t i;
	int rc;

	*out = NULL;
	memset(&r, 0, sizeof r);
	r.name = name;
	r.id_col = r.v_col = NO_COLUMN;
	h.field = on_field;
	h.record = on_record;
	h.ctx = &r;
	rc = path ? hc_csvread_file(path, NULL, &h, NULL, err) : hc_csvread_buffer(name, data, len, NULL, &h, NULL, err);
	if (rc == HC_OK && !(v = hc_mallocarray(m ? m : 1, sizeof *v)))
		rc = hc_error(err, HC_ENOMEM, "%s: out of memory", name);
	if (rc == HC_OK)
		rc = match(&r, ids, m, v, err);
	if (rc == HC_OK) {
		*out = v;
		v = NULL;
	}
	hc_free(v);
	hc_free(r.cur.id);
	for (i = 0; i < r.n; i++)
		hc_free(r.rows[i].id);
	hc_free(r.rows);
	return rc;
}

int hc_marketvalues_load(double **out, const char *path, char *const *ids, size_t m, struct hc_error *err)
{
	return load(out, path, path, NULL, 0, ids, m, err);
}

int hc_marketvalues_load_buffer(double **out, const char *name, const char *data, size_t len, char *const *ids,
				size_t m, struct hc_error *err)
{
	return load(out, name, NULL, data, len, ids, m, err);
}
