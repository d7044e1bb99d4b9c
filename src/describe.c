/*
 * describe.c - what was read from a data source (describe.h): counts,
 * dates, scale, the averages, and one row per security kept or dropped.
 */
#include "holdcount/describe.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/covmatrix.h"
#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"

/* One security's observed periods and annualised standard deviation, two
 * passes (mean, then squared deviations) for accuracy, gaps skipped, sample
 * divisor n-1 as in the covariance matrix. */
static void security_sd(const double *x, size_t t, double p, size_t *nobs, double *sd)
{
	double mean = 0.0, ss = 0.0;
	size_t k, n = 0;

	for (k = 0; k < t; k++)
		if (!isnan(x[k])) {
			mean += x[k];
			n++;
		}
	*nobs = n;
	*sd = NAN;
	if (n < 2)
		return;
	mean /= (double)n;
	for (k = 0; k < t; k++)
		if (!isnan(x[k]))
			ss += (x[k] - mean) * (x[k] - mean);
	*sd = sqrt(ss / (double)(n - 1) * p);
}

static int add_kept(struct report *r, const struct universe *u)
{
	struct report_table *t = hc_report_add_table(r, "kept", "securities kept");
	size_t i, nobs;
	double sd;

	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "periods", "periods", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "sd", "sd", REPORT_STYLE_PERCENT) ||
	    hc_report_table_add_column(t, "periods_per_year", "per year", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < u->m; i++) {
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, u->ids[i]))
			return HC_ENOMEM;
		security_sd(u->x + i * u->t, u->t, u->periods_per_year, &nobs, &sd);
		hc_report_table_set_int(t, i, 1, (long long)nobs);
		hc_report_table_set_real(t, i, 2, sd);
		/* A CSV of this table alone (--table securities) says its scale too. */
		hc_report_table_set_real(t, i, 3, u->periods_per_year);
	}
	return HC_OK;
}

static int add_dropped(struct report *r, const struct universe *u)
{
	struct report_table *t = hc_report_add_table(r, "dropped", "securities dropped");
	size_t i;

	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "reason", "reason", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < u->ndropped; i++)
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, u->dropped[i].id) ||
		    hc_report_table_set_text(t, i, 1, u->dropped[i].reason))
			return HC_ENOMEM;
	return HC_OK;
}

/* The universe's averages and the sds they imply, scaled by p (periods a
 * year, or 1): the same fields whether from returns or from a matrix. */
static int add_averages(struct report *r, const struct moments *mo, double p)
{
	if (hc_report_add_real(r, "average_variance", "average variance", mo->average_variance * p, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_covariance", "average covariance", mo->average_covariance * p,
			    REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_correlation", "average correlation",
			    mo->has_correlation ? mo->average_correlation : NAN, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(r, "floor_sd", "floor sd (unbounded universe)",
			    mo->average_covariance >= 0 ? sqrt(mo->average_covariance * p) : NAN, REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(r, "universe_sd", "equal-weight universe sd", sqrt(mo->universe_variance * p),
			    REPORT_STYLE_PERCENT))
		return HC_ENOMEM;
	return HC_OK;
}

static int build(struct report *r, const struct hc_source *s, const struct moments *mo)
{
	const struct universe *u = s->u;
	double p = u->periods_per_year;
	char first[16] = "", last[16] = "";

	if (u->t > 0) {
		hc_universe_format_date(u->dates[0], first);
		hc_universe_format_date(u->dates[u->t - 1], last);
	}
	if (hc_report_add_text(r, "source", "source", u->source ? u->source : "") ||
	    hc_report_add_int(r, "securities", "securities kept", (long long)u->m) ||
	    hc_report_add_int(r, "securities_read", "securities read", (long long)u->m_read) ||
	    hc_report_add_int(r, "securities_dropped", "securities dropped", (long long)u->ndropped) ||
	    hc_report_add_int(r, "periods", "periods", (long long)u->t) ||
	    hc_report_add_text(r, "first_date", "first date", first) ||
	    hc_report_add_text(r, "last_date", "last date", last) ||
	    hc_report_add_scale(r, p, 1) ||
	    hc_report_add_bool(r, "periods_per_year_detected", "detected from the dates",
			    u->periods_detected) ||
	    hc_report_add_text(r, "covariances", "covariances",
			    s->kind == HC_SOURCE_RAGGED ? "none needed: per-period sums (data with gaps, read period by period)"
			    : s->psd.repaired ? "pairwise-complete (data with gaps), repaired to the nearest positive "
					   "semi-definite matrix"
			    : u->has_missing ? "pairwise-complete (data with gaps)" : "complete data") ||
	    hc_source_report_treatment(s, r) || hc_datacheck_report_kept(r, &u->checks) ||
	    hc_source_report_reading(s, r) ||
	    add_averages(r, mo, p))
		return HC_ENOMEM;
	if (add_kept(r, u) || add_dropped(r, u) || hc_source_report_psd(s, r))
		return HC_ENOMEM;
	return hc_report_add_cautions(r);
}

/* From a covariance matrix: no periods or dates; its own units unless
 * --periods-per-year says the entries are per period. */
static int build_matrix(struct report *r, const struct hc_source *s, const struct moments *mo)
{
	const struct covmatrix *cm = s->cm;
	const char *path = s->name;
	struct report_table *t;
	double p = s->periods_per_year;
	int annualised = s->annualised;
	size_t i;

	if (hc_report_add_text(r, "source", "source", path) ||
	    hc_report_add_text(r, "input", "input", "covariance matrix") ||
	    hc_report_add_int(r, "securities", "securities kept", (long long)cm->m) ||
	    hc_report_add_int(r, "securities_read", "securities read", (long long)cm->m) ||
	    hc_report_add_int(r, "securities_dropped", "securities dropped", 0) ||
	    hc_report_add_none(r, "periods", "periods") ||
	    hc_report_add_none(r, "first_date", "first date") ||
	    hc_report_add_none(r, "last_date", "last date") ||
	    hc_report_add_scale(r, p, annualised) ||
	    hc_report_add_bool(r, "periods_per_year_detected", "detected from the dates", 0) ||
	    add_averages(r, mo, p))
		return HC_ENOMEM;
	t = hc_report_add_table(r, "kept", "securities kept");
	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "periods", "periods", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "sd", "sd", REPORT_STYLE_PERCENT) ||
	    hc_report_table_add_column(t, "periods_per_year", "per year", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < cm->m; i++) {
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, cm->ids[i]))
			return HC_ENOMEM;
		hc_report_table_set_real(t, i, 2, sqrt(cm->a[i * cm->m + i] * p));
		if (annualised)
			hc_report_table_set_real(t, i, 3, p);
	}
	t = hc_report_add_table(r, "dropped", "securities dropped");
	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "reason", "reason", REPORT_STYLE_PLAIN) || hc_source_report_psd(s, r))
		return HC_ENOMEM;
	return hc_report_add_cautions(r);
}

