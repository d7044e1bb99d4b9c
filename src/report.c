/*
 * report.c - the result model and its three writers (text, CSV, JSON).
 *
 * One struct report flows from each computation to every writer, so the
 * table a person reads, the CSV a script parses and the JSON a dashboard
 * loads cannot disagree.  Numbers in CSV and JSON are printed by one routine
 * (format_real_raw) with 17 significant digits, which is enough for any IEEE
 * double to read back bit for bit (IEEE 754-2008, section 5.12.2).  JSON
 * numbers are emitted as raw cJSON items for that reason: cJSON 1.7 would
 * otherwise print 15 digits when they happen to round-trip and 17 when they
 * do not, so the same value could look different in the CSV and the JSON.
 * Values that are not finite have no JSON spelling; they are stored as "no
 * value" in the first place (REPORT_NONE).
 */
#include "holdcount/report.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

#define REPORT_NUMBER_MAX 64
#define REPORT_TEXT_WIDTH 79  /* notes wrap to fit an 80-column terminal */

struct report *hc_report_alloc(void)
{
	return hc_calloc(1, sizeof(struct report));
}

static void value_release(struct report_value *v)
{
	hc_free(v->text);
	v->text = NULL;
	v->kind = REPORT_NONE;
}

static void table_free(struct report_table *t)
{
	size_t i;

	if (!t)
		return;
	for (i = 0; i < t->ncols; i++) {
		hc_free(t->cols[i].key);
		hc_free(t->cols[i].title);
	}
	for (i = 0; i < t->nrows * t->ncols; i++)
		value_release(&t->cells[i]);
	hc_free(t->cols);
	hc_free(t->cells);
	hc_free(t->key);
	hc_free(t->title);
	hc_free(t);
}

void hc_report_free(struct report *r)
{
	size_t i;

	if (!r)
		return;
	for (i = 0; i < r->nfields; i++) {
		hc_free(r->fields[i].key);
		hc_free(r->fields[i].title);
		value_release(&r->fields[i].value);
	}
	hc_free(r->fields);
	for (i = 0; i < r->ntables; i++)
		table_free(r->tables[i]);
	hc_free(r->tables);
	for (i = 0; i < r->nnotes; i++)
		hc_free(r->notes[i]);
	hc_free(r->notes);
	hc_free(r);
}

/* Append an empty field with copies of key and title; NULL on failure. */
static struct report_field *add_field(struct report *r, const char *key, const char *title)
{
	struct report_field *f;
	char *k, *t;

	struct report_field *nf = hc_grow(r->fields, &r->cap_fields, r->nfields, sizeof *nf, 16);

	if (!nf)
		return NULL;
	r->fields = nf;
	k = hc_strdup(key);
	t = hc_strdup(title ? title : key);
	if (!k || !t) {
		hc_free(k);
		hc_free(t);
		return NULL;
	}
	f = &r->fields[r->nfields++];
	memset(f, 0, sizeof *f);
	f->key = k;
	f->title = t;
	return f;
}

int hc_report_add_real(struct report *r, const char *key, const char *title, double x, int style)
{
	struct report_field *f = add_field(r, key, title);

	if (!f)
		return HC_ENOMEM;
	f->value.style = style;
	if (isfinite(x)) {
		f->value.kind = REPORT_REAL;
		f->value.real = x;
	}
	return HC_OK;
}

int hc_report_add_int(struct report *r, const char *key, const char *title, long long x)
{
	struct report_field *f = add_field(r, key, title);

	if (!f)
		return HC_ENOMEM;
	f->value.kind = REPORT_INT;
	f->value.integer = x;
	return HC_OK;
}

int hc_report_add_text(struct report *r, const char *key, const char *title, const char *s)
{
	struct report_field *f;
	char *copy = hc_strdup(s ? s : "");

	if (!copy)
		return HC_ENOMEM;
	f = add_field(r, key, title);
	if (!f) {
		hc_free(copy);
		return HC_ENOMEM;
	}
	f->value.kind = REPORT_TEXT;
	f->value.text = copy;
	return HC_OK;
}

int hc_report_add_bool(struct report *r, const char *key, const char *title, int b)
{
	struct report_field *f = add_field(r, key, title);

	if (!f)
		return HC_ENOMEM;
	f->value.kind = REPORT_BOOL;
	f->value.integer = b != 0;
	return HC_OK;
}

int hc_report_add_none(struct report *r, const char *key, const char *title)
{
	return add_field(r, key, title) ? HC_OK : HC_ENOMEM;
}

