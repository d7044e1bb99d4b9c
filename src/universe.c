/*
 * universe.c - load a return history (wide or long CSV, returns or prices).
 *
 * Memory: a wide file is read row by row into one growing buffer of doubles
 * (period-major, as the file is laid out), checked against a byte budget
 * as it grows, then transposed once into the security-major store that the
 * hot loops want.  Peak memory is therefore about twice the numbers (the
 * row buffer and its transpose), and a file too large for the budget is
 * refused while it is being read, before the memory is touched.
 * Prices become returns in place, and the missing-data policy compacts the
 * store in place, so neither step needs a third copy.
 */
#include "holdcount/universe.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

/* Daily data: a weekday is a trading day of the calendar when at least
 * this share of the dates falls on it (a weekday of a five-day week holds
 * 1/5 of them, a stray session almost none). */
#define UNIVERSE_WEEKDAY_SHARE 0.05
/* How many dropped ids a "too few left" message names. */
#define UNIVERSE_NAME_DROPPED_MAX 5

#define NO_COLUMN ((size_t)-1)

void hc_universe_options_init(struct universe_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->layout = UNIVERSE_WIDE;
	opt->values = UNIVERSE_RETURNS;
	opt->missing = UNIVERSE_MISSING_COMPLETE;
	opt->min_coverage = UNIVERSE_DEFAULT_MIN_COVERAGE;
}

/* ---- dates ------------------------------------------------------------ */

/* Days from 1970-01-01 to y-m-d in the proleptic Gregorian calendar
 * (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", 2013). */
static long days_from_civil(long y, long m, long d)
{
	long era, yoe, doy, doe;

	y -= m <= 2;
	era = (y >= 0 ? y : y - 399) / 400;
	yoe = y - era * 400;
	doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
	doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
	return era * 146097 + doe - 719468;
}

static void civil_from_days(long z, long *y, long *m, long *d)
{
	long era, doe, yoe, doy, mp;

	z += 719468;
	era = (z >= 0 ? z : z - 146096) / 146097;
	doe = z - era * 146097;
	yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
	doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
	mp = (5 * doy + 2) / 153;
	*d = doy - (153 * mp + 2) / 5 + 1;
	*m = mp < 10 ? mp + 3 : mp - 9;
	*y = yoe + era * 400 + (*m <= 2);
}

static int days_in_month(long y, long m)
{
	static const int dm[] = { 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31 };
	int leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;

	return m == 2 && leap ? 29 : dm[m - 1];
}

static long digits_at(const char *s, size_t n)
{
	long v = 0;
	size_t i;

	for (i = 0; i < n; i++) {
		if (s[i] < '0' || s[i] > '9')
			return -1;
		v = v * 10 + (s[i] - '0');
	}
	return v;
}

/* 0 ok, -1 not of the form, -2 of the form but no such day. */
static int parse_date(const char *s, size_t len, int32_t *days)
{
	long y, m, d;

	while (len && (*s == ' ' || *s == '\t'))
		s++, len--;
	while (len && (s[len - 1] == ' ' || s[len - 1] == '\t'))
		len--;
	if ((len != 10 && len != 7) || s[4] != '-' || (len == 10 && s[7] != '-'))
		return -1;
	y = digits_at(s, 4);
	m = digits_at(s + 5, 2);
	d = len == 10 ? digits_at(s + 8, 2) : 0;
	if (y < 0 || m < 0 || d < 0)
		return -1;
	if (y < 1 || m < 1 || m > 12)
		return -2;
	if (len == 7)
		d = days_in_month(y, m);
	else if (d < 1 || d > days_in_month(y, m))
		return -2;
	*days = (int32_t)days_from_civil(y, m, d);
	return 0;
}

int hc_universe_parse_date(const char *s, size_t len, int32_t *days)
{
	return parse_date(s, len, days) == 0 ? 0 : -1;
}

void hc_universe_format_date(int32_t days, char *buf)
{
	long y, m, d;

	civil_from_days(days, &y, &m, &d);
	y = ((y % 10000) + 10000) % 10000;
	buf[0] = (char)('0' + y / 1000);
	buf[1] = (char)('0' + y / 100 % 10);
	buf[2] = (char)('0' + y / 10 % 10);
	buf[3] = (char)('0' + y % 10);
	buf[4] = '-';
	buf[5] = (char)('0' + m / 10);
	buf[6] = (char)('0' + m % 10);
	buf[7] = '-';
	buf[8] = (char)('0' + d / 10);
	buf[9] = (char)('0' + d % 10);
	buf[10] = '\0';
}

/* k-th smallest (0-based) spacing between consecutive sorted dates, found
 * by bisection on the value so that no scratch copy is needed. */
static long kth_spacing(const int32_t *dates, size_t n, size_t k)
{
	long lo = 0, hi = 0, mid;
	size_t i, c;

	for (i = 1; i < n; i++)
		if (dates[i] - dates[i - 1] > hi)
			hi = dates[i] - dates[i - 1];
	while (lo < hi) {
		mid = lo + (hi - lo) / 2;
		for (c = 0, i = 1; i < n; i++)
			c += dates[i] - dates[i - 1] <= mid;
		if (c > k)
			hi = mid;
		else
			lo = mid + 1;
	}
	return lo;
}

/*
 * Periods per year from the median spacing (robust to holidays, a missing
 * month, a long weekend).  The bands around each usual frequency are wide
 * enough for month and quarter lengths; anything else is 365.25/median.
 */
double hc_universe_detect_periods(const int32_t *dates, size_t n)
{
	size_t gaps, i;
	double med;

	if (n < 2)
		return 0;
	gaps = n - 1;
	med = (double)kth_spacing(dates, n, gaps / 2);
	if (gaps % 2 == 0)
		med = (med + (double)kth_spacing(dates, n, gaps / 2 - 1)) / 2;
	if (med < 1.5) {
		/* Daily: the trading calendar is the weekdays the dates fall on,
		 * whichever they are (a Sunday-to-Thursday week is five days as a
		 * Monday-to-Friday one is).  A weekday counts when it holds at
		 * least UNIVERSE_WEEKDAY_SHARE of the dates (a stray holiday
		 * session does not); five or fewer trading days a week give the
		 * usual 252 (common practice: 5 x 52 less about 9 holidays), six
		 * give 6/5 of that, seven the calendar's 365. */
		size_t per[7] = { 0 }, used = 0;

		for (i = 0; i < n; i++)
			per[((long)dates[i] % 7 + 7 + 4) % 7]++;   /* 0 = Sunday; 1970-01-01 was a Thursday */
		for (i = 0; i < 7; i++)
			used += (double)per[i] >= UNIVERSE_WEEKDAY_SHARE * (double)n;
		return used >= 7 ? 365 : used == 6 ? 302 : 252;
	}
	if (med >= 5 && med <= 8)
		return 52;
	if (med >= 26 && med <= 35)
		return 12;
	if (med >= 85 && med <= 97)
		return 4;
	if (med >= 175 && med <= 190)
		return 2;
	if (med >= 355 && med <= 375)
		return 1;
	med = floor(365.25 / med + 0.5);
	return med < 1 ? 1 : med;
}

/* ---- the universe object ------------------------------------------------ */

