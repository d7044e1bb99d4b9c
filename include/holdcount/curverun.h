/*
 * curverun.h - risk by holding count on a data source, as one library call:
 * the exact curve (curve.h) at a grid of counts, random portfolios there
 * (sampler.h), optionally stratified (strata.h), and the report `holdcount
 * curve` prints.
 */
#ifndef HOLDCOUNT_CURVERUN_H
#define HOLDCOUNT_CURVERUN_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/analysis.h"
#include "holdcount/curve.h"
#include "holdcount/error.h"
#include "holdcount/measures.h"
#include "holdcount/moments.h"
#include "holdcount/report.h"
#include "holdcount/source.h"
#include "holdcount/strata.h"

#ifdef __cplusplus
extern "C" {
#endif

#define CURVE_DEFAULT_PATHS 10000
#define CURVE_DEFAULT_SEED 1

/* What variance_sd is on a ragged source (the field variance_sd_basis). */
#define HC_CURVE_RAGGED_SPREAD_BASIS "the standard deviation, across fixed sets of N securities held over " \
	"the whole sample, of the portfolio variance under the pairwise-complete covariances (each pair over " \
	"its common periods); E[var] is that of a portfolio holding, at each period, N of the securities alive " \
	"then, so on data with gaps the two describe different portfolios (they coincide on complete data)"

struct hc_curve_options {
	size_t paths;                       /* random portfolios a count; 0 = exact only */
	uint64_t seed;
	int threads;                        /* 0 = OpenMP's default */
	const struct hc_strata_use *strata; /* NULL (or no map): no stratified columns */
	int full;                           /* also the exact curve at every count 1..M */
	const struct moments *moments;      /* the source's, when the caller has them; NULL: computed */
	unsigned measures;                  /* measures.h set beside the sd family; 0 = the sd family alone */
	struct hc_progress progress;
};

/* Defaults: CURVE_DEFAULT_PATHS paths, seed CURVE_DEFAULT_SEED, no
 * strata, no full curve, no progress. */
void hc_curve_options_init(struct hc_curve_options *opt);

struct hc_curve_result {
	struct moments mo;             /* of the source (hc_moments_from_source) */
	struct curve *curve;           /* at the sizes; sampled columns when paths > 0 */
	struct curve *full;            /* exact at every count, with opt->full; else NULL */
	struct strata_curve *strata;   /* with strata; else NULL */
	struct hc_measures_curve *measures; /* with opt->measures; else NULL */
	struct report *report;         /* fields, table "curve" (with stratified_* columns),
	                                * what the PSD policy did, notes and cautions */
	/* A ragged source (HC_SOURCE_RAGGED): the pairwise-complete moments that
	 * give variance_sd (hc_curve_pairwise_spread), when they could be built
	 * (spread_built 1); else spread_reason says why variance_sd is empty. */
	int spread_built;
	struct moments spread_mo;
	char spread_reason[HC_ERROR_MESSAGE_MAX];
};

/*
 * The exact spread on a history with gaps, into variance_sd of every point
 * of c (annualised by c->periods_per_year): the standard deviation, across
 * the fixed-membership N-subsets of u's m securities (c->m == u->m), of the
 * subset's variance w'Aw (w = 1/N on the subset) under A, the
 * pairwise-complete covariance matrix of u (each pair over its common
 * periods, its own means there, divisor n_ij - 1: masked Gram products on
 * BLAS, hc_moments_from_universe_route's MOMENTS_ROUTE_PAIRWISE), by the
 * formula of hc_curve_variance_sd.  On complete data A is the sample
 * covariance matrix and the result is hc_curve_exact's variance_sd.  On
 * data with gaps it is NOT the spread of the per-period portfolio whose
 * expectation hc_periodic_curve_exact gives (that one replaces delisted
 * holdings); it is the spread of the fixed-subset variance whose mean is
 * vbar/N + (1 - 1/N) cbar of A.  *mo gets A's moments.
 * A pair whose listing spans overlap by fewer than
 * COVMATRIX_MIN_COMMON_PERIODS periods is found in O(M T) before any
 * product.  Errors (c unchanged): HC_EDATA naming a pair without enough
 * common periods or a security that does not vary; HC_ENOMEM when the
 * M x M arrays do not fit u->max_bytes (memory.h) or cannot be allocated.
 */
int hc_curve_pairwise_spread(struct curve *c, const struct universe *u, struct moments *mo,
			     struct hc_error *err);

/*
 * The moments behind a ragged source's exact spread (those of
 * hc_curve_pairwise_spread, has_spread set) for the securities the
 * per-period route kept (src->per->member).  When the pairwise-complete
 * matrix cannot be built (a pair without enough common periods, a security
 * that does not vary: HC_EDATA; too large for the memory budget:
 * HC_ENOMEM) the result is HC_OK with *mo zeroed (has_spread 0) and the
 * reason in reason[0..len); other errors are returned.  src must be
 * HC_SOURCE_RAGGED.
 */
int hc_curve_ragged_spread_moments(const struct hc_source *src, struct moments *mo, char *reason, size_t len,
				   struct hc_error *err);

/*
 * The curve of src at sizes[0..nsizes) (each 1..M; hc_curve_parse_sizes or
 * hc_curve_default_sizes make them), annualised like the source: stratified
 * draws first when asked (from complete series only, paths above 0), then
 * the exact figures and the sampled columns from the same seed.  Random
 * portfolios come from the series, or from the matrix of a matrix source
 * (build series with gaps with need_matrix when paths > 0).  With
 * opt->measures, the same random portfolios' measures (measures.h) are
 * summarised by count, as five columns each in the table "curve" and the
 * universe's own value as fields universe_KEY; they need complete series
 * and paths above 0 (else HC_EUSAGE).  *out is new
 * (hc_curve_result_free) or NULL on error.  Errors: HC_EUSAGE (strata from
 * a matrix, from series with gaps, or with paths 0), the moments',
 * curve's, sampler's and strata's errors, HC_ENOMEM, HC_EINTERRUPT.
 */
int hc_curve_run(struct hc_curve_result **out, const struct hc_source *src, const size_t *sizes, size_t nsizes,
		 const struct hc_curve_options *opt, struct hc_error *err);

/* Add to r the table "curve" of c (hc_curve_report's columns, then
 * periods_per_year, filled when annualised, so that a CSV of this table
 * alone still says its scale).  HC_OK or HC_ENOMEM. */
int hc_curve_add_table(struct report *r, const struct curve *c, int annualised);

/*
 * The exact curve from summary statistics alone (mo from
 * hc_moments_from_summary) at sizes, annualised by periods_per_year (0: on
 * the inputs' scale), as the report `holdcount formula` prints: the
 * averages, the implied correlation, the floor, and the table "curve";
 * plain shows the sd-scale columns as plain numbers (inputs in an unknown
 * unit, such as percent squared).  *out is new (hc_report_free) or NULL on
 * error: hc_curve_exact's errors, HC_ENOMEM.
 */
int hc_curve_formula(struct report **out, const struct moments *mo, const size_t *sizes, size_t nsizes,
		     double periods_per_year, int plain, struct hc_error *err);

/* Free r and everything it owns; NULL is a no-op. */
void hc_curve_result_free(struct hc_curve_result *r);

#ifdef __cplusplus
}
#endif

#endif