int hc_report_add_note(struct report *r, const char *note)
{
	char **nn;
	char *copy = hc_strdup(note);

	if (!copy)
		return HC_ENOMEM;
	nn = hc_reallocarray(r->notes, r->nnotes + 1, sizeof *nn);
	if (!nn) {
		hc_free(copy);
		return HC_ENOMEM;
	}
	r->notes = nn;
	r->notes[r->nnotes++] = copy;
	return HC_OK;
}

struct report_table *hc_report_add_table(struct report *r, const char *key, const char *title)
{
	struct report_table **nt;
	struct report_table *t = hc_calloc(1, sizeof *t);

	if (!t)
		return NULL;
	t->key = hc_strdup(key);
	t->title = title ? hc_strdup(title) : NULL;
	if (!t->key || (title && !t->title))
		goto fail;
	nt = hc_reallocarray(r->tables, r->ntables + 1, sizeof *nt);
	if (!nt)
		goto fail;
	r->tables = nt;
	r->tables[r->ntables++] = t;
	return t;
fail:
	table_free(t);
	return NULL;
}

static int column_index(const struct report_table *t, const char *key, size_t *col)
{
	size_t i;

	for (i = 0; i < t->ncols; i++)
		if (strcmp(t->cols[i].key, key) == 0) {
			*col = i;
			return 1;
		}
	return 0;
}

int hc_report_table_nest(struct report_table *parent, const char *column, const struct report_table *child,
			 const char *join)
{
	size_t c, j, cj;

	if (!column_index(parent, column, &c) || !column_index(parent, join, &j) || !column_index(child, join, &cj))
		return HC_EINTERNAL;
	parent->nest = child;
	parent->nest_col = c;
	parent->nest_join = j;
	parent->nest_child_join = cj;
	return HC_OK;
}

/* A column added after rows exist widens every row with an empty cell, so
 * that a caller can append its own column (say, the scale) to a table
 * another module filled.  Cells stay row-major: the rows are re-laid. */
static int widen_rows(struct report_table *t)
{
	struct report_value *nv;
	size_t cells, row, col;

	if (hc_mul_size(t->cap_rows, t->ncols + 1, &cells))
		return HC_ENOMEM;
	nv = hc_calloc(cells, sizeof *nv);
	if (!nv)
		return HC_ENOMEM;
	for (row = 0; row < t->nrows; row++)
		for (col = 0; col < t->ncols; col++)
			nv[row * (t->ncols + 1) + col] = t->cells[row * t->ncols + col];
	hc_free(t->cells);
	t->cells = nv;
	return HC_OK;
}

int hc_report_table_add_column(struct report_table *t, const char *key, const char *title, int style)
{
	struct report_column *nc;
	char *k, *ti;
	size_t row;

	k = hc_strdup(key);
	ti = hc_strdup(title ? title : key);
	nc = (k && ti) ? hc_reallocarray(t->cols, t->ncols + 1, sizeof *nc) : NULL;
	if (!nc || (t->nrows > 0 && widen_rows(t))) {
		if (nc)
			t->cols = nc;
		hc_free(k);
		hc_free(ti);
		return HC_ENOMEM;
	}
	t->cols = nc;
	t->cols[t->ncols].key = k;
	t->cols[t->ncols].title = ti;
	t->cols[t->ncols].style = style;
	for (row = 0; row < t->nrows; row++) {
		struct report_value *v = &t->cells[row * (t->ncols + 1) + t->ncols];
		memset(v, 0, sizeof *v);
		v->style = style;
	}
	t->ncols++;
	return HC_OK;
}

int hc_report_table_add_row(struct report_table *t)
{
	size_t i;

	if (t->nrows == t->cap_rows) {
		size_t cap, cells;
		struct report_value *nv;

		if (hc_grow_capacity(t->cap_rows, t->nrows + 1, 16, &cap) || hc_mul_size(cap, t->ncols ? t->ncols : 1, &cells))
			return HC_ENOMEM;
		nv = hc_reallocarray(t->cells, cells, sizeof *nv);
		if (!nv)
			return HC_ENOMEM;
		t->cells = nv;
		t->cap_rows = cap;
	}
	for (i = 0; i < t->ncols; i++) {
		struct report_value *v = &t->cells[t->nrows * t->ncols + i];
		memset(v, 0, sizeof *v);
		v->style = t->cols[i].style;
	}
	t->nrows++;
	return HC_OK;
}

static struct report_value *cell(struct report_table *t, size_t row, size_t col)
{
	struct report_value *v = &t->cells[row * t->ncols + col];

	value_release(v);
	return v;
}