void hc_universe_free(struct universe *u)
{
	size_t i;

	if (!u)
		return;
	if (u->ids)
		for (i = 0; i < u->m; i++)
			hc_free(u->ids[i]);
	hc_free(u->ids);
	hc_free(u->x);
	hc_free(u->dates);
	for (i = 0; i < u->ndropped; i++) {
		hc_free(u->dropped[i].id);
		hc_free(u->dropped[i].reason);
	}
	hc_free(u->dropped);
	hc_free(u->source);
	hc_free(u);
}

long hc_universe_find(const struct universe *u, const char *id)
{
	size_t i;

	for (i = 0; i < u->m; i++)
		if (strcmp(u->ids[i], id) == 0)
			return (long)i;
	return -1;
}

static int add_dropped(struct universe *u, size_t *cap, const char *id,
		       const char *reason)
{
	struct universe_dropped *d;
	char *idc, *rc;

	d = hc_grow(u->dropped, cap, u->ndropped, sizeof *d, 8);
	if (!d)
		return -1;
	u->dropped = d;
	idc = hc_strdup(id);
	rc = hc_strdup(reason);
	if (!idc || !rc) {
		hc_free(idc);
		hc_free(rc);
		return -1;
	}
	u->dropped[u->ndropped].id = idc;
	u->dropped[u->ndropped].reason = rc;
	u->ndropped++;
	return 0;
}

/* ---- id checks ------------------------------------------------------------ */

struct id_ref {
	const char *id;
	size_t index;
};

static int lower(int c)
{
	return c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c;
}

/* Compare ids ignoring ASCII case and surrounding blanks. */
static int id_key_cmp(const char *a, const char *b)
{
	size_t la = strlen(a), lb = strlen(b), i;

	while (*a == ' ' || *a == '\t')
		a++, la--;
	while (*b == ' ' || *b == '\t')
		b++, lb--;
	while (la && (a[la - 1] == ' ' || a[la - 1] == '\t'))
		la--;
	while (lb && (b[lb - 1] == ' ' || b[lb - 1] == '\t'))
		lb--;
	for (i = 0; i < la && i < lb; i++)
		if (lower((unsigned char)a[i]) != lower((unsigned char)b[i]))
			return lower((unsigned char)a[i]) - lower((unsigned char)b[i]);
	return la < lb ? -1 : la > lb;
}

static int id_ref_cmp(const void *pa, const void *pb)
{
	const struct id_ref *a = pa, *b = pb;
	int c = id_key_cmp(a->id, b->id);

	if (c)
		return c;
	return a->index < b->index ? -1 : a->index > b->index;
}

/*
 * Find two ids that are equal, or equal but for case and surrounding
 * blanks, by sorting on the folded key (O(M log M), not O(M^2)).  Returns
 * 0 when all distinct, 1 with *first < *second set, -1 out of memory.
 */
int hc_universe_id_clash(char *const *ids, size_t n, size_t *first, size_t *second)
{
	struct id_ref *refs;
	size_t i;
	int found = 0;

	if (n < 2)
		return 0;
	refs = hc_reallocarray(NULL, n, sizeof *refs);
	if (!refs)
		return -1;
	for (i = 0; i < n; i++) {
		refs[i].id = ids[i];
		refs[i].index = i;
	}
	qsort(refs, n, sizeof *refs, id_ref_cmp);
	for (i = 1; i < n && !found; i++) {
		if (id_key_cmp(refs[i - 1].id, refs[i].id) == 0) {
			*first = refs[i - 1].index;
			*second = refs[i].index;
			found = 1;
		}
	}
	hc_free(refs);
	return found;
}

int hc_universe_check_id(const char *name, size_t line, size_t col,
		      const char *id, size_t len, struct hc_error *err)
{
	size_t i;

	for (i = 0; i < len && (id[i] == ' ' || id[i] == '\t'); i++)
		;
	if (i == len)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: empty security id; expected a non-empty id",
			name, line, col);
	if (!hc_csvread_utf8_valid(id, len))
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: security id is not valid UTF-8", name, line, col);
	return HC_OK;
}

/* ---- loading ----------------------------------------------------------------- */

struct long_row {
	int32_t date;
	uint32_t sec;
	uint32_t line;
	double value;
};

struct loader {
	const char *name;
	const struct universe_options *opt;
	size_t budget;
	size_t name_bytes;        /* header names and ids held, counted against the budget */
	/* header */
	char **header;
	size_t ncols, cap_header;
	size_t date_col, id_col, value_col;   /* 0-based; NO_COLUMN = none */
	/* securities */
	char **ids;
	size_t m, cap_ids;
	size_t *id_line;          /* long: line of each id's first row */
	size_t *htab;             /* long: open-addressing table of index+1 */
	size_t hcap;
	/* wide: period-major rows */
	double *rows;
	int32_t *dates;
	size_t nrows, cap_rows;
	size_t prev_line;
	/* long rows */
	struct long_row *lrows;
	size_t nlrows, cap_lrows;
	/* the current data row */
	int32_t row_date;
	int row_has_date;
	size_t row_sec;
	double row_value;
	/* cells read as missing under UNIVERSE_BAD_MISSING */
	size_t nbad;
	char bad_first[192];
};

static void loader_release(struct loader *L)
{
	size_t i;

	for (i = 0; i < L->ncols; i++)
		hc_free(L->header[i]);
	hc_free(L->header);
	for (i = 0; i < L->m; i++)
		hc_free(L->ids[i]);
	hc_free(L->ids);
	hc_free(L->id_line);
	hc_free(L->htab);
	hc_free(L->rows);
	hc_free(L->dates);
	hc_free(L->lrows);
}

static double mib(double bytes)
{
	return bytes / (1024.0 * 1024.0);
}

static int too_large(const struct loader *L, double need, struct hc_error *err)
{
	return hc_error(err, HC_ENOMEM,
		"%s: universe too large: needs at least %.1f MiB, budget %.1f MiB",
		L->name, ceil(10 * mib(need)) / 10, floor(10 * mib((double)L->budget)) / 10);
}

/*
 * Count one name (a header field or a long layout's id) against the
 * budget before it is kept: its bytes, its pointer in a doubling array
 * (up to twice over) and the allocator's own header.  The names are held
 * until the numbers are built, so the rows' budget is what they leave
 * (six million ids once reached 475 MB under a 10 MiB budget, and a
 * header streamed from a FIFO grew without end).
 */
#define NAME_OVERHEAD (2 * sizeof(char *) + 16)

static int count_name(struct loader *L, const struct csvread_field *f, struct hc_error *err)
{
	size_t cost = f->len + 1 + NAME_OVERHEAD + (L->opt->layout == UNIVERSE_LONG ? 3 * sizeof(size_t) : 0);

	if (L->name_bytes + cost > L->budget || L->name_bytes + cost < L->name_bytes)
		return hc_error(err, HC_ENOMEM,
			"%s:%zu:%zu: universe too large: its names alone need at least %.1f MiB, budget %.1f MiB",
			L->name, f->line, f->column, ceil(10 * mib((double)L->name_bytes + (double)cost)) / 10,
			floor(10 * mib((double)L->budget)) / 10);
	L->name_bytes += cost;
	return HC_OK;
}

static int header_field(struct loader *L, const struct csvread_field *f,
			struct hc_error *err)
{
	char **h;
	char *s;
	int rc;

	if ((rc = count_name(L, f, err)) != HC_OK)
		return rc;

