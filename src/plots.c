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

extern char **environ;

/* Rule labels are stacked in rows this far apart, as a fraction of the
 * plot's top, so that rules with nearby counts do not print over each
 * other; the first row sits this high. */
#define PLOTS_LABEL_TOP 0.80
#define PLOTS_LABEL_STEP 0.06
/* A label whose count lies in the right part of the axis past this
 * fraction is set to the left of its marker, so it stays inside. */
#define PLOTS_LABEL_FLIP 0.62
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
};

static const char *const data_names[PLOTS_NDATA] = { "exact.dat", "sampled.dat", "rules.dat", "funds.dat",
						      "rolling.dat" };
static const char *const format_names[] = { "png", "svg", "pdf" };

const char *plots_name(int kind)
{
	return kind >= 0 && kind < PLOTS_NKINDS ? kinds[kind].name : NULL;
}

const char *plots_title(int kind)
{
	return kind >= 0 && kind < PLOTS_NKINDS ? kinds[kind].title : NULL;
}

const char *plots_data_name(int data)
{
	return data >= 0 && data < PLOTS_NDATA ? data_names[data] : NULL;
}

const char *plots_format_name(int format)
{
	return format >= 0 && format <= PLOTS_PDF ? format_names[format] : NULL;
}

int plots_parse_format(const char *s)
{
	int i;

	for (i = 0; i <= PLOTS_PDF; i++)
		if (s && strcmp(s, format_names[i]) == 0)
			return i;
	return -1;
}

unsigned plots_data_used(int kind)
{
	return kind >= 0 && kind < PLOTS_NKINDS ? kinds[kind].data : 0;
}

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

/* Windows with figures in a rolling result. */
static size_t rolling_plottable(const struct plots_input *in)
{
	size_t j, n = 0;

	if (!in->rolling || !in->rolling->rules)
		return 0;
	for (j = 0; j < in->rolling->nwindows; j++)
		n += in->rolling->windows[j].status == HC_OK;
	return n;
}

int plots_available(int kind, const struct plots_input *in)
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
	default:
		return 0;
	}
}

/* ---- rule marks ------------------------------------------------------------ */

/* One marker per distinct count; rules sharing a count share a label. */
struct mark {
	size_t count;
	double sd_pct;
	char label[RULES_TEXT_MAX * 2];
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

/* Marks sorted by count, at most nrules of them. */
static size_t build_marks(const struct plots_input *in, struct mark *mk)
{
	size_t i, j, n = 0;
	struct mark tmp;

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
	return n;
}

/* The highest value the risk plots reach (gnuplot's autoscaled top is at or
 * above it), in percent. */
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

/* ---- data files -------------------------------------------------------------- */

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
	struct mark *mk;
	char label[sizeof mk->label];
	size_t i, n;
	double top = risk_top_pct(in);

	mk = hc_calloc(in->nrules ? in->nrules : 1, sizeof *mk);
	if (!mk)
		return hc_error(err, HC_ENOMEM, "out of memory writing '%s'", data_names[PLOTS_DATA_RULES]);
	n = build_marks(in, mk);
	double xmax = (double)in->exact->points[in->exact->npoints - 1].n;

	fprintf(fp, "# holdcount plot data: each met rule's count, sqrt of the exact expected variance there "
		"(percent a year), the height of its label, whether the label goes left of the marker on the "
		"linear and on the log axis, the label\n"
		"# count  sd  label_height  left_linear  left_log  label\n");
	for (i = 0; i < n; i++) {
		double c = (double)mk[i].count;
		clean_label(label, sizeof label, mk[i].label);
		fprintf(fp, "%zu %.10g %.10g %d %d \"%zu: %s\"\n", mk[i].count, mk[i].sd_pct,
			top * (PLOTS_LABEL_TOP - PLOTS_LABEL_STEP * (double)i), c / xmax > PLOTS_LABEL_FLIP,
			xmax > 1 && log(c) / log(xmax) > PLOTS_LABEL_FLIP, mk[i].count, label);
	}
	hc_free(mk);
	return HC_OK;
}

