/*
 * cmd_report.c - `holdcount report [UNIVERSE] -o DIR`: the quarterly report
 * folder.
 *
 * One run computes the curve, the rules (with their bootstrap interval) and,
 * with --holdings, the audit through the very functions `holdcount curve`,
 * `enough` and `audit` call (cli.h: cli_curve_sample, cli_enough_data,
 * cli_audit_data), with the same option groups, so the same options and
 * seed give the same struct report objects.  Each is rendered to its CSV
 * (curve.csv, enough.csv, audit.csv), to summary.json (each report's JSON
 * object under its name) and to the tables of summary.md.  No figure is
 * computed twice.  Plots are written by the library's plots module from the
 * same result types.
 *
 * The folder is built under a temporary name and renamed into place
 * (reportdir.h); this file's signal handler removes the temporary folder and
 * any half-written file on SIGINT/SIGTERM.
 */
#define _GNU_SOURCE 1

#include <limits.h>
#include <math.h>
#include <signal.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "cli.h"
#include "holdcount/audit.h"
#include "holdcount/bootstrap.h"
#include "holdcount/curve.h"
#include "holdcount/holdings.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/outfile.h"
#include "holdcount/plots.h"
#include "holdcount/reportdir.h"
#include "holdcount/rules.h"
#include "holdcount/rolling.h"
#include "holdcount/sampler.h"
#include "holdcount/strata.h"
#include "holdcount/universe.h"

/* The rolling windows a report shows unless --window says otherwise: five
 * years of periods, one starting every year, when the history holds at
 * least this many windows' worth of periods (common practice for a
 * committee's look back, no single source; two windows' length gives six
 * windows a year apart, enough for a line to show a drift). */
#define REPORT_WINDOW_YEARS 5
#define REPORT_WINDOW_MIN_SPANS 2

/* The rows of the curve shown in summary.md (the CSV has every grid row). */
static const size_t readable_grid[] = { 1, 2, 3, 5, 10, 15, 20, 25, 30, 40, 50, 75, 100, 150, 200, 300, 500, 1000 };

struct report_opts {
	const char *output;
	int force;
	int plot_format;
	int quiet;
	size_t window, step;       /* --window (0 = none) and --step (0 = a year's periods) as given */
	struct cli_rules rul;
	struct cli_holdings hold;
	struct cli_policy pol;
	struct cli_sampling sam;
	struct cli_universe uni;
};

static const char *const format_words[] = { "png", "svg", "pdf", NULL };

