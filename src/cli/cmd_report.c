/*
 * cmd_report.c - `holdcount report UNIVERSE -o DIR` (or --demo): the
 * quarterly report folder.
 *
 * Parse the options, read the universe file once (hc_universe_apply_missing
 * gives the complete series from every security as read) and the holdings,
 * then the library's report pipeline (reportset.h): the curve, the rules
 * and the audit through the very calls `holdcount curve`, `enough` and
 * `audit` make, with the same option groups, so the same options and seed
 * give the same struct report objects; and the folder, report.html with it
 * (and, with --previous DIR, what changed since that report).
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
#include "holdcount/curve.h"
#include "holdcount/holdings.h"
#include "holdcount/memory.h"
#include "holdcount/outfile.h"
#include "holdcount/plots.h"
#include "holdcount/reportdir.h"
#include "holdcount/reportset.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

struct report_opts {
	const char *output;
	int force;
	int plot_format;
	int quiet;
	int demo;                  /* --demo: the bundled invented universe, sectors and funds */
	const char *previous;      /* --previous DIR: the report to compare with */
	size_t window, step;       /* --window (0 = none) and --step (0 = a year's periods) as given */
	int tail;                  /* --tail: 0 on, 1 off */
	double horizon;            /* --horizon years; 0 = no ending wealth */
	size_t horizon_paths;      /* --horizon-paths */
	struct cli_rules rul;
	struct cli_holdings hold;
	struct cli_policy pol;
	struct cli_sampling sam;
	struct cli_universe uni;
};

static const char *const format_words[] = { "png", "svg", "pdf", NULL };
static const char *const on_off_words[] = { "on", "off", NULL };

#define STR_(x) #x
#define STR(x) STR_(x)