static int write_funds(FILE *fp, const struct plots_input *in)
{
	char name[128];
	size_t i;

	fprintf(fp, "# holdcount plot data: audited funds, the fund's own sd from the universe's history "
		"(percent a year)\n# holdings  effective_holdings  sd  fund\n");
	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		if (!fund_plottable(f))
			continue;
		clean_label(name, sizeof name, f->name);
		fprintf(fp, "%zu %.10g %.10g \"%s\"\n", f->holdings, f->effective_holdings, 100.0 * f->sd, name);
	}
	return HC_OK;
}

/* One row per window: its last date, then each evaluated exact rule's
 * count in enum order ("-" where unmet or the window has no figures). */
static int write_rolling(FILE *fp, const struct plots_input *in)
{
	const struct rolling_result *r = in->rolling;
	char date[11];
	size_t j, q;
	int id;

	fprintf(fp, "# holdcount plot data: the count each exact rule recommends in rolling windows of %zu "
		"periods every %zu\n# window_end", r->window, r->step);
	for (id = 0; id < RULES_COUNT; id++)
		if (r->rules & RULES_FLAG(id))
			fprintf(fp, "  %s", rules_name(id));
	fputc('\n', fp);
	for (j = 0; j < r->nwindows; j++) {
		const struct rolling_window *w = &r->windows[j];
		universe_format_date(w->end_date, date);
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

int plots_write_data(FILE *fp, int data, const struct plots_input *in, struct hc_error *err)
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
		rc = write_funds(fp, in);
		break;
	case PLOTS_DATA_ROLLING:
		if (!rolling_plottable(in))
			return hc_error(err, HC_EUSAGE, "'%s' needs rolling windows with figures", data_names[data]);
		rc = write_rolling(fp, in);
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
	const char *text = plots_template(name), *p, *end;
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
		fprintf(fp, "set terminal svg size %d,%d dynamic font \"Sans,11\" noenhanced\n", PLOTS_WIDTH,
			PLOTS_HEIGHT);
		break;
	case PLOTS_PDF:
		fprintf(fp, "set terminal pdfcairo size %gin,%gin font \"Sans,10\" noenhanced\n", PLOTS_WIDTH / 100.0,
			PLOTS_HEIGHT / 100.0);
		break;
	default:
		/* pngcairo draws smoother lines and text; the libgd png terminal is
		 * the fallback on builds without cairo. */
		fprintf(fp, "if (strstrt(GPVAL_TERMINALS, \"pngcairo\") > 0) {\n"
			"    set terminal pngcairo size %d,%d font \"Sans,11\" noenhanced\n"
			"} else {\n"
			"    set terminal png size %d,%d noenhanced\n"
			"}\n", PLOTS_WIDTH, PLOTS_HEIGHT, PLOTS_WIDTH, PLOTS_HEIGHT);
	}
	fprintf(fp, "set output \"%s.%s\"\n", name, format_names[format]);
}

/* Log-axis ticks 1, 2, 5, 10, 20, 50, ... up to xmax. */
static void log_tics(char *buf, size_t size, double xmax)
{
	static const double steps[] = { 1, 2, 5 };
	double decade;
	size_t len = 0;
	int i;

	buf[0] = '\0';
	for (decade = 1; decade <= xmax; decade *= 10)
		for (i = 0; i < 3 && steps[i] * decade <= xmax; i++)
			len += (size_t)snprintf(buf + len, len < size ? size - len : 0, "%s%.0f",
						len ? ", " : "", steps[i] * decade);
}

static double plot_xmax(int kind, const struct plots_input *in)
{
	double x = (double)in->exact->points[in->exact->npoints - 1].n;
	size_t i;

	if (kind == PLOTS_FUNDS)
		for (i = 0; i < in->audit->nfunds; i++)
			if (fund_plottable(&in->audit->funds[i]) && (double)in->audit->funds[i].holdings > x)
				x = (double)in->audit->funds[i].holdings;
	/* room for the labels right of the last count on a linear axis */
	return kind == PLOTS_RISK ? ceil(x * 1.02) : x;
}