/* With gaps left and no repair, warn when the pairwise-complete matrix the
 * averages come from is not positive semi-definite -- curve and enough
 * refuse that matrix, so describe must not print its averages silently. */
static int psd_note(struct report *r, const struct hc_source *s, const double *pw, struct hc_error *err)
{
	struct covmatrix *cm = NULL;
	const double *a = s->cm ? s->cm->a : pw;
	double lmin = 0;
	char text[400];
	int rc = HC_OK;

	if (!a) {
		if ((rc = hc_covmatrix_from_universe(s->u, &cm, err)) != HC_OK)
			return rc;
		a = cm->a;
	}
	/* dsyevd's O(M^3) on the BLAS threads, stopped again after */
	hc_moments_blas_threaded(4.0 / 3.0 * (double)s->u->m * (double)s->u->m * (double)s->u->m);
	rc = hc_covmatrix_min_eigenvalue(a, s->u->m, &lmin, err);
	hc_moments_blas_serial();
	hc_covmatrix_free(cm);
	if (rc != HC_OK || lmin >= 0)
		return rc;
	snprintf(text, sizeof text,
		 "warning: the pairwise-complete covariance matrix is not positive semi-definite (smallest "
		 "eigenvalue %.4g per period); these averages come from it as it is, and curve and enough refuse "
		 "it without --repair-psd", lmin);
	return hc_report_add_note(r, text) ? hc_error(err, HC_ENOMEM, "out of memory building the report") : HC_OK;
}

int hc_describe(struct report **out, const struct hc_source *s, struct hc_error *err)
{
	struct report *r;
	struct moments mo;
	double *pw = NULL;
	int rc;

	*out = NULL;
	/* series with gaps and no matrix yet: the moments and the matrix for the
	 * check below from one set of products, not two */
	if (s->kind == HC_SOURCE_PAIRWISE && !s->cm && s->u->has_missing && !s->psd.repaired)
		rc = hc_moments_pairwise_matrix(&mo, s->u, &pw, err);
	else
		rc = hc_moments_from_source(&mo, s, err);
	if (rc != HC_OK)
		return rc;
	r = hc_report_alloc();
	/* a ragged history's averages come from per-period sums, not from a
	 * pairwise matrix (which need not exist: a security delisted before
	 * another listed), so there is nothing to check */
	if (r && s->kind == HC_SOURCE_PAIRWISE && s->u->has_missing && !s->psd.repaired &&
	    (rc = psd_note(r, s, pw, err)) != HC_OK) {
		hc_report_free(r);
		hc_free(pw);
		return rc;
	}
	hc_free(pw);
	if (!r || (s->kind == HC_SOURCE_MATRIX ? build_matrix(r, s, &mo) : build(r, s, &mo))) {
		hc_report_free(r);
		return hc_error(err, HC_ENOMEM, "out of memory building the report");
	}
	*out = r;
	return HC_OK;
}
