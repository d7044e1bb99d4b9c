/*
 * holdings.c - funds' holdings from CSV, through csvread.
 *
 * Rows are streamed: the header fixes which column is which, each data row
 * is checked where it stands (so messages carry its line and column) and
 * appended to its fund.  Checks that need a whole fund (duplicate ids, all
 * weights zero, the weight sum) run once the file is read, and still name the
 * line of the offending row.
 */
#include "holdcount/holdings.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

enum { COL_FUND, COL_ID, COL_WEIGHT, COL_ISSUER, NCOLS };

struct row {
	size_t fund;
	char *id;
	char *issuer;
	double raw;
	size_t line;
};

struct reader {
	const char *name;
	const struct holdings_options *opt;
	struct holdings *h;
	size_t col[NCOLS];          /* 1-based; 0 = absent */
	size_t header_fields;
	const char *weight_name;    /* the column name matched for weights or values */
	/* the current record's cells */
	char *cell[NCOLS];
	size_t cell_line[NCOLS];
	/* all rows read */
	struct row *rows;
	size_t nrows, cap_rows;
	size_t cap_funds;
	size_t last_fund;           /* cache: rows of one fund are usually adjacent */
};

void hc_holdings_options_init(struct holdings_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->sum_tolerance = HOLDINGS_DEFAULT_SUM_TOLERANCE;
}

/* ASCII case-insensitive equality, after trimming blanks from s. */
static int name_is(const char *s, const char *name)
{
	size_t len = strlen(s), k;

	while (len && (s[len - 1] == ' ' || s[len - 1] == '\t'))
		len--;
	while (len && (*s == ' ' || *s == '\t')) {
		s++;
		len--;
	}
	if (len != strlen(name))
		return 0;
	for (k = 0; k < len; k++) {
		char a = s[k], b = name[k];
		if (a >= 'A' && a <= 'Z')
			a = (char)(a - 'A' + 'a');
		if (b >= 'A' && b <= 'Z')
			b = (char)(b - 'A' + 'a');
		if (a != b)
			return 0;
	}
	return 1;
}

static int header_field(struct reader *rd, const struct csvread_field *f,
			struct hc_error *err)
{
	const struct holdings_options *o = rd->opt;
	const char *fund = o->fund_column ? o->fund_column : "fund";
	const char *id = o->id_column ? o->id_column : "id";
	const char *issuer = o->issuer_column ? o->issuer_column : "issuer";

	if (!rd->col[COL_FUND] && name_is(f->text, fund))
		rd->col[COL_FUND] = f->column;
	else if (!rd->col[COL_ID] && name_is(f->text, id))
		rd->col[COL_ID] = f->column;
	else if (!rd->col[COL_ISSUER] && name_is(f->text, issuer))
		rd->col[COL_ISSUER] = f->column;
	else if (!rd->col[COL_WEIGHT]) {
		/* A named column is the only one accepted; with neither named,
		 * "weight" is preferred and "value" taken otherwise. */
		if (o->weight_column || o->value_column) {
			const char *want = o->weight_column ? o->weight_column : o->value_column;
			if (name_is(f->text, want)) {
				rd->col[COL_WEIGHT] = f->column;
				rd->weight_name = want;
				rd->h->kind = o->weight_column ? HOLDINGS_WEIGHTS : HOLDINGS_VALUES;
			}
		} else if (name_is(f->text, "weight")) {
			rd->col[COL_WEIGHT] = f->column;
			rd->weight_name = "weight";
			rd->h->kind = HOLDINGS_WEIGHTS;
		} else if (name_is(f->text, "value")) {
			/* keep looking: a later "weight" column wins */
			rd->col[COL_WEIGHT] = f->column;
			rd->weight_name = "value";
			rd->h->kind = HOLDINGS_VALUES;
		}
	} else if (!o->weight_column && !o->value_column &&
		   rd->h->kind == HOLDINGS_VALUES && name_is(f->text, "weight")) {
		rd->col[COL_WEIGHT] = f->column;
		rd->weight_name = "weight";
		rd->h->kind = HOLDINGS_WEIGHTS;
	}
	(void)err;
	return HC_OK;
}

static int header_done(struct reader *rd, size_t nfields, size_t line,
		       struct hc_error *err)
{
	const struct holdings_options *o = rd->opt;