/*
 * The funds plot starts its count axis a little left of the smallest fund
 * (a third of its effective count, down to the 1-2-5 step below) rather
 * than at 1: funds sit where the curve is nearly flat, and the axis from 1
 * would spend the height on single holdings none of them has, squeezing
 * the funds and the curve they are judged against into a sliver.
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
	lo /= 3;
	if (!(lo > 1))
		return 1;
	for (decade = pow(10, floor(log10(lo)));; decade /= 10)
		for (i = 0; i < 3; i++)
			if (steps[i] * decade <= lo)
				return steps[i] * decade;
}

/* The bottom of the funds plot, in percent: a little under the floor and
 * under the lowest fund (a fund may sit below the floor). */
static double funds_ymin(const struct plots_input *in, double floor_pct)
{
	double lo = 0.9 * floor_pct;
	size_t i;

	for (i = 0; i < in->audit->nfunds; i++) {
		const struct audit_fund *f = &in->audit->funds[i];
		if (fund_plottable(f) && 95.0 * f->sd < lo)
			lo = 95.0 * f->sd;
	}
	return lo;
}

static void risk_plot(FILE *fp, int kind, const struct plots_input *in, size_t nmarks)
{
	/* labels column: 4 on the linear axis, 5 on the log axis (1 = left) */
	int side = kind == PLOTS_RISK ? 4 : 5;

	fputs("plot ", fp);
	if (in->sampled)
		fputs("'sampled.dat' using 1:3:4 with filledcurves ls 3 title \"middle 90% of random portfolios "
		      "(5% to 95% of sd)\", \\\n     ", fp);
	fputs("'exact.dat' using 1:2 with lines ls 1 title \"sqrt of the exact expected variance\", \\\n", fp);
	if (in->sampled)
		fputs("     'sampled.dat' using 1:2 with points ls 2 title \"mean sd of random portfolios\", \\\n", fp);
	fputs("     floor with lines ls 4 title sprintf(\"floor sqrt(average covariance): %.2f%% a year\", floor)", fp);
	if (nmarks)
		fprintf(fp, ", \\\n     'rules.dat' using 1:2:(0):($3-$2) with vectors nohead ls 5 notitle, \\\n"
			"     'rules.dat' using 1:2 with points ls 5 title \"count each rule recommends\", \\\n"
			"     'rules.dat' using 1:($%d == 0 ? $3 : 1/0):6 with labels left offset character 0.5,0.4 "
			"font \",9\" textcolor rgb \"#7b2d63\" notitle, \\\n"
			"     'rules.dat' using 1:($%d == 1 ? $3 : 1/0):6 with labels right offset character -0.5,0.4 "
			"font \",9\" textcolor rgb \"#7b2d63\" notitle", side, side);
	fputc('\n', fp);
}

static void tracking_plot(FILE *fp, const struct plots_input *in)
{
	size_t i;

	for (i = 0; i < in->nrules; i++) {
		const struct rule_result *r = &in->rules[i];
		if (r->rule == RULES_TRACKING_ERROR && r->defined && r->met && isfinite(in->te_budget)) {
			fprintf(fp, "set arrow from %zu, graph 0 to %zu, budget nohead ls 5\n", r->count, r->count);
			/* under the budget line, left of the mark: the curve runs above
			 * the budget there (it meets it at the count), so nothing is struck */
			fprintf(fp, "set label \"tracking-error rule: %zu holdings\" at %zu, budget right offset "
				"character -0.5,-0.9 font \",10\" textcolor rgb \"#7b2d63\"\n", r->count, r->count);
		}
	}
	fputs("plot 'exact.dat' using 1:4 with lines ls 1 title \"sqrt of the exact expected squared tracking "
	      "error\"", fp);
	if (isfinite(in->te_budget))
		fputs(", \\\n     budget with lines ls 4 title sprintf(\"budget: %.2f%% a year\", budget)", fp);
	fputc('\n', fp);
}