	h = hc_grow(L->header, &L->cap_header, L->ncols, sizeof *h, 64);
	if (!h)
		return hc_error(err, HC_ENOMEM, "%s: out of memory reading the header", L->name);
	L->header = h;
	s = hc_strndup(f->text, f->len);
	if (!s)
		return hc_error(err, HC_ENOMEM, "%s: out of memory reading the header", L->name);
	L->header[L->ncols++] = s;
	return HC_OK;
}

/* The column whose header equals want (case and blanks ignored). */
static size_t find_column(const struct loader *L, const char *want)
{
	size_t i;

	for (i = 0; i < L->ncols; i++)
		if (id_key_cmp(L->header[i], want) == 0)
			return i;
	return NO_COLUMN;
}

static int no_column(const struct loader *L, const char *what, const char *want,
		     struct hc_error *err)
{
	return hc_error(err, HC_EDATA,
		"%s:1: no column named '%s' in the header; expected it to hold %s",
		L->name, want, what);
}

static int wide_header(struct loader *L, struct hc_error *err)
{
	size_t i, a, b;
	int rc;

	L->date_col = 0;
	if (L->opt->date_column) {
		L->date_col = find_column(L, L->opt->date_column);
		if (L->date_col == NO_COLUMN)
			return no_column(L, "the dates", L->opt->date_column, err);
	}
	if (L->ncols < 2)
		return hc_error(err, HC_EDATA,
			"%s:1: the header has no security ids; expected a date column then one column per security",
			L->name);
	L->ids = hc_reallocarray(NULL, L->ncols - 1, sizeof *L->ids);
	if (!L->ids)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	for (i = 0; i < L->ncols; i++) {
		if (i == L->date_col)
			continue;
		rc = hc_universe_check_id(L->name, 1, i + 1, L->header[i], strlen(L->header[i]), err);
		if (rc != HC_OK)
			return rc;
		L->ids[L->m++] = L->header[i];
		L->header[i] = NULL;   /* now owned by ids */
	}
	rc = hc_universe_id_clash(L->ids, L->m, &a, &b);
	if (rc < 0)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	if (rc > 0) {
		size_t ca = a + 1 + (a >= L->date_col), cb = b + 1 + (b >= L->date_col);

		if (strcmp(L->ids[a], L->ids[b]) == 0)
			return hc_error(err, HC_EDATA,
				"%s:1:%zu: duplicate security id '%s' (also in column %zu); expected unique ids",
				L->name, cb, L->ids[b], ca);
		return hc_error(err, HC_EDATA,
			"%s:1:%zu: security id '%s' differs only in case or surrounding spaces from '%s' in column %zu; expected distinct ids",
			L->name, cb, L->ids[b], L->ids[a], ca);
	}
	return HC_OK;
}

static int long_header(struct loader *L, struct hc_error *err)
{
	const struct universe_options *o = L->opt;
	const char *dn = o->date_column ? o->date_column : "date";
	const char *in = o->id_column ? o->id_column : "id";
	const char *vn = o->value_column ? o->value_column : "value";

	L->date_col = find_column(L, dn);
	if (L->date_col == NO_COLUMN)
		return no_column(L, "the dates", dn, err);
	L->id_col = find_column(L, in);
	if (L->id_col == NO_COLUMN)
		return no_column(L, "the security ids", in, err);
	L->value_col = find_column(L, vn);
	if (L->value_col == NO_COLUMN)
		return no_column(L, "the values", vn, err);
	if (L->date_col == L->id_col || L->date_col == L->value_col || L->id_col == L->value_col)
		return hc_error(err, HC_EUSAGE,
			"%s: the date, id and value columns must be three different columns", L->name);
	return HC_OK;
}

/* A spreadsheet's error value (#N/A, #DIV/0!, #VALUE!, ...): a cell whose
 * first non-blank character is '#'. */
static int spreadsheet_error(const char *s, size_t len)
{
	size_t i = 0;

	while (i < len && (s[i] == ' ' || s[i] == '\t'))
		i++;
	return i < len && s[i] == '#';
}

/* A bad cell under UNIVERSE_BAD_MISSING: missing, counted, the first named. */
static int bad_cell(struct loader *L, const struct csvread_field *f, const char *why, double *out)
{
	char q[CSVREAD_QUOTE_BUF];

	if (L->nbad++ == 0)
		snprintf(L->bad_first, sizeof L->bad_first, "%s:%zu:%zu: '%s' (%s)", L->name, f->line, f->column,
			 hc_csvread_quote(f->text, f->len, q), why);
	*out = NAN;
	return HC_OK;
}

#define BAD_CELLS_HINT " (--bad-cells missing reads spreadsheet errors and non-positive prices as missing)"

/* Parse one value cell: a number, a percent or a missing marker. */
static int parse_cell(struct loader *L, const struct csvread_field *f,
		      double *out, struct hc_error *err)
{
	char q[CSVREAD_QUOTE_BUF];
	int pct = 0, bad_missing = L->opt->bad_cells == UNIVERSE_BAD_MISSING;
	double v;

	if (hc_csvread_is_missing(f->text, f->len)) {
		*out = NAN;
		return HC_OK;
	}
	if (hc_csvread_parse_number(f->text, f->len, &v, &pct) != 0) {
		if (spreadsheet_error(f->text, f->len)) {
			if (bad_missing)
				return bad_cell(L, f, "a spreadsheet error value", out);
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: expected a number or a missing marker, found the spreadsheet error '%s'"
				BAD_CELLS_HINT, L->name, f->line, f->column, hc_csvread_quote(f->text, f->len, q));
		}
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: expected a number or a missing marker, found '%s'",
			L->name, f->line, f->column, hc_csvread_quote(f->text, f->len, q));
	}
	if (L->opt->values != UNIVERSE_RETURNS) {
		if (pct)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: expected a price, found the percent '%s'",
				L->name, f->line, f->column, hc_csvread_quote(f->text, f->len, q));
		if (v <= 0 && bad_missing)
			return bad_cell(L, f, v == 0 ? "a zero price" : "a negative price", out);
		if (v <= 0)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: expected a positive price, found '%s'" BAD_CELLS_HINT,
				L->name, f->line, f->column, hc_csvread_quote(f->text, f->len, q));
	} else {
		if (L->opt->percent && !pct)
			v /= 100.0;
		if (fabs(v) > HC_UNIVERSE_MAX_RETURN)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: expected a return of at most %g in size (%.0f%%), found '%s'",
				L->name, f->line, f->column, HC_UNIVERSE_MAX_RETURN,
				HC_UNIVERSE_MAX_RETURN * 100.0, hc_csvread_quote(f->text, f->len, q));
	}
	*out = v;
	return HC_OK;
}

static int date_cell(const struct loader *L, const struct csvread_field *f,
		     int32_t *out, struct hc_error *err)
{
	char q[CSVREAD_QUOTE_BUF];
	int rc = parse_date(f->text, f->len, out);

	if (rc == 0)
		return HC_OK;
	return hc_error(err, HC_EDATA,
		"%s:%zu:%zu: expected a date as YYYY-MM-DD or YYYY-MM, found '%s'%s",
		L->name, f->line, f->column, hc_csvread_quote(f->text, f->len, q),
		rc == -2 ? " (no such day)" : "");
}

