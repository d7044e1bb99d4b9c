/*
 * datacheck.c - checks on a loaded return history (datacheck.h).
 */
#include "holdcount/datacheck.h"

#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/memory.h"
#include "holdcount/report.h"

static const char *const kind_names[DATACHECK_NKINDS] = {
	"prices", "percents", "total-loss", "split", "stale", "extreme"
};

/* Split-like returns: price ratios 1/2 .. 1/10 and 2 .. 10 (common practice). */
static const double split_returns[] = { -0.5, -2.0 / 3.0, -0.75, -0.8, -0.9, 1.0, 2.0, 3.0, 4.0, 9.0 };

const char *hc_datacheck_name(int kind)
{
	return kind >= 0 && kind < DATACHECK_NKINDS ? kind_names[kind] : NULL;
}

void hc_datacheck_free(struct datacheck_result *r)
{
	if (!r)
		return;
	hc_free(r->findings);
	hc_free(r);
}

/*
 * The median of v[0..n), n > 0, reordering v: Hoare's selection ("FIND",
 * Hoare, 1961, Communications of the ACM 4(7), Algorithm 65) in Wirth's
 * form (Wirth, 1976, "Algorithms + Data Structures = Programs", 2.3.4),
 * O(n) expected instead of a sort's O(n log n).  It returns the same
 * order statistics a sort would: v[k] is the k-th smallest and every
 * element before it is no larger, so for even n the lower middle one is
 * the largest of those.
 */
static double median_select(double *v, size_t n)
{
	ptrdiff_t lo = 0, hi = (ptrdiff_t)n - 1, k = (ptrdiff_t)(n / 2), i, j;
	double lower;

	while (lo < hi) {
		double pivot = v[k], tmp;

		i = lo;
		j = hi;
		do {
			while (v[i] < pivot)
				i++;
			while (pivot < v[j])
				j--;
			if (i <= j) {
				tmp = v[i];
				v[i] = v[j];
				v[j] = tmp;
				i++;
				j--;
			}
		} while (i <= j);
		if (j < k)
			lo = i;
		if (k < i)
			hi = j;
	}
	if (n % 2)
		return v[k];
	lower = v[0];
	for (i = 1; i < k; i++)
		if (v[i] > lower)
			lower = v[i];
	return 0.5 * (lower + v[k]);
}

static int add(struct datacheck_result *r, size_t *cap, int kind, size_t sec, size_t per,
	       double value, int reversed)
{
	struct datacheck_finding *f;

	f = hc_grow(r->findings, cap, r->nfindings, sizeof *f, 64);
	if (!f)
		return -1;
	r->findings = f;
	f = &r->findings[r->nfindings++];
	f->kind = kind;
	f->security = sec;
	f->period = per;
	f->value = value;
	f->reversed = reversed;
	r->count[kind]++;
	return 0;
}

/* The split ratio nearest r when within tol of it (in log price ratio), or
 * 0.  On a split day the price also moves by the day's own return, so the
 * tolerance is the security's robust sd times DATACHECK_SPLIT_MADS, never
 * below DATACHECK_SPLIT_TOL: a 1-for-10 reverse split on a +1.9% day is a
 * ratio of 10.19, which a fixed 0.5% tolerance would miss.  Nor above
 * DATACHECK_SPLIT_TOL_MAX: on monthly data three robust sds are some 30%,
 * and every large month would look like a split. */
static double split_like(double r, double tol)
{
	double best = 0, dist = tol, d;
	size_t k;

	if (!(r > -1))
		return 0;
	for (k = 0; k < sizeof split_returns / sizeof split_returns[0]; k++) {
		d = fabs(log1p(r) - log1p(split_returns[k]));
		if (d <= dist) {
			dist = d;
			best = split_returns[k];
		}
	}
	return best;
}

/* The tolerance of split_like for a security of robust sd mad, on data
 * with ppy periods a year.  Monthly and coarser data keep the fixed
 * tolerance: there a period's own move is as large as the gaps between
 * split ratios, so a wider window only finds ordinary large months. */
static double split_tolerance(double mad, double ppy)
{
	if (ppy < DATACHECK_SPLIT_MIN_PPY)
		return DATACHECK_SPLIT_TOL;
	return fmin(DATACHECK_SPLIT_TOL_MAX, fmax(DATACHECK_SPLIT_TOL, DATACHECK_SPLIT_MADS * mad));
}

