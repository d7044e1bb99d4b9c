/*
 * plotlayout.c - label placement for the report's plots.
 *
 * Leader labels.  A label set beside a vertical leader covers a span of x;
 * another leader inside that span would strike it unless the label sits
 * above that leader's top, that is, in a higher row.  Each choice of sides
 * therefore gives a "must be above" relation; when it has no cycle, a
 * topological order of it (Kahn, 1962, Communications of the ACM 5(11)) is
 * a row order in which no leader crosses a label.  With at most
 * PLOTLAYOUT_MAX_LEADERS labels every choice of sides is tried (2^n, each
 * checked in O(n^2)): all labels to the right gives a relation that only
 * points rightwards, so some choice always works, and the search picks the
 * one that stays inside the frame, with the fewest labels to the left.
 *
 * Free labels.  A fund's name has a few candidate places around its
 * markers; the first with the fewest collisions with lines (sampled as
 * points), boxes and the frame wins, and the caller adds it to the boxes
 * before placing the next.
 */
#include "holdcount/plotlayout.h"

#include <math.h>
#include <string.h>

/* Pixels per em of Sans at one point on the 1000 x 640 canvas (gnuplot's
 * cairo terminals draw 9-point Sans about 12.5 pixels to the em there). */
#define EM_PER_POINT (12.5 / 9.0)
/* Widths in ems, on the wide side of DejaVu Sans (the usual Sans) for each
 * class, and a margin for PDF's slightly larger text relative to its page. */
#define EM_UPPER 0.78
#define EM_LOWER 0.60
#define EM_DIGIT 0.64
#define EM_SPACE 0.33
#define EM_PERCENT 0.95
#define EM_OTHER 0.45
#define EM_MULTIBYTE 0.70
#define PDF_MARGIN 1.08

double hc_plotlayout_to_px(const struct plotlayout_axis *a, double v)
{
	double t = a->log ? (log(v) - log(a->lo)) / (log(a->hi) - log(a->lo)) : (v - a->lo) / (a->hi - a->lo);

	return a->px0 + t * (a->px1 - a->px0);
}

double hc_plotlayout_from_px(const struct plotlayout_axis *a, double px)
{
	double t = (px - a->px0) / (a->px1 - a->px0);

	return a->log ? exp(log(a->lo) + t * (log(a->hi) - log(a->lo))) : a->lo + t * (a->hi - a->lo);
}

double hc_plotlayout_text_px(const char *s, double points)
{
	double em = 0.0;

	for (; s && *s; s++) {
		unsigned char c = (unsigned char)*s;
		if (c >= 'A' && c <= 'Z')
			em += EM_UPPER;
		else if (c >= 'a' && c <= 'z')
			em += EM_LOWER;
		else if (c >= '0' && c <= '9')
			em += EM_DIGIT;
		else if (c == ' ')
			em += EM_SPACE;
		else if (c == '%')
			em += EM_PERCENT;
		else if (c >= 0xc0)
			em += EM_MULTIBYTE;   /* a UTF-8 lead byte; continuation bytes add nothing */
		else if (c < 0x80)
			em += EM_OTHER;
	}
	return em * EM_PER_POINT * points * PDF_MARGIN;
}

/* ---- leaders ------------------------------------------------------------- */

void hc_plotlayout_leader_span(const struct plotlayout_leader *ld, double gap, double *lo, double *hi)
{
	if (ld->left) {
		*hi = ld->x - gap;
		*lo = *hi - ld->width;
	} else {
		*lo = ld->x + gap;
		*hi = *lo + ld->width;
	}
}

/* Label i's span holds leader j: i must be above j.  A leader at label
 * i's own x runs along label i's own leader, gap pixels from its text, and
 * does not count (so all labels to the right never form a cycle). */
static int covers(const struct plotlayout_leader *ld, size_t i, size_t j, double gap, double pad)
{
	double lo, hi;

	if (i == j || ld[i].x == ld[j].x)
		return 0;
	hc_plotlayout_leader_span(&ld[i], gap, &lo, &hi);
	return ld[j].x >= lo - pad && ld[j].x <= hi + pad;
}

/* Rows from the "above" relation of the current sides (Kahn's algorithm,
 * the smallest index first among the free): 1, or 0 on a cycle. */
