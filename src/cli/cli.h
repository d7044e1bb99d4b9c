/*
 * cli.h - the command-line framework: option tables, parsing, help, output.
 *
 * Every command is described by one static table (struct cli_command), and
 * everything a user sees about its options comes from that table: the
 * parser, `holdcount COMMAND --help`, `holdcount help COMMAND` (the same
 * text), and later the manual pages and shell completion.  Nothing about an
 * option is written twice, so nothing can drift.
 *
 * HOW A COMMAND FILE USES THE FRAMEWORK (copy src/cli/cmd_describe.c):
 *
 *   1. A struct holding the command's parsed options; shared groups are
 *      embedded as members:
 *
 *          struct frob_opts {
 *              struct cli_output out;      // --format, --output, --quiet
 *              struct cli_universe uni;    // --prices, --missing, ...
 *              size_t widgets;             // the command's own option
 *          };
 *
 *   2. The command's own options, offsets relative to its struct, ending
 *      with an all-zero entry:
 *
 *          static const struct cli_option frob_own[] = {
 *              { "widgets", 0, CLI_COUNT, offsetof(struct frob_opts, widgets),
 *                "N", "how many widgets to frob", NULL, "3" },
 *              { NULL }
 *          };
 *          static const struct cli_group frob_group = { "frob options", frob_own };
 *
 *   3. The groups it accepts, each with the offset of its struct, and the
 *      command record (exported; list it in src/cli/commands.c):
 *
 *          static const struct cli_group_use frob_groups[] = {
 *              { &frob_group, 0, NULL },
 *              { &cli_group_universe, offsetof(struct frob_opts, uni), frob_omit },
 *              { &cli_group_output, offsetof(struct frob_opts, out), NULL },
 *              { NULL, 0, NULL }
 *          };
 *
 *      A shared group's option that the command could never use is left
 *      out by name, with the reason the parser gives when it is tried,
 *      rather than refused after parsing (which help would not show):
 *
 *          static const struct cli_omit frob_omit[] = {
 *              { "covariance", "frobbing needs a return history" },
 *              { NULL, NULL }
 *          };
 *          const struct cli_command cli_command_frob = {
 *              "frob", cmd_frob, "frob a universe", "UNIVERSE",
 *              "Longer description, one paragraph.", 1, 1, frob_groups };
 *
 *   4. The command function: set defaults, parse, work, write a report:
 *
 *          int cmd_frob(int argc, char **argv)
 *          {
 *              struct frob_opts o;
 *              struct cli_args a;
 *              int rc;
 *
 *              memset(&o, 0, sizeof o);
 *              cli_output_init(&o.out);
 *              cli_universe_init(&o.uni);
 *              o.widgets = 3;
 *              rc = cli_parse(&cli_command_frob, argc, argv, &o, &a);
 *              if (rc != HC_OK)
 *                  return cli_parse_status(rc);   // 0 after --help, 2 on error
 *              ... build a struct report r, then
 *              rc = cli_write_report("frob", &o.out, r);  // prints its own errors
 *              ...
 *              cli_args_release(&a);
 *              return rc;
 *          }
 *
 *      Library failures: `return cli_fail("frob", &err);` prints
 *      "holdcount frob: MESSAGE" and returns err.code (the exit status).
 *      Long loops: struct cli_progress (a bar on stderr, only on a terminal
 *      and without --quiet); its update function fits sampler_progress_fn.
 *
 * Values land in these C types: CLI_FLAG int (set to 1), CLI_STRING
 * const char * (points into argv), CLI_COUNT size_t, CLI_REAL double,
 * CLI_FRACTION double ("10%" or "0.10" both give 0.10), CLI_CHOICE int
 * (index into the option's choices), CLI_U64 uint64_t.  A repeated option:
 * the last one wins.  cli_given() says whether an option was on the line.
 *
 * Files: a CLI_STRING option named "output" or "...-output" names a file
 * (metavar FILE) or folder (metavar DIR) the command writes; any other
 * CLI_STRING option with metavar FILE, and every positional argument, names
 * a file it reads.  cli_parse refuses (HC_EUSAGE, naming both) an output
 * that is the same file as an input or as another output, and an input
 * inside an output folder, so a new command gets the check by following
 * these names.
 */
#ifndef HOLDCOUNT_CLI_H
#define HOLDCOUNT_CLI_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "holdcount/error.h"
#include "holdcount/report.h"