	rd->header_fields = nfields;
	if (!rd->col[COL_FUND])
		return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header; expected fund,id,weight",
				rd->name, line, o->fund_column ? o->fund_column : "fund");
	if (!rd->col[COL_ID])
		return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header; expected fund,id,weight",
				rd->name, line, o->id_column ? o->id_column : "id");
	if (!rd->col[COL_WEIGHT]) {
		if (o->weight_column || o->value_column)
			return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header",
					rd->name, line, o->weight_column ? o->weight_column : o->value_column);
		return hc_error(err, HC_EDATA, "%s:%zu: no 'weight' or 'value' column in the header; expected fund,id,weight or fund,id,value",
				rd->name, line);
	}
	rd->h->has_issuer = rd->col[COL_ISSUER] != 0;
	rd->h->id_column = rd->col[COL_ID];
	rd->h->weight_column = rd->col[COL_WEIGHT];
	return HC_OK;
}

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct reader *rd = ctx;
	int k;

	if (f->record == 0)
		return header_field(rd, f, err);
	for (k = 0; k < NCOLS; k++) {
		if (rd->col[k] != f->column)
			continue;
		hc_free(rd->cell[k]);
		rd->cell[k] = hc_strndup(f->text, f->len);
		if (!rd->cell[k])
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		rd->cell_line[k] = f->line;
	}
	return HC_OK;
}

static void cells_clear(struct reader *rd)
{
	int k;

	for (k = 0; k < NCOLS; k++) {
		hc_free(rd->cell[k]);
		rd->cell[k] = NULL;
	}
}

/* Find or add fund name; *index is set whenever HC_OK is returned.  The
 * failure paths return HC_ENOMEM as a constant rather than hc_error's
 * result: hc_error lives in another unit, so the compiler cannot see that
 * it returns its code and would think the caller could get HC_OK with
 * *index unset (gcc -Wmaybe-uninitialized in on_record). */
static int fund_index(struct reader *rd, const char *name, size_t line,
		      size_t *index, struct hc_error *err)
{
	struct holdings *h = rd->h;
	size_t k;

	if (rd->last_fund < h->nfunds && strcmp(h->funds[rd->last_fund].name, name) == 0) {
		*index = rd->last_fund;
		return HC_OK;
	}
	for (k = 0; k < h->nfunds; k++)
		if (strcmp(h->funds[k].name, name) == 0) {
			*index = rd->last_fund = k;
			return HC_OK;
		}
	if (h->nfunds == rd->cap_funds) {
		size_t cap = rd->cap_funds ? 2 * rd->cap_funds : 8;
		struct holdings_fund *p = hc_reallocarray(h->funds, cap, sizeof *p);
		if (!p)
			goto nomem;
		h->funds = p;
		rd->cap_funds = cap;
	}
	memset(&h->funds[h->nfunds], 0, sizeof h->funds[0]);
	h->funds[h->nfunds].name = hc_strdup(name);
	if (!h->funds[h->nfunds].name)
		goto nomem;
	h->funds[h->nfunds].first_line = line;
	*index = rd->last_fund = h->nfunds++;
	return HC_OK;
nomem:
	hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
	return HC_ENOMEM;
}

static int blank(const char *s)
{
	for (; *s; s++)
		if (*s != ' ' && *s != '\t')
			return 0;
	return 1;
}

static int row_check(struct reader *rd, size_t nfields, size_t line,
		     double *raw, struct hc_error *err)
{
	const char *w = rd->cell[COL_WEIGHT];
	int percent = 0;

	if (nfields != rd->header_fields)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: found %zu fields, expected %zu as in the header",
				rd->name, line, nfields < rd->header_fields ? nfields + 1 : rd->header_fields + 1,
				nfields, rd->header_fields);
	if (!rd->cell[COL_FUND] || !rd->cell[COL_ID] || !w)
		return hc_error(err, HC_EINTERNAL, "%s:%zu: a cell of the row was not seen", rd->name, line);
	if (blank(rd->cell[COL_FUND]))
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: empty fund name, expected the fund the position belongs to",
				rd->name, rd->cell_line[COL_FUND], rd->col[COL_FUND]);
	if (blank(rd->cell[COL_ID]))
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: empty security id, expected an id",
				rd->name, rd->cell_line[COL_ID], rd->col[COL_ID]);
	if (rd->col[COL_ISSUER] && blank(rd->cell[COL_ISSUER]))
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: empty issuer, expected an issuer name (or leave out the issuer column)",
				rd->name, rd->cell_line[COL_ISSUER], rd->col[COL_ISSUER]);
	if (hc_csvread_parse_number(w, strlen(w), raw, &percent) != 0)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: found '%s', expected a number (%s)",
				rd->name, rd->cell_line[COL_WEIGHT], rd->col[COL_WEIGHT], w,
				rd->h->kind == HOLDINGS_VALUES ? "a market value" : "a weight such as 0.052 or 5.2%");
	if (*raw < 0 && !rd->opt->allow_short)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: found negative %s '%s', expected zero or more (short positions need --allow-short)",
				rd->name, rd->cell_line[COL_WEIGHT], rd->col[COL_WEIGHT],
				rd->weight_name, w);
	return HC_OK;
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line,
		     struct hc_error *err)
{
	struct reader *rd = ctx;
	struct row *r;
	double raw;
	size_t fund;
	int rc;