void hc_report_table_set_real(struct report_table *t, size_t row, size_t col, double x)
{
	struct report_value *v = cell(t, row, col);

	if (isfinite(x)) {
		v->kind = REPORT_REAL;
		v->real = x;
	}
}

void hc_report_table_set_int(struct report_table *t, size_t row, size_t col, long long x)
{
	struct report_value *v = cell(t, row, col);

	v->kind = REPORT_INT;
	v->integer = x;
}

int hc_report_table_set_text(struct report_table *t, size_t row, size_t col, const char *s)
{
	char *copy = hc_strdup(s ? s : "");
	struct report_value *v;

	if (!copy)
		return HC_ENOMEM;
	v = cell(t, row, col);
	v->kind = REPORT_TEXT;
	v->text = copy;
	return HC_OK;
}

int hc_report_table_set_none(struct report_table *t, size_t row, size_t col, const char *reason)
{
	char *copy = hc_strdup(reason ? reason : "");
	struct report_value *v;

	if (!copy)
		return HC_ENOMEM;
	v = cell(t, row, col);
	v->text = copy;     /* kind stays REPORT_NONE */
	return HC_OK;
}

void hc_report_table_set_bool(struct report_table *t, size_t row, size_t col, int b)
{
	struct report_value *v = cell(t, row, col);

	v->kind = REPORT_BOOL;
	v->integer = b != 0;
}

/* ---- formatting ---------------------------------------------------------- */

/* 17 significant digits: every double reads back exactly.  Integral values
 * below 2^53 are printed as integers, which is the same number, shorter. */
static void format_real_raw(char *buf, size_t size, double x)
{
	if (x == 0.0)
		x = 0.0; /* no "-0" */
	if (x == floor(x) && fabs(x) < 9007199254740992.0)
		snprintf(buf, size, "%.0f", x);
	else
		snprintf(buf, size, "%.17g", x);
}

/* The raw form of a value for CSV (text unquoted; caller quotes). */
static const char *format_raw(char *buf, size_t size, const struct report_value *v)
{
	switch (v->kind) {
	case REPORT_REAL:
		format_real_raw(buf, size, v->real);
		return buf;
	case REPORT_INT:
		snprintf(buf, size, "%lld", v->integer);
		return buf;
	case REPORT_TEXT:
		return v->text;
	case REPORT_BOOL:
		return v->integer ? "true" : "false";
	default:
		return v->text ? v->text : "";   /* no value, or its reason */
	}
}

/* The reading form of a value for the text writer. */
static const char *format_text(char *buf, size_t size, const struct report_value *v)
{
	switch (v->kind) {
	case REPORT_REAL:
		switch (v->style) {
		case REPORT_STYLE_PERCENT:
			snprintf(buf, size, "%.2f%%", 100.0 * v->real);
			break;
		case REPORT_STYLE_FIXED2:
			snprintf(buf, size, "%.2f", v->real);
			break;
		case REPORT_STYLE_FIXED4:
			snprintf(buf, size, "%.4f", v->real);
			break;
		case REPORT_STYLE_SCI:
			snprintf(buf, size, "%.4e", v->real);
			break;
		default:
			snprintf(buf, size, "%.6g", v->real);
			break;
		}
		/* "-0.00%" reads as a sign error; a value that rounds to zero is zero. */
		if (buf[0] == '-' && strspn(buf + 1, "0.%e+-") == strlen(buf + 1))
			memmove(buf, buf + 1, strlen(buf));
		return buf;
	case REPORT_INT:
		snprintf(buf, size, "%lld", v->integer);
		return buf;
	case REPORT_TEXT:
		return v->text;
	case REPORT_BOOL:
		return v->integer ? "yes" : "no";
	default:
		return v->text ? v->text : "-";
	}
}

const char *hc_report_value_text(char *buf, size_t size, const struct report_value *v)
{
	return format_text(buf, size, v);
}

static int write_failed(struct hc_error *err)
{
	return hc_error(err, HC_EIO, "cannot write output: %s", strerror(errno ? errno : EIO));
}

/* ---- text ---------------------------------------------------------------- */

/* Display width in characters: UTF-8 continuation bytes take no column. */
static size_t text_width(const char *s)
{
	size_t w = 0;

	for (; *s; s++)
		if (((unsigned char)*s & 0xC0) != 0x80)
			w++;
	return w;
}

static void put_padded(FILE *fp, const char *s, size_t width, int right)
{
	size_t w = text_width(s);

	if (right)
		for (; w < width; w++)
			fputc(' ', fp);
	fputs(s, fp);
	if (!right)
		for (; w < width; w++)
			fputc(' ', fp);
}

