/* Unit tests for the synthetic universe generator (src/synth.c).
 *
 * References outside the project: GSL's Student t and normal tail functions
 * (gsl_cdf_tdist_Q, gsl_cdf_ugaussian_Q), the C library's gmtime for the
 * calendar, strtod for round-tripping, and plain sample moments computed
 * here in the textbook way (divisor T-1) compared with the model's stated
 * population values within Monte Carlo tolerances derived beside each check.
 */
#define _POSIX_C_SOURCE 200809L
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <cmocka.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>

#include "holdcount/memory.h"
#include "holdcount/synth.h"
#include "holdcount/universe.h"

/* A model and its generated returns (security-major). */
struct sample {
	struct synth_model *mo;
	double *x;
	size_t nfloored;
};

static void sample_make(struct sample *s, const struct synth_options *opt)
{
	struct hc_error err;

	assert_int_equal(hc_synth_model_alloc(&s->mo, opt, &err), HC_OK);
	s->x = malloc(s->mo->m * s->mo->t * sizeof *s->x);
	assert_non_null(s->x);
	assert_int_equal(hc_synth_generate(s->mo, s->x, &s->nfloored, &err), HC_OK);
}

static void sample_release(struct sample *s)
{
	hc_synth_model_free(s->mo);
	free(s->x);
}

static double sample_cov(const double *a, const double *b, size_t t)
{
	double ma = 0, mb = 0, c = 0;
	size_t k;

	for (k = 0; k < t; k++) {
		ma += a[k];
		mb += b[k];
	}
	ma /= (double)t;
	mb /= (double)t;
	for (k = 0; k < t; k++)
		c += (a[k] - ma) * (b[k] - mb);
	return c / (double)(t - 1);
}

/* Write opt's universe (and sector map) into memory buffers. */
static int write_mem(const struct synth_options *opt, char **u, size_t *ulen,
		     char **s, size_t *slen, struct hc_error *err)
{
	FILE *fu = open_memstream(u, ulen), *fs = open_memstream(s, slen);
	int rc;

	assert_non_null(fu);
	assert_non_null(fs);
	rc = hc_synth_write(opt, fu, fs, NULL, err);
	fclose(fu);
	fclose(fs);
	return rc;
}

static void quiet_options(struct synth_options *opt)
{
	hc_synth_options_init(opt);
	opt->late_share = 0;
	opt->early_share = 0;
}

/* The t noise is scaled to unit variance: with no factors, each security's
 * sample variance over its specific variance averages 1.  For scaled t with
 * df = 6 the kurtosis is 3(df-2)/(df-4) = 6 (a property of the t
 * distribution), so Var(e^2) = 5 and each ratio has standard error
 * sqrt(5/T); over M independent securities sqrt(5/(M T)) = 0.0071 here.
 * Tolerance 4 standard errors.  (Unscaled t would give df/(df-2) = 1.5.) */
static void test_synth_noise_has_unit_variance(void **state)
{
	struct synth_options opt;
	struct sample s;
	double sum = 0, se;
	size_t i;

	quiet_options(&opt);
	opt.securities = 50;
	opt.periods = 2000;
	opt.market_vol = 0;
	opt.sector_vol = 0;
	opt.mean_spread = 0;
	opt.df = 6.0;
	opt.frequency = SYNTH_DAILY;   /* small per-period sds: nothing floored */
	opt.seed = 2385;
	sample_make(&s, &opt);
	for (i = 0; i < s.mo->m; i++)
		sum += sample_cov(s.x + i * s.mo->t, s.x + i * s.mo->t, s.mo->t) /
		       (s.mo->idio_sd[i] * s.mo->idio_sd[i]);
	se = sqrt(5.0 / (double)(s.mo->m * s.mo->t));
	assert_true(fabs(sum / (double)s.mo->m - 1.0) < 4 * se);
	assert_int_equal(s.nfloored, 0);
	sample_release(&s);
}

/* Fat tails: the share of standardised noise beyond 3 matches the scaled
 * Student t tail, 2 Q_t(3 / sqrt((df-2)/df); df), from GSL's t CDF, within
 * 4 binomial standard errors; it is well above the Gaussian 2 Q(3). */