#define RO(f) offsetof(struct report_opts, f)
static const struct cli_option report_own[] = {
	{ "output", 'o', CLI_STRING, RO(output), "DIR", "the report folder to write (required)", NULL, NULL },
	{ "force", 0, CLI_FLAG, RO(force), NULL,
	  "replace an existing report folder (only once the new one is complete)", NULL, NULL },
	{ "plot-format", 0, CLI_CHOICE, RO(plot_format), NULL, "format of the rendered plots", format_words, "png" },
	{ "quiet", 'q', CLI_FLAG, RO(quiet), NULL, "no progress display on standard error", NULL, NULL },
	{ "window", 0, CLI_COUNT, RO(window), "W",
	  "the exact rules' counts in rolling windows of W periods (rolling.csv and its plot); 0 leaves them out",
	  NULL, "five years of periods, when the history holds two such windows" },
	{ "step", 0, CLI_COUNT, RO(step), "S", "periods between two rolling windows' starts", NULL,
	  "one year of periods" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group report_group = { "report options", report_own };

/* The groups of `enough` and `audit` themselves: one table per option. */
/* The report reads complete return series only: --missing could only
 * repeat its default, and --min-coverage would change nothing. */
static const struct cli_omit report_universe_omit[] = {
	{ "missing", "the report draws its random portfolios, its lag-share rule and its audit from "
	  "complete return series (securities with gaps are dropped); curve, enough and audit take "
	  "--missing pairwise" },
	{ "min-coverage", "it is the coverage --missing pairwise asks for, and the report reads complete "
	  "return series only; curve, enough and audit take both" },
	{ "covariance", "the report needs a return history (its dates, lag-share rule and rolling windows "
	  "are time-based); describe, curve, enough and audit take a covariance matrix" },
	{ NULL, NULL }
};

static const struct cli_group_use report_groups[] = {
	{ &report_group, 0, NULL },
	{ &cli_group_rules, RO(rul), NULL },
	{ &cli_group_holdings, RO(hold), NULL },
	{ &cli_group_policy, RO(pol), NULL },
	{ &cli_group_sampling, RO(sam), NULL },
	{ &cli_group_universe, RO(uni), report_universe_omit },
	{ NULL, 0, NULL }
};

const struct cli_command cli_command_report = {
	"report", cmd_report, "write a report folder: tables, JSON summary, gnuplot scripts and plots",
	"[UNIVERSE]",
	"Writes DIR with summary.md (the universe, the curve at a readable grid, every rule's count with "
	"its 90% bootstrap interval, the audited funds with their pass or fail under the policy options, "
	"the plots and the cautions), summary.json (every figure of the summary), curve.csv, enough.csv "
	"and audit.csv (what 'holdcount curve', 'enough' and 'audit' print with --format csv and the same "
	"options), gnuplot scripts with their data (*.gp, *.dat) and, when gnuplot is on the PATH, their "
	"renders; and rolling.csv (what 'holdcount rolling' prints) with the plot of the count needed "
	"through time, in windows of five years of periods a year apart when the history holds two such "
	"windows (--window W and --step S choose others, --window 0 leaves them out; summary.md says "
	"which). --sizes sets the curve's grid; the rules look at every count. "
	"The folder is built under a temporary name and renamed into place, so an interrupted run leaves "
	"the previous report or none. With no UNIVERSE it runs on the bundled invented demo universe, its "
	"sectors and funds. Exit status 1 (after the folder is written) when a fund fails a policy option, "
	"as with 'holdcount audit'.",
	0, 1, report_groups
};

/* Everything one run computes and builds; released by run_release. */
struct run {
	const struct report_opts *o;
	const char *universe_path;
	struct cli_holdings hold;          /* o->hold with the demo's files filled in */
	struct universe *u;
	struct moments mo;
	struct curve *curve, *full;
	struct rules_config cfg;
	struct rule_result rules[RULES_COUNT];
	size_t nrules;
	struct cli_strata strat;           /* unused (no --strata in a report), as enough's default */
	struct holdings *h;
	struct holdings_labels *labels;
	struct audit_result *audit;
	struct report *rep_universe, *rep_curve, *rep_enough, *rep_audit, *rep_plots;
	size_t window, step;               /* the rolling windows used; window 0 = none */
	int window_default;                /* chosen by the report, not by --window */
	char window_why[256];              /* why there are none, when window is 0 */
	struct universe *every_security;   /* rolling windows: the file with no security dropped */
	struct rolling_result *rolling;
	struct report *rep_rolling;
	int rendered;
	char gnuplot[PATH_MAX];
};

static void run_release(struct run *r)
{
	hc_report_free(r->rep_universe);
	hc_report_free(r->rep_curve);
	hc_report_free(r->rep_enough);
	hc_report_free(r->rep_audit);
	hc_report_free(r->rep_plots);
	hc_report_free(r->rep_rolling);
	hc_rolling_result_free(r->rolling);
	hc_universe_free(r->every_security);
	hc_audit_result_free(r->audit);
	hc_holdings_labels_free(r->labels);
	hc_holdings_free(r->h);
	cli_strata_release(&r->strat);
	hc_curve_free(r->full);
	hc_curve_free(r->curve);
	hc_universe_free(r->u);
}

/* ---- progress and signals ---------------------------------------------------- */

static int stage_enabled(const struct report_opts *o)
{
	return !o->quiet && isatty(STDERR_FILENO);
}

static void stage(const struct report_opts *o, const char *what)
{
	cli_stage("report", o->quiet, what);
}

static void on_signal(int sig)
{
	static const char msg[] = "holdcount report: interrupted; the unfinished report folder was removed\n";
	ssize_t ignored;

	(void)sig;
	hc_outfile_unlink_pending();
	hc_reportdir_unlink_pending();
	ignored = write(STDERR_FILENO, msg, sizeof msg - 1);
	(void)ignored;
	_exit(HC_EINTERRUPT);
}

static void install_signals(void)
{
	struct sigaction sa, old;
	int sigs[2] = { SIGINT, SIGTERM }, i;

	memset(&sa, 0, sizeof sa);
	sa.sa_handler = on_signal;
	sigemptyset(&sa.sa_mask);
	for (i = 0; i < 2; i++)
		/* a signal the parent ignores (background job, nohup) stays ignored */
		if (sigaction(sigs[i], NULL, &old) == 0 && old.sa_handler != SIG_IGN)
			sigaction(sigs[i], &sa, NULL);
}

/* ---- computing ----------------------------------------------------------------- */

/* Each step prints its own error and returns the exit status. */

/* The file with every security, gaps kept, for --window: each rolling
 * window applies the missing-data policy itself, as `holdcount rolling`. */
static int load_every_security(const struct report_opts *o, const char *path, struct universe **out)
{
	struct universe_options uo;
	struct hc_error err;
	int rc;

	if ((rc = cli_universe_options("report", &o->uni, &uo)) != HC_OK)
		return rc;
	uo.missing = UNIVERSE_MISSING_KEEP;
	hc_error_clear(&err);
	return hc_universe_load(out, path, &uo, &err) ? cli_fail("report", &err) : HC_OK;
}

/* The curve as `holdcount curve` computes and reports it: exact at the
 * grid, sampled there; and the exact curve at every count for the plots. */
static int compute_curve(struct run *r)
{
	struct cli_curve_source src;
	struct hc_error err;
	size_t *sizes = NULL, nsizes = 0, i;
	int rc;

	if ((rc = cli_sizes("report", r->o->sam.sizes, r->u->m, &sizes, &nsizes)) != HC_OK)
		return rc;
	hc_error_clear(&err);
	rc = hc_curve_exact(&r->curve, &r->mo, sizes, nsizes, r->u->periods_per_year, &err);
	if (rc == HC_OK && r->o->sam.paths > 0) {
		cli_stage("report", r->o->quiet, "sampling random portfolios at the curve's counts");
		rc = cli_curve_sample(&r->o->sam, r->o->quiet, r->u, NULL, r->curve, sizes, nsizes, &err);
	}
	hc_free(sizes);
	sizes = NULL;
	if (rc == HC_OK && !(sizes = hc_calloc(r->u->m, sizeof *sizes)))
		rc = hc_error(&err, HC_ENOMEM, "out of memory for the count grid");
	for (i = 0; rc == HC_OK && i < r->u->m; i++)
		sizes[i] = i + 1;
	if (rc == HC_OK)
		rc = hc_curve_exact(&r->full, &r->mo, sizes, r->u->m, r->u->periods_per_year, &err);
	hc_free(sizes);
	if (rc != HC_OK)
		return cli_fail("report", &err);
	src.path = r->u->source ? r->u->source : r->universe_path;
	src.input = "return history";
	src.m = r->u->m;
	src.dropped = r->u->ndropped;
	src.periods = r->u->t;
	src.annualised = 1;
	r->rep_curve = hc_report_alloc();
	if (!r->rep_curve || cli_curve_fields(r->rep_curve, &src, &r->mo, r->curve) ||
	    cli_strata_fields(r->rep_curve, &r->strat) || hc_report_add_cautions(r->rep_curve)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		return cli_fail("report", &err);
	}
	return HC_OK;
}

/* The exact rules, with the report's parameters, in every window; no
 * bootstrap per window (that is `holdcount rolling --bootstrap`). */
static int compute_rolling(struct run *r)
{
	struct rolling_options ro;
	struct cli_progress prog;
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	hc_rolling_options_init(&ro);
	ro.window = r->window;
	ro.step = r->step;
	ro.rules = r->cfg;
	ro.rules.selected &= RULES_EXACT_MASK;
	cli_progress_init(&prog, "windows", "windows", r->o->quiet);
	ro.progress = cli_progress_update;
	ro.progress_ctx = &prog;
	rc = hc_rolling_run(&r->rolling, r->every_security, &ro, &err);
	cli_progress_finish(&prog);
	if (rc != HC_OK)
		return cli_fail("report", &err);
	r->rep_rolling = hc_report_alloc();
	if (!r->rep_rolling || hc_rolling_report(r->rep_rolling, r->rolling, &err) ||
	    cli_rolling_context(r->rep_rolling, r->rolling) || hc_report_add_cautions(r->rep_rolling)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the rolling report");
		return cli_fail("report", &err);
	}
	return HC_OK;
}

static int compute(struct run *r)
{
	struct hc_error err;
	int rc;

	stage(r->o, "exact curve");
	hc_error_clear(&err);
	if (hc_moments_from_universe(&r->mo, r->u, &err) != HC_OK)
		return cli_fail("report", &err);
	if ((rc = compute_curve(r)) != HC_OK)
		return rc;
	stage(r->o, "exact rules");
	rc = cli_enough_data("report", &r->o->rul, &r->o->sam, &r->strat, r->o->quiet, 1, r->u, &r->mo, &r->cfg,
			     r->rules, &r->nrules, &r->rep_enough);
	if (rc == HC_OK && r->hold.holdings) {
		stage(r->o, "audit of the funds");
		rc = cli_audit_data("report", &r->hold, &r->o->pol, &r->o->sam, r->o->quiet, r->u, &r->mo, &r->h,
				    &r->labels, &r->audit, &r->rep_audit);
	}
	if (rc == HC_OK && r->window) {
		stage(r->o, "rolling windows");
		rc = compute_rolling(r);
	}
	return rc;
}

/* ---- the report objects ----------------------------------------------------------- */

static int build_universe(struct run *r)
{
	struct report *rep = r->rep_universe = hc_report_alloc();
	char first[16], last[16];
	struct report_table *t;
	size_t i;

	if (!rep)
		return HC_ENOMEM;
	hc_universe_format_date(r->u->dates[0], first);
	hc_universe_format_date(r->u->dates[r->u->t - 1], last);
	if (hc_report_add_text(rep, "source", "source", r->u->source ? r->u->source : "") ||
	    hc_report_add_int(rep, "securities_read", "securities read", (long long)r->u->m_read) ||
	    hc_report_add_int(rep, "securities", "securities kept", (long long)r->u->m) ||
	    hc_report_add_int(rep, "securities_dropped", "securities dropped", (long long)r->u->ndropped) ||
	    hc_report_add_int(rep, "periods", "periods", (long long)r->u->t) ||
	    hc_report_add_text(rep, "first_date", "first period", first) ||
	    hc_report_add_text(rep, "last_date", "last period", last) ||
	    cli_add_scale(rep, r->u->periods_per_year, 1) ||
	    hc_report_add_bool(rep, "periods_detected", "periods per year detected from the dates",
			    r->u->periods_detected) ||
	    hc_report_add_real(rep, "average_variance", "average variance", r->mo.average_variance * r->u->periods_per_year,
			    REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(rep, "average_covariance", "average covariance",
			    r->mo.average_covariance * r->u->periods_per_year, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(rep, "average_correlation", "average correlation",
			    r->mo.has_correlation ? r->mo.average_correlation : NAN, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(rep, "floor_sd", "floor sd (unbounded universe)",
			    r->curve->floor_variance >= 0 ? sqrt(r->curve->floor_variance) : NAN, REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(rep, "universe_sd", "equal-weight universe sd", sqrt(r->curve->universe_variance),
			    REPORT_STYLE_PERCENT))
		return HC_ENOMEM;
	if (r->u->ndropped) {
		t = hc_report_add_table(rep, "dropped", "securities dropped");
		if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
		    hc_report_table_add_column(t, "reason", "reason", REPORT_STYLE_PLAIN))
			return HC_ENOMEM;
		for (i = 0; i < r->u->ndropped; i++)
			if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, r->u->dropped[i].id) ||
			    hc_report_table_set_text(t, i, 1, r->u->dropped[i].reason))
				return HC_ENOMEM;
	}
	return hc_report_add_cautions(rep);
}

static int build_plots_report(struct run *r, const struct plots_input *pin, const unsigned char *made)
{
	struct report *rep = r->rep_plots = hc_report_alloc();
	struct report_table *t;
	char name[REPORTDIR_NAME_MAX], cap[1024];
	size_t row;
	int k;

	if (!rep || hc_report_add_text(rep, "format", "plot format", hc_plots_format_name(r->o->plot_format)) ||
	    hc_report_add_bool(rep, "rendered", "rendered with gnuplot", r->rendered))
		return HC_ENOMEM;
	t = hc_report_add_table(rep, "plots", "plots");
	if (!t || hc_report_table_add_column(t, "name", "plot", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "title", "title", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "script", "script", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "image", "image", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "caption", "caption", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		if (hc_report_table_add_row(t))
			return HC_ENOMEM;
		row = t->nrows - 1;
		snprintf(name, sizeof name, "%s.gp", hc_plots_name(k));
		if (hc_report_table_set_text(t, row, 0, hc_plots_name(k)) || hc_report_table_set_text(t, row, 1, hc_plots_title(k)) ||
		    hc_report_table_set_text(t, row, 2, name) ||
		    hc_report_table_set_text(t, row, 4, hc_plots_caption(k, pin, cap, sizeof cap)))
			return HC_ENOMEM;
		snprintf(name, sizeof name, "%s.%s", hc_plots_name(k), hc_plots_format_name(r->o->plot_format));
		if (r->rendered && hc_report_table_set_text(t, row, 3, name))
			return HC_ENOMEM;
	}
	return HC_OK;
}

/* ---- writing the folder -------------------------------------------------------------- */

static int write_report_file(struct reportdir *rd, const char *name, const struct report *rep,
			     const struct report_writer *w, struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, name, &fp, err)) != HC_OK)
		return rc;
	rc = w->write(fp, rep, err);
	if (rc != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, name, err);
}

/* One table of rep as CSV (hc_report_write_csv_part), as `holdcount audit
 * --table KEY --format csv` prints it. */
static int write_part_file(struct reportdir *rd, const char *name, const struct report *rep, const char *table,
			   struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, name, &fp, err)) != HC_OK)
		return rc;
	rc = hc_report_write_csv_part(fp, rep, table, err);
	if (rc != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, name, err);
}