/* Make room for one more wide row, within the budget. */
static int wide_grow(struct loader *L, struct hc_error *err)
{
	size_t row_bytes, max_rows, nc;
	double *r;
	int32_t *d;

	/* Each row costs its doubles twice at the peak (buffer + transpose). */
	if (hc_mul_size(L->m, 2 * sizeof(double), &row_bytes))
		return too_large(L, (double)L->m * 16.0, err);
	max_rows = (L->budget - L->name_bytes) / row_bytes;
	if (L->nrows + 1 > max_rows)
		return too_large(L, (double)(L->nrows + 1) * (double)row_bytes, err);
	if (hc_grow_capacity(L->cap_rows, L->nrows + 1, 64, &nc) || nc > max_rows)
		nc = max_rows;
	r = hc_reallocarray(L->rows, nc, L->m * sizeof(double));
	if (!r)
		return hc_error(err, HC_ENOMEM, "%s: out of memory reading row %zu", L->name, L->nrows + 1);
	L->rows = r;
	hc_memory_advise_huge(r, nc * L->m * sizeof(double));
	d = hc_reallocarray(L->dates, nc, sizeof *d);
	if (!d)
		return hc_error(err, HC_ENOMEM, "%s: out of memory reading row %zu", L->name, L->nrows + 1);
	L->dates = d;
	L->cap_rows = nc;
	return HC_OK;
}

static int wide_field(struct loader *L, const struct csvread_field *f,
		      struct hc_error *err)
{
	size_t col = f->column - 1, j;

	if (col >= L->ncols)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has more fields than the header's %zu; expected %zu fields",
			L->name, f->line, f->column, L->ncols, L->ncols);
	if (col == 0 && L->nrows == L->cap_rows) {
		int rc = wide_grow(L, err);

		if (rc != HC_OK)
			return rc;
	}
	if (col == L->date_col) {
		L->row_has_date = 1;
		return date_cell(L, f, &L->row_date, err);
	}
	j = col - (col > L->date_col);
	return parse_cell(L, f, &L->rows[L->nrows * L->m + j], err);
}

static int wide_record(struct loader *L, size_t nfields, size_t line,
		       struct hc_error *err)
{
	char a[11], b[11];

	if (nfields < L->ncols)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has %zu fields; expected %zu as in the header",
			L->name, line, nfields, nfields, L->ncols);
	if (L->nrows > 0) {
		int32_t prev = L->dates[L->nrows - 1];

		if (L->row_date == prev)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: duplicate date %s (also on line %zu); expected each date once",
				L->name, line, L->date_col + 1,
				(hc_universe_format_date(prev, a), a), L->prev_line);
		if (L->row_date < prev) {
			hc_universe_format_date(L->row_date, a);
			hc_universe_format_date(prev, b);
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: date %s comes after %s on line %zu; expected increasing dates",
				L->name, line, L->date_col + 1, a, b, L->prev_line);
		}
	}
	L->dates[L->nrows++] = L->row_date;
	L->prev_line = line;
	L->row_has_date = 0;
	return HC_OK;
}

static size_t hash_id(const char *s, size_t len)
{
	uint64_t h = UINT64_C(14695981039346656037);   /* FNV-1a */
	size_t i;

	for (i = 0; i < len; i++) {
		h ^= (unsigned char)s[i];
		h *= UINT64_C(1099511628211);
	}
	return (size_t)h;
}

static int long_rehash(struct loader *L)
{
	size_t nc = L->hcap ? L->hcap * 2 : 256, i, k;
	size_t *t = hc_calloc(nc, sizeof *t);

	if (!t)
		return -1;
	for (i = 0; i < L->m; i++) {
		k = hash_id(L->ids[i], strlen(L->ids[i])) & (nc - 1);
		while (t[k])
			k = (k + 1) & (nc - 1);
		t[k] = i + 1;
	}
	hc_free(L->htab);
	L->htab = t;
	L->hcap = nc;
	return 0;
}

/* Index of the id, adding it when new. */
static int long_id(struct loader *L, const struct csvread_field *f,
		   size_t *sec, struct hc_error *err)
{
	size_t k;
	int rc;

	if (2 * (L->m + 1) > L->hcap && long_rehash(L) != 0)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	k = hash_id(f->text, f->len) & (L->hcap - 1);
	for (; L->htab[k]; k = (k + 1) & (L->hcap - 1)) {
		const char *id = L->ids[L->htab[k] - 1];

		if (strlen(id) == f->len && memcmp(id, f->text, f->len) == 0) {
			*sec = L->htab[k] - 1;
			return HC_OK;
		}
	}
	rc = hc_universe_check_id(L->name, f->line, f->column, f->text, f->len, err);
	if (rc == HC_OK)
		rc = count_name(L, f, err);
	if (rc != HC_OK)
		return rc;
	if (L->m == L->cap_ids) {
		size_t nc;
		char **ids = NULL;
		size_t *lines;

		if (!hc_grow_capacity(L->cap_ids, L->m + 1, 64, &nc))
			ids = hc_reallocarray(L->ids, nc, sizeof *ids);
		if (!ids)
			return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
		L->ids = ids;
		lines = hc_reallocarray(L->id_line, nc, sizeof *lines);
		if (!lines)
			return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
		L->id_line = lines;
		L->cap_ids = nc;
	}
	L->ids[L->m] = hc_strndup(f->text, f->len);
	if (!L->ids[L->m])
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	L->id_line[L->m] = f->line;
	L->htab[k] = L->m + 1;
	*sec = L->m++;
	return HC_OK;
}

static int long_field(struct loader *L, const struct csvread_field *f,
		      struct hc_error *err)
{
	size_t col = f->column - 1;

	if (col >= L->ncols)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has more fields than the header's %zu; expected %zu fields",
			L->name, f->line, f->column, L->ncols, L->ncols);
	if (col == L->date_col)
		return date_cell(L, f, &L->row_date, err);
	if (col == L->id_col)
		return long_id(L, f, &L->row_sec, err);
	if (col == L->value_col)
		return parse_cell(L, f, &L->row_value, err);
	return HC_OK;
}

static int long_record(struct loader *L, size_t nfields, size_t line,
		       struct hc_error *err)
{
	struct long_row *r;

	if (nfields < L->ncols)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has %zu fields; expected %zu as in the header",
			L->name, line, nfields, nfields, L->ncols);
	if (L->nlrows == L->cap_lrows) {
		size_t nc;
		double need;

		if (hc_grow_capacity(L->cap_lrows, L->nlrows + 1, 256, &nc))
			nc = L->cap_lrows + 1;
		need = (double)nc * (double)(sizeof *r + sizeof(double)) + (double)L->name_bytes;
		if (need > (double)L->budget) {
			nc = L->cap_lrows + 1;
			need = (double)nc * (double)(sizeof *r + sizeof(double)) + (double)L->name_bytes;
			if (need > (double)L->budget)
				return too_large(L, need, err);
		}
		r = hc_reallocarray(L->lrows, nc, sizeof *r);
		if (!r)
			return hc_error(err, HC_ENOMEM, "%s: out of memory reading line %zu", L->name, line);
		L->lrows = r;
		L->cap_lrows = nc;
	}
	r = &L->lrows[L->nlrows++];
	r->date = L->row_date;
	r->sec = (uint32_t)L->row_sec;
	r->line = (uint32_t)line;
	r->value = L->row_value;
	return HC_OK;
}

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct loader *L = ctx;

	if (f->record == 0)
		return header_field(L, f, err);
	return L->opt->layout == UNIVERSE_LONG ? long_field(L, f, err) : wide_field(L, f, err);
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line,
		     struct hc_error *err)
{
	struct loader *L = ctx;

