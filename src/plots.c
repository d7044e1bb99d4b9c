/*
 * plots.c - gnuplot scripts and data files for the report folder.
 *
 * A script is: a comment header, the terminal block for the chosen format,
 * the shared style (plots/style.gp), the plot's template (plots/NAME.gp)
 * with its @KEY@ placeholders filled, and a plot command assembled here,
 * because which curves appear depends on the results (no sampled curve
 * without sampling, no rule markers when no rule is met: gnuplot warns
 * about an empty data file, and a warning counts as a failure).
 *
 * Rendering starts gnuplot with posix_spawn (POSIX.1-2008) in the report's
 * folder and reads its standard error through a pipe to the end before
 * waiting for it, so a chatty gnuplot cannot block on a full pipe.
 */
#define _GNU_SOURCE 1

#include "holdcount/plots.h"

#include <ctype.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <spawn.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include "holdcount/memory.h"
#include "holdcount/plotlayout.h"

extern char **environ;

/* Characters of gnuplot's stderr kept in an error message. */
#define PLOTS_MESSAGE_KEEP 400

static const struct {
	const char *name, *title;
	unsigned data;
} kinds[PLOTS_NKINDS] = {
	{ "risk", "Risk by holding count", 1u << PLOTS_DATA_EXACT | 1u << PLOTS_DATA_SAMPLED | 1u << PLOTS_DATA_RULES },
	{ "risk-log", "Risk by holding count (log-scaled count)",
	  1u << PLOTS_DATA_EXACT | 1u << PLOTS_DATA_SAMPLED | 1u << PLOTS_DATA_RULES },
	{ "share", "Diversifiable share of variance by holding count", 1u << PLOTS_DATA_EXACT },
	{ "tracking", "Expected tracking error by holding count", 1u << PLOTS_DATA_EXACT },
	{ "funds", "Audited funds on the risk curve", 1u << PLOTS_DATA_EXACT | 1u << PLOTS_DATA_FUNDS },
	{ "rolling", "Holding count needed through time", 1u << PLOTS_DATA_ROLLING },
	{ "shortfall", "Expected shortfall by holding count", 1u << PLOTS_DATA_TAIL },
	{ "wealth", "Ending wealth by holding count", 1u << PLOTS_DATA_HORIZON },
	{ "lagging", "Chance of ending behind the benchmark by holding count", 1u << PLOTS_DATA_HORIZON },
};

static const char *const data_names[PLOTS_NDATA] = { "exact.dat", "sampled.dat", "rules.dat", "funds.dat",
						      "rolling.dat", "tail.dat", "horizon.dat" };
static const char *const format_names[] = { "png", "svg", "pdf" };

const char *hc_plots_name(int kind)
{
	return kind >= 0 && kind < PLOTS_NKINDS ? kinds[kind].name : NULL;
}

const char *hc_plots_title(int kind)
{
	return kind >= 0 && kind < PLOTS_NKINDS ? kinds[kind].title : NULL;
}

const char *hc_plots_data_name(int data)
{
	return data >= 0 && data < PLOTS_NDATA ? data_names[data] : NULL;
}

const char *hc_plots_format_name(int format)
{
	return format >= 0 && format <= PLOTS_PDF ? format_names[format] : NULL;
}

int hc_plots_parse_format(const char *s)
{
	int i;

	for (i = 0; i <= PLOTS_PDF; i++)
		if (s && strcmp(s, format_names[i]) == 0)
			return i;
	return -1;
}

unsigned hc_plots_data_used(int kind)
{
	return kind >= 0 && kind < PLOTS_NKINDS ? kinds[kind].data : 0;
}

/* ---- the frame ------------------------------------------------------------- */

/*
 * Every plot but the rolling one fixes its frame in screen fractions, so
 * the label layout below knows where a value lands in pixels.  The bottom
 * leaves room for the tick labels and the axis label, or also for the key
 * when it goes below the plot.
 */
#define FRAME_LEFT 0.08
#define FRAME_RIGHT 0.97
#define FRAME_TOP 0.88
#define FRAME_BOTTOM 0.13
#define FRAME_BOTTOM_KEY_BELOW 0.33

/* Rule labels: the top row's height and the distance between rows, as
 * fractions of the y axis; the room kept between a label's row and the
 * highest curve or band under its span; the pixels between a leader and
 * its label, and the clearance a label keeps from other leaders. */
#define RISK_ROW_TOP 0.90
#define RISK_ROW_STEP 0.055
#define RISK_ROW_CLEAR 0.03
#define RISK_LABEL_GAP 5.0
#define RISK_LABEL_PAD 5.0
/* Text sizes in points: labels, and the key (the terminal's font). */
#define LABEL_POINTS 11.0
#define KEY_POINTS 13.0
/* Points sampled per pixel along a line, for collision tests. */
#define LINE_SAMPLES_PER_PX 0.5

static struct plotlayout_axis frame_x(double lo, double hi, int log_axis)
{
	struct plotlayout_axis a = { lo, hi, log_axis, FRAME_LEFT * PLOTS_WIDTH, FRAME_RIGHT * PLOTS_WIDTH };

	return a;
}

static struct plotlayout_axis frame_y(double lo, double hi, int log_axis, int key_below)
{
	struct plotlayout_axis a = { lo, hi, log_axis, (key_below ? FRAME_BOTTOM_KEY_BELOW : FRAME_BOTTOM) * PLOTS_HEIGHT,
				     FRAME_TOP * PLOTS_HEIGHT };

	return a;
}

static void frame_margins(FILE *fp, int key_below)
{
	fprintf(fp, "set lmargin at screen %g\nset rmargin at screen %g\nset tmargin at screen %g\n"
		"set bmargin at screen %g\n", FRAME_LEFT, FRAME_RIGHT, FRAME_TOP,
		key_below ? FRAME_BOTTOM_KEY_BELOW : FRAME_BOTTOM);
}

/* The smallest "round" value at or above v > 0: a multiple of 5, 0.5,
 * 50, ... units of the decade below v (47.6 -> 50, 3.2 -> 3.5). */
static double nice_ceil(double v)
{
	double u = pow(10.0, floor(log10(v)) - 1.0) * 5.0;

	return ceil(v / u - 1e-9) * u;
}

/* Points along the lines a plot draws, in pixels, for collision tests. */
struct lines {
	double *x, *y;
	size_t n, cap;
};

static int lines_add(struct lines *l, double x, double y)
{
	if (l->n == l->cap) {
		size_t cap;
		double *nx, *ny;

		if (hc_grow_capacity(l->cap, l->n + 1, 512, &cap) || !(nx = hc_reallocarray(l->x, cap, sizeof *nx)))
			return HC_ENOMEM;
		l->x = nx;
		ny = hc_reallocarray(l->y, cap, sizeof *ny);
		if (!ny)
			return HC_ENOMEM;
		l->y = ny;
		l->cap = cap;
	}
	l->x[l->n] = x;
	l->y[l->n++] = y;
	return HC_OK;
}

/* The segment from (x0,y0) to (x1,y1), pixels, as points about two pixels
 * apart. */
static int lines_segment(struct lines *l, double x0, double y0, double x1, double y1)
{
	double len = sqrt((x1 - x0) * (x1 - x0) + (y1 - y0) * (y1 - y0));   /* hypot would need glibc 2.35, above the package's libc6 */
	size_t k, steps = (size_t)(len * LINE_SAMPLES_PER_PX) + 1;

	for (k = 0; k <= steps; k++) {
		double t = (double)k / (double)steps;
		if (lines_add(l, x0 + t * (x1 - x0), y0 + t * (y1 - y0)) != HC_OK)
			return HC_ENOMEM;
	}
	return HC_OK;
}

static void lines_release(struct lines *l)
{
	hc_free(l->x);
	hc_free(l->y);
}

/* The exact curve (sd, percent) as points, clipped to the y axis's range. */
static int lines_exact(struct lines *l, const struct curve *c, const struct plotlayout_axis *ax,
		       const struct plotlayout_axis *ay)
{
	size_t i;

	for (i = 0; i + 1 < c->npoints; i++) {
		double xa = (double)c->points[i].n, xb = (double)c->points[i + 1].n;
		double ya = 100.0 * c->points[i].expected_sd, yb = 100.0 * c->points[i + 1].expected_sd;
		if (xb < ax->lo || xa > ax->hi || (ya > ay->hi && yb > ay->hi))
			continue;
		if (lines_segment(l, hc_plotlayout_to_px(ax, xa), hc_plotlayout_to_px(ay, ya), hc_plotlayout_to_px(ax, xb),
				  hc_plotlayout_to_px(ay, yb)) != HC_OK)
			return HC_ENOMEM;
	}
	return HC_OK;
}

/* The sampled band's edges (5% and 95% of sd), and with interior its
 * vertical extent at each sampled count too (for a key, which would hide
 * the band; a label may sit on the light fill). */
static int lines_band(struct lines *l, const struct curve *c, const struct plotlayout_axis *ax,
		      const struct plotlayout_axis *ay, int interior)
{
	const struct curve_point *prev = NULL;
	size_t i;

	for (i = 0; c && i < c->npoints; i++) {
		const struct curve_point *p = &c->points[i];
		double x;
		if (!p->sampled || (double)p->n < ax->lo || (double)p->n > ax->hi)
			continue;
		x = hc_plotlayout_to_px(ax, (double)p->n);
		if (interior && lines_segment(l, x, hc_plotlayout_to_px(ay, 100 * p->sd_p05), x,
					      hc_plotlayout_to_px(ay, fmin(100 * p->sd_p95, ay->hi))) != HC_OK)
			return HC_ENOMEM;
		if (prev) {
			double xp = hc_plotlayout_to_px(ax, (double)prev->n);
			if (lines_segment(l, xp, hc_plotlayout_to_px(ay, 100 * prev->sd_p05), x,
					  hc_plotlayout_to_px(ay, 100 * p->sd_p05)) != HC_OK ||
			    lines_segment(l, xp, hc_plotlayout_to_px(ay, fmin(100 * prev->sd_p95, ay->hi)), x,
					  hc_plotlayout_to_px(ay, fmin(100 * p->sd_p95, ay->hi))) != HC_OK)
				return HC_ENOMEM;
		}
		prev = p;
	}
	return HC_OK;
}

static double floor_pct(const struct curve *c)
{
	return c->floor_variance > 0 ? 100.0 * sqrt(c->floor_variance) : 0.0;
}

/* A label for gnuplot's data files and strings: double quotes and
 * backslashes would end or escape the string, and control characters would
 * break the line, so they are replaced. */
static void clean_label(char *dst, size_t size, const char *src)
{
	size_t i = 0;

	for (; src && *src && i + 1 < size; src++)
		dst[i++] = (*src == '"' || *src == '\\' || (unsigned char)*src < 0x20) ? '\'' : *src;
	dst[i] = '\0';
}

/* ---- rule marks ------------------------------------------------------------ */

/* One marker per distinct count; rules sharing a count share a label. */
struct mark {
	size_t count;
	double sd_pct;
	char label[RULES_TEXT_MAX * 2 + 32];
};

static double exact_sd_pct(const struct curve *c, size_t n)
{
	size_t i;

	for (i = 0; i < c->npoints; i++)
		if (c->points[i].n == n)
			return 100.0 * c->points[i].expected_sd;
	return NAN;
}

static void append_rule(struct mark *mk, const struct rule_result *r)
{
	size_t len = strlen(mk->label);
	char interval[64] = "";

	if (r->bootstrapped && isfinite(r->count_p05) && isfinite(r->count_p95))
		snprintf(interval, sizeof interval, " (90%%: %.0f-%.0f)", r->count_p05, r->count_p95);
	snprintf(mk->label + len, sizeof mk->label - len, "%s%s%s", len ? "; " : "", r->name, interval);
}

