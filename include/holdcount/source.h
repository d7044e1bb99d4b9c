/*
 * source.h - the data an analysis runs on, built once.
 *
 * An analysis (the curve, the rules, an audit, rolling windows) reads its
 * data through one struct hc_source, whatever the input was:
 *   HC_SOURCE_SERIES    complete return series (struct universe, no gap);
 *   HC_SOURCE_PAIRWISE  return series with gaps (securities listed and
 *                       delisted at different dates), read through their
 *                       pairwise-complete covariances (covmatrix.h);
 *   HC_SOURCE_MATRIX    a covariance matrix (a risk model's output);
 *   HC_SOURCE_RAGGED    return series with gaps read period by period
 *                       (periodic.h): each period uses the securities alive
 *                       then, so listings and delistings stay in (the
 *                       survivorship-free treatment); never an M x M matrix
 *                       (an audit takes each fund's covariances from its own
 *                       holdings, audit.h).
 * The missing-data policy (universe.h) and the positive semi-definite
 * policy (refuse, or repair by eigenvalue clipping, Higham 1988) are
 * applied when the source is built, so no caller repeats them.
 *
 * Adding a kind is one more enum value, one constructor, and one more case
 * in the few dispatch points: the computing modules' switch on src->kind
 * (moments.c, sampler.c, strata.c, rules.c, audit.c) and the analyses'
 * (curve_run.c, enough.c, describe.c, reportset.c for the ragged kind).
 * Callers that use the accessors below need no change.
 */
#ifndef HOLDCOUNT_SOURCE_H
#define HOLDCOUNT_SOURCE_H

#include <stddef.h>

#include "holdcount/covmatrix.h"
#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

struct hc_periodic;

enum hc_source_kind {
	HC_SOURCE_SERIES = 0,   /* u: complete return series */
	HC_SOURCE_PAIRWISE = 1, /* u with gaps; cm its pairwise-complete covariances (when built) */
	HC_SOURCE_MATRIX = 2,   /* cm only */
	HC_SOURCE_RAGGED = 3    /* u with gaps read period by period: per, its per-period sums
	                         * (periodic.h); each period uses the securities alive then */
};

/* What the positive semi-definite policy found and did. */
struct hc_source_psd {
	int asked;               /* repair was allowed (hc_source_options.repair_psd) */
	int checked;             /* the matrix was tested */
	int repaired;            /* it moved beyond rounding and was replaced */
	size_t negative;         /* negative eigenvalues */
	double min_eigenvalue;   /* per period (the matrix's own scale) */
	double distance;         /* Frobenius distance moved (0 when not repaired) */
	double norm;             /* Frobenius norm of the matrix as read */
};

struct hc_source_options {
	int repair_psd;          /* replace a matrix that is not positive semi-definite by the
	                          * nearest one; 0: refuse it (HC_EDATA); no effect on a ragged
	                          * source, which builds no matrix */
	int need_matrix;         /* series with gaps read pairwise: build the pairwise-complete
	                          * matrix (random portfolios and fund variances need it);
	                          * repair_psd implies it; ignored for a ragged source */
	double periods_per_year; /* a matrix: > 0 annualises by it, 0 keeps its own scale;
	                          * ignored for series (the universe's own) */
	const char *psd_refusal; /* the message after "PATH: " when a matrix is refused;
	                          * NULL: HC_SOURCE_DEFAULT_REFUSAL */
	int need_fund_matrix;    /* funds' variances w'Aw will be asked (an audit): series with
	                          * gaps read pairwise build the pairwise-complete matrix; a
	                          * ragged source builds none (the audit takes each fund's own
	                          * holdings' covariances) */
	int ragged;              /* series with gaps: HC_SOURCE_RAGGED (per-period sums, no
	                          * M x M matrix, need_matrix, need_fund_matrix and repair_psd
	                          * ignored) instead of HC_SOURCE_PAIRWISE */
};

#define HC_SOURCE_PSD_HINT "--repair-psd uses the nearest positive semi-definite matrix instead"
#define HC_SOURCE_DEFAULT_REFUSAL "not a covariance matrix: it is not positive semi-definite " \
	"(some portfolio of these securities would have a negative variance); " HC_SOURCE_PSD_HINT

struct hc_source {
	int kind;                   /* enum hc_source_kind */
	const char *name;           /* the file, for messages (u->source or the matrix's path) */
	const struct universe *u;   /* SERIES, PAIRWISE: the returns; NULL for MATRIX */
	const struct covmatrix *cm; /* MATRIX; PAIRWISE when built (need_matrix, repair_psd); else NULL */
	const struct hc_periodic *per; /* RAGGED: the per-period sums of every period; else NULL */
	double periods_per_year;    /* per-period variances are multiplied by it (1: not annualised) */
	int annualised;             /* 0: a matrix on its own scale */
	struct hc_source_psd psd;
	/* private: what hc_source_free releases */
	struct universe *own_u;
	struct covmatrix *own_cm;
	struct hc_periodic *own_per;
	char *own_name;
};

/* Defaults: refuse a matrix that is not positive semi-definite, no
 * pairwise matrix unless asked, a matrix on its own scale. */
void hc_source_options_init(struct hc_source_options *opt);

