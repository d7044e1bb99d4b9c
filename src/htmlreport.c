/*
 * htmlreport.c - report.html: the report folder as one document a committee
 * can open, read and print.
 *
 * The document is plain HTML5 with one inline stylesheet.  Choices made for
 * reading and printing:
 *   - committee tables show what a decision needs; the analyst's
 *     self-checks (sqrt E[var] beside the sampled mean, z, Monte Carlo
 *     standard errors, bootstrap settings) go to a technical appendix;
 *   - every table has a caption and header cells with scope (WCAG 2.1,
 *     technique H63), every figure an accessible name (role="img" with
 *     aria-label, and the SVG's own <title>) and a caption;
 *   - pass and fail are words, not colours alone, and the plots' lines
 *     differ in dash and marker as well as colour, so a greyscale print
 *     keeps every distinction;
 *   - the print stylesheet starts each section on a new page, keeps table
 *     rows and figures whole and repeats table headers, with page margins
 *     that fit both A4 and US Letter (size: auto lets the printer's paper
 *     decide).
 * gnuplot's SVG documents use the same ids (gpPt0, gnuplot_canvas, ...);
 * inlined side by side they would clash, so each figure's ids get its name
 * as a prefix.
 */
#include "holdcount/htmlreport.h"

#include <errno.h>
#include <math.h>
#include <string.h>

#include "holdcount/memory.h"

/* Largest SVG embedded (gnuplot's are 30-120 kB). */
#define HTMLREPORT_SVG_MAX (64u << 20)

const char *const hc_htmlreport_sections[][2] = {
	{ "recommendation", "Recommendation" },
	{ "since", "Since the last report" },
	{ "universe", "The universe and its treatment" },
	{ "curve", "Risk by holding count" },
	{ "rules", "How many holdings are enough: every rule" },
	{ "tail", "Tail risk and long horizons" },
	{ "funds", "Audited funds" },
	{ "time", "The count needed through time" },
	{ "cautions", "Cautions" },
	{ "appendix", "Technical appendix: self-checks" },
};
const size_t hc_htmlreport_nsections = sizeof hc_htmlreport_sections / sizeof hc_htmlreport_sections[0];

enum { S_REC, S_SINCE, S_UNIVERSE, S_CURVE, S_RULES, S_TAIL, S_FUNDS, S_TIME, S_CAUTIONS, S_APPENDIX };

/* The rows of the curve a committee reads (the CSV has every grid row). */
static const long long readable_grid[] = { 1, 2, 3, 5, 10, 15, 20, 25, 30, 40, 50, 75, 100, 150, 200, 300, 500, 1000 };

static const char stylesheet[] =
	":root{--ink:#1d1d1f;--muted:#55595e;--rule:#c9cbcf;--band:#f1f2f4;--accent:#1b5f5a}\n"
	"html{font:16px/1.5 \"DejaVu Sans\",\"Liberation Sans\",Arial,sans-serif;color:var(--ink);background:#fff}\n"
	"body{max-width:64rem;margin:0 auto;padding:1.5rem 1.25rem 3rem}\n"
	"h1{font-size:1.7rem;margin:0 0 .25rem}\n"
	"h2{font-size:1.3rem;margin:2.2rem 0 .6rem;padding-bottom:.2rem;border-bottom:2px solid var(--accent)}\n"
	"h3{font-size:1.05rem;margin:1.4rem 0 .4rem}\n"
	".meta{color:var(--muted);font-size:.9rem;margin:0 0 1rem}\n"
	"nav ol{columns:2;font-size:.95rem;padding-left:1.4rem}\n"
	".decision{border:2px solid var(--ink);padding:1rem 1.25rem;margin:1rem 0;background:var(--band)}\n"
	".decision .count{font-size:2.4rem;font-weight:700;line-height:1.1;margin:0}\n"
	".decision .count small{font-size:1rem;font-weight:400}\n"
	"blockquote.policy{margin:1rem 0;padding:.6rem 1rem;border-left:6px double var(--ink);background:#fff;"
	"font-style:italic}\n"
	".alert{border:2px dashed var(--ink);padding:.6rem 1rem;margin:1rem 0;font-weight:600}\n"
	"table{border-collapse:collapse;margin:.6rem 0 1rem;font-size:.9rem;width:100%}\n"
	"caption{text-align:left;font-weight:600;padding:.2rem 0;caption-side:top}\n"
	"th,td{border:1px solid var(--rule);padding:.25rem .45rem;vertical-align:top}\n"
	"thead th{background:var(--band);text-align:left}\n"
	"tbody th{text-align:left;font-weight:600}\n"
	"td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}\n"
	"table.wide{font-size:.78rem}table.wide th,table.wide td{padding:.2rem .3rem}\n"
	".fail{font-weight:700;text-decoration:underline}\n"
	"dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.15rem 1rem;margin:.6rem 0}\n"
	"dl.facts dt{font-weight:600}dl.facts dd{margin:0}\n"
	"figure{margin:1rem 0 1.5rem}\n"
	"figure svg{display:block;width:100%;height:auto;max-width:1000px;border:1px solid var(--rule)}\n"
	"figcaption{font-size:.9rem;color:var(--muted);margin-top:.4rem}\n"
	".missing{border:1px dashed var(--rule);padding:1rem}\n"
	".note{font-size:.9rem;color:var(--muted)}\n"
	"footer{margin-top:3rem;font-size:.85rem;color:var(--muted)}\n"
	"@page{size:auto;margin:16mm 14mm}\n"
	"@media print{\n"
	"  html{font-size:10.5pt}body{max-width:none;padding:0}\n"
	"  nav{display:none}\n"
	"  section{break-before:page}section:first-of-type{break-before:auto}\n"
	"  h2,h3,caption{break-after:avoid}\n"
	"  tr,figure,.decision,blockquote,dl.facts{break-inside:avoid}\n"
	"  thead{display:table-header-group}\n"
	"  figure svg{border:none}\n"
	"  a{color:inherit;text-decoration:none}\n"
	"}\n";

/* ---- output helpers ------------------------------------------------------------ */

/* Text with the five characters HTML gives meaning escaped. */
static void esc(FILE *fp, const char *s)
{
	for (; s && *s; s++)
		switch (*s) {
		case '&': fputs("&amp;", fp); break;
		case '<': fputs("&lt;", fp); break;
		case '>': fputs("&gt;", fp); break;
		case '"': fputs("&quot;", fp); break;
		case '\'': fputs("&#39;", fp); break;
		default: fputc(*s, fp);
		}
}