/* Marks sorted by count, at most nrules of them, each label "N: rules". */
static size_t build_marks(const struct plots_input *in, struct mark *mk)
{
	size_t i, j, n = 0;
	struct mark tmp;
	char text[sizeof mk->label - 24];   /* room for "N: " */

	for (i = 0; i < in->nrules; i++) {
		const struct rule_result *r = &in->rules[i];
		if (!r->defined || !r->met || !isfinite(exact_sd_pct(in->exact, r->count)))
			continue;
		for (j = 0; j < n && mk[j].count != r->count; j++)
			;
		if (j == n) {
			memset(&mk[n], 0, sizeof mk[n]);
			mk[n].count = r->count;
			mk[n].sd_pct = exact_sd_pct(in->exact, r->count);
			n++;
		}
		append_rule(&mk[j], r);
	}
	for (i = 1; i < n; i++)
		for (j = i; j > 0 && mk[j - 1].count > mk[j].count; j--) {
			tmp = mk[j];
			mk[j] = mk[j - 1];
			mk[j - 1] = tmp;
		}
	for (i = 0; i < n; i++) {
		clean_label(text, sizeof text, mk[i].label);
		snprintf(mk[i].label, sizeof mk[i].label, "%zu: %s", mk[i].count, text);
	}
	return n;
}

/* The highest value the risk plots reach, in percent: the curve at N = 1
 * or the top of the band. */
static double risk_top_pct(const struct plots_input *in)
{
	double top = 100.0 * in->exact->points[0].expected_sd;
	size_t i;

	if (in->sampled)
		for (i = 0; i < in->sampled->npoints; i++)
			if (in->sampled->points[i].sampled && 100.0 * in->sampled->points[i].sd_p95 > top)
				top = 100.0 * in->sampled->points[i].sd_p95;
	return top;
}

/* The highest curve, band or sampled mean (percent) over counts whose x
 * lies within px0..px1. */
static double risk_top_within(const struct plots_input *in, const struct plotlayout_axis *ax, double px0,
			      double px1)
{
	double top = 0.0, x;
	size_t i;

	for (i = 0; i < in->exact->npoints; i++) {
		x = hc_plotlayout_to_px(ax, (double)in->exact->points[i].n);
		if (x >= px0 && x <= px1)
			top = fmax(top, 100.0 * in->exact->points[i].expected_sd);
	}
	for (i = 0; in->sampled && i < in->sampled->npoints; i++) {
		const struct curve_point *p = &in->sampled->points[i];
		x = hc_plotlayout_to_px(ax, (double)p->n);
		if (p->sampled && x >= px0 && x <= px1)
			top = fmax(top, fmax(100.0 * p->sd_p95, 100.0 * p->sampled_mean_sd));
	}
	return top;
}

/* Where the risk plot of one kind puts its rule labels and its key. */
struct risk_layout {
	size_t nmarks;
	struct mark mk[RULES_COUNT];
	struct plotlayout_leader ld[RULES_COUNT];
	double ymax;               /* top of the y axis, percent */
	double row_pct[RULES_COUNT]; /* each mark's label height, percent */
	int key_below;             /* the key is set below the plot */
};

static struct plotlayout_axis risk_axis_x(const struct plots_input *in, int kind);

static int risk_key_entries(const struct plots_input *in, size_t nmarks)
{
	return 2 + (in->sampled ? 2 : 0) + (nmarks ? 1 : 0);
}

/* The key inside the frame's bottom right corner, in pixels. */
static struct plotlayout_rect risk_key_rect(const struct plots_input *in, size_t nmarks)
{
	struct plotlayout_rect r;
	double w = hc_plotlayout_text_px("floor (sqrt of the average covariance): 99.99% a year", KEY_POINTS) + 75.0;
	double h = risk_key_entries(in, nmarks) * 1.25 * 20.0 + 12.0;

	r.x1 = FRAME_RIGHT * PLOTS_WIDTH - 2.0;
	r.x0 = r.x1 - w;
	r.y0 = FRAME_BOTTOM * PLOTS_HEIGHT + 2.0;
	r.y1 = r.y0 + h;
	return r;
}

/* Below the plot when the curve, the band or the floor would run under a
 * key in the bottom right corner (a universe of weakly correlated
 * securities, whose floor lies low on an axis that starts at zero). */
static int risk_key_below(const struct plots_input *in, const struct risk_layout *L, int kind, int *below)
{
	struct plotlayout_axis ax = risk_axis_x(in, kind), ay = frame_y(0.0, L->ymax, 0, 0);
	struct plotlayout_rect key = risk_key_rect(in, L->nmarks);
	struct plotlayout_scene sc;
	struct lines l = { NULL, NULL, 0, 0 };
	double yf = hc_plotlayout_to_px(&ay, floor_pct(in->exact));
	int rc;

	rc = lines_exact(&l, in->exact, &ax, &ay);
	rc = rc ? rc : lines_band(&l, in->sampled, &ax, &ay, 1);
	rc = rc ? rc : lines_segment(&l, ax.px0, yf, ax.px1, yf);
	if (rc == HC_OK) {
		memset(&sc, 0, sizeof sc);
		sc.px = l.x;
		sc.py = l.y;
		sc.npoints = l.n;
		sc.frame = key;
		*below = hc_plotlayout_collisions(&key, &sc) > 0;
	}
	lines_release(&l);
	return rc;
}

static struct plotlayout_axis risk_axis_x(const struct plots_input *in, int kind)
{
	double xmax = (double)in->exact->points[in->exact->npoints - 1].n;

	/* the linear axis leaves room right of the last count */
	return kind == PLOTS_RISK ? frame_x(0.0, ceil(xmax * 1.02), 0) : frame_x(1.0, xmax > 1 ? xmax : 2.0, 1);
}

/*
 * The rule labels of the risk plot of kind: sides and rows from
 * hc_plotlayout_leaders, then the y axis tall enough that every label's row
 * clears the curve and the band under its span and its leader.
 */
static int risk_layout(const struct plots_input *in, int kind, struct risk_layout *L, struct hc_error *err)
{
	struct plotlayout_axis ax = risk_axis_x(in, kind);
	struct mark *mk;
	double need, lo, hi;
	size_t i, n;
	int rc;

	memset(L, 0, sizeof *L);
	mk = hc_calloc(in->nrules ? in->nrules : 1, sizeof *mk);
	if (!mk)
		return hc_error(err, HC_ENOMEM, "out of memory laying out the rule labels");
	n = build_marks(in, mk);
	L->nmarks = n < RULES_COUNT ? n : RULES_COUNT;
	memcpy(L->mk, mk, L->nmarks * sizeof *mk);
	hc_free(mk);
	for (i = 0; i < L->nmarks; i++) {
		L->ld[i].x = hc_plotlayout_to_px(&ax, (double)L->mk[i].count);
		L->ld[i].width = hc_plotlayout_text_px(L->mk[i].label, LABEL_POINTS);
	}
	if ((rc = hc_plotlayout_leaders(L->ld, L->nmarks, ax.px0, ax.px1, RISK_LABEL_GAP, RISK_LABEL_PAD, NULL, err)))
		return rc;
	need = 1.03 * risk_top_pct(in);
	for (i = 0; i < L->nmarks; i++) {
		hc_plotlayout_leader_span(&L->ld[i], RISK_LABEL_GAP, &lo, &hi);
		double top = risk_top_within(in, &ax, fmin(lo, L->ld[i].x) - 2.0, fmax(hi, L->ld[i].x) + 2.0);
		need = fmax(need, top / (RISK_ROW_TOP - RISK_ROW_STEP * (double)L->ld[i].row - RISK_ROW_CLEAR));
	}
	L->ymax = nice_ceil(need > 0 ? need : 1.0);
	for (i = 0; i < L->nmarks; i++)
		L->row_pct[i] = L->ymax * (RISK_ROW_TOP - RISK_ROW_STEP * (double)L->ld[i].row);
	if ((rc = risk_key_below(in, L, kind, &L->key_below)))
		return hc_error(err, rc, "out of memory laying out the risk plot's key");
	return HC_OK;
}

/* ---- funds ----------------------------------------------------------------- */

static int fund_plottable(const struct audit_fund *f)
{
	return f->risk_known && isfinite(f->sd) && f->holdings > 0 && isfinite(f->effective_holdings);
}

static size_t funds_plottable(const struct plots_input *in)
{
	size_t i, n = 0;

	if (!in->audit)
		return 0;
	for (i = 0; i < in->audit->nfunds; i++)
		n += fund_plottable(&in->audit->funds[i]) != 0;
	return n;
}

/* Where each plottable fund's name goes, and the funds plot's axes. */
struct funds_layout {
	double xmin, xmax, ymin, ymax;  /* counts; percent a year */
	size_t n;                        /* plottable funds, in the audit's order */
	double *label_x, *label_y;       /* anchor of each name, data units */
	int *label_right;                /* 1 = the name ends at its anchor */
	int any_pass, any_fail, any_left, any_right;
	char *text;                      /* n names, FUNDS_NAME_MAX bytes each */
};

#define FUNDS_NAME_MAX 160
/* Pixels between a marker and a name beside it. */
#define FUNDS_LABEL_GAP 9.0
/* Marker half-size in pixels (pointsize 1.3 to 2.2 at the 13-point font). */
#define FUNDS_MARKER_PX 11.0

static void funds_layout_release(struct funds_layout *F)
{
	hc_free(F->label_x);
	hc_free(F->label_y);
	hc_free(F->label_right);
	hc_free(F->text);
}

static double sampled_p95_at(const struct curve *s, double n)
{
	double v = NAN;
	size_t i;

	/* the band narrows as N grows: the nearest sampled count at or
	 * below n bounds the band at n from above */
	for (i = 0; s && i < s->npoints; i++)
		if (s->points[i].sampled && (double)s->points[i].n <= n)
			v = 100.0 * s->points[i].sd_p95;
	return v;
}

/*
 * The count axis starts a little left of the smallest fund (half its
 * effective count, down to the 1-2-5 step below) rather than at 1: funds
 * sit where the curve is nearly flat, and an axis from 1 would spend the
 * width on single holdings none of them has.
 */
static double funds_xmin(const struct plots_input *in)
{
	static const double steps[] = { 5, 2, 1 };
	double lo = INFINITY, decade;
	size_t i;

	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		if (fund_plottable(f) && f->effective_holdings < lo)
			lo = f->effective_holdings;
	}
	lo /= 2;
	if (!(lo > 1))
		return 1;
	for (decade = pow(10, floor(log10(lo)));; decade /= 10)
		for (i = 0; i < 3; i++)
			if (steps[i] * decade <= lo)
				return steps[i] * decade;
}

/*
 * The sd axis is zoomed to the funds: from a little under the lowest of
 * the floor, the funds and the band, to a little over the highest fund and
 * the band's top at each fund's own count (where its percentile is read).
 * The curve left of the funds leaves the plot at the top; risk.png shows
 * it whole.  funds_key_room then makes room for the key.
 */
static void funds_yrange(const struct plots_input *in, struct funds_layout *F)
{
	double lo = floor_pct(in->exact), hi = -INFINITY, span, v;
	size_t i;

	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		if (!fund_plottable(f))
			continue;
		lo = fmin(lo, 100.0 * f->sd);
		hi = fmax(hi, 100.0 * f->sd);
		hi = fmax(hi, exact_sd_pct(in->exact, f->risk_holdings));   /* NaN past M: fmax keeps hi */
		v = sampled_p95_at(in->sampled, (double)f->risk_holdings);
		if (isfinite(v))
			hi = fmax(hi, v);
	}
	for (i = 0; in->sampled && i < in->sampled->npoints; i++)
		if (in->sampled->points[i].sampled && (double)in->sampled->points[i].n >= F->xmin)
			lo = fmin(lo, 100.0 * in->sampled->points[i].sd_p05);
	if (!(hi > lo))
		hi = lo + 1.0;
	span = hi - lo;
	F->ymin = lo - 0.08 * span;
	F->ymax = hi + 0.08 * span;
}

/* Candidate places for a fund's name, in order of preference: right of
 * its count marker, left of its effective-count marker, above and below
 * the pair, and right of the count marker a line up or down. */