static void test_synth_noise_tails_match_student_t(void **state)
{
	struct synth_options opt;
	struct sample s;
	double df = 5.0, p, se, share;
	size_t i, k, beyond = 0, n;

	quiet_options(&opt);
	opt.securities = 40;
	opt.periods = 2500;
	opt.market_vol = 0;
	opt.sector_vol = 0;
	opt.mean_spread = 0;
	opt.df = df;
	opt.frequency = SYNTH_DAILY;
	opt.seed = 4711;
	sample_make(&s, &opt);
	for (i = 0; i < s.mo->m; i++)
		for (k = 0; k < s.mo->t; k++) {
			double e = (s.x[i * s.mo->t + k] - s.mo->mean[i]) / s.mo->idio_sd[i];

			beyond += fabs(e) > 3.0;
		}
	n = s.mo->m * s.mo->t;
	p = 2.0 * gsl_cdf_tdist_Q(3.0 / sqrt((df - 2.0) / df), df);
	se = sqrt(p * (1 - p) / (double)n);
	share = (double)beyond / (double)n;
	assert_true(fabs(share - p) < 4 * se);
	assert_true(p - 4 * se > 2.0 * gsl_cdf_ugaussian_Q(3.0));
	sample_release(&s);
}

/* Factor structure: over R independent universes, the sample average
 * variance, the average within-sector covariance and the average
 * cross-sector covariance each deviate from the model's population value
 * (beta_i beta_j mkt^2 + [same sector] sec^2 + [i = j] sigma_i^2) by zero on
 * average.  The Monte Carlo standard error is measured from the R
 * replicates themselves; tolerance 4 of them.  The spread itself must be
 * small against the values (below 15% of each), so the check has teeth. */
static void test_synth_factor_structure(void **state)
{
	enum { R = 16 };
	struct synth_options opt;
	double dev[3][R], truth[3][R];
	size_t r, i, j, c;

	hc_synth_options_init(&opt);
	opt.securities = 30;
	opt.sectors = 3;
	opt.periods = 1200;
	opt.late_share = 0;
	opt.early_share = 0;
	opt.sector_vol = 0.20;
	for (r = 0; r < R; r++) {
		struct sample s;
		double est[3] = { 0 }, tru[3] = { 0 }, cnt[3] = { 0 };
		double m2, s2;

		opt.seed = 1000 + r;
		sample_make(&s, &opt);
		m2 = s.mo->market_sd * s.mo->market_sd;
		s2 = s.mo->sector_sd * s.mo->sector_sd;
		for (i = 0; i < s.mo->m; i++)
			for (j = 0; j < s.mo->m; j++) {
				int same = s.mo->sector[i] == s.mo->sector[j];
				double pop = s.mo->beta[i] * s.mo->beta[j] * m2 + same * s2 +
					     (i == j) * s.mo->idio_sd[i] * s.mo->idio_sd[i];

				c = i == j ? 0 : same ? 1 : 2;
				est[c] += sample_cov(s.x + i * s.mo->t, s.x + j * s.mo->t, s.mo->t);
				tru[c] += pop;
				cnt[c]++;
			}
		for (c = 0; c < 3; c++) {
			assert_true(cnt[c] > 0);
			dev[c][r] = (est[c] - tru[c]) / cnt[c];
			truth[c][r] = tru[c] / cnt[c];
		}
		sample_release(&s);
	}
	for (c = 0; c < 3; c++) {
		double mean = 0, var = 0, tmean = 0;

		for (r = 0; r < R; r++) {
			mean += dev[c][r] / R;
			tmean += truth[c][r] / R;
		}
		for (r = 0; r < R; r++)
			var += (dev[c][r] - mean) * (dev[c][r] - mean) / (R - 1);
		assert_true(fabs(mean) < 4 * sqrt(var / R));
		assert_true(sqrt(var) < 0.15 * tmean);
	}
	/* within-sector pairs carry the sector variance on top: the gap is
	 * sec^2 = 0.04/12 up to the beta mix; it must be clearly positive */
	assert_true(truth[1][0] > truth[2][0]);
}

/* The formula-level truth (before drawing) against the average over a very
 * large drawn universe.  v-bar's standard error is the sample sd of the v_i
 * over sqrt(M); c-bar's is dominated by the mean beta, 2 mkt^2 beta_spread /
 * sqrt(M), plus the sector-share term whose first-order fluctuation cancels
 * (the shares sum to one), leaving O(S/M) sec^2.  Tolerance 4 of each. */