static void write_text_fields(FILE *fp, const struct report *r)
{
	char buf[REPORT_NUMBER_MAX];
	size_t i, width = 0;

	for (i = 0; i < r->nfields; i++)
		if (text_width(r->fields[i].title) > width)
			width = text_width(r->fields[i].title);
	for (i = 0; i < r->nfields; i++) {
		fputs(r->fields[i].title, fp);
		fputc(':', fp);
		put_padded(fp, "", width - text_width(r->fields[i].title) + 1, 0);
		fputs(format_text(buf, sizeof buf, &r->fields[i].value), fp);
		fputc('\n', fp);
	}
}

/* A column is right-aligned (numbers) unless any of its cells is text. */
static int column_is_numeric(const struct report_table *t, size_t col)
{
	size_t row;

	for (row = 0; row < t->nrows; row++)
		if (t->cells[row * t->ncols + col].kind == REPORT_TEXT ||
		    t->cells[row * t->ncols + col].text)   /* a reason for no value */
			return 0;
	return 1;
}

/* A column with no value in any row (say, the sampled columns of a curve
 * that was not sampled) says nothing to a reader: the text view leaves it
 * out.  CSV and JSON keep every column, since scripts rely on the set. */
static int column_is_empty(const struct report_table *t, size_t col)
{
	size_t row;

	for (row = 0; row < t->nrows; row++)
		if (t->cells[row * t->ncols + col].kind != REPORT_NONE ||
		    t->cells[row * t->ncols + col].text)
			return 0;
	return t->nrows > 0;
}

static void put_text_row(FILE *fp, const struct report_table *t, const size_t *width, const int *right,
			 const int *shown, size_t row)
{
	char buf[REPORT_NUMBER_MAX];
	size_t col, last = 0;
	int first = 1;

	for (col = 0; col < t->ncols; col++)
		if (shown[col])
			last = col;
	for (col = 0; col < t->ncols; col++) {
		const char *s;

		if (!shown[col])
			continue;
		s = row == (size_t)-1 ? t->cols[col].title
			: format_text(buf, sizeof buf, &t->cells[row * t->ncols + col]);
		if (!first)
			fputs("  ", fp);
		first = 0;
		/* No trailing blanks: the last column is not padded on the right. */
		put_padded(fp, s, col < last || right[col] ? width[col] : 0, right[col]);
	}
	fputc('\n', fp);
}

static int write_text_table(FILE *fp, const struct report_table *t)
{
	char buf[REPORT_NUMBER_MAX];
	size_t *width, n = t->ncols ? t->ncols : 1;
	int *right, *shown;
	size_t row, col;

	width = hc_calloc(n, sizeof *width);
	right = hc_calloc(n, sizeof *right);
	shown = hc_calloc(n, sizeof *shown);
	if (!width || !right || !shown) {
		hc_free(width);
		hc_free(right);
		hc_free(shown);
		return HC_ENOMEM;
	}
	for (col = 0; col < t->ncols; col++) {
		width[col] = text_width(t->cols[col].title);
		right[col] = column_is_numeric(t, col);
		shown[col] = !column_is_empty(t, col);
		for (row = 0; row < t->nrows; row++) {
			size_t w = text_width(format_text(buf, sizeof buf, &t->cells[row * t->ncols + col]));
			if (w > width[col])
				width[col] = w;
		}
	}
	if (t->title)
		fprintf(fp, "%s\n", t->title);
	put_text_row(fp, t, width, right, shown, (size_t)-1);
	for (row = 0; row < t->nrows; row++)
		put_text_row(fp, t, width, right, shown, row);
	hc_free(width);
	hc_free(right);
	hc_free(shown);
	return HC_OK;
}

/* "- note", wrapped at REPORT_TEXT_WIDTH with continuation lines indented
 * under the text; a word longer than a line is left whole. */
void hc_report_wrap(FILE *fp, const char *text, size_t col, size_t indent, size_t width)
{
	const char *p = text;

	while (*p) {
		size_t word = strcspn(p, " ");
		if (col > indent && col + 1 + word > width) {
			fprintf(fp, "\n%*s", (int)indent, "");
			col = indent;
		} else if (col > indent) {
			fputc(' ', fp);
			col++;
		}
		fwrite(p, 1, word, fp);
		col += word;
		p += word;
		while (*p == ' ')
			p++;
	}
	fputc('\n', fp);
}

static void put_wrapped_note(FILE *fp, const char *note)
{
	fputs("- ", fp);
	hc_report_wrap(fp, note, 2, 2, REPORT_TEXT_WIDTH);
}

