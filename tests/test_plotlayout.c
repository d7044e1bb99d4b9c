/*
 * test_plotlayout.c - label placement: no leader line strikes a label.
 *
 * References: the plane geometry of the layout itself, re-derived here
 * independently of src/plotlayout.c (a leader is a vertical segment from
 * below every row up to its own label's row; it strikes another label when
 * its x lies within that label's span and that label's row is not above
 * its top; a leader at the label's own x runs along the label's own
 * leader, clear of its text), checked over 20000 generated layouts of 1 to 6 labels with a
 * fixed seed, clustered counts included; and text widths measured by hand
 * on a render by gnuplot 5.4's pngcairo terminal (Sans 9 on the 1000 x 640
 * canvas: "14: cost-benefit (90%: 13-15)" spans 180 pixels, "MMMMMMMMMM"
 * 100, "eeeeeeeeee" 70).
 */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <math.h>
#include <stdint.h>
#include <string.h>

#include "holdcount/plotlayout.h"

#define GAP 5.0
#define PAD 5.0

/* splitmix64 (Steele, Lea & Flood, 2014): a fixed stream of test cases. */
static uint64_t state_rng = 2385;

static double uniform(void)
{
	uint64_t z = (state_rng += 0x9e3779b97f4a7c15ull);

	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
	z ^= z >> 31;
	return (double)(z >> 11) / 9007199254740992.0;
}

/* Label i's span, from its side, computed here from the definition. */
static void span(const struct plotlayout_leader *l, double *lo, double *hi)
{
	*lo = l->left ? l->x - GAP - l->width : l->x + GAP;
	*hi = l->left ? l->x - GAP : l->x + GAP + l->width;
}

/* The number of (leader, label) pairs where the leader strikes the label. */
static size_t strikes(const struct plotlayout_leader *ld, size_t n)
{
	size_t i, j, bad = 0;
	double lo, hi;

	for (i = 0; i < n; i++) {
		span(&ld[i], &lo, &hi);
		for (j = 0; j < n; j++)
			if (j != i && ld[j].x != ld[i].x && ld[j].x >= lo - PAD && ld[j].x <= hi + PAD &&
			    ld[i].row >= ld[j].row)
				bad++;
	}
	return bad;
}

static void test_plotlayout_leaders_never_strike_a_label(void **state)
{
	struct plotlayout_leader ld[6];
	size_t trial, n, i, j;
	double spill, lo, hi;
	int seen;

	(void)state;
	for (trial = 0; trial < 20000; trial++) {
		n = 1 + (size_t)(uniform() * 6);
		/* half the trials crowd the counts into a 60-pixel cluster */
		double base = 80 + uniform() * 890, reach = trial % 2 ? 60 : 890;
		for (i = 0; i < n; i++) {
			ld[i].x = trial % 2 ? fmin(970, base + uniform() * reach) : 80 + uniform() * reach;
			ld[i].width = 30 + uniform() * 230;
		}
		for (i = 1; i < n; i++)   /* ascending x, as the caller gives them */
			for (j = i; j > 0 && ld[j - 1].x > ld[j].x; j--) {
				struct plotlayout_leader t = ld[j];
				ld[j] = ld[j - 1];
				ld[j - 1] = t;
			}
		assert_int_equal(hc_plotlayout_leaders(ld, n, 80, 970, GAP, PAD, &spill, NULL), HC_OK);
		assert_int_equal(strikes(ld, n), 0);
		for (i = 0; i < n; i++) {      /* rows are 0..n-1, each once */
			assert_true(ld[i].row < n);
			for (seen = 0, j = 0; j < n; j++)
				seen += ld[j].row == ld[i].row;
			assert_int_equal(seen, 1);
		}
		/* the reported spill is the labels' reach outside 80..970 */
		double s = 0;
		for (i = 0; i < n; i++) {
			span(&ld[i], &lo, &hi);
			s += (lo < 80 ? 80 - lo : 0) + (hi > 970 ? hi - 970 : 0);
		}
		assert_true(fabs(s - spill) < 1e-9);
	}
}

/* The audit's case: rules at 14, 17, 21, 52, 62 and 88 on a log axis of
 * 1..139 over 80..970 pixels, with the demo's labels.  All to the right
 * would push 88's label out of the frame; the layout sets 52, 62 and 88 to
 * the left, and 88's label, which spans 62's and 52's leaders, above them. */
static void test_plotlayout_leaders_the_demo_case(void **state)
{
	static const double counts[] = { 14, 17, 21, 52, 62, 88 };
	static const char *const labels[] = { "14: cost-benefit (90%: 13-15)", "17: marginal (90%: 16-17)",
					      "21: near-floor (90%: 18-24)", "52: band", "62: shortfall",
					      "88: tracking-error (90%: 87-89)" };
	struct plotlayout_axis ax = { 1, 139, 1, 80, 970 };
	struct plotlayout_leader ld[6];
	double spill;
	size_t i;

	(void)state;
	for (i = 0; i < 6; i++) {
		ld[i].x = hc_plotlayout_to_px(&ax, counts[i]);
		ld[i].width = hc_plotlayout_text_px(labels[i], 9);
	}
	assert_int_equal(hc_plotlayout_leaders(ld, 6, 80, 970, GAP, PAD, &spill, NULL), HC_OK);
	assert_true(spill == 0.0);
	assert_int_equal(strikes(ld, 6), 0);
	assert_false(ld[0].left || ld[1].left || ld[2].left);
	assert_true(ld[3].left && ld[4].left && ld[5].left);
	assert_true(ld[5].row < ld[4].row && ld[4].row < ld[3].row);
	assert_true(ld[0].row < ld[1].row && ld[1].row < ld[2].row);
}

