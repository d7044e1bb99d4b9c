/*
 * source.c - one data source type for every analysis (source.h).
 */
#include "holdcount/source.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/periodic.h"

void hc_source_options_init(struct hc_source_options *opt)
{
	memset(opt, 0, sizeof *opt);
}

void hc_source_free(struct hc_source *s)
{
	if (!s)
		return;
	hc_universe_free(s->own_u);
	hc_covmatrix_free(s->own_cm);
	hc_periodic_free(s->own_per);
	hc_free(s->own_name);
	hc_free(s);
}

void hc_source_init_series(struct hc_source *s, const struct universe *u)
{
	memset(s, 0, sizeof *s);
	s->kind = u->has_missing ? HC_SOURCE_PAIRWISE : HC_SOURCE_SERIES;
	s->name = u->source;
	s->u = u;
	s->periods_per_year = u->periods_per_year;
	s->annualised = 1;
}

void hc_source_init_matrix(struct hc_source *s, const struct covmatrix *cm, double periods_per_year)
{
	memset(s, 0, sizeof *s);
	s->kind = HC_SOURCE_MATRIX;
	s->cm = cm;
	s->annualised = periods_per_year > 0;
	s->periods_per_year = periods_per_year > 0 ? periods_per_year : 1.0;
}

/*
 * A matrix with a negative eigenvalue gives some portfolio a negative
 * variance, so it is no covariance matrix.  One eigen decomposition both
 * tests and, when asked, repairs (hc_covmatrix_nearest_psd: eigenvalue
 * clipping, Higham, 1988, Linear Algebra and its Applications 103).  Moves
 * within the loader's symmetry tolerance, relative to sqrt(a_ii a_jj), are
 * rounding in a printed file and leave the matrix as it was.  Memory: the
 * copy b and the decomposition's eigenvectors and rebuilt matrix, three
 * m x m arrays beside a, checked against the budget first.
 */
static int settle_psd(struct hc_source *s, struct covmatrix *cm, const char *refusal,
		      struct hc_error *err)
{
	struct covmatrix_psd st;
	size_t m = cm->m, bytes;
	double mm = (double)m * (double)m * sizeof(double);
	double *b;
	int rc;

	if (hc_memory_check(cm->max_bytes, mm, 3 * mm, err,
			    "%s: covariance matrix of %zu securities too large to check for negative eigenvalues",
			    s->name, m))
		return HC_ENOMEM;
	if (hc_mul_size(m * m, sizeof *b, &bytes) || !(b = hc_malloc(bytes)))
		return hc_error(err, HC_ENOMEM, "out of memory checking the covariance matrix");
	rc = hc_covmatrix_nearest_psd(cm->a, m, b, &st, err);
	if (rc == HC_OK) {
		s->psd.checked = 1;
		s->psd.negative = st.negative;
		s->psd.min_eigenvalue = st.min_eigenvalue;
		s->psd.norm = st.norm;
		if (st.max_relative_move > COVMATRIX_DEFAULT_SYMMETRY_TOL) {
			if (!s->psd.asked)
				rc = hc_error(err, HC_EDATA, "%s: %s", s->name,
					      refusal ? refusal : HC_SOURCE_DEFAULT_REFUSAL);
			else {
				memcpy(cm->a, b, bytes);
				s->psd.repaired = 1;
				s->psd.distance = st.distance;
			}
		}
	}
	hc_free(b);
	return rc;
}

static struct hc_source *source_alloc(int kind, const struct hc_source_options *opt)
{
	struct hc_source *s = hc_calloc(1, sizeof *s);

	if (!s)
		return NULL;
	s->kind = kind;
	/* a ragged source builds no matrix to check or repair: each fund's own
	 * small matrix is the audit's (audit.c) */
	s->psd.asked = opt->repair_psd && kind != HC_SOURCE_RAGGED;
	return s;
}