static void test_synth_truth_expected_matches_drawn_parameters(void **state)
{
	struct synth_options opt;
	struct synth_model *mo;
	struct synth_truth te, tm;
	struct hc_error err;
	double sd = 0, mean, m2, s2;
	size_t i;

	hc_synth_options_init(&opt);
	opt.securities = 200000;
	opt.periods = 4;
	opt.seed = 99;
	assert_int_equal(hc_synth_truth_expected(&opt, &te, &err), HC_OK);
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	assert_int_equal(hc_synth_truth_model(mo, NULL, 0, &tm, &err), HC_OK);
	m2 = mo->market_sd * mo->market_sd;
	s2 = mo->sector_sd * mo->sector_sd;
	mean = tm.average_variance;
	for (i = 0; i < mo->m; i++) {
		double v = mo->beta[i] * mo->beta[i] * m2 + s2 + mo->idio_sd[i] * mo->idio_sd[i];

		sd += (v - mean) * (v - mean);
	}
	sd = sqrt(sd / (double)(mo->m - 1));
	assert_true(fabs(te.average_variance - tm.average_variance) < 4 * sd / sqrt((double)mo->m));
	assert_true(fabs(te.average_covariance - tm.average_covariance) <
		    4 * (2 * m2 * opt.beta_spread / sqrt((double)mo->m) + s2 * opt.sectors / (double)mo->m));
	assert_int_equal(te.m, opt.securities);
	assert_true(te.periods_per_year == 12.0);
	hc_synth_model_free(mo);
}

/* The true averages over a subset equal the direct average of the model's
 * covariance matrix over that subset (computed here entry by entry). */
static void test_synth_truth_model_subset(void **state)
{
	struct synth_options opt;
	struct synth_model *mo;
	struct synth_truth t;
	struct hc_error err;
	size_t keep[] = { 0, 3, 4, 7, 8, 11 }, n = 6, a, b;
	double v = 0, c = 0;

	hc_synth_options_init(&opt);
	opt.securities = 12;
	opt.sectors = 3;
	opt.seed = 31;
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	for (a = 0; a < n; a++)
		for (b = 0; b < n; b++) {
			size_t i = keep[a], j = keep[b];
			double cov = mo->beta[i] * mo->beta[j] * mo->market_sd * mo->market_sd +
				     (mo->sector[i] == mo->sector[j]) * mo->sector_sd * mo->sector_sd;

			if (a == b)
				v += cov + mo->idio_sd[i] * mo->idio_sd[i];
			else
				c += cov;
		}
	assert_int_equal(hc_synth_truth_model(mo, keep, n, &t, &err), HC_OK);
	assert_true(fabs(t.average_variance - v / n) < 1e-14 * (v / n));
	assert_true(fabs(t.average_covariance - c / (n * (n - 1))) < 1e-13 * fabs(c / (n * (n - 1))));
	assert_int_equal(t.m, n);
	keep[2] = 12;
	assert_int_equal(hc_synth_truth_model(mo, keep, n, &t, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "out of range"));
	assert_int_equal(hc_synth_truth_model(mo, keep, 1, &t, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "at least two"));
	hc_synth_model_free(mo);
}

/* Same seed, same bytes; another seed, other bytes. */
static void test_synth_seed_determines_bytes(void **state)
{
	struct synth_options opt;
	struct hc_error err;
	char *u[3], *s[3];
	size_t ul[3], sl[3], k;

	hc_synth_options_init(&opt);
	opt.securities = 25;
	opt.periods = 30;
	for (k = 0; k < 3; k++) {
		opt.seed = k < 2 ? 8675309 : 8675310;
		assert_int_equal(write_mem(&opt, &u[k], &ul[k], &s[k], &sl[k], &err), HC_OK);
	}
	assert_int_equal(ul[0], ul[1]);
	assert_memory_equal(u[0], u[1], ul[0]);
	assert_int_equal(sl[0], sl[1]);
	assert_memory_equal(s[0], s[1], sl[0]);
	assert_true(ul[0] != ul[2] || memcmp(u[0], u[2], ul[0]) != 0);
	for (k = 0; k < 3; k++) {
		free(u[k]);
		free(s[k]);
	}
}