static int order_rows(struct plotlayout_leader *ld, size_t n, double gap, double pad)
{
	size_t indeg[PLOTLAYOUT_MAX_LEADERS], i, j, row;
	unsigned char done[PLOTLAYOUT_MAX_LEADERS];

	memset(indeg, 0, sizeof indeg);
	memset(done, 0, sizeof done);
	for (i = 0; i < n; i++)
		for (j = 0; j < n; j++)
			indeg[j] += (size_t)covers(ld, i, j, gap, pad);
	for (row = 0; row < n; row++) {
		for (i = 0; i < n && (done[i] || indeg[i]); i++)
			;
		if (i == n)
			return 0;
		done[i] = 1;
		ld[i].row = row;
		for (j = 0; j < n; j++)
			indeg[j] -= (size_t)covers(ld, i, j, gap, pad);
	}
	return 1;
}

static double spill_of(const struct plotlayout_leader *ld, size_t n, double x0, double x1, double gap)
{
	double lo, hi, s = 0.0;
	size_t i;

	for (i = 0; i < n; i++) {
		hc_plotlayout_leader_span(&ld[i], gap, &lo, &hi);
		s += (lo < x0 ? x0 - lo : 0.0) + (hi > x1 ? hi - x1 : 0.0);
	}
	return s;
}

int hc_plotlayout_leaders(struct plotlayout_leader *ld, size_t n, double x0, double x1, double gap,
		       double pad, double *spill, struct hc_error *err)
{
	struct plotlayout_leader best[PLOTLAYOUT_MAX_LEADERS];
	double best_spill = INFINITY, s;
	size_t i, nleft, best_left = 0;
	unsigned long mask;

	if (n > PLOTLAYOUT_MAX_LEADERS)
		return hc_error(err, HC_EUSAGE, "%zu labels on leaders; at most %d are laid out", n,
				PLOTLAYOUT_MAX_LEADERS);
	for (mask = 0; mask < (1ul << n); mask++) {
		for (i = 0, nleft = 0; i < n; i++) {
			ld[i].left = (int)((mask >> i) & 1u);
			nleft += (size_t)ld[i].left;
		}
		s = spill_of(ld, n, x0, x1, gap);
		/* a spill under a tenth of a pixel is rounding, not a difference */
		if (!(s < best_spill - 0.1 || (fabs(s - best_spill) <= 0.1 && nleft < best_left)))
			continue;
		if (!order_rows(ld, n, gap, pad))
			continue;
		memcpy(best, ld, n * sizeof *ld);
		best_spill = s;
		best_left = nleft;
	}
	/* mask 0 (all to the right) never has a cycle, so best is set */
	memcpy(ld, best, n * sizeof *ld);
	if (spill)
		*spill = n ? best_spill : 0.0;
	return HC_OK;
}

/* ---- free labels ----------------------------------------------------------- */

int hc_plotlayout_overlap(const struct plotlayout_rect *a, const struct plotlayout_rect *b)
{
	return a->x0 < b->x1 && b->x0 < a->x1 && a->y0 < b->y1 && b->y0 < a->y1;
}

size_t hc_plotlayout_collisions(const struct plotlayout_rect *r, const struct plotlayout_scene *s)
{
	size_t i, n = 0;

	for (i = 0; i < s->npoints; i++)
		n += s->px[i] >= r->x0 && s->px[i] <= r->x1 && s->py[i] >= r->y0 && s->py[i] <= r->y1;
	for (i = 0; i < s->nboxes; i++)
		n += (size_t)hc_plotlayout_overlap(r, &s->boxes[i]);
	n += r->x0 < s->frame.x0 || r->x1 > s->frame.x1 || r->y0 < s->frame.y0 || r->y1 > s->frame.y1;
	return n;
}

size_t hc_plotlayout_choose(const struct plotlayout_rect *cand, size_t ncand, const struct plotlayout_scene *s)
{
	size_t i, best = 0, c, least = (size_t)-1;

	for (i = 0; i < ncand; i++) {
		c = hc_plotlayout_collisions(&cand[i], s);
		if (c < least) {
			least = c;
			best = i;
		}
	}
	return best;
}
