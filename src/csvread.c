/*
 * csvread.c - streaming CSV reading on top of libcsv, with positions.
 *
 * libcsv does the RFC 4180 parsing; this module decides what it is fed.
 * A small scanner walks the bytes once, mirroring libcsv's quoting rules
 * (a field whose first non-blank byte is '"' is quoted, '""' inside it is a
 * literal quote), and hands libcsv one field at a time, terminator included.
 * Feeding by field lets us count lines ourselves (a field's callback fires
 * while we still know on which line its terminator sits, so a quoted field
 * spanning lines ends on the later line), know whether the field was quoted,
 * stop right at a NUL byte, and never hold more than one field and one read
 * chunk in memory.  The first line is held back until it is complete so the
 * delimiter can be chosen from it and a UTF-8 byte-order mark dropped.
 */
#include "holdcount/csvread.h"

#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <csv.h>

#include "holdcount/memory.h"

/* Bytes read from a file at a time. */
#define CSVREAD_CHUNK (64 * 1024)

/* Most of the first line held back to choose the delimiter: a ';' header
 * longer than this (over 100 000 ids of 9 bytes) is decided on its start. */
#define CSVREAD_SNIFF_MAX (1024 * 1024)

/* Longest number text hc_csvread_parse_number hands to strtod. */
#define CSVREAD_NUMBER_MAX 400

enum field_state {
	FS_START = 0,   /* only blanks seen in this field so far */
	FS_BODY = 1,    /* an unquoted field */
	FS_QUOTED = 2   /* a quoted field */
};

struct reader {
	struct csv_parser parser;
	int parser_live;
	const struct csvread_handler *h;
	const char *name;
	size_t max_field;
	char delim;
	int delim_fixed;
	int started;           /* first line done: delimiter chosen, BOM gone */
	char *pending;         /* the first line, until it is complete */
	size_t npending, cap_pending, scan_pos;
	int pending_quote;     /* inside quotes while scanning the first line */
	size_t line;           /* current line, 1-based */
	size_t record;         /* records completed so far */
	size_t nfields;        /* fields completed in the current record */
	int fstate;            /* enum field_state */
	int in_quote;
	size_t quote_line;     /* line where the open quoted field began */
	size_t quote_column;
	int status;
	struct hc_error *err;
};

void hc_csvread_options_init(struct csvread_options *opt)
{
	opt->delimiter = 0;
	opt->max_field = 0;
}

static void on_field(void *s, size_t len, void *data)
{
	struct reader *r = data;
	struct csvread_field f;

	if (r->status != HC_OK)
		return;
	r->nfields++;
	if (len > r->max_field) {
		r->status = hc_error(r->err, HC_EDATA,
			"%s:%zu:%zu: field longer than %zu bytes",
			r->name, r->line, r->nfields, r->max_field);
		return;
	}
	f.text = s ? s : "";
	f.len = len;
	f.record = r->record;
	f.column = r->nfields;
	f.line = r->line;
	f.quoted = r->fstate == FS_QUOTED;
	if (r->h->field)
		r->status = r->h->field(r->h->ctx, &f, r->err);
}

static void on_record(int c, void *data)
{
	struct reader *r = data;

	if (r->status != HC_OK)
		return;
	if (r->h->record)
		r->status = r->h->record(r->h->ctx, r->record, r->nfields,
					 r->line, r->err);
	r->record++;
	r->nfields = 0;
}

static int feed_piece(struct reader *r, const char *s, size_t len)
{
	size_t used;
	int e;

	used = csv_parse(&r->parser, s, len, on_field, on_record, r);
	if (r->status != HC_OK)
		return r->status;
	if (used < len) {
		e = csv_error(&r->parser);
		if (e == CSV_ENOMEM || e == CSV_ETOOBIG)
			return r->status = hc_error(r->err, HC_ENOMEM,
				"%s:%zu: out of memory reading a field", r->name, r->line);
		return r->status = hc_error(r->err, HC_EDATA,
			"%s:%zu:%zu: stray quote: a quoted field must end at a "
			"delimiter or line end, and a quote inside a field needs "
			"the whole field quoted with the quote doubled",
			r->name, r->line, r->nfields + 1);
	}
	if (r->parser.entry_pos > r->max_field)
		return r->status = hc_error(r->err, HC_EDATA,
			"%s:%zu:%zu: field longer than %zu bytes",
			r->name, r->line, r->nfields + 1, r->max_field);
	return HC_OK;
}