static const struct report_value none_value = { REPORT_NONE, 0, 0, 0, NULL };

static const struct report_value *field(const struct report *r, const char *key)
{
	size_t i;

	for (i = 0; r && i < r->nfields; i++)
		if (strcmp(r->fields[i].key, key) == 0)
			return &r->fields[i].value;
	return &none_value;
}

static long col(const struct report_table *t, const char *key)
{
	size_t j;

	for (j = 0; t && j < t->ncols; j++)
		if (strcmp(t->cols[j].key, key) == 0)
			return (long)j;
	return -1;
}

static const struct report_value *cell(const struct report_table *t, size_t row, const char *key)
{
	long j = col(t, key);

	return j < 0 ? &none_value : &t->cells[row * t->ncols + (size_t)j];
}

static void value(FILE *fp, const struct report_value *v)
{
	char buf[64];

	esc(fp, hc_report_value_text(buf, sizeof buf, v));
}

static int is_number(const struct report_value *v)
{
	return v->kind == REPORT_REAL || v->kind == REPORT_INT;
}

static double number(const struct report_value *v)
{
	return v->kind == REPORT_REAL ? v->real : v->kind == REPORT_INT ? (double)v->integer : NAN;
}

static const char *text(const struct report_value *v)
{
	return v->kind == REPORT_TEXT && v->text ? v->text : NULL;
}

/* A column of a table: its key in the model and its heading here. */
struct column {
	const char *key, *title;
};

/* A table of more columns than this is set smaller (class "wide"), so that
 * it fits a 1000-pixel window and a portrait page without sideways
 * scrolling (the audited funds with their coverage and statute columns). */
#define WIDE_TABLE_COLUMNS 10

static void table_head(FILE *fp, const char *caption, const struct column *cols, size_t n)
{
	size_t j;

	fputs(n > WIDE_TABLE_COLUMNS ? "<table class=\"wide\">\n<caption>" : "<table>\n<caption>", fp);
	esc(fp, caption);
	fputs("</caption>\n<thead><tr>", fp);
	for (j = 0; j < n; j++) {
		fputs("<th scope=\"col\">", fp);
		esc(fp, cols[j].title);
		fputs("</th>", fp);
	}
	fputs("</tr></thead>\n<tbody>\n", fp);
}

/* Whether a column holds numbers (and no text): its cells align right,
 * a missing value's "-" among them. */
static int numeric_column(const struct report_table *t, const char *key)
{
	size_t row;
	int any = 0;

	for (row = 0; row < t->nrows; row++) {
		const struct report_value *v = cell(t, row, key);
		if (v->kind == REPORT_TEXT || v->kind == REPORT_BOOL)
			return 0;
		any |= is_number(v);
	}
	return any;
}

/* One row: the first column is the row's header cell. */
static void table_row(FILE *fp, const struct report_table *t, size_t row, const struct column *cols, size_t n,
		      const int *numeric)
{
	size_t j;

	fputs("<tr>", fp);
	for (j = 0; j < n; j++) {
		const struct report_value *v = cell(t, row, cols[j].key);
		fputs(j == 0 ? "<th scope=\"row\">" : is_number(v) || numeric[j] ? "<td class=\"n\">" : "<td>", fp);
		value(fp, v);
		fputs(j == 0 ? "</th>" : "</td>", fp);
	}
	fputs("</tr>\n", fp);
}

/* Only the columns the table has: a figure that a run did not compute
 * (no sampling, no sector map) leaves no empty column. */
static size_t present(const struct report_table *t, const struct column *in, size_t n, struct column *out)
{
	size_t j, k = 0, row;

	for (j = 0; j < n; j++) {
		long c = col(t, in[j].key);
		int any = 0;
		for (row = 0; c >= 0 && row < t->nrows && !any; row++)
			any = t->cells[row * t->ncols + (size_t)c].kind != REPORT_NONE ||
			      t->cells[row * t->ncols + (size_t)c].text;
		if (any || j == 0)
			out[k++] = in[j];
	}
	return k;
}

static void whole_table(FILE *fp, const struct report_table *t, const char *caption, const struct column *cols,
			size_t n, int (*keep)(const struct report_table *, size_t, const void *), const void *ctx)
{
	struct column shown[32];
	int numeric[32];
	size_t k, j, row;

	if (!t)
		return;
	k = present(t, cols, n < 32 ? n : 32, shown);
	for (j = 0; j < k; j++)
		numeric[j] = numeric_column(t, shown[j].key);
	table_head(fp, caption, shown, k);
	for (row = 0; row < t->nrows; row++)
		if (!keep || keep(t, row, ctx))
			table_row(fp, t, row, shown, k, numeric);
	fputs("</tbody>\n</table>\n", fp);
}

static void section_open(FILE *fp, int s)
{
	fprintf(fp, "<section id=\"%s\" aria-labelledby=\"h-%s\">\n<h2 id=\"h-%s\">", hc_htmlreport_sections[s][0],
		hc_htmlreport_sections[s][0], hc_htmlreport_sections[s][0]);
	esc(fp, hc_htmlreport_sections[s][1]);
	fputs("</h2>\n", fp);
}

/* ---- figures ------------------------------------------------------------------- */

/* The SVG document inline: from its <svg element on, with an accessible
 * name, its <title> replaced, and every id and reference to one prefixed
 * with the figure's name. */
static void inline_svg(FILE *fp, const struct htmlreport_figure *f)
{
	static const char *const refs[] = { "id='", "id=\"", "href='#", "href=\"#", "url(#" };
	const char *p = strstr(f->svg, "<svg"), *title = "<title>Gnuplot</title>";
	size_t k;

	if (!p)
		return;
	fputs("<svg role=\"img\" aria-label=\"", fp);
	esc(fp, f->title);
	fputc('"', fp);
	for (p += 4; *p;) {
		if (strncmp(p, title, strlen(title)) == 0) {
			fputs("<title>", fp);
			esc(fp, f->title);
			fputs("</title>", fp);
			p += strlen(title);
			continue;
		}
		for (k = 0; k < sizeof refs / sizeof refs[0]; k++)
			if (strncmp(p, refs[k], strlen(refs[k])) == 0)
				break;
		if (k < sizeof refs / sizeof refs[0]) {
			fputs(refs[k], fp);
			fprintf(fp, "%s-", f->name);
			p += strlen(refs[k]);
			continue;
		}
		fputc(*p++, fp);
	}
	fputc('\n', fp);
}

