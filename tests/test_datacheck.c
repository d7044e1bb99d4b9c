/*
 * test_datacheck.c - planted data mistakes are found at the right security
 * and date; the invented demo universe gives no finding.
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdint.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include <gsl/gsl_rng.h>
#include <gsl/gsl_randist.h>

#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/universe.h"

enum { M = 8, T = 120 };

/* Daily weekday returns (Monday 2024-01-01 onwards, days since 1970 19723),
 * one factor plus noise; then the plants. */
static struct universe *planted(void)
{
	struct universe *u = hc_calloc(1, sizeof *u);
	gsl_rng *r = gsl_rng_alloc(gsl_rng_mt19937);
	size_t i, k;
	int32_t day = 19723;

	assert_non_null(u);
	u->m = M;
	u->t = T;
	u->ids = hc_calloc(M, sizeof *u->ids);
	u->x = hc_malloc(M * T * sizeof *u->x);
	u->dates = hc_malloc(T * sizeof *u->dates);
	gsl_rng_set(r, 2385);
	for (k = 0; k < T; k++) {
		u->dates[k] = day;
		day += ((day + 3) % 7 == 4) ? 3 : 1;   /* Friday -> Monday */
	}
	for (i = 0; i < M; i++) {
		u->ids[i] = hc_malloc(16);
		snprintf(u->ids[i], 16, "LIR9%02zu", i + 1);
		for (k = 0; k < T; k++)
			u->x[i * T + k] = 0.0004 + 0.012 * gsl_ran_ugaussian(r);
	}
	u->x[0 * T + 40] = -0.5012;                        /* LIR901: a 2-for-1 split, kept */
	u->x[1 * T + 60] = 1.0031;                         /* LIR902: doubled ... */
	u->x[1 * T + 62] = 1 / 2.0031 - 1;                 /* ... and undone two days on */
	for (k = 20; k < 27; k++)
		u->x[2 * T + k] = 0.0;                         /* LIR903: stale for 7 days */
	for (k = 0; k < T; k++)
		u->x[3 * T + k] *= 100;                        /* LIR904: percents */
	for (k = 0; k < T; k++)
		u->x[4 * T + k] = 48.75 * (1 + u->x[4 * T + k]); /* LIR905: prices */
	u->x[5 * T + 30] = -1.2;                           /* LIR906: below -100% */
	u->x[6 * T + 90] = 0.873;                          /* LIR907: a spike ... */
	u->x[6 * T + 91] = 1 / 1.873 - 1 + 0.004;          /* ... undone the next day */
	u->x[7 * T + 100] = 10 * 1.019 - 1;                /* LIR908: 1-for-10 reverse split on a +1.9% day */
	u->periods_per_year = 252;
	gsl_rng_free(r);
	return u;
}

static void expect(const struct datacheck_result *r, int kind, size_t sec, size_t per, int reversed)
{
	size_t j, hits = 0;

	for (j = 0; j < r->nfindings; j++)
		if (r->findings[j].kind == kind) {
			hits++;
			assert_int_equal(r->findings[j].security, sec);
			assert_int_equal(r->findings[j].period, per);
			assert_int_equal(r->findings[j].reversed, reversed);
		}
	assert_int_equal(hits, 1);
}