static int write_text(FILE *fp, const struct report *r, struct hc_error *err)
{
	size_t i;
	int rc;

	errno = 0;
	write_text_fields(fp, r);
	for (i = 0; i < r->ntables; i++) {
		if (r->nfields || i)
			fputc('\n', fp);
		rc = write_text_table(fp, r->tables[i]);
		if (rc)
			return hc_error(err, rc, "out of memory writing a table");
	}
	if (r->nnotes) {
		fputs("\ncautions:\n", fp);
		for (i = 0; i < r->nnotes; i++)
			put_wrapped_note(fp, r->notes[i]);
	}
	return ferror(fp) ? write_failed(err) : HC_OK;
}

/* ---- CSV ----------------------------------------------------------------- */

/* RFC 4180: quote a field holding the delimiter, a quote or a line break,
 * doubling the quotes inside. */
static void put_csv(FILE *fp, const char *s)
{
	if (!s[strcspn(s, ",\"\r\n")]) {
		fputs(s, fp);
		return;
	}
	fputc('"', fp);
	for (; *s; s++) {
		if (*s == '"')
			fputc('"', fp);
		fputc(*s, fp);
	}
	fputc('"', fp);
}

static void csv_fields(FILE *fp, const struct report *r)
{
	char buf[REPORT_NUMBER_MAX];
	size_t i;

	fputs("key,value\n", fp);
	for (i = 0; i < r->nfields; i++) {
		put_csv(fp, r->fields[i].key);
		fputc(',', fp);
		put_csv(fp, format_raw(buf, sizeof buf, &r->fields[i].value));
		fputc('\n', fp);
	}
}

static void csv_table(FILE *fp, const struct report_table *t)
{
	char buf[REPORT_NUMBER_MAX];
	size_t row, col;

	for (col = 0; col < t->ncols; col++) {
		if (col)
			fputc(',', fp);
		put_csv(fp, t->cols[col].key);
	}
	fputc('\n', fp);
	for (row = 0; row < t->nrows; row++) {
		for (col = 0; col < t->ncols; col++) {
			if (col)
				fputc(',', fp);
			put_csv(fp, format_raw(buf, sizeof buf, &t->cells[row * t->ncols + col]));
		}
		fputc('\n', fp);
	}
}

static int write_csv(FILE *fp, const struct report *r, struct hc_error *err)
{
	errno = 0;
	if (r->ntables == 0)
		csv_fields(fp, r);
	else
		csv_table(fp, r->tables[0]);
	return ferror(fp) ? write_failed(err) : HC_OK;
}

const struct report_table *hc_report_find_table(const struct report *r, const char *key)
{
	size_t i;

	for (i = 0; r && key && i < r->ntables; i++)
		if (strcmp(r->tables[i]->key, key) == 0)
			return r->tables[i];
	return NULL;
}

int hc_report_write_csv_part(FILE *fp, const struct report *r, const char *table, struct hc_error *err)
{
	const struct report_table *t = NULL;

	if (table && !(t = hc_report_find_table(r, table)))
		return hc_error(err, HC_EUSAGE, "the output has no table '%s'", table);
	errno = 0;
	if (t)
		csv_table(fp, t);
	else
		csv_fields(fp, r);
	return ferror(fp) ? write_failed(err) : HC_OK;
}

/* ---- JSON ---------------------------------------------------------------- */

static void *json_malloc(size_t size)
{
	return hc_malloc(size);
}

static void json_free(void *p)
{
	hc_free(p);
}

/* A JSON string of text, always valid UTF-8: text from the inputs is
 * checked where it is read, but some (a file name, say) reaches the report
 * as the system gave it; each byte that does not start a valid UTF-8
 * sequence is written as U+FFFD, the replacement character, so no output
 * is invalid JSON. */
static cJSON *json_string(const char *text)
{
	static const char replacement[] = "\xEF\xBF\xBD";
	size_t len = strlen(text), i = 0, o = 0;
	cJSON *item;
	char *buf;

	if (hc_csvread_utf8_valid(text, len))
		return cJSON_CreateString(text);
	if (!(buf = hc_mallocarray(len + 1, 3)))
		return NULL;
	while (i < len) {
		unsigned char c = (unsigned char)text[i];
		size_t n = c < 0x80 ? 1 : c >= 0xC2 && c <= 0xDF ? 2 : c >= 0xE0 && c <= 0xEF ? 3
			 : c >= 0xF0 && c <= 0xF4 ? 4 : 0;
		if (n && n <= len - i && hc_csvread_utf8_valid(text + i, n)) {
			memcpy(buf + o, text + i, n);
			o += n;
			i += n;
		} else {
			memcpy(buf + o, replacement, 3);
			o += 3;
			i++;
		}
	}
	buf[o] = '\0';
	item = cJSON_CreateString(buf);
	hc_free(buf);
	return item;
}

