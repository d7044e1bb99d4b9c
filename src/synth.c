/*
 * synth.c - an invented universe of returns from a factor model.
 *
 * The model (market factor, sector factors, fat-tailed specific noise) is
 * common practice; Student t noise for fat tails is common practice too.
 * See synth.h for the contract and docs/synth.md for the parameters.
 */
#include "holdcount/synth.h"
#include "holdcount/universe.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#include "holdcount/memory.h"
#include "holdcount/paths.h"

void hc_synth_options_init(struct synth_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->securities = SYNTH_DEFAULT_SECURITIES;
	opt->periods = SYNTH_DEFAULT_PERIODS;
	opt->sectors = SYNTH_DEFAULT_SECTORS;
	opt->start = SYNTH_DEFAULT_START;
	opt->frequency = SYNTH_DEFAULT_FREQUENCY;
	opt->market_vol = SYNTH_DEFAULT_MARKET_VOL;
	opt->sector_vol = SYNTH_DEFAULT_SECTOR_VOL;
	opt->idio_vol = SYNTH_DEFAULT_IDIO_VOL;
	opt->idio_spread = SYNTH_DEFAULT_IDIO_SPREAD;
	opt->beta_spread = SYNTH_DEFAULT_BETA_SPREAD;
	opt->df = SYNTH_DEFAULT_DF;
	opt->late_share = SYNTH_DEFAULT_LATE_SHARE;
	opt->early_share = SYNTH_DEFAULT_EARLY_SHARE;
	opt->mean_return = SYNTH_DEFAULT_MEAN_RETURN;
	opt->mean_spread = SYNTH_DEFAULT_MEAN_SPREAD;
	opt->floor_return = SYNTH_DEFAULT_FLOOR_RETURN;
	opt->seed = SYNTH_DEFAULT_SEED;
	opt->id_prefix = SYNTH_DEFAULT_ID_PREFIX;
	opt->sector_prefix = SYNTH_DEFAULT_SECTOR_PREFIX;
	opt->sector_names = NULL;
}

double hc_synth_periods_per_year(int frequency)
{
	switch (frequency) {
	case SYNTH_MONTHLY: return 12.0;
	case SYNTH_WEEKLY: return 52.0;
	case SYNTH_DAILY: return 252.0;
	default: return 0.0;
	}
}

/* ---- dates ------------------------------------------------------------ */

/* Days since 1970-01-01 of a proleptic Gregorian date, and back: the
 * era-based algorithms of Howard Hinnant, "chrono-Compatible Low-Level Date
 * Algorithms" (2013), exact for every year in range. */
static int64_t days_from_civil(int64_t y, unsigned m, unsigned d)
{
	int64_t era;
	unsigned yoe, doy, doe;

	y -= m <= 2;
	era = (y >= 0 ? y : y - 399) / 400;
	yoe = (unsigned)(y - era * 400);
	doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
	doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
	return era * 146097 + (int64_t)doe - 719468;
}

static void civil_from_days(int64_t z, int64_t *y, unsigned *m, unsigned *d)
{
	int64_t era;
	unsigned doe, yoe, doy, mp;

	z += 719468;
	era = (z >= 0 ? z : z - 146096) / 146097;
	doe = (unsigned)(z - era * 146097);
	yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
	doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
	mp = (5 * doy + 2) / 153;
	*d = doy - (153 * mp + 2) / 5 + 1;
	*m = mp < 10 ? mp + 3 : mp - 9;
	*y = (int64_t)yoe + era * 400 + (*m <= 2);
}