/* One report's JSON object, without its trailing newline, into fp. */
static int json_member(FILE *fp, const char *key, const struct report *rep, int last, struct hc_error *err)
{
	char *buf = NULL;
	size_t len = 0;
	FILE *mem;
	int rc;

	fprintf(fp, "  \"%s\": ", key);
	if (!rep) {
		fprintf(fp, "null%s\n", last ? "" : ",");
		return HC_OK;
	}
	mem = open_memstream(&buf, &len);
	if (!mem)
		return hc_error(err, HC_ENOMEM, "out of memory writing summary.json");
	rc = hc_report_writer_json->write(mem, rep, err);
	if (fclose(mem) != 0 && rc == HC_OK)
		rc = hc_error(err, HC_ENOMEM, "out of memory writing summary.json");
	if (rc == HC_OK) {
		while (len && (buf[len - 1] == '\n' || buf[len - 1] == ' '))
			len--;
		fwrite(buf, 1, len, fp);
		fprintf(fp, "%s\n", last ? "" : ",");
	}
	free(buf);   /* open_memstream's buffer comes from malloc */
	return rc;
}

static int write_json(struct reportdir *rd, struct run *r, struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, "summary.json", &fp, err)) != HC_OK)
		return rc;
	fprintf(fp, "{\n  \"holdcount_version\": \"%s\",\n", HOLDCOUNT_VERSION);
	rc = json_member(fp, "universe", r->rep_universe, 0, err);
	rc = rc ? rc : json_member(fp, "curve", r->rep_curve, 0, err);
	rc = rc ? rc : json_member(fp, "enough", r->rep_enough, 0, err);
	rc = rc ? rc : json_member(fp, "audit", r->rep_audit, 0, err);
	rc = rc ? rc : json_member(fp, "rolling", r->rep_rolling, 0, err);
	rc = rc ? rc : json_member(fp, "plots", r->rep_plots, 1, err);
	fputs("}\n", fp);
	if (rc != HC_OK) {
		fclose(fp);
		return rc;
	}
	return hc_reportdir_close(rd, fp, "summary.json", err);
}