static void test_plotlayout_leaders_refuses_too_many(void **state)
{
	struct plotlayout_leader ld[PLOTLAYOUT_MAX_LEADERS + 1];
	struct hc_error err;

	(void)state;
	memset(ld, 0, sizeof ld);
	hc_error_clear(&err);
	assert_int_equal(hc_plotlayout_leaders(ld, PLOTLAYOUT_MAX_LEADERS + 1, 0, 100, GAP, PAD, NULL, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "at most 12"));
	assert_int_equal(hc_plotlayout_leaders(ld, 0, 0, 100, GAP, PAD, NULL, &err), HC_OK);
}

/* Axes: a log axis 1..100 over 0..200 pixels puts 10 at 100; linear
 * 0..50 over 80..970 puts 25 at 525; from_px inverts to_px. */
static void test_plotlayout_axes_map_and_invert(void **state)
{
	struct plotlayout_axis lg = { 1, 100, 1, 0, 200 }, lin = { 0, 50, 0, 80, 970 };

	(void)state;
	assert_true(fabs(hc_plotlayout_to_px(&lg, 10) - 100) < 1e-12);
	assert_true(fabs(hc_plotlayout_to_px(&lin, 25) - 525) < 1e-12);
	assert_true(fabs(hc_plotlayout_from_px(&lg, hc_plotlayout_to_px(&lg, 37.5)) - 37.5) < 1e-12);
	assert_true(fabs(hc_plotlayout_from_px(&lin, hc_plotlayout_to_px(&lin, 13.25)) - 13.25) < 1e-12);
}

/* Estimates on the wide side of the measured widths, by at most a third. */
static void test_plotlayout_text_width_covers_the_render(void **state)
{
	static const struct { const char *s; double measured; } m[] = {
		{ "14: cost-benefit (90%: 13-15)", 180 }, { "MMMMMMMMMM", 100 }, { "eeeeeeeeee", 70 },
	};
	size_t i;

	(void)state;
	for (i = 0; i < sizeof m / sizeof m[0]; i++) {
		double w = hc_plotlayout_text_px(m[i].s, 9);
		assert_true(w >= m[i].measured);
		assert_true(w <= 4.0 / 3.0 * m[i].measured);
	}
	assert_true(hc_plotlayout_text_px("", 9) == 0.0);
}

/* A line through the first candidate sends the label to the second; with
 * every candidate struck, the one struck least wins; a box counts, and so
 * does leaving the frame. */
static void test_plotlayout_choose_keeps_clear_of_lines_and_boxes(void **state)
{
	double px[40], py[40];
	struct plotlayout_rect cand[3] = { { 100, 100, 200, 114 }, { 100, 130, 200, 144 }, { 300, 100, 400, 114 } };
	struct plotlayout_rect box = { 150, 125, 160, 150 };
	struct plotlayout_scene sc;
	size_t i;

	(void)state;
	for (i = 0; i < 40; i++) {     /* a line at y = 107 from x = 0 to 390 */
		px[i] = 10.0 * (double)i;
		py[i] = 107.0;
	}
	memset(&sc, 0, sizeof sc);
	sc.px = px;
	sc.py = py;
	sc.npoints = 40;
	sc.frame = (struct plotlayout_rect){ 0, 0, 1000, 640 };
	assert_int_equal(hc_plotlayout_collisions(&cand[0], &sc), 11);
	assert_int_equal(hc_plotlayout_choose(cand, 3, &sc), 1);
	sc.boxes = &box;
	sc.nboxes = 1;
	/* candidate 1 now overlaps the box (1), candidate 2 holds 10 points of
	 * the line (x = 300 .. 390), candidate 0 11 */
	assert_int_equal(hc_plotlayout_collisions(&cand[1], &sc), 1);
	assert_int_equal(hc_plotlayout_choose(cand, 3, &sc), 1);
	sc.frame = (struct plotlayout_rect){ 0, 0, 1000, 140 };
	assert_int_equal(hc_plotlayout_collisions(&cand[1], &sc), 2);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_plotlayout_leaders_never_strike_a_label),
		cmocka_unit_test(test_plotlayout_leaders_the_demo_case),
		cmocka_unit_test(test_plotlayout_leaders_refuses_too_many),
		cmocka_unit_test(test_plotlayout_axes_map_and_invert),
		cmocka_unit_test(test_plotlayout_text_width_covers_the_render),
		cmocka_unit_test(test_plotlayout_choose_keeps_clear_of_lines_and_boxes),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