/* Hand s[0..len) to libcsv and translate its failures into positions.
 * At most max_field + 1 bytes go in per call, so an overlong field is caught
 * when libcsv's buffer first passes the limit rather than after it has grown
 * (in small steps, one realloc each) to the whole field: a 10 MB line would
 * otherwise cost 10 MB of buffer, and quadratic copying where realloc cannot
 * grow in place (under valgrind, for one). */
static int feed(struct reader *r, const char *s, size_t len)
{
	size_t step = r->max_field + 1;

	while (len > 0 && r->status == HC_OK) {
		size_t n = len < step ? len : step;

		if (feed_piece(r, s, n) != HC_OK)
			break;
		s += n;
		len -= n;
	}
	return r->status;
}

static int is_terminator(const struct reader *r, unsigned char c)
{
	return c == (unsigned char)r->delim || c == '\n' || c == '\r';
}

/* Walk s[0..len) once, feeding libcsv field by field (see the top). */
static int scan(struct reader *r, const char *s, size_t len)
{
	size_t start = 0, i;

	if (len == 0)
		return r->status;   /* s may be NULL (an empty file) */
	for (i = 0; i < len; i++) {
		unsigned char c = (unsigned char)s[i];

		if (c == '\0') {
			if (feed(r, s + start, i - start) != HC_OK)
				return r->status;
			return r->status = hc_error(r->err, HC_EDATA,
				"%s:%zu:%zu: NUL byte in the file; expected text",
				r->name, r->line, r->nfields + 1);
		}
		if (r->fstate == FS_QUOTED && (r->in_quote || !is_terminator(r, c))) {
			if (c == '"')
				r->in_quote = !r->in_quote;
			else if (c == '\n')
				r->line++;   /* inside quotes: no callback can fire */
			continue;
		}
		if (is_terminator(r, c)) {
			if (feed(r, s + start, i + 1 - start) != HC_OK)
				return r->status;
			start = i + 1;
			if (c == '\n')
				r->line++;
			r->fstate = FS_START;
			r->in_quote = 0;
			continue;
		}
		if (r->fstate == FS_START && c != ' ' && c != '\t') {
			if (c == '"') {
				r->fstate = FS_QUOTED;
				r->in_quote = 1;
				r->quote_line = r->line;
				r->quote_column = r->nfields + 1;
			} else {
				r->fstate = FS_BODY;
			}
		}
	}
	return feed(r, s + start, len - start);
}

/* Choose the delimiter from the first line and drop a byte-order mark. */
static int start_body(struct reader *r)
{
	const char *s = r->pending;
	size_t n = r->npending, i;
	int q = 0, semi = 0, comma = 0;

	if (n >= 3 && (unsigned char)s[0] == 0xEF && (unsigned char)s[1] == 0xBB
	    && (unsigned char)s[2] == 0xBF) {
		s += 3;
		n -= 3;
	}
	if (!r->delim_fixed) {
		for (i = 0; i < n && (q || s[i] != '\n'); i++) {
			if (s[i] == '"')
				q = !q;
			else if (!q && s[i] == ';')
				semi = 1;
			else if (!q && s[i] == ',')
				comma = 1;
		}
		r->delim = semi && !comma ? ';' : ',';
	}
	csv_set_delim(&r->parser, (unsigned char)r->delim);
	r->started = 1;
	scan(r, s, n);
	hc_free(r->pending);
	r->pending = NULL;
	r->npending = r->cap_pending = 0;
	return r->status;
}