/* Parse the written wide CSV back with strtod: every cell equals the value
 * hc_synth_generate returns exactly (round trip), empty exactly where NaN, and
 * the sector map lists every id with its sector's name. */
static void test_synth_written_values_round_trip(void **state)
{
	static const char *const names[] = { "Tidal Power", "Salt Works", "Ferry Lines" };
	struct synth_options opt;
	struct sample smp;
	struct hc_error err;
	char *u, *s, *line, *save, *cell, *p;
	size_t ul, sl, row = 0, i, cells = 0;

	hc_synth_options_init(&opt);
	opt.securities = 17;
	opt.periods = 40;
	opt.sectors = 3;
	opt.sector_names = names;
	opt.late_share = 0.3;
	opt.early_share = 0.3;
	opt.id_prefix = "QZ";
	opt.seed = 2718;
	sample_make(&smp, &opt);
	assert_int_equal(write_mem(&opt, &u, &ul, &s, &sl, &err), HC_OK);
	line = strtok_r(u, "\n", &save);
	assert_string_equal(line, "date,QZ01,QZ02,QZ03,QZ04,QZ05,QZ06,QZ07,QZ08,QZ09,QZ10,QZ11,QZ12,QZ13,QZ14,QZ15,QZ16,QZ17");
	while ((line = strtok_r(NULL, "\n", &save))) {
		char date[11];

		hc_synth_format_date(smp.mo->dates[row], date);
		assert_memory_equal(line, date, 10);
		p = line + 10;
		for (i = 0; i < smp.mo->m; i++) {
			double want = smp.x[i * smp.mo->t + row];
			char *end;

			assert_int_equal(*p, ',');
			cell = ++p;
			while (*p && *p != ',')
				p++;
			if (isnan(want)) {
				assert_true(p == cell);
				continue;
			}
			assert_true(strtod(cell, &end) == want);
			assert_true(end == p);
			cells++;
		}
		assert_int_equal(*p, '\0');
		row++;
	}
	assert_int_equal(row, opt.periods);
	assert_true(cells > 0);
	line = strtok_r(s, "\n", &save);
	assert_string_equal(line, "id,sector");
	for (i = 0; i < smp.mo->m; i++) {
		char want[64];

		line = strtok_r(NULL, "\n", &save);
		assert_non_null(line);
		snprintf(want, sizeof want, "%s,%s", smp.mo->ids[i], names[smp.mo->sector[i]]);
		assert_string_equal(line, want);
	}
	assert_null(strtok_r(NULL, "\n", &save));
	free(u);
	free(s);
	sample_release(&smp);
}

/* Late listings have leading gaps only, early delistings trailing gaps only,
 * listed cells form one block; the late share is near its probability (4
 * binomial standard errors); and the gaps change no listed value. */
static void test_synth_listing_pattern(void **state)
{
	struct synth_options opt;
	struct sample a, b;
	size_t i, k, late = 0, early = 0;
	double se;

	hc_synth_options_init(&opt);
	opt.securities = 300;
	opt.periods = 48;
	opt.late_share = 0.3;
	opt.early_share = 0.2;
	opt.seed = 1618;
	sample_make(&a, &opt);
	opt.late_share = 0;
	opt.early_share = 0;
	sample_make(&b, &opt);
	for (i = 0; i < a.mo->m; i++) {
		const double *x = a.x + i * a.mo->t;
		size_t lead = 0, trail = 0;

		while (lead < a.mo->t && isnan(x[lead]))
			lead++;
		while (trail < a.mo->t && isnan(x[a.mo->t - 1 - trail]))
			trail++;
		assert_true(lead + trail < a.mo->t);
		for (k = lead; k < a.mo->t - trail; k++) {
			assert_false(isnan(x[k]));
			assert_true(x[k] == b.x[i * b.mo->t + k]);
		}
		assert_int_equal(lead, a.mo->first[i]);
		assert_int_equal(a.mo->t - trail, a.mo->end[i]);
		assert_true(lead <= a.mo->t / 2);
		assert_true(trail < a.mo->t / 2);
		late += lead > 0;
		early += trail > 0;
		assert_int_equal(b.mo->first[i], 0);
		assert_int_equal(b.mo->end[i], b.mo->t);
	}
	se = sqrt(0.3 * 0.7 / 300);
	assert_true(fabs((double)late / 300 - 0.3) < 4 * se);
	se = sqrt(0.2 * 0.8 / 300);
	assert_true(fabs((double)early / 300 - 0.2) < 4 * se);
	sample_release(&a);
	sample_release(&b);
}