enum cli_kind {
	CLI_FLAG = 0,
	CLI_STRING = 1,
	CLI_COUNT = 2,
	CLI_REAL = 3,
	CLI_FRACTION = 4,
	CLI_CHOICE = 5,
	CLI_U64 = 6
};

struct cli_option {
	const char *name;          /* long name without "--"; NULL ends a table */
	char short_name;           /* 0 = none */
	int kind;                  /* enum cli_kind */
	size_t offset;             /* of the value in the group's struct */
	const char *metavar;       /* value's placeholder in help ("FILE"); choices list themselves */
	const char *help;          /* lower case, no final full stop */
	const char *const *choices;/* CLI_CHOICE: NULL-terminated words */
	const char *default_text;  /* shown as "(default: ...)"; NULL = none */
};

struct cli_group {
	const char *title;         /* heading in help: "output options" */
	const struct cli_option *options;
};

/* An option of a shared group that one command leaves out, and why.  The
 * parser refuses it with "--NAME does not apply: WHY" (exit 2), and help,
 * the manual page and the completion do not list it, so a command shows
 * only options it can use. */
struct cli_omit {
	const char *name;               /* long name without "--"; NULL ends a list */
	const char *why;                /* lower case, no final full stop */
};

struct cli_group_use {
	const struct cli_group *group;  /* NULL ends the list */
	size_t offset;                  /* of the group's struct in the command's struct */
	const struct cli_omit *omit;    /* the group's options left out; NULL = none */
};

struct cli_command {
	const char *name;
	int (*run)(int argc, char **argv);   /* argv[0] is the command name */
	const char *summary;                 /* one line, for `holdcount --help` */
	const char *usage;                   /* positional arguments: "UNIVERSE" ("" = none) */
	const char *description;             /* a paragraph; wrapped by the help printer */
	size_t min_positional, max_positional;
	const struct cli_group_use *groups;
};

/* ---- shared option groups ------------------------------------------------ */

/* --format table|csv|json, --output/-o FILE, --quiet/-q */
enum cli_format { CLI_FORMAT_TABLE = 0, CLI_FORMAT_CSV = 1, CLI_FORMAT_JSON = 2 };
struct cli_output {
	int format;                /* enum cli_format */
	const char *output;        /* NULL or "-" = standard output */
	int quiet;
};
extern const struct cli_group cli_group_output;
void cli_output_init(struct cli_output *o);

/* Universe loading (see include/holdcount/universe.h for the meanings). */
enum cli_missing { CLI_MISSING_COMPLETE = 0, CLI_MISSING_PAIRWISE = 1 };
enum cli_layout { CLI_LAYOUT_WIDE = 0, CLI_LAYOUT_LONG = 1 };
struct cli_universe {
	int prices;                /* cells are prices */
	int log_returns;           /* with prices: log returns */
	int percent;
	int missing;               /* enum cli_missing */
	double min_coverage;
	double periods_per_year;   /* NaN = detect from the dates */
	int layout;                /* enum cli_layout */
	const char *date_column, *id_column, *value_column;
	const char *delimiter;     /* "," or ";"; NULL = detect */
	size_t max_memory_mib;     /* 0 = from available memory */
	int covariance;            /* the positional file is a covariance matrix */
	int repair_psd;            /* --repair-psd (cli_group_matrix_repair) */
};
extern const struct cli_group cli_group_universe;
void cli_universe_init(struct cli_universe *u);
/* --repair-psd alone, on the commands that can use a repaired matrix
 * (describe, curve, enough, audit); its struct is the command's
 * cli_universe, so the group is listed with the universe group's offset. */
extern const struct cli_group cli_group_matrix_repair;

/* --sizes LIST, --paths K, --seed S, --threads N */
#define CLI_DEFAULT_PATHS 10000
#define CLI_DEFAULT_SEED 1
struct cli_sampling {
	const char *sizes;         /* NULL = the default grid */
	size_t paths;
	uint64_t seed;
	size_t threads;            /* 0 = all cores (OpenMP's default) */
};
extern const struct cli_group cli_group_sampling;
void cli_sampling_init(struct cli_sampling *s);

/* --average-variance, --average-covariance, --average-sd,
 * --average-correlation, --securities M */
struct cli_summary {
	double average_variance, average_covariance;
	double average_sd, average_correlation;
	size_t securities;         /* 0 = unbounded */
};
extern const struct cli_group cli_group_summary;
void cli_summary_init(struct cli_summary *s);