static size_t funds_candidates(double xc, double xe, double y, double w, struct plotlayout_rect *c, int *right)
{
	const double h = PLOTLAYOUT_LINE_PX * LABEL_POINTS / 9.0, g = FUNDS_LABEL_GAP;
	size_t k = 0;

	c[k] = (struct plotlayout_rect){ xc + g, y - h / 2, xc + g + w, y + h / 2 }, right[k++] = 0;
	c[k] = (struct plotlayout_rect){ xe - g - w, y - h / 2, xe - g, y + h / 2 }, right[k++] = 1;
	c[k] = (struct plotlayout_rect){ xe - 2, y + g, xe - 2 + w, y + g + h }, right[k++] = 0;
	c[k] = (struct plotlayout_rect){ xe - 2, y - g - h, xe - 2 + w, y - g }, right[k++] = 0;
	c[k] = (struct plotlayout_rect){ xc + g, y + g, xc + g + w, y + g + h }, right[k++] = 0;
	c[k] = (struct plotlayout_rect){ xc + g, y - g - h, xc + g + w, y - g }, right[k++] = 0;
	return k;
}

/* The key in the frame's top right corner, in pixels. */
static struct plotlayout_rect funds_key_rect(const struct funds_layout *F)
{
	struct plotlayout_rect r;
	int entries = 3 + F->any_pass + F->any_fail;

	r.x1 = FRAME_RIGHT * PLOTS_WIDTH - 2.0;
	r.x0 = r.x1 - hc_plotlayout_text_px("fund failing the policy, at the holdings its risk uses", KEY_POINTS) - 75.0;
	r.y1 = FRAME_TOP * PLOTS_HEIGHT - 2.0;
	r.y0 = r.y1 - entries * 1.25 * 20.0 - 12.0;
	return r;
}

/* Raise the top of the sd axis until the key in the top right corner
 * clears the curve, the band and the funds right of its left edge: with
 * the key's height k pixels of the frame's h, a value v must sit at most
 * h - k - 8 pixels up, so the top must be at least
 * ymin + (v - ymin) h / (h - k - 8). */
static void funds_key_room(const struct plots_input *in, struct funds_layout *F)
{
	struct plotlayout_rect key = funds_key_rect(F);
	struct plotlayout_axis ax = frame_x(F->xmin, F->xmax, 1);
	double h = (FRAME_TOP - FRAME_BOTTOM) * PLOTS_HEIGHT, k = key.y1 - key.y0, from, top = -INFINITY;
	size_t i;

	from = hc_plotlayout_from_px(&ax, key.x0 - 4.0);
	for (i = 0; i < in->exact->npoints; i++)
		if ((double)in->exact->points[i].n >= from)
			top = fmax(top, 100.0 * in->exact->points[i].expected_sd);
	/* the band between two sampled counts is below its value at the left one */
	for (i = 0; in->sampled && i < in->sampled->npoints; i++) {
		const struct curve_point *p = &in->sampled->points[i], *q = i + 1 < in->sampled->npoints ? p + 1 : NULL;
		if (p->sampled && (q ? (double)q->n > from : (double)p->n >= from))
			top = fmax(top, 100.0 * p->sd_p95);
	}
	for (i = 0; i < in->audit->nfunds; i++)
		if (fund_plottable(&in->audit->funds[i]) && (double)in->audit->funds[i].risk_holdings >= from)
			top = fmax(top, 100.0 * in->audit->funds[i].sd);
	if (isfinite(top) && h > k + 8.0)
		F->ymax = fmax(F->ymax, F->ymin + (top - F->ymin) * h / (h - k - 8.0) + 0.02 * (F->ymax - F->ymin));
}

static int funds_names(const struct plots_input *in, struct funds_layout *F)
{
	size_t i, k = 0;

	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		char name[FUNDS_NAME_MAX - 72];   /* room for " (fails the policy)" and the coverage */
		char cover[56] = "";
		if (!fund_plottable(f))
			continue;
		clean_label(name, sizeof name, f->name);
		/* a fund whose risk rests on part of it says so beside its name */
		if (f->covered_weight < 1 - 1e-12)
			snprintf(cover, sizeof cover, " (risk on %.3g%%, %zu of %zu holdings)", 100 * f->covered_weight,
				 f->risk_holdings, f->holdings);
		snprintf(F->text + k * FUNDS_NAME_MAX, FUNDS_NAME_MAX, "%s%s%s", name, cover,
			 f->passed ? "" : " (fails the policy)");
		F->any_pass |= f->passed != 0;
		F->any_fail |= f->passed == 0;
		k++;
	}
	return HC_OK;
}

/*
 * Each fund's name goes to the first candidate place that collides with
 * nothing (the curve, the band's edges, the floor, any marker, the key, a
 * name placed before it, the frame), else to the one that collides least.
 */
static int funds_layout(const struct plots_input *in, struct funds_layout *F, struct hc_error *err)
{
	struct plotlayout_axis ax, ay;
	struct plotlayout_rect *boxes = NULL, cand[6];
	struct plotlayout_scene sc;
	struct lines l = { NULL, NULL, 0, 0 };
	size_t i, k, nb = 0, nc, pick;
	int right[6], rc = HC_OK;
	double yf;

	memset(F, 0, sizeof *F);
	F->n = funds_plottable(in);
	F->xmin = funds_xmin(in);
	F->xmax = (double)in->exact->points[in->exact->npoints - 1].n;
	for (i = 0; i < in->audit->nfunds; i++)
		if (fund_plottable(&in->audit->funds[i]))
			F->xmax = fmax(F->xmax, (double)in->audit->funds[i].risk_holdings);
	funds_yrange(in, F);
	F->label_x = hc_calloc(F->n, sizeof *F->label_x);
	F->label_y = hc_calloc(F->n, sizeof *F->label_y);
	F->label_right = hc_calloc(F->n, sizeof *F->label_right);
	F->text = hc_calloc(F->n, FUNDS_NAME_MAX);
	boxes = hc_calloc(3 * F->n + 1, sizeof *boxes);
	if (!F->label_x || !F->label_y || !F->label_right || !F->text || !boxes) {
		rc = HC_ENOMEM;
		goto cleanup;
	}
	funds_names(in, F);
	funds_key_room(in, F);
	ax = frame_x(F->xmin, F->xmax, 1);
	ay = frame_y(F->ymin, F->ymax, 0, 0);
	yf = hc_plotlayout_to_px(&ay, floor_pct(in->exact));
	if ((rc = lines_exact(&l, in->exact, &ax, &ay)) || (rc = lines_band(&l, in->sampled, &ax, &ay, 0)) ||
	    (rc = lines_segment(&l, ax.px0, yf, ax.px1, yf)))
		goto cleanup;
	boxes[nb++] = funds_key_rect(F);
	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		double y, xc, xe;
		if (!fund_plottable(f))
			continue;
		y = hc_plotlayout_to_px(&ay, 100.0 * f->sd);
		xc = hc_plotlayout_to_px(&ax, (double)f->risk_holdings);
		xe = hc_plotlayout_to_px(&ax, f->effective_holdings);
		boxes[nb++] = (struct plotlayout_rect){ xe - FUNDS_MARKER_PX, y - FUNDS_MARKER_PX, xc + FUNDS_MARKER_PX,
							y + FUNDS_MARKER_PX };
	}
	memset(&sc, 0, sizeof sc);
	sc.px = l.x;
	sc.py = l.y;
	sc.npoints = l.n;
	sc.boxes = boxes;
	sc.frame = (struct plotlayout_rect){ ax.px0, ay.px0, ax.px1, ay.px1 };
	for (i = 0, k = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		if (!fund_plottable(f))
			continue;
		double y = hc_plotlayout_to_px(&ay, 100.0 * f->sd);
		nc = funds_candidates(hc_plotlayout_to_px(&ax, (double)f->risk_holdings), hc_plotlayout_to_px(&ax, f->effective_holdings),
				      y, hc_plotlayout_text_px(F->text + k * FUNDS_NAME_MAX, LABEL_POINTS), cand, right);
		sc.nboxes = nb;
		pick = hc_plotlayout_choose(cand, nc, &sc);
		boxes[nb++] = cand[pick];
		F->label_right[k] = right[pick];
		F->label_x[k] = hc_plotlayout_from_px(&ax, right[pick] ? cand[pick].x1 : cand[pick].x0);
		F->label_y[k] = hc_plotlayout_from_px(&ay, (cand[pick].y0 + cand[pick].y1) / 2);
		F->any_left |= !right[pick];
		F->any_right |= right[pick];
		k++;
	}
cleanup:
	lines_release(&l);
	hc_free(boxes);
	if (rc != HC_OK) {
		funds_layout_release(F);
		return hc_error(err, rc, "out of memory laying out the funds plot");
	}
	return HC_OK;
}

/* ---- availability ------------------------------------------------------------ */

/* Whether the q-th evaluated rule of a rolling result is met in some
 * window: a line with no point would make gnuplot warn of a data file
 * with no valid points (a failure here), and says nothing. */
static int rolling_rule_met(const struct rolling_result *r, size_t q)
{
	size_t j;

	for (j = 0; j < r->nwindows; j++) {
		const struct rolling_window *w = &r->windows[j];
		if (w->status == HC_OK && q < w->nrules && w->rules[q].defined && w->rules[q].met)
			return 1;
	}
	return 0;
}

/* Rules met in some window of a rolling result. */
static size_t rolling_plottable(const struct plots_input *in)
{
	size_t q, n = 0, nrules = 0;
	int id;

	if (!in->rolling || !in->rolling->rules)
		return 0;
	for (id = 0; id < RULES_COUNT; id++)
		nrules += (in->rolling->rules & RULES_FLAG(id)) != 0;
	for (q = 0; q < nrules; q++)
		n += (size_t)rolling_rule_met(in->rolling, q);
	return n;
}

/* Expected shortfall 95% summarised at some count. */
static int tail_plottable(const struct plots_input *in)
{
	return in->tail && (in->tail->mask & (1u << HC_MEASURE_ES95)) && in->tail->npoints > 0;
}

int hc_plots_available(int kind, const struct plots_input *in)
{
	if (!in || !in->exact || in->exact->npoints == 0)
		return 0;
	switch (kind) {
	case PLOTS_RISK:
	case PLOTS_RISK_LOG:
	case PLOTS_SHARE:
		return 1;
	case PLOTS_TRACKING:
		return in->exact->m > 0;
	case PLOTS_FUNDS:
		return funds_plottable(in) > 0;
	case PLOTS_ROLLING:
		return rolling_plottable(in) > 0;
	case PLOTS_SHORTFALL:
		return tail_plottable(in);
	case PLOTS_WEALTH:
	case PLOTS_LAGGING:
		return in->horizon && in->horizon->nsizes > 0;
	default:
		return 0;
	}
}

/* ---- data files -------------------------------------------------------------- */

static int write_exact(FILE *fp, const struct curve *c)
{
	size_t i;

	fprintf(fp, "# holdcount plot data: the exact curve, percent a year (annualised by %.10g periods a year)\n"
		"# n  sqrt_expected_variance  diversifiable_share  expected_tracking_error\n",
		c->periods_per_year);
	for (i = 0; i < c->npoints; i++) {
		const struct curve_point *p = &c->points[i];
		fprintf(fp, "%zu %.10g %.10g %.10g\n", p->n, 100.0 * p->expected_sd, 100.0 * p->diversifiable_share,
			100.0 * p->expected_tracking_error);
	}
	return HC_OK;
}

static int write_sampled(FILE *fp, const struct curve *c)
{
	size_t i;

	fprintf(fp, "# holdcount plot data: random equal-weight portfolios, %zu per count, seed %llu, "
		"percent a year\n# n  mean_sd  sd_p05  sd_p95\n", c->paths, c->seed);
	for (i = 0; i < c->npoints; i++) {
		const struct curve_point *p = &c->points[i];
		if (p->sampled)
			fprintf(fp, "%zu %.10g %.10g %.10g\n", p->n, 100.0 * p->sampled_mean_sd, 100.0 * p->sd_p05,
				100.0 * p->sd_p95);
	}
	return HC_OK;
}