static void figures(FILE *fp, const struct htmlreport_input *in, int place)
{
	size_t i;

	for (i = 0; i < in->nfigures; i++) {
		const struct htmlreport_figure *f = &in->figures[i];
		if (f->place != place)
			continue;
		fprintf(fp, "<figure id=\"fig-%s\">\n", f->name);
		if (f->svg && strstr(f->svg, "<svg"))
			inline_svg(fp, f);
		else {
			fputs("<p class=\"missing\" role=\"img\" aria-label=\"", fp);
			esc(fp, f->title);
			fprintf(fp, "\">Not rendered: gnuplot was not found when the report was written. The script "
				"<code>%s.gp</code> in the report folder draws it.</p>\n", f->name);
		}
		fputs("<figcaption><strong>", fp);
		esc(fp, f->title);
		fputs(".</strong> ", fp);
		esc(fp, f->caption);
		fputs("</figcaption>\n</figure>\n", fp);
	}
}

/* ---- the recommendation --------------------------------------------------------- */

/* The count the report leads with.  A recommendation chosen by a policy
 * option (fields recommended_rule, recommended_count, recommended_p05,
 * recommended_p95 and policy_sentence of the enough report) when there is
 * one; else the near-floor rule's row, the first rule of the report. */
struct lead {
	const char *rule, *parameters, *sentence, *unit;
	double count, p05, p95, value;
	int met, chosen;
};

static void find_lead(const struct report *enough, struct lead *L)
{
	const struct report_table *t = hc_report_find_table(enough, "rules");
	size_t row = 0, i;

	memset(L, 0, sizeof *L);
	L->count = L->p05 = L->p95 = L->value = NAN;
	if (is_number(field(enough, "recommended_count"))) {
		L->chosen = 1;
		L->met = 1;
		L->rule = text(field(enough, "recommended_rule"));
		L->count = number(field(enough, "recommended_count"));
		L->p05 = number(field(enough, "recommended_p05"));
		L->p95 = number(field(enough, "recommended_p95"));
		L->sentence = text(field(enough, "policy_sentence"));
		return;
	}
	if (!t || !t->nrows)
		return;
	for (i = 0; i < t->nrows; i++)
		if (text(cell(t, i, "rule")) && strcmp(text(cell(t, i, "rule")), "near-floor") == 0) {
			row = i;
			break;
		}
	L->rule = text(cell(t, row, "rule"));
	L->parameters = text(cell(t, row, "parameters"));
	L->unit = text(cell(t, row, "unit"));
	L->count = number(cell(t, row, "count"));
	L->p05 = number(cell(t, row, "count_p05"));
	L->p95 = number(cell(t, row, "count_p95"));
	L->value = number(cell(t, row, "value_at_count"));
	L->met = cell(t, row, "met")->kind == REPORT_BOOL && cell(t, row, "met")->integer;
}

/* The smallest and largest count of the met rules, for the range line. */
static void rule_range(const struct report *enough, size_t *lo, size_t *hi, size_t *nmet, size_t *nrules)
{
	const struct report_table *t = hc_report_find_table(enough, "rules");
	size_t i;

	*lo = *hi = *nmet = *nrules = 0;
	for (i = 0; t && i < t->nrows; i++) {
		(*nrules)++;
		if (!is_number(cell(t, i, "count")) || cell(t, i, "met")->kind != REPORT_BOOL || !cell(t, i, "met")->integer)
			continue;
		if (!(*nmet)++ || number(cell(t, i, "count")) < number(cell(t, *lo, "count")))
			*lo = i;
		if (*nmet == 1 || number(cell(t, i, "count")) > number(cell(t, *hi, "count")))
			*hi = i;
	}
}

static void verdict_alert(FILE *fp, const struct htmlreport_input *in)
{
	const struct report_table *t = hc_report_find_table(in->compare, "changes");
	size_t i;

	if (!t || !is_number(field(in->compare, "verdict_changes")) || number(field(in->compare, "verdict_changes")) == 0)
		return;
	fputs("<div class=\"alert\" role=\"note\">Changed since the last report: ", fp);
	for (i = 0; i < t->nrows; i++) {
		const struct report_value *old = cell(t, i, "old"), *new = cell(t, i, "new");
		if (!text(cell(t, i, "section")) || strcmp(text(cell(t, i, "section")), "verdict") ||
		    cell(t, i, "changed")->kind != REPORT_BOOL || !cell(t, i, "changed")->integer ||
		    new->kind != REPORT_BOOL)
			continue;
		esc(fp, text(cell(t, i, "item")));
		fprintf(fp, ": %s (was %s). ", new->integer ? "yes" : "NO",
			old->kind == REPORT_BOOL ? (old->integer ? "yes" : "no") : "not audited");
	}
	fputs("</div>\n", fp);
}

