/*
 * hc_curve_report.c - a curve as a report table (the one result model that
 * every writer renders, report.h).  Kept apart from curve.c so that the
 * numerical module does not pull in the writers.
 */
#include "holdcount/curve.h"

#include <math.h>

static const struct {
	const char *key, *title;
	int style;
} columns[] = {
	{"n", "holdings", REPORT_STYLE_PLAIN},
	{"expected_variance", "E[var]", REPORT_STYLE_SCI},
	{"expected_sd", "sqrt E[var]", REPORT_STYLE_PERCENT},
	{"variance_sd", "sd of var", REPORT_STYLE_SCI},
	{"expected_tracking_error", "RMS tracking error", REPORT_STYLE_PERCENT},
	{"diversifiable_share", "share above floor", REPORT_STYLE_PERCENT},
	{"sampled_mean_variance", "sampled var", REPORT_STYLE_SCI},
	{"sampled_variance_se", "its MC s.e.", REPORT_STYLE_SCI},
	{"sampled_mean_sd", "mean sd", REPORT_STYLE_PERCENT},
	{"sd_p05", "sd 5%", REPORT_STYLE_PERCENT},
	{"sd_p50", "sd 50%", REPORT_STYLE_PERCENT},
	{"sd_p95", "sd 95%", REPORT_STYLE_PERCENT},
	{"z_score", "z", REPORT_STYLE_FIXED2},
};

#define NCOLS (sizeof columns / sizeof columns[0])

int hc_curve_report(const struct curve *c, struct report_table *t)
{
	size_t i, j, row;
	const struct curve_point *p;

	if (t->ncols)
		return HC_EUSAGE;
	for (j = 0; j < NCOLS; j++)
		if (hc_report_table_add_column(t, columns[j].key, columns[j].title, columns[j].style))
			return HC_ENOMEM;
	for (i = 0; i < c->npoints; i++) {
		p = &c->points[i];
		if (hc_report_table_add_row(t))
			return HC_ENOMEM;
		row = t->nrows - 1;
		hc_report_table_set_int(t, row, 0, (long long)p->n);
		hc_report_table_set_real(t, row, 1, p->expected_variance);
		hc_report_table_set_real(t, row, 2, p->expected_sd);
		hc_report_table_set_real(t, row, 3, p->variance_sd);
		hc_report_table_set_real(t, row, 4, p->expected_tracking_error);
		hc_report_table_set_real(t, row, 5, p->diversifiable_share);
		if (!p->sampled)
			continue;
		hc_report_table_set_real(t, row, 6, p->sampled_mean_variance);
		hc_report_table_set_real(t, row, 7, p->sampled_variance_se);
		hc_report_table_set_real(t, row, 8, p->sampled_mean_sd);
		hc_report_table_set_real(t, row, 9, p->sd_p05);
		hc_report_table_set_real(t, row, 10, p->sd_p50);
		hc_report_table_set_real(t, row, 11, p->sd_p95);
		hc_report_table_set_real(t, row, 12, p->z_score);
	}
	return HC_OK;
}