static int is_leap(int64_t y)
{
	return (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
}

static unsigned month_days(int64_t y, unsigned m)
{
	static const unsigned n[12] = { 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31 };

	return m == 2 && is_leap(y) ? 29 : n[m - 1];
}

void hc_synth_format_date(int32_t days, char *buf)
{
	int64_t y;
	unsigned m, d;
	char tmp[48];

	civil_from_days(days, &y, &m, &d);
	snprintf(tmp, sizeof tmp, "%04d-%02u-%02u", (int)y, m, d);
	memcpy(buf, tmp, 11);
	buf[10] = '\0';
}

static int digits(const char *s, size_t n, unsigned *v)
{
	size_t k;

	*v = 0;
	for (k = 0; k < n; k++) {
		if (s[k] < '0' || s[k] > '9')
			return -1;
		*v = *v * 10 + (unsigned)(s[k] - '0');
	}
	return 0;
}

/* Parse "YYYY-MM-DD" or "YYYY-MM" (day 0 then means the month end). */
static int parse_start(const char *s, int64_t *y, unsigned *m, unsigned *d)
{
	unsigned yy, mm, dd = 0;
	size_t len;

	if (!s)
		return -1;
	len = strlen(s);
	if ((len != 7 && len != 10) || s[4] != '-' || digits(s, 4, &yy) < 0 ||
	    digits(s + 5, 2, &mm) < 0)
		return -1;
	if (len == 10 && (s[7] != '-' || digits(s + 8, 2, &dd) < 0 || dd == 0))
		return -1;
	if (yy < 1 || mm < 1 || mm > 12 || dd > month_days(yy, mm))
		return -1;
	*y = yy;
	*m = mm;
	*d = dd;
	return 0;
}

/* Monday = 0: 1970-01-01 was a Thursday. */
static int weekday(int64_t days)
{
	int64_t w = (days + 3) % 7;

	return (int)(w < 0 ? w + 7 : w);
}

/* The dates of the t periods, as days since 1970-01-01, into out (may be
 * NULL to only validate).  -1 when the start is malformed or the last date
 * would pass year 9999. */
static int make_dates(const struct synth_options *opt, int32_t *out)
{
	int64_t y, day;
	unsigned m, d;
	size_t k;

	if (parse_start(opt->start, &y, &m, &d) < 0)
		return -1;
	day = days_from_civil(y, m, d ? d : month_days(y, m));
	if (opt->frequency == SYNTH_DAILY)
		while (weekday(day) >= 5)
			day++;
	for (k = 0; k < opt->periods; k++) {
		if (opt->frequency == SYNTH_MONTHLY) {
			int64_t mi = (y * 12 + (m - 1)) + (int64_t)k;
			int64_t yk = mi / 12;
			unsigned mk = (unsigned)(mi % 12) + 1;

			if (yk > 9999)
				return -1;
			day = days_from_civil(yk, mk, month_days(yk, mk));
		} else if (k > 0 && opt->frequency == SYNTH_WEEKLY) {
			day += 7;
		} else if (k > 0) {
			do
				day++;
			while (weekday(day) >= 5);
		}
		if (day > days_from_civil(9999, 12, 31))
			return -1;
		if (out)
			out[k] = (int32_t)day;
	}
	return 0;
}

/* ---- options ---------------------------------------------------------- */

/* A label that needs no CSV quoting and cannot break a row. */
static int plain_label(const char *s, int allow_empty)
{
	if (!s || (!allow_empty && !*s))
		return 0;
	return strpbrk(s, ",;\"\r\n") == NULL;
}

static int check_min(const char *name, double v, double lo, int lo_open,
		     struct hc_error *err)
{
	if (!isfinite(v) || v < lo || (lo_open && v == lo))
		return hc_error(err, HC_EUSAGE, "%s must be finite and %s %g, found %g",
				name, lo_open ? "above" : "at least", lo, v);
	return HC_OK;
}

static int check_names(const struct synth_options *opt, struct hc_error *err)
{
	size_t s, u;

	if (!plain_label(opt->id_prefix, 1))
		return hc_error(err, HC_EUSAGE, "id prefix '%s' must not contain ',', ';', '\"' or a line break",
				opt->id_prefix ? opt->id_prefix : "(null)");
	if (!opt->sector_names) {
		if (!plain_label(opt->sector_prefix, 1))
			return hc_error(err, HC_EUSAGE, "sector prefix '%s' must not contain ',', ';', '\"' or a line break",
					opt->sector_prefix ? opt->sector_prefix : "(null)");
		return HC_OK;
	}
	for (s = 0; s < opt->sectors; s++) {
		if (!plain_label(opt->sector_names[s], 0))
			return hc_error(err, HC_EUSAGE, "sector name %zu '%s' must be non-empty, without ',', ';', '\"' or a line break",
					s + 1, opt->sector_names[s] ? opt->sector_names[s] : "(null)");
		for (u = 0; u < s; u++)
			if (strcmp(opt->sector_names[u], opt->sector_names[s]) == 0)
				return hc_error(err, HC_EUSAGE, "duplicate sector name '%s'", opt->sector_names[s]);
	}
	return HC_OK;
}

static int check_counts(const struct synth_options *opt, struct hc_error *err)
{
	if (opt->securities < 2 || opt->securities > SYNTH_MAX_SECURITIES)
		return hc_error(err, HC_EUSAGE, "securities must be from 2 to %d, found %zu",
				SYNTH_MAX_SECURITIES, opt->securities);
	if (opt->periods < SYNTH_MIN_PERIODS || opt->periods > SYNTH_MAX_PERIODS)
		return hc_error(err, HC_EUSAGE, "periods must be from %d to %d, found %zu",
				SYNTH_MIN_PERIODS, SYNTH_MAX_PERIODS, opt->periods);
	if (opt->sectors < 1 || opt->sectors > opt->securities)
		return hc_error(err, HC_EUSAGE, "sectors must be from 1 to the number of securities (%zu), found %zu",
				opt->securities, opt->sectors);
	if (hc_synth_periods_per_year(opt->frequency) == 0.0)
		return hc_error(err, HC_EUSAGE, "unknown frequency %d (expected monthly, weekly or daily)",
				opt->frequency);
	if (make_dates(opt, NULL) < 0)
		return hc_error(err, HC_EUSAGE, "start date '%s' is not a valid YYYY-MM-DD or YYYY-MM date, or the series would pass the year 9999",
				opt->start ? opt->start : "(null)");
	return HC_OK;
}

int hc_synth_options_check(const struct synth_options *opt, struct hc_error *err)
{
	int rc;

	if ((rc = check_counts(opt, err)) != HC_OK)
		return rc;
	if ((rc = check_min("market volatility", opt->market_vol, 0, 0, err)) ||
	    (rc = check_min("sector volatility", opt->sector_vol, 0, 0, err)) ||
	    (rc = check_min("specific volatility", opt->idio_vol, 0, 1, err)) ||
	    (rc = check_min("specific volatility spread", opt->idio_spread, 0, 0, err)) ||
	    (rc = check_min("beta spread", opt->beta_spread, 0, 0, err)) ||
	    (rc = check_min("mean spread", opt->mean_spread, 0, 0, err)))
		return rc;
	if (!isfinite(opt->mean_return))
		return hc_error(err, HC_EUSAGE, "mean return must be finite, found %g", opt->mean_return);
	if (!(opt->df == 0.0 || (isfinite(opt->df) && opt->df > 2.0)))
		return hc_error(err, HC_EUSAGE, "degrees of freedom must be above 2, or 0 for Gaussian, found %g", opt->df);
	if (!(opt->late_share >= 0.0 && opt->late_share <= 1.0))
		return hc_error(err, HC_EUSAGE, "late-listing share must be from 0 to 1, found %g", opt->late_share);
	if (!(opt->early_share >= 0.0 && opt->early_share <= 1.0))
		return hc_error(err, HC_EUSAGE, "early-delisting share must be from 0 to 1, found %g", opt->early_share);
	if (!(opt->floor_return > -1.0 && opt->floor_return < 0.0))
		return hc_error(err, HC_EUSAGE, "floor return must be above -1 and below 0, found %g", opt->floor_return);
	return check_names(opt, err);
}

/* ---- the model -------------------------------------------------------- */

/* splitmix64 (Steele, Lea & Flood, 2014, "Fast splittable pseudorandom
 * number generators", OOPSLA) through paths.h: (stream, seed) gives
 * well-mixed seeds, so that the parameter and return streams are
 * unrelated. */
static gsl_rng *stream_rng(uint64_t seed, uint64_t stream)
{
	gsl_rng *r = gsl_rng_alloc(gsl_rng_mt19937);

	if (r)
		gsl_rng_set(r, (unsigned long)hc_paths_stream(stream, seed));
	return r;
}

void hc_synth_model_free(struct synth_model *model)
{
	size_t i;

	if (!model)
		return;
	if (model->ids)
		for (i = 0; i < model->m; i++)
			hc_free(model->ids[i]);
	if (model->sector_names)
		for (i = 0; i < model->nsectors; i++)
			hc_free(model->sector_names[i]);
	hc_free(model->ids);
	hc_free(model->sector_names);
	hc_free(model->beta);
	hc_free(model->idio_sd);
	hc_free(model->mean);
	hc_free(model->sector);
	hc_free(model->first);
	hc_free(model->end);
	hc_free(model->dates);
	hc_free(model);
}

static char *label(const char *prefix, size_t k, size_t n)
{
	int width = 1;
	size_t len;
	char *s;

	for (; n >= 10; n /= 10)
		width++;
	len = strlen(prefix) + (size_t)width + 24;
	s = hc_malloc(len);
	if (s)
		snprintf(s, len, "%s%0*zu", prefix, width, k);
	return s;
}

static int model_arrays(struct synth_model *mo, const struct synth_options *opt)
{
	size_t m = mo->m, i;

	mo->beta = hc_calloc(m, sizeof *mo->beta);
	mo->idio_sd = hc_calloc(m, sizeof *mo->idio_sd);
	mo->mean = hc_calloc(m, sizeof *mo->mean);
	mo->sector = hc_calloc(m, sizeof *mo->sector);
	mo->first = hc_calloc(m, sizeof *mo->first);
	mo->end = hc_calloc(m, sizeof *mo->end);
	mo->ids = hc_calloc(m, sizeof *mo->ids);
	mo->sector_names = hc_calloc(mo->nsectors, sizeof *mo->sector_names);
	mo->dates = hc_calloc(mo->t, sizeof *mo->dates);
	if (!mo->beta || !mo->idio_sd || !mo->mean || !mo->sector || !mo->first ||
	    !mo->end || !mo->ids || !mo->sector_names || !mo->dates)
		return -1;
	for (i = 0; i < m; i++)
		if (!(mo->ids[i] = label(opt->id_prefix, i + 1, m)))
			return -1;
	for (i = 0; i < mo->nsectors; i++) {
		mo->sector_names[i] = opt->sector_names ? hc_strdup(opt->sector_names[i])
			: label(opt->sector_prefix, i + 1, mo->nsectors);
		if (!mo->sector_names[i])
			return -1;
	}
	return 0;
}

/* Per-security parameters, drawn in a fixed order, every draw made whatever
 * the shares, so that changing one share moves no other security's numbers. */
static void draw_parameters(struct synth_model *mo, const struct synth_options *opt, gsl_rng *r)
{
	double p = mo->periods_per_year;
	size_t half = mo->t / 2, i;

	for (i = 0; i < mo->m; i++) {
		size_t first = 1 + gsl_rng_uniform_int(r, half);
		size_t end = mo->t - 1 - gsl_rng_uniform_int(r, mo->t - 1 - half);
		double u_late = gsl_rng_uniform(r), u_early = gsl_rng_uniform(r);

		mo->sector[i] = gsl_rng_uniform_int(r, mo->nsectors);
		mo->beta[i] = 1.0 + gsl_ran_gaussian(r, opt->beta_spread);
		mo->idio_sd[i] = opt->idio_vol * exp(gsl_ran_gaussian(r, opt->idio_spread)) / sqrt(p);
		mo->mean[i] = (opt->mean_return + gsl_ran_gaussian(r, opt->mean_spread)) / p;
		mo->first[i] = u_late < opt->late_share ? first : 0;
		mo->end[i] = u_early < opt->early_share ? end : mo->t;
	}
}

int hc_synth_model_alloc(struct synth_model **out, const struct synth_options *opt,
		      struct hc_error *err)
{
	struct synth_model *mo = NULL;
	gsl_rng *r = NULL;
	int rc;

	*out = NULL;
	if ((rc = hc_synth_options_check(opt, err)) != HC_OK)
		return rc;
	if (!(mo = hc_calloc(1, sizeof *mo)))
		return hc_error(err, HC_ENOMEM, "out of memory drawing the synthetic model");
	mo->m = opt->securities;
	mo->t = opt->periods;
	mo->nsectors = opt->sectors;
	mo->periods_per_year = hc_synth_periods_per_year(opt->frequency);
	mo->market_sd = opt->market_vol / sqrt(mo->periods_per_year);
	mo->sector_sd = opt->sector_vol / sqrt(mo->periods_per_year);
	mo->df = opt->df;
	mo->floor_return = opt->floor_return;
	mo->seed = opt->seed;
	if (model_arrays(mo, opt) < 0) {
		rc = hc_error(err, HC_ENOMEM, "out of memory drawing the synthetic model (%zu securities, %zu periods)",
			      mo->m, mo->t);
		goto cleanup;
	}
	make_dates(opt, mo->dates);
	if (!(r = stream_rng(opt->seed, 0))) {
		rc = hc_error(err, HC_EINTERNAL, "cannot allocate a random number generator");
		goto cleanup;
	}
	draw_parameters(mo, opt, r);
	*out = mo;
	mo = NULL;
	rc = HC_OK;
cleanup:
	gsl_rng_free(r);
	hc_synth_model_free(mo);
	return rc;
}

/* ---- returns ---------------------------------------------------------- */

/* Unit-variance specific noise: a t variate with df degrees of freedom has
 * variance df/(df-2), so it is scaled by sqrt((df-2)/df). */
static double noise(gsl_rng *r, double df)
{
	if (df == 0.0)
		return gsl_ran_gaussian(r, 1.0);
	return gsl_ran_tdist(r, df) * sqrt((df - 2.0) / df);
}

/* One period's returns of every security into row (m), g a scratch of
 * nsectors.  Every cell is drawn, listed or not, so the listing pattern
 * does not shift the stream; unlisted cells become NaN. */
static size_t draw_row(const struct synth_model *mo, gsl_rng *r, size_t k,
		       double *g, double *row)
{
	double f = gsl_ran_gaussian(r, mo->market_sd);
	size_t s, i, nfloor = 0;

	for (s = 0; s < mo->nsectors; s++)
		g[s] = gsl_ran_gaussian(r, mo->sector_sd);
	for (i = 0; i < mo->m; i++) {
		double x = mo->mean[i] + mo->beta[i] * f + g[mo->sector[i]] +
			   mo->idio_sd[i] * noise(r, mo->df);

		if (k < mo->first[i] || k >= mo->end[i]) {
			row[i] = NAN;
			continue;
		}
		if (x < mo->floor_return) {
			x = mo->floor_return;
			nfloor++;
		}
		row[i] = x;
	}
	return nfloor;
}

int hc_synth_generate(const struct synth_model *mo, double *x, size_t *nfloored,
		   struct hc_error *err)
{
	double *g = NULL, *row = NULL;
	gsl_rng *r = NULL;
	size_t k, i, nf = 0;
	int rc = HC_OK;

	g = hc_calloc(mo->nsectors, sizeof *g);
	row = hc_calloc(mo->m, sizeof *row);
	if (!g || !row) {
		rc = hc_error(err, HC_ENOMEM, "out of memory generating returns");
		goto cleanup;
	}
	if (!(r = stream_rng(mo->seed, 1))) {
		rc = hc_error(err, HC_EINTERNAL, "cannot allocate a random number generator");
		goto cleanup;
	}
	for (k = 0; k < mo->t; k++) {
		nf += draw_row(mo, r, k, g, row);
		for (i = 0; i < mo->m; i++)
			x[i * mo->t + k] = row[i];
	}
	if (nfloored)
		*nfloored = nf;
cleanup:
	gsl_rng_free(r);
	hc_free(g);
	hc_free(row);
	return rc;
}

/* ---- writing ---------------------------------------------------------- */

/* The shortest %.Ng (N = 15..17) that strtod reads back to x exactly:
 * 17 significant digits always round-trip an IEEE double, and fewer give
 * a tidier file when they suffice. */
static void format_number(double x, char *buf, size_t len)
{
	int prec;

	for (prec = 15; prec < 17; prec++) {
		snprintf(buf, len, "%.*g", prec, x);
		if (strtod(buf, NULL) == x)
			return;
	}
	snprintf(buf, len, "%.17g", x);
}

static int write_header(const struct synth_model *mo, FILE *fp)
{
	size_t i;

	if (fputs("date", fp) < 0)
		return -1;
	for (i = 0; i < mo->m; i++)
		if (fprintf(fp, ",%s", mo->ids[i]) < 0)
			return -1;
	return fputc('\n', fp) == EOF ? -1 : 0;
}

static int write_row(const struct synth_model *mo, size_t k, const double *row, FILE *fp)
{
	char buf[40];
	size_t i;

	hc_synth_format_date(mo->dates[k], buf);
	if (fputs(buf, fp) < 0)
		return -1;
	for (i = 0; i < mo->m; i++) {
		if (fputc(',', fp) == EOF)
			return -1;
		if (isnan(row[i]))
			continue;
		format_number(row[i], buf, sizeof buf);
		if (fputs(buf, fp) < 0)
			return -1;
	}
	return fputc('\n', fp) == EOF ? -1 : 0;
}

static int write_sectors(const struct synth_model *mo, FILE *fp)
{
	size_t i;

	if (fputs("id,sector\n", fp) < 0)
		return -1;
	for (i = 0; i < mo->m; i++)
		if (fprintf(fp, "%s,%s\n", mo->ids[i], mo->sector_names[mo->sector[i]]) < 0)
			return -1;
	return ferror(fp) ? -1 : 0;
}

static int write_universe(const struct synth_model *mo, FILE *fp, size_t *nfloored,
			  struct hc_error *err)
{
	double *g = NULL, *row = NULL;
	gsl_rng *r = NULL;
	size_t k, nf = 0;
	int rc = HC_OK;

	g = hc_calloc(mo->nsectors, sizeof *g);
	row = hc_calloc(mo->m, sizeof *row);
	if (!g || !row) {
		rc = hc_error(err, HC_ENOMEM, "out of memory generating returns");
		goto cleanup;
	}
	if (!(r = stream_rng(mo->seed, 1))) {
		rc = hc_error(err, HC_EINTERNAL, "cannot allocate a random number generator");
		goto cleanup;
	}
	/* A first pass draws every row and only checks it, so that a model
	 * whose returns holdcount's own reader would refuse (an infinite
	 * return, or one beyond HC_UNIVERSE_MAX_RETURN) writes nothing, not
	 * even to standard output; the second pass, from the same stream,
	 * writes the same rows. */
	for (k = 0; k < mo->t; k++) {
		size_t i;

		draw_row(mo, r, k, g, row);
		for (i = 0; i < mo->m; i++)
			if (!isnan(row[i]) && !(fabs(row[i]) <= HC_UNIVERSE_MAX_RETURN)) {
				char d[11];

				hc_synth_format_date(mo->dates[k], d);
				rc = hc_error(err, HC_EUSAGE,
					      "the model options give security '%s' a return of %g on %s, beyond "
					      "the %g a universe may hold; use smaller volatilities or mean returns",
					      mo->ids[i], row[i], d, HC_UNIVERSE_MAX_RETURN);
				goto cleanup;
			}
	}
	gsl_rng_free(r);
	if (!(r = stream_rng(mo->seed, 1))) {
		rc = hc_error(err, HC_EINTERNAL, "cannot allocate a random number generator");
		goto cleanup;
	}
	if (write_header(mo, fp) < 0)
		goto ioerr;
	for (k = 0; k < mo->t; k++) {
		nf += draw_row(mo, r, k, g, row);
		if (write_row(mo, k, row, fp) < 0)
			goto ioerr;
	}
	if (ferror(fp))
		goto ioerr;
	if (nfloored)
		*nfloored = nf;
	goto cleanup;
ioerr:
	rc = hc_error(err, HC_EIO, "cannot write the synthetic universe: %s", strerror(errno));
cleanup:
	gsl_rng_free(r);
	hc_free(g);
	hc_free(row);
	return rc;
}

int hc_synth_write(const struct synth_options *opt, FILE *universe, FILE *sectors,
		size_t *nfloored, struct hc_error *err)
{
	struct synth_model *mo = NULL;
	int rc;

	if ((rc = hc_synth_model_alloc(&mo, opt, err)) != HC_OK)
		return rc;
	if ((rc = write_universe(mo, universe, nfloored, err)) != HC_OK)
		goto cleanup;
	if (sectors && write_sectors(mo, sectors) < 0)
		rc = hc_error(err, HC_EIO, "cannot write the sector map: %s", strerror(errno));
cleanup:
	hc_synth_model_free(mo);
	return rc;
}

int hc_synth_write_parameters(const struct synth_model *mo, FILE *fp, struct hc_error *err)
{
	char b[3][40], first[11], last[11];
	size_t i;

	if (fputs("id,sector,beta,specific_sd,mean,first_date,last_date\n", fp) < 0)
		goto ioerr;
	for (i = 0; i < mo->m; i++) {
		format_number(mo->beta[i], b[0], sizeof b[0]);
		format_number(mo->idio_sd[i], b[1], sizeof b[1]);
		format_number(mo->mean[i], b[2], sizeof b[2]);
		hc_synth_format_date(mo->dates[mo->first[i]], first);
		hc_synth_format_date(mo->dates[mo->end[i] - 1], last);
		if (fprintf(fp, "%s,%s,%s,%s,%s,%s,%s\n", mo->ids[i],
			    mo->sector_names[mo->sector[i]], b[0], b[1], b[2], first, last) < 0)
			goto ioerr;
	}
	if (!ferror(fp))
		return HC_OK;
ioerr:
	return hc_error(err, HC_EIO, "cannot write the model parameters: %s", strerror(errno));
}

/* ---- truth ------------------------------------------------------------ */

int hc_synth_truth_expected(const struct synth_options *opt, struct synth_truth *out,
			 struct hc_error *err)
{
	double p, mkt2, sec2, idio2;
	int rc;

	if ((rc = hc_synth_options_check(opt, err)) != HC_OK)
		return rc;
	p = hc_synth_periods_per_year(opt->frequency);
	mkt2 = opt->market_vol * opt->market_vol / p;
	sec2 = opt->sector_vol * opt->sector_vol / p;
	/* E[exp(2 s Z)] = exp(2 s^2) for Z ~ N(0,1): the lognormal's mean. */
	idio2 = opt->idio_vol * opt->idio_vol / p * exp(2.0 * opt->idio_spread * opt->idio_spread);
	out->m = opt->securities;
	out->periods_per_year = p;
	out->average_variance = (1.0 + opt->beta_spread * opt->beta_spread) * mkt2 + sec2 + idio2;
	out->average_covariance = mkt2 + sec2 / (double)opt->sectors;
	return HC_OK;
}

int hc_synth_truth_model(const struct synth_model *mo, const size_t *keep, size_t nkeep,
		      struct synth_truth *out, struct hc_error *err)
{
	double sum_b = 0, sum_b2 = 0, sum_v = 0, same = 0, n;
	double mkt2 = mo->market_sd * mo->market_sd, sec2 = mo->sector_sd * mo->sector_sd;
	size_t *count, k, s;

	if (!keep)
		nkeep = mo->m;
	if (nkeep < 2)
		return hc_error(err, HC_EUSAGE, "the true averages need at least two securities, found %zu", nkeep);
	if (!(count = hc_calloc(mo->nsectors, sizeof *count)))
		return hc_error(err, HC_ENOMEM, "out of memory computing the true averages");
	for (k = 0; k < nkeep; k++) {
		size_t i = keep ? keep[k] : k;

		if (i >= mo->m) {
			hc_free(count);
			return hc_error(err, HC_EUSAGE, "security index %zu out of range (%zu securities)", i, mo->m);
		}
		sum_b += mo->beta[i];
		sum_b2 += mo->beta[i] * mo->beta[i];
		sum_v += mo->beta[i] * mo->beta[i] * mkt2 + sec2 + mo->idio_sd[i] * mo->idio_sd[i];
		count[mo->sector[i]]++;
	}
	for (s = 0; s < mo->nsectors; s++)
		same += (double)count[s] * ((double)count[s] - 1.0);
	hc_free(count);
	n = (double)nkeep;
	out->m = nkeep;
	out->periods_per_year = mo->periods_per_year;
	out->average_variance = sum_v / n;
	/* sum over ordered pairs i != j of beta_i beta_j = (sum b)^2 - sum b^2 */
	out->average_covariance = (mkt2 * (sum_b * sum_b - sum_b2) + sec2 * same) / (n * (n - 1.0));
	return HC_OK;
}