static struct tm tm_of(int32_t days)
{
	time_t t = (time_t)days * 86400;
	struct tm tm;

	assert_non_null(gmtime_r(&t, &tm));
	return tm;
}

/* Calendars checked with the C library's gmtime: monthly dates are month
 * ends in consecutive months (leap Februaries included), weekly dates are 7
 * days apart from the start, daily dates are weekdays with no weekday
 * skipped. */
static void test_synth_dates_follow_calendar(void **state)
{
	struct synth_options opt;
	struct synth_model *mo;
	struct hc_error err;
	char buf[11];
	size_t k;

	hc_synth_options_init(&opt);
	opt.securities = 3;
	opt.sectors = 2;
	opt.periods = 130;
	opt.start = "2003-11";
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	hc_synth_format_date(mo->dates[0], buf);
	assert_string_equal(buf, "2003-11-30");
	for (k = 0; k < mo->t; k++) {
		struct tm now = tm_of(mo->dates[k]), next = tm_of(mo->dates[k] + 1);

		assert_int_equal(next.tm_mday, 1);
		assert_int_equal((now.tm_year * 12 + now.tm_mon), 103 * 12 + 10 + (int)k);
	}
	hc_synth_model_free(mo);

	opt.frequency = SYNTH_WEEKLY;
	opt.start = "2011-03-04";
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	hc_synth_format_date(mo->dates[0], buf);
	assert_string_equal(buf, "2011-03-04");
	for (k = 1; k < mo->t; k++)
		assert_int_equal(mo->dates[k] - mo->dates[k - 1], 7);
	assert_true(mo->periods_per_year == 52.0);
	hc_synth_model_free(mo);

	opt.frequency = SYNTH_DAILY;
	opt.start = "2012-12-29";   /* a Saturday: the series starts Monday */
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	hc_synth_format_date(mo->dates[0], buf);
	assert_string_equal(buf, "2012-12-31");
	for (k = 0; k < mo->t; k++) {
		struct tm tm = tm_of(mo->dates[k]);

		assert_true(tm.tm_wday >= 1 && tm.tm_wday <= 5);
		if (k > 0)
			assert_int_equal(mo->dates[k] - mo->dates[k - 1], tm.tm_wday == 1 ? 3 : 1);
	}
	hc_synth_model_free(mo);
}

static void expect_usage(const struct synth_options *opt, const char *fragment)
{
	struct hc_error err;
	struct synth_model *mo = (struct synth_model *)1;

	assert_int_equal(hc_synth_options_check(opt, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, fragment));
	assert_int_equal(hc_synth_model_alloc(&mo, opt, &err), HC_EUSAGE);
	assert_null(mo);
}