	if (record == 0)
		return L->opt->layout == UNIVERSE_LONG ? long_header(L, err) : wide_header(L, err);
	return L->opt->layout == UNIVERSE_LONG ? long_record(L, nfields, line, err)
					       : wide_record(L, nfields, line, err);
}

/* ---- from rows to the security-major store -------------------------------- */

/* Transpose the t x m period-major rows into m x t, in cache-sized tiles. */
static void transpose(const double *rows, double *x, size_t t, size_t m)
{
	const size_t B = 32;
	size_t i0, k0, i, k;

	for (k0 = 0; k0 < t; k0 += B)
		for (i0 = 0; i0 < m; i0 += B)
			for (i = i0; i < i0 + B && i < m; i++)
				for (k = k0; k < k0 + B && k < t; k++)
					x[i * t + k] = rows[k * m + i];
}

static int wide_finish(struct loader *L, struct universe *u, struct hc_error *err)
{
	size_t n;

	if (hc_mul_size(L->m, L->nrows, &n))
		return too_large(L, (double)L->m * (double)L->nrows * 8.0, err);
	u->x = hc_reallocarray(NULL, n ? n : 1, sizeof(double));
	if (!u->x)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	hc_memory_advise_huge(u->x, n * sizeof(double));
	transpose(L->rows, u->x, L->nrows, L->m);
	hc_free(L->rows);
	L->rows = NULL;
	u->dates = L->dates;
	L->dates = NULL;
	u->t = L->nrows;
	return HC_OK;
}

static int long_row_cmp(const void *pa, const void *pb)
{
	const struct long_row *a = pa, *b = pb;

	if (a->sec != b->sec)
		return a->sec < b->sec ? -1 : 1;
	if (a->date != b->date)
		return a->date < b->date ? -1 : 1;
	return a->line < b->line ? -1 : a->line > b->line;
}

static int int32_cmp(const void *pa, const void *pb)
{
	int32_t a = *(const int32_t *)pa, b = *(const int32_t *)pb;

	return a < b ? -1 : a > b;
}

/* Sort the rows by (security, date), catch duplicates, lay out the store. */
static int long_finish(struct loader *L, struct universe *u, struct hc_error *err)
{
	size_t i, t = 0, n, a, b;
	int32_t *d;
	char ds[11];
	int rc;

	rc = hc_universe_id_clash(L->ids, L->m, &a, &b);
	if (rc < 0)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	if (rc > 0)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: security id '%s' differs only in case or surrounding spaces from '%s' (line %zu); expected distinct ids",
			L->name, L->id_line[b], L->id_col + 1, L->ids[b], L->ids[a], L->id_line[a]);
	if (L->nlrows > 1)
		qsort(L->lrows, L->nlrows, sizeof *L->lrows, long_row_cmp);
	for (i = 1; i < L->nlrows; i++) {
		if (L->lrows[i].sec == L->lrows[i - 1].sec && L->lrows[i].date == L->lrows[i - 1].date) {
			hc_universe_format_date(L->lrows[i].date, ds);
			return hc_error(err, HC_EDATA,
				"%s:%u:%zu: second row for security '%s' on %s (first on line %u); expected one row per date and security",
				L->name, L->lrows[i].line, L->date_col + 1, L->ids[L->lrows[i].sec], ds, L->lrows[i - 1].line);
		}
	}
	d = hc_reallocarray(NULL, L->nlrows ? L->nlrows : 1, sizeof *d);
	if (!d)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	for (i = 0; i < L->nlrows; i++)
		d[i] = L->lrows[i].date;
	if (L->nlrows > 1)
		qsort(d, L->nlrows, sizeof *d, int32_cmp);
	for (i = 0; i < L->nlrows; i++)
		if (t == 0 || d[i] != d[t - 1])
			d[t++] = d[i];
	u->dates = d;
	u->t = t;
	if (hc_mul_size(L->m, t, &n) || (double)n * 8.0 > (double)L->budget)
		return too_large(L, (double)L->m * (double)t * 8.0, err);
	u->x = hc_reallocarray(NULL, n ? n : 1, sizeof(double));
	if (!u->x)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	for (i = 0; i < n; i++)
		u->x[i] = NAN;
	/* Rows are sorted by date within each security: one merge walk. */
	for (i = 0; i < L->nlrows; ) {
		uint32_t s = L->lrows[i].sec;
		size_t k = 0;

		for (; i < L->nlrows && L->lrows[i].sec == s; i++) {
			while (u->dates[k] != L->lrows[i].date)
				k++;
			u->x[(size_t)s * t + k] = L->lrows[i].value;
		}
	}
	return HC_OK;
}

/* ---- after loading: returns, policy, checks ------------------------------- */

/* Prices to returns in place: each security's t prices become t-1 returns
 * at the front of its new, shorter block (writes never pass the reads). */
static void prices_to_returns(struct universe *u, int logret)
{
	size_t i, k, t = u->t, n = t - 1;

	for (i = 0; i < u->m; i++) {
		const double *p = u->x + i * t;
		double *r = u->x + i * n;

		for (k = 0; k < n; k++) {
			double a = p[k], b = p[k + 1];

			r[k] = logret ? log(b / a) : b / a - 1.0;
		}
	}
	memmove(u->dates, u->dates + 1, n * sizeof *u->dates);
	u->t = n;
}

/* ---- calendar periods (universe_options.frequency) ---- */

/* The first day of the week: the day after the run of weekdays the dates
 * use least (Saturday-Sunday for a Monday-Friday calendar gives Monday,
 * Friday-Saturday for Sunday-Thursday gives Sunday); Monday when every
 * weekday is used alike.  Weekday 0 is Monday (1970-01-01 was a Thursday). */
static int week_start(const int32_t *dates, size_t t)
{
	size_t count[7] = { 0 }, k, least;
	int w, start = 0;

	for (k = 0; k < t; k++)
		count[(((long)dates[k] + 3) % 7 + 7) % 7]++;
	least = count[0];
	for (w = 1; w < 7; w++)
		if (count[w] < least)
			least = count[w];
	/* the start: a day used more than least right after one used least */
	for (w = 0; w < 7; w++)
		if (count[w] > least && count[(w + 6) % 7] == least) {
			start = w;
			break;
		}
	return start;
}

/* The calendar period of day d: weeks counted from start, months, quarters. */
static long period_key(int32_t d, int freq, int start)
{
	long y, m, day;

	if (freq == UNIVERSE_FREQ_WEEKLY) {
		long w = (((long)d + 3) % 7 + 7) % 7;   /* 0 = Monday */
		long since = (w - start + 7) % 7;       /* days since the week's first day */

		return ((long)d - since) / 7 + ((long)d - since < 0 ? -1 : 0);
	}
	civil_from_days(d, &y, &m, &day);
	return freq == UNIVERSE_FREQ_MONTHLY ? y * 12 + (m - 1) : y * 4 + (m - 1) / 3;
}

/*
 * Convert u's periods to calendar periods in place (dates ascending):
 * prices take the last price observed in each period, returns compound,
 * (1 + r_1)...(1 + r_k) - 1 over the returns observed in it (missing when
 * none is).  Each period's date is the last date read in it.
 */