static cJSON *json_value(const struct report_value *v)
{
	char buf[REPORT_NUMBER_MAX];

	switch (v->kind) {
	case REPORT_REAL:
		format_real_raw(buf, sizeof buf, v->real);
		return cJSON_CreateRaw(buf);
	case REPORT_INT:
		snprintf(buf, sizeof buf, "%lld", v->integer);
		return cJSON_CreateRaw(buf);
	case REPORT_TEXT:
		return json_string(v->text);
	case REPORT_BOOL:
		return cJSON_CreateBool(v->integer != 0);
	default:
		return cJSON_CreateNull();
	}
}

/* Add item under key; on failure item is freed and 0 returned. */
static int json_put(cJSON *obj, const char *key, cJSON *item)
{
	if (!item)
		return 0;
	if (!cJSON_AddItemToObject(obj, key, item)) {
		cJSON_Delete(item);
		return 0;
	}
	return 1;
}

/* The rows of t->nest matching row `row` of t (hc_report_table_nest). */
static cJSON *json_nested(const struct report_table *t, size_t row)
{
	const struct report_table *c = t->nest;
	const struct report_value *key = &t->cells[row * t->ncols + t->nest_join];
	cJSON *arr = cJSON_CreateArray();
	size_t r, col;

	if (!arr)
		return NULL;
	for (r = 0; r < c->nrows; r++) {
		const struct report_value *k = &c->cells[r * c->ncols + t->nest_child_join];
		cJSON *obj;
		if (k->kind != REPORT_TEXT || key->kind != REPORT_TEXT || strcmp(k->text, key->text) != 0)
			continue;
		obj = cJSON_CreateObject();
		if (!obj || !cJSON_AddItemToArray(arr, obj)) {
			cJSON_Delete(obj);
			goto fail;
		}
		for (col = 0; col < c->ncols; col++)
			if (col != t->nest_child_join && !json_put(obj, c->cols[col].key, json_value(&c->cells[r * c->ncols + col])))
				goto fail;
	}
	return arr;
fail:
	cJSON_Delete(arr);
	return NULL;
}

static cJSON *json_table(const struct report_table *t)
{
	cJSON *arr = cJSON_CreateArray();
	size_t row, col;

	if (!arr)
		return NULL;
	for (row = 0; row < t->nrows; row++) {
		cJSON *obj = cJSON_CreateObject();
		if (!obj || !cJSON_AddItemToArray(arr, obj)) {
			cJSON_Delete(obj);
			goto fail;
		}
		for (col = 0; col < t->ncols; col++)
			if (!json_put(obj, t->cols[col].key, t->nest && col == t->nest_col ? json_nested(t, row)
								: json_value(&t->cells[row * t->ncols + col])))
				goto fail;
	}
	return arr;
fail:
	cJSON_Delete(arr);
	return NULL;
}

static cJSON *json_report(const struct report *r)
{
	cJSON *root = cJSON_CreateObject(), *notes;
	size_t i;

	if (!root)
		return NULL;
	for (i = 0; i < r->nfields; i++)
		if (!json_put(root, r->fields[i].key, json_value(&r->fields[i].value)))
			goto fail;
	for (i = 0; i < r->ntables; i++)
		if (!json_put(root, r->tables[i]->key, json_table(r->tables[i])))
			goto fail;
	notes = cJSON_CreateArray();
	if (!json_put(root, "cautions", notes))
		goto fail;
	for (i = 0; i < r->nnotes; i++) {
		cJSON *s = json_string(r->notes[i]);
		if (!s || !cJSON_AddItemToArray(notes, s)) {
			cJSON_Delete(s);
			goto fail;
		}
	}
	return root;
fail:
	cJSON_Delete(root);
	return NULL;
}

/* The first key that names two members of one JSON object (the report's
 * fields, its tables and "cautions" share the top level; a table's columns
 * share each row), or NULL.  JSON parsers keep only one of two equal keys,
 * so a clash would silently hide a figure from scripts. */
