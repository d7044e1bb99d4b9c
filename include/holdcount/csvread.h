/*
 * csvread.h - streaming CSV reading on top of libcsv, with positions.
 *
 * Every CSV the tool reads (universe, covariance matrix, sector map,
 * holdings) goes through this module: it feeds libcsv, strips a UTF-8
 * byte-order mark, accepts LF or CRLF line ends and RFC 4180 quoting, picks
 * ',' or ';' as the delimiter, and hands each field to a callback with the
 * line and column it came from, so that loaders can report
 * "FILE:LINE:COLUMN: ..." without keeping the whole file in memory.
 * Lines and columns are 1-based; the column is the field number in its
 * record.  Blank lines are skipped.  A NUL byte, or a field longer than
 * max_field, is HC_EDATA at its position.
 */
#ifndef HOLDCOUNT_CSVREAD_H
#define HOLDCOUNT_CSVREAD_H

#include <stddef.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

#define CSVREAD_DEFAULT_MAX_FIELD 4096

struct csvread_options {
	char delimiter;       /* ',' or ';'; 0 = detect: ';' when the first line (its first MiB) has ';' outside quotes and no ',' */
	size_t max_field;     /* longest field accepted, bytes; 0 = CSVREAD_DEFAULT_MAX_FIELD */
};

/* Defaults: delimiter detected, max_field CSVREAD_DEFAULT_MAX_FIELD (0). */
void hc_csvread_options_init(struct csvread_options *opt);

struct csvread_field {
	const char *text;     /* NUL-terminated; quotes removed; not owned by the callee */
	size_t len;
	size_t record;        /* 0-based record number (0 = the header, when there is one) */
	size_t column;        /* 1-based field number in the record */
	size_t line;          /* 1-based line where the field ended */
	int quoted;           /* the field was quoted in the file */
};

/* Called for each field; return HC_OK to go on, or a status (having filled
 * err) to stop reading. */
typedef int (*csvread_field_fn)(void *ctx, const struct csvread_field *f,
				struct hc_error *err);
/* Called at the end of each record with its field count and the line on
 * which it ended. */
typedef int (*csvread_record_fn)(void *ctx, size_t record, size_t nfields,
				 size_t line, struct hc_error *err);

struct csvread_handler {
	csvread_field_fn field;
	csvread_record_fn record;
	void *ctx;
};

/* Read path (opened read-only).  HC_EIO when it cannot be opened or read,
 * HC_EDATA for malformed CSV (unterminated quote, NUL byte, empty file:
 * "PATH: empty file"), or whatever a callback returned. *delimiter_used
 * (may be NULL) receives the delimiter. */
int hc_csvread_file(const char *path, const struct csvread_options *opt,
		 const struct csvread_handler *h, char *delimiter_used,
		 struct hc_error *err);

/* The same over a buffer; name is used in messages (fuzzing, tests). */
int hc_csvread_buffer(const char *name, const char *data, size_t len,
		   const struct csvread_options *opt,
		   const struct csvread_handler *h, char *delimiter_used,
		   struct hc_error *err);

/* 1 when s[0..len) is valid UTF-8 (no overlongs, no surrogates), else 0. */
int hc_csvread_utf8_valid(const char *s, size_t len);

/*
 * Parse a decimal number cell strictly: optional sign, digits, optional
 * fraction and exponent, surrounding blanks allowed; a trailing '%' divides
 * by 100 and sets *had_percent.  Rejects hex, "inf", "nan", thousands
 * separators, decimal commas and values that overflow to infinity.
 * Returns 0 on success, -1 otherwise.
 */
int hc_csvread_parse_number(const char *s, size_t len, double *value, int *had_percent);

/* Bytes of a cell hc_csvread_quote keeps, and the buffer it needs. */
#define CSVREAD_QUOTE_MAX 40
#define CSVREAD_QUOTE_BUF (2 * CSVREAD_QUOTE_MAX + 4)

/*
 * A cell made fit to quote back in a one-line message: its first
 * CSVREAD_QUOTE_MAX bytes, with line breaks and tabs written as \n, \r, \t
 * and other control bytes as '?', then "..." when it was cut.  buf must
 * hold CSVREAD_QUOTE_BUF bytes; returns buf.
 */
const char *hc_csvread_quote(const char *s, size_t len, char *buf);

/* 1 when the cell means "missing": empty, NA, NaN, N/A, '.', null (any case). */
int hc_csvread_is_missing(const char *s, size_t len);

/*
 * 1 when the field s[0..len) names the header want: ASCII letters compared
 * without case, blanks (space, tab) around s ignored; else 0.
 */
int hc_csvread_header_is(const char *s, size_t len, const char *want);

#ifdef __cplusplus
}
#endif

#endif
