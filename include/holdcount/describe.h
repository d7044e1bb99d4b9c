/*
 * describe.h - what was read from a data source: the result `holdcount
 * describe` prints.
 */
#ifndef HOLDCOUNT_DESCRIBE_H
#define HOLDCOUNT_DESCRIBE_H

#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/source.h"

#ifdef __cplusplus
extern "C" {
#endif

/*
 * The description of s as a report (report.h): fields source, securities,
 * securities_read, securities_dropped, periods, first_date, last_date, the
 * scale (hc_report_add_scale), periods_per_year_detected, covariances (series)
 * or input (a matrix), average_variance, average_covariance,
 * average_correlation, floor_sd, universe_sd (annualised like the source);
 * tables "kept" (id, periods, sd, periods_per_year: one security's sd over
 * its own observed periods, divisor n-1) and "dropped" (id, reason); what
 * the positive semi-definite policy did (hc_source_report_psd); the
 * cautions.  *out is new (hc_report_free) or NULL on error: the moments'
 * errors (hc_moments_from_source), HC_ENOMEM.
 */
int hc_describe(struct report **out, const struct hc_source *s, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