static const char *json_key_clash(const struct report *r)
{
	size_t n = r->nfields + r->ntables + 1, i, j;

	for (i = 0; i < n; i++) {
		const char *a = i < r->nfields ? r->fields[i].key
			      : i < n - 1 ? r->tables[i - r->nfields]->key : "cautions";
		for (j = i + 1; j < n; j++) {
			const char *b = j < r->nfields ? r->fields[j].key
				      : j < n - 1 ? r->tables[j - r->nfields]->key : "cautions";
			if (strcmp(a, b) == 0)
				return a;
		}
	}
	for (i = 0; i < r->ntables; i++) {
		const struct report_table *t = r->tables[i];
		for (j = 0; j < t->ncols; j++)
			for (n = j + 1; n < t->ncols; n++)
				if (strcmp(t->cols[j].key, t->cols[n].key) == 0)
					return t->cols[j].key;
	}
	return NULL;
}

/* Print root onto fp with a final newline and free it (both JSON writers). */
static int json_emit(FILE *fp, cJSON *root, struct hc_error *err)
{
	char *text = cJSON_Print(root);

	cJSON_Delete(root);
	if (!text)
		return hc_error(err, HC_ENOMEM, "out of memory printing the JSON output");
	errno = 0;
	fputs(text, fp);
	fputc('\n', fp);
	cJSON_free(text);
	return ferror(fp) ? write_failed(err) : HC_OK;
}

static int write_json(FILE *fp, const struct report *r, struct hc_error *err)
{
	cJSON_Hooks hooks = { json_malloc, json_free };
	cJSON *root;
	const char *clash;

	if ((clash = json_key_clash(r)))
		return hc_error(err, HC_EINTERNAL, "JSON output names '%s' twice", clash);

	/* Route cJSON through the project's allocator (fault injection reaches
	 * it too).  Setting the hooks is idempotent. */
	cJSON_InitHooks(&hooks);
	root = json_report(r);
	if (!root)
		return hc_error(err, HC_ENOMEM, "out of memory building the JSON output");
	return json_emit(fp, root, err);
}

int hc_report_write_json_set(FILE *fp, const char *version, const char *const *keys,
			     const struct report *const *reports, size_t n, struct hc_error *err)
{
	cJSON_Hooks hooks = { json_malloc, json_free };
	cJSON *root, *item;
	const char *clash;
	size_t i;

	for (i = 0; i < n; i++)
		if (reports[i] && (clash = json_key_clash(reports[i])))
			return hc_error(err, HC_EINTERNAL, "JSON output names '%s' twice", clash);
	cJSON_InitHooks(&hooks);
	root = cJSON_CreateObject();
	if (!root || !json_put(root, "holdcount_version", cJSON_CreateString(version)))
		goto nomem;
	for (i = 0; i < n; i++) {
		item = reports[i] ? json_report(reports[i]) : cJSON_CreateNull();
		if (!json_put(root, keys[i], item))
			goto nomem;
	}
	return json_emit(fp, root, err);
nomem:
	cJSON_Delete(root);
	return hc_error(err, HC_ENOMEM, "out of memory building the JSON output");
}

/* ---- Markdown ----------------------------------------------------------- */

static long col_of(const struct report_table *t, const char *key)
{
	size_t j;

	for (j = 0; j < t->ncols; j++)
		if (strcmp(t->cols[j].key, key) == 0)
			return (long)j;
	return -1;
}

void hc_report_md_value(FILE *fp, const struct report_value *v, int style)
{
	struct report_value w = *v;
	char buf[64];
	const char *s;

	w.style = style;
	for (s = format_text(buf, sizeof buf, &w); s && *s; s++)
		fputs(*s == '|' ? "\\|" : (char[2]){ *s == '\n' ? ' ' : *s, 0 }, fp);
}

const struct report_value *hc_report_md_cell(const struct report_table *t, size_t row, const char *key)
{
	long j = col_of(t, key);
	static const struct report_value none = { REPORT_NONE, 0, 0, 0, NULL };

	return j < 0 ? &none : &t->cells[row * t->ncols + (size_t)j];
}

static int style_of(const struct report_table *t, const char *key)
{
	long j = col_of(t, key);

	return j < 0 ? REPORT_STYLE_PLAIN : t->cols[j].style;
}

/* Numbers align right, words left: a column is numeric when every cell
 * that holds something is a number. */
static int numeric_column(const struct report_table *t, const char *key)
{
	long j = col_of(t, key);
	size_t i;
	int any = 0;

	for (i = 0; j >= 0 && i < t->nrows; i++) {
		int kind = t->cells[i * t->ncols + (size_t)j].kind;
		if (kind == REPORT_TEXT || kind == REPORT_BOOL || t->cells[i * t->ncols + (size_t)j].text)
			return 0;
		any |= kind != REPORT_NONE;
	}
	return any;
}