	if (record == 0)
		return header_done(rd, nfields, line, err);
	if ((rc = row_check(rd, nfields, line, &raw, err)) != HC_OK)
		return rc;
	if ((rc = fund_index(rd, rd->cell[COL_FUND], line, &fund, err)) != HC_OK)
		return rc;
	if (raw == 0) {
		rd->h->funds[fund].zero_rows++;
		cells_clear(rd);
		return HC_OK;
	}
	if (rd->nrows == rd->cap_rows) {
		size_t cap = rd->cap_rows ? 2 * rd->cap_rows : 64;
		struct row *p = hc_reallocarray(rd->rows, cap, sizeof *p);
		if (!p)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		rd->rows = p;
		rd->cap_rows = cap;
	}
	r = &rd->rows[rd->nrows++];
	r->fund = fund;
	r->raw = raw;
	r->line = line;
	r->id = rd->cell[COL_ID];
	rd->cell[COL_ID] = NULL;
	r->issuer = NULL;
	if (rd->col[COL_ISSUER]) {
		r->issuer = rd->cell[COL_ISSUER];
		rd->cell[COL_ISSUER] = NULL;
	}
	cells_clear(rd);
	return HC_OK;
}

/* A sort key for one row; qsort has no context argument in C11, so the key
 * carries what the comparison needs. */
struct row_key {
	size_t fund;
	const char *id;
	size_t line;
};

static int cmp_row_key(const void *a, const void *b)
{
	const struct row_key *x = a, *y = b;
	int c;

	if (x->fund != y->fund)
		return x->fund < y->fund ? -1 : 1;
	if ((c = strcmp(x->id, y->id)) != 0)
		return c;
	return x->line < y->line ? -1 : (x->line > y->line);
}

/* Duplicate ids within a fund: sort (fund, id, line) and compare neighbours.
 * Of all duplicates the one reported is the repeat on the smallest line,
 * where a reader of the file would look first. */
static int check_duplicates(struct reader *rd, struct hc_error *err)
{
	struct row_key *key;
	size_t k, best = (size_t)-1;

	if (rd->nrows < 2)
		return HC_OK;
	key = hc_calloc(rd->nrows, sizeof *key);
	if (!key)
		return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
	for (k = 0; k < rd->nrows; k++) {
		key[k].fund = rd->rows[k].fund;
		key[k].id = rd->rows[k].id;
		key[k].line = rd->rows[k].line;
	}
	qsort(key, rd->nrows, sizeof *key, cmp_row_key);
	for (k = 1; k < rd->nrows; k++)
		if (key[k - 1].fund == key[k].fund && strcmp(key[k - 1].id, key[k].id) == 0 &&
		    (best == (size_t)-1 || key[k].line < key[best].line))
			best = k;
	if (best != (size_t)-1)
		hc_error(err, HC_EDATA, "%s:%zu:%zu: duplicate id '%s' in fund '%s' (also at line %zu), expected each id once per fund",
			 rd->name, key[best].line, rd->col[COL_ID], key[best].id,
			 rd->h->funds[key[best].fund].name, key[best - 1].line);
	hc_free(key);
	return best == (size_t)-1 ? HC_OK : HC_EDATA;
}

static int add_warning(struct holdings *h, struct hc_error *err, const char *fmt, ...)
	__attribute__((format(printf, 3, 4)));