/* ---- summary.md ------------------------------------------------------------------------ */

static long col_of(const struct report_table *t, const char *key)
{
	size_t j;

	for (j = 0; j < t->ncols; j++)
		if (strcmp(t->cols[j].key, key) == 0)
			return (long)j;
	return -1;
}

static const struct report_table *table_of(const struct report *rep, const char *key)
{
	size_t i;

	for (i = 0; rep && i < rep->ntables; i++)
		if (strcmp(rep->tables[i]->key, key) == 0)
			return rep->tables[i];
	return NULL;
}

/* A cell as the text writer would show it; '|' escaped for Markdown. */
static void md_value(FILE *fp, const struct report_value *v, int style)
{
	const char *s;

	switch (v->kind) {
	case REPORT_REAL:
		if (style == REPORT_STYLE_PERCENT)
			fprintf(fp, "%.2f%%", 100.0 * v->real);
		else if (style == REPORT_STYLE_FIXED2)
			fprintf(fp, "%.2f", v->real);
		else if (style == REPORT_STYLE_FIXED4)
			fprintf(fp, "%.4f", v->real);
		else if (style == REPORT_STYLE_SCI)
			fprintf(fp, "%.4e", v->real);
		else
			fprintf(fp, "%.6g", v->real);
		break;
	case REPORT_INT:
		fprintf(fp, "%lld", v->integer);
		break;
	case REPORT_TEXT:
		for (s = v->text; s && *s; s++)
			fputs(*s == '|' ? "\\|" : (char[2]){ *s == '\n' ? ' ' : *s, 0 }, fp);
		break;
	case REPORT_BOOL:
		fputs(v->integer ? "yes" : "no", fp);
		break;
	default:   /* no value, or its reason (hc_report_table_set_none) */
		for (s = v->text ? v->text : "-"; *s; s++)
			fputs(*s == '|' ? "\\|" : (char[2]){ *s == '\n' ? ' ' : *s, 0 }, fp);
	}
}

static const struct report_value *cell(const struct report_table *t, size_t row, const char *key)
{
	long j = col_of(t, key);
	static const struct report_value none = { REPORT_NONE, 0, 0, 0, NULL };

	return j < 0 ? &none : &t->cells[row * t->ncols + (size_t)j];
}

static int style_of(const struct report_table *t, const char *key)
{
	long j = col_of(t, key);

	return j < 0 ? REPORT_STYLE_PLAIN : t->cols[j].style;
}

/* Numbers align right, words left: a column is numeric when every cell
 * that holds something is a number. */
static int numeric_column(const struct report_table *t, const char *key)
{
	long j = col_of(t, key);
	size_t i;
	int any = 0;

	for (i = 0; j >= 0 && i < t->nrows; i++) {
		int kind = t->cells[i * t->ncols + (size_t)j].kind;
		if (kind == REPORT_TEXT || kind == REPORT_BOOL || t->cells[i * t->ncols + (size_t)j].text)
			return 0;
		any |= kind != REPORT_NONE;
	}
	return any;
}

/* A Markdown table of the given columns (key, heading) of t; rows where
 * keep(row) says so. */
static void md_table(FILE *fp, const struct report_table *t, const char *const (*cols)[2], size_t ncols,
		     int (*keep)(const struct report_table *, size_t, const void *), const void *ctx)
{
	size_t i, j;

	for (j = 0; j < ncols; j++)
		fprintf(fp, "| %s ", cols[j][1]);
	fputs("|\n", fp);
	for (j = 0; j < ncols; j++)
		fputs(j > 0 && numeric_column(t, cols[j][0]) ? "|--:" : "|:--", fp);
	fputs("|\n", fp);
	for (i = 0; i < t->nrows; i++) {
		if (keep && !keep(t, i, ctx))
			continue;
		for (j = 0; j < ncols; j++) {
			fputs("| ", fp);
			md_value(fp, cell(t, i, cols[j][0]), style_of(t, cols[j][0]));
			fputc(' ', fp);
		}
		fputs("|\n", fp);
	}
	fputc('\n', fp);
}

/* A row of the readable grid (and the last, N = M).  A grid given with
 * --sizes that shares few counts with it is shown whole instead. */
static int on_readable_grid(const struct report_table *t, size_t row, const void *ctx);

static int readable_row(const struct report_table *t, size_t row, const void *ctx)
{
	size_t i, kept = 0;

	for (i = 0; i < t->nrows; i++)
		kept += (size_t)on_readable_grid(t, i, ctx);
	return kept >= 6 || kept == t->nrows ? on_readable_grid(t, row, ctx) : 1;
}

static int on_readable_grid(const struct report_table *t, size_t row, const void *ctx)
{
	const struct report_value *v = cell(t, row, "n");
	size_t m = *(const size_t *)ctx, k;

	if (v->kind != REPORT_INT)
		return 0;
	if ((size_t)v->integer == m)
		return 1;
	for (k = 0; k < sizeof readable_grid / sizeof readable_grid[0]; k++)
		if ((size_t)v->integer == readable_grid[k])
			return 1;
	return 0;
}

static void md_field(FILE *fp, const struct report *rep, const char *key, const char *label)
{
	size_t i;

	for (i = 0; i < rep->nfields; i++)
		if (strcmp(rep->fields[i].key, key) == 0) {
			fprintf(fp, "- %s: ", label);
			md_value(fp, &rep->fields[i].value, rep->fields[i].value.style);
			fputc('\n', fp);
		}
}

