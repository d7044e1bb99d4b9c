/*
 * horizon.h - ending wealth over a horizon of H years, by holding count,
 * for random portfolios held two ways: rebalanced to equal weights every
 * period, and bought in equal amounts and held (weights drift with returns).
 *
 * Path k draws one portfolio of every size as the sampler draws it
 * (hc_sampler_members: the first n members of one random ordering), and one
 * H-year path of whole periods (every security's return in a period
 * together, so cross-correlation is kept):
 *   - overlapping windows: when H fits in the sample, a window of h = round(H
 *     P) consecutive periods (P periods per year) starting at a uniform
 *     start 0..T-h, every start equally likely;
 *   - stationary bootstrap (Politis & Romano, 1994, "The stationary
 *     bootstrap", Journal of the American Statistical Association 89(428),
 *     1303-1313) when H exceeds the sample (or when asked): blocks of
 *     geometric length with mean L, wrapping round the end; L from Politis
 *     & White (2004) with Patton, Politis & White's (2009) correction on
 *     the equal-weight universe's returns, unless given
 *     (bootstrap.h).
 * Ending wealth of 1 unit invested, a total loss (a return of -100% or
 * worse) ending a holding at 0:
 *   rebalanced    W = prod_s (1 + (1/N) sum_i r_{i,s})
 *   buy-and-hold  W = (1/N) sum_i prod_s (1 + r_{i,s})
 * or, with market values c_i (capitalisation weights, fixed at the values
 * given), w_i = c_i / sum_{j in portfolio} c_j in place of 1/N: rebalanced
 * to those weights every period, or bought in those proportions and held.
 * The benchmark on the same path is the equal-weight universe held the same
 * way (all M securities, the same formula; weighted by market value when
 * those are given), or a fixed annual rate g:
 * (1 + g)^(h/P), or a return series the user gives (a bond or bill index,
 * a capitalisation-weighted index: benchseries.h) compounded over path k's
 * own periods, so that the portfolio and the benchmark see the same
 * periods and their correlation is kept.  Portfolio k lags when its W is
 * below the benchmark's (strictly); at N = M the portfolio is the universe
 * and never lags the universe.
 * The rule of Domian, Louton & Racine (2007, "Diversification in portfolios
 * of individual stocks: 100 stocks are not enough", The Financial Review
 * 42(4), 557-570): the smallest count asked whose buy-and-hold portfolios
 * end behind the benchmark on at most a share p of the paths.
 * Path k's window start or bootstrap stream is seeded from (seed, k)
 * through paths.h, so results are the same whatever the thread count.
 * Docs: docs/horizon.md.
 */
#ifndef HOLDCOUNT_HORIZON_H
#define HOLDCOUNT_HORIZON_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/analysis.h"
#include "holdcount/benchseries.h"
#include "holdcount/error.h"
#include "holdcount/report.h"
#include "holdcount/source.h"

