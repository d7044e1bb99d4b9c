/*
 * holdings.c - funds' holdings from CSV, through csvread (libcsv).
 *
 * Rows are streamed: the header fixes which column is which, each data row
 * is checked where it stands (so messages carry its line and column) and
 * kept with its amount's text.  The amounts are parsed once the file is read,
 * when the delimiter is known (a ';' file may use decimal commas).  Checks
 * that need a whole fund (repeated ids, all weights zero, the totals) run
 * then, and still name the line of the offending row.
 */
#include "holdcount/holdings.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

enum { COL_FUND, COL_ID, COL_WEIGHT, COL_ISSUER, COL_TYPE, COL_GROUP, NCOLS };

struct row {
	size_t fund;
	char *id;
	char *issuer;
	char *group;
	char *amount;               /* the weight or value cell as read */
	int type;
	double raw;
	size_t line;
	size_t amount_line;
	size_t rows;                /* rows summed into this one; 0 = merged away */
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
	char delimiter;             /* the file's, once read */
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

/* ---- types, encodings, amounts ---- */

static const char *const type_names[HOLDING_NTYPES] = {
	"security", "cash and cash equivalents", "government security",
	"investment-company share", "other"
};

const char *hc_holding_type_name(int type)
{
	return type >= 0 && type < HOLDING_NTYPES ? type_names[type] : NULL;
}

int hc_holding_type_parse(const char *s, int *type)
{
	static const struct { const char *word; int type; } words[] = {
		{ "", HOLDING_SECURITY }, { "security", HOLDING_SECURITY },
		{ "cash", HOLDING_CASH }, { "cash and cash equivalents", HOLDING_CASH },
		{ "cash equivalent", HOLDING_CASH }, { "cash equivalents", HOLDING_CASH },
		{ "government security", HOLDING_GOVERNMENT }, { "government", HOLDING_GOVERNMENT },
		{ "government securities", HOLDING_GOVERNMENT },
		{ "investment-company share", HOLDING_FUND_SHARE }, { "investment company share", HOLDING_FUND_SHARE },
		{ "investment company", HOLDING_FUND_SHARE }, { "fund share", HOLDING_FUND_SHARE },
		{ "other", HOLDING_OTHER },
		/* words administrators' files commonly use (common practice) */
		{ "equity", HOLDING_SECURITY }, { "equities", HOLDING_SECURITY }, { "stock", HOLDING_SECURITY },
		{ "common stock", HOLDING_SECURITY }, { "preferred stock", HOLDING_SECURITY },
		{ "ordinary share", HOLDING_SECURITY }, { "ordinary shares", HOLDING_SECURITY },
		{ "share", HOLDING_SECURITY }, { "shares", HOLDING_SECURITY },
		{ "cash & equivalents", HOLDING_CASH }, { "cash and equivalents", HOLDING_CASH },
		{ "government bond", HOLDING_GOVERNMENT }, { "government bonds", HOLDING_GOVERNMENT },
		{ "etf", HOLDING_FUND_SHARE }, { "exchange-traded fund", HOLDING_FUND_SHARE },
		{ "mutual fund", HOLDING_FUND_SHARE },
	};
	size_t k;

	for (k = 0; k < sizeof words / sizeof words[0]; k++)
		if (name_is(s, words[k].word)) {
			*type = words[k].type;
			return 0;
		}
	return -1;
}

int hc_holdings_parse_encoding(const char *s, int *encoding)
{
	if (name_is(s, "utf-8") || name_is(s, "utf8"))
		*encoding = HOLDINGS_UTF8;
	else if (name_is(s, "latin-1") || name_is(s, "latin1") || name_is(s, "iso-8859-1"))
		*encoding = HOLDINGS_LATIN1;
	else if (name_is(s, "windows-1252") || name_is(s, "cp1252"))
		*encoding = HOLDINGS_WINDOWS1252;
	else
		return -1;
	return 0;
}

static int digit(char c)
{
	return c >= '0' && c <= '9';
}

/* Remove thousands separators sep from t[0..n) in place, checking that the
 * digits before the decimal mark dec come in groups of three after a first
 * group of one to three.  Returns the new length, or (size_t)-1. */
static size_t ungroup(char *t, size_t n, char sep, char dec)
{
	size_t i = 0, o = 0, run = 0, groups = 0;

	while (i < n && digit(t[i])) {
		run++;
		t[o++] = t[i++];
		if (i < n && t[i] == sep) {
			if (run == 0 || (groups ? run != 3 : run > 3))
				return (size_t)-1;
			groups++;
			run = 0;
			i++;
			if (i == n || !digit(t[i]))
				return (size_t)-1;
		}
	}
	if (groups && run != 3)
		return (size_t)-1;
	for (; i < n; i++) {
		if (t[i] == sep)
			return (size_t)-1;
		t[o++] = t[i] == dec ? '.' : t[i];
	}
	return o;
}

int hc_holdings_parse_amount(const char *s, size_t len, char delimiter, double *value,
			     int *had_percent)
{
	char t[128];
	size_t i = 0, end = len, n, k, commas = 0, dots = 0, last_comma = 0, last_dot = 0;
	int paren = 0, neg = 0, pct = 0;
	char sep = 0, dec = '.';

	while (i < end && (s[i] == ' ' || s[i] == '\t'))
		i++;
	while (end > i && (s[end - 1] == ' ' || s[end - 1] == '\t'))
		end--;
	if (end - i >= 2 && s[i] == '(' && s[end - 1] == ')') {
		paren = 1;
		i++;
		end--;
	}
	if (end - i >= sizeof t)
		return -1;
	memcpy(t, s + i, end - i);
	n = end - i;
	t[n] = '\0';
	for (k = 0; k < n; k++) {
		if (t[k] == ',') {
			commas++;
			last_comma = k;
		} else if (t[k] == '.') {
			dots++;
			last_dot = k;
		}
	}
	if (commas && dots) {
		/* both marks: the last one is the decimal mark */
		sep = last_comma > last_dot ? '.' : ',';
		dec = last_comma > last_dot ? ',' : '.';
	} else if (commas) {
		/* "12,5" in a ';' file is a decimal comma; "1,234" in a ',' file
		 * (quoted) is a thousands separator */
		if (delimiter == ';' && commas == 1)
			dec = ',';
		else
			sep = ',';
	} else if (dots > 1)
		sep = '.';
	if (paren || (n && (t[0] == '-' || t[0] == '+'))) {
		size_t skip = (!paren && (t[0] == '-' || t[0] == '+')) ? 1 : 0;
		neg = paren || t[0] == '-';
		if (paren && n && (t[0] == '-' || t[0] == '+'))
			return -1;          /* "(-5)" says negative twice */
		memmove(t, t + skip, n - skip + 1);
		n -= skip;
	}
	if (sep || dec != '.') {
		n = ungroup(t, n, sep ? sep : '\x01', dec);
		if (n == (size_t)-1)
			return -1;
		t[n] = '\0';
	}
	if (hc_csvread_parse_number(t, n, value, &pct) != 0 || t[0] == '-' || t[0] == '+')
		return -1;
	if (neg)
		*value = -*value;
	if (had_percent)
		*had_percent = pct;
	return 0;
}

/* Windows-1252's 0x80-0x9F as Unicode code points; 0 where it has none. */
static const unsigned short cp1252_high[32] = {
	0x20AC, 0, 0x201A, 0x0192, 0x201E, 0x2026, 0x2020, 0x2021,
	0x02C6, 0x2030, 0x0160, 0x2039, 0x0152, 0, 0x017D, 0,
	0, 0x2018, 0x2019, 0x201C, 0x201D, 0x2022, 0x2013, 0x2014,
	0x02DC, 0x2122, 0x0161, 0x203A, 0x0153, 0, 0x017E, 0x0178
};

/* The first byte offset at which s[0..len) stops being valid UTF-8. */
static size_t utf8_bad_offset(const char *s, size_t len)
{
	size_t lo = 0;

	/* hc_csvread_utf8_valid has the exact rules (overlongs, surrogates);
	 * find the offending sequence by growing the valid prefix. */
	while (lo < len) {
		size_t step = 1;
		unsigned char c = (unsigned char)s[lo];
		if (c >= 0xF0)
			step = 4;
		else if (c >= 0xE0)
			step = 3;
		else if (c >= 0xC0)
			step = 2;
		if (lo + step > len || !hc_csvread_utf8_valid(s + lo, step))
			return lo;
		lo += step;
	}
	return len;
}

/* The cell as UTF-8 in a new string (*out), from the file's encoding. */
static int cell_text(struct reader *rd, const struct csvread_field *f, char **out,
		     struct hc_error *err)
{
	const unsigned char *s = (const unsigned char *)f->text;
	char *o;
	size_t k, n = 0;