/* Accept more input: hold it back until the first line is complete. */
static int reader_take(struct reader *r, const char *s, size_t len)
{
	size_t need, cap;
	char *p;

	if (r->status != HC_OK)
		return r->status;
	if (r->started)
		return scan(r, s, len);
	if (len == 0)
		return HC_OK;
	need = r->npending + len;
	if (need > r->cap_pending) {
		p = hc_grow_capacity(r->cap_pending, need, 256, &cap) ? NULL : hc_realloc(r->pending, cap);
		if (!p)
			return r->status = hc_error(r->err, HC_ENOMEM,
				"%s: out of memory reading the first line", r->name);
		r->pending = p;
		r->cap_pending = cap;
	}
	memcpy(r->pending + r->npending, s, len);
	r->npending = need;
	/* Hold back no more than the decision needs: a ',' settles it, a
	 * given delimiter needs only the byte-order mark, and the sample is
	 * bounded so that a file with no line break is not held whole. */
	if (r->delim_fixed)
		return r->npending >= 3 ? start_body(r) : HC_OK;
	for (; r->scan_pos < r->npending; r->scan_pos++) {
		char c = r->pending[r->scan_pos];

		if (c == '"')
			r->pending_quote = !r->pending_quote;
		else if ((c == '\n' || c == ',') && !r->pending_quote)
			return start_body(r);
	}
	if (r->npending >= CSVREAD_SNIFF_MAX)
		return start_body(r);
	return HC_OK;
}

static int reader_finish(struct reader *r)
{
	if (r->status == HC_OK && !r->started)
		start_body(r);
	if (r->status != HC_OK)
		return r->status;
	if (r->fstate == FS_QUOTED && r->in_quote)
		return r->status = hc_error(r->err, HC_EDATA,
			"%s:%zu:%zu: unterminated quoted field: the quote opened "
			"here is never closed", r->name, r->quote_line, r->quote_column);
	if (csv_fini(&r->parser, on_field, on_record, r) != 0 && r->status == HC_OK)
		return r->status = hc_error(r->err, HC_EDATA,
			"%s:%zu:%zu: malformed quoted field at the end of the file",
			r->name, r->line, r->nfields + 1);
	if (r->status == HC_OK && r->record == 0)
		r->status = hc_error(r->err, HC_EDATA, "%s: empty file", r->name);
	return r->status;
}

static int reader_init(struct reader *r, const char *name,
		       const struct csvread_options *opt,
		       const struct csvread_handler *h, struct hc_error *err)
{
	memset(r, 0, sizeof *r);
	r->h = h;
	r->name = name;
	r->err = err;
	r->line = 1;
	r->max_field = opt && opt->max_field ? opt->max_field : CSVREAD_DEFAULT_MAX_FIELD;
	r->delim = opt && opt->delimiter ? opt->delimiter : ',';
	r->delim_fixed = opt && opt->delimiter;
	if (r->delim != ',' && r->delim != ';')
		return hc_error(err, HC_EUSAGE,
			"unsupported delimiter '%c'; expected ',' or ';'", r->delim);
	if (csv_init(&r->parser, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL) != 0)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", name);
	csv_set_realloc_func(&r->parser, hc_realloc);
	csv_set_free_func(&r->parser, hc_free);
	r->parser_live = 1;
	return HC_OK;
}

static void reader_release(struct reader *r)
{
	if (r->parser_live)
		csv_free(&r->parser);
	hc_free(r->pending);
}

int hc_csvread_buffer(const char *name, const char *data, size_t len,
		   const struct csvread_options *opt,
		   const struct csvread_handler *h, char *delimiter_used,
		   struct hc_error *err)
{
	struct reader r;
	int rc;

	rc = reader_init(&r, name, opt, h, err);
	if (rc == HC_OK) {
		reader_take(&r, data, len);
		rc = reader_finish(&r);
	}
	if (rc == HC_OK && delimiter_used)
		*delimiter_used = r.delim;
	reader_release(&r);
	return rc;
}

int hc_csvread_file(const char *path, const struct csvread_options *opt,
		 const struct csvread_handler *h, char *delimiter_used,
		 struct hc_error *err)
{
	struct reader r;
	FILE *fp = NULL;
	char *buf = NULL;
	size_t n;
	int rc;