/* Undone within the next periods: (1 + r_t)(1 + r_{t+j}) within tol of 1. */
static int reversed_after(const double *x, size_t t, size_t k, double tol)
{
	size_t j;

	for (j = k + 1; j < t && j <= k + DATACHECK_REVERSAL_PERIODS; j++)
		if (!isnan(x[j]) && fabs((1 + x[k]) * (1 + x[j]) - 1) <= tol)
			return 1;
	return 0;
}

/* The checks of one security; v is scratch of t doubles. */
static int check_security(struct datacheck_result *r, size_t *cap, const struct universe *u, size_t i, double *v)
{
	const double *x = u->x + i * u->t;
	size_t k, n = 0, run = 0, run_start = 0;
	double med, mad, positive = 1;

	for (k = 0; k < u->t; k++)
		if (!isnan(x[k])) {
			v[n++] = x[k];
			positive = positive && x[k] > 0;
		}
	if (n < 2)
		return 0;
	med = median_select(v, n);
	if (positive && med > DATACHECK_PRICE_MEDIAN)
		return add(r, cap, DATACHECK_PRICES, i, 0, med, 0);
	for (k = 0; k < n; k++)
		v[k] = fabs(v[k]);
	mad = median_select(v, n);   /* here the median size of a return */
	if (mad > DATACHECK_PERCENT_MEDIAN)
		return add(r, cap, DATACHECK_PERCENTS, i, 0, mad, 0);
	for (k = n = 0; k < u->t; k++)
		if (!isnan(x[k]))
			v[n++] = fabs(x[k] - med);
	mad = 1.4826 * median_select(v, n);
	for (k = 0; k <= u->t; k++) {
		int zero = k < u->t && x[k] == 0.0;

		if (zero && run++ == 0)
			run_start = k;
		if (!zero && k < u->t && isnan(x[k]))
			continue;
		if (!zero) {
			if (run >= DATACHECK_STALE_RUN && add(r, cap, DATACHECK_STALE, i, run_start, (double)run, 0))
				return -1;
			run = 0;
		}
		if (k == u->t || isnan(x[k]) || zero)
			continue;
		if (x[k] <= -1) {
			if (add(r, cap, DATACHECK_TOTAL_LOSS, i, k, x[k], 0))
				return -1;
			continue;
		}
		if (!(fabs(x[k] - med) > DATACHECK_JUMP_MADS * mad))
			continue;
		if (split_like(x[k], split_tolerance(mad, u->periods_per_year)) != 0) {
			if (add(r, cap, DATACHECK_SPLIT, i, k, x[k], reversed_after(x, u->t, k, split_tolerance(mad, u->periods_per_year))))
				return -1;
		} else if (fabs(x[k]) > 0.5 && reversed_after(x, u->t, k, DATACHECK_SPIKE_TOL) &&
			   add(r, cap, DATACHECK_EXTREME, i, k, x[k], 1)) {
			return -1;
		}
	}
	return 0;
}

/* Weekdays (1970-01-01 was a Thursday), days a week, month ends, and the
 * periods a year the calendar itself shows. */
static void calendar(struct datacheck_result *r, const struct universe *u)
{
	size_t k, daily = 0, month_end = 1, days = 0;
	char buf[16];

	for (k = 0; k < u->t; k++) {
		r->weekdays |= 1u << (unsigned)((((long)u->dates[k] + 3) % 7 + 7) % 7);
		hc_universe_format_date(u->dates[k] + 1, buf);
		month_end = month_end && buf[8] == '0' && buf[9] == '1';
		if (k && u->dates[k] - u->dates[k - 1] <= 4)
			daily++;
	}
	if (u->t > 1 && 2 * daily >= u->t - 1) {
		for (k = 0; k < 7; k++)
			days += (r->weekdays >> k) & 1u;
		r->days_a_week = (double)days;
	}
	r->month_end = r->days_a_week == 0 && month_end;
	if (u->t > 1 && u->dates[u->t - 1] > u->dates[0])
		r->calendar_periods_per_year = (double)(u->t - 1) * 365.2425 /
					       (double)(u->dates[u->t - 1] - u->dates[0]);
}