void hc_report_md_table(FILE *fp, const struct report_table *t, const char *const (*cols)[2], size_t ncols,
			int (*keep)(const struct report_table *, size_t, const void *), const void *ctx)
{
	size_t i, j;

	for (j = 0; j < ncols; j++)
		fprintf(fp, "| %s ", cols[j][1]);
	fputs("|\n", fp);
	for (j = 0; j < ncols; j++)
		fputs(j > 0 && numeric_column(t, cols[j][0]) ? "|--:" : "|:--", fp);
	fputs("|\n", fp);
	for (i = 0; i < t->nrows; i++) {
		if (keep && !keep(t, i, ctx))
			continue;
		for (j = 0; j < ncols; j++) {
			fputs("| ", fp);
			hc_report_md_value(fp, hc_report_md_cell(t, i, cols[j][0]), style_of(t, cols[j][0]));
			fputc(' ', fp);
		}
		fputs("|\n", fp);
	}
	fputc('\n', fp);
}

/* The whole report: fields as a list, each table under its title with
 * every column, the notes as a list. */
static int write_markdown(FILE *fp, const struct report *r, struct hc_error *err)
{
	const char *(*cols)[2];
	size_t i, j;

	errno = 0;
	for (i = 0; i < r->nfields; i++) {
		fprintf(fp, "- %s: ", r->fields[i].title);
		hc_report_md_value(fp, &r->fields[i].value, r->fields[i].value.style);
		fputc('\n', fp);
	}
	if (r->nfields)
		fputc('\n', fp);
	for (i = 0; i < r->ntables; i++) {
		const struct report_table *t = r->tables[i];

		if (!(cols = hc_calloc(t->ncols ? t->ncols : 1, sizeof *cols)))
			return hc_error(err, HC_ENOMEM, "out of memory writing Markdown");
		for (j = 0; j < t->ncols; j++) {
			cols[j][0] = t->cols[j].key;
			cols[j][1] = t->cols[j].title;
		}
		fprintf(fp, "### %s\n\n", t->title);
		hc_report_md_table(fp, t, (const char *const (*)[2])cols, t->ncols, NULL, NULL);
		hc_free(cols);
	}
	for (i = 0; i < r->nnotes; i++)
		fprintf(fp, "- %s\n", r->notes[i]);
	return ferror(fp) ? write_failed(err) : HC_OK;
}

static const struct report_writer writer_text = { "table", write_text };
static const struct report_writer writer_csv = { "csv", write_csv };
static const struct report_writer writer_json = { "json", write_json };

const struct report_writer *const hc_report_writer_text = &writer_text;
const struct report_writer *const hc_report_writer_csv = &writer_csv;
const struct report_writer *const hc_report_writer_json = &writer_json;
static const struct report_writer writer_markdown = { "markdown", write_markdown };
const struct report_writer *const hc_report_writer_markdown = &writer_markdown;

const struct report_writer *hc_report_writer_find(const char *name)
{
	static const struct report_writer *const all[] = { &writer_text, &writer_csv, &writer_json, &writer_markdown };
	size_t i;

	for (i = 0; name && i < sizeof all / sizeof all[0]; i++)
		if (strcmp(all[i]->name, name) == 0)
			return all[i];
	return NULL;
}

/* The cautions of design.md section 9, in the project's own words. */
static const char *const cautions[] = {
	"historical estimates: every figure describes the sample period, and the past need not repeat",
	"survivorship bias: a universe that holds only today's survivors leaves out the securities that failed, "
	"so its history looks safer than the market it came from",
	"estimation error: average variance and average covariance are estimated from a finite sample "
	"and move every figure derived from them",
	"annualisation: per-period variance times the periods per year assumes returns independent from one period to the next",
	"not investment advice: defer to licensed advisers and to each fund's own legal limits",
};

int hc_report_add_cautions(struct report *r)
{
	size_t i;

	for (i = 0; i < sizeof cautions / sizeof cautions[0]; i++)
		if (hc_report_add_note(r, cautions[i]))
			return HC_ENOMEM;
	return HC_OK;
}

int hc_report_add_scale(struct report *r, double periods_per_year, int annualised)
{
	char text[200];
	int rc;

	if (annualised) {
		rc = hc_report_add_real(r, "periods_per_year", "periods per year", periods_per_year, REPORT_STYLE_PLAIN);
		snprintf(text, sizeof text,
			 "annualised: variances times %g, standard deviations times sqrt(%g)", periods_per_year,
			 periods_per_year);
	} else {
		rc = hc_report_add_none(r, "periods_per_year", "periods per year");
		snprintf(text, sizeof text, "not annualised: figures are on the scale of the inputs");
	}
	return rc ? rc : hc_report_add_text(r, "annualisation", "annualisation", text);
}