static void md_universe(FILE *fp, const struct run *r)
{
	static const char *const fields[][2] = {
		{ "source", "source" }, { "securities_read", "securities read" },
		{ "securities", "securities kept (complete over the sample)" },
		{ "securities_dropped", "securities dropped" }, { "periods", "periods" },
		{ "first_date", "first period" }, { "last_date", "last period" },
		{ "periods_per_year", "periods per year" }, { "annualisation", "annualisation" },
		{ "average_variance", "average variance (a year)" }, { "average_covariance", "average covariance (a year)" },
		{ "average_correlation", "average correlation" },
		{ "floor_sd", "floor sd, sqrt of the average covariance (a year)" },
		{ "universe_sd", "sd of the equal-weight portfolio of all securities (a year)" },
	};
	size_t i;

	fputs("## The universe\n\n", fp);
	for (i = 0; i < sizeof fields / sizeof fields[0]; i++)
		md_field(fp, r->rep_universe, fields[i][0], fields[i][1]);
	fputc('\n', fp);
}

static void md_curve(FILE *fp, const struct run *r)
{
	static const char *const cols[][2] = {
		{ "n", "holdings" }, { "expected_sd", "sqrt E[var] a year" },
		{ "diversifiable_share", "share above the floor" }, { "expected_tracking_error", "RMS tracking error a year" },
		{ "sampled_mean_sd", "mean sd (random)" }, { "sd_p05", "sd 5%" }, { "sd_p95", "sd 95%" },
		{ "z_score", "z (sampled vs exact)" },
	};
	const struct report_table *t = table_of(r->rep_curve, "curve");

	fputs("## Risk by holding count\n\n", fp);
	fprintf(fp, "Exact figures for a random equal-weight portfolio of N holdings drawn without replacement, "
		"and %zu random portfolios per count (seed %llu) to check them: z is the sampled mean variance's "
		"distance from the exact one in Monte Carlo standard errors. Every grid row is in `curve.csv`.\n\n",
		r->curve->paths, (unsigned long long)r->curve->seed);
	if (t)
		md_table(fp, t, cols, sizeof cols / sizeof cols[0], readable_row, &r->u->m);
}

/* What each rule asks, in a line a committee reader can follow; sources as
 * in docs/enough.md. */
static const char *const rule_legend[RULES_COUNT] = {
	"near-floor: the expected sd is within x of the floor, the sd no number of holdings gets below",
	"marginal: one more holding lowers the expected sd by less than eps a year",
	"band: the q-quantile of random portfolios' sd is within x of the floor, so even an unlucky "
	"draw of that many holdings is near it",
	"next-holding (this tool's own rule): the premium earned on the risk one more holding removes is "
	"at most that holding's yearly cost",
	"tracking-error: the root mean square tracking error against the equal-weight portfolio of the whole "
	"universe is within the budget",
	"lag-share (this tool's own rule): fewer than p of random portfolios, rebalanced every period, lag "
	"the universe's return over the sample by more than d a year",
	"statman-borrowing (Statman, 1987, Journal of Financial and Quantitative Analysis 22(3)): the extra "
	"return of the index levered to the portfolio's sd, premium over the borrowing rate times "
	"(sd(N)/sd(index) - 1), is at most the index fund's cost disadvantage",
	"statman-lending (Statman, 1987): the same with the premium over the lending rate",
	"alexeev-tapon (Alexeev & Tapon, 2014, Journal of Banking & Finance 46): a random portfolio removes "
	"at least x of the removable variance with probability at least q (gamma approximation from the "
	"exact mean and spread)",
	"alexeev-tapon-sampled: the same rule counted over sampled random portfolios",
};

static void md_rules(FILE *fp, const struct run *r)
{
	static const char *const cols[][2] = {
		{ "rule", "rule" }, { "parameters", "parameters" }, { "count", "count" },
		{ "count_p05", "5%" }, { "count_p50", "median" }, { "count_p95", "95%" },
		{ "value_at_count", "value at count" }, { "unit", "value is" }, { "note", "note" },
	};
	const struct report_table *t = table_of(r->rep_enough, "rules");
	size_t k;
	int sampled = 0, intervals = 0;

	for (k = 0; k < r->nrules; k++) {
		sampled |= (RULES_FLAG(r->rules[k].rule) & RULES_SAMPLED_MASK) && r->rules[k].defined;
		intervals |= r->rules[k].bootstrapped;
	}
	fputs("## How many holdings are enough\n\n", fp);
	fputs("Each rule turns the curve into one count: the smallest number of equal-weight holdings that "
	      "meets it.\n\n", fp);
	for (k = 0; k < r->nrules; k++)
		if (r->rules[k].rule >= 0 && r->rules[k].rule < RULES_COUNT)
			fprintf(fp, "- %s\n", rule_legend[r->rules[k].rule]);
	fputc('\n', fp);
	if (intervals)
		fprintf(fp, "How to read it: the count is the estimate from the whole history; 5%%, median and 95%% "
			"are percentiles of the count when the periods are resampled (%s bootstrap, %zu replicates), "
			"so 5%% to 95%% is a 90%% interval from the data's own estimation error. A narrow interval "
			"means the history pins the count down; a wide one means a minimum-holdings rule should "
			"lean to its upper end. Each percentile is a count some replicate needed: the smallest count "
			"that at least that share of the replicates needed or fewer, so always a whole number of "
			"holdings. \"not met\" in an interval means the percentile falls among replicates that never "
			"meet the rule.%s\n\n",
			hc_bootstrap_kind_name(r->o->rul.bootstrap_kind), r->o->rul.bootstrap,
			sampled && !r->o->rul.bootstrap_sampled
			? " The sampled rules (band, lag-share, alexeev-tapon-sampled) are drawn from random portfolios and have no interval "
			  "here: `--bootstrap-sampled` gives them one, at some cost in time." : "");
	else
		fputs("How to read it: the count is the estimate from the whole history; no bootstrap was run "
		      "(`--bootstrap 0`), so there is no interval for the estimation error in it.\n\n", fp);
	if (t)
		md_table(fp, t, cols, sizeof cols / sizeof cols[0], NULL, NULL);
	fputs("Thresholds and every replicate count are in `enough.csv` and `summary.json`.\n\n", fp);
	for (k = 0; r->rep_enough && k < r->rep_enough->nfields; k++)
		if (strcmp(r->rep_enough->fields[k].key, "policy_sentence") == 0 &&
		    r->rep_enough->fields[k].value.kind == REPORT_TEXT)
			fprintf(fp, "**Recommendation** (`--policy`, `--policy-at`; a sentence for a policy statement):\n\n> %s\n\n",
				r->rep_enough->fields[k].value.text);
}

