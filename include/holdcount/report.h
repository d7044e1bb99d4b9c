/*
 * report.h - one result model for every writer.
 *
 * Each computation (describe, curve, rules, audit, rolling) turns its result
 * type into a struct report: a list of labelled scalar fields, zero or more
 * tables, and notes (the cautions).  The writers below render the same
 * report as an aligned text table, CSV or JSON, so the three never disagree.
 *
 *   text: "title: value" lines for the fields, then each table aligned with
 *         its column titles, then the notes.  Numbers are formatted for
 *         reading (percent styles, fixed decimals).
 *   csv:  the first table only, header row of column keys first, numbers
 *         with 17 significant digits (round-trip), empty cell for no value;
 *         with no table, "key,value" rows of the fields
 *         (hc_report_write_csv_part writes any other part the same way).
 *   json: one object: each field under its key, each table as an array of
 *         objects under its key, notes as "cautions": [...]; numbers with 17
 *         significant digits, null for no value.
 */
#ifndef HOLDCOUNT_REPORT_H
#define HOLDCOUNT_REPORT_H

#include <stddef.h>
#include <stdio.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

enum report_kind {
	REPORT_NONE = 0,    /* no value: empty in CSV, null in JSON, "-" in text;
			     * with a reason (text set, hc_report_table_set_none),
			     * the reason in CSV and text, still null in JSON */
	REPORT_REAL = 1,
	REPORT_INT = 2,
	REPORT_TEXT = 3,
	REPORT_BOOL = 4
};

/* How the text writer shows a value; CSV and JSON always print it raw. */
enum report_style {
	REPORT_STYLE_PLAIN = 0,    /* %.6g */
	REPORT_STYLE_PERCENT = 1,  /* decimal shown as percent, 2 decimals: 0.1234 -> 12.34% */
	REPORT_STYLE_FIXED2 = 2,   /* 2 decimals */
	REPORT_STYLE_FIXED4 = 3,   /* 4 decimals */
	REPORT_STYLE_SCI = 4       /* %.4e */
};

struct report_value {
	int kind;
	int style;
	double real;
	long long integer;
	char *text;                /* owned by the report; for REPORT_NONE, NULL or the reason */
};

struct report_column {
	char *key;                 /* CSV header / JSON key */
	char *title;               /* text header */
	int style;
};

struct report_table {
	char *key;                 /* JSON key */
	char *title;               /* text heading; may be NULL */
	size_t ncols, nrows, cap_rows;
	struct report_column *cols;
	struct report_value *cells; /* nrows*ncols, row-major */
	/* JSON only (hc_report_table_nest): column nest_col of each row is
	 * written as the array of nest's rows that match it; NULL = none. */
	const struct report_table *nest;
	size_t nest_col, nest_join, nest_child_join;
};

struct report_field {
	char *key;
	char *title;
	struct report_value value;
};

struct report {
	size_t nfields, cap_fields;
	struct report_field *fields;
	size_t ntables;
	struct report_table **tables;
	size_t nnotes;
	char **notes;
};

/* An empty report; NULL when out of memory.  hc_report_free frees it and
 * everything it owns (its tables too); NULL is a no-op. */
struct report *hc_report_alloc(void);
void hc_report_free(struct report *r);

/* Fields (scalar key/value pairs), in the order added; key is the CSV/JSON
 * key, title the text label.  Strings are copied.  Each returns HC_OK, or
 * HC_ENOMEM (there is no error record: the caller words the message), the
 * report then unchanged.  A non-finite real is stored as no value. */
int hc_report_add_real(struct report *r, const char *key, const char *title, double x, int style);
int hc_report_add_int(struct report *r, const char *key, const char *title, long long x);
int hc_report_add_text(struct report *r, const char *key, const char *title, const char *s);
int hc_report_add_bool(struct report *r, const char *key, const char *title, int b);
int hc_report_add_none(struct report *r, const char *key, const char *title);
int hc_report_add_note(struct report *r, const char *note);

/* Tables: columns are declared, then rows appended and filled.  A column
 * added after rows exist gives every existing row an empty cell.
 * hc_report_add_table returns the new table (owned by r) or NULL when out of
 * memory; the int functions return HC_OK or HC_ENOMEM.  The setters need
 * row < nrows and col < ncols (not checked) and replace the cell's value;
 * a non-finite real leaves it empty. */