/* ---- parsing ------------------------------------------------------------- */

#define CLI_HELP_SHOWN (-1)

struct cli_args {
	const struct cli_command *cmd;
	size_t npositional;
	char **positional;         /* into argv; array owned here */
	size_t ngiven;
	const struct cli_option **given;
};

/*
 * Parse argv[1..argc-1] for cmd into the struct at opts (whose groups were
 * given their defaults).  Returns HC_OK, CLI_HELP_SHOWN after printing the
 * help to stdout for -h/--help, or HC_EUSAGE after printing one message to
 * stderr, e.g. "holdcount curve: unknown option '--pathz' (see 'holdcount
 * curve --help')", or for an option the command leaves out (struct
 * cli_omit) "holdcount rolling: --covariance does not apply: WHY (see ...)".
 * After HC_OK release a with cli_args_release.
 * The sampling group's --threads also falls back on HOLDCOUNT_THREADS here.
 */
int cli_parse(const struct cli_command *cmd, int argc, char **argv,
	      void *opts, struct cli_args *a);
void cli_args_release(struct cli_args *a);

/* The exit status for a cli_parse result that is not HC_OK. */
int cli_parse_status(int rc);

/* Was the option with this long name on the command line? */
int cli_given(const struct cli_args *a, const char *name);

/* ---- help ---------------------------------------------------------------- */

/* The help text of one command (identical for --help and `help COMMAND`). */
void cli_print_help(FILE *fp, const struct cli_command *cmd);
/* The top-level help: usage, commands with summaries, global options. */
void cli_print_main_help(FILE *fp);

/* A manual page in roff: holdcount-COMMAND(1), or holdcount(1) when cmd
 * is NULL.  Generated from the same tables as --help. */
void cli_print_man(FILE *fp, const struct cli_command *cmd, const char *version);
/* A bash completion script for every command and option. */
void cli_print_bash_completion(FILE *fp);

/* Every command, in the order `holdcount --help` lists them; NULL-terminated.
 * Defined in commands.c. */
extern const struct cli_command *const cli_commands[];
const struct cli_command *cli_find_command(const char *name);

/* ---- messages, output, progress ------------------------------------------ */

/* Print "holdcount CMD: MESSAGE" for a library failure; return its status
 * (HC_EINTERNAL when err carries none). */
int cli_fail(const char *cmd, const struct hc_error *err);

/* Flush standard output after text printed straight to it (help, manual
 * pages, --version): HC_OK, or HC_EIO after printing "holdcount[ CMD]:
 * cannot write to standard output: REASON" when any write failed (a full
 * disk, /dev/full, a closed pipe).  cmd may be NULL (the top level). */
int cli_flush_stdout(const char *cmd);

/* Print "holdcount CMD: ..." for a usage problem found after parsing;
 * returns HC_EUSAGE. */
int cli_usage_error(const char *cmd, const char *fmt, ...)
	__attribute__((format(printf, 2, 3)));

/* Render r in the chosen format to --output (all or nothing, through
 * outfile) or stdout.  Prints its own error; returns the exit status. */
int cli_write_report(const char *cmd, const struct cli_output *o, const struct report *r);

/* "holdcount CMD: WHAT" on its own line of stderr, the name of a stage of a
 * long run, under the same condition as the progress bar below. */
void cli_stage(const char *cmd, int quiet, const char *what);

/* Like cli_write_report, but only one part of r, as CSV whatever the
 * format (hc_report_write_csv_part: table is a table's key, or NULL for the
 * fields as key,value rows), for commands whose --table chooses it. */
int cli_write_csv_part(const char *cmd, const struct cli_output *o, const struct report *r, const char *table);

/* A progress bar with rate on stderr, shown only when stderr is a terminal
 * and --quiet was not given. */
struct cli_progress {
	const char *label;         /* "sampling" */
	const char *unit;          /* "paths" */
	int enabled;
	double start, last_draw;
};
void cli_progress_init(struct cli_progress *p, const char *label, const char *unit, int quiet);
/* sampler_progress_fn-compatible: ctx is a struct cli_progress; returns 0. */
int cli_progress_update(void *ctx, size_t done, size_t total);
/* Clear the bar's line. */
void cli_progress_finish(struct cli_progress *p);

/* SIGINT/SIGTERM: remove any half-written output temporaries and exit 7. */
void cli_install_signal_handlers(void);