#ifdef __cplusplus
extern "C" {
#endif

enum hc_horizon_route {
	HC_HORIZON_AUTO = 0,       /* windows when h <= T, else the bootstrap */
	HC_HORIZON_WINDOWS = 1,    /* overlapping windows (h <= T) */
	HC_HORIZON_BOOTSTRAP = 2   /* stationary bootstrap of whole periods */
};

enum hc_horizon_weighting {
	HC_HORIZON_REBALANCED = 0,
	HC_HORIZON_BUY_HOLD = 1,
	HC_HORIZON_WEIGHTINGS = 2
};

#define HC_HORIZON_DEFAULT_YEARS 20.0
#define HC_HORIZON_DEFAULT_PATHS 10000
#define HC_HORIZON_DEFAULT_LAG_LIMIT 0.01

struct hc_horizon_options {
	double years;              /* H > 0 */
	size_t paths;              /* K >= 1 portfolios (and paths) per count */
	uint64_t seed;
	int threads;               /* 0 = OpenMP's default */
	int route;                 /* enum hc_horizon_route */
	size_t block_length;       /* bootstrap mean block length L; 0 = Politis-White */
	int rate_given;            /* benchmark: the fixed annual rate below, else the universe */
	double rate;               /* > -1 */
	struct hc_progress progress;
	/* Added after the first release (defaults in hc_horizon_options_init): */
	const struct benchseries *benchmark; /* a return series on the universe's periods
	                           * (benchseries.h; t equal to the universe's), resampled with
	                           * the universe: path k's periods are the benchmark's; NULL =
	                           * the rate or the equal-weight universe.  Not with rate_given. */
	double lag_limit;          /* the Domian, Louton & Racine rule's p in (0, 1): the fewest
	                            * holdings whose buy-and-hold portfolios lag at most this share
	                            * of paths; default HC_HORIZON_DEFAULT_LAG_LIMIT */
	const double *market_values; /* m values > 0 in the universe's security order
	                            * (marketvalues.h): weights proportional to them within each
	                            * portfolio, and the benchmark universe weighted the same way;
	                            * NULL = equal weights */
	const char *market_values_name; /* where they came from, for the output (may be NULL) */
};

/* Defaults: 20 years, 10 000 paths, seed 1, auto route, the universe as
 * the benchmark, lag limit 1%.  Cannot fail. */
void hc_horizon_options_init(struct hc_horizon_options *opt);

/* One weighting at one count, across the K paths. */
struct hc_horizon_point {
	double mean, se;           /* ending wealth: mean, Monte Carlo s.e. sd/sqrt(K) (divisor K-1) */
	double p05, p50, p95;      /* numpy's linear quantiles, by selection */
	double lag, lag_se;        /* share of paths below the benchmark, and its s.e. */
};

struct hc_horizon_result {
	size_t periods;            /* h */
	int route;                 /* the route used: HC_HORIZON_WINDOWS or HC_HORIZON_BOOTSTRAP */
	size_t block_length;       /* L used (bootstrap), else 0 */
	size_t paths, nsizes;
	size_t *sizes;
	struct hc_horizon_point *pts;   /* nsizes * HC_HORIZON_WEIGHTINGS, row = count */
	struct hc_horizon_point universe[HC_HORIZON_WEIGHTINGS]; /* the universe's own (lag: vs the rate) */
	double rate_wealth;        /* (1+g)^(h/P), or NaN when the universe is the benchmark */
	struct report *report;     /* fields, table "horizon", notes and cautions */
	/* Added after the first release: */
	struct hc_horizon_point bench; /* the benchmark's own ending wealth across the paths (lag
	                            * NaN); all NaN when the equal-weight universe is the benchmark */
	double lag_limit;          /* the rule's p */
	size_t rule_count;         /* Domian, Louton & Racine (2007): the smallest count asked whose
	                            * buy-and-hold lag is at most lag_limit; 0 = none in the grid */
	double rule_lag, rule_lag_se; /* its lag and Monte Carlo s.e. (NaN when none) */
};

/*
 * Ending wealth over opt->years for random portfolios of each size (1..M,
 * any order) of a complete return history (HC_SOURCE_SERIES), or of one
 * with gaps read period by period (HC_SOURCE_RAGGED): windows only, equal
 * weights, sizes up to hc_horizon_count_bound; path k's portfolio of n
 * holds the first n securities of its ordering listed at the window's
 * first period, a holding delisted inside the window (no return) leaves:
 * rebalanced portfolios weight the holdings left equally, buy-and-hold ones
 * reinvest its value in the rest in proportion to their values; with none
 * left the portfolio keeps its value as cash.  The universe it is compared
 * with is every security listed at the window's start, held the same way.  Errors:
 * HC_EUSAGE (a matrix, a history with gaps, a bad size, H, K, L, rate or
 * lag limit, windows asked for a horizon longer than the sample, a
 * benchmark series of another length or with a rate), HC_ENOMEM
 * (the universe's memory budget), HC_EINTERRUPT.  *out NULL on error.
 */
int hc_horizon_run(struct hc_horizon_result **out, const struct hc_source *src, const size_t *sizes,
		   size_t nsizes, const struct hc_horizon_options *opt, struct hc_error *err);
void hc_horizon_result_free(struct hc_horizon_result *r);

/*
 * The largest holding count a history with gaps allows for windows of h
 * periods: the fewest securities with a return in the first period of any
 * window (0..t-h); *first (may be NULL) that window's first period.  u->m
 * for a complete history (or when h > t).
 */
size_t hc_horizon_count_bound(const struct universe *u, size_t h, size_t *first);

/*
 * Path k's draw, exported for reference checks: members[0..m) the
 * ordering (its first n the portfolio of n holdings) and periods[0..h) the
 * period indices (0..t-1) of its path, for route HC_HORIZON_WINDOWS or
 * HC_HORIZON_BOOTSTRAP (block_length 1..t) as hc_horizon_run draws them.
 * HC_EUSAGE, HC_ENOMEM.
 */
int hc_horizon_draw(uint64_t seed, size_t k, size_t m, size_t t, size_t h, int route, size_t block_length,
		    uint32_t *members, size_t *periods, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
