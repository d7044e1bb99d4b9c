/*
 * synth.h - an invented universe of returns from a factor model.
 *
 * Each security i belongs to one sector s(i) and earns, in period t,
 *
 *   r[t][i] = mu_i + beta_i * F[t] + G[t][s(i)] + sigma_i * e[t][i]
 *
 * with a market factor F ~ N(0, market_sd^2), independent sector factors
 * G ~ N(0, sector_sd^2), and security-specific noise e, Student t with df
 * degrees of freedom scaled to unit variance (so fat-tailed, variance one).
 * Betas are drawn N(1, beta_spread^2); specific volatilities are lognormal,
 * sigma_i = idio_sd * exp(idio_spread * z_i), z_i ~ N(0,1), so idio_sd is
 * the median; sectors are drawn uniformly; means are N(mean_return,
 * mean_spread^2).  A share of securities is listed late (empty cells at the
 * start of the series) and a share delisted early (empty cells at the end).
 * See docs/synth.md.
 *
 * Volatilities and means in struct synth_options are annualised; per-period
 * figures divide variances by the periods per year P (12, 52 or 252): common
 * practice under serially independent returns.  Every figure synth returns
 * (struct synth_model, struct synth_truth) is per period.
 *
 * Output is a pure function of the options: two generators (GSL's MT19937),
 * one for the parameters and one for the returns, are seeded from
 * options.seed through splitmix64, and draws happen in a fixed order
 * independent of the missing-cell pattern and of any thread count.
 */
#ifndef HOLDCOUNT_SYNTH_H
#define HOLDCOUNT_SYNTH_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

enum synth_frequency {
	SYNTH_MONTHLY = 0,  /* month ends; P = 12 */
	SYNTH_WEEKLY = 1,   /* every seventh day from the start date; P = 52 */
	SYNTH_DAILY = 2     /* Monday to Friday, no holidays; P = 252 */
};

/* Defaults named once.  Annualised where a rate or volatility. */
#define SYNTH_DEFAULT_SECURITIES 150
#define SYNTH_DEFAULT_PERIODS 240
#define SYNTH_DEFAULT_SECTORS 9
#define SYNTH_DEFAULT_START "2005-01-31"
#define SYNTH_DEFAULT_FREQUENCY SYNTH_MONTHLY
#define SYNTH_DEFAULT_MARKET_VOL 0.16
#define SYNTH_DEFAULT_SECTOR_VOL 0.08
#define SYNTH_DEFAULT_IDIO_VOL 0.25
#define SYNTH_DEFAULT_IDIO_SPREAD 0.40
#define SYNTH_DEFAULT_BETA_SPREAD 0.30
#define SYNTH_DEFAULT_DF 5.0
#define SYNTH_DEFAULT_LATE_SHARE 0.04
#define SYNTH_DEFAULT_EARLY_SHARE 0.04
#define SYNTH_DEFAULT_MEAN_RETURN 0.08
#define SYNTH_DEFAULT_MEAN_SPREAD 0.03
#define SYNTH_DEFAULT_FLOOR_RETURN (-0.95)
#define SYNTH_DEFAULT_SEED 1
#define SYNTH_DEFAULT_ID_PREFIX "S"
#define SYNTH_DEFAULT_SECTOR_PREFIX "sector-"

/* Limits that keep a request sane (ids stay short, dates stay in range). */
#define SYNTH_MAX_SECURITIES 1000000
#define SYNTH_MAX_PERIODS 100000
#define SYNTH_MIN_PERIODS 4

struct synth_options {
	size_t securities;      /* M >= 2 */
	size_t periods;         /* T >= SYNTH_MIN_PERIODS rows of returns */
	size_t sectors;         /* 1 <= S <= M */
	const char *start;      /* first date, YYYY-MM-DD or YYYY-MM (month end);
				   monthly rounds to the month end, daily to the
				   next weekday */
	int frequency;          /* enum synth_frequency */
	double market_vol;      /* annual sd of the market factor, >= 0 */
	double sector_vol;      /* annual sd of each sector factor, >= 0 */
	double idio_vol;        /* median annual specific sd, > 0 */
	double idio_spread;     /* sd of log specific sd across securities, >= 0 */
	double beta_spread;     /* sd of betas around 1, >= 0 */
	double df;              /* Student t degrees of freedom, > 2 (finite
				   variance; above 4 also finite kurtosis);
				   0 = Gaussian noise */
	double late_share;      /* probability a security lists late, in [0,1] */
	double early_share;     /* probability a security delists early, in [0,1] */
	double mean_return;     /* average annual arithmetic mean return */
	double mean_spread;     /* sd of annual means across securities, >= 0 */
	double floor_return;    /* per-period returns below this are set to it
				   (a simple return cannot be below -1); in (-1, 0) */
	uint64_t seed;
	const char *id_prefix;  /* ids are prefix + zero-padded 1..M */
	const char *sector_prefix; /* sector labels prefix + 1..S, unless ... */
	const char *const *sector_names; /* ... S names are given here (or NULL) */
};