static void test_synth_rejects_bad_options(void **state)
{
	static const char *const dup[] = { "Glassworks", "Glassworks" };
	static const char *const comma[] = { "Amber, Mining", "Cliff Rail" };
	struct synth_options opt, base;
	struct hc_error err;

	hc_synth_options_init(&base);
	assert_int_equal(hc_synth_options_check(&base, &err), HC_OK);
#define BAD(field, value, fragment) do { opt = base; opt.field = value; expect_usage(&opt, fragment); } while (0)
	BAD(securities, 1, "securities must be from 2");
	BAD(periods, 3, "periods must be from 4");
	BAD(sectors, 0, "sectors must be from 1");
	BAD(sectors, 151, "sectors must be from 1 to the number of securities (150), found 151");
	BAD(frequency, 7, "unknown frequency 7");
	BAD(start, "2005-02-30", "start date '2005-02-30'");
	BAD(start, "2005-1-31", "start date");
	BAD(start, "9999-12", "pass the year 9999");
	BAD(start, NULL, "start date");
	BAD(market_vol, -0.1, "market volatility must be finite and at least 0, found -0.1");
	BAD(sector_vol, NAN, "sector volatility");
	BAD(idio_vol, 0.0, "specific volatility must be finite and above 0");
	BAD(idio_spread, -1, "specific volatility spread");
	BAD(beta_spread, INFINITY, "beta spread");
	BAD(mean_spread, -0.02, "mean spread");
	BAD(mean_return, NAN, "mean return must be finite");
	BAD(df, 2.0, "degrees of freedom must be above 2, or 0 for Gaussian, found 2");
	BAD(late_share, 1.5, "late-listing share");
	BAD(early_share, -0.1, "early-delisting share");
	BAD(floor_return, -1.0, "floor return");
	BAD(id_prefix, "A,B", "id prefix 'A,B'");
	BAD(sector_prefix, "x\"y", "sector prefix");
	opt = base;
	opt.sectors = 2;
	opt.sector_names = dup;
	expect_usage(&opt, "duplicate sector name 'Glassworks'");
	opt.sector_names = comma;
	expect_usage(&opt, "sector name 1 'Amber, Mining'");
	BAD(securities, 2, "");   /* sectors 9 > 2 */
#undef BAD
	opt = base;
	opt.df = 0;   /* Gaussian noise is allowed */
	assert_int_equal(hc_synth_options_check(&opt, &err), HC_OK);
}

/* Every allocation failure is reported as HC_ENOMEM and leaks nothing (the
 * sanitiser build checks the leaks). */