/*
 * A source from a loaded universe; takes ownership of u (freed by
 * hc_source_free, and on failure).  Complete data gives HC_SOURCE_SERIES;
 * gaps left by the missing-data policy give HC_SOURCE_RAGGED when
 * opt->ragged (its per-period sums, hc_periodic_alloc; no matrix), else
 * HC_SOURCE_PAIRWISE, with its
 * pairwise-complete matrix built and checked when opt asks for it.
 * The data checks (datacheck.h) run on u unless they ran already
 * (u->checks.run), and their count is kept on u for every analysis's
 * output (hc_datacheck_report_kept); they warn, they never refuse.
 * Errors: those of hc_covmatrix_from_universe; HC_EDATA "NAME: REFUSAL"
 * when the matrix is not positive semi-definite and repair was not asked;
 * HC_ENOMEM (budget u->max_bytes).  *out is NULL on failure.
 */
int hc_source_from_universe(struct hc_source **out, struct universe *u,
			    const struct hc_source_options *opt, struct hc_error *err);

/* hc_universe_load then hc_source_from_universe. */
int hc_source_load_universe(struct hc_source **out, const char *path,
			    const struct universe_options *uo,
			    const struct hc_source_options *opt, struct hc_error *err);

/*
 * A source from a covariance matrix (per period when opt->periods_per_year
 * > 0, else on its own scale); takes ownership of cm (also on failure).
 * name (copied) names it in messages.  The matrix is checked for negative
 * eigenvalues and refused or repaired as opt says.  HC_EUSAGE for a
 * negative or non-finite periods_per_year; HC_EDATA; HC_ENOMEM.
 */
int hc_source_from_covmatrix(struct hc_source **out, struct covmatrix *cm, const char *name,
			     const struct hc_source_options *opt, struct hc_error *err);

/* hc_covmatrix_load_within (the usual symmetry tolerance) then
 * hc_source_from_covmatrix. */
int hc_source_load_covmatrix(struct hc_source **out, const char *path, size_t max_bytes,
			     const struct hc_source_options *opt, struct hc_error *err);

/*
 * A source viewing series u that the caller keeps (a rolling window, a
 * bootstrap resample, every security as read for rolling windows): no
 * allocation, nothing to free; s must not outlive u.  Series with gaps
 * give a pairwise source with no matrix (hc_source_from_universe builds one).
 */
void hc_source_init_series(struct hc_source *s, const struct universe *u);

/*
 * A source viewing the covariance matrix cm that the caller keeps, taken as
 * it is (no positive semi-definite check: the caller vouches for it), on
 * its own scale (periods_per_year 0) or annualised by periods_per_year.
 * No allocation, nothing to free; s must not outlive cm.
 */
void hc_source_init_matrix(struct hc_source *s, const struct covmatrix *cm, double periods_per_year);

/* Free s and what it owns; NULL is a no-op. */
void hc_source_free(struct hc_source *s);

/* Securities; the id of security i; the index of id or -1. */
size_t hc_source_m(const struct hc_source *s);
const char *hc_source_id(const struct hc_source *s, size_t i);
long hc_source_find(const struct hc_source *s, const char *id);

/* Periods behind the figures; 0 for a matrix (unknown). */
size_t hc_source_periods(const struct hc_source *s);

/* The m x m row-major covariance matrix portfolios are drawn from, or
 * NULL when the source draws from complete series. */
const double *hc_source_matrix(const struct hc_source *s);

/* 1 when random portfolios are drawn from the complete return series
 * (returns over time are known), 0 when from a matrix. */
int hc_source_has_series(const struct hc_source *s);

/*
 * The sentence that says what a repair did (empty when nothing was
 * repaired), figures annualised like the source, into buf.
 */
void hc_source_psd_text(const struct hc_source *s, char *buf, size_t size);

/*
 * When repair was asked (opt.repair_psd): the fields psd_repair,
 * psd_repaired and, when a matrix was tested, psd_negative_eigenvalues,
 * psd_min_eigenvalue, psd_repair_distance, psd_repair_relative_distance
 * (annualised like the source), and the note of hc_source_psd_text after a
 * repair.  HC_OK, or HC_ENOMEM.
 */
int hc_source_report_psd(const struct hc_source *s, struct report *r);

/* The sentence the field "treatment" carries for a ragged source. */
#define HC_SOURCE_RAGGED_TREATMENT "return history with gaps, read period by period: each period uses the " \
	"securities alive then (listed and not yet delisted), so delisted securities stay in " \
	"(survivorship-free); --missing complete keeps only securities with no gap"

/*
 * How the universe was treated: the field "treatment" (for a ragged source
 * HC_SOURCE_RAGGED_TREATMENT, and the fields alive_min, alive_median,
 * alive_max: securities alive per period; securities_complete: those with
 * no gap; securities_single_period when some were observed once only and
 * left out; for complete series and pairwise-complete histories the
 * treatment and alive_min, alive_median, alive_max counted from the
 * history; nothing for a covariance matrix).  HC_OK, or HC_ENOMEM.
 */
int hc_source_report_treatment(const struct hc_source *s, struct report *r);

/*
 * What reading the file changed, when it did: bad_cells and bad_cell_first
 * (cells read as missing under UNIVERSE_BAD_MISSING), periods_read (the
 * periods before a frequency conversion or a date range, when they differ
 * from the periods kept).  Nothing for a matrix.  HC_OK, or HC_ENOMEM.
 */
int hc_source_report_reading(const struct hc_source *s, struct report *r);

#ifdef __cplusplus
}
#endif

#endif