	*out = NULL;
	if (rd->opt->encoding == HOLDINGS_UTF8) {
		if (!hc_csvread_utf8_valid(f->text, f->len)) {
			size_t at = utf8_bad_offset(f->text, f->len);
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: found byte 0x%02X at byte %zu of the cell, which is not "
					"UTF-8; expected UTF-8 text (a Latin-1 or Windows-1252 file needs "
					"--holdings-encoding latin-1 or windows-1252)",
					rd->name, f->line, f->column, s[at], at + 1);
		}
		*out = hc_strndup(f->text, f->len);
		goto done;
	}
	if (!(o = hc_mallocarray(f->len + 1, 3)))
		goto done;
	for (k = 0; k < f->len; k++) {
		unsigned cp = s[k];
		if (cp >= 0x80 && cp < 0xA0 && rd->opt->encoding == HOLDINGS_WINDOWS1252) {
			cp = cp1252_high[cp - 0x80];
			if (!cp) {
				hc_free(o);
				return hc_error(err, HC_EDATA, "%s:%zu:%zu: found byte 0x%02X at byte %zu of the cell, which "
						"Windows-1252 leaves undefined; expected Windows-1252 text",
						rd->name, f->line, f->column, s[k], k + 1);
			}
		}
		if (cp < 0x80)
			o[n++] = (char)cp;
		else if (cp < 0x800) {
			o[n++] = (char)(0xC0 | (cp >> 6));
			o[n++] = (char)(0x80 | (cp & 0x3F));
		} else {
			o[n++] = (char)(0xE0 | (cp >> 12));
			o[n++] = (char)(0x80 | ((cp >> 6) & 0x3F));
			o[n++] = (char)(0x80 | (cp & 0x3F));
		}
	}
	o[n] = '\0';
	*out = o;
done:
	return *out ? HC_OK : hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
}