static void test_datacheck_finds_plants(void **state)
{
	struct universe *u = planted();
	struct datacheck_result *r = NULL;
	struct hc_error err;
	char text[256];
	size_t j, splits = 0;

	(void)state;
	assert_int_equal(hc_datacheck_run(&r, u, &err), HC_OK);
	for (j = 0; j < r->nfindings; j++)
		if (r->findings[j].kind == DATACHECK_SPLIT) {
			splits++;
			if (r->findings[j].security == 0) {
				assert_int_equal(r->findings[j].period, 40);
				assert_int_equal(r->findings[j].reversed, 0);
			} else if (r->findings[j].security == 7) {
				assert_int_equal(r->findings[j].period, 100);
				assert_int_equal(r->findings[j].reversed, 0);
			} else {
				assert_int_equal(r->findings[j].security, 1);
				assert_true(r->findings[j].period == 60 || r->findings[j].period == 62);
			}
		}
	assert_int_equal(splits, 4);   /* the two kept splits, and both legs of the bad print */
	expect(r, DATACHECK_STALE, 2, 20, 0);
	expect(r, DATACHECK_PERCENTS, 3, 0, 0);
	expect(r, DATACHECK_PRICES, 4, 0, 0);
	expect(r, DATACHECK_TOTAL_LOSS, 5, 30, 0);
	expect(r, DATACHECK_EXTREME, 6, 90, 1);
	for (j = 0; j < r->nfindings; j++)
		if (r->findings[j].kind == DATACHECK_SPLIT && r->findings[j].period == 60)
			assert_int_equal(r->findings[j].reversed, 1);
	/* Monday to Friday: five days a week, about 261 periods a year from the
	 * calendar (52.18 weeks of 5 days; no holidays here). */
	assert_int_equal(r->weekdays, 0x1f);
	assert_true(r->days_a_week == 5);
	assert_true(fabs(r->calendar_periods_per_year - 5 * 365.2425 / 7) < 3);
	for (j = 0; j < r->nfindings; j++)
		if (r->findings[j].kind == DATACHECK_SPLIT && r->findings[j].security == 0)
			hc_datacheck_describe(&r->findings[j], u, text, sizeof text);
	assert_string_equal(text, "LIR901 2024-02-26: return -50.12% looks like an unadjusted 2-for-1 split (not reversed)");
	for (j = 0; j < r->nfindings; j++)
		if (r->findings[j].kind == DATACHECK_SPLIT && r->findings[j].security == 7)
			hc_datacheck_describe(&r->findings[j], u, text, sizeof text);
	assert_non_null(strstr(text, "LIR908"));
	assert_non_null(strstr(text, "1-for-10 reverse split (not reversed)"));
	hc_datacheck_free(r);
	hc_universe_free(u);
}

/* A field's integer in a report, -1 when the report has no such field. */
static long long field_int(const struct report *rep, const char *key)
{
	size_t i;

	for (i = 0; i < rep->nfields; i++)
		if (strcmp(rep->fields[i].key, key) == 0)
			return rep->fields[i].value.integer;
	return -1;
}

/* The count kept on the universe (hc_datacheck_keep) gives the same fields
 * as the report folder's (hc_datacheck_add_counts): the total, the first
 * finding, one field a kind found; nothing before the checks ran.  The
 * plants above: 4 split-like returns, one each of the other five kinds. */
static void test_datacheck_keeps_count(void **state)
{
	struct universe *u = planted();
	struct datacheck_result *r = NULL;
	struct report *kept = hc_report_alloc(), *folder = hc_report_alloc(), *none = hc_report_alloc();
	struct hc_error err;
	size_t i, lo, mid, hi;

	(void)state;
	assert_non_null(kept);
	assert_non_null(folder);
	assert_non_null(none);
	assert_int_equal(hc_datacheck_report_kept(none, &u->checks), HC_OK);
	assert_int_equal(none->nfields, 0);
	assert_int_equal(hc_datacheck_run(&r, u, &err), HC_OK);
	hc_datacheck_keep(u, r);
	assert_int_equal(u->checks.total, 9);
	assert_int_equal(hc_datacheck_report_kept(kept, &u->checks), HC_OK);
	assert_int_equal(hc_datacheck_add_counts(folder, u, r), HC_OK);
	assert_int_equal(kept->nfields, folder->nfields);
	for (i = 0; i < kept->nfields; i++)
		assert_string_equal(kept->fields[i].key, folder->fields[i].key);
	assert_int_equal(field_int(kept, "data_check_findings"), 9);
	assert_int_equal(field_int(kept, "data_check_split"), 4);
	assert_int_equal(field_int(kept, "data_check_stale"), 1);
	assert_int_equal(field_int(kept, "data_check_percents"), 1);
	assert_int_equal(field_int(kept, "data_check_prices"), 1);
	assert_int_equal(field_int(kept, "data_check_total_loss"), 1);
	assert_int_equal(field_int(kept, "data_check_extreme"), 1);
	/* securities alive per period: all 8, then three gaps, two in one period */
	assert_int_equal(hc_universe_alive(u, &lo, &mid, &hi), HC_OK);
	assert_true(lo == 8 && mid == 8 && hi == 8);
	u->x[0 * T + 5] = NAN;
	u->x[1 * T + 5] = NAN;
	u->x[2 * T + 7] = NAN;
	u->has_missing = 1;
	assert_int_equal(hc_universe_alive(u, &lo, &mid, &hi), HC_OK);
	assert_true(lo == 6 && mid == 8 && hi == 8);
	hc_report_free(kept);
	hc_report_free(folder);
	hc_report_free(none);
	hc_datacheck_free(r);
	hc_universe_free(u);
}