/* ---- data helpers shared by the commands (cli_data.c) --------------------- */

struct universe;
struct universe_options;
struct strata;

/* The loader's options from the universe group.  HC_EUSAGE (printed) for
 * contradictions such as --log-returns without --prices. */
int cli_universe_options(const char *cmd, const struct cli_universe *cu,
			 struct universe_options *uo);

/* Load path with the group's options; prints the loader's message
 * ("holdcount CMD: FILE:LINE:COLUMN: ...") and returns its status. */
int cli_load_universe(const char *cmd, const struct cli_universe *cu,
		      const char *path, struct universe **out);

/* --max-memory in bytes (0 = from available memory); HC_EUSAGE (printed)
 * when it overflows. */
int cli_max_bytes(const char *cmd, const struct cli_universe *cu, size_t *bytes);

/* A covariance matrix that must be positive semi-definite, and what
 * --repair-psd did to it (cli_psd_settle). */
struct cli_psd {
	int asked;                 /* --repair-psd was given */
	int checked;               /* a matrix was tested */
	int repaired;              /* ... and replaced by its nearest PSD matrix */
	size_t negative;           /* its negative eigenvalues */
	double min_eigenvalue;     /* per period (or the matrix's scale) */
	double distance, norm;     /* Frobenius: moved, and the matrix's own */
	double scale;              /* what the output multiplies variances by (P, or 1) */
	int annualised;
	const char *what;          /* "the covariance matrix", ... (static) */
};
void cli_psd_init(struct cli_psd *ps, int asked, double scale, int annualised, const char *what);

/* --repair-psd without a matrix to repair (no --covariance, no --missing
 * pairwise) is a usage error (printed; HC_EUSAGE); else HC_OK. */
int cli_psd_usage(const char *cmd, const struct cli_universe *cu);

/*
 * Settle whether the symmetric m x m matrix a (read from path) is positive
 * semi-definite.  The test: the nearest PSD matrix (eigenvalue clipping,
 * hc_covmatrix_nearest_psd) moves no entry by more than
 * COVMATRIX_DEFAULT_SYMMETRY_TOL relative to sqrt(a_ii a_jj), so a
 * rank-deficient matrix printed to 9 digits passes.  Otherwise, without
 * ps->asked: "holdcount CMD: PATH: REFUSAL" and HC_EDATA (refusal should
 * name --repair-psd); with it, a is replaced by the nearest PSD matrix, a
 * note goes to stderr and ps records what moved.  The decomposition's
 * working copies (three m x m arrays beside a) are checked against
 * max_bytes first (memory.h; HC_ENOMEM naming path).  Prints its own errors.
 */
int cli_psd_settle(const char *cmd, const char *path, const char *refusal, double *a, size_t m,
		   size_t max_bytes, struct cli_psd *ps);

/* The fields psd_repair, psd_repaired, psd_negative_eigenvalues,
 * psd_min_eigenvalue, psd_repair_distance, psd_repair_relative_distance
 * (scaled as the output) and, when repaired, a note saying so: nothing
 * unless --repair-psd was given.  HC_ENOMEM only. */
int cli_psd_fields(struct report *r, const struct cli_psd *ps);

/* Load a covariance-matrix CSV (--covariance) within cu's --max-memory:
 * options that only describe a return history are refused (HC_EUSAGE),
 * the loader's errors printed,
 * and a matrix that is not positive semi-definite is HC_EDATA unless
 * ps->asked, when it is repaired (cli_psd_settle). */
struct covmatrix;
int cli_load_covariance(const char *cmd, const struct cli_universe *cu, const struct cli_args *a,
			const char *path, struct cli_psd *ps, struct covmatrix **out);

/* The pairwise-complete covariances of u (which has gaps), settled by
 * cli_psd_settle with refusal: *out on success.  Prints its own errors. */
int cli_pairwise_matrix(const char *cmd, const struct universe *u, const char *path,
			const char *refusal, struct cli_psd *ps, struct covmatrix **out);

/* The end of every refusal of a matrix that is not positive semi-definite. */
#define CLI_PSD_HINT "--repair-psd uses the nearest positive semi-definite matrix instead"

/* The holding counts: text (NULL = the default grid up to m) parsed and
 * checked against m securities (0 = unbounded).  Prints its error;
 * HC_EUSAGE names the size and the securities kept. Free *sizes with hc_free. */