static int write_rules(FILE *fp, const struct plots_input *in, struct hc_error *err)
{
	struct risk_layout *lin = hc_calloc(2, sizeof *lin), *lg;
	size_t i;
	int rc;

	if (!lin)
		return hc_error(err, HC_ENOMEM, "out of memory writing '%s'", data_names[PLOTS_DATA_RULES]);
	lg = lin + 1;
	if ((rc = risk_layout(in, PLOTS_RISK, lin, err)) || (rc = risk_layout(in, PLOTS_RISK_LOG, lg, err))) {
		hc_free(lin);
		return rc;
	}
	fprintf(fp, "# holdcount plot data: each met rule's count, sqrt of the exact expected variance there "
		"(percent a year), then for the linear and for the log-scaled count axis the height its leader "
		"rises to (where its label sits) and whether the label ends at the leader (1) or starts there "
		"(0), then the label; the layout keeps every leader clear of the other labels\n"
		"# count  sd  height_linear  left_linear  height_log  left_log  label\n");
	for (i = 0; i < lin->nmarks; i++)
		fprintf(fp, "%zu %.10g %.10g %d %.10g %d \"%s\"\n", lin->mk[i].count, lin->mk[i].sd_pct, lin->row_pct[i],
			lin->ld[i].left, lg->row_pct[i], lg->ld[i].left, lin->mk[i].label);
	hc_free(lin);
	return HC_OK;
}

static int write_funds(FILE *fp, const struct plots_input *in, struct hc_error *err)
{
	struct funds_layout F;
	size_t i, k = 0;
	int rc;

	if ((rc = funds_layout(in, &F, err)))
		return rc;
	fprintf(fp, "# holdcount plot data: audited funds, the fund's own sd from the universe's history "
		"(percent a year), whether it passes the policy, and where its name goes (the anchor, and "
		"whether the name ends there (1) or starts there (0)); holdings are those its risk figures use\n"
		"# holdings  effective_holdings  sd  passed  name_x  name_y  name_ends  name\n");
	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		if (!fund_plottable(f))
			continue;
		fprintf(fp, "%zu %.10g %.10g %d %.10g %.10g %d \"%s\"\n", f->risk_holdings, f->effective_holdings,
			100.0 * f->sd, f->passed != 0, F.label_x[k], F.label_y[k], F.label_right[k],
			F.text + k * FUNDS_NAME_MAX);
		k++;
	}
	funds_layout_release(&F);
	return HC_OK;
}

/* One row per window: its last date, then each evaluated exact rule's
 * count in enum order ("-" where unmet or the window has no figures). */
static int write_rolling(FILE *fp, const struct plots_input *in)
{
	const struct rolling_result *r = in->rolling;
	char date[11], spacing[128];
	size_t j, q;
	int id;

	hc_rolling_step_text(r, spacing, sizeof spacing);
	fprintf(fp, "# holdcount plot data: the count each exact rule recommends in rolling windows of %zu "
		"periods, %s\n# window_end", r->window, spacing);
	for (id = 0; id < RULES_COUNT; id++)
		if (r->rules & RULES_FLAG(id))
			fprintf(fp, "  %s", hc_rules_name(id));
	fputc('\n', fp);
	for (j = 0; j < r->nwindows; j++) {
		const struct rolling_window *w = &r->windows[j];
		hc_universe_format_date(w->end_date, date);
		fputs(date, fp);
		for (q = 0, id = 0; id < RULES_COUNT; id++) {
			if (!(r->rules & RULES_FLAG(id)))
				continue;
			if (w->status == HC_OK && q < w->nrules && w->rules[q].defined && w->rules[q].met)
				fprintf(fp, " %zu", w->rules[q].count);
			else
				fputs(" -", fp);
			q++;
		}
		fputc('\n', fp);
	}
	return HC_OK;
}

const char *hc_plots_period_word(double ppy)
{
	if (fabs(ppy - 12.0) < 1e-9)
		return "month";
	if (fabs(ppy - 4.0) < 1e-9)
		return "quarter";
	if (fabs(ppy - 52.0) < 1e-9)
		return "week";
	if (ppy >= 250.0 && ppy <= 262.0)
		return "day";
	if (fabs(ppy - 1.0) < 1e-9)
		return "year";
	return "period";
}

static const struct hc_measure_point *es95_at(const struct hc_measures_curve *c, size_t j)
{
	return &c->pts[j * HC_MEASURE_COUNT + HC_MEASURE_ES95];
}

static int write_tail(FILE *fp, const struct plots_input *in)
{
	const struct hc_measures_curve *c = in->tail;
	size_t j;

	fprintf(fp, "# holdcount plot data: expected shortfall 95%% of random equal-weight portfolios, percent of "
		"value lost in one %s (per period, not annualised): the mean over the portfolios of each count, "
		"then the 5%%, 50%% and 95%% quantiles across them\n# n  es95_mean  es95_p05  es95_p50  es95_p95\n",
		hc_plots_period_word(c->periods_per_year));
	for (j = 0; j < c->npoints; j++) {
		const struct hc_measure_point *p = es95_at(c, j);
		fprintf(fp, "%zu %.10g %.10g %.10g %.10g\n", c->sizes[j], 100.0 * p->mean, 100.0 * p->p05,
			100.0 * p->p50, 100.0 * p->p95);
	}
	return HC_OK;
}

/* The 1-2-5 step at or below v > 0 (below = 1) or at or above it. */
static double step125(double v, int above)
{
	static const double steps[] = { 1, 2, 5, 10 };
	double d = pow(10.0, floor(log10(v)));
	int i;

	if (!above) {
		for (i = 2; i > 0 && steps[i] * d > v * (1 + 1e-12); i--)
			;
		return steps[i] * d;
	}
	for (i = 0; i < 3 && steps[i] * d < v * (1 - 1e-12); i++)
		;
	return steps[i] * d;
}

/*
 * The ending-wealth axis, log-scaled: from the 1-2-5 step below the
 * smallest positive 5% quantile (and below 1, the amount invested) to the
 * one above the largest 95% quantile (and above 1), each with a tenth of
 * room.  A quantile of 0 (total losses) has no place on a log axis; it is
 * drawn at the bottom (horizon.dat says so).
 */
static void wealth_range(const struct hc_horizon_result *h, double *lo, double *hi)
{
	double a = 1.0, b = 1.0;
	size_t j;
	int w;

	for (j = 0; j < h->nsizes; j++)
		for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++) {
			const struct hc_horizon_point *p = &h->pts[j * HC_HORIZON_WEIGHTINGS + w];
			if (p->p05 > 0)
				a = fmin(a, p->p05);
			if (isfinite(p->p95))
				b = fmax(b, p->p95);
		}
	*lo = step125(a / 1.1, 0);
	*hi = step125(b * 1.1, 1);
}

static int write_horizon(FILE *fp, const struct plots_input *in)
{
	const struct hc_horizon_result *h = in->horizon;
	double lo, hi;
	size_t j;
	int w;

	wealth_range(h, &lo, &hi);
	fprintf(fp, "# holdcount plot data: ending wealth of 1 invested over %zu periods, by holding count, "
		"%zu random portfolios a count: the 5%%, 50%% and 95%% quantiles rebalanced to equal weights every "
		"period, then bought in equal amounts and held, then the percent of portfolios ending below the "
		"benchmark each way; a quantile below %.10g (the wealth axis's bottom: a total loss) is written as "
		"%.10g\n# n  rebal_p05  rebal_p50  rebal_p95  hold_p05  hold_p50  hold_p95  rebal_lag  hold_lag\n",
		h->periods, h->paths, lo, lo);
	for (j = 0; j < h->nsizes; j++) {
		const struct hc_horizon_point *p = &h->pts[j * HC_HORIZON_WEIGHTINGS];
		fprintf(fp, "%zu", h->sizes[j]);
		for (w = 0; w < HC_HORIZON_WEIGHTINGS; w++)
			fprintf(fp, " %.10g %.10g %.10g", fmax(p[w].p05, lo), fmax(p[w].p50, lo), fmax(p[w].p95, lo));
		fprintf(fp, " %.10g %.10g\n", 100.0 * p[HC_HORIZON_REBALANCED].lag, 100.0 * p[HC_HORIZON_BUY_HOLD].lag);
	}
	return HC_OK;
}

int hc_plots_write_data(FILE *fp, int data, const struct plots_input *in, struct hc_error *err)
{
	int rc;

	if (!in || !in->exact)
		return hc_error(err, HC_EUSAGE, "plot data need the exact curve");
	switch (data) {
	case PLOTS_DATA_EXACT:
		rc = write_exact(fp, in->exact);
		break;
	case PLOTS_DATA_SAMPLED:
		if (!in->sampled)
			return hc_error(err, HC_EUSAGE, "'%s' needs a sampled curve", data_names[data]);
		rc = write_sampled(fp, in->sampled);
		break;
	case PLOTS_DATA_RULES:
		rc = write_rules(fp, in, err);
		break;
	case PLOTS_DATA_FUNDS:
		if (!funds_plottable(in))
			return hc_error(err, HC_EUSAGE, "'%s' needs audited funds with known risk", data_names[data]);
		rc = write_funds(fp, in, err);
		break;
	case PLOTS_DATA_ROLLING:
		if (!rolling_plottable(in))
			return hc_error(err, HC_EUSAGE, "'%s' needs rolling windows with figures", data_names[data]);
		rc = write_rolling(fp, in);
		break;
	case PLOTS_DATA_TAIL:
		if (!tail_plottable(in))
			return hc_error(err, HC_EUSAGE, "'%s' needs the expected shortfall by count", data_names[data]);
		rc = write_tail(fp, in);
		break;
	case PLOTS_DATA_HORIZON:
		if (!in->horizon || !in->horizon->nsizes)
			return hc_error(err, HC_EUSAGE, "'%s' needs ending wealth by count", data_names[data]);
		rc = write_horizon(fp, in);
		break;
	default:
		return hc_error(err, HC_EUSAGE, "no plot data file number %d", data);
	}
	if (rc == HC_OK && ferror(fp))
		rc = hc_error(err, HC_EIO, "cannot write '%s': %s", data_names[data], strerror(errno));
	return rc;
}

/* ---- scripts ----------------------------------------------------------------- */

struct subst {
	const char *key;
	const char *value;
};

/* Copy template text to fp, replacing each @KEY@ by its value. */
static int emit_template(FILE *fp, const char *name, const struct subst *s, size_t ns,
			 struct hc_error *err)
{
	const char *text = hc_plots_template(name), *p, *end;
	size_t i, len;

	if (!text)
		return hc_error(err, HC_EINTERNAL, "plot template '%s' is not built in", name);
	for (p = text; *p; p++) {
		if (*p != '@') {
			fputc(*p, fp);
			continue;
		}
		end = strchr(p + 1, '@');
		len = end ? (size_t)(end - p - 1) : 0;
		for (i = 0; i < ns; i++)
			if (end && strlen(s[i].key) == len && strncmp(s[i].key, p + 1, len) == 0)
				break;
		if (i == ns)
			return hc_error(err, HC_EINTERNAL, "plot template '%s' has an unknown placeholder at '%.20s'",
					name, p);
		fputs(s[i].value, fp);
		p = end;
	}
	return HC_OK;
}

static void terminal_block(FILE *fp, int format, const char *name)
{
	switch (format) {
	case PLOTS_SVG:
		fprintf(fp, "set terminal svg size %d,%d dynamic font \"Sans,13\" noenhanced\n", PLOTS_WIDTH,
			PLOTS_HEIGHT);
		break;
	case PLOTS_PDF:
		fprintf(fp, "set terminal pdfcairo size %gin,%gin font \"Sans,12\" noenhanced\n", PLOTS_WIDTH / 100.0,
			PLOTS_HEIGHT / 100.0);
		break;
	default:
		/* pngcairo draws smoother lines and text; the libgd png terminal is
		 * the fallback on builds without cairo. */
		fprintf(fp, "if (strstrt(GPVAL_TERMINALS, \"pngcairo\") > 0) {\n"
			"    set terminal pngcairo size %d,%d font \"Sans,13\" noenhanced\n"
			"} else {\n"
			"    set terminal png size %d,%d noenhanced\n"
			"}\n", PLOTS_WIDTH, PLOTS_HEIGHT, PLOTS_WIDTH, PLOTS_HEIGHT);
	}
	fprintf(fp, "set output \"%s.%s\"\n", name, format_names[format]);
}

