/*
 * fixture.h - small deterministic universes for the unit tests.
 *
 * Until (and besides) the loader, tests build a struct universe by hand.
 * Everything is allocated with hc_malloc, laid out as universe.h documents
 * (security-major x[i*t + k]), so hc_universe_free can release it too; tests
 * that do not link the loader use fixture_free.
 */
#ifndef HOLDCOUNT_TEST_FIXTURE_H
#define HOLDCOUNT_TEST_FIXTURE_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/source.h"
#include "holdcount/universe.h"

/*
 * A universe of m securities over t periods whose returns are copied from
 * x (security-major: x[i*t + k] is security i's return in period k).
 * ids are "S01", "S02", ...; dates are month ends from 2001-01-31;
 * periods_per_year is 12; has_missing is set when x holds a NaN.
 * Returns NULL when an allocation fails.
 */
struct universe *fixture_universe(const double *x, size_t m, size_t t);

/*
 * High-entropy returns from a one-factor model with uneven volatilities,
 * security-major, into x (m*t doubles): r = beta_i f_k + s_i e_ik with
 * f, e standard normal from GSL's mt19937 seeded with seed, beta_i in
 * [0.5, 1.5), s_i in [0.02, 0.12), market sd 0.045, mean 0.008 a period.
 */
void fixture_returns(double *x, size_t m, size_t t, unsigned long seed);

/* The same returns wrapped in a universe (NULL on allocation failure). */
struct universe *fixture_random_universe(size_t m, size_t t, unsigned long seed);

/* Free a fixture universe (NULL allowed). */
void fixture_free(struct universe *u);

/* Sample covariance matrix (divisor t-1) of u's complete columns into
 * a (m*m doubles, row-major), by the textbook two-pass formula in long
 * double: an independent reference for the library's routes. */
void fixture_covariance(const struct universe *u, double *a);

/*
 * Data sources (source.h) viewing test data: complete series u, or the
 * m x m row-major matrix a on its own scale (named "" in messages).  The
 * views live in static storage, eight in turn, so one call may take two;
 * nothing to free.  The data must outlive the view's use.
 */
const struct hc_source *fixture_series(const struct universe *u);
const struct hc_source *fixture_matrix(const double *a, size_t m);

#endif