static int add_warning(struct holdings *h, struct hc_error *err, const char *fmt, ...)
{
	char buf[HC_ERROR_MESSAGE_MAX];
	char **p;
	va_list ap;

	va_start(ap, fmt);
	vsnprintf(buf, sizeof buf, fmt, ap);
	va_end(ap);
	p = hc_reallocarray(h->warnings, h->nwarnings + 1, sizeof *p);
	if (!p)
		return hc_error(err, HC_ENOMEM, "out of memory recording a warning");
	h->warnings = p;
	if (!(p[h->nwarnings] = hc_strdup(buf)))
		return hc_error(err, HC_ENOMEM, "out of memory recording a warning");
	h->nwarnings++;
	return HC_OK;
}

/* Move each row into its fund (file order kept) and normalise. */
static int build_funds(struct reader *rd, struct hc_error *err)
{
	struct holdings *h = rd->h;
	size_t k, f;
	int rc;

	for (k = 0; k < rd->nrows; k++)
		h->funds[rd->rows[k].fund].n++;
	for (f = 0; f < h->nfunds; f++) {
		struct holdings_fund *fd = &h->funds[f];
		if (fd->n == 0)
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: fund '%s' holds nothing: all its %zu weights are zero, expected at least one non-zero %s",
					rd->name, fd->first_line, rd->col[COL_WEIGHT], fd->name,
					fd->zero_rows, rd->weight_name);
	}
	for (f = 0; f < h->nfunds; f++) {
		struct holdings_fund *fd = &h->funds[f];
		fd->h = hc_calloc(fd->n, sizeof *fd->h);
		if (!fd->h)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		fd->n = 0;
	}
	for (k = 0; k < rd->nrows; k++) {
		struct row *r = &rd->rows[k];
		struct holdings_fund *fd = &h->funds[r->fund];
		struct holding *hd = &fd->h[fd->n++];
		hd->id = r->id;
		hd->issuer = r->issuer;
		hd->raw = r->raw;
		hd->line = r->line;
		r->id = r->issuer = NULL;
		fd->raw_sum += hd->raw;
	}
	for (f = 0; f < h->nfunds; f++) {
		struct holdings_fund *fd = &h->funds[f];
		if (!(fd->raw_sum > 0))
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: fund '%s' has a net %s of %.6g, expected a positive total",
					rd->name, fd->first_line, rd->col[COL_WEIGHT], fd->name,
					rd->weight_name, fd->raw_sum);
		for (k = 0; k < fd->n; k++) {
			struct holding *hd = &fd->h[k];
			hd->weight = hd->raw / fd->raw_sum;
			if (!hd->issuer && !(hd->issuer = hc_strdup(hd->id)))
				return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		}
		if (h->kind == HOLDINGS_WEIGHTS && fabs(fd->raw_sum - 1) > rd->opt->sum_tolerance) {
			rc = add_warning(h, err, "%s:%zu: fund '%s': weights sum to %.6g, not 1 (off by more than %g%%); normalised%s",
					 rd->name, fd->first_line, fd->name, fd->raw_sum, 100 * rd->opt->sum_tolerance,
					 fabs(fd->raw_sum - 100) <= 100 * rd->opt->sum_tolerance ? " (percents without a '%' sign?)" : "");
			if (rc != HC_OK)
				return rc;
		}
		if (fd->zero_rows) {
			rc = add_warning(h, err, "%s:%zu: fund '%s': %zu row%s with zero %s left out of the holdings",
					 rd->name, fd->first_line, fd->name, fd->zero_rows,
					 fd->zero_rows == 1 ? "" : "s", rd->weight_name);
			if (rc != HC_OK)
				return rc;
		}
	}
	return HC_OK;
}

static void reader_release(struct reader *rd)
{
	size_t k;

	cells_clear(rd);
	for (k = 0; k < rd->nrows; k++) {
		hc_free(rd->rows[k].id);
		hc_free(rd->rows[k].issuer);
	}
	hc_free(rd->rows);
}

/* Read the CSV at path, or (path NULL) the buffer data of len bytes named
 * name, with delimiter (0: detect) through handler h: the one reading step
 * of both loaders below. */
static int read_csv(const char *name, const char *path, const char *data, size_t len,
		    char delimiter, const struct csvread_handler *h, struct hc_error *err)
{
	struct csvread_options copt;

	hc_csvread_options_init(&copt);
	copt.delimiter = delimiter;
	if (path)
		return hc_csvread_file(path, &copt, h, NULL, err);
	return hc_csvread_buffer(name, data, len, &copt, h, NULL, err);
}

static int load(struct holdings **out, const char *name, const char *path,
		const char *data, size_t len, const struct holdings_options *opt,
		struct hc_error *err)
{
	struct holdings_options defaults;
	struct csvread_handler handler;
	struct reader rd;
	int rc;