/* The same plot once more as SVG, on the same canvas and fonts, so that
 * the labels laid out in pixels stay where they were: report.html embeds
 * it inline (htmlreport.h). */
static void svg_replot(FILE *fp, const char *name)
{
	fprintf(fp, "# the same plot as SVG, for report.html\n"
		"set terminal svg size %d,%d dynamic font \"Sans,13\" noenhanced\n"
		"set output \"%s.svg\"\nreplot\n", PLOTS_WIDTH, PLOTS_HEIGHT, name);
}

/* Log-axis ticks at 1, 2 and 5 times the powers of ten from lo up to hi
 * (lo > 0), as "1, 2, 5, 10" or, with pct, as ("0.5%" 0.5, "1%" 1). */
static void log_tics(char *buf, size_t size, double lo, double hi, int pct)
{
	static const double steps[] = { 1, 2, 5 };
	double decade, v;
	size_t len = 0;
	int i;

	buf[0] = '\0';
	for (decade = pow(10.0, floor(log10(lo))); decade <= hi; decade *= 10)
		for (i = 0; i < 3; i++) {
			v = steps[i] * decade;
			if (v < lo * (1 - 1e-9) || v > hi * (1 + 1e-9))
				continue;
			if (pct)
				len += (size_t)snprintf(buf + len, len < size ? size - len : 0, "%s\"%g%%%%\" %g",
							len ? ", " : "", v, v);
			else
				len += (size_t)snprintf(buf + len, len < size ? size - len : 0, "%s%g",
							len ? ", " : "", v);
		}
}

static size_t count_tracking_marks(const struct plots_input *in, size_t *count)
{
	size_t i;

	for (i = 0; i < in->nrules; i++) {
		const struct rule_result *r = &in->rules[i];
		if (r->rule == RULES_TRACKING_ERROR && r->defined && r->met && isfinite(in->te_budget)) {
			*count = r->count;
			return 1;
		}
	}
	return 0;
}

static void risk_plot(FILE *fp, int kind, const struct plots_input *in, const struct risk_layout *L)
{
	/* columns of rules.dat: height and side, 3 and 4 on the linear axis,
	 * 5 and 6 on the log axis */
	int h = kind == PLOTS_RISK ? 3 : 5, side = h + 1;
	size_t i;
	int any[2] = { 0, 0 };

	for (i = 0; i < L->nmarks; i++)
		any[L->ld[i].left] = 1;
	frame_margins(fp, L->key_below);
	fprintf(fp, "set yrange [0:%.10g]\n", L->ymax);
	if (L->key_below)
		fputs("set key outside below center horizontal maxcols 2 width -2\n", fp);
	fputs("plot ", fp);
	if (in->sampled)
		fputs("'sampled.dat' using 1:3:4 with filledcurves ls 3 title \"middle 90% of random portfolios' sd\", "
		      "\\\n     ", fp);
	fputs("'exact.dat' using 1:2 with lines ls 1 title \"sqrt of the exact expected variance\", \\\n", fp);
	if (in->sampled)
		fputs("     'sampled.dat' using 1:2 with points ls 2 title \"mean sd of random portfolios\", \\\n", fp);
	if (L->key_below)
		fputs("     floor with lines ls 4 title sprintf(\"floor: %.2f%% a year\", floor)", fp);
	else
		fputs("     floor with lines ls 4 title sprintf(\"floor (sqrt of the average covariance): %.2f%% a "
		      "year\", floor)", fp);
	if (L->nmarks) {
		fprintf(fp, ", \\\n     'rules.dat' using 1:2:(0):($%d-$2) with vectors nohead ls 5 notitle, \\\n"
			"     'rules.dat' using 1:2 with points ls 5 title \"count a rule recommends\"", h);
		if (any[0])
			fprintf(fp, ", \\\n     'rules.dat' using 1:($%d == 0 ? $%d : 1/0):7 with labels left offset "
				"character 0.5,0.4 font \",11\" textcolor rgb \"#7b2d63\" notitle", side, h);
		if (any[1])
			fprintf(fp, ", \\\n     'rules.dat' using 1:($%d == 1 ? $%d : 1/0):7 with labels right offset "
				"character -0.5,0.4 font \",11\" textcolor rgb \"#7b2d63\" notitle", side, h);
	}
	fputc('\n', fp);
}

/* The tracking-error axis, log-scaled (percent): from a 1-2-5 step under
 * the lower of the error one holding short of the whole universe and a
 * quarter of the budget, to one over the error of a single holding. */
static void tracking_range(const struct plots_input *in, double *lo, double *hi)
{
	const struct curve *c = in->exact;
	double top = 100.0 * c->points[0].expected_tracking_error, bottom = top;
	size_t i;

	for (i = 0; i < c->npoints; i++)
		if (c->points[i].expected_tracking_error > 0)
			bottom = fmin(bottom, 100.0 * c->points[i].expected_tracking_error);
	if (isfinite(in->te_budget) && in->te_budget > 0)
		bottom = fmin(bottom, 25.0 * in->te_budget);
	if (!(top > 0)) {
		top = 1.0;
		bottom = 0.1;
	}
	*lo = pow(10.0, floor(log10(bottom)));
	*lo *= bottom >= 5 * *lo ? 5 : bottom >= 2 * *lo ? 2 : 1;
	*hi = pow(10.0, ceil(log10(top * 1.05)));
	*hi /= top * 1.05 <= *hi / 5 ? 5 : top * 1.05 <= *hi / 2 ? 2 : 1;
}

static void tracking_plot(FILE *fp, const struct plots_input *in)
{
	struct plotlayout_axis ax = frame_x(1.0, (double)in->exact->points[in->exact->npoints - 1].n, 1);
	char tics[512], label[96];
	double lo, hi;
	size_t count;

	tracking_range(in, &lo, &hi);
	log_tics(tics, sizeof tics, lo, hi, 1);
	frame_margins(fp, 0);
	fprintf(fp, "set yrange [%.10g:%.10g]\nset ytics (%s)\n", lo, hi, tics);
	if (count_tracking_marks(in, &count)) {
		snprintf(label, sizeof label, "tracking-error rule: %zu holdings", count);
		fprintf(fp, "set arrow from %zu, graph 0 to %zu, budget nohead ls 5\n", count, count);
		/* Left of the mark the curve runs above the budget, so the space
		 * under the budget line is free there; when the name does not fit
		 * left of the mark, it goes right of it above the line, where the
		 * curve has fallen below the budget. */
		if (hc_plotlayout_to_px(&ax, (double)count) - 8.0 - hc_plotlayout_text_px(label, 12.0) > ax.px0)
			fprintf(fp, "set label \"%s\" at %zu, budget / 1.5 right offset character -0.6,0 font \",12\" "
				"textcolor rgb \"#7b2d63\"\n", label, count);
		else
			fprintf(fp, "set label \"%s\" at %zu, budget * 1.5 left offset character 0.6,0 font \",12\" "
				"textcolor rgb \"#7b2d63\"\n", label, count);
	}
	/* the error is zero at N = M, which a log axis cannot show */
	fputs("plot 'exact.dat' using 1:($4 > 0 ? $4 : 1/0) with lines ls 1 title \"sqrt of the exact expected "
	      "squared tracking error\"", fp);
	if (isfinite(in->te_budget))
		fputs(", \\\n     budget with lines ls 4 title sprintf(\"budget: %.2f%% a year\", budget)", fp);
	fputc('\n', fp);
}

static void funds_plot(FILE *fp, const struct plots_input *in, const struct funds_layout *F)
{
	frame_margins(fp, 0);
	fprintf(fp, "set xrange [%.10g:%.10g]\nset yrange [%.10g:%.10g]\n", F->xmin, F->xmax, F->ymin, F->ymax);
	fputs("plot ", fp);
	if (in->sampled)
		fputs("'sampled.dat' using 1:3:4 with filledcurves ls 3 title \"middle 90% of random portfolios' sd\", "
		      "\\\n     ", fp);
	fputs("'exact.dat' using 1:2 with lines ls 1 title \"sqrt of the exact expected variance\", \\\n"
	      "     floor with lines ls 4 title sprintf(\"floor: %.2f%% a year\", floor), \\\n"
	      "     'funds.dat' using 2:3:($1-$2):(0) with vectors nohead ls 8 notitle, \\\n"
	      "     'funds.dat' using 2:3 with points ls 7 title \"fund at its effective holdings 1/HHI\"", fp);
	if (F->any_pass)
		fputs(", \\\n     'funds.dat' using 1:($4 == 1 ? $3 : 1/0) with points ls 6 title \"fund at the holdings "
		      "its risk uses\"", fp);
	if (F->any_fail)
		fputs(", \\\n     'funds.dat' using 1:($4 == 0 ? $3 : 1/0) with points ls 9 title \"fund failing the "
		      "policy, at the holdings its risk uses\"", fp);
	if (F->any_left)
		fputs(", \\\n     'funds.dat' using 5:($7 == 0 ? $6 : 1/0):8 with labels left font \",11\" notitle", fp);
	if (F->any_right)
		fputs(", \\\n     'funds.dat' using 5:($7 == 1 ? $6 : 1/0):8 with labels right font \",11\" notitle", fp);
	fputc('\n', fp);
}

/* The counts drawn on the rolling plot: the smallest and the largest of
 * every met rule's count in every window with figures. */
static void rolling_count_range(const struct rolling_result *r, double *lo, double *hi)
{
	size_t j, q;

	*lo = INFINITY;
	*hi = -INFINITY;
	for (j = 0; j < r->nwindows; j++) {
		const struct rolling_window *w = &r->windows[j];
		for (q = 0; w->status == HC_OK && q < w->nrules; q++)
			if (w->rules[q].defined && w->rules[q].met) {
				*lo = fmin(*lo, (double)w->rules[q].count);
				*hi = fmax(*hi, (double)w->rules[q].count);
			}
	}
}

/*
 * The date axis: ticks a whole number of months apart, chosen by the span
 * so that there are at most ROLLING_MAX_TICKS of them, each on the first day
 * of a month and each labelled once ("%Y" when a year or more apart, else
 * "%Y-%m"); gnuplot's own choice under "%Y" labels a span of a few years
 * with repeated years ("2020 2020 2021").  Dates are days since 1970-01-01.
 */
#define ROLLING_MAX_TICKS 9
static void rolling_date_axis(FILE *fp, const struct rolling_result *r)
{
	static const int steps[] = { 1, 2, 3, 6, 12, 24, 36, 60, 120, 240, 600 };
	int32_t first = r->windows[0].end_date, last = r->windows[r->nwindows - 1].end_date, pad;
	char a[11], b[11];
	int y0, m0, y1, m1, months, step = 600, k, n = 0, y, m;

	pad = (last - first) / 30 + 20;
	hc_universe_format_date(first - pad, a);
	hc_universe_format_date(last + pad, b);
	fprintf(fp, "set xrange [\"%s\":\"%s\"]\n", a, b);
	sscanf(a, "%d-%d", &y0, &m0);
	sscanf(b, "%d-%d", &y1, &m1);
	months = (y1 - y0) * 12 + (m1 - m0);
	for (k = 0; k < (int)(sizeof steps / sizeof steps[0]); k++)
		if (months / steps[k] + 1 <= ROLLING_MAX_TICKS) {
			step = steps[k];
			break;
		}
	fputs("set xtics (", fp);
	/* the first tick after the range's start, on a multiple of the step
	 * counted from January of year 0, so that yearly ticks fall on round years */
	for (k = (y0 * 12 + m0 - 1) / step * step + step; k <= y1 * 12 + m1 - 1; k += step) {
		y = k / 12;
		m = k % 12 + 1;
		if (step >= 12)
			fprintf(fp, "%s\"%d\" \"%04d-%02d-01\"", n++ ? ", " : "", y, y, m);
		else
			fprintf(fp, "%s\"%04d-%02d\" \"%04d-%02d-01\"", n++ ? ", " : "", y, m, y, m);
	}
	fputs(")\n", fp);
}

