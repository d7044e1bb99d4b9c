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
 * one (several ids may share an issuer; an empty issuer cell falls back to
 * the id).
 *
 * Files as administrators send them: a quoted cell may carry thousands
 * separators ("1,234,567.89") and an accounting negative in parentheses
 * ("(1,250.00)"); a ';'-delimited file may use decimal commas ("1.234,56").
 * An optional type column says what kind of asset a row is (security, cash
 * and cash equivalents, government security, investment-company share,
 * other); an optional group column names the issuer's group of companies.
 * Several rows of one (fund, id) are summed into one position, with a
 * warning.  Text cells must be UTF-8, unless the options name the file's
 * encoding (Latin-1 or Windows-1252), which is then transcoded.
 */
#ifndef HOLDCOUNT_HOLDINGS_H
#define HOLDCOUNT_HOLDINGS_H

#include <stddef.h>

#include "holdcount/error.h"

/* The id given to a cash line whose id cell is empty. */
#define HOLDINGS_CASH_ID "(cash)"

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
	const char *type_column;    /* NULL = "type" when present; optional */
	const char *group_column;   /* NULL = "group" when present; optional */
	int encoding;               /* enum holdings_encoding of the text cells */
	const char *single_fund;    /* not NULL: the file has no fund column and
	                             * every row belongs to this fund (a benchmark) */
};

/* The encoding of a holdings file's text cells. */
enum holdings_encoding {
	HOLDINGS_UTF8 = 0,          /* validated; invalid bytes are HC_EDATA */
	HOLDINGS_LATIN1 = 1,        /* ISO 8859-1, transcoded to UTF-8 */
	HOLDINGS_WINDOWS1252 = 2    /* Windows-1252, transcoded to UTF-8 */
};

/* What kind of asset a row is (the type column; security without one). */
enum holding_type {
	HOLDING_SECURITY = 0,       /* an issuer's security: counted everywhere */
	HOLDING_CASH = 1,           /* cash and cash equivalents: not a holding, not an issuer */
	HOLDING_GOVERNMENT = 2,     /* a government security */
	HOLDING_FUND_SHARE = 3,     /* a share of another investment company */
	HOLDING_OTHER = 4           /* anything else held: treated as a security */
};
#define HOLDING_NTYPES 5

/* Defaults: sum_tolerance HOLDINGS_DEFAULT_SUM_TOLERANCE, the rest
 * zero/NULL (delimiter detected).  Cannot fail. */
void hc_holdings_options_init(struct holdings_options *opt);

enum holdings_kind {
	HOLDINGS_WEIGHTS = 0,       /* the file gave weights */
	HOLDINGS_VALUES = 1         /* the file gave market values */
};

struct holding {
	char *id;
	char *issuer;               /* equal to id when no issuer column (or an empty cell) */
	char *group;                /* the issuer's group; NULL without one */
	int type;                   /* enum holding_type */
	double weight;              /* of net assets: the fund's weights (cash included) sum to 1 */
	double raw;                 /* as read (weight or market value), summed over repeated rows */
	size_t line;                /* line of the (first) row in the file */
	size_t rows;                /* rows summed into this position (1 = no repeat) */
};

struct holdings_fund {
	char *name;
	size_t n;                   /* positions held (non-zero weight) */
	struct holding *h;          /* n positions, in file order */
	double raw_sum;             /* sum of the raw column before normalisation */
	size_t zero_rows;           /* rows with zero weight, left out */
	size_t first_line;          /* line of the fund's first row */
	char *source;               /* the file the fund came from */
	size_t id_column;           /* 1-based column of the id in that file */
};

struct holdings {
	size_t nfunds;
	struct holdings_fund *funds;
	int kind;                   /* enum holdings_kind */
	int has_issuer;             /* an issuer column was read */
	int has_type;               /* a type column was read */
	int has_group;              /* a group column was read */
	size_t nwarnings;
	char **warnings;            /* "PATH: fund 'X': ..." messages */
	char *source;               /* path or buffer name ("A, B" after hc_holdings_merge) */
	size_t id_column;           /* 1-based column of the id, for messages */
	size_t weight_column;       /* 1-based column of the weight or value */
};

/*
 * Read path into a new struct holdings (*out; NULL on failure).  Errors, each
 * "PATH:LINE:COLUMN: what was found, what was expected":
 *   HC_EDATA  no fund/id/weight(or value) column in the header; a row with
 *             the wrong number of fields; an empty fund name or id; a weight
 *             that is not a number; a negative weight without allow_short;
 *             a fund whose weights are all zero (or whose net weight is not
 *             positive); a fund whose total is not finite (naming the row
 *             that made it so); repeated rows of one id that disagree on
 *             issuer, group or type; an unknown type; a text cell that is
 *             not valid UTF-8 (under HOLDINGS_UTF8) or a byte Windows-1252
 *             leaves undefined; no rows at all.
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
 * Move every fund of *from into into (funds, warnings; the sources joined
 * as "A, B"), then free *from and set it to NULL.  A fund present in both is
 * HC_EDATA naming the fund and both files with their lines; into is then
 * unchanged and *from still owned by the caller.  HC_ENOMEM.
 */
int hc_holdings_merge(struct holdings *into, struct holdings **from, struct hc_error *err);

/*
 * Parse an amount cell as administrators write it: optional sign or
 * accounting parentheses "(1,250.00)" for a negative, thousands separators
 * (groups of three digits), a decimal point or (delimiter ';', or both marks
 * present, the last being the decimal mark) a decimal comma, a trailing '%'
 * (divides by 100, sets *had_percent), an exponent without separators.  A
 * single ',' or '.' among digits is the decimal mark in a ';' file ("12,5"),
 * a single ',' followed by exactly three digits is a thousands separator in a
 * ',' file ("1,234", which must be quoted there).  Returns 0, or -1 when the
 * cell is not such a number or overflows.
 */
int hc_holdings_parse_amount(const char *s, size_t len, char delimiter, double *value,
			     int *had_percent);

/* "security", "cash and cash equivalents", "government security",
 * "investment-company share", "other" for an enum holding_type; NULL else. */
const char *hc_holding_type_name(int type);

/* Parse a type cell (case-insensitive; blanks around it; empty = security;
 * also "cash", "government", "investment company", "fund share"): 0 and
 * *type, or -1 for an unknown word. */
int hc_holding_type_parse(const char *s, int *type);

/* "utf-8", "latin-1" (also "iso-8859-1"), "windows-1252" (also "cp1252"),
 * any case: 0 and *encoding, or -1. */
int hc_holdings_parse_encoding(const char *s, int *encoding);

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