static int to_calendar(struct universe *u, int freq, int prices)
{
	size_t t = u->t, i, k, g, n = 0;
	int start = freq == UNIVERSE_FREQ_WEEKLY ? week_start(u->dates, t) : 0;
	size_t *group_end = NULL;

	if (t == 0)
		return 0;
	/* groups: the index one past each period's last row */
	group_end = hc_mallocarray(t, sizeof *group_end);
	if (!group_end)
		return -1;
	for (k = 1; k <= t; k++)
		if (k == t || period_key(u->dates[k], freq, start) != period_key(u->dates[k - 1], freq, start))
			group_end[n++] = k;
	for (i = 0; i < u->m; i++) {
		double *x = u->x + i * t, *y = u->x + i * n;   /* writes never pass the reads */
		size_t first = 0;

		for (g = 0; g < n; g++) {
			double v = NAN, c = 1.0;
			int seen = 0;

			for (k = first; k < group_end[g]; k++) {
				if (isnan(x[k]))
					continue;
				seen = 1;
				if (prices)
					v = x[k];
				else
					c *= 1.0 + x[k];
			}
			y[g] = !seen ? NAN : prices ? v : c - 1.0;
			first = group_end[g];
		}
	}
	for (g = 0; g < n; g++)
		u->dates[g] = u->dates[group_end[g] - 1];
	u->t = n;
	hc_free(group_end);
	return 0;
}

/* One step of a compacting pass over the securities: drop security i,
 * recording reason why in the dropped list (cap: that list's capacity),
 * or, when why is NULL, move its returns and id down to slot *keep and
 * count it kept.  HC_ENOMEM when the dropped list cannot grow. */
static int keep_or_drop(struct universe *u, size_t i, const char *why, size_t *keep,
			size_t *cap, struct hc_error *err)
{
	size_t t = u->t;

	if (why) {
		if (add_dropped(u, cap, u->ids[i], why) != 0)
			return hc_error(err, HC_ENOMEM, "out of memory");
		hc_free(u->ids[i]);
		u->ids[i] = NULL;
		return HC_OK;
	}
	if (*keep != i) {
		memmove(u->x + *keep * t, u->x + i * t, t * sizeof(double));
		u->ids[*keep] = u->ids[i];
		u->ids[i] = NULL;
	}
	(*keep)++;
	return HC_OK;
}

static size_t count_missing(const double *x, size_t t)
{
	size_t k, c = 0;

	for (k = 0; k < t; k++)
		c += isnan(x[k]) != 0;
	return c;
}

/* Keep security i when the policy allows; record why not. */
static int apply_policy(struct universe *u, int missing, double min_coverage,
			struct hc_error *err)
{
	size_t i, keep = 0, t = u->t, miss, cap = u->ndropped;
	char reason[160];
	int rc;

	for (i = 0; i < u->m; i++) {
		double *xi = u->x + i * t;
		int ok;

		miss = count_missing(xi, t);
		if (missing == UNIVERSE_MISSING_COMPLETE) {
			ok = miss == 0;
			snprintf(reason, sizeof reason, "missing %zu of %zu periods", miss, t);
		} else if (missing == UNIVERSE_MISSING_PAIRWISE) {
			double cov = t ? (double)(t - miss) / (double)t : 0;

			ok = cov >= min_coverage;
			snprintf(reason, sizeof reason,
				 "coverage %.1f%% below the minimum %.1f%% (missing %zu of %zu periods)",
				 100 * cov, 100 * min_coverage, miss, t);
		} else {
			ok = 1;
		}
		if ((rc = keep_or_drop(u, i, ok ? NULL : reason, &keep, &cap, err)) != HC_OK)
			return rc;
	}
	u->m = keep;
	u->has_missing = 0;
	for (i = 0; i < keep * t && !u->has_missing; i++)
		u->has_missing = isnan(u->x[i]) != 0;
	return HC_OK;
}

static const char *policy_name(int missing)
{
	return missing == UNIVERSE_MISSING_COMPLETE ? "the complete-data policy"
	     : missing == UNIVERSE_MISSING_PAIRWISE ? "the pairwise policy's minimum coverage"
	     : "the keep-all policy";
}

static int too_few(const struct universe *u, const char *name, int missing,
		   struct hc_error *err)
{
	char list[512];
	size_t i, used = 0;

	list[0] = '\0';
	for (i = 0; i < u->ndropped && i < UNIVERSE_NAME_DROPPED_MAX; i++) {
		int n = snprintf(list + used, sizeof list - used, "%s'%s': %s",
				 i ? "; " : "", u->dropped[i].id, u->dropped[i].reason);

		if (n < 0 || (size_t)n >= sizeof list - used) {
			/* snprintf left a cut entry: drop it, so the list
			 * ends at the last whole entry and "; ..." fits */
			list[used] = '\0';
			break;
		}
		used += (size_t)n;
	}
	if ((i < u->ndropped) && used + sizeof "; ..." <= sizeof list)
		memcpy(list + used, "; ...", sizeof "; ...");
	if (u->ndropped == 0)
		return hc_error(err, HC_EDATA,
			"%s: only %zu security in the file; expected at least 2",
			name, u->m);
	return hc_error(err, HC_EDATA,
		"%s: %zu of %zu securities left after %zu dropped under %s (%s); expected at least 2",
		name, u->m, u->m_read, u->ndropped, policy_name(missing), list);
}

/* A constant series has no risk to diversify and breaks correlations. */
static int check_variation(const struct universe *u, const char *name,
			   struct hc_error *err)
{
	size_t i, k, obs;
	char d[11];

	for (i = 0; i < u->m; i++) {
		const double *xi = u->x + i * u->t;
		double first = NAN;
		int varies = 0;

		for (k = 0, obs = 0; k < u->t; k++) {
			if (isnan(xi[k]))
				continue;
			if (!isfinite(xi[k])) {
				hc_universe_format_date(u->dates[k], d);
				return hc_error(err, HC_EDATA,
					"%s: security '%s' has an infinite return on %s; expected finite values",
					name, u->ids[i], d);
			}
			/* returns computed from prices; return cells were
			 * checked where they were read */
			if (fabs(xi[k]) > HC_UNIVERSE_MAX_RETURN) {
				hc_universe_format_date(u->dates[k], d);
				return hc_error(err, HC_EDATA,
					"%s: security '%s' has a return of %g on %s; expected at most %g in size",
					name, u->ids[i], xi[k], d, HC_UNIVERSE_MAX_RETURN);
			}
			if (obs++ == 0)
				first = xi[k];
			else if (xi[k] != first)
				varies = 1;
		}
		if (!varies && obs >= 2)
			return hc_error(err, HC_EDATA,
				"%s: security '%s' has zero variance (the same return %.10g in all %zu periods); expected a varying series",
				name, u->ids[i], first, obs);
	}
	return HC_OK;
}