int hc_source_from_universe(struct hc_source **out, struct universe *u,
			    const struct hc_source_options *opt, struct hc_error *err)
{
	struct hc_source *s;
	struct covmatrix *cm = NULL;
	int rc;

	*out = NULL;
	s = source_alloc(!u->has_missing ? HC_SOURCE_SERIES : opt->ragged ? HC_SOURCE_RAGGED : HC_SOURCE_PAIRWISE,
			 opt);
	if (!s) {
		hc_universe_free(u);
		return hc_error(err, HC_ENOMEM, "out of memory");
	}
	s->own_u = u;
	s->u = u;
	s->name = u->source;
	s->periods_per_year = u->periods_per_year;
	s->annualised = 1;
	/* the data checks (datacheck.h), unless the caller ran them already:
	 * every analysis's output carries their count */
	if (!u->checks.run) {
		struct datacheck_result *d = NULL;

		if ((rc = hc_datacheck_run(&d, u, err)) != HC_OK) {
			hc_source_free(s);
			return rc;
		}
		hc_datacheck_keep(u, d);
		hc_datacheck_free(d);
	}
	/* With gaps left no portfolio has a complete return series, so random
	 * portfolios and fund variances come from the pairwise-complete
	 * covariances, when they form a valid matrix (or from its repair, which
	 * the exact figures then use too).  A ragged source reads the series
	 * period by period (periodic.h) and never builds the M x M matrix: its
	 * figures use the per-period sums, and an audit takes each fund's risk
	 * from its own holdings' pairwise-complete covariances (audit.c), so
	 * only pairs within a fund need to overlap. */
	if (s->kind == HC_SOURCE_RAGGED) {
		rc = hc_periodic_alloc(&s->own_per, u, 0, u->t, err);
		if (rc != HC_OK) {
			hc_source_free(s);
			return rc;
		}
		s->per = s->own_per;
	} else if (s->kind == HC_SOURCE_PAIRWISE && (opt->need_matrix || opt->need_fund_matrix || opt->repair_psd)) {
		rc = hc_covmatrix_from_universe(u, &cm, err);
		if (rc == HC_OK) {
			s->own_cm = cm;
			s->cm = cm;
			rc = settle_psd(s, cm, opt->psd_refusal, err);
		}
		if (rc != HC_OK) {
			hc_source_free(s);
			return rc;
		}
	}
	*out = s;
	return HC_OK;
}

int hc_source_load_universe(struct hc_source **out, const char *path,
			    const struct universe_options *uo,
			    const struct hc_source_options *opt, struct hc_error *err)
{
	struct universe *u = NULL;
	int rc;

	*out = NULL;
	rc = hc_universe_load(&u, path, uo, err);
	return rc ? rc : hc_source_from_universe(out, u, opt, err);
}

int hc_source_from_covmatrix(struct hc_source **out, struct covmatrix *cm, const char *name,
			     const struct hc_source_options *opt, struct hc_error *err)
{
	struct hc_source *s;
	double p = opt->periods_per_year;
	int rc;

	*out = NULL;
	if (!(p >= 0) || isinf(p)) {
		hc_covmatrix_free(cm);
		return hc_error(err, HC_EUSAGE, "periods per year must be positive, found %g", p);
	}
	s = source_alloc(HC_SOURCE_MATRIX, opt);
	if (!s || !(s->own_name = hc_strdup(name ? name : ""))) {
		hc_free(s);
		hc_covmatrix_free(cm);
		return hc_error(err, HC_ENOMEM, "out of memory");
	}
	s->own_cm = cm;
	s->cm = cm;
	s->name = s->own_name;
	s->annualised = p > 0;
	s->periods_per_year = p > 0 ? p : 1.0;
	rc = settle_psd(s, cm, opt->psd_refusal, err);
	if (rc != HC_OK) {
		hc_source_free(s);
		return rc;
	}
	*out = s;
	return HC_OK;
}

int hc_source_load_covmatrix(struct hc_source **out, const char *path, size_t max_bytes,
			     const struct hc_source_options *opt, struct hc_error *err)
{
	struct covmatrix *cm = NULL;
	int rc;

	*out = NULL;
	rc = hc_covmatrix_load_within(&cm, path, COVMATRIX_DEFAULT_SYMMETRY_TOL, max_bytes, err);
	return rc ? rc : hc_source_from_covmatrix(out, cm, path, opt, err);
}

size_t hc_source_m(const struct hc_source *s)
{
	/* a ragged source's per-period sums keep every security observed twice
	 * or more, which the loader's variation check makes every security */
	return s->u ? s->u->m : s->cm->m;
}

const char *hc_source_id(const struct hc_source *s, size_t i)
{
	return s->u ? s->u->ids[i] : s->cm->ids[i];
}

long hc_source_find(const struct hc_source *s, const char *id)
{
	return s->u ? hc_universe_find(s->u, id) : hc_covmatrix_find(s->cm, id);
}

size_t hc_source_periods(const struct hc_source *s)
{
	return s->u ? s->u->t : 0;
}

const double *hc_source_matrix(const struct hc_source *s)
{
	return s->kind == HC_SOURCE_SERIES || !s->cm ? NULL : s->cm->a;
}

int hc_source_has_series(const struct hc_source *s)
{
	return s->kind == HC_SOURCE_SERIES;
}