static void recommendation(FILE *fp, const struct htmlreport_input *in)
{
	struct lead L;
	size_t lo, hi, nmet, nrules;
	const struct report_table *t = hc_report_find_table(in->enough, "rules");
	const char *first = text(field(in->universe, "first_date")), *last = text(field(in->universe, "last_date"));
	double adopt;

	find_lead(in->enough, &L);
	section_open(fp, S_REC);
	verdict_alert(fp, in);
	if (!L.rule || !L.met || !isfinite(L.count)) {
		fputs("<p>The leading rule is not met in this universe: no count of equal-weight holdings reaches it. "
		      "The table of every rule below gives the counts that are met.</p>\n", fp);
	} else {
		adopt = isfinite(L.p95) ? L.p95 : L.count;
		fputs("<div class=\"decision\">\n", fp);
		fprintf(fp, "<p class=\"count\">%.0f holdings <small>(%s rule", L.count, L.rule);
		if (isfinite(L.p05) && isfinite(L.p95))
			fprintf(fp, "; 90%% interval %.0f to %.0f", L.p05, L.p95);
		fputs(")</small></p>\n<p>", fp);
		if (L.chosen) {
			fputs("The policy rule chosen for this report gives this count.", fp);
		} else {
			fputs("Under the ", fp);
			esc(fp, L.rule);
			fputs(" rule (", fp);
			esc(fp, L.parameters ? L.parameters : "");
			fputs("), a random equal-weight portfolio of this universe needs this many holdings for its "
			      "expected standard deviation to come within that margin of the floor, the level no number "
			      "of holdings gets below.", fp);
			if (isfinite(L.p05) && isfinite(L.p95))
				fprintf(fp, " Resampling the history's periods moves the count between %.0f and %.0f "
					"(90%% of replicates), so a minimum that holds up to the estimation error is %.0f.",
					L.p05, L.p95, L.p95);
		}
		fputs("</p>\n</div>\n", fp);
		fputs("<p>Policy sentence (draft, for the committee to adopt or amend):</p>\n<blockquote class=\"policy\">", fp);
		if (L.sentence)
			esc(fp, L.sentence);
		else {
			fprintf(fp, "The portfolio holds at least %.0f securities of its universe, with no position far "
				"above an equal weight, so that its expected risk stays within the %s margin (", adopt, L.rule);
			esc(fp, L.parameters ? L.parameters : "");
			fputs(") of the lowest risk that adding holdings can reach; the count was estimated from ", fp);
			esc(fp, first ? first : "?");
			fputs(" to ", fp);
			esc(fp, last ? last : "?");
			fputs(" and is to be reviewed when the report is renewed.", fp);
		}
		fputs("</blockquote>\n", fp);
	}
	rule_range(in->enough, &lo, &hi, &nmet, &nrules);
	if (nmet > 1 && t)
		fprintf(fp, "<p>The %zu rules of this report that are met give counts from %.0f (%s) to %.0f (%s); they "
			"answer different questions, set out in <a href=\"#rules\">every rule</a>; this report leads "
			"with the near-floor rule, whose question (how close to the lowest reachable risk) is the one a "
			"minimum-holdings clause usually asks.</p>\n",
			nmet, number(cell(t, lo, "count")), text(cell(t, lo, "rule")), number(cell(t, hi, "count")),
			text(cell(t, hi, "rule")));
	fputs("<p class=\"note\">Historical estimates, not investment advice: see the <a href=\"#cautions\">cautions</a>"
	      ".</p>\n</section>\n", fp);
}

/* ---- since the last report ----------------------------------------------------- */

static int changed_row(const struct report_table *t, size_t row, const void *ctx)
{
	(void)ctx;
	const struct report_value *v = cell(t, row, "changed");

	return v->kind == REPORT_BOOL && v->integer;
}

static void since(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column cols[] = {
		{ "item", "figure" }, { "section", "part" }, { "old", "last report" }, { "new", "this report" },
		{ "change", "change" },
	};
	const struct report_table *t = hc_report_find_table(in->compare, "changes");
	const struct report_table *sec = hc_report_find_table(in->compare, "securities");
	size_t i, n = 0;

	section_open(fp, S_SINCE);
	fputs("<p>Compared with the report in <code>", fp);
	value(fp, field(in->compare, "old"));
	fputs("</code> (data ", fp);
	value(fp, field(in->compare, "old_period"));
	fputs("; this report: ", fp);
	value(fp, field(in->compare, "new_period"));
	fputs("). <strong>", fp);
	value(fp, field(in->compare, "headline"));
	fputs(".</strong></p>\n", fp);
	for (i = 0; t && i < t->nrows; i++)
		n += (size_t)changed_row(t, i, NULL);
	if (t && n) {
		whole_table(fp, t, "Figures that changed (policy verdicts first)", cols, sizeof cols / sizeof cols[0],
			    changed_row, NULL);
		fprintf(fp, "<p class=\"note\">%zu other figure%s compared did not change; <code>holdcount compare</code> "
			"lists them all.</p>\n", t->nrows - n, t->nrows - n == 1 ? "" : "s");
	} else {
		fputs("<p>No compared figure changed.</p>\n", fp);
	}
	if (sec && sec->nrows) {
		int pass;
		for (pass = 0; pass < 2; pass++) {
			const char *word = pass ? "out" : "in";
			size_t k = 0;
			for (i = 0; i < sec->nrows; i++)
				k += text(cell(sec, i, "change")) && strcmp(text(cell(sec, i, "change")), word) == 0;
			if (!k)
				continue;
			fprintf(fp, "<p>Securities %s (%zu): ", pass ? "no longer kept" : "newly kept", k);
			for (i = 0, n = 0; i < sec->nrows; i++)
				if (text(cell(sec, i, "change")) && strcmp(text(cell(sec, i, "change")), word) == 0) {
					fputs(n++ ? ", " : "", fp);
					value(fp, cell(sec, i, "id"));
				}
			fputs(".</p>\n", fp);
		}
	}
	fputs("</section>\n", fp);
}

/* ---- the universe ---------------------------------------------------------------- */

static void fact(FILE *fp, const char *label, const struct report_value *v)
{
	if (v->kind == REPORT_NONE && !v->text)
		return;
	fputs("<dt>", fp);
	esc(fp, label);
	fputs("</dt><dd>", fp);
	value(fp, v);
	fputs("</dd>\n", fp);
}