static void md_audit(FILE *fp, const struct run *r)
{
	static const char *const cols[][2] = {
		{ "fund", "fund" }, { "holdings", "holdings" }, { "effective_holdings", "effective (1/HHI)" },
		{ "max_weight", "largest weight" }, { "top10_share", "top 10" }, { "sd", "sd a year" },
		{ "equivalent_count", "equivalent count" }, { "sd_percentile", "sd percentile" },
		{ "ucits", "UCITS" }, { "1940act", "1940 Act" }, { "ric", "RIC" },
		{ "passed", "passes policy" }, { "failed_rules", "fails" },
	};
	const struct report_table *t = table_of(r->rep_audit, "funds");

	fputs("## Audited funds\n\n", fp);
	if (!t) {
		fputs("No holdings were given (`--holdings FILE` audits funds).\n\n", fp);
		return;
	}
	fprintf(fp, "From `%s`, against the universe above.\n\n", r->hold.holdings);
	md_field(fp, r->rep_audit, "policy", "policy");
	md_field(fp, r->rep_audit, "failed_funds", "funds failing it");
	fputs("\nThe effective count 1/HHI is the number of equal weights with the same concentration; the "
	      "equivalent count is the number of random equal-weight holdings with the fund's own sd (\"below "
	      "the floor\" when no count of them is that low); the sd percentile places the fund's sd among "
	      "random equal-weight portfolios of its own count (50% is typical, high is riskier). UCITS, 1940 "
	      "Act and RIC are the weight screens of Directive 2009/65/EC Art. 52, the Investment Company Act "
	      "of 1940 s. 5(b)(1) and Internal Revenue Code s. 851(b)(3), written from memory of the texts: "
	      "verify against the current text and defer to compliance counsel. A screen decides the policy "
	      "only when `--screens` names it.\n\n", fp);
	md_table(fp, t, cols, sizeof cols / sizeof cols[0], NULL, NULL);
	fprintf(fp, "Each screen's parts with the figure that decided them are in `audit-screens.csv`%s, and "
		"everything in `summary.json` under `audit`.\n\n",
		table_of(r->rep_audit, "sectors") ? ", each fund's sector weights in `audit-sectors.csv`" : "");
}

/* Whether some row of t has a non-empty text in column key. */
static int any_text(const struct report_table *t, const char *key)
{
	size_t i;

	for (i = 0; i < t->nrows; i++) {
		const struct report_value *v = cell(t, i, key);
		if (v->kind == REPORT_TEXT && v->text && v->text[0])
			return 1;
	}
	return 0;
}

static void md_rolling(FILE *fp, const struct run *r)
{
	static const char *const fixed[][2] = {
		{ "window_start", "from" }, { "window_end", "to" }, { "securities", "securities" },
		{ "average_correlation", "avg correlation" }, { "floor_sd", "floor sd a year" },
	};
	const char *cols[RULES_COUNT + 8][2];
	const struct report_table *t = table_of(r->rep_rolling, "windows");
	size_t n = 0, j;

	fputs("## Count needed through time\n\n", fp);
	if (!r->window || !t) {
		fprintf(fp, "Left out: %s.\n\n", r->window_why[0] ? r->window_why : "no rolling windows");
		return;
	}
	fprintf(fp, "Each exact rule's count from the averages of each window of %zu periods (%s), one window "
		"starting every %zu periods: %zu windows. The sampled rules (band, lag-share, alexeev-tapon-sampled) and the bootstrap "
		"interval are not run per window (`holdcount rolling --bootstrap` gives the interval). Averages "
		"drift over decades (Campbell, Lettau, Malkiel & Xu, 2001, Journal of Finance 56(1)), so a count "
		"set once is worth revisiting. Every window's averages are in `rolling.csv`.\n\n",
		r->window, r->window_default ? "five years, the report's default; `--window W` sets another length "
		"and `--window 0` leaves this out" : "set with `--window`", r->step, r->rolling->nwindows);
	for (j = 0; j < sizeof fixed / sizeof fixed[0]; j++) {
		cols[n][0] = fixed[j][0];
		cols[n++][1] = fixed[j][1];
	}
	for (j = 0; j < t->ncols && n < sizeof cols / sizeof cols[0] - 1; j++)
		if (strncmp(t->cols[j].key, "count_", 6) == 0) {
			cols[n][0] = t->cols[j].key;
			cols[n++][1] = t->cols[j].title;
		}
	if (any_text(t, "note")) {
		cols[n][0] = "note";
		cols[n++][1] = "note";
	}
	md_table(fp, t, (const char *const (*)[2])cols, n, NULL, NULL);
}

static void md_plots(FILE *fp, const struct run *r, const struct plots_input *pin, const unsigned char *made)
{
	char cap[1024];
	int k;

	fputs("## Plots\n\n", fp);
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		if (r->rendered && r->o->plot_format != PLOTS_PDF)
			fprintf(fp, "![%s](%s.%s)\n\n", hc_plots_title(k), hc_plots_name(k), hc_plots_format_name(r->o->plot_format));
		else if (r->rendered)
			fprintf(fp, "[%s](%s.pdf)\n\n", hc_plots_title(k), hc_plots_name(k));
		fprintf(fp, "*%s* (`%s.gp`)\n\n", hc_plots_caption(k, pin, cap, sizeof cap), hc_plots_name(k));
	}
	if (!r->rendered)
		fputs("gnuplot was not found on the PATH, so the plots are scripts only. To render them, install "
		      "gnuplot and run, inside this folder, `gnuplot risk.gp` (and likewise for each `.gp` file); "
		      "see README-plots.txt.\n\n", fp);
}