static int finish(struct loader *L, struct universe *u, struct hc_error *err)
{
	const struct universe_options *o = L->opt;
	int rc;

	u->m = L->m;
	u->m_read = L->m;
	u->ids = L->ids;
	L->ids = NULL;
	L->m = 0;
	if (u->t == 0)
		return hc_error(err, HC_EDATA, "%s: no data rows after the header; expected at least %d",
				L->name, o->values == UNIVERSE_RETURNS ? 2 : 3);
	u->bad_cells = L->nbad;
	memcpy(u->bad_first, L->bad_first, sizeof u->bad_first);
	u->periods_read = o->values == UNIVERSE_RETURNS ? u->t : u->t - 1;
	if (o->frequency != UNIVERSE_FREQ_AS_READ) {
		if (hc_memory_check(L->budget, (double)u->m * (double)u->t * 8.0, (double)u->t * 8.0, err,
				    "%s: the calendar periods of %zu dates", L->name, u->t))
			return HC_ENOMEM;
		if (to_calendar(u, o->frequency, o->values != UNIVERSE_RETURNS))
			return hc_error(err, HC_ENOMEM, "%s: out of memory", L->name);
	}
	if (o->values != UNIVERSE_RETURNS)
		prices_to_returns(u, o->values == UNIVERSE_PRICES_LOG);
	if (u->t < 2)
		return hc_error(err, HC_EDATA,
			"%s: only %zu period of returns%s; expected at least 2",
			L->name, u->t, o->values == UNIVERSE_RETURNS ? "" : " (the first price only starts the series)");
	if (u->m < 2)
		return too_few(u, L->name, o->missing, err);
	rc = apply_policy(u, o->missing, o->min_coverage, err);
	if (rc != HC_OK)
		return rc;
	if (u->m < 2)
		return too_few(u, L->name, o->missing, err);
	rc = check_variation(u, L->name, err);
	if (rc != HC_OK)
		return rc;
	if (o->periods_per_year > 0) {
		u->periods_per_year = o->periods_per_year;
	} else {
		u->periods_per_year = hc_universe_detect_periods(u->dates, u->t);
		u->periods_detected = 1;
	}
	return HC_OK;
}

static int check_options(const struct universe_options *o, struct hc_error *err)
{
	if (o->layout != UNIVERSE_WIDE && o->layout != UNIVERSE_LONG)
		return hc_error(err, HC_EUSAGE, "unknown layout %d", o->layout);
	if (o->values < UNIVERSE_RETURNS || o->values > UNIVERSE_PRICES_LOG)
		return hc_error(err, HC_EUSAGE, "unknown kind of values %d", o->values);
	if (o->missing < UNIVERSE_MISSING_COMPLETE || o->missing > UNIVERSE_MISSING_KEEP)
		return hc_error(err, HC_EUSAGE, "unknown missing-data policy %d", o->missing);
	if (!(o->min_coverage > 0 && o->min_coverage <= 1))
		return hc_error(err, HC_EUSAGE,
			"minimum coverage %g is out of range; expected a fraction in (0, 1]", o->min_coverage);
	if (!(o->periods_per_year >= 0) || isinf(o->periods_per_year))
		return hc_error(err, HC_EUSAGE,
			"periods per year %g is out of range; expected a positive number", o->periods_per_year);
	if (o->percent && o->values != UNIVERSE_RETURNS)
		return hc_error(err, HC_EUSAGE, "percent cells and prices exclude each other; expected one of them");
	if (o->layout == UNIVERSE_WIDE && (o->id_column || o->value_column))
		return hc_error(err, HC_EUSAGE, "id and value column names apply only to the long layout");
	if (o->delimiter && o->delimiter != ',' && o->delimiter != ';')
		return hc_error(err, HC_EUSAGE, "unsupported delimiter '%c'; expected ',' or ';'", o->delimiter);
	if (o->bad_cells != UNIVERSE_BAD_REFUSE && o->bad_cells != UNIVERSE_BAD_MISSING)
		return hc_error(err, HC_EUSAGE, "unknown treatment of bad cells %d", o->bad_cells);
	if (o->frequency < UNIVERSE_FREQ_AS_READ || o->frequency > UNIVERSE_FREQ_QUARTERLY)
		return hc_error(err, HC_EUSAGE, "unknown frequency %d", o->frequency);
	return HC_OK;
}

static int load(struct universe **out, const char *name, const char *path,
		const char *data, size_t len, const struct universe_options *opt,
		struct hc_error *err)
{
	struct universe_options defaults;
	struct csvread_options copt;
	struct csvread_handler h;
	struct loader L;
	struct universe *u = NULL;
	int rc;

	*out = NULL;
	if (!opt) {
		hc_universe_options_init(&defaults);
		opt = &defaults;
	}
	rc = check_options(opt, err);
	if (rc != HC_OK)
		return rc;
	memset(&L, 0, sizeof L);
	L.name = name;
	L.opt = opt;
	L.budget = opt->max_bytes ? opt->max_bytes : hc_memory_available();
	hc_csvread_options_init(&copt);
	copt.delimiter = opt->delimiter;
	h.field = on_field;
	h.record = on_record;
	h.ctx = &L;
	u = hc_calloc(1, sizeof *u);
	if (!u) {
		rc = hc_error(err, HC_ENOMEM, "%s: out of memory", name);
		goto cleanup;
	}
	rc = path ? hc_csvread_file(path, &copt, &h, NULL, err)
		  : hc_csvread_buffer(name, data, len, &copt, &h, NULL, err);
	if (rc != HC_OK)
		goto cleanup;
	if (opt->layout == UNIVERSE_LONG)
		rc = long_finish(&L, u, err);
	else
		rc = wide_finish(&L, u, err);
	if (rc != HC_OK)
		goto cleanup;
	rc = finish(&L, u, err);
	if (rc != HC_OK)
		goto cleanup;
	u->source = hc_strdup(name);
	if (!u->source) {
		rc = hc_error(err, HC_ENOMEM, "%s: out of memory", name);
		goto cleanup;
	}
	u->max_bytes = opt->max_bytes;
	*out = u;
	u = NULL;
cleanup:
	if (u && !u->ids) {
		u->ids = L.ids;   /* not yet handed over: free them with u */
		u->m = L.m;
		L.ids = NULL;
		L.m = 0;
	}
	hc_universe_free(u);
	loader_release(&L);
	return rc;
}

int hc_universe_load(struct universe **out, const char *path,
		  const struct universe_options *opt, struct hc_error *err)
{
	return load(out, path, path, NULL, 0, opt, err);
}

int hc_universe_load_buffer(struct universe **out, const char *name,
			 const char *data, size_t len,
			 const struct universe_options *opt, struct hc_error *err)
{
	return load(out, name, NULL, data, len, opt, err);
}

/* ---- derived universes ----------------------------------------------------- */

/* A new universe with src's metadata, m securities of t periods. */
static struct universe *derived_alloc(const struct universe *src, size_t t)
{
	struct universe *u = hc_calloc(1, sizeof *u);
	size_t i, n;

	if (!u)
		return NULL;
	u->ids = hc_calloc(src->m ? src->m : 1, sizeof *u->ids);
	u->dates = hc_reallocarray(NULL, t ? t : 1, sizeof *u->dates);
	u->source = src->source ? hc_strdup(src->source) : NULL;
	if (!u->ids || !u->dates || (src->source && !u->source) ||
	    hc_mul_size(src->m, t, &n) ||
	    !(u->x = hc_reallocarray(NULL, n ? n : 1, sizeof(double)))) {
		hc_universe_free(u);
		return NULL;
	}
	for (i = 0; i < src->m; i++) {
		u->ids[i] = hc_strdup(src->ids[i]);
		if (!u->ids[i]) {
			u->m = i;
			hc_universe_free(u);
			return NULL;
		}
	}
	u->m = src->m;
	u->m_read = src->m;
	u->t = t;
	u->periods_per_year = src->periods_per_year;
	u->periods_detected = src->periods_detected;
	u->max_bytes = src->max_bytes;
	u->bad_cells = src->bad_cells;
	memcpy(u->bad_first, src->bad_first, sizeof u->bad_first);
	u->periods_read = src->periods_read;
	return u;
}

