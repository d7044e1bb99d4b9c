/*
 * holdings.h - funds' holdings read from a CSV file.
 *
 * The file has one row per position: a fund name, a security id and either a
 * weight or a market value, and optionally an issuer (design.md section 8):
 *
 *     fund,id,weight            or      fund,id,value,issuer
 *     Fund A,SEC001,0.052               Fund B,SEC004,125000.00,ISS7
 *
 * Rows of one fund need not be adjacent; funds keep the order in which they
 * first appear.  Weights may be decimals or carry a trailing '%'.  Market
 * values are turned into weights per fund (value / fund total).  Weights
 * whose sum is off 1 by more than the tolerance are normalised and a warning
 * is recorded (the front end prints warnings; the library never does).
 * Zero-weight rows are kept out of the holdings (they are not held) and
 * counted in a warning.  Issuer = security id unless an issuer column gives
 * one (several ids may share an issuer).
 */
#ifndef HOLDCOUNT_HOLDINGS_H
#define HOLDCOUNT_HOLDINGS_H

#include <stddef.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Weights whose sum is off 1 by more than this are reported (0.5%). */
#define HOLDINGS_DEFAULT_SUM_TOLERANCE 0.005

struct holdings_options {
	const char *fund_column;    /* NULL = "fund" */
	const char *id_column;      /* NULL = "id" */
	const char *weight_column;  /* NULL = "weight" (looked for first) */
	const char *value_column;   /* NULL = "value" (used when no weight column) */
	const char *issuer_column;  /* NULL = "issuer" when present; optional */
	int allow_short;            /* negative weights or values are accepted */
	double sum_tolerance;       /* see HOLDINGS_DEFAULT_SUM_TOLERANCE */
	char delimiter;             /* ',' or ';'; 0 = detect */
};

/* Defaults: sum_tolerance HOLDINGS_DEFAULT_SUM_TOLERANCE, the rest
 * zero/NULL (delimiter detected).  Cannot fail. */
void hc_holdings_options_init(struct holdings_options *opt);

enum holdings_kind {
	HOLDINGS_WEIGHTS = 0,       /* the file gave weights */
	HOLDINGS_VALUES = 1         /* the file gave market values */
};

struct holding {
	char *id;
	char *issuer;               /* equal to id when no issuer column */
	double weight;              /* normalised: the fund's weights sum to 1 */
	double raw;                 /* as read (weight or market value) */
	size_t line;                /* line of the row in the file */
};

struct holdings_fund {
	char *name;
	size_t n;                   /* positions held (non-zero weight) */
	struct holding *h;          /* n positions, in file order */
	double raw_sum;             /* sum of the raw column before normalisation */
	size_t zero_rows;           /* rows with zero weight, left out */
	size_t first_line;          /* line of the fund's first row */
};

struct holdings {
	size_t nfunds;
	struct holdings_fund *funds;
	int kind;                   /* enum holdings_kind */
	int has_issuer;             /* an issuer column was read */
	size_t nwarnings;
	char **warnings;            /* "PATH: fund 'X': ..." messages */
	char *source;               /* path or buffer name */
	size_t id_column;           /* 1-based column of the id, for messages */
	size_t weight_column;       /* 1-based column of the weight or value */
};

/*
 * Read path into a new struct holdings (*out; NULL on failure).  Errors, each
 * "PATH:LINE:COLUMN: what was found, what was expected":
 *   HC_EDATA  no fund/id/weight(or value) column in the header; a row with
 *             the wrong number of fields; an empty fund name or id; a weight
 *             that is not a number; a negative weight without allow_short;
 *             a duplicate id within one fund; a fund whose weights are all
 *             zero (or whose net weight is not positive); no rows at all.
 *   HC_EUSAGE both weight_column and value_column were named.
 *   HC_EIO    the file cannot be read.  HC_ENOMEM  allocation failed.
 */
int hc_holdings_load(struct holdings **out, const char *path,
		  const struct holdings_options *opt, struct hc_error *err);

/* The same from a memory buffer; name is used in messages. */
int hc_holdings_load_buffer(struct holdings **out, const char *name,
			 const char *data, size_t len,
			 const struct holdings_options *opt, struct hc_error *err);

/* Free h and everything it owns; NULL is a no-op. */
void hc_holdings_free(struct holdings *h);

/*
 * A two-column label map (id,label; e.g. a sector map) read with csvread.
 * The header row is required; its column names are not checked beyond
 * there being two.  Duplicate ids, empty ids or labels and rows of the wrong
 * width are HC_EDATA at their position.  Entries are sorted by id for
 * hc_holdings_labels_find.  (Written here because the audit needs it before a
 * shared sector loader existed; it is deliberately small.)
 */
struct holdings_labels {
	size_t n;
	char **ids;
	char **labels;
	char *source;
};

/* Read a label map from path, or from data[0..len) named name in messages;
 * delimiter ',' or ';', 0 = detect.  *out is a new map (hc_holdings_labels_free)
 * or NULL on error: HC_EIO (cannot read), HC_EDATA ("NAME:LINE:COL: ..."),
 * HC_ENOMEM. */
int hc_holdings_labels_load(struct holdings_labels **out, const char *path,
			 char delimiter, struct hc_error *err);
int hc_holdings_labels_load_buffer(struct holdings_labels **out, const char *name,
				const char *data, size_t len, char delimiter,
				struct hc_error *err);
/* Free l and everything it owns; NULL is a no-op. */
void hc_holdings_labels_free(struct holdings_labels *l);

/* The label of id, or NULL when the map does not have it.  O(log n). */
const char *hc_holdings_labels_find(const struct holdings_labels *l, const char *id);

#ifdef __cplusplus
}
#endif

#endif