/* Fill opt with the defaults above. */
void hc_synth_options_init(struct synth_options *opt);

/*
 * Check opt: HC_EUSAGE with a message naming the option and the accepted
 * range (e.g. "degrees of freedom must be above 4 or 0, found 3").
 */
int hc_synth_options_check(const struct synth_options *opt, struct hc_error *err);

/* Periods per year for a frequency: 12, 52 or 252; 0 when unknown. */
double hc_synth_periods_per_year(int frequency);

/* The drawn parameters of one universe, per period. */
struct synth_model {
	size_t m, t, nsectors;
	double periods_per_year;
	double market_sd;       /* per-period sd of F */
	double sector_sd;       /* per-period sd of each G */
	double df;              /* 0 = Gaussian */
	double floor_return;
	double *beta;           /* m betas */
	double *idio_sd;        /* m per-period specific sds */
	double *mean;           /* m per-period means */
	size_t *sector;         /* m sector indices in [0, nsectors) */
	size_t *first;          /* m: first listed period (0 unless listed late) */
	size_t *end;            /* m: one past the last listed period (t unless delisted) */
	char **ids;             /* m ids */
	char **sector_names;    /* nsectors labels */
	int32_t *dates;         /* t period dates, days since 1970-01-01 */
	uint64_t seed;
};

/*
 * Draw the parameters, ids and dates for opt into a new model (*out; NULL on
 * failure).  Errors: HC_EUSAGE (bad options, as hc_synth_options_check),
 * HC_ENOMEM, HC_EINTERNAL (a GSL generator could not be made).
 */
int hc_synth_model_alloc(struct synth_model **out, const struct synth_options *opt,
		      struct hc_error *err);
void hc_synth_model_free(struct synth_model *model);

/*
 * Generate the returns of model into x (m*t doubles, security-major: x[i*t+k]
 * is security i in period k; NaN where not listed).  *nfloored (may be NULL)
 * gets the number of cells raised to the floor return.  HC_ENOMEM or
 * HC_EINTERNAL on failure.  The values are those hc_synth_write prints.
 */
int hc_synth_generate(const struct synth_model *model, double *x, size_t *nfloored,
		   struct hc_error *err);

/*
 * Write the universe as a wide CSV to universe (header "date,ID1,...", one
 * row per period, ISO dates, empty cells where not listed, each number in the
 * shortest form that reads back to the same double) and, if sectors is not
 * NULL, the sector map "id,sector".  Streams one period at a time (memory
 * O(M)).  The streams stay open; the caller commits or discards them.
 * *nfloored as in hc_synth_generate.  HC_EIO when a write fails, else as
 * hc_synth_model_alloc.
 */
int hc_synth_write(const struct synth_options *opt, FILE *universe, FILE *sectors,
		size_t *nfloored, struct hc_error *err);

/* Write the drawn parameters as CSV
 * "id,sector,beta,specific_sd,mean,first_date,last_date" (per period). */
int hc_synth_write_parameters(const struct synth_model *model, FILE *fp,
			   struct hc_error *err);

/* True average variance and covariance, per period. */
struct synth_truth {
	size_t m;                   /* securities averaged over */
	double average_variance;    /* v-bar */
	double average_covariance;  /* c-bar */
	double periods_per_year;
};

/*
 * The generating model's expected v-bar and c-bar, before any parameters
 * are drawn (formula level):
 *   v-bar = (1 + beta_spread^2) mkt^2 + sec^2 + idio^2 exp(2 idio_spread^2)
 *   c-bar = mkt^2 + sec^2 / S
 * (per-period variances; idio the median specific sd; a pair shares a
 * sector with probability 1/S).  The floor return is ignored.  HC_EUSAGE on
 * bad options.
 */
int hc_synth_truth_expected(const struct synth_options *opt, struct synth_truth *out,
			 struct hc_error *err);

/*
 * The population v-bar and c-bar of the drawn model over the securities
 * keep[0..nkeep) (keep NULL: all m), conditional on its betas, specific sds
 * and sectors: Cov(i,j) = beta_i beta_j mkt^2 + [s(i)=s(j)] sec^2 + [i=j]
 * sigma_i^2.  HC_EUSAGE when fewer than two securities or an index is out
 * of range.
 */
int hc_synth_truth_model(const struct synth_model *model, const size_t *keep,
		      size_t nkeep, struct synth_truth *out, struct hc_error *err);

/* Format days since 1970-01-01 as YYYY-MM-DD into buf (at least 11 bytes). */
void hc_synth_format_date(int32_t days, char *buf);

#ifdef __cplusplus
}
#endif

#endif