/* One line per evaluated exact rule, from column 2 of rolling.dat on. */
static void rolling_plot(FILE *fp, const struct plots_input *in)
{
	static const int styles[] = { 1, 2, 5, 6 };
	size_t col = 2, q = 0;
	int id;

	fputs("plot ", fp);
	for (id = 0; id < RULES_COUNT; id++) {
		if (!(in->rolling->rules & RULES_FLAG(id)))
			continue;
		fprintf(fp, "%s'rolling.dat' using 1:%zu with linespoints ls %d title \"%s rule\"",
			q ? ", \\\n     " : "", col++, styles[q % 4], rules_name(id));
		q++;
	}
	fputc('\n', fp);
}

static void plot_command(FILE *fp, int kind, const struct plots_input *in, size_t nmarks)
{
	switch (kind) {
	case PLOTS_RISK:
	case PLOTS_RISK_LOG:
		risk_plot(fp, kind, in, nmarks);
		break;
	case PLOTS_SHARE:
		fputs("plot 'exact.dat' using 1:3 with lines ls 1 title \"(average variance - average covariance)/N "
		      "as a share of the expected variance\"\n", fp);
		break;
	case PLOTS_TRACKING:
		tracking_plot(fp, in);
		break;
	case PLOTS_FUNDS:
		fputs("plot 'exact.dat' using 1:2 with lines ls 1 title \"random equal-weight portfolios: sqrt of "
		      "the exact expected variance\", \\\n"
		      "     floor with lines ls 4 title sprintf(\"floor: %.2f%% a year\", floor), \\\n"
		      "     'funds.dat' using 2:3:($1-$2):(0) with vectors nohead ls 8 notitle, \\\n"
		      "     'funds.dat' using 1:3 with points ls 6 title \"fund at its number of holdings\", \\\n"
		      "     'funds.dat' using 2:3 with points ls 7 title \"fund at its effective holdings (1/HHI)\", \\\n"
		      "     'funds.dat' using 1:3:4 with labels left offset character 1,0 font \",9\" notitle\n", fp);
		break;
	case PLOTS_ROLLING:
		rolling_plot(fp, in);
		break;
	}
}

int plots_write_script(FILE *fp, int kind, const struct plots_input *in, int format,
		       struct hc_error *err)
{
	char title[256], basis[200], xmin[32], xmax[32], ymin[32], floor_pct[32], budget[32], tics[256];
	struct mark *mk = NULL;
	size_t nmarks = 0;
	int rc;

	if (!plots_available(kind, in))
		return hc_error(err, HC_EUSAGE, "plot '%s' is not available for these results",
				plots_name(kind) ? plots_name(kind) : "?");
	if (!plots_format_name(format))
		return hc_error(err, HC_EUSAGE, "no plot format number %d", format);
	if (in->nrules) {
		mk = hc_calloc(in->nrules, sizeof *mk);
		if (!mk)
			return hc_error(err, HC_ENOMEM, "out of memory writing '%s.gp'", plots_name(kind));
		nmarks = build_marks(in, mk);
		hc_free(mk);
	}
	{
		char clean[160];
		clean_label(clean, sizeof clean, in->universe_name);
		snprintf(title, sizeof title, "%s%s%s", kinds[kind].title, clean[0] ? ": " : "", clean);
	}
	snprintf(basis, sizeof basis, "annualised from %.10g periods a year (variance times %.10g, sd times its "
		 "square root)", in->exact->periods_per_year, in->exact->periods_per_year);
	snprintf(xmin, sizeof xmin, "%.0f", kind == PLOTS_FUNDS ? funds_xmin(in) : 1.0);
	snprintf(xmax, sizeof xmax, "%.0f", plot_xmax(kind, in));
	snprintf(floor_pct, sizeof floor_pct, "%.10g",
		 in->exact->floor_variance > 0 ? 100.0 * sqrt(in->exact->floor_variance) : 0.0);
	snprintf(ymin, sizeof ymin, "%.10g", kind == PLOTS_FUNDS
		 ? funds_ymin(in, in->exact->floor_variance > 0 ? 100.0 * sqrt(in->exact->floor_variance) : 0.0) : 0.0);
	snprintf(budget, sizeof budget, "%.10g", isfinite(in->te_budget) ? 100.0 * in->te_budget : 0.0);
	log_tics(tics, sizeof tics, plot_xmax(kind, in));
	{
		const struct subst s[] = {
			{ "TITLE", title }, { "BASIS", basis }, { "XMIN", xmin }, { "XMAX", xmax }, { "YMIN", ymin },
			{ "FLOOR", floor_pct }, { "BUDGET", budget }, { "XTICS", tics },
		};
		fprintf(fp, "# %s.gp - written by holdcount; render with: gnuplot %s.gp\n"
			"# It reads the .dat files beside it; figures are percent a year.\n",
			kinds[kind].name, kinds[kind].name);
		terminal_block(fp, format, kinds[kind].name);
		rc = emit_template(fp, "style", s, sizeof s / sizeof s[0], err);
		if (rc == HC_OK)
			rc = emit_template(fp, kinds[kind].name, s, sizeof s / sizeof s[0], err);
	}
	if (rc != HC_OK)
		return rc;
	plot_command(fp, kind, in, nmarks);
	if (ferror(fp))
		return hc_error(err, HC_EIO, "cannot write '%s.gp': %s", kinds[kind].name, strerror(errno));
	return HC_OK;
}