/* The count axis, log-scaled so that small counts (a rule needing 15) and
 * large ones (one needing 150) both keep room, with ticks at whole counts
 * 1, 1.5, 2, 3, 5 and 7 times the powers of ten. */
static void rolling_count_axis(FILE *fp, const struct rolling_result *r)
{
	static const double steps[] = { 1, 1.5, 2, 3, 5, 7 };
	double lo, hi, decade, v;
	size_t i, n = 0;

	rolling_count_range(r, &lo, &hi);
	lo = fmax(1.0, floor(lo / 1.25));
	hi = ceil(hi * 1.25) + 1.0;
	fprintf(fp, "set logscale y\nset yrange [%.10g:%.10g]\nset ytics (", lo, hi);
	for (decade = pow(10.0, floor(log10(lo))); decade <= hi; decade *= 10)
		for (i = 0; i < sizeof steps / sizeof steps[0]; i++) {
			v = steps[i] * decade;
			if (v >= lo && v <= hi && v == floor(v))
				fprintf(fp, "%s%.0f", n++ ? ", " : "", v);
		}
	fputs(")\n", fp);
}

/* One line per evaluated exact rule met in some window, from column 2 of
 * rolling.dat on (each rule keeps its column and its style). */
/* The rolling plot's own line styles, one a rule line: each differs from
 * the others in colour, marker and dash pattern, so that six or more rules
 * stay apart in colour and in greyscale print (four shared styles made two
 * pairs of rules look the same). */
#define ROLLING_STYLE_BASE 20
static const char *const rolling_styles[] = {
	"linecolor rgb \"#1b6f6a\" linewidth 2.2 dashtype 1 pointtype 7 pointsize 1.1",
	"linecolor rgb \"#b5541c\" linewidth 1.6 dashtype 2 pointtype 6 pointsize 1.3",
	"linecolor rgb \"#7b2d63\" linewidth 1.4 dashtype 3 pointtype 9 pointsize 1.5",
	"linecolor rgb \"#2f4b8f\" linewidth 1.6 dashtype 1 pointtype 5 pointsize 1.1",
	"linecolor rgb \"#6b8e23\" linewidth 1.6 dashtype 4 pointtype 13 pointsize 1.4",
	"linecolor rgb \"#a0640f\" linewidth 1.4 dashtype 5 pointtype 4 pointsize 1.3",
	"linecolor rgb \"#5a6470\" linewidth 1.4 dashtype 1 pointtype 11 pointsize 1.4",
	"linecolor rgb \"#c0392b\" linewidth 1.4 dashtype 2 pointtype 2 pointsize 1.3",
	"linecolor rgb \"#3b7dd8\" linewidth 1.4 dashtype 3 pointtype 8 pointsize 1.4",
	"linecolor rgb \"#8c6d9e\" linewidth 1.4 dashtype 4 pointtype 1 pointsize 1.4",
};
#define ROLLING_NSTYLES (sizeof rolling_styles / sizeof rolling_styles[0])

static void rolling_plot(FILE *fp, const struct plots_input *in)
{
	size_t q = 0, drawn = 0, k;
	int id;

	rolling_date_axis(fp, in->rolling);
	rolling_count_axis(fp, in->rolling);
	for (k = 0; k < ROLLING_NSTYLES; k++)
		fprintf(fp, "set style line %zu %s\n", ROLLING_STYLE_BASE + k, rolling_styles[k]);
	fputs("plot ", fp);
	for (id = 0; id < RULES_COUNT; id++) {
		if (!(in->rolling->rules & RULES_FLAG(id)))
			continue;
		if (rolling_rule_met(in->rolling, q))
			fprintf(fp, "%s'rolling.dat' using 1:%zu with linespoints ls %d title \"%s rule\"",
				drawn++ ? ", \\\n     " : "", q + 2, (int)(ROLLING_STYLE_BASE + q % ROLLING_NSTYLES),
				hc_rules_name(id));
		q++;
	}
	fputc('\n', fp);
}

/*
 * The tail and horizon plots: a log-scaled count axis (the first holdings
 * do most of the work), and the key in the frame's top right corner when
 * nothing drawn reaches it there (these curves fall or flatten to the
 * right, so it usually is free), else below the frame in two columns, the
 * bottom margin just tall enough for its rows.  x[], top[] are the upper
 * edges of what is drawn at each count (data units), ref[] the heights of
 * the horizontal lines across the frame.
 */
struct key_plan {
	const struct plotlayout_axis *ax, *ay;
	const double *x, *top;
	size_t n;
	const double *ref;
	size_t nref;
	int entries;
	const char *longest;          /* the key's longest title */
};

static int key_fits_top_right(const struct key_plan *k)
{
	double x0 = FRAME_RIGHT * PLOTS_WIDTH - 2.0 - hc_plotlayout_text_px(k->longest, KEY_POINTS) - 75.0;
	double y1 = FRAME_TOP * PLOTS_HEIGHT - 2.0, y0 = y1 - k->entries * 1.25 * 20.0 - 12.0, xa, xb, ya, yb;
	size_t j;

	if (!k->x || !k->top)
		return 0;   /* no memory for the check: below is always safe */
	for (j = 0; j < k->n; j++) {
		xa = hc_plotlayout_to_px(k->ax, k->x[j]);
		xb = j + 1 < k->n ? hc_plotlayout_to_px(k->ax, k->x[j + 1]) : xa;
		if (xb < x0 - 4.0)
			continue;
		/* a straight segment on screen lies below its higher end */
		ya = hc_plotlayout_to_px(k->ay, k->top[j]);
		yb = j + 1 < k->n ? hc_plotlayout_to_px(k->ay, k->top[j + 1]) : ya;
		if (!(fmax(ya, yb) < y0 - 10.0))
			return 0;
	}
	for (j = 0; j < k->nref; j++) {
		ya = hc_plotlayout_to_px(k->ay, k->ref[j]);
		if (ya >= y0 - 10.0 && ya <= y1 + 4.0)
			return 0;
	}
	return 1;
}

/* left: the frame's left edge, a screen fraction (wider than FRAME_LEFT for
 * long tick labels such as "0.001"). */
static void key_place(FILE *fp, const struct key_plan *k, double left)
{
	int rows = (k->entries + 1) / 2;
	double bottom = (75.0 + rows * 1.25 * 20.0 + 16.0) / PLOTS_HEIGHT;

	/* below: tick labels and the axis label take about 75 pixels under the frame */
	if (key_fits_top_right(k))
		bottom = FRAME_BOTTOM;
	fprintf(fp, "set lmargin at screen %g\nset rmargin at screen %g\nset tmargin at screen %g\n"
		"set bmargin at screen %.4f\n", left, FRAME_RIGHT, FRAME_TOP, bottom);
	if (bottom == FRAME_BOTTOM)
		fputs("set key top right\n", fp);
	else
		fprintf(fp, "set key outside below center horizontal maxrows %d width -2\n", rows);
}

static void shortfall_plot(FILE *fp, const struct plots_input *in)
{
	size_t j, n = in->tail->npoints;
	double *x = hc_calloc(n, sizeof *x), *top = hc_calloc(n, sizeof *top), ymax = 0.0, ref;
	struct plotlayout_axis ax, ay;
	struct key_plan k;

	for (j = 0; j < n; j++) {
		double v = fmax(100.0 * es95_at(in->tail, j)->p95, 100.0 * es95_at(in->tail, j)->mean);
		if (x && top) {
			x[j] = (double)in->tail->sizes[j];
			top[j] = v;
		}
		ymax = fmax(ymax, v);
	}
	ref = 100.0 * in->tail->universe[HC_MEASURE_ES95];
	ymax = nice_ceil(fmax(ymax, ref) > 0 ? 1.04 * fmax(ymax, ref) : 1.0);
	ax = frame_x(1.0, (double)in->exact->points[in->exact->npoints - 1].n, 1);
	ay = frame_y(0.0, ymax, 0, 0);
	k = (struct key_plan){ &ax, &ay, x, top, n, &ref, 1, 3, "middle 90% of random portfolios (5% to 95%)" };
	key_place(fp, &k, FRAME_LEFT);
	hc_free(x);
	hc_free(top);
	fprintf(fp, "set yrange [0:%.10g]\n", ymax);
	fputs("plot 'tail.dat' using 1:3:5 with filledcurves ls 3 title \"middle 90% of random portfolios (5% to "
	      "95%)\", \\\n"
	      "     'tail.dat' using 1:2 with linespoints ls 11 title \"mean of random portfolios\", \\\n"
	      "     universe_es with lines ls 4 title sprintf(\"equal-weight universe (N = M): %.2f%%\", universe_es)\n",
	      fp);
}

static void wealth_plot(FILE *fp, const struct plots_input *in)
{
	const struct hc_horizon_result *h = in->horizon;
	size_t j, n = h->nsizes;
	double *x = hc_calloc(n, sizeof *x), *top = hc_calloc(n, sizeof *top), lo, hi, one = 1.0;
	struct plotlayout_axis ax, ay;
	struct key_plan k;
	char tics[512];

	wealth_range(h, &lo, &hi);
	for (j = 0; x && top && j < n; j++) {
		x[j] = (double)h->sizes[j];
		top[j] = fmin(hi, fmax(h->pts[j * HC_HORIZON_WEIGHTINGS].p95, h->pts[j * HC_HORIZON_WEIGHTINGS + 1].p95));
	}
	ax = frame_x(1.0, (double)in->exact->points[in->exact->npoints - 1].n, 1);
	ay = frame_y(lo, hi, 1, 0);
	k = (struct key_plan){ &ax, &ay, x, top, n, &one, 1, 5, "rebalanced: middle 90% (5% to 95%)" };
	/* ticks below 0.1 ("0.05", "0.001") or from 1000 up are a character or two wider */
	key_place(fp, &k, lo < 0.095 || hi > 999.0 ? FRAME_LEFT + 0.02 : FRAME_LEFT);
	hc_free(x);
	hc_free(top);
	/* past four decades, ticks at the powers of ten only (gnuplot's own) */
	if (hi / lo > 1e4)
		tics[0] = '\0';
	else
		log_tics(tics, sizeof tics, lo, hi, 0);
	fprintf(fp, "set yrange [%.10g:%.10g]\n", lo, hi);
	if (tics[0])
		fprintf(fp, "set ytics (%s)\n", tics);
	fputs("plot 'horizon.dat' using 1:2:4 with filledcurves ls 3 title \"rebalanced: middle 90% (5% to 95%)\", "
	      "\\\n"
	      "     'horizon.dat' using 1:3 with linespoints ls 11 title \"rebalanced: median\", \\\n"
	      "     'horizon.dat' using 1:6 with linespoints ls 12 title \"bought and held: median\", \\\n"
	      "     'horizon.dat' using 1:5 with lines ls 13 title \"bought and held: 5% and 95%\", \\\n"
	      "     'horizon.dat' using 1:7 with lines ls 13 notitle, \\\n"
	      "     1 with lines ls 14 title \"1: the amount invested\"\n", fp);
}

static void lagging_plot(FILE *fp, const struct plots_input *in)
{
	const struct hc_horizon_result *h = in->horizon;
	size_t j, n = h->nsizes;
	double *x = hc_calloc(n, sizeof *x), *top = hc_calloc(n, sizeof *top), half = 50.0;
	struct plotlayout_axis ax, ay;
	struct key_plan k;

	for (j = 0; x && top && j < n; j++) {
		x[j] = (double)h->sizes[j];
		top[j] = 100.0 * fmax(h->pts[j * HC_HORIZON_WEIGHTINGS].lag, h->pts[j * HC_HORIZON_WEIGHTINGS + 1].lag);
	}
	ax = frame_x(1.0, (double)in->exact->points[in->exact->npoints - 1].n, 1);
	ay = frame_y(0.0, 100.0, 0, 0);
	k = (struct key_plan){ &ax, &ay, x, top, n, &half, 1, 3, "bought in equal amounts and held" };
	key_place(fp, &k, FRAME_LEFT);
	hc_free(x);
	hc_free(top);
	fputs("set yrange [0:100]\n"
	      "plot 'horizon.dat' using 1:8 with linespoints ls 11 title \"rebalanced to equal weights\", \\\n"
	      "     'horizon.dat' using 1:9 with linespoints ls 12 title \"bought in equal amounts and held\", \\\n"
	      "     50 with lines ls 14 title \"half of the portfolios\"\n", fp);
}