static void test_synth_allocation_failure(void **state)
{
	struct synth_options opt;
	struct synth_model *mo;
	struct synth_truth t;
	struct hc_error err;
	double *x;
	long k;
	int rc;
	FILE *fp;

	hc_synth_options_init(&opt);
	opt.securities = 6;
	opt.sectors = 2;
	opt.periods = 8;
	for (k = 0;; k++) {
		hc_alloc_fail_after(k);
		rc = hc_synth_model_alloc(&mo, &opt, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
		assert_null(mo);
	}
	assert_true(k > 5);
	x = malloc(6 * 8 * sizeof *x);
	assert_non_null(x);
	hc_alloc_fail_after(0);
	assert_int_equal(hc_synth_generate(mo, x, NULL, &err), HC_ENOMEM);
	assert_int_equal(hc_synth_truth_model(mo, NULL, 0, &t, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	free(x);
	hc_synth_model_free(mo);
	hc_synth_model_free(NULL);
	fp = fopen("/dev/null", "w");
	assert_non_null(fp);
	for (k = 0;; k++) {
		hc_alloc_fail_after(k);
		rc = hc_synth_write(&opt, fp, fp, NULL, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK)
			break;
		assert_int_equal(rc, HC_ENOMEM);
	}
	fclose(fp);
}

/* A stream that refuses writes gives HC_EIO. */
static void test_synth_write_failure(void **state)
{
	struct synth_options opt;
	struct synth_model *mo;
	struct hc_error err;
	FILE *ro = fopen("/dev/null", "r"), *ok = fopen("/dev/null", "w");

	assert_non_null(ro);
	assert_non_null(ok);
	hc_synth_options_init(&opt);
	opt.securities = 5;
	opt.sectors = 2;
	assert_int_equal(hc_synth_write(&opt, ro, ok, NULL, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot write the synthetic universe"));
	assert_int_equal(hc_synth_write(&opt, ok, ro, NULL, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot write the sector map"));
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	assert_int_equal(hc_synth_write_parameters(mo, ro, &err), HC_EIO);
	hc_synth_model_free(mo);
	fclose(ro);
	fclose(ok);
}

/* The parameter file has one row per security; its numbers read back to the
 * model's exactly and its dates bound the listed block. */
static void test_synth_parameters_file(void **state)
{
	struct synth_options opt;
	struct synth_model *mo;
	struct hc_error err;
	char *buf, *line, *save, first[11], last[11];
	size_t len, i = 0;
	FILE *fp;

	hc_synth_options_init(&opt);
	opt.securities = 20;
	opt.sectors = 4;
	opt.late_share = 0.5;
	opt.early_share = 0.5;
	opt.seed = 577;
	assert_int_equal(hc_synth_model_alloc(&mo, &opt, &err), HC_OK);
	fp = open_memstream(&buf, &len);
	assert_non_null(fp);
	assert_int_equal(hc_synth_write_parameters(mo, fp, &err), HC_OK);
	fclose(fp);
	line = strtok_r(buf, "\n", &save);
	assert_string_equal(line, "id,sector,beta,specific_sd,mean,first_date,last_date");
	while ((line = strtok_r(NULL, "\n", &save))) {
		char id[16], sector[32], f[11], l[11];
		double beta, sd, mean;

		assert_int_equal(sscanf(line, "%15[^,],%31[^,],%lf,%lf,%lf,%10[^,],%10s",
					id, sector, &beta, &sd, &mean, f, l), 7);
		assert_string_equal(id, mo->ids[i]);
		assert_string_equal(sector, mo->sector_names[mo->sector[i]]);
		assert_true(beta == mo->beta[i] && sd == mo->idio_sd[i] && mean == mo->mean[i]);
		hc_synth_format_date(mo->dates[mo->first[i]], first);
		hc_synth_format_date(mo->dates[mo->end[i] - 1], last);
		assert_string_equal(f, first);
		assert_string_equal(l, last);
		i++;
	}
	assert_int_equal(i, mo->m);
	free(buf);
	hc_synth_model_free(mo);
}

/* The project's loader reads what synth writes: securities with gaps are
 * dropped under the complete-data policy, the rest hold exactly the
 * generated doubles, and the dates and periods per year come back. */
static void test_synth_loader_reads_output(void **state)
{
	struct synth_options opt;
	struct universe_options uo;
	struct universe *u;
	struct sample smp;
	struct hc_error err;
	char *buf, *sec;
	size_t len, slen, i, k, kept = 0;

	hc_synth_options_init(&opt);
	opt.securities = 30;
	opt.periods = 60;
	opt.sectors = 4;
	opt.late_share = 0.2;
	opt.early_share = 0.2;
	opt.seed = 1414;
	sample_make(&smp, &opt);
	assert_int_equal(write_mem(&opt, &buf, &len, &sec, &slen, &err), HC_OK);
	hc_universe_options_init(&uo);
	assert_int_equal(hc_universe_load_buffer(&u, "synth.csv", buf, len, &uo, &err), HC_OK);
	assert_int_equal(u->m_read, opt.securities);
	assert_int_equal(u->t, opt.periods);
	assert_true(u->periods_per_year == 12.0);
	for (k = 0; k < u->t; k++)
		assert_int_equal(u->dates[k], smp.mo->dates[k]);
	for (i = 0; i < smp.mo->m; i++) {
		long j = hc_universe_find(u, smp.mo->ids[i]);
		int complete = smp.mo->first[i] == 0 && smp.mo->end[i] == smp.mo->t;

		assert_int_equal(j >= 0, complete);
		if (j < 0)
			continue;
		kept++;
		for (k = 0; k < u->t; k++)
			assert_true(u->x[(size_t)j * u->t + k] == smp.x[i * smp.mo->t + k]);
	}
	assert_int_equal(u->m, kept);
	assert_int_equal(u->ndropped, opt.securities - kept);
	assert_true(kept > 2 && kept < opt.securities);
	hc_universe_free(u);
	free(buf);
	free(sec);
	sample_release(&smp);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_synth_noise_has_unit_variance),
		cmocka_unit_test(test_synth_noise_tails_match_student_t),
		cmocka_unit_test(test_synth_factor_structure),
		cmocka_unit_test(test_synth_truth_expected_matches_drawn_parameters),
		cmocka_unit_test(test_synth_truth_model_subset),
		cmocka_unit_test(test_synth_seed_determines_bytes),
		cmocka_unit_test(test_synth_written_values_round_trip),
		cmocka_unit_test(test_synth_listing_pattern),
		cmocka_unit_test(test_synth_dates_follow_calendar),
		cmocka_unit_test(test_synth_rejects_bad_options),
		cmocka_unit_test(test_synth_allocation_failure),
		cmocka_unit_test(test_synth_write_failure),
		cmocka_unit_test(test_synth_parameters_file),
		cmocka_unit_test(test_synth_loader_reads_output),
	};

	gsl_set_error_handler_off();
	return cmocka_run_group_tests(tests, NULL, NULL);
}