int cli_sizes(const char *cmd, const char *text, size_t m, size_t **sizes, size_t *nsizes);

/* The fields that state the scale: periods_per_year (none when 1 and not
 * annualised) and annualisation, a sentence saying what was multiplied. */
int cli_add_scale(struct report *r, double periods_per_year, int annualised);

/* The "curve" table of c (columns from hc_curve_report, then periods_per_year,
 * filled when annualised) added to r.  Defined in cmd_curve.c. */
struct curve;
int cli_curve_table(struct report *r, const struct curve *c, int annualised);

/* ---- installed files (cli_paths.c) ------------------------------------------ */

/* The path of a bundled demo-data file (e.g. "demo-universe.csv") into buf:
 * from $HOLDCOUNT_DATA_DIR when set; else, for the build tree's binary, the
 * source tree's data/; else DATADIR/holdcount beside the installed binary
 * (BINDIR/../share/holdcount), then at the configured prefix.  Returns 1 when
 * the file there is readable, 0 otherwise (buf then names the last place
 * tried, for the message). */
int cli_data_file(char *buf, size_t size, const char *file);

/* ---- what `report` shares with `curve`, `enough` and `audit` ---------------- */

/* The sampled columns of c from sam's paths and seed: random portfolios of
 * the return series of u, or of the covariance matrix cm when u is NULL;
 * a progress bar unless quiet.  Sets c->paths and c->seed.  Library status
 * in err (not printed).  Defined in cmd_curve.c. */
struct covmatrix;
int cli_curve_sample(const struct cli_sampling *sam, int quiet, const struct universe *u,
		     const struct covmatrix *cm, struct curve *c, const size_t *sizes, size_t nsizes,
		     struct hc_error *err);

/* What a curve was computed from: a return history or a matrix. */
struct cli_curve_source {
	const char *path;
	const char *input;          /* "return history" or "covariance matrix" */
	size_t m, dropped, periods; /* periods 0: unknown (a matrix) */
	int annualised;
};
/* The fields and the "curve" table that `holdcount curve` prints, without
 * notes or cautions.  HC_ENOMEM only.  Defined in cmd_curve.c. */
struct moments;
int cli_curve_fields(struct report *r, const struct cli_curve_source *src, const struct moments *mo,
		     const struct curve *c);

/* The rule options of `enough` (cmd_enough.c): --rules, each rule's
 * parameters, --bootstrap and its kind, --bootstrap-sampled. */
struct cli_rules {
	const char *rules;
	double near_floor;
	const char *marginal;
	const char *band;
	double premium, holding_cost;
	double te_budget;
	const char *shortfall;     /* --lag-share (or its old spelling --shortfall) */
	const char *statman;       /* --statman B:L premiums */
	double index_cost;
	const char *alexeev_tapon; /* --alexeev-tapon X:Q */
	const char *policy;        /* --policy RULE */
	int policy_at;             /* --policy-at: 0 upper end of the interval, 1 the estimate */
	size_t bootstrap;
	int bootstrap_kind;
	size_t block_length;       /* 0: Politis & White's data-driven length */
	int interval;              /* 0 studentized, 1 BCa, 2 percentile */
	int bootstrap_sampled;
	size_t bootstrap_paths;
};
extern const struct cli_group cli_group_rules;
void cli_rules_init(struct cli_rules *r);

/* A yearly sd step, as --marginal takes it: "0.10pp" (percentage points),
 * "0.1%" or "0.001".  0 and *out set, or -1 when not such a number.
 * Defined in cmd_enough.c; rolling reads --marginal with it too. */
int cli_parse_sd_step(const char *s, double *out);

/* The rules configuration from the group; have_data 0 (summary statistics)
 * or covariance 1 select the exact rules by default.  Prints its error;
 * returns the exit status. */
struct rules_config;
int cli_rules_config(const char *cmd, const struct cli_rules *o, const struct cli_args *a,
		     int have_data, int covariance, struct rules_config *cfg);

/* Every rule of cfg on the return history u (moments mo), exactly as
 * `holdcount enough UNIVERSE` runs them: exact, the sampled rules staged by
 * hc_rules_sampled with smp's paths and seed (strata when strat says so), the
 * bootstrap interval, and with --bootstrap-sampled the sampled rules'
 * interval.  res has room for RULES_COUNT; *out gets the report `enough`
 * prints (release with hc_report_free).  With stages set, each long step
 * (sampling, bootstrap, sampled bootstrap) is announced by cli_stage
 * before its progress bar, as `holdcount report` lists its stages.
 * Prints its error; returns the exit status. */