	*out = NULL;
	if (!opt) {
		hc_holdings_options_init(&defaults);
		opt = &defaults;
	}
	if (opt->weight_column && opt->value_column)
		return hc_error(err, HC_EUSAGE, "both a weight column ('%s') and a value column ('%s') were named; name one",
				opt->weight_column, opt->value_column);
	memset(&rd, 0, sizeof rd);
	rd.name = name;
	rd.opt = opt;
	rd.weight_name = "weight";
	rd.h = hc_calloc(1, sizeof *rd.h);
	if (!rd.h || !(rd.h->source = hc_strdup(name))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory reading '%s'", name);
		goto cleanup;
	}
	handler.field = on_field;
	handler.record = on_record;
	handler.ctx = &rd;
	if ((rc = read_csv(name, path, data, len, opt->delimiter, &handler, err)) != HC_OK)
		goto cleanup;
	if (!rd.header_fields) {
		rc = hc_error(err, HC_EDATA, "%s: empty file, expected a header fund,id,weight and rows", name);
		goto cleanup;
	}
	if (rd.h->nfunds == 0) {
		rc = hc_error(err, HC_EDATA, "%s: no holdings after the header, expected rows of fund,id,%s",
			      name, rd.weight_name);
		goto cleanup;
	}
	if ((rc = check_duplicates(&rd, err)) != HC_OK)
		goto cleanup;
	if ((rc = build_funds(&rd, err)) != HC_OK)
		goto cleanup;
	*out = rd.h;
	rd.h = NULL;
cleanup:
	reader_release(&rd);
	hc_holdings_free(rd.h);
	return rc;
}

int hc_holdings_load(struct holdings **out, const char *path,
		  const struct holdings_options *opt, struct hc_error *err)
{
	return load(out, path, path, NULL, 0, opt, err);
}

int hc_holdings_load_buffer(struct holdings **out, const char *name,
			 const char *data, size_t len,
			 const struct holdings_options *opt, struct hc_error *err)
{
	return load(out, name, NULL, data, len, opt, err);
}

void hc_holdings_free(struct holdings *h)
{
	size_t f, k;

	if (!h)
		return;
	for (f = 0; f < h->nfunds; f++) {
		for (k = 0; h->funds[f].h && k < h->funds[f].n; k++) {
			hc_free(h->funds[f].h[k].id);
			hc_free(h->funds[f].h[k].issuer);
		}
		hc_free(h->funds[f].h);
		hc_free(h->funds[f].name);
	}
	hc_free(h->funds);
	for (k = 0; k < h->nwarnings; k++)
		hc_free(h->warnings[k]);
	hc_free(h->warnings);
	hc_free(h->source);
	hc_free(h);
}

/* ---- two-column label maps (id,label) ---- */

struct label_reader {
	const char *name;
	struct holdings_labels *l;
	size_t cap;
	size_t *lines;              /* line of each entry, for duplicate messages */
	char *cell[2];
	size_t line[2];
};

static int label_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct label_reader *lr = ctx;

	if (f->record == 0 || f->column > 2)
		return HC_OK;
	hc_free(lr->cell[f->column - 1]);
	lr->cell[f->column - 1] = hc_strndup(f->text, f->len);
	lr->line[f->column - 1] = f->line;
	if (!lr->cell[f->column - 1])
		return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", lr->name);
	return HC_OK;
}

static int label_record(void *ctx, size_t record, size_t nfields, size_t line,
			struct hc_error *err)
{
	struct label_reader *lr = ctx;
	struct holdings_labels *l = lr->l;
	size_t *lines;
	int k;

	if (nfields != 2)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: found %zu fields, expected 2 (id,label)",
				lr->name, line, nfields < 2 ? nfields + 1 : 3, nfields);
	if (record == 0)
		return HC_OK;
	for (k = 0; k < 2; k++)
		if (!lr->cell[k] || blank(lr->cell[k]))
			return hc_error(err, HC_EDATA, "%s:%zu:%d: empty %s, expected %s",
					lr->name, line, k + 1, k ? "label" : "id",
					k ? "a label for the id" : "a security id");
	if (l->n == lr->cap) {
		size_t cap = lr->cap ? 2 * lr->cap : 64;
		char **a = hc_reallocarray(l->ids, cap, sizeof *a);
		if (!a)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", lr->name);
		l->ids = a;
		a = hc_reallocarray(l->labels, cap, sizeof *a);
		if (!a)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", lr->name);
		l->labels = a;
		lines = hc_reallocarray(lr->lines, cap, sizeof *lines);
		if (!lines)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", lr->name);
		lr->lines = lines;
		lr->cap = cap;
	}
	l->ids[l->n] = lr->cell[0];
	l->labels[l->n] = lr->cell[1];
	lr->lines[l->n] = line;
	l->n++;
	lr->cell[0] = lr->cell[1] = NULL;
	return HC_OK;
}