void hc_source_psd_text(const struct hc_source *s, char *buf, size_t size)
{
	const struct hc_source_psd *ps = &s->psd;
	const char *unit = s->annualised ? " a year" : "";
	double scale = s->periods_per_year;

	if (!ps->repaired) {
		if (size)
			buf[0] = '\0';
		return;
	}
	snprintf(buf, size,
		 "%s was not positive semi-definite, so it was replaced by the nearest positive "
		 "semi-definite matrix in the Frobenius norm (eigenvalue clipping, Higham 1988): %zu "
		 "negative eigenvalue%s set to zero, the most negative %.4g%s; the matrix moved by %.4g%s "
		 "(Frobenius distance, %.3g%% of its Frobenius norm), and %s",
		 s->kind == HC_SOURCE_MATRIX ? "the covariance matrix" : "the pairwise-complete covariance matrix",
		 ps->negative, ps->negative == 1 ? "" : "s", ps->min_eigenvalue * scale, unit,
		 ps->distance * scale, unit, 100 * ps->distance / ps->norm, "every figure uses the repaired matrix");
}

int hc_source_report_psd(const struct hc_source *s, struct report *r)
{
	const struct hc_source_psd *ps = &s->psd;
	int style = s->annualised ? REPORT_STYLE_SCI : REPORT_STYLE_PLAIN;
	double scale = s->periods_per_year;
	char text[600];

	if (!ps->asked)
		return HC_OK;
	if (hc_report_add_text(r, "psd_repair", "positive semi-definite repair",
			    ps->repaired ? "nearest positive semi-definite matrix, by eigenvalue clipping (Higham 1988)"
			    : ps->checked ? "not needed: the matrix is positive semi-definite (up to rounding)"
			    : "not needed: no gaps left, and complete series give a positive semi-definite matrix") ||
	    hc_report_add_bool(r, "psd_repaired", "matrix repaired", ps->repaired))
		return HC_ENOMEM;
	if (ps->checked &&
	    (hc_report_add_int(r, "psd_negative_eigenvalues", "negative eigenvalues", (long long)ps->negative) ||
	     hc_report_add_real(r, "psd_min_eigenvalue", "smallest eigenvalue", ps->min_eigenvalue * scale, style) ||
	     hc_report_add_real(r, "psd_repair_distance", "repair distance (Frobenius)", ps->distance * scale, style) ||
	     hc_report_add_real(r, "psd_repair_relative_distance", "repair distance / matrix norm",
			     ps->distance / ps->norm, REPORT_STYLE_SCI)))
		return HC_ENOMEM;
	if (ps->repaired) {
		hc_source_psd_text(s, text, sizeof text);
		if (hc_report_add_note(r, text))
			return HC_ENOMEM;
	}
	return HC_OK;
}

int hc_source_report_treatment(const struct hc_source *s, struct report *r)
{
	const struct hc_periodic *p = s->per;
	const char *text;

	size_t lo, mid, hi;

	switch (s->kind) {
	case HC_SOURCE_RAGGED:
		break;
	case HC_SOURCE_SERIES:
	case HC_SOURCE_PAIRWISE:
		/* the same lines as a ragged history's: securities observed per period */
		text = s->kind == HC_SOURCE_SERIES ? "complete return series"
			: "return history with gaps, read through pairwise-complete covariances";
		if (hc_universe_alive(s->u, &lo, &mid, &hi) ||
		    hc_report_add_text(r, "treatment", "treatment", text) ||
		    hc_report_add_int(r, "alive_min", "securities alive per period, fewest", (long long)lo) ||
		    hc_report_add_int(r, "alive_median", "securities alive per period, median", (long long)mid) ||
		    hc_report_add_int(r, "alive_max", "securities alive per period, most", (long long)hi))
			return HC_ENOMEM;
		return HC_OK;
	default:
		return HC_OK;
	}
	if (hc_report_add_text(r, "treatment", "treatment", HC_SOURCE_RAGGED_TREATMENT) ||
	    hc_report_add_int(r, "alive_min", "securities alive per period, fewest", (long long)p->alive_min) ||
	    hc_report_add_int(r, "alive_median", "securities alive per period, median", (long long)p->alive_median) ||
	    hc_report_add_int(r, "alive_max", "securities alive per period, most", (long long)p->alive_max) ||
	    hc_report_add_int(r, "securities_complete", "securities with no gap", (long long)p->complete))
		return HC_ENOMEM;
	if (p->m_short &&
	    hc_report_add_int(r, "securities_single_period", "securities observed in one period only (left out)",
			      (long long)p->m_short))
		return HC_ENOMEM;
	return HC_OK;
}

int hc_source_report_reading(const struct hc_source *s, struct report *r)
{
	const struct universe *u = s->u;

	if (!u)
		return HC_OK;
	if (u->bad_cells &&
	    (hc_report_add_int(r, "bad_cells", "cells read as missing (--bad-cells missing)", (long long)u->bad_cells) ||
	     hc_report_add_text(r, "bad_cell_first", "the first of them", u->bad_first)))
		return HC_ENOMEM;
	if (u->periods_read && u->periods_read != u->t &&
	    hc_report_add_int(r, "periods_read", "periods read (before --frequency or --from/--to)",
			      (long long)u->periods_read))
		return HC_ENOMEM;
	return HC_OK;
}