/* ---- the header ---- */

static int header_field(struct reader *rd, const struct csvread_field *f,
			struct hc_error *err)
{
	const struct holdings_options *o = rd->opt;
	const char *fund = o->fund_column ? o->fund_column : "fund";
	const char *id = o->id_column ? o->id_column : "id";
	const char *issuer = o->issuer_column ? o->issuer_column : "issuer";
	const char *type = o->type_column ? o->type_column : "type";
	const char *group = o->group_column ? o->group_column : "group";

	if (!rd->col[COL_FUND] && !o->single_fund && name_is(f->text, fund))
		rd->col[COL_FUND] = f->column;
	else if (!rd->col[COL_ID] && name_is(f->text, id))
		rd->col[COL_ID] = f->column;
	else if (!rd->col[COL_ISSUER] && name_is(f->text, issuer))
		rd->col[COL_ISSUER] = f->column;
	else if (!rd->col[COL_TYPE] && name_is(f->text, type))
		rd->col[COL_TYPE] = f->column;
	else if (!rd->col[COL_GROUP] && name_is(f->text, group))
		rd->col[COL_GROUP] = f->column;
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
	if (!rd->col[COL_FUND] && !o->single_fund)
		return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header; expected fund,id,weight",
				rd->name, line, o->fund_column ? o->fund_column : "fund");
	if (!rd->col[COL_ID])
		return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header; expected %sid,weight",
				rd->name, line, o->id_column ? o->id_column : "id", o->single_fund ? "" : "fund,");
	if (!rd->col[COL_WEIGHT]) {
		if (o->weight_column || o->value_column)
			return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header",
					rd->name, line, o->weight_column ? o->weight_column : o->value_column);
		return hc_error(err, HC_EDATA, "%s:%zu: no 'weight' or 'value' column in the header; expected fund,id,weight or fund,id,value",
				rd->name, line);
	}
	if (o->type_column && !rd->col[COL_TYPE])
		return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header", rd->name, line, o->type_column);
	if (o->group_column && !rd->col[COL_GROUP])
		return hc_error(err, HC_EDATA, "%s:%zu: no '%s' column in the header", rd->name, line, o->group_column);
	rd->h->has_issuer = rd->col[COL_ISSUER] != 0;
	rd->h->has_type = rd->col[COL_TYPE] != 0;
	rd->h->has_group = rd->col[COL_GROUP] != 0;
	rd->h->id_column = rd->col[COL_ID];
	rd->h->weight_column = rd->col[COL_WEIGHT];
	return HC_OK;
}

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct reader *rd = ctx;
	int k, rc;

	if (f->record == 0) {
		if (rd->opt->encoding == HOLDINGS_UTF8 && !hc_csvread_utf8_valid(f->text, f->len))
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: the header cell is not UTF-8; expected UTF-8 text "
					"(or --holdings-encoding latin-1 or windows-1252)", rd->name, f->line, f->column);
		return header_field(rd, f, err);
	}
	for (k = 0; k < NCOLS; k++) {
		if (rd->col[k] != f->column)
			continue;
		hc_free(rd->cell[k]);
		rd->cell[k] = NULL;
		if ((rc = cell_text(rd, f, &rd->cell[k], err)) != HC_OK)
			return rc;
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
	{
		struct holdings_fund *p = hc_grow(h->funds, &rd->cap_funds, h->nfunds, sizeof *p, 8);
		if (!p)
			goto nomem;
		h->funds = p;
	}
	memset(&h->funds[h->nfunds], 0, sizeof h->funds[0]);
	h->funds[h->nfunds].name = hc_strdup(name);
	h->funds[h->nfunds].source = hc_strdup(rd->name);
	h->funds[h->nfunds].id_column = rd->col[COL_ID];
	if (!h->funds[h->nfunds].name || !h->funds[h->nfunds].source) {
		hc_free(h->funds[h->nfunds].name);
		hc_free(h->funds[h->nfunds].source);
		goto nomem;
	}
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

static int row_check(struct reader *rd, size_t nfields, size_t line, int *type,
		     struct hc_error *err)
{
	if (nfields != rd->header_fields)
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: found %zu fields, expected %zu as in the header",
				rd->name, line, nfields < rd->header_fields ? nfields + 1 : rd->header_fields + 1,
				nfields, rd->header_fields);
	if ((!rd->opt->single_fund && !rd->cell[COL_FUND]) || !rd->cell[COL_ID] || !rd->cell[COL_WEIGHT])
		return hc_error(err, HC_EINTERNAL, "%s:%zu: a cell of the row was not seen", rd->name, line);
	if (!rd->opt->single_fund && blank(rd->cell[COL_FUND]))
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: empty fund name, expected the fund the position belongs to",
				rd->name, rd->cell_line[COL_FUND], rd->col[COL_FUND]);
	*type = HOLDING_SECURITY;
	if (rd->col[COL_TYPE] && hc_holding_type_parse(rd->cell[COL_TYPE], type) != 0) {
		char q[CSVREAD_QUOTE_BUF];
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: found type '%s', expected security (or equity, stock), cash, government security, "
				"investment-company share (or ETF, mutual fund) or other",
				rd->name, rd->cell_line[COL_TYPE], rd->col[COL_TYPE],
				hc_csvread_quote(rd->cell[COL_TYPE], strlen(rd->cell[COL_TYPE]), q));
	}
	/* A cash line often has no id in administrators' files: it is named
	 * HOLDINGS_CASH_ID (several such lines of a fund are summed). */
	if (blank(rd->cell[COL_ID]) && *type == HOLDING_CASH) {
		char *id = hc_strdup(HOLDINGS_CASH_ID);

		if (!id)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		hc_free(rd->cell[COL_ID]);
		rd->cell[COL_ID] = id;
	}
	if (blank(rd->cell[COL_ID]))
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: empty security id, expected an id%s",
				rd->name, rd->cell_line[COL_ID], rd->col[COL_ID],
				rd->col[COL_TYPE] ? " (only a cash line may leave it empty)" : "");
	return HC_OK;
}