static void universe(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column dropped[] = { { "id", "security" }, { "reason", "why it was dropped" } };
	const struct report *u = in->universe;
	size_t i;

	section_open(fp, S_UNIVERSE);
	fputs("<dl class=\"facts\">\n", fp);
	fact(fp, "source", field(u, "source"));
	fact(fp, "first period", field(u, "first_date"));
	fact(fp, "last period", field(u, "last_date"));
	fact(fp, "periods", field(u, "periods"));
	fact(fp, "periods per year", field(u, "periods_per_year"));
	fact(fp, "securities read", field(u, "securities_read"));
	fact(fp, "securities kept", field(u, "securities"));
	fact(fp, "securities dropped", field(u, "securities_dropped"));
	/* a history read period by period (with gaps, listings, delistings) */
	fact(fp, "securities alive per period, fewest", field(u, "alive_min"));
	fact(fp, "securities alive per period, median", field(u, "alive_median"));
	fact(fp, "securities alive per period, most", field(u, "alive_max"));
	fact(fp, "securities with no gap", field(u, "securities_complete"));
	fact(fp, "periods read (before --frequency or --from/--to)", field(u, "periods_read"));
	fact(fp, "cells read as missing (--bad-cells missing)", field(u, "bad_cells"));
	fact(fp, "the first of them", field(u, "bad_cell_first"));
	/* the data checks' count (holdcount check lists every finding) */
	fact(fp, "data-check findings (holdcount check lists them)", field(u, "data_check_findings"));
	fact(fp, "the first finding", field(u, "data_check_first"));
	for (i = 0; i < u->nfields; i++)
		if (strncmp(u->fields[i].key, "data_check_", 11) == 0 && strcmp(u->fields[i].key, "data_check_findings") &&
		    strcmp(u->fields[i].key, "data_check_first"))
			fact(fp, u->fields[i].title ? u->fields[i].title : u->fields[i].key, &u->fields[i].value);
	fact(fp, "average correlation", field(u, "average_correlation"));
	fact(fp, "floor sd a year (no number of holdings gets below it)", field(u, "floor_sd"));
	fact(fp, "sd of the equal-weight portfolio of all kept securities, a year", field(u, "universe_sd"));
	fputs("</dl>\n", fp);
	/* the treatment the data source states, else the complete-data one */
	if (field(u, "treatment")->kind == REPORT_TEXT) {
		fputs("<p>Treatment: ", fp);
		value(fp, field(u, "treatment"));
		fputs(". Annualisation: ", fp);
	} else
		fputs("<p>Treatment: a security is kept when it has a return in every period of the sample; the others "
		      "are dropped and listed below, so every figure rests on the same periods. Annualisation: ", fp);
	value(fp, field(u, "annualisation"));
	fputs(".</p>\n", fp);
	whole_table(fp, hc_report_find_table(u, "dropped"), "Securities dropped", dropped, 2, NULL, NULL);
	/* findings of a data check, when the universe report carries them */
	for (i = 0; i < u->ntables; i++) {
		const struct report_table *t = u->tables[i];
		struct column cols[16];
		size_t j;
		if (!strcmp(t->key, "dropped") || !strcmp(t->key, "kept") || t->ncols > 16)
			continue;
		for (j = 0; j < t->ncols; j++) {
			cols[j].key = t->cols[j].key;
			cols[j].title = t->cols[j].title;
		}
		whole_table(fp, t, t->title ? t->title : t->key, cols, t->ncols, NULL, NULL);
	}
	fputs("</section>\n", fp);
}

/* ---- the curve --------------------------------------------------------------------- */

/* A row whose count column `key` is on the readable grid, or is the last
 * count (N = M, *ctx). */
static int readable_by(const struct report_table *t, size_t row, const char *key, const void *ctx)
{
	const struct report_value *v = cell(t, row, key);
	size_t k;

	if (v->kind != REPORT_INT)
		return 0;
	if (v->integer == *(const long long *)ctx)
		return 1;
	for (k = 0; k < sizeof readable_grid / sizeof readable_grid[0]; k++)
		if (v->integer == readable_grid[k])
			return 1;
	return 0;
}

static int readable(const struct report_table *t, size_t row, const void *ctx)
{
	return readable_by(t, row, "n", ctx);
}

static void curve(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column cols[] = {
		{ "n", "holdings" }, { "sampled_mean_sd", "typical sd a year (mean of random portfolios)" },
		{ "sd_p05", "lucky draw (5%)" }, { "sd_p95", "unlucky draw (95%)" },
		{ "diversifiable_share", "diversifiable share of variance" },
		{ "expected_tracking_error", "tracking error vs all securities" },
	};
	static const struct column exact_cols[] = {
		{ "n", "holdings" }, { "expected_sd", "expected sd a year" },
		{ "diversifiable_share", "diversifiable share of variance" },
		{ "expected_tracking_error", "tracking error vs all securities" },
	};
	const struct report_table *t = hc_report_find_table(in->curve, "curve");
	long long last_n;
	int sampled = t && col(t, "sampled_mean_sd") >= 0 && t->nrows && is_number(cell(t, 0, "sampled_mean_sd"));

	section_open(fp, S_CURVE);
	fputs("<p>How the risk of an equal-weight portfolio of N securities drawn at random from the universe "
	      "falls as N grows, towards the floor set by what the securities share. The range gives the "
	      "middle 90% of random portfolios: which securities are held matters most when they are few.</p>\n", fp);
	figures(fp, in, HTMLREPORT_CURVE);
	last_n = t && t->nrows ? cell(t, t->nrows - 1, "n")->integer : 0;
	if (sampled)
		whole_table(fp, t, "Risk by holding count (selected counts; every count in curve.csv)", cols,
			    sizeof cols / sizeof cols[0], readable, &last_n);
	else
		whole_table(fp, t, "Risk by holding count (selected counts; every count in curve.csv)", exact_cols,
			    sizeof exact_cols / sizeof exact_cols[0], readable, &last_n);
	fputs("</section>\n", fp);
}

/* ---- the rules ----------------------------------------------------------------------- */

static void rules(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column cols[] = {
		{ "rule", "rule" }, { "parameters", "parameters" }, { "count", "count" }, { "count_p05", "90% interval from" },
		{ "count_p95", "to" }, { "value_at_count", "value at the count" }, { "unit", "value is" }, { "note", "note" },
	};

	section_open(fp, S_RULES);
	fputs("<p>Each rule turns the curve into one count: the smallest number of equal-weight holdings that "
	      "meets it. The interval comes from resampling the history's periods (a block bootstrap): it shows "
	      "how far the data's own estimation error moves the count. A rule without an interval was drawn from "
	      "random portfolios and not resampled in this run. The rules' sources are in "
	      "<code>summary.md</code> and the documentation.</p>\n", fp);
	whole_table(fp, hc_report_find_table(in->enough, "rules"), "Every rule's count", cols,
		    sizeof cols / sizeof cols[0], NULL, NULL);
	fputs("</section>\n", fp);
}

/* ---- tail risk and long horizons ------------------------------------------------------- */

static int readable_holdings(const struct report_table *t, size_t row, const void *ctx)
{
	return readable_by(t, row, "holdings", ctx);
}