	rc = reader_init(&r, path, opt, h, err);
	if (rc != HC_OK)
		return rc;
	buf = hc_malloc(CSVREAD_CHUNK);
	if (!buf) {
		rc = hc_error(err, HC_ENOMEM, "%s: out of memory", path);
		goto cleanup;
	}
	fp = fopen(path, "rb");
	if (!fp) {
		rc = hc_error(err, HC_EIO, "cannot open '%s': %s", path, strerror(errno));
		goto cleanup;
	}
	setvbuf(fp, NULL, _IONBF, 0);   /* we read in large chunks ourselves */
	while ((n = fread(buf, 1, CSVREAD_CHUNK, fp)) > 0) {
		rc = reader_take(&r, buf, n);
		if (rc != HC_OK)
			goto cleanup;
	}
	if (ferror(fp)) {
		rc = hc_error(err, HC_EIO, "cannot read '%s': %s", path, strerror(errno));
		goto cleanup;
	}
	rc = reader_finish(&r);
	if (rc == HC_OK && delimiter_used)
		*delimiter_used = r.delim;
cleanup:
	if (fp)
		fclose(fp);
	hc_free(buf);
	reader_release(&r);
	return rc;
}

int hc_csvread_utf8_valid(const char *str, size_t len)
{
	const unsigned char *s = (const unsigned char *)str;
	size_t i = 0, k, n;
	uint32_t cp, min;

	while (i < len) {
		unsigned char c = s[i];

		if (c < 0x80) {
			i++;
			continue;
		}
		if (c >= 0xC2 && c <= 0xDF) {
			n = 1; cp = c & 0x1F; min = 0x80;
		} else if (c >= 0xE0 && c <= 0xEF) {
			n = 2; cp = c & 0x0F; min = 0x800;
		} else if (c >= 0xF0 && c <= 0xF4) {
			n = 3; cp = c & 0x07; min = 0x10000;
		} else {
			return 0;   /* continuation byte, C0/C1 overlong lead, or > U+10FFFF */
		}
		if (len - i <= n)
			return 0;
		for (k = 1; k <= n; k++) {
			if ((s[i + k] & 0xC0) != 0x80)
				return 0;
			cp = (cp << 6) | (s[i + k] & 0x3F);
		}
		if (cp < min || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF))
			return 0;
		i += n + 1;
	}
	return 1;
}

static int is_blank(char c)
{
	return c == ' ' || c == '\t';
}

static int is_digit(char c)
{
	return c >= '0' && c <= '9';
}

/* Exact powers of ten representable in a double (10^22 is the largest). */
static const double pow10_exact[] = {
	1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
	1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22
};

/*
 * Validate the characters, then convert.  Most cells are short decimals:
 * when the significant digits fit in 2^53 and the power of ten is at most
 * 22, one IEEE multiplication or division of two exact doubles gives the
 * correctly rounded result (Clinger, 1990, "How to read floating point
 * numbers accurately", PLDI), which is what strtod would return, without
 * strtod's locale handling.  Anything else goes to strtod.  A trailing '%'
 * is folded into the exponent, so "1.23%" parses exactly as "0.0123".
 */