const char *plots_caption(int kind, const struct plots_input *in, char *buf, size_t size)
{
	switch (kind) {
	case PLOTS_RISK:
	case PLOTS_RISK_LOG:
		snprintf(buf, size, "%s: the solid line is the square root of the exact expected variance of a "
			 "random equal-weight portfolio of N holdings; %sthe dashed line is the floor; each marked "
			 "count is the smallest N meeting a rule (90%% bootstrap interval in brackets).%s",
			 kind == PLOTS_RISK ? "Risk by holding count" : "The same on a log-scaled count axis",
			 in->sampled ? "circles are the mean sd of random portfolios and the shaded band holds "
				       "the middle 90% of them; " : "",
			 kind == PLOTS_RISK_LOG ? " The log axis gives the first holdings, which remove most of the "
						  "diversifiable risk, room." : "");
		return buf;
	case PLOTS_SHARE:
		return "Diversifiable share: the part of a random N-holding portfolio's expected variance that "
		       "more holdings could still remove, (average variance - average covariance)/N over the "
		       "expected variance.";
	case PLOTS_TRACKING:
		return "Expected tracking error of a random equal-weight portfolio against the equal-weight "
		       "portfolio of the whole universe; the dashed line is the budget and the marked count the "
		       "tracking-error rule's.";
	case PLOTS_FUNDS:
		return "Audited funds: each fund's own sd from the universe's history, drawn at its number of "
		       "holdings (square) and at its effective number 1/HHI (diamond), against the curve of "
		       "random equal-weight portfolios. A fund above the curve at its effective count is riskier "
		       "than its concentration alone explains.";
	case PLOTS_ROLLING:
		snprintf(buf, size, "Holding count needed through time: the count each exact rule recommends "
			 "from the averages of each window of %zu periods (one every %zu), plotted at the window's "
			 "last date; gaps are windows where the rule is not met or the window has too few "
			 "securities. A rising line means the same diversification now takes more holdings "
			 "(Campbell, Lettau, Malkiel & Xu, 2001).", in->rolling->window, in->rolling->step);
		return buf;
	default:
		return "Holding count needed through time.";
	}
}

/* ---- running gnuplot ------------------------------------------------------------- */

int plots_find_gnuplot(const char *path_env, char *buf, size_t size)
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
	if (rc)
		return hc_error(err, HC_EIO, "cannot run '%s' on '%s': %s", gnuplot, script, strerror(rc));
	return HC_OK;
}

int plots_render(const char *gnuplot, const char *dir, const char *script, struct hc_error *err)
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
		return hc_error(err, HC_EINTERNAL, "gnuplot failed on '%s' (%s): %s", script,
				WIFEXITED(status) ? (WEXITSTATUS(status) ? "non-zero exit" : "a warning")
						  : "killed by a signal",
				msg[0] ? msg : "no message");
	}
	return HC_OK;
}
