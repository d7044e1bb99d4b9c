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
#include "holdcount/moments.h"
#include "holdcount/report.h"
#include "holdcount/source.h"
#include "holdcount/strata.h"

#ifdef __cplusplus
extern "C" {
#endif

#define CURVE_DEFAULT_PATHS 10000
#define CURVE_DEFAULT_SEED 1

struct hc_curve_options {
	size_t paths;                       /* random portfolios a count; 0 = exact only */
	uint64_t seed;
	int threads;                        /* 0 = OpenMP's default */
	const struct hc_strata_use *strata; /* NULL (or no map): no stratified columns */
	int full;                           /* also the exact curve at every count 1..M */
	const struct moments *moments;      /* the source's, when the caller has them; NULL: computed */
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
	struct report *report;         /* fields, table "curve" (with stratified_* columns),
	                                * what the PSD policy did, notes and cautions */
};

/*
 * The curve of src at sizes[0..nsizes) (each 1..M; hc_curve_parse_sizes or
 * hc_curve_default_sizes make them), annualised like the source: stratified
 * draws first when asked (from complete series only, paths above 0), then
 * the exact figures and the sampled columns from the same seed.  Random
 * portfolios come from the series, or from the matrix of a matrix source
 * (build series with gaps with need_matrix when paths > 0).  *out is new
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