int hc_csvread_parse_number(const char *s, size_t len, double *value, int *had_percent)
{
	size_t i = 0, end = len, digits = 0, sig = 0, begin;
	uint64_t mant = 0;
	long e10 = 0, ex = 0;
	int neg = 0, pct = 0, exneg = 0, exact = 1;
	double v;

	while (i < end && is_blank(s[i]))
		i++;
	while (end > i && is_blank(s[end - 1]))
		end--;
	if (end > i && s[end - 1] == '%') {
		pct = 1;
		end--;
		while (end > i && is_blank(s[end - 1]))
			end--;
	}
	if (i == end)
		return -1;
	if (s[i] == '+' || s[i] == '-')
		neg = s[i++] == '-';
	begin = i;
	for (; i < end && is_digit(s[i]); i++, digits++) {
		if (mant == 0 && s[i] == '0')
			continue;
		if (sig < 19)
			mant = mant * 10 + (uint64_t)(s[i] - '0');
		else
			exact = 0;
		sig++;
	}
	if (sig > 19)
		e10 += (long)(sig - 19);
	if (i < end && s[i] == '.') {
		for (i++; i < end && is_digit(s[i]); i++, digits++) {
			if (mant == 0 && s[i] == '0') {
				e10--;
				continue;
			}
			if (sig < 19) {
				mant = mant * 10 + (uint64_t)(s[i] - '0');
				e10--;
			} else {
				exact = 0;
			}
			sig++;
		}
	}
	if (digits == 0)
		return -1;
	if (i < end && (s[i] == 'e' || s[i] == 'E')) {
		i++;
		if (i < end && (s[i] == '+' || s[i] == '-'))
			exneg = s[i++] == '-';
		if (i == end || !is_digit(s[i]))
			return -1;
		for (; i < end && is_digit(s[i]); i++)
			if (ex < 100000)
				ex = ex * 10 + (s[i] - '0');
		e10 += exneg ? -ex : ex;
	}
	if (i != end)
		return -1;
	if (pct)
		e10 -= 2;
	if (mant == 0) {
		v = 0.0;
	} else if (exact && mant <= (UINT64_C(1) << 53) && e10 >= -22 && e10 <= 22) {
		v = (double)mant;
		v = e10 < 0 ? v / pow10_exact[-e10] : v * pow10_exact[e10];
	} else {
		char buf[CSVREAD_NUMBER_MAX + 1];
		size_t n = end - begin;

		if (n > CSVREAD_NUMBER_MAX)
			return -1;
		memcpy(buf, s + begin, n);
		buf[n] = '\0';
		v = strtod(buf, NULL);   /* unsigned: the sign is applied below */
		if (pct)
			v /= 100.0;
	}
	if (neg)
		v = -v;
	if (!isfinite(v))
		return -1;
	*value = v;
	if (had_percent)
		*had_percent = pct;
	return 0;
}

int hc_csvread_is_missing(const char *s, size_t len)
{
	static const char *const markers[] = { "na", "nan", "n/a", ".", "null" };
	size_t i = 0, end = len, k, j, n;

	while (i < end && is_blank(s[i]))
		i++;
	while (end > i && is_blank(s[end - 1]))
		end--;
	n = end - i;
	if (n == 0)
		return 1;
	if (n > 4 || (s[i] != 'n' && s[i] != 'N' && s[i] != '.'))
		return 0;   /* the common case, a number, decided at once */
	for (k = 0; k < sizeof markers / sizeof markers[0]; k++) {
		if (strlen(markers[k]) != n)
			continue;
		for (j = 0; j < n; j++) {
			char c = s[i + j];

			if (c >= 'A' && c <= 'Z')
				c = (char)(c - 'A' + 'a');
			if (c != markers[k][j])
				break;
		}
		if (j == n)
			return 1;
	}
	return 0;
}

const char *hc_csvread_quote(const char *s, size_t len, char *buf)
{
	size_t i, o = 0, n = len < CSVREAD_QUOTE_MAX ? len : CSVREAD_QUOTE_MAX;

	for (i = 0; i < n; i++) {
		unsigned char c = (unsigned char)s[i];

		if (c == '\n' || c == '\r' || c == '\t') {
			buf[o++] = '\\';
			buf[o++] = c == '\n' ? 'n' : c == '\r' ? 'r' : 't';
		} else {
			buf[o++] = c < 0x20 || c == 0x7F ? '?' : (char)c;
		}
	}
	if (n < len) {
		memcpy(buf + o, "...", 3);
		o += 3;
	}
	buf[o] = '\0';
	return buf;
}

/* ASCII case folding by hand: strcasecmp follows the locale. */
int hc_csvread_header_is(const char *s, size_t len, const char *want)
{
	size_t i, n = strlen(want);

	while (len && (*s == ' ' || *s == '\t'))
		s++, len--;
	while (len && (s[len - 1] == ' ' || s[len - 1] == '\t'))
		len--;
	if (len != n)
		return 0;
	for (i = 0; i < n; i++) {
		int a = (unsigned char)s[i], b = (unsigned char)want[i];

		if (a >= 'A' && a <= 'Z')
			a += 'a' - 'A';
		if (b >= 'A' && b <= 'Z')
			b += 'a' - 'A';
		if (a != b)
			return 0;
	}
	return 1;
}