static int write_markdown(struct reportdir *rd, struct run *r, const struct plots_input *pin,
			  const unsigned char *made, struct hc_error *err)
{
	char date[16];
	time_t now = time(NULL);
	struct tm tm;
	FILE *fp;
	size_t i;
	int rc;

	if ((rc = hc_reportdir_open(rd, "summary.md", &fp, err)) != HC_OK)
		return rc;
	gmtime_r(&now, &tm);
	strftime(date, sizeof date, "%Y-%m-%d", &tm);
	fprintf(fp, "# Holding-count report\n\n");
	fprintf(fp, "Written by holdcount %s on %s (UTC; the only line that changes when the same inputs are run "
		"again).\n\n", HOLDCOUNT_VERSION, date);
	md_universe(fp, r);
	md_curve(fp, r);
	md_rules(fp, r);
	md_audit(fp, r);
	md_rolling(fp, r);
	md_plots(fp, r, pin, made);
	fputs("## Cautions\n\n", fp);
	for (i = 0; i < r->rep_universe->nnotes; i++)
		fprintf(fp, "- %s\n", r->rep_universe->notes[i]);
	if (r->rep_audit)
		fputs("- regulatory screens: written from memory of the published texts and testing weights only; "
		      "verify against the current text and defer to compliance counsel\n", fp);
	fputs("\n## Files\n\n- `summary.json`: every figure above, for scripts\n"
	      "- `curve.csv`, `enough.csv`, `audit.csv`: what `holdcount curve`, `enough` and `audit` print with "
	      "`--format csv` and the same options\n", fp);
	if (r->rep_audit)
		fprintf(fp, "- `audit-screens.csv`%s: what `holdcount audit` prints with `--format csv --table "
			"screens`%s\n", table_of(r->rep_audit, "sectors") ? ", `audit-sectors.csv`" : "",
			table_of(r->rep_audit, "sectors") ? " and `--table sectors`" : "");
	if (r->rep_rolling)
		fputs("- `rolling.csv`: what `holdcount rolling` prints with `--format csv` and the same window\n", fp);
	fputs("- `*.gp`, `*.dat`: gnuplot scripts and their data (percent a year)\n", fp);
	return hc_reportdir_close(rd, fp, "summary.md", err);
}

/* ---- plots ----------------------------------------------------------------------------- */

static int write_plots(struct reportdir *rd, struct run *r, struct plots_input *pin, unsigned char *made,
		       struct hc_error *err)
{
	unsigned need = 0;
	char name[REPORTDIR_NAME_MAX];
	FILE *fp;
	int k, rc;

	for (k = 0; k < PLOTS_NKINDS; k++) {
		made[k] = (unsigned char)hc_plots_available(k, pin);
		if (made[k])
			need |= hc_plots_data_used(k);
	}
	for (k = 0; k < PLOTS_NDATA; k++) {
		if (!(need & (1u << k)) || (k == PLOTS_DATA_SAMPLED && !pin->sampled))
			continue;
		if ((rc = hc_reportdir_open(rd, hc_plots_data_name(k), &fp, err)) != HC_OK)
			return rc;
		rc = hc_plots_write_data(fp, k, pin, err);
		if (rc != HC_OK) {
			fclose(fp);
			return rc;
		}
		if ((rc = hc_reportdir_close(rd, fp, hc_plots_data_name(k), err)) != HC_OK)
			return rc;
	}
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		snprintf(name, sizeof name, "%s.gp", hc_plots_name(k));
		if ((rc = hc_reportdir_open(rd, name, &fp, err)) != HC_OK)
			return rc;
		rc = hc_plots_write_script(fp, k, pin, r->o->plot_format, err);
		if (rc != HC_OK) {
			fclose(fp);
			return rc;
		}
		if ((rc = hc_reportdir_close(rd, fp, name, err)) != HC_OK)
			return rc;
	}
	return HC_OK;
}

static int render_plots(struct reportdir *rd, struct run *r, const unsigned char *made, struct hc_error *err)
{
	char script[REPORTDIR_NAME_MAX], image[REPORTDIR_NAME_MAX], line[128];
	int k, rc, done = 0, total = 0;

	for (k = 0; k < PLOTS_NKINDS; k++)
		total += made[k];
	for (k = 0; k < PLOTS_NKINDS; k++) {
		if (!made[k])
			continue;
		snprintf(script, sizeof script, "%s.gp", hc_plots_name(k));
		snprintf(image, sizeof image, "%s.%s", hc_plots_name(k), hc_plots_format_name(r->o->plot_format));
		snprintf(line, sizeof line, "rendering %s (%d of %d)", image, ++done, total);
		stage(r->o, line);
		if ((rc = hc_reportdir_expect(rd, image, err)) != HC_OK ||
		    (rc = hc_plots_render(r->gnuplot, hc_reportdir_tmp_path(rd), script, err)) != HC_OK)
			return rc;
		if (!hc_reportdir_has(rd, image))
			return hc_error(err, HC_EINTERNAL, "gnuplot ran on '%s' but wrote no '%s'", script, image);
	}
	return HC_OK;
}

static int write_render_note(struct reportdir *rd, struct hc_error *err)
{
	FILE *fp;
	int rc;

	if ((rc = hc_reportdir_open(rd, "README-plots.txt", &fp, err)) != HC_OK)
		return rc;
	fputs("The plots in this folder are gnuplot scripts (*.gp) with their data (*.dat).\n"
	      "gnuplot was not on the PATH when the report was written, so they were not rendered.\n\n"
	      "To render them, install gnuplot 5 and run inside this folder:\n\n"
	      "    gnuplot risk.gp\n\n"
	      "and likewise for each .gp file (for f in *.gp; do gnuplot \"$f\"; done).\n"
	      "Each script writes an image of the same name next to it; the format was chosen with\n"
	      "--plot-format when the report was written (edit the 'set terminal' lines to change it).\n", fp);
	return hc_reportdir_close(rd, fp, "README-plots.txt", err);
}

static int write_folder(struct run *r, struct reportdir *rd, struct hc_error *err)
{
	struct plots_input pin;
	unsigned char made[PLOTS_NKINDS];
	int rc;

	memset(&pin, 0, sizeof pin);
	pin.exact = r->full;
	pin.sampled = r->curve->paths ? r->curve : NULL;
	pin.rules = r->rules;
	pin.nrules = r->nrules;
	pin.te_budget = r->cfg.te_budget;
	pin.audit = r->audit;
	pin.rolling = r->rolling;
	pin.universe_name = r->u->source ? (strrchr(r->u->source, '/') ? strrchr(r->u->source, '/') + 1 : r->u->source)
					 : NULL;
	r->rendered = hc_plots_find_gnuplot(NULL, r->gnuplot, sizeof r->gnuplot);
	rc = write_plots(rd, r, &pin, made, err);
	if (rc == HC_OK)
		rc = r->rendered ? render_plots(rd, r, made, err) : write_render_note(rd, err);
	if (rc == HC_OK && (rc = build_plots_report(r, &pin, made)) != HC_OK)
		rc = hc_error(err, rc, "out of memory building the report");
	if (rc == HC_OK)
		rc = write_report_file(rd, "curve.csv", r->rep_curve, hc_report_writer_csv, err);
	if (rc == HC_OK)
		rc = write_report_file(rd, "enough.csv", r->rep_enough, hc_report_writer_csv, err);
	if (rc == HC_OK && r->rep_audit)
		rc = write_report_file(rd, "audit.csv", r->rep_audit, hc_report_writer_csv, err);
	if (rc == HC_OK && r->rep_audit)
		rc = write_part_file(rd, "audit-screens.csv", r->rep_audit, "screens", err);
	if (rc == HC_OK && r->rep_audit && hc_report_find_table(r->rep_audit, "sectors"))
		rc = write_part_file(rd, "audit-sectors.csv", r->rep_audit, "sectors", err);
	if (rc == HC_OK && r->rep_rolling)
		rc = write_report_file(rd, "rolling.csv", r->rep_rolling, hc_report_writer_csv, err);
	if (rc == HC_OK)
		rc = write_json(rd, r, err);
	if (rc == HC_OK)
		rc = write_markdown(rd, r, &pin, made, err);
	if (rc == HC_OK)
		rc = hc_reportdir_commit(rd, err);
	return rc;
}