static void tail_measures(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column cols[] = {
		{ "n", "holdings" }, { "es95_mean", "ES 95%" }, { "es95_p05", "ES 95%: 5%" },
		{ "es95_p95", "ES 95%: 95%" }, { "es99_mean", "ES 99%" },
		{ "max_drawdown_mean", "drawdown" }, { "max_drawdown_p95", "drawdown: 95%" },
	};
	const struct report_table *t = hc_report_find_table(in->tail, "tail");
	long long last_n = t && t->nrows ? cell(t, t->nrows - 1, "n")->integer : 0;

	fputs("<p>The standard deviation treats gains and losses alike; a committee worried about bad months "
	      "and deep falls reads these instead. For the same random portfolios as the curve: the "
	      "<strong>expected shortfall</strong> at 95% (99%), the mean loss in a portfolio's worst 5% (1%) of "
	      "periods, per period and not annualised (a tail mean does not scale with the square root of time); "
	      "and the <strong>maximum drawdown</strong>, the largest fall from a peak over the whole sample. The "
	      "universe's own value, which every portfolio reaches at N = M, is the reference to compare each "
	      "count with; unlike the sd's floor, a lucky portfolio can sit below it.</p>\n<dl class=\"facts\">\n", fp);
	fact(fp, "random portfolios per count", field(in->tail, "paths"));
	fact(fp, "periods per year", field(in->tail, "periods_per_year"));
	fact(fp, "whole universe (N = M): expected shortfall 95%, a period", field(in->tail, "universe_es95"));
	fact(fp, "whole universe (N = M): expected shortfall 99%, a period", field(in->tail, "universe_es99"));
	fact(fp, "whole universe (N = M): maximum drawdown", field(in->tail, "universe_max_drawdown"));
	fputs("</dl>\n", fp);
	figures(fp, in, HTMLREPORT_TAIL);
	whole_table(fp, t, "Tail measures by holding count: ES is the expected shortfall (mean over the random "
		    "portfolios, and their 5% and 95%), drawdown the maximum drawdown (mean, and the unlucky 95%); "
		    "selected counts, every count in tail.csv", cols,
		    sizeof cols / sizeof cols[0], readable, &last_n);
}

static void horizon_part(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column cols[] = {
		{ "holdings", "holdings" }, { "rebal_p05", "rebalanced: 5%" }, { "rebal_p50", "median" },
		{ "rebal_p95", "95%" }, { "rebal_lag", "behind" }, { "hold_p05", "held: 5%" },
		{ "hold_p50", "median" }, { "hold_p95", "95%" }, { "hold_lag", "behind" },
	};
	const struct report_table *t = hc_report_find_table(in->horizon, "horizon");
	long long last_n = t && t->nrows ? cell(t, t->nrows - 1, "holdings")->integer : 0;

	fprintf(fp, "<h3>Ending wealth over %g years</h3>\n", in->horizon_years);
	if (!in->horizon) {
		fputs("<p>Left out: ", fp);
		esc(fp, in->horizon_why ? in->horizon_why : "not computed");
		fputs(".</p>\n", fp);
		return;
	}
	fputs("<p>How much 1 invested becomes, for random portfolios of each count held two ways: rebalanced to "
	      "equal weights every period, and bought in equal amounts and left alone: the median outcome, the "
	      "unlucky (5%) and lucky (95%) ones, and the share of portfolios that end behind the benchmark on the "
	      "same path.</p>\n<dl class=\"facts\">\n", fp);
	fact(fp, "horizon (periods)", field(in->horizon, "horizon_periods"));
	fact(fp, "random portfolios (and paths) per count", field(in->horizon, "paths"));
	fact(fp, "paths from", field(in->horizon, "paths_from"));
	fact(fp, "benchmark", field(in->horizon, "benchmark"));
	fact(fp, "whole universe, rebalanced: median", field(in->horizon, "universe_rebal_p50"));
	fact(fp, "whole universe, bought and held: median", field(in->horizon, "universe_hold_p50"));
	fputs("</dl>\n", fp);
	figures(fp, in, HTMLREPORT_HORIZON);
	whole_table(fp, t, "Ending wealth of 1 invested by holding count: rebalanced, and bought and held, each with "
		    "its 5%, median and 95% across the random portfolios and the share ending behind the benchmark; "
		    "selected counts, every count in horizon.csv",
		    cols, sizeof cols / sizeof cols[0], readable_holdings, &last_n);
}

static void tail(FILE *fp, const struct htmlreport_input *in)
{
	section_open(fp, S_TAIL);
	if (in->tail_off) {
		fputs("<p>Left out: ", fp);
		esc(fp, in->tail_why ? in->tail_why : "not asked for");
		fputs(".</p>\n</section>\n", fp);
		return;
	}
	if (in->tail)
		tail_measures(fp, in);
	else {
		fputs("<p>Tail measures left out: ", fp);
		esc(fp, in->tail_why ? in->tail_why : "not computed");
		fputs(".</p>\n", fp);
	}
	horizon_part(fp, in);
	fputs("</section>\n", fp);
}

/* ---- funds ----------------------------------------------------------------------------- */

/* The audit's own notes (how its figures are computed; with the statutes'
 * readings, the timing of the tests and the coverage rule when the audit
 * gives them), those the universe's cautions do not already hold. */
static void audit_notes(FILE *fp, const struct htmlreport_input *in)
{
	size_t i, k, n = 0;

	for (i = 0; i < in->audit->nnotes; i++) {
		for (k = 0; k < in->universe->nnotes; k++)
			if (strcmp(in->audit->notes[i], in->universe->notes[k]) == 0)
				break;
		if (k < in->universe->nnotes)
			continue;
		fputs(n++ ? "<li>" : "<h3>How the audit reads the funds and the statutes</h3>\n<ul class=\"note\">\n<li>", fp);
		esc(fp, in->audit->notes[i]);
		fputs("</li>\n", fp);
	}
	if (n)
		fputs("</ul>\n", fp);
}

