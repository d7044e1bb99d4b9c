/*
 * plotlayout.h - where a plot's labels go, so that no line strikes a label.
 *
 * The plots module fixes each script's plot frame in screen coordinates, so
 * it knows in pixels where a count or a percentage lands; this module works
 * in those pixels (x to the right, y upwards, on the PLOTS_WIDTH x
 * PLOTS_HEIGHT canvas).  Text widths are estimates from a character-class
 * table, on the wide side of what gnuplot's cairo and SVG terminals draw for
 * Sans at 9 points on a 1000-pixel canvas and of PDF's at 10 by 6.4 inches,
 * so that a layout that holds here holds on every terminal.
 *
 * No allocation: every function works on the caller's arrays.
 */
#ifndef HOLDCOUNT_PLOTLAYOUT_H
#define HOLDCOUNT_PLOTLAYOUT_H

#include <stddef.h>

#include "holdcount/error.h"

/* An axis from data values lo..hi onto pixels px0..px1 (lo < hi; log axes
 * need lo > 0). */
struct plotlayout_axis {
	double lo, hi;
	int log;
	double px0, px1;
};

double hc_plotlayout_to_px(const struct plotlayout_axis *a, double v);
double hc_plotlayout_from_px(const struct plotlayout_axis *a, double px);

/* Estimated width in pixels of s drawn in Sans at points points. */
double hc_plotlayout_text_px(const char *s, double points);

/* Height in pixels of one line of text at 9 points (with its leading). */
#define PLOTLAYOUT_LINE_PX 14.0

/* ---- labels on leader lines ---------------------------------------------- */

/* Most leaders hc_plotlayout_leaders lays out (it tries every choice of sides). */
#define PLOTLAYOUT_MAX_LEADERS 12

/*
 * A mark on the curve with a vertical leader line rising from it to its
 * label.  The label starts gap pixels right of the leader (left = 0) or
 * ends gap pixels left of it (left = 1), at the leader's top; each label
 * has a row of its own, row 0 the highest, and a leader rises to its own
 * label's row only.
 */
struct plotlayout_leader {
	double x;          /* in: the leader's x in pixels (ascending across the array) */
	double width;      /* in: its label's width in pixels */
	int left;          /* out: 1 = the label ends at the leader */
	size_t row;        /* out: 0 = the top row; rows are 0..n-1 */
};

/*
 * Choose each label's side and row so that no leader line passes through
 * another label: a label whose span (widened by pad pixels) holds another
 * leader sits in a higher row than that leader's label.  Of the choices of
 * sides without such a conflict (all labels to the right is always one),
 * the one spilling least outside x0..x1 wins, then the one with fewest
 * labels to the left; rows follow the order the conflicts impose, ties to
 * the smaller x.  *spill (may be NULL) gets the pixels by which the chosen
 * labels reach outside x0..x1 (0 when they all fit).  HC_EUSAGE when n is
 * above PLOTLAYOUT_MAX_LEADERS.
 */
int hc_plotlayout_leaders(struct plotlayout_leader *ld, size_t n, double x0, double x1, double gap,
		       double pad, double *spill, struct hc_error *err);

/* The span [*lo, *hi] in pixels of leader i's label as laid out. */
void hc_plotlayout_leader_span(const struct plotlayout_leader *ld, double gap, double *lo, double *hi);

/* ---- labels among obstacles ------------------------------------------------ */

struct plotlayout_rect {
	double x0, y0, x1, y1;   /* x0 <= x1, y0 <= y1, pixels */
};

/*
 * What a free-standing label must keep clear of: points sampled densely
 * along every line drawn (a curve, the floor), boxes (markers, the key,
 * labels already placed), and the frame it must stay inside.
 */
struct plotlayout_scene {
	const double *px, *py;            /* npoints points on lines */
	size_t npoints;
	const struct plotlayout_rect *boxes;
	size_t nboxes;
	struct plotlayout_rect frame;
};

/* 1 when a and b overlap (touching edges do not). */
int hc_plotlayout_overlap(const struct plotlayout_rect *a, const struct plotlayout_rect *b);

/* How much the rect r collides with the scene: the line points inside it,
 * plus 1 for each box it overlaps, plus 1 when it leaves the frame. */
size_t hc_plotlayout_collisions(const struct plotlayout_rect *r, const struct plotlayout_scene *s);

/* The candidate (index 0..ncand-1) with the fewest collisions, the earliest
 * on a tie (so candidates go in order of preference).  ncand >= 1. */
size_t hc_plotlayout_choose(const struct plotlayout_rect *cand, size_t ncand, const struct plotlayout_scene *s);

#endif