struct rule_result;
struct cli_strata;
int cli_enough_data(const char *cmd, const struct cli_rules *rul, const struct cli_sampling *smp,
		    struct cli_strata *strat, int quiet, int stages, const struct universe *u,
		    const struct moments *mo, const struct rules_config *cfg,
		    struct rule_result *res, size_t *nres, struct report **out);

/* After hc_rolling_report: each rule's parameters as fields and the note on
 * drifting averages, as `holdcount rolling` prints them (cmd_rolling.c), so
 * that `holdcount report` shows the same object.  0, or non-zero when out
 * of memory. */
struct rolling_result;
int cli_rolling_context(struct report *r, const struct rolling_result *res);

/* The holdings inputs of `audit` (cmd_audit.c): --holdings, --sectors,
 * --allow-short, --strict and the column names. */
struct cli_holdings {
	const char *holdings;
	const char *sectors;
	int allow_short;
	int strict;
	const char *fund_column, *holding_id_column, *weight_column, *market_value_column, *issuer_column;
};
extern const struct cli_group cli_group_holdings;

/* The audit policy: --min-holdings, --min-effective, --max-weight,
 * --max-sector-weight, --screens. */
struct cli_policy {
	size_t min_holdings;
	double min_effective;
	double max_weight;
	double max_sector_weight;
	const char *screens;
};
extern const struct cli_group cli_group_policy;

/* Load the holdings (and sector map) of ho and audit them against u
 * (moments mo) with po's policy and sam's paths and seed, exactly as
 * `holdcount audit` does; the loader's warnings go to stderr.  *out gets the
 * report `audit` prints.  The caller frees *h, *labels, *res and *out (each
 * may be set on failure).  A failed policy is not an error here: see
 * (*res)->failed_funds.  Prints its error; returns the exit status. */
struct holdings;
struct holdings_labels;
struct audit_result;
int cli_audit_data(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
		   const struct cli_sampling *sam, int quiet, const struct universe *u,
		   const struct moments *mo, struct holdings **h, struct holdings_labels **labels,
		   struct audit_result **res, struct report **out);
/* "holdcount CMD: 2 of 3 funds fail the policy: 'A' (max-weight), ..." on stderr. */
void cli_audit_say_failures(const char *cmd, const struct audit_result *res);

/* ---- stratified draws (cli_strata.c) -------------------------------------- */

/* --strata FILE, --strata-id-column NAME, --strata-column NAME,
 * --per-stratum-max K, --proportional: random portfolios spread across the
 * labels of a sector map (strata.h). */
struct sampler_options;
struct cli_strata {
	const char *map;           /* NULL = unconstrained draws */
	const char *id_column, *label_column;
	size_t per_stratum_max;    /* 0 = no cap */
	int proportional;
	/* filled by cli_strata_apply */
	size_t *stratum_of;
	char **labels;
	size_t nlabels, unmapped;
	struct strata *strata;
};
extern const struct cli_group cli_group_strata;
void cli_strata_init(struct cli_strata *s);
/* Load the map for u and point so's strata fields at it; nothing when no
 * --strata was given (returns HC_OK).  Prints its error; returns the exit
 * status (HC_EUSAGE for a cap or --proportional without --strata, both
 * at once, or neither with --strata). */
int cli_strata_apply(const char *cmd, struct cli_strata *s, const struct universe *u,
		     struct sampler_options *so);
/* Fields stating the stratification (strata, per_stratum_max, ...). */
int cli_strata_fields(struct report *r, const struct cli_strata *s);
void cli_strata_release(struct cli_strata *s);

/* ---- commands -------------------------------------------------------------- */

#define CLI_DECLARE_COMMAND(name) \
	int cmd_##name(int argc, char **argv); \
	extern const struct cli_command cli_command_##name

CLI_DECLARE_COMMAND(describe);
CLI_DECLARE_COMMAND(curve);
CLI_DECLARE_COMMAND(formula);
CLI_DECLARE_COMMAND(synth);
CLI_DECLARE_COMMAND(enough);
CLI_DECLARE_COMMAND(audit);
CLI_DECLARE_COMMAND(report);
CLI_DECLARE_COMMAND(rolling);

#endif