int hc_datacheck_run(struct datacheck_result **out, const struct universe *u, struct hc_error *err)
{
	struct datacheck_result *r = hc_calloc(1, sizeof *r);
	double *v = hc_malloc((u->t ? u->t : 1) * sizeof *v);
	size_t i, cap = 0;

	*out = NULL;
	if (!r || !v)
		goto nomem;
	for (i = 0; i < u->m; i++)
		if (check_security(r, &cap, u, i, v))
			goto nomem;
	calendar(r, u);
	hc_free(v);
	*out = r;
	return HC_OK;
nomem:
	hc_free(v);
	hc_datacheck_free(r);
	return hc_error(err, HC_ENOMEM, "out of memory checking the data");
}

void hc_datacheck_describe(const struct datacheck_finding *f, const struct universe *u,
			   char *buf, size_t size)
{
	const char *id = u->ids && u->ids[f->security] ? u->ids[f->security] : "?";
	char date[16];
	double s;

	hc_universe_format_date(u->dates[f->period], date);
	switch (f->kind) {
	case DATACHECK_PRICES:
		snprintf(buf, size, "%s: every cell positive with median %.4g: looks like prices read as returns "
			 "(--prices)", id, f->value);
		break;
	case DATACHECK_PERCENTS:
		snprintf(buf, size, "%s: median size of a return %.4g: looks like percents read as decimals "
			 "(--percent)", id, f->value);
		break;
	case DATACHECK_TOTAL_LOSS:
		snprintf(buf, size, "%s %s: return %.4g%% is a loss of 100%% or more", id, date, 100 * f->value);
		break;
	case DATACHECK_SPLIT:
		s = split_like(f->value, INFINITY)   /* a split finding: its nearest ratio */;
		if (s < 0)
			snprintf(buf, size, "%s %s: return %+.4g%% looks like an unadjusted %.0f-for-1 split (%s)", id,
				 date, 100 * f->value, 1 / (1 + s),
				 f->reversed ? "reversed within the next few periods: a bad print?" : "not reversed");
		else
			snprintf(buf, size, "%s %s: return %+.4g%% looks like an unadjusted 1-for-%.0f reverse split (%s)",
				 id, date, 100 * f->value, 1 + s,
				 f->reversed ? "reversed within the next few periods: a bad print?" : "not reversed");
		break;
	case DATACHECK_STALE:
		snprintf(buf, size, "%s %s: %.0f returns of exactly 0 in a row from here (a stale price)", id, date,
			 f->value);
		break;
	default:
		snprintf(buf, size, "%s %s: return %+.4g%% is far from the security's other returns", id, date,
			 100 * f->value);
	}
}

/* ---- the report `holdcount check` prints ---- */

static void weekday_text(unsigned mask, char *buf, size_t size)
{
	static const char *const names[7] = { "Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun" };
	size_t k, used = 0;

	buf[0] = '\0';
	for (k = 0; k < 7; k++)
		if (mask & (1u << k))
			used += (size_t)snprintf(buf + used, used < size ? size - used : 0, "%s%s",
						 used ? " " : "", names[k]);
}