static void funds(FILE *fp, const struct htmlreport_input *in)
{
	/* two tables, so that each fits a page: the verdict with the figures
	 * that lead to it, then how much of each fund the figures rest on and
	 * the statute screens (with both readings of the 5% baskets when the
	 * audit gives them) */
	static const struct column cols[] = {
		{ "fund", "fund" }, { "verdict", "verdict" }, { "passed", "passes the policy" },
		{ "failed_rules", "fails on" },
		{ "holdings", "holdings" }, { "effective_holdings", "effective holdings 1/HHI" },
		{ "effective_issuers", "effective issuers" },
		{ "max_weight", "largest weight" }, { "sd", "sd a year" }, { "sd_percentile", "sd percentile among random portfolios" },
	};
	static const struct column cover[] = {
		{ "fund", "fund" }, { "missing_count", "holdings missing from the universe" },
		{ "missing_weight", "their weight" }, { "covered_weight", "weight its risk uses (coverage)" },
		{ "risk_holdings", "holdings its risk uses" },
		{ "ucits", "UCITS Art. 52" }, { "1940act", "1940 Act 5(b)(1)" },
		{ "basket_1940act_capped", "1940 Act basket, positions counted up to 5%" },
		{ "basket_1940act_excluded", "1940 Act basket, positions above 5% left out" },
		{ "ric", "IRC 851(b)(3)" },
		{ "basket_ric_capped", "IRC 851 basket, positions counted up to 5%" },
		{ "basket_ric_excluded", "IRC 851 basket, positions above 5% left out" },
	};
	static const struct column failures[] = {
		{ "fund", "fund" }, { "check", "fails on" }, { "figure", "figure" }, { "test", "test" }, { "limit", "limit" },
	};
	const struct report_table *t, *fails;

	section_open(fp, S_FUNDS);
	if (!in->audit) {
		fputs("<p>No holdings were given (<code>--holdings FILE</code> audits funds).</p>\n</section>\n", fp);
		return;
	}
	fputs("<p>Holdings from <code>", fp);
	esc(fp, in->holdings_file ? in->holdings_file : "?");
	fputs("</code>, judged against the universe above. Policy: ", fp);
	value(fp, field(in->audit, "policy"));
	fputs(". Funds failing it: ", fp);
	value(fp, field(in->audit, "failed_funds"));
	fputs(".", fp);
	/* an audit that judges coverage and reads the statutes says how */
	if (field(in->audit, "insufficient_funds")->kind != REPORT_NONE) {
		fputs(" Funds with insufficient data (risk figures on less than ", fp);
		value(fp, field(in->audit, "min_covered_weight"));
		fputs(" of the invested weight): ", fp);
		value(fp, field(in->audit, "insufficient_funds"));
		fputs(".", fp);
	}
	if (field(in->audit, "basket_reading")->kind == REPORT_TEXT) {
		fputs(" The 5% baskets' reading that decides the screens: ", fp);
		value(fp, field(in->audit, "basket_reading"));
		fputs(".", fp);
	}
	fputs("</p>\n", fp);
	t = hc_report_find_table(in->audit, "funds");
	whole_table(fp, t, "Audited funds: the verdict", cols, sizeof cols / sizeof cols[0], NULL, NULL);
	whole_table(fp, t, "Audited funds: coverage and the statute screens", cover, sizeof cover / sizeof cover[0],
		    NULL, NULL);
	fails = hc_report_find_table(in->audit, "failures");
	if (fails && fails->nrows)
		whole_table(fp, fails, "What fails, with the deciding figure and the limit", failures,
			    sizeof failures / sizeof failures[0], NULL, NULL);
	fputs("<p class=\"note\">The effective count 1/HHI is the number of equal weights with the same "
	      "concentration; the sd percentile places the fund among random portfolios of its own count (high is "
	      "riskier). Coverage: the risk figures use the holdings with a complete history in the universe "
	      "(holdings its risk uses).", fp);
	if (t && col(t, "verdict") >= 0 && col(t, "covered_weight") >= 0)
		fputs(" The weight they carry is the fund's coverage; a fund whose coverage is below the audit's "
		      "minimum gets the verdict \"insufficient data\" instead of a pass, and is neither passed nor "
		      "failed on its risk.", fp);
	fputs(" The statute columns test weights only and are written from memory of the texts (Directive "
	      "2009/65/EC Art. 52; Investment Company Act of 1940 s. 5(b)(1); Internal Revenue Code s. 851(b)(3)): "
	      "verify against the current text and defer to compliance counsel.", fp);
	if (t && col(t, "basket_1940act_capped") >= 0)
		fputs(" The 5% baskets are shown under both readings of the texts: a position above 5% of the fund "
		      "counted up to 5%, or left out entirely; the screen's yes or no uses the reading the audit was "
		      "run with (docs/audit.md).", fp);
	fputs("</p>\n", fp);
	audit_notes(fp, in);
	figures(fp, in, HTMLREPORT_FUNDS);
	fputs("</section>\n", fp);
}

/* ---- through time -------------------------------------------------------------------------- */

static void through_time(FILE *fp, const struct htmlreport_input *in)
{
	const struct report_table *t = hc_report_find_table(in->rolling, "windows");
	struct column cols[24] = {
		{ "window_end", "window to" }, { "window_start", "from" }, { "securities", "securities" },
		{ "average_correlation", "average correlation" }, { "floor_sd", "floor sd a year" },
	};
	size_t n = 5, j;

	section_open(fp, S_TIME);
	if (!t) {
		fputs("<p>Left out: ", fp);
		esc(fp, in->rolling_why ? in->rolling_why : "no rolling windows");
		fputs(".</p>\n</section>\n", fp);
		return;
	}
	fputs("<p>Each exact rule's count from the averages of each rolling window, plotted at the window's last "
	      "date. A rising count means the same diversification now takes more holdings: averages drift over "
	      "decades (Campbell, Lettau, Malkiel &amp; Xu, 2001, Journal of Finance 56(1)), so a count set once is "
	      "worth revisiting.</p>\n", fp);
	figures(fp, in, HTMLREPORT_TIME);
	for (j = 0; j < t->ncols && n < 24; j++)
		if (strncmp(t->cols[j].key, "count_", 6) == 0) {
			cols[n].key = t->cols[j].key;
			cols[n++].title = t->cols[j].title;
		}
	whole_table(fp, t, "Each window's count by rule", cols, n, NULL, NULL);
	fputs("</section>\n", fp);
}

/* ---- cautions and appendix ------------------------------------------------------------------- */

static void cautions(FILE *fp, const struct htmlreport_input *in)
{
	size_t i;

	section_open(fp, S_CAUTIONS);
	fputs("<ul>\n", fp);
	for (i = 0; i < in->universe->nnotes; i++) {
		fputs("<li>", fp);
		esc(fp, in->universe->notes[i]);
		fputs("</li>\n", fp);
	}
	for (i = 0; i < in->ncautions; i++) {
		fputs("<li>", fp);
		esc(fp, in->cautions[i]);
		fputs("</li>\n", fp);
	}
	fputs("</ul>\n</section>\n", fp);
}