/* In a window a constant series is dropped rather than refused: the user
 * cannot edit a window, and the rest of the window is still informative. */
static int drop_constant(struct universe *u, struct hc_error *err)
{
	size_t i, k, keep = 0, t = u->t, cap = u->ndropped;
	int rc;

	for (i = 0; i < u->m; i++) {
		const double *xi = u->x + i * t;
		double first = NAN;
		size_t obs = 0;
		int varies = 0;

		for (k = 0; k < t && !varies; k++) {
			if (isnan(xi[k]))
				continue;
			if (obs++ == 0)
				first = xi[k];
			else if (xi[k] != first)
				varies = 1;
		}
		rc = keep_or_drop(u, i, !varies && obs >= 2 ? "zero variance in the window" : NULL,
				  &keep, &cap, err);
		if (rc != HC_OK)
			return rc;
	}
	u->m = keep;
	return HC_OK;
}

int hc_universe_window(struct universe **out, const struct universe *src,
		    size_t first, size_t len, int missing, double min_coverage,
		    struct hc_error *err)
{
	struct universe *u;
	char a[11], b[11];
	size_t i;
	int rc;

	*out = NULL;
	if (len < 2 || first > src->t || len > src->t - first)
		return hc_error(err, HC_EUSAGE,
			"window of %zu periods from period %zu does not fit in %zu periods (at least 2 needed)",
			len, first, src->t);
	if (missing < UNIVERSE_MISSING_COMPLETE || missing > UNIVERSE_MISSING_KEEP ||
	    !(min_coverage > 0 && min_coverage <= 1))
		return hc_error(err, HC_EUSAGE, "bad missing-data policy or minimum coverage for a window");
	u = derived_alloc(src, len);
	if (!u)
		return hc_error(err, HC_ENOMEM, "out of memory");
	for (i = 0; i < src->m; i++)
		memcpy(u->x + i * len, src->x + i * src->t + first, len * sizeof(double));
	memcpy(u->dates, src->dates + first, len * sizeof *u->dates);
	rc = apply_policy(u, missing, min_coverage, err);
	if (rc == HC_OK && missing != UNIVERSE_MISSING_KEEP)
		rc = drop_constant(u, err);
	if (rc == HC_OK && u->m < 2) {
		hc_universe_format_date(u->dates[0], a);
		hc_universe_format_date(u->dates[len - 1], b);
		rc = hc_error(err, HC_EDATA,
			"window %s to %s: %zu of %zu securities left after %zu dropped; expected at least 2",
			a, b, u->m, src->m, u->ndropped);
	}
	if (rc != HC_OK) {
		hc_universe_free(u);
		return rc;
	}
	*out = u;
	return HC_OK;
}

int hc_universe_resample(struct universe **out, const struct universe *src,
		      const size_t *idx, size_t n, struct hc_error *err)
{
	struct universe *u;
	size_t i, k;

	*out = NULL;
	for (k = 0; k < n; k++)
		if (idx[k] >= src->t)
			return hc_error(err, HC_EUSAGE,
				"resample index %zu is period %zu of %zu", k, idx[k], src->t);
	u = derived_alloc(src, n);
	if (!u)
		return hc_error(err, HC_ENOMEM, "out of memory");
	for (i = 0; i < src->m; i++) {
		const double *s = src->x + i * src->t;
		double *d = u->x + i * n;

		for (k = 0; k < n; k++)
			d[k] = s[idx[k]];
	}
	for (k = 0; k < n; k++)
		u->dates[k] = src->dates[idx[k]];
	u->m_read = src->m_read;
	for (k = 0; k < src->m * n && !u->has_missing; k++)
		u->has_missing = isnan(u->x[k]) != 0;
	*out = u;
	return HC_OK;
}

int hc_universe_exclude(struct universe *u, char *const *ids, size_t n, struct hc_error *err)
{
	size_t i, j, keep = 0, cap = u->ndropped;
	int rc;

	for (j = 0; j < n; j++)
		if (hc_universe_find(u, ids[j]) < 0)
			return hc_error(err, HC_EDATA, "%s: excluded id '%s' is not a security of the universe",
					u->source ? u->source : "universe", ids[j]);
	for (i = 0; i < u->m; i++) {
		int out = 0;

		for (j = 0; j < n && !out; j++)
			out = strcmp(u->ids[i], ids[j]) == 0;
		if ((rc = keep_or_drop(u, i, out ? "excluded (--exclude)" : NULL, &keep, &cap, err)) != HC_OK)
			return rc;
	}
	u->m = keep;
	u->has_missing = 0;
	for (i = 0; i < keep * u->t && !u->has_missing; i++)
		u->has_missing = isnan(u->x[i]) != 0;
	if (u->m < 2)
		return hc_error(err, HC_EDATA, "%s: %zu of %zu securities left after the exclusions; expected at least 2",
				u->source ? u->source : "universe", u->m, u->m + n);
	return HC_OK;
}

int hc_universe_apply_missing(struct universe **out, const struct universe *src, int missing,
			      double min_coverage, struct hc_error *err)
{
	const char *name = src->source ? src->source : "";
	struct universe *u;
	size_t i, cap;
	int rc;

	*out = NULL;
	if (missing < UNIVERSE_MISSING_COMPLETE || missing > UNIVERSE_MISSING_KEEP ||
	    !(min_coverage > 0 && min_coverage <= 1))
		return hc_error(err, HC_EUSAGE, "bad missing-data policy or minimum coverage");
	u = derived_alloc(src, src->t);
	if (!u)
		return hc_error(err, HC_ENOMEM, "out of memory");
	u->checks = src->checks;   /* the same history as read, under a policy */
	/* securities src already left out (a date range, --exclude) stay listed */
	for (i = 0, cap = 0; i < src->ndropped; i++)
		if (add_dropped(u, &cap, src->dropped[i].id, src->dropped[i].reason)) {
			hc_universe_free(u);
			return hc_error(err, HC_ENOMEM, "out of memory");
		}
	memcpy(u->x, src->x, src->m * src->t * sizeof(double));
	memcpy(u->dates, src->dates, src->t * sizeof *u->dates);
	for (i = 0; i < src->m * src->t && !u->has_missing; i++)
		u->has_missing = isnan(u->x[i]) != 0;
	u->m_read = src->m_read;
	rc = apply_policy(u, missing, min_coverage, err);
	if (rc == HC_OK && u->m < 2)
		rc = too_few(u, name, missing, err);
	if (rc == HC_OK)
		rc = check_variation(u, name, err);
	if (rc != HC_OK) {
		hc_universe_free(u);
		return rc;
	}
	*out = u;
	return HC_OK;
}

static int size_cmp(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	return (x > y) - (x < y);
}

int hc_universe_alive(const struct universe *u, size_t *min, size_t *median, size_t *max)
{
	size_t i, k, *n;

	*min = *median = *max = 0;
	if (!u->t)
		return HC_OK;
	if (!u->has_missing) {
		*min = *median = *max = u->m;
		return HC_OK;
	}
	if (!(n = hc_calloc(u->t, sizeof *n)))
		return HC_ENOMEM;
	for (i = 0; i < u->m; i++)
		for (k = 0; k < u->t; k++)
			n[k] += !isnan(u->x[i * u->t + k]);
	qsort(n, u->t, sizeof *n, size_cmp);
	*min = n[0];
	*median = n[(u->t - 1) / 2];
	*max = n[u->t - 1];
	hc_free(n);
	return HC_OK;
}