/* How the horizon's paths were built, short (a subtitle) or in full. */
static void horizon_route_text(char *buf, size_t size, const struct plots_input *in, int full)
{
	const struct hc_horizon_result *h = in->horizon;
	const char *per = hc_plots_period_word(in->tail ? in->tail->periods_per_year
					       : in->exact->periods_per_year);

	if (h->route == HC_HORIZON_WINDOWS && !full)
		snprintf(buf, size, "overlapping windows of the history");
	else if (h->route == HC_HORIZON_WINDOWS && in->periods == h->periods)
		snprintf(buf, size, "the whole history, %zu %ss (one window: every portfolio sees the same %ss, so "
			 "the spread is across portfolios alone)", h->periods, per, per);
	else if (h->route == HC_HORIZON_WINDOWS && in->periods > h->periods)
		snprintf(buf, size, "a window of %zu consecutive %ss of the history, its start uniform over the %zu "
			 "possible starts (the windows overlap, so the spread understates what independent horizons "
			 "would show)", h->periods, per, in->periods - h->periods + 1);
	else if (h->route == HC_HORIZON_WINDOWS)
		snprintf(buf, size, "a window of %zu consecutive %ss of the history", h->periods, per);
	else if (!full)
		snprintf(buf, size, "stationary bootstrap, mean block %zu %s%s", h->block_length, per,
			 h->block_length == 1 ? "" : "s");
	else
		snprintf(buf, size, "a stationary bootstrap of whole %ss of the history (Politis & Romano, 1994), "
			 "blocks of mean length %zu %s%s (Politis & White, 2004); a bootstrap of the past is not a "
			 "forecast", per, h->block_length, per, h->block_length == 1 ? "" : "s");
}

static void horizon_benchmark_text(char *buf, size_t size, const struct hc_horizon_result *h, double years)
{
	if (isfinite(h->rate_wealth))
		snprintf(buf, size, "a fixed rate, ending wealth %.4g over %g years", h->rate_wealth, years);
	else
		snprintf(buf, size, "the equal-weight universe on the same path, held the same way");
}

/* The second line of a plot's title: its basis. */
static void subtitle(char *buf, size_t size, int kind, const struct plots_input *in, const struct funds_layout *F)
{
	double p = in->exact->periods_per_year;
	char basis[160], spacing[128];

	snprintf(basis, sizeof basis, "annualised from %.10g periods a year (variance times %.10g, sd times its "
		 "square root)", p, p);
	switch (kind) {
	case PLOTS_SHARE:
		snprintf(buf, size, "a ratio of variances: the same per period as annualised");
		break;
	case PLOTS_FUNDS:
		snprintf(buf, size, "sd axis %.3g%% to %.3g%%, zoomed to the funds (risk.png starts at 0); "
			 "%.10g periods a year", F->ymin, F->ymax, p);
		break;
	case PLOTS_ROLLING:
		/* short: a subtitle line holds about 100 characters */
		if (in->rolling->step_months)
			snprintf(spacing, sizeof spacing, "%zu months apart, newest at the last date",
				 in->rolling->step_months);
		else
			snprintf(spacing, sizeof spacing, "one every %zu periods", in->rolling->step);
		snprintf(buf, size, "%zu-period windows (%.3g years), %s; %.10g periods a year",
			 in->rolling->window, (double)in->rolling->window / p, spacing, p);
		break;
	case PLOTS_SHORTFALL:
		if (in->periods)
			snprintf(buf, size, "per %s, not annualised: the mean loss in the worst 5%% of %ss (%.4g of %zu)",
				 hc_plots_period_word(in->tail->periods_per_year), hc_plots_period_word(in->tail->periods_per_year),
				 0.05 * (double)in->periods, in->periods);
		else
			snprintf(buf, size, "per %s, not annualised: the mean loss in the worst 5%% of %ss",
				 hc_plots_period_word(in->tail->periods_per_year), hc_plots_period_word(in->tail->periods_per_year));
		break;
	case PLOTS_WEALTH:
		horizon_route_text(spacing, sizeof spacing, in, 0);
		snprintf(buf, size, "%g years (%zu %ss), %s; %zu portfolios a count", in->horizon_years,
			 in->horizon->periods, hc_plots_period_word(p), spacing, in->horizon->paths);
		break;
	case PLOTS_LAGGING:
		horizon_benchmark_text(basis, sizeof basis, in->horizon, in->horizon_years);
		snprintf(buf, size, "over %g years, against %s", in->horizon_years, basis);
		break;
	default:
		snprintf(buf, size, "%s", basis);
	}
}

static void plot_command(FILE *fp, int kind, const struct plots_input *in, const struct risk_layout *L,
			 const struct funds_layout *F)
{
	switch (kind) {
	case PLOTS_RISK:
	case PLOTS_RISK_LOG:
		risk_plot(fp, kind, in, L);
		break;
	case PLOTS_SHARE:
		frame_margins(fp, 0);
		fputs("plot 'exact.dat' using 1:3 with lines ls 1 notitle\n", fp);
		break;
	case PLOTS_TRACKING:
		tracking_plot(fp, in);
		break;
	case PLOTS_FUNDS:
		funds_plot(fp, in, F);
		break;
	case PLOTS_ROLLING:
		rolling_plot(fp, in);
		break;
	case PLOTS_SHORTFALL:
		shortfall_plot(fp, in);
		break;
	case PLOTS_WEALTH:
		wealth_plot(fp, in);
		break;
	case PLOTS_LAGGING:
		lagging_plot(fp, in);
		break;
	}
}

/* What the script of kind needs laid out first. */
static int layout_for(int kind, const struct plots_input *in, struct risk_layout **L, struct funds_layout *F,
		      int *have_funds, struct hc_error *err)
{
	int rc;

	*L = NULL;
	*have_funds = 0;
	if (kind == PLOTS_RISK || kind == PLOTS_RISK_LOG) {
		*L = hc_calloc(1, sizeof **L);
		if (!*L)
			return hc_error(err, HC_ENOMEM, "out of memory writing '%s.gp'", hc_plots_name(kind));
		if ((rc = risk_layout(in, kind, *L, err))) {
			hc_free(*L);
			*L = NULL;
			return rc;
		}
	} else if (kind == PLOTS_FUNDS) {
		if ((rc = funds_layout(in, F, err)))
			return rc;
		*have_funds = 1;
	}
	return HC_OK;
}

int hc_plots_write_script(FILE *fp, int kind, const struct plots_input *in, int format,
		       struct hc_error *err)
{
	char title[256], sub[320], xmax[32], floor_s[32], budget[32], tics[256], ues[32];
	struct risk_layout *L = NULL;
	struct funds_layout F;
	int rc, have_funds = 0;

	if (!hc_plots_available(kind, in))
		return hc_error(err, HC_EUSAGE, "plot '%s' is not available for these results",
				hc_plots_name(kind) ? hc_plots_name(kind) : "?");
	if (!hc_plots_format_name(format))
		return hc_error(err, HC_EUSAGE, "no plot format number %d", format);
	memset(&F, 0, sizeof F);
	if ((rc = layout_for(kind, in, &L, &F, &have_funds, err)))
		return rc;
	{
		char clean[160];
		clean_label(clean, sizeof clean, in->universe_name);
		snprintf(title, sizeof title, "%s%s%s", kinds[kind].title, clean[0] ? ": " : "", clean);
	}
	subtitle(sub, sizeof sub, kind, in, &F);
	snprintf(xmax, sizeof xmax, "%.0f", kind == PLOTS_RISK ? ceil((double)in->exact->points[in->exact->npoints - 1].n *
									 1.02)
		 : (double)in->exact->points[in->exact->npoints - 1].n);
	snprintf(floor_s, sizeof floor_s, "%.10g", floor_pct(in->exact));
	snprintf(budget, sizeof budget, "%.10g", isfinite(in->te_budget) ? 100.0 * in->te_budget : 0.0);
	snprintf(ues, sizeof ues, "%.10g", in->tail ? 100.0 * in->tail->universe[HC_MEASURE_ES95] : 0.0);
	log_tics(tics, sizeof tics, have_funds ? F.xmin : 1.0, have_funds ? F.xmax : atof(xmax), 0);
	{
		const struct subst s[] = {
			{ "TITLE", title }, { "SUBTITLE", sub }, { "XMAX", xmax }, { "FLOOR", floor_s },
			{ "BUDGET", budget }, { "XTICS", tics }, { "UNIVERSE_ES", ues },
			{ "PERIOD", hc_plots_period_word(in->exact->periods_per_year) },
		};
		fprintf(fp, "# %s.gp - written by holdcount; render with: gnuplot %s.gp\n"
			"# It reads the .dat files beside it; figures are %s.\n",
			kinds[kind].name, kinds[kind].name,
			kind == PLOTS_SHORTFALL ? "percent lost in one period (not annualised)"
			: kind == PLOTS_WEALTH ? "ending wealth of 1 invested"
			: kind == PLOTS_LAGGING ? "percent of portfolios" : "percent a year");
		terminal_block(fp, format, kinds[kind].name);
		rc = emit_template(fp, "style", s, sizeof s / sizeof s[0], err);
		if (rc == HC_OK)
			rc = emit_template(fp, kinds[kind].name, s, sizeof s / sizeof s[0], err);
	}
	if (rc == HC_OK)
		plot_command(fp, kind, in, L, &F);
	if (rc == HC_OK && format != PLOTS_SVG)
		svg_replot(fp, kinds[kind].name);
	hc_free(L);
	if (have_funds)
		funds_layout_release(&F);
	if (rc != HC_OK)
		return rc;
	if (ferror(fp))
		return hc_error(err, HC_EIO, "cannot write '%s.gp': %s", kinds[kind].name, strerror(errno));
	return HC_OK;
}

static const char *shortfall_caption(const struct plots_input *in, char *buf, size_t size)
{
	const char *per = hc_plots_period_word(in->tail->periods_per_year);
	char worst[64] = "";
	size_t len;

	if (in->periods)
		snprintf(worst, sizeof worst, " (%.4g of the %zu)", 0.05 * (double)in->periods, in->periods);
	len = (size_t)snprintf(buf, size, "Expected shortfall 95%%: for a random equal-weight portfolio of N holdings, "
			       "rebalanced every %s, the mean loss in its worst 5%% of %ss%s, per %s and not annualised "
			       "(a tail mean does not scale with the square root of time). The solid line with circles is "
			       "the mean over the random portfolios of each count; the shaded band holds the middle 90%% "
			       "of them (5%% to 95%%), so a portfolio above the band is an unlucky draw; the dashed line is "
			       "the equal-weight universe's own value, %.2f%% a %s, which every portfolio reaches at N = M. "
			       "Alexeev & Tapon (2014) judge the holding count by this measure.",
			       per, per, worst, per, 100.0 * in->tail->universe[HC_MEASURE_ES95], per);
	if (in->tail->ragged && len < size)
		snprintf(buf + len, size - len, " The history is read period by period: each %s a portfolio holds the "
			 "first N securities of its random order alive then, and the universe is every security alive "
			 "then.", per);
	return buf;
}

