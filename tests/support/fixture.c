/* Test fixtures: hand-built universes (see fixture.h). */
#include "fixture.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#include "holdcount/memory.h"

void fixture_free(struct universe *u)
{
	size_t i;

	if (!u)
		return;
	if (u->ids)
		for (i = 0; i < u->m; i++)
			hc_free(u->ids[i]);
	hc_free(u->ids);
	hc_free(u->x);
	hc_free(u->dates);
	hc_free(u->dropped);
	hc_free(u->source);
	hc_free(u);
}

struct universe *fixture_universe(const double *x, size_t m, size_t t)
{
	struct universe *u;
	size_t i;
	char id[32];

	u = hc_calloc(1, sizeof *u);
	if (!u)
		return NULL;
	u->m = m;
	u->t = t;
	u->periods_per_year = 12.0;
	u->m_read = m;
	u->ids = hc_calloc(m, sizeof *u->ids);
	u->x = hc_calloc(m * t, sizeof *u->x);
	u->dates = hc_calloc(t, sizeof *u->dates);
	u->source = hc_strdup("fixture");
	if (!u->ids || !u->x || !u->dates || !u->source)
		goto fail;
	for (i = 0; i < m; i++) {
		snprintf(id, sizeof id, "S%02zu", i + 1);
		u->ids[i] = hc_strdup(id);
		if (!u->ids[i])
			goto fail;
	}
	memcpy(u->x, x, m * t * sizeof *x);
	for (i = 0; i < m * t; i++)
		if (isnan(x[i]))
			u->has_missing = 1;
	/* 2001-01-31 is day 11353; months are spaced about 30.44 days. */
	for (i = 0; i < t; i++)
		u->dates[i] = (int32_t)(11353 + (long)floor((double)i * 30.436875));
	return u;
fail:
	fixture_free(u);
	return NULL;
}

void fixture_returns(double *x, size_t m, size_t t, unsigned long seed)
{
	gsl_rng *r = gsl_rng_alloc(gsl_rng_mt19937);
	double *f, beta, s;
	size_t i, k;

	f = hc_malloc(t * sizeof *f);
	if (!r || !f) {
		/* A test fixture: a failed set-up shows as NaN data. */
		for (i = 0; i < m * t; i++)
			x[i] = NAN;
		gsl_rng_free(r);
		hc_free(f);
		return;
	}
	gsl_rng_set(r, seed);
	for (k = 0; k < t; k++)
		f[k] = 0.008 + 0.045 * gsl_ran_gaussian(r, 1.0);
	for (i = 0; i < m; i++) {
		beta = 0.5 + gsl_rng_uniform(r);
		s = 0.02 + 0.10 * gsl_rng_uniform(r);
		for (k = 0; k < t; k++)
			x[i * t + k] = beta * f[k] + s * gsl_ran_gaussian(r, 1.0);
	}
	hc_free(f);
	gsl_rng_free(r);
}

struct universe *fixture_random_universe(size_t m, size_t t, unsigned long seed)
{
	double *x = hc_malloc(m * t * sizeof *x);
	struct universe *u;

	if (!x)
		return NULL;
	fixture_returns(x, m, t, seed);
	u = fixture_universe(x, m, t);
	hc_free(x);
	return u;
}

void fixture_covariance(const struct universe *u, double *a)
{
	size_t i, j, k, m = u->m, t = u->t;
	long double mi, mj, s;

	for (i = 0; i < m; i++) {
		for (j = 0; j < m; j++) {
			mi = mj = 0;
			for (k = 0; k < t; k++) {
				mi += u->x[i * t + k];
				mj += u->x[j * t + k];
			}
			mi /= t;
			mj /= t;
			s = 0;
			for (k = 0; k < t; k++)
				s += (u->x[i * t + k] - mi) * (u->x[j * t + k] - mj);
			a[i * m + j] = (double)(s / (t - 1));
		}
	}
}

#define FIXTURE_VIEWS 8
static struct hc_source views[FIXTURE_VIEWS];
static struct covmatrix view_matrices[FIXTURE_VIEWS];
static size_t next_view;

const struct hc_source *fixture_series(const struct universe *u)
{
	struct hc_source *s = &views[next_view++ % FIXTURE_VIEWS];

	hc_source_init_series(s, u);
	return s;
}

const struct hc_source *fixture_matrix(const double *a, size_t m)
{
	size_t k = next_view++ % FIXTURE_VIEWS;

	view_matrices[k].m = m;
	view_matrices[k].ids = NULL;
	view_matrices[k].a = (double *)a;   /* a view: only read */
	view_matrices[k].max_bytes = 0;
	hc_source_init_matrix(&views[k], &view_matrices[k], 0);
	views[k].name = "";
	return &views[k];
}