/* Take the cell of column k out of the reader: NULL when absent or blank. */
static char *take(struct reader *rd, int k)
{
	char *s = rd->cell[k];

	if (!rd->col[k] || !s || blank(s))
		return NULL;
	rd->cell[k] = NULL;
	return s;
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line,
		     struct hc_error *err)
{
	struct reader *rd = ctx;
	struct row *r;
	size_t fund;
	int rc, type;

	if (record == 0)
		return header_done(rd, nfields, line, err);
	if ((rc = row_check(rd, nfields, line, &type, err)) != HC_OK)
		return rc;
	if ((rc = fund_index(rd, rd->opt->single_fund ? rd->opt->single_fund : rd->cell[COL_FUND],
			     line, &fund, err)) != HC_OK)
		return rc;
	{
		struct row *p = hc_grow(rd->rows, &rd->cap_rows, rd->nrows, sizeof *p, 64);
		if (!p)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		rd->rows = p;
	}
	r = &rd->rows[rd->nrows++];
	memset(r, 0, sizeof *r);
	r->fund = fund;
	r->type = type;
	r->line = line;
	r->rows = 1;
	r->amount_line = rd->cell_line[COL_WEIGHT];
	r->id = take(rd, COL_ID);
	r->amount = rd->cell[COL_WEIGHT];
	rd->cell[COL_WEIGHT] = NULL;
	r->issuer = take(rd, COL_ISSUER);
	r->group = take(rd, COL_GROUP);
	cells_clear(rd);
	return HC_OK;
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

/* Parse every row's amount now that the delimiter is known. */
static int parse_amounts(struct reader *rd, struct hc_error *err)
{
	size_t k;

	for (k = 0; k < rd->nrows; k++) {
		struct row *r = &rd->rows[k];
		char q[CSVREAD_QUOTE_BUF];
		int percent = 0;
		if (hc_holdings_parse_amount(r->amount, strlen(r->amount), rd->delimiter, &r->raw, &percent) != 0)
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: found '%s', expected a number (%s)",
					rd->name, r->amount_line, rd->col[COL_WEIGHT],
					hc_csvread_quote(r->amount, strlen(r->amount), q),
					rd->h->kind == HOLDINGS_VALUES ? "a market value such as 125000.00, \"1,250,000.00\" or (1,250.00)"
								       : "a weight such as 0.052 or 5.2%");
		if (r->raw < 0 && !rd->opt->allow_short)
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: found negative %s '%s', expected zero or more (short positions need --allow-short)",
					rd->name, r->amount_line, rd->col[COL_WEIGHT], rd->weight_name,
					hc_csvread_quote(r->amount, strlen(r->amount), q));
	}
	return HC_OK;
}