/* A Sunday-to-Thursday week is five days a week too, not seven. */
static void test_datacheck_sunday_thursday(void **state)
{
	struct universe *u = planted();
	struct datacheck_result *r = NULL;
	struct hc_error err;
	size_t k;

	(void)state;
	for (k = 0; k < T; k++)
		u->dates[k] -= 1;        /* Monday..Friday become Sunday..Thursday */
	assert_int_equal(hc_datacheck_run(&r, u, &err), HC_OK);
	assert_int_equal(r->weekdays, 0x4f);   /* Sunday (bit 6) and Monday..Thursday */
	assert_true(r->days_a_week == 5);
	assert_true(fabs(r->calendar_periods_per_year - 5 * 365.2425 / 7) < 3);
	hc_datacheck_free(r);
	hc_universe_free(u);
}

/* The invented demo universe: monthly, month ends, no finding. */
static void test_datacheck_demo_is_clean(void **state)
{
	struct universe_options uo;
	struct universe *u = NULL;
	struct datacheck_result *r = NULL;
	struct hc_error err;
	char path[4096];
	const char *src = getenv("HOLDCOUNT_SOURCE_DIR");

	(void)state;
	assert_non_null(src);
	snprintf(path, sizeof path, "%s/data/demo-universe.csv", src);
	hc_universe_options_init(&uo);
	uo.missing = UNIVERSE_MISSING_KEEP;
	assert_int_equal(hc_universe_load(&u, path, &uo, &err), HC_OK);
	assert_int_equal(hc_datacheck_run(&r, u, &err), HC_OK);
	if (r->nfindings) {
		char text[256];

		hc_datacheck_describe(&r->findings[0], u, text, sizeof text);
		fail_msg("demo finding: %s", text);
	}
	assert_true(r->month_end);
	assert_true(r->days_a_week == 0);
	assert_true(fabs(r->calendar_periods_per_year - 12) < 0.1);
	hc_datacheck_free(r);
	hc_universe_free(u);
}

static int cmp_double(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;

	return (x > y) - (x < y);
}

/* The median a sort gives (the reference; the check selects it instead). */
static double sorted_median(double *v, size_t n)
{
	qsort(v, n, sizeof *v, cmp_double);
	return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/*
 * The medians behind the findings are the sorted ones exactly, for odd and
 * even counts, ties and gaps: a series of prices (every cell positive) is
 * reported with its median cell, a series in percents with its median
 * size of a return.
 */
static void test_datacheck_medians(void **state)
{
	gsl_rng *g = gsl_rng_alloc(gsl_rng_mt19937);
	struct datacheck_result *r = NULL;
	struct hc_error err;
	double v[64], w[64];
	size_t t, k, n;
	int pct;

	(void)state;
	assert_non_null(g);
	gsl_rng_set(g, 6271);
	for (pct = 0; pct < 2; pct++)
		for (t = 2; t <= 41; t++) {
			struct universe *u = hc_calloc(1, sizeof *u);

			assert_non_null(u);
			u->m = 1;
			u->t = t;
			u->x = hc_malloc(t * sizeof *u->x);
			u->dates = hc_malloc(t * sizeof *u->dates);
			assert_non_null(u->x);
			assert_non_null(u->dates);
			for (k = n = 0; k < t; k++) {
				/* a few values repeat (ties); every seventh cell is a gap */
				double x = pct ? (gsl_rng_uniform(g) - 0.45) * 12.5 : 23.85 + 4 * gsl_rng_uniform(g);

				u->dates[k] = 19723 + (int32_t)k;
				u->x[k] = k % 7 == 6 ? NAN : k % 5 == 4 ? u->x[k - 1] : x;
				if (!isnan(u->x[k]))
					v[n++] = pct ? fabs(u->x[k]) : u->x[k];
			}
			u->x[0] = pct ? -fabs(u->x[0]) - 0.5 : u->x[0];   /* not all positive: not prices */
			v[0] = fabs(u->x[0]);
			memcpy(w, v, n * sizeof *v);
			assert_int_equal(hc_datacheck_run(&r, u, &err), HC_OK);
			assert_true(r->nfindings >= 1);
			assert_int_equal(r->findings[0].kind, pct ? DATACHECK_PERCENTS : DATACHECK_PRICES);
			if (r->findings[0].value != sorted_median(w, n))
				fail_msg("%zu cells: median %.17g, sorted %.17g", n, r->findings[0].value,
					 sorted_median(w, n));
			hc_datacheck_free(r);
			hc_universe_free(u);
		}
	gsl_rng_free(g);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_datacheck_finds_plants),
		cmocka_unit_test(test_datacheck_medians),
		cmocka_unit_test(test_datacheck_keeps_count),
		cmocka_unit_test(test_datacheck_sunday_thursday),
		cmocka_unit_test(test_datacheck_demo_is_clean),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