struct report_table *hc_report_add_table(struct report *r, const char *key, const char *title);
int hc_report_table_add_column(struct report_table *t, const char *key, const char *title, int style);
int hc_report_table_add_row(struct report_table *t);   /* new row, all REPORT_NONE; index nrows-1 */
void hc_report_table_set_real(struct report_table *t, size_t row, size_t col, double x);  /* NaN -> none */
void hc_report_table_set_int(struct report_table *t, size_t row, size_t col, long long x);
int hc_report_table_set_text(struct report_table *t, size_t row, size_t col, const char *s);
void hc_report_table_set_bool(struct report_table *t, size_t row, size_t col, int b);
/* In JSON, write column `column` of each row of parent as an array of
 * objects: the rows of child (a table of the same report, so it lives as
 * long) whose column `join` holds the same text as parent's column `join`,
 * each without that column.  CSV, text and Markdown keep the cell as it
 * is (a summary such as a ';'-joined list).  HC_OK, or HC_EINTERNAL when a
 * column is missing (nothing set). */
int hc_report_table_nest(struct report_table *parent, const char *column, const struct report_table *child,
			 const char *join);
/* No value, with the reason the CSV and text writers show in its place (a
 * figure that does not exist for this row: "below the floor"); the JSON
 * writer still writes null, so a number field never holds a string there,
 * and the row should carry a boolean saying why.  reason is copied. */
int hc_report_table_set_none(struct report_table *t, size_t row, size_t col, const char *reason);

/* The writers share one interface, as GSL's generator types do.  write
 * renders r to fp and returns HC_OK, HC_EIO when fp reports a write error,
 * or HC_ENOMEM, with err filled; fp is not closed. */
struct report_writer {
	const char *name;          /* "table", "csv", "json", "markdown" */
	int (*write)(FILE *fp, const struct report *r, struct hc_error *err);
};

extern const struct report_writer *const hc_report_writer_text;
extern const struct report_writer *const hc_report_writer_csv;
extern const struct report_writer *const hc_report_writer_json;
/* Markdown: the fields as a "- title: value" list, each table under a
 * "### title" heading with every column (numbers right-aligned), the notes
 * as a list; numbers as the text writer prints them (hc_report_value_text),
 * '|' escaped. */
extern const struct report_writer *const hc_report_writer_markdown;

/* The Markdown pieces the writer above is made of, for documents that
 * compose several reports (reportset.h's summary.md): one value (style as
 * given; '|' escaped, line breaks as spaces), the cell of column key in row
 * (a no-value cell when t has no such column), and a table of the given
 * columns {key, heading} of t, rows where keep(t, row, ctx) (NULL: all). */
void hc_report_md_value(FILE *fp, const struct report_value *v, int style);
const struct report_value *hc_report_md_cell(const struct report_table *t, size_t row, const char *key);
void hc_report_md_table(FILE *fp, const struct report_table *t, const char *const (*cols)[2], size_t ncols,
			int (*keep)(const struct report_table *, size_t, const void *), const void *ctx);

/* The table of r whose key is key; NULL when there is none. */
const struct report_table *hc_report_find_table(const struct report *r, const char *key);

/* One part of r as CSV, in hc_report_writer_csv's form, for outputs that need
 * more than its first table (a report folder's extra tables, a command's
 * table choice): table is a table's key (a header row of its column keys,
 * then one row per row), or NULL for the fields as "key,value" rows.
 * Notes are not written, as in hc_report_writer_csv.  HC_EUSAGE (err names
 * the table) when r has no table of that key, HC_EIO when fp fails. */
int hc_report_write_csv_part(FILE *fp, const struct report *r, const char *table, struct hc_error *err);

/* text onto fp word by word, the cursor at column col: a word that would
 * pass column width starts a new line indented by indent; a final newline.
 * Words are split at spaces only.  (The notes of the text writer, and the
 * command's help.) */
void hc_report_wrap(FILE *fp, const char *text, size_t col, size_t indent, size_t width);

/* The reading form of v, as the text writer prints it (styles, "yes"/"no",
 * "-" or the reason for no value; never "-0.00%": a value that rounds to
 * zero is zero), into buf or pointing into v. */
const char *hc_report_value_text(char *buf, size_t size, const struct report_value *v);

/* One JSON object: "holdcount_version": version, then each reports[i] as
 * the JSON writer renders it under keys[i] (null when reports[i] is NULL),
 * built as one tree.  HC_EINTERNAL (a key named twice in a report),
 * HC_ENOMEM, HC_EIO. */
int hc_report_write_json_set(FILE *fp, const char *version, const char *const *keys,
			     const struct report *const *reports, size_t n, struct hc_error *err);

/* Look a writer up by name ("table", "csv", "json"); NULL when unknown. */
const struct report_writer *hc_report_writer_find(const char *name);

/* The cautions every output carries (design.md section 9); adds them as
 * notes.  HC_OK or HC_ENOMEM. */
int hc_report_add_cautions(struct report *r);

/* The fields that state the scale: periods_per_year (a number, or none when
 * not annualised) and annualisation (a sentence).  0, or non-zero when out
 * of memory. */
int hc_report_add_scale(struct report *r, double periods_per_year, int annualised);

#ifdef __cplusplus
}
#endif

#endif