/* A sort key for one row; qsort has no context argument in C11, so the key
 * carries what the comparison needs. */
struct row_key {
	size_t fund;
	const char *id;
	size_t line;
	size_t index;
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

static int same_text(const char *a, const char *b)
{
	return a == b || (a && b && strcmp(a, b) == 0);
}

/* Repeated (fund, id) rows -- one position split over lots or lines, as
 * administrators' files often are -- are summed into the first row; they
 * must agree on issuer, group and type.  One warning per fund. */
static int merge_repeats(struct reader *rd, struct hc_error *err)
{
	struct row_key *key;
	size_t k, j, *repeats = NULL;
	int rc = HC_OK;

	if (rd->nrows < 2)
		return HC_OK;
	key = hc_calloc(rd->nrows, sizeof *key);
	repeats = hc_calloc(rd->h->nfunds, sizeof *repeats);
	if (!key || !repeats) {
		rc = hc_error(err, HC_ENOMEM, "out of memory reading '%s'", rd->name);
		goto cleanup;
	}
	for (k = 0; k < rd->nrows; k++)
		key[k] = (struct row_key){ rd->rows[k].fund, rd->rows[k].id, rd->rows[k].line, k };
	qsort(key, rd->nrows, sizeof *key, cmp_row_key);
	for (k = 0; k < rd->nrows; k = j) {
		struct row *first = &rd->rows[key[k].index];
		for (j = k + 1; j < rd->nrows && key[j].fund == key[k].fund && strcmp(key[j].id, key[k].id) == 0; j++) {
			struct row *r = &rd->rows[key[j].index];
			if (!same_text(r->issuer, first->issuer) || !same_text(r->group, first->group) || r->type != first->type) {
				rc = hc_error(err, HC_EDATA, "%s:%zu:%zu: id '%s' of fund '%s' repeats line %zu with another issuer, "
					      "group or type, expected the same (repeated rows of an id are summed)",
					      rd->name, r->line, rd->col[COL_ID], r->id, rd->h->funds[r->fund].name, first->line);
				goto cleanup;
			}
			first->raw += r->raw;
			first->rows += r->rows;
			r->rows = 0;
			repeats[r->fund]++;
		}
	}
	for (k = 0; k < rd->h->nfunds; k++)
		if (repeats[k] && (rc = add_warning(rd->h, err, "%s:%zu: fund '%s': %zu repeated row%s of an id summed into one position",
						    rd->name, rd->h->funds[k].first_line, rd->h->funds[k].name, repeats[k],
						    repeats[k] == 1 ? "" : "s")) != HC_OK)
			goto cleanup;
cleanup:
	hc_free(key);
	hc_free(repeats);
	return rc;
}

/* Move each row into its fund (file order kept) and normalise. */
static int build_funds(struct reader *rd, struct hc_error *err)
{
	struct holdings *h = rd->h;
	size_t k, f;
	int rc;

	for (k = 0; k < rd->nrows; k++) {
		struct row *r = &rd->rows[k];
		if (!r->rows)
			continue;
		if (r->raw == 0) {
			h->funds[r->fund].zero_rows++;
			r->rows = 0;
		} else
			h->funds[r->fund].n++;
	}
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
		struct holding *hd;
		if (!r->rows)
			continue;
		hd = &fd->h[fd->n++];
		hd->id = r->id;
		hd->issuer = r->issuer;
		hd->group = r->group;
		hd->type = r->type;
		hd->raw = r->raw;
		hd->line = r->line;
		hd->rows = r->rows;
		r->id = r->issuer = r->group = NULL;
		fd->raw_sum += hd->raw;
		/* market values near DBL_MAX: refuse a total that is no longer a
		 * number rather than divide by infinity into weights of 0 */
		if (!isfinite(fd->raw_sum))
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: fund '%s': adding this %s makes the fund's total %g, expected a finite total (values too large: give them in thousands or as weights)",
					rd->name, r->amount_line, rd->col[COL_WEIGHT], fd->name, rd->weight_name, fd->raw_sum);
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
		hc_free(rd->rows[k].group);
		hc_free(rd->rows[k].amount);
	}
	hc_free(rd->rows);
}