static int build(struct report *r, const struct universe *u, const struct datacheck_result *d)
{
	struct report_table *t;
	char text[320], date[16];
	size_t j;
	int k;

	weekday_text(d->weekdays, text, sizeof text);
	if (hc_report_add_text(r, "source", "source", u->source ? u->source : "") ||
	    hc_report_add_int(r, "securities", "securities", (long long)u->m) ||
	    hc_report_add_int(r, "periods", "periods", (long long)u->t) ||
	    hc_report_add_text(r, "weekdays", "weekdays of the dates", text) ||
	    hc_report_add_real(r, "days_a_week", "days a week (daily data)", d->days_a_week > 0 ? d->days_a_week : NAN,
			       REPORT_STYLE_PLAIN) ||
	    hc_report_add_bool(r, "month_end", "every date a month end", d->month_end) ||
	    hc_report_add_real(r, "calendar_periods_per_year", "periods a year, counted from the dates",
			       d->calendar_periods_per_year, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(r, "periods_per_year", "periods per year used", u->periods_per_year,
			       REPORT_STYLE_PLAIN) ||
	    hc_report_add_int(r, "finding_count", "findings", (long long)d->nfindings))
		return HC_ENOMEM;
	/* cells the loader read as missing (--bad-cells missing) */
	if (u->bad_cells &&
	    (hc_report_add_int(r, "bad_cells", "cells read as missing (--bad-cells missing)", (long long)u->bad_cells) ||
	     hc_report_add_text(r, "bad_cell_first", "the first of them", u->bad_first)))
		return HC_ENOMEM;
	for (k = 0; k < DATACHECK_NKINDS; k++) {
		char key[32], title[48];

		snprintf(key, sizeof key, "count_%s", hc_datacheck_name(k));
		for (char *c = key; *c; c++)
			if (*c == '-')
				*c = '_';
		snprintf(title, sizeof title, "findings: %s", hc_datacheck_name(k));
		if (hc_report_add_int(r, key, title, (long long)d->count[k]))
			return HC_ENOMEM;
	}
	t = hc_report_add_table(r, "findings", "findings");
	if (!t || hc_report_table_add_column(t, "security", "security", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "date", "date", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "check", "check", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "value", "cell", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "finding", "finding", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (j = 0; j < d->nfindings; j++) {
		const struct datacheck_finding *f = &d->findings[j];

		hc_universe_format_date(u->dates[f->period], date);
		hc_datacheck_describe(f, u, text, sizeof text);
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, j, 0, u->ids[f->security]) ||
		    hc_report_table_set_text(t, j, 1, f->kind <= 1 ? "" : date) ||
		    hc_report_table_set_text(t, j, 2, hc_datacheck_name(f->kind)) ||
		    hc_report_table_set_text(t, j, 4, text))
			return HC_ENOMEM;
		hc_report_table_set_real(t, j, 3, f->value);
	}
	return hc_report_add_cautions(r);
}

int hc_datacheck_report(struct report **out, const struct universe *u, const struct datacheck_result *d,
			struct hc_error *err)
{
	struct report *r = hc_report_alloc();

	*out = NULL;
	if (!r || build(r, u, d)) {
		hc_report_free(r);
		return hc_error(err, HC_ENOMEM, "out of memory building the report");
	}
	*out = r;
	return HC_OK;
}

_Static_assert(DATACHECK_NKINDS == HC_UNIVERSE_CHECK_KINDS, "universe_checks holds one count a kind");

/* The fields of the count, the same in the report folder and in every
 * command's output: data_check_findings, then data_check_first and one
 * data_check_KIND per kind found. */
static int add_counts(struct report *r, size_t total, const size_t *count, const char *first)
{
	char key[48], title[64];
	int k;

	if (hc_report_add_int(r, "data_check_findings", "data-check findings",
			      (long long)total))
		return HC_ENOMEM;
	if (!total)
		return HC_OK;
	if (hc_report_add_text(r, "data_check_first", "the first finding", first))
		return HC_ENOMEM;
	for (k = 0; k < DATACHECK_NKINDS; k++) {
		if (!count[k])
			continue;
		snprintf(key, sizeof key, "data_check_%s", hc_datacheck_name(k));
		for (char *c = key; *c; c++)
			if (*c == '-')
				*c = '_';
		snprintf(title, sizeof title, "data-check findings: %s", hc_datacheck_name(k));
		if (hc_report_add_int(r, key, title, (long long)count[k]))
			return HC_ENOMEM;
	}
	return HC_OK;
}

int hc_datacheck_add_counts(struct report *r, const struct universe *u, const struct datacheck_result *d)
{
	char text[320] = "";

	if (d->nfindings)
		hc_datacheck_describe(&d->findings[0], u, text, sizeof text);
	return add_counts(r, d->nfindings, d->count, text);
}

void hc_datacheck_keep(struct universe *u, const struct datacheck_result *d)
{
	int k;

	memset(&u->checks, 0, sizeof u->checks);
	u->checks.run = 1;
	u->checks.total = d->nfindings;
	for (k = 0; k < DATACHECK_NKINDS; k++)
		u->checks.count[k] = d->count[k];
	if (d->nfindings)
		hc_datacheck_describe(&d->findings[0], u, u->checks.first, sizeof u->checks.first);
}

int hc_datacheck_report_kept(struct report *r, const struct universe_checks *c)
{
	if (!c || !c->run)
		return HC_OK;
	return add_counts(r, c->total, c->count, c->first);
}