static const char *wealth_caption(const struct plots_input *in, char *buf, size_t size)
{
	const struct hc_horizon_result *h = in->horizon;
	const char *per = hc_plots_period_word(in->exact->periods_per_year);
	char route[512];

	horizon_route_text(route, sizeof route, in, 1);
	snprintf(buf, size, "Ending wealth of 1 invested over %g years (%zu %ss), by holding count: %zu random "
		 "portfolios of each count, each followed over its own path, %s. Rebalanced to equal weights every "
		 "%s: the shaded band holds the middle 90%% of ending wealth (5%% to 95%%) and the solid line with "
		 "circles is the median. Bought in equal amounts and held (weights drift with returns): the dashed "
		 "line with squares is the median, the dotted lines the 5%% and 95%% quantiles. The wealth axis is "
		 "log-scaled; the dash-dot line at 1 is the amount invested. The whole equal-weight universe's median "
		 "is %.2f rebalanced and %.2f held. No costs or taxes.",
		 in->horizon_years, h->periods, per, h->paths, route, per,
		 h->universe[HC_HORIZON_REBALANCED].p50, h->universe[HC_HORIZON_BUY_HOLD].p50);
	return buf;
}

static const char *lagging_caption(const struct plots_input *in, char *buf, size_t size)
{
	const struct hc_horizon_result *h = in->horizon;
	char bench[320];

	if (isfinite(h->rate_wealth))
		snprintf(bench, sizeof bench, "a fixed rate, which turns 1 into %.4g over the horizon", h->rate_wealth);
	else
		snprintf(bench, sizeof bench, "the equal-weight portfolio of the whole universe on the same path, held the "
			 "same way (rebalanced against rebalanced, bought and held against bought and held); at N = M "
			 "the portfolio is the universe and never lags");
	snprintf(buf, size, "Chance of ending the %g years behind the benchmark: the share of the %zu random "
		 "portfolios of each count whose ending wealth is below the benchmark's on the same path. The "
		 "benchmark is %s. Solid line with circles: rebalanced to equal weights; dashed line with squares: "
		 "bought in equal amounts and held; the dash-dot line marks half the portfolios, above which the "
		 "typical portfolio of that count ends behind (Heaton, Polson & Witte, 2017, explain why small "
		 "portfolios usually do: a few best performers lift the universe's return, and a small portfolio "
		 "usually misses them). Each share's Monte Carlo standard error is at most %.2f percentage points "
		 "(0.5 over the square root of the portfolios).",
		 in->horizon_years, h->paths, bench, 50.0 / sqrt((double)h->paths));
	return buf;
}

const char *hc_plots_caption(int kind, const struct plots_input *in, char *buf, size_t size)
{
	const struct curve_point *last = &in->exact->points[in->exact->npoints - 1];

	switch (kind) {
	case PLOTS_RISK:
	case PLOTS_RISK_LOG:
		snprintf(buf, size, "%s: the solid line is the square root of the exact expected variance of a "
			 "random equal-weight portfolio of N holdings; %sthe dashed line is the floor; each marked "
			 "count is the smallest N meeting a rule (90%% bootstrap interval in brackets), its dotted "
			 "leader rising to its label.%s",
			 kind == PLOTS_RISK ? "Risk by holding count" : "The same on a log-scaled count axis",
			 in->sampled ? "circles are the mean sd of random portfolios and the shaded band holds "
				       "the middle 90% of them; " : "",
			 kind == PLOTS_RISK_LOG ? " The log scale spreads out the first holdings, which remove most "
						  "of the diversifiable risk." : "");
		return buf;
	case PLOTS_SHARE:
		snprintf(buf, size, "Diversifiable share: the part of a random N-holding portfolio's expected "
			 "variance that is specific to its holdings, (average variance - average covariance)/N over "
			 "the expected variance. It vanishes only as N grows without bound: in a universe of %zu "
			 "securities %.2f%% remains at N = %zu, where the portfolio is the whole universe.",
			 last->n, 100.0 * last->diversifiable_share, last->n);
		return buf;
	case PLOTS_TRACKING:
		return "Expected tracking error of a random equal-weight portfolio against the equal-weight "
		       "portfolio of the whole universe, on log-scaled axes so that the few percent where a budget "
		       "is set get room; the dashed line is the budget and the marked count the tracking-error "
		       "rule's. The error is zero at N = M, where the portfolio is the whole universe, so the "
		       "curve leaves the log axis there.";
	case PLOTS_FUNDS:
		return "Audited funds: each fund's own sd from the universe's history, drawn at its number of "
		       "holdings (square; a failing fund's in its own colour and shape) and at its effective "
		       "number 1/HHI (hollow diamond), against the exact curve and the band holding the middle "
		       "90% of random equal-weight portfolios of each count, on an sd axis zoomed to the funds. A "
		       "fund inside the band at its own count is as risky as a typical random portfolio of that "
		       "many holdings; one above the curve at its effective count is riskier than its "
		       "concentration alone explains.";
	case PLOTS_ROLLING:
		{
			size_t q = 0, len;
			int id, unmet = 0;
			char spacing[128];

			hc_rolling_step_text(in->rolling, spacing, sizeof spacing);
			len = (size_t)snprintf(buf, size, "Holding count needed through time: the count each exact "
					       "rule recommends from the averages of each window of %zu periods (%s), plotted at the window's last date; gaps are windows where "
					       "the rule is not met or the window has too few securities. A rising line "
					       "means the same diversification now takes more holdings (Campbell, "
					       "Lettau, Malkiel & Xu, 2001).", in->rolling->window, spacing);
			for (id = 0; id < RULES_COUNT && len < size; id++) {
				if (!(in->rolling->rules & RULES_FLAG(id)))
					continue;
				if (!rolling_rule_met(in->rolling, q++))
					len += (size_t)snprintf(buf + len, size - len, "%s%s", unmet++ ? ", " : " Not met in "
								"any window, so not drawn: ", hc_rules_name(id));
			}
			if (unmet && len + 1 < size)
				snprintf(buf + len, size - len, ".");
		}
		return buf;
	case PLOTS_SHORTFALL:
		return shortfall_caption(in, buf, size);
	case PLOTS_WEALTH:
		return wealth_caption(in, buf, size);
	case PLOTS_LAGGING:
		return lagging_caption(in, buf, size);
	default:
		return "Holding count needed through time.";
	}
}

/* ---- running gnuplot ------------------------------------------------------------- */

int hc_plots_find_gnuplot(const char *path_env, char *buf, size_t size)
{
	const char *p = path_env ? path_env : getenv("PATH"), *end;
	struct stat st;
	size_t len;

	if (!p)
		return 0;
	for (; ; p = end + 1) {
		end = strchr(p, ':');
		len = end ? (size_t)(end - p) : strlen(p);
		/* An empty PATH entry means the current directory (POSIX). */
		if (snprintf(buf, size, "%.*s%sgnuplot", (int)len, len ? p : ".", "/") < (int)size &&
		    stat(buf, &st) == 0 && S_ISREG(st.st_mode) && access(buf, X_OK) == 0)
			return 1;
		if (!end)
			break;
	}
	buf[0] = '\0';
	return 0;
}

static int contains_warning(const char *s)
{
	static const char word[] = "warning";
	size_t i, n = strlen(s), k = sizeof word - 1;

	for (i = 0; i + k <= n; i++) {
		size_t j;
		for (j = 0; j < k && tolower((unsigned char)s[i + j]) == word[j]; j++)
			;
		if (j == k)
			return 1;
	}
	return 0;
}

/* Read fd to the end, keeping the first PLOTS_MESSAGE_KEEP bytes. */
static void drain(int fd, char *keep, size_t size)
{
	char chunk[512];
	size_t used = 0;
	ssize_t got;

	for (;;) {
		got = read(fd, chunk, sizeof chunk);
		if (got < 0 && errno == EINTR)
			continue;
		if (got <= 0)
			break;
		if (used + 1 < size) {
			size_t take = (size_t)got < size - 1 - used ? (size_t)got : size - 1 - used;
			memcpy(keep + used, chunk, take);
			used += take;
		}
	}
	keep[used] = '\0';
}

/* gnuplot's environment: ours, with the locale forced to C.UTF-8.  The
 * templates are UTF-8 ("set encoding utf8": the degree and sigma signs in
 * labels), and under a non-UTF-8 locale such as LC_ALL=C gnuplot warns that
 * it cannot convert them, which fails the render.  Numbers are unaffected:
 * the C.UTF-8 locale keeps the C decimal point. */
static char **gnuplot_environment(void)
{
	static char utf8[] = "LC_ALL=C.UTF-8";
	size_t n = 0, k = 0, i;
	char **env;

	while (environ[n])
		n++;
	env = hc_calloc(n + 2, sizeof *env);
	if (!env)
		return NULL;
	for (i = 0; i < n; i++)
		if (strncmp(environ[i], "LC_ALL=", 7) && strncmp(environ[i], "LC_CTYPE=", 9) &&
		    strncmp(environ[i], "LANG=", 5))
			env[k++] = environ[i];
	env[k++] = utf8;
	env[k] = NULL;
	return env;
}

static int spawn(pid_t *pid, const char *gnuplot, const char *dir, const char *script, int errfd,
		 struct hc_error *err)
{
	posix_spawn_file_actions_t fa;
	char *argv[3];
	char **env;
	int rc;

	argv[0] = (char *)gnuplot;
	argv[1] = (char *)script;
	argv[2] = NULL;
	env = gnuplot_environment();
	if (!env)
		return hc_error(err, HC_ENOMEM, "out of memory preparing to run gnuplot");
	if (posix_spawn_file_actions_init(&fa)) {
		hc_free(env);
		return hc_error(err, HC_ENOMEM, "cannot prepare to run gnuplot");
	}
	rc = posix_spawn_file_actions_addopen(&fa, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
	rc = rc ? rc : posix_spawn_file_actions_addopen(&fa, STDOUT_FILENO, "/dev/null", O_WRONLY, 0);
	rc = rc ? rc : posix_spawn_file_actions_adddup2(&fa, errfd, STDERR_FILENO);
	/* glibc 2.29 and later; gnuplot reads its data files relative to its
	 * working directory, which must be the report's folder. */
	rc = rc ? rc : posix_spawn_file_actions_addchdir_np(&fa, dir);
	rc = rc ? rc : posix_spawn(pid, gnuplot, &fa, NULL, argv, env);
	posix_spawn_file_actions_destroy(&fa);
	hc_free(env);
	/* A process limit (RLIMIT_NPROC, a pids limit) is not an i/o fault. */
	if (rc == EAGAIN)
		return hc_error(err, HC_ERESOURCE, "cannot start '%s' on '%s': %s (a process limit)", gnuplot,
				script, strerror(rc));
	if (rc)
		return hc_error(err, HC_EIO, "cannot run '%s' on '%s': %s", gnuplot, script, strerror(rc));
	return HC_OK;
}

int hc_plots_render(const char *gnuplot, const char *dir, const char *script, struct hc_error *err)
{
	char msg[PLOTS_MESSAGE_KEEP + 1];
	int fds[2], status, rc;
	pid_t pid;
	char *nl;

	if (pipe2(fds, O_CLOEXEC))
		return hc_error(err, HC_EIO, "cannot run gnuplot: %s", strerror(errno));
	rc = spawn(&pid, gnuplot, dir, script, fds[1], err);
	close(fds[1]);
	if (rc != HC_OK) {
		close(fds[0]);
		return rc;
	}
	drain(fds[0], msg, sizeof msg);
	close(fds[0]);
	while (waitpid(pid, &status, 0) < 0)
		if (errno != EINTR)
			return hc_error(err, HC_EIO, "cannot wait for gnuplot: %s", strerror(errno));
	nl = strchr(msg, '\n');
	if (contains_warning(msg) || !WIFEXITED(status) || WEXITSTATUS(status) != 0) {
		/* gnuplot echoes the offending line first; keep all that was caught */
		for (nl = msg; *nl; nl++)
			if (*nl == '\n')
				*nl = ' ';
		return hc_error(err, HC_ERENDER, "gnuplot failed on '%s' (%s): %s", script,
				WIFEXITED(status) ? (WEXITSTATUS(status) ? "non-zero exit" : "a warning")
						  : "killed by a signal",
				msg[0] ? msg : "no message");
	}
	return HC_OK;
}