/* Read the CSV at path, or (path NULL) the buffer data of len bytes named
 * name, with delimiter (0: detect) through handler h: the one reading step
 * of both loaders below.  *used (may be NULL) gets the delimiter. */
static int read_csv(const char *name, const char *path, const char *data, size_t len,
		    char delimiter, const struct csvread_handler *h, char *used,
		    struct hc_error *err)
{
	struct csvread_options copt;

	hc_csvread_options_init(&copt);
	copt.delimiter = delimiter;
	if (path)
		return hc_csvread_file(path, &copt, h, used, err);
	return hc_csvread_buffer(name, data, len, &copt, h, used, err);
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
	if ((rc = read_csv(name, path, data, len, opt->delimiter, &handler, &rd.delimiter, err)) != HC_OK)
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
	if ((rc = parse_amounts(&rd, err)) != HC_OK || (rc = merge_repeats(&rd, err)) != HC_OK ||
	    (rc = build_funds(&rd, err)) != HC_OK)
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

int hc_holdings_merge(struct holdings *into, struct holdings **from, struct hc_error *err)
{
	struct holdings *b = *from;
	struct holdings_fund *funds;
	char **warnings, *source;
	size_t f, g, n;

	for (f = 0; f < b->nfunds; f++)
		for (g = 0; g < into->nfunds; g++)
			if (strcmp(b->funds[f].name, into->funds[g].name) == 0)
				return hc_error(err, HC_EDATA, "%s:%zu: fund '%s' is also in '%s' (line %zu), expected each fund in one holdings file",
						b->funds[f].source, b->funds[f].first_line, b->funds[f].name,
						into->funds[g].source, into->funds[g].first_line);
	n = strlen(into->source) + strlen(b->source) + 3;
	if (!(source = hc_malloc(n)))
		return hc_error(err, HC_ENOMEM, "out of memory merging holdings files");
	snprintf(source, n, "%s, %s", into->source, b->source);
	funds = hc_reallocarray(into->funds, into->nfunds + b->nfunds, sizeof *funds);
	if (!funds) {
		hc_free(source);
		return hc_error(err, HC_ENOMEM, "out of memory merging holdings files");
	}
	into->funds = funds;
	warnings = hc_reallocarray(into->warnings, into->nwarnings + b->nwarnings + 1, sizeof *warnings);
	if (!warnings) {
		hc_free(source);
		return hc_error(err, HC_ENOMEM, "out of memory merging holdings files");
	}
	into->warnings = warnings;
	if (b->nfunds)
		memcpy(into->funds + into->nfunds, b->funds, b->nfunds * sizeof *funds);
	into->nfunds += b->nfunds;
	if (b->nwarnings)   /* b->warnings may be NULL: memcpy's source must not be */
		memcpy(into->warnings + into->nwarnings, b->warnings, b->nwarnings * sizeof *warnings);
	into->nwarnings += b->nwarnings;
	if (into->kind != b->kind)
		into->kind = HOLDINGS_VALUES;   /* mixed: weight sums are not checked against 1 across files */
	into->has_issuer |= b->has_issuer;
	into->has_type |= b->has_type;
	into->has_group |= b->has_group;
	hc_free(into->source);
	into->source = source;
	b->nfunds = b->nwarnings = 0;
	hc_holdings_free(b);
	*from = NULL;
	return HC_OK;
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
			hc_free(h->funds[f].h[k].group);
		}
		hc_free(h->funds[f].h);
		hc_free(h->funds[f].name);
		hc_free(h->funds[f].source);
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
	if (!hc_csvread_utf8_valid(f->text, f->len))
		return hc_error(err, HC_EDATA, "%s:%zu:%zu: the cell is not UTF-8, expected UTF-8 text",
				lr->name, f->line, f->column);
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
		size_t cap;
		char **a;

		if (hc_grow_capacity(lr->cap, lr->cap + 1, 64, &cap))
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", lr->name);
		a = hc_reallocarray(l->ids, cap, sizeof *a);
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
	if ((rc = read_csv(name, path, data, len, delimiter, &handler, NULL, err)) != HC_OK)
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