#define RO(f) offsetof(struct report_opts, f)
static const struct cli_option report_own[] = {
	{ "output", 'o', CLI_STRING, RO(output), "DIR", "the report folder to write (required)", NULL, NULL },
	{ "force", 0, CLI_FLAG, RO(force), NULL,
	  "replace an existing report folder (only once the new one is complete)", NULL, NULL },
	{ "plot-format", 0, CLI_CHOICE, RO(plot_format), NULL, "format of the rendered plots", format_words, "png" },
	{ "quiet", 'q', CLI_FLAG, RO(quiet), NULL, "no progress display on standard error", NULL, NULL },
	{ "demo", 0, CLI_FLAG, RO(demo), NULL,
	  "run on the bundled invented demo universe, its sectors and funds (instead of UNIVERSE)", NULL, NULL },
	{ "previous", 0, CLI_STRING, RO(previous), "DIR",
	  "an earlier report folder: add a section on what changed since it (as 'holdcount compare')", NULL, NULL },
	{ "window", 0, CLI_COUNT, RO(window), "W",
	  "the exact rules' counts in rolling windows of W periods (rolling.csv and its plot); 0 leaves them out",
	  NULL, "five years of periods, when the history holds two such windows" },
	{ "step", 0, CLI_COUNT, RO(step), "S", "periods between two rolling windows (default: 12 calendar months, the newest ending at the last date)", NULL,
	  "12 calendar months" },
	{ "tail", 0, CLI_CHOICE, RO(tail), NULL,
	  "the tail-and-horizon section: expected shortfall (95%, 99%) and maximum drawdown of the curve's random "
	  "portfolios, in the same pass as their sd (0.7 s of CPU time with ending wealth on 600 x 240; "
	  "docs/report.md), and ending wealth over --horizon years; off leaves it out", on_off_words, "on" },
	{ "horizon", 0, CLI_REAL, RO(horizon), "H",
	  "the horizon of the ending-wealth plots in years: windows of the history when H fits in it, else a "
	  "stationary bootstrap; 0 leaves them out. A history with gaps: windows of its own dates only (a longer H "
	  "gets the reason instead)",
	  NULL, "10" },
	{ "horizon-paths", 0, CLI_COUNT, RO(horizon_paths), "K",
	  "random portfolios (and paths) per count for the ending wealth; the time grows with K times the "
	  "securities times the horizon's periods (0.05 s for the demo's 139 x 120 at the default)", NULL,
	  STR(REPORTSET_HORIZON_PATHS) },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group report_group = { "report options", report_own };

/* The groups of `enough` and `audit` themselves: one table per option. */
/* The report reads the history period by period (each period the
 * securities alive then; securities with gaps stay in): --missing and
 * --min-coverage, which choose another treatment, are left out. */
static const struct cli_omit report_universe_omit[] = {
	{ "missing", "the report reads the history period by period, each period with the securities alive "
	  "then (the other commands' default, --missing alive); curve, enough and audit take --missing "
	  "complete or pairwise" },
	{ "min-coverage", "it is the coverage --missing pairwise asks for, which the report does not use; "
	  "curve, enough and audit take both" },
	{ "covariance", "the report needs a return history (its dates, lag-share rule and rolling windows "
	  "are time-based); describe, curve, enough and audit take a covariance matrix" },
	{ NULL, NULL }
};

static const struct cli_group_use report_groups[] = {
	{ &report_group, 0, NULL, NULL },
	{ &cli_group_rules, RO(rul), NULL, NULL },
	{ &cli_group_holdings, RO(hold), NULL, NULL },
	{ &cli_group_policy, RO(pol), NULL, NULL },
	{ &cli_group_sampling, RO(sam), NULL, NULL },
	{ &cli_group_universe, RO(uni), report_universe_omit, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_report = {
	"report", cmd_report, "write a report folder: tables, JSON summary, gnuplot scripts and plots",
	"UNIVERSE | --demo",
	"Writes DIR with report.html (one self-contained document for a committee: the recommendation, "
	"the universe, the curve, every rule, tail risk and long horizons, the funds, the count through "
	"time, the cautions and a technical appendix, with the plots inline as SVG; it prints a page per section), summary.md (the universe, the curve at a readable grid, every rule's count with "
	"its 90% bootstrap interval, the audited funds with their pass or fail under the policy options, "
	"the plots and the cautions), summary.json (every figure of the summary), curve.csv, enough.csv "
	"and audit.csv (what 'holdcount curve', 'enough' and 'audit' print with --format csv and the same "
	"options), gnuplot scripts with their data (*.gp, *.dat) and, when gnuplot is on the PATH, their "
	"renders; and rolling.csv (what 'holdcount rolling' prints) with the plot of the count needed "
	"through time, in windows of five years of periods, 12 calendar months apart with the newest ending "
	"at the last date, when the history holds two such windows (--window W, and --step S for windows "
	"S periods apart, choose others, --window 0 leaves them out; summary.md says "
	"which). The tail-and-horizon section (--tail off leaves it out): the curve's random portfolios' "
	"expected shortfall and maximum drawdown by count (tail.csv; curve.csv gains their columns), and on a "
	"complete history ending wealth over --horizon years with the chance of ending behind the equal-weight "
	"universe (horizon.csv), each with its plot; a history with gaps gets the reason instead of ending "
	"wealth. --sizes sets the curve's grid; the rules look at every count. "
	"The folder is built under a temporary name and renamed into place, so an interrupted run leaves "
	"the previous report or none. --demo runs on the bundled invented demo universe, its "
	"sectors and funds; without it a UNIVERSE is required. --previous DIR compares with an earlier report "
	"(a section in report.html and summary.md). Exit status 1 (after the folder is written) when a fund fails a policy option, "
	"and 10 when none fails but a fund's risk rests on less than --min-covered-weight of its weight, "
	"as with 'holdcount audit'.",
	0, 1, report_groups
};

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

/* ---- the command ----------------------------------------------------------------------- */

static int demo_path(char *buf, size_t size, const char *file)
{
	return cli_data_file(buf, size, file);
}

/* What a run reads: UNIVERSE and --holdings, or the bundled demo's. */
struct inputs {
	const char *universe_path;
	struct cli_holdings hold;          /* o->hold with the demo's files filled in */
};

/* Options of the audit that mean nothing without holdings to audit. */
static const char *const audit_only_options[] = {
	"sectors", "allow-short", "strict", "fund-column", "holding-id-column", "weight-column",
	"market-value-column", "issuer-column", "min-holdings", "min-effective", "max-weight",
	"max-sector-weight", "screens", "benchmark", "holdings-encoding", "type-column", "group-column",
	"basket-reading", "cash-risk", "min-covered-weight", NULL
};

static int check_options(const struct report_opts *o, const struct cli_args *a, const struct inputs *in)
{
	size_t k;

	if (!o->output)
		return cli_usage_error("report", "-o DIR is required: the report folder to write");
	if (cli_given(a, "step") && cli_given(a, "window") && !o->window)
		return cli_usage_error("report", "--step applies to the rolling windows, which --window 0 leaves out");
	if (cli_given(a, "step") && !o->step)
		return cli_usage_error("report", "--step must be at least 1 period");
	if (o->tail && (cli_given(a, "horizon") || cli_given(a, "horizon-paths")))
		return cli_usage_error("report", "--%s applies to the tail-and-horizon section, which --tail off leaves out",
				       cli_given(a, "horizon") ? "horizon" : "horizon-paths");
	if (!(o->horizon >= 0) || o->horizon > 1000)
		return cli_usage_error("report", "--horizon must be 0 (no ending wealth) or a number of years up to 1000, "
				       "not %g", o->horizon);
	if (cli_given(a, "horizon-paths") && !o->horizon_paths)
		return cli_usage_error("report", "--horizon-paths must be at least 1 (--horizon 0 leaves ending wealth out)");
	if (cli_given(a, "horizon-paths") && cli_given(a, "horizon") && o->horizon == 0)
		return cli_usage_error("report", "--horizon-paths applies to the ending wealth, which --horizon 0 leaves out");
	for (k = 0; !in->hold.holdings.n && audit_only_options[k]; k++)
		if (cli_given(a, audit_only_options[k]))
			return cli_usage_error("report", "--%s applies to the audit of funds: give --holdings FILE",
					       audit_only_options[k]);
	return HC_OK;
}

static int choose_inputs(const struct report_opts *o, struct inputs *in, const struct cli_args *a)
{
	static char demo_universe[PATH_MAX], demo_funds[PATH_MAX], demo_sectors[PATH_MAX];

	in->hold = o->hold;
	if (a->npositional && o->demo)
		return cli_usage_error("report", "give a UNIVERSE or --demo, not both");
	if (a->npositional) {
		in->universe_path = a->positional[0];
		return HC_OK;
	}
	if (!o->demo)
		return cli_usage_error("report", "a UNIVERSE file is required (--demo runs on the bundled invented demo "
				       "universe)");
	if (!demo_path(demo_universe, sizeof demo_universe, "demo-universe.csv"))
		return cli_usage_error("report", "--demo: the demo universe '%s' cannot be read", demo_universe);
	in->universe_path = demo_universe;
	if (!in->hold.holdings.n && demo_path(demo_funds, sizeof demo_funds, "demo-funds.csv")) {
		in->hold.holdings.v[in->hold.holdings.n++] = demo_funds;
		in->hold.holdings.last = demo_funds;
	}
	if (!in->hold.sectors && demo_path(demo_sectors, sizeof demo_sectors, "demo-sectors.csv"))
		in->hold.sectors = demo_sectors;
	return HC_OK;
}

/* The universe file, read once: every security as read (the rolling
 * windows apply the missing-data policy each), and from it the complete
 * series every other analysis reads (hc_universe_apply_missing). */
static int load(const struct report_opts *o, const char *path, int need_matrix, struct universe **every,
		struct hc_source **src)
{
	struct universe_options uo;
	struct universe *u = NULL;
	struct hc_error err;
	int rc;

	if ((rc = cli_universe_options("report", &o->uni, &uo)) != HC_OK)
		return rc;
	hc_error_clear(&err);
	rc = hc_universe_load(every, path, &(struct universe_options){ .layout = uo.layout, .values = uo.values,
			      .percent = uo.percent, .missing = UNIVERSE_MISSING_KEEP, .min_coverage = uo.min_coverage,
			      .periods_per_year = uo.periods_per_year, .delimiter = uo.delimiter,
			      .date_column = uo.date_column, .id_column = uo.id_column,
			      .value_column = uo.value_column, .max_bytes = uo.max_bytes,
			      .frequency = uo.frequency, .bad_cells = uo.bad_cells }, &err);
	if (rc != HC_OK)
		return cli_fail("report", &err);
	/* --from, --to, --exclude, then the data checks, once for every analysis */
	if ((rc = cli_restrict("report", &o->uni, UNIVERSE_MISSING_KEEP, every)) != HC_OK ||
	    (rc = cli_data_check("report", &o->uni, *every)) != HC_OK)
		return rc;
	if (hc_universe_apply_missing(&u, *every, uo.missing, uo.min_coverage, &err) != HC_OK)
		return cli_fail("report", &err);
	/* a ragged history's funds need the pairwise-complete matrix */
	return cli_source_from_universe("report", &o->uni, u, path, need_matrix, NULL, src);
}

/* The library's options from the command's groups. */
static int options(const struct report_opts *o, const struct cli_args *a, struct hc_reportset_options *ro)
{
	memset(ro, 0, sizeof *ro);
	hc_curve_options_init(&ro->curve);
	ro->curve.paths = o->sam.paths;
	ro->curve.seed = o->sam.seed;
	ro->curve.threads = o->sam.threads > INT_MAX ? INT_MAX : (int)o->sam.threads;
	ro->plot_format = o->plot_format;
	ro->tail = o->tail == 0;
	if (!ro->tail)
		snprintf(ro->tail_why, sizeof ro->tail_why, "`--tail off` was given");
	ro->horizon_years = o->horizon;
	ro->horizon_paths = o->horizon_paths;
	ro->previous = o->previous;
	ro->label = o->output;
	return cli_enough_options("report", &o->rul, &o->sam, a, 1, 0, &ro->enough);
}

int cmd_report(int argc, char **argv)
{
	struct report_opts o;
	struct cli_args a;
	struct reportdir *rd = NULL;
	struct inputs in;
	struct hc_reportset_options ro;
	struct hc_reportset *rs = NULL;
	struct universe *every = NULL;
	struct hc_source *src = NULL;
	struct holdings *h = NULL;
	struct holdings_labels *labels = NULL;
	struct holdings *bench = NULL;
	struct cli_strata no_strata;
	struct cli_steps steps;
	size_t stale = 0, *sizes = NULL, nsizes = 0;
	struct hc_error err;
	char line[PATH_MAX + 32];
	int rc;

	memset(&o, 0, sizeof o);
	o.horizon = REPORTSET_HORIZON_YEARS;
	o.horizon_paths = REPORTSET_HORIZON_PATHS;
	cli_rules_init(&o.rul);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_holdings_init(&o.hold);
	rc = cli_parse(&cli_command_report, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	memset(&in, 0, sizeof in);
	cli_strata_init(&no_strata);
	hc_error_clear(&err);
	if ((rc = choose_inputs(&o, &in, &a)) != HC_OK || (rc = check_options(&o, &a, &in)) != HC_OK ||
	    (rc = options(&o, &a, &ro)) != HC_OK)
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
	snprintf(line, sizeof line, "loading '%s'", in.universe_path);
	stage(&o, line);
	if ((rc = load(&o, in.universe_path, in.hold.holdings.n ? CLI_NEED_FUNDS : 0, &every, &src)) != HC_OK)
		goto cleanup;
	hc_reportset_choose_window(&ro, src->u->t, src->u->periods_per_year, cli_given(&a, "window"), o.window, o.step);
	if ((rc = cli_sizes("report", o.sam.sizes, src->u->m, &sizes, &nsizes)) != HC_OK ||
	    (rc = cli_enough_checks("report", &o.sam, &no_strata, &ro.enough.rules)) != HC_OK)
		goto cleanup;
	ro.sizes = sizes;
	ro.nsizes = nsizes;
	if (in.hold.holdings.n) {
		if ((rc = cli_audit_load("report", &in.hold, &o.pol, &o.sam, &ro.audit, &h, &labels, &bench)) != HC_OK)
			goto cleanup;
		ro.holdings = h;
		ro.holdings_name = h->source;   /* every file, comma-separated */
	}
	cli_steps_bind(&steps, &ro.progress, "report", o.quiet, 1);
	if ((rc = hc_reportset_run(&rs, src, every, &ro, &err)) != HC_OK) {
		rc = cli_fail("report", &err);
		goto cleanup;
	}
	if (rs->audit)
		cli_audit_say_missing("report", rs->audit);
	stage(&o, "writing the folder");
	if ((rc = hc_reportset_write(rs, rd, &err)) != HC_OK) {
		rc = cli_fail("report", &err);
		goto cleanup;
	}
	if (stage_enabled(&o))
		fprintf(stderr, "holdcount report: wrote '%s' (start with report.html)\n", o.output);
	if (rs->audit)
		rc = cli_audit_status("report", rs->audit);
cleanup:
	hc_reportdir_free(rd);
	hc_reportset_free(rs);
	hc_holdings_labels_free(labels);
	hc_holdings_free(h);
	hc_holdings_free(bench);
	hc_source_free(src);
	hc_universe_free(every);
	hc_free(sizes);
	cli_args_release(&a);
	return rc;
}