/* ---- the command ----------------------------------------------------------------------- */

static int demo_path(char *buf, size_t size, const char *file)
{
	return cli_data_file(buf, size, file);
}

/* Options of the audit that mean nothing without holdings to audit. */
static const char *const audit_only_options[] = {
	"sectors", "allow-short", "strict", "fund-column", "holding-id-column", "weight-column",
	"market-value-column", "issuer-column", "min-holdings", "min-effective", "max-weight",
	"max-sector-weight", "screens", NULL
};

static int check_options(const struct report_opts *o, const struct cli_args *a, const struct run *r)
{
	size_t k;

	if (!o->output)
		return cli_usage_error("report", "-o DIR is required: the report folder to write");
	if (cli_given(a, "step") && cli_given(a, "window") && !o->window)
		return cli_usage_error("report", "--step applies to the rolling windows, which --window 0 leaves out");
	if (cli_given(a, "step") && !o->step)
		return cli_usage_error("report", "--step must be at least 1 period");
	for (k = 0; !r->hold.holdings && audit_only_options[k]; k++)
		if (cli_given(a, audit_only_options[k]))
			return cli_usage_error("report", "--%s applies to the audit of funds: give --holdings FILE",
					       audit_only_options[k]);
	return HC_OK;
}

/* The rolling windows: --window and --step as given, else five years of
 * periods a year apart when the history holds two such windows, else none,
 * with the reason kept for summary.md. */
static void choose_window(struct run *r, const struct cli_args *a)
{
	double ppy = r->u->periods_per_year;
	size_t year = ppy >= 1.5 ? (size_t)llround(ppy) : 1;

	r->step = r->o->step ? r->o->step : year;
	if (cli_given(a, "window")) {
		r->window = r->o->window;
		if (!r->window)
			snprintf(r->window_why, sizeof r->window_why, "`--window 0` was given");
		return;
	}
	r->window_default = 1;
	r->window = REPORT_WINDOW_YEARS * year;
	if (r->u->t < REPORT_WINDOW_MIN_SPANS * r->window) {
		snprintf(r->window_why, sizeof r->window_why, "the history has %zu periods, fewer than two windows "
			 "of %zu (five years at %.10g periods a year); `--window W` with a shorter W gives it", r->u->t,
			 r->window, ppy);
		r->window = 0;
	}
}

/* The files to read: UNIVERSE and --holdings, or the bundled demo's. */
static int choose_inputs(struct run *r, const struct cli_args *a)
{
	static char demo_universe[PATH_MAX], demo_funds[PATH_MAX], demo_sectors[PATH_MAX];

	r->hold = r->o->hold;
	if (a->npositional) {
		r->universe_path = a->positional[0];
		return HC_OK;
	}
	if (!demo_path(demo_universe, sizeof demo_universe, "demo-universe.csv"))
		return cli_usage_error("report", "no UNIVERSE given and the demo universe '%s' cannot be read",
				       demo_universe);
	r->universe_path = demo_universe;
	if (!r->hold.holdings && demo_path(demo_funds, sizeof demo_funds, "demo-funds.csv"))
		r->hold.holdings = demo_funds;
	if (!r->hold.sectors && demo_path(demo_sectors, sizeof demo_sectors, "demo-sectors.csv"))
		r->hold.sectors = demo_sectors;
	return HC_OK;
}

int cmd_report(int argc, char **argv)
{
	struct report_opts o;
	struct cli_args a;
	struct reportdir *rd = NULL;
	size_t stale = 0;
	struct run r;
	struct hc_error err;
	char line[PATH_MAX + 32];
	int rc;

	memset(&o, 0, sizeof o);
	cli_rules_init(&o.rul);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	rc = cli_parse(&cli_command_report, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	memset(&r, 0, sizeof r);
	cli_strata_init(&r.strat);
	hc_error_clear(&err);
	r.o = &o;
	if ((rc = choose_inputs(&r, &a)) != HC_OK || (rc = check_options(&o, &a, &r)) != HC_OK ||
	    (rc = cli_rules_config("report", &o.rul, &a, 1, 0, &r.cfg)) != HC_OK)
		goto cleanup;
	install_signals();
	/* the folder first: an existing DIR is refused before any work, and
	 * the temporary folder shows that a run is under way */
	if ((rc = hc_reportdir_begin(&rd, o.output, o.force, &stale, &err)) != HC_OK) {
		rc = cli_fail("report", &err);
		goto cleanup;
	}
	if (stale && stage_enabled(&o))
		fprintf(stderr, "holdcount report: removed %zu temporary folder%s left by an interrupted run\n", stale,
			stale == 1 ? "" : "s");
	snprintf(line, sizeof line, "loading '%s'", r.universe_path);
	stage(&o, line);
	if ((rc = cli_load_universe("report", &o.uni, r.universe_path, &r.u)) != HC_OK)
		goto cleanup;
	choose_window(&r, &a);
	if ((r.window && (rc = load_every_security(&o, r.universe_path, &r.every_security)) != HC_OK) ||
	    (rc = compute(&r)) != HC_OK)
		goto cleanup;
	if (build_universe(&r)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		rc = cli_fail("report", &err);
		goto cleanup;
	}
	stage(&o, "writing the folder");
	if ((rc = write_folder(&r, rd, &err)) != HC_OK) {
		rc = cli_fail("report", &err);
		goto cleanup;
	}
	if (stage_enabled(&o))
		fprintf(stderr, "holdcount report: wrote '%s' (start with summary.md)\n", o.output);
	if (r.audit && r.audit->failed_funds) {
		cli_audit_say_failures("report", r.audit);
		rc = HC_EPOLICY;
	}
cleanup:
	hc_reportdir_free(rd);
	run_release(&r);
	cli_args_release(&a);
	return rc;
}