struct label_key {
	char *id;
	char *label;
	size_t line;
};

static int cmp_label_key(const void *a, const void *b)
{
	const struct label_key *x = a, *y = b;
	int c = strcmp(x->id, y->id);
	return c ? c : (x->line < y->line ? -1 : (x->line > y->line));
}

/* Sort the entries by id (both arrays together) and refuse duplicates. */
static int labels_sort(struct label_reader *lr, struct hc_error *err)
{
	struct holdings_labels *l = lr->l;
	struct label_key *key;
	size_t k;
	int rc = HC_OK;

	key = hc_calloc(l->n, sizeof *key);
	if (!key)
		return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", lr->name);
	for (k = 0; k < l->n; k++) {
		key[k].id = l->ids[k];
		key[k].label = l->labels[k];
		key[k].line = lr->lines[k];
	}
	qsort(key, l->n, sizeof *key, cmp_label_key);
	for (k = 0; k < l->n; k++) {
		l->ids[k] = key[k].id;
		l->labels[k] = key[k].label;
		if (k && rc == HC_OK && strcmp(key[k - 1].id, key[k].id) == 0)
			rc = hc_error(err, HC_EDATA, "%s:%zu:1: duplicate id '%s' (also at line %zu), expected each id once",
				      lr->name, key[k].line, key[k].id, key[k - 1].line);
	}
	hc_free(key);
	return rc;
}

static int labels_load(struct holdings_labels **out, const char *name,
		       const char *path, const char *data, size_t len,
		       char delimiter, struct hc_error *err)
{
	struct csvread_handler handler;
	struct label_reader lr;
	int rc;

	*out = NULL;
	memset(&lr, 0, sizeof lr);
	lr.name = name;
	lr.l = hc_calloc(1, sizeof *lr.l);
	if (!lr.l || !(lr.l->source = hc_strdup(name))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory reading '%s'", name);
		goto cleanup;
	}
	handler.field = label_field;
	handler.record = label_record;
	handler.ctx = &lr;
	if ((rc = read_csv(name, path, data, len, delimiter, &handler, err)) != HC_OK)
		goto cleanup;
	if (lr.l->n == 0) {
		rc = hc_error(err, HC_EDATA, "%s: no rows after the header, expected id,label rows", name);
		goto cleanup;
	}
	if ((rc = labels_sort(&lr, err)) != HC_OK)
		goto cleanup;
	*out = lr.l;
	lr.l = NULL;
cleanup:
	hc_free(lr.cell[0]);
	hc_free(lr.cell[1]);
	hc_free(lr.lines);
	hc_holdings_labels_free(lr.l);
	return rc;
}

int hc_holdings_labels_load(struct holdings_labels **out, const char *path,
			 char delimiter, struct hc_error *err)
{
	return labels_load(out, path, path, NULL, 0, delimiter, err);
}

int hc_holdings_labels_load_buffer(struct holdings_labels **out, const char *name,
				const char *data, size_t len, char delimiter,
				struct hc_error *err)
{
	return labels_load(out, name, NULL, data, len, delimiter, err);
}

void hc_holdings_labels_free(struct holdings_labels *l)
{
	size_t k;

	if (!l)
		return;
	for (k = 0; k < l->n; k++) {
		hc_free(l->ids[k]);
		hc_free(l->labels[k]);
	}
	hc_free(l->ids);
	hc_free(l->labels);
	hc_free(l->source);
	hc_free(l);
}

const char *hc_holdings_labels_find(const struct holdings_labels *l, const char *id)
{
	size_t lo = 0, hi;

	if (!l)
		return NULL;
	hi = l->n;
	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;
		int c = strcmp(l->ids[mid], id);
		if (c == 0)
			return l->labels[mid];
		if (c < 0)
			lo = mid + 1;
		else
			hi = mid;
	}
	return NULL;
}