static void appendix(FILE *fp, const struct htmlreport_input *in)
{
	static const struct column curve_cols[] = {
		{ "n", "holdings" }, { "expected_variance", "E[var]" }, { "expected_sd", "sqrt E[var] a year" },
		{ "variance_sd", "sd of var" }, { "sampled_mean_variance", "sampled var" },
		{ "sampled_variance_se", "its MC s.e." }, { "sampled_mean_sd", "mean sd" }, { "z_score", "z" },
	};
	static const struct column rule_cols[] = {
		{ "rule", "rule" }, { "count", "count" }, { "count_p50", "median of replicates" },
		{ "threshold", "threshold" }, { "replicates", "replicates" }, { "replicates_met", "replicates meeting it" },
	};
	const struct report_table *t = hc_report_find_table(in->curve, "curve");
	long long last_n;

	section_open(fp, S_APPENDIX);
	fputs("<p>For the analyst: the exact figures beside the sampled ones they check. z is the sampled mean "
	      "variance's distance from the exact expected variance in Monte Carlo standard errors; values mostly "
	      "within &#177;2 say the sampler and the formula agree (at N = M every draw is the whole universe, so "
	      "there is no z). sqrt E[var] is the square root of the expected variance, which is above the mean sd "
	      "of random portfolios (the mean of a square root is below the square root of the mean).</p>\n", fp);
	fputs("<dl class=\"facts\">\n", fp);
	fact(fp, "random portfolios per count", field(in->curve, "paths"));
	fact(fp, "seed", field(in->curve, "seed"));
	fact(fp, "bootstrap", field(in->enough, "bootstrap"));
	fact(fp, "replicates", field(in->enough, "replicates"));
	fact(fp, "block length (periods)", field(in->enough, "block_length"));
	fact(fp, "average variance a year", field(in->universe, "average_variance"));
	fact(fp, "average covariance a year", field(in->universe, "average_covariance"));
	fputs("</dl>\n", fp);
	last_n = t && t->nrows ? cell(t, t->nrows - 1, "n")->integer : 0;
	whole_table(fp, t, "Exact and sampled, at the selected counts", curve_cols,
		    sizeof curve_cols / sizeof curve_cols[0], readable, &last_n);
	whole_table(fp, hc_report_find_table(in->enough, "rules"), "The rules' thresholds and replicates", rule_cols,
		    sizeof rule_cols / sizeof rule_cols[0], NULL, NULL);
	fputs("<p class=\"note\">Every figure is in the folder beside this file: <code>summary.json</code>, "
	      "<code>curve.csv</code>, <code>enough.csv</code> and the other CSVs, and the gnuplot scripts "
	      "(<code>*.gp</code>) with their data.</p>\n</section>\n", fp);
}

/* ---- the document -------------------------------------------------------------------------------- */

static void head(FILE *fp, const struct htmlreport_input *in)
{
	const char *src = text(field(in->universe, "source")), *base = src ? strrchr(src, '/') : NULL;
	size_t s;

	fputs("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
	      "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
	      "<meta name=\"generator\" content=\"holdcount ", fp);
	esc(fp, in->version);
	fputs("\">\n<title>Holding-count report: ", fp);
	esc(fp, base ? base + 1 : src ? src : "universe");
	fputs("</title>\n<style>\n", fp);
	fputs(stylesheet, fp);
	fputs("</style>\n</head>\n<body>\n<header>\n<h1>Holding-count report: ", fp);
	esc(fp, base ? base + 1 : src ? src : "universe");
	fputs("</h1>\n<p class=\"meta\">How many holdings this universe needs, from its history ", fp);
	value(fp, field(in->universe, "first_date"));
	fputs(" to ", fp);
	value(fp, field(in->universe, "last_date"));
	fputs(". Written by holdcount ", fp);
	esc(fp, in->version);
	fputs(" on ", fp);
	esc(fp, in->date);
	fputs(".</p>\n</header>\n<nav aria-label=\"contents\"><ol>\n", fp);
	for (s = 0; s < hc_htmlreport_nsections; s++) {
		if ((s == S_SINCE && !in->compare))
			continue;
		fprintf(fp, "<li><a href=\"#%s\">", hc_htmlreport_sections[s][0]);
		esc(fp, hc_htmlreport_sections[s][1]);
		fputs("</a></li>\n", fp);
	}
	fputs("</ol></nav>\n<main>\n", fp);
}

int hc_htmlreport_write(FILE *fp, const struct htmlreport_input *in, struct hc_error *err)
{
	if (!in || !in->universe || !in->curve || !in->enough)
		return hc_error(err, HC_EUSAGE, "the HTML report needs the universe, the curve and the rules");
	errno = 0;
	head(fp, in);
	recommendation(fp, in);
	if (in->compare)
		since(fp, in);
	universe(fp, in);
	curve(fp, in);
	rules(fp, in);
	tail(fp, in);
	funds(fp, in);
	through_time(fp, in);
	cautions(fp, in);
	appendix(fp, in);
	fputs("</main>\n<footer><p>Written by holdcount ", fp);
	esc(fp, in->version);
	fputs(". The figures are historical estimates; nothing here is investment advice.</p></footer>\n"
	      "</body>\n</html>\n", fp);
	if (ferror(fp))
		return hc_error(err, HC_EIO, "cannot write the HTML report: %s", strerror(errno ? errno : EIO));
	return HC_OK;
}

int hc_htmlreport_read_svg(char **svg, const char *dir, const char *name, struct hc_error *err)
{
	char path[4096];
	size_t len = 0, got;
	char *buf = NULL, *nb;
	FILE *fp;

	*svg = NULL;
	snprintf(path, sizeof path, "%s/%s", dir, name);
	if (!(fp = fopen(path, "rb")))
		return hc_error(err, HC_EIO, "cannot read '%s': %s", path, strerror(errno));
	do {
		if (!(nb = hc_realloc(buf, len + 65536 + 1))) {
			fclose(fp);
			hc_free(buf);
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", path);
		}
		buf = nb;
		got = fread(buf + len, 1, 65536, fp);
		len += got;
	} while (got == 65536 && len <= HTMLREPORT_SVG_MAX);
	if (ferror(fp) || len > HTMLREPORT_SVG_MAX) {
		fclose(fp);
		hc_free(buf);
		return hc_error(err, HC_EIO, "cannot read '%s': %s", path, len > HTMLREPORT_SVG_MAX ? "too large" : "read error");
	}
	fclose(fp);
	buf[len] = '\0';
	*svg = buf;
	return HC_OK;
}
