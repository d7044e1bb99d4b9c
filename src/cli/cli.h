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
 *              rc = cli_load_source("frob", &o.uni, &a, a.positional[0], 0, NULL, &src);
 *              ... the library's options from o, then its one call:
 *              hc_frob_run(&res, src, &fo, &err)  (cli_fail on error), and
 *              rc = cli_write_report("frob", &o.out, res->report);  // prints its own errors
 *              ...
 *              cli_args_release(&a);
 *              return rc;
 *          }
 *
 *      Library failures: `return cli_fail("frob", &err);` prints
 *      "holdcount frob: MESSAGE" and returns err.code (the exit status).
 *      Long loops: cli_steps_bind fills the analysis's struct hc_progress
 *      with progress bars on stderr (only on a terminal and without
 *      --quiet).  A command computes nothing itself: parse, build the
 *      source, call the library, write (docs/architecture.md).
 *
 * Values land in these C types: CLI_FLAG int (set to 1), CLI_STRING
 * const char * (points into argv), CLI_COUNT size_t, CLI_REAL double,
 * CLI_FRACTION double ("10%" or "0.10" both give 0.10), CLI_CHOICE int
 * (index into the option's choices), CLI_U64 uint64_t, CLI_LIST struct
 * cli_list (every value, in order, up to CLI_LIST_MAX).  A repeated option
 * of another kind: the last one wins.  cli_given() says whether an option was on the line.
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
	CLI_U64 = 6,
	CLI_THREADS = 7,           /* a thread count: size_t, 1 to HC_THREADS_MAX */
	CLI_LIST = 8
};

/* A repeatable string option's values (pointing into argv); last is the
 * last one given (NULL when none), so code reading the option as one
 * string sees the last, as for CLI_STRING. */
#define CLI_LIST_MAX 32
struct cli_list {
	const char *last;
	size_t n;
	const char *v[CLI_LIST_MAX];
};

/* cli_threads.c: the one parse of a thread count (--threads and
 * HOLDCOUNT_THREADS): 0 and *out set, or -1 when text is not a whole
 * number from 1 to HC_THREADS_MAX; cli_threads_expected says so in words. */
int cli_threads_parse(const char *text, size_t *out);
extern const char cli_threads_expected[];
/* Make an exit from inside the OpenMP runtime (a thread it could not
 * create) exit with HC_ERESOURCE and a message; once, from main. */
void cli_threads_guard(void);

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

/* An option of a shared group whose default differs for one command: the
 * text help, the manual page and completion show for it there. */
struct cli_default {
	const char *name;               /* long name without "--"; NULL ends a list */
	const char *default_text;
};

struct cli_group_use {
	const struct cli_group *group;  /* NULL ends the list */
	size_t offset;                  /* of the group's struct in the command's struct */
	const struct cli_omit *omit;    /* the group's options left out; NULL = none */
	const struct cli_default *defaults; /* defaults shown differently here; NULL = none */
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
enum cli_missing { CLI_MISSING_COMPLETE = 0, CLI_MISSING_PAIRWISE = 1, CLI_MISSING_ALIVE = 2 };
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
	int strict;                /* --strict: a data-check finding is an error */
	const char *from, *to;     /* --from DATE, --to DATE: the sample's first and last dates */
	const char *exclude;       /* --exclude ID,ID,... */
	const char *exclude_file;  /* --exclude-file FILE: one id a line */
	int no_check;              /* set by `check` itself: cli_load_universe runs no checks */
	int frequency;             /* --frequency: enum universe_frequency (the words in that order) */
	int bad_cells;             /* --bad-cells: enum universe_bad_cells */
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
	size_t threads;            /* 0 = all cores (OpenMP's default); else 1..HC_THREADS_MAX */
};
extern const struct cli_group cli_group_sampling;
void cli_sampling_init(struct cli_sampling *s);

/* --measures LIST (curve): the measures beyond the sd family
 * (include/holdcount/measures.h), parsed by hc_measures_parse. */
struct cli_measures {
	const char *list;          /* NULL = "sd", the sd family alone */
};
extern const struct cli_group cli_group_measures;
/* HC_OK and *mask set, or the usage error printed and its status. */
int cli_measures_mask(const char *cmd, const struct cli_measures *m, unsigned *mask);

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

/* An analysis's progress (analysis.h) on stderr: each counted step gets a
 * cli_progress bar; with stages set, each step's sentence is announced first
 * by cli_stage (as `holdcount report` lists its stages).  steps must outlive
 * the analysis call. */
struct hc_progress;
struct cli_steps {
	const char *cmd;
	int quiet, stages;
	struct cli_progress bar;
};
void cli_steps_bind(struct cli_steps *steps, struct hc_progress *p, const char *cmd, int quiet, int stages);

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

/* --from, --to, --exclude and --exclude-file on a loaded universe: the
 * periods between the dates (the missing-data policy `missing`, a
 * universe.h value, applied within them) and the securities not excluded;
 * *u is replaced.  A message and the status on error. */
int cli_restrict(const char *cmd, const struct cli_universe *cu, int missing, struct universe **u);

/* The data checks before any figure (datacheck.h): the count and the
 * first finding on stderr as a warning, or with --strict-data as an error
 * (HC_EDATA).  cli_load_universe runs it unless cu->no_check. */
int cli_data_check(const char *cmd, const struct cli_universe *cu, struct universe *u);

/* Load path with the group's options (then cli_restrict and
 * cli_data_check); prints the loader's message ("holdcount CMD:
 * FILE:LINE:COLUMN: ...") and returns its status. */
int cli_load_universe(const char *cmd, const struct cli_universe *cu,
		      const char *path, struct universe **out);

/* --max-memory in bytes (0 = from available memory); HC_EUSAGE (printed)
 * when it overflows. */
int cli_max_bytes(const char *cmd, const struct cli_universe *cu, size_t *bytes);

/* --repair-psd without a matrix to repair (no --covariance, no --missing
 * pairwise): HC_EUSAGE (printed). */
int cli_psd_usage(const char *cmd, const struct cli_universe *cu);

/*
 * The data source (source.h) of a command's file: a covariance matrix with
 * --covariance (on its own scale unless --periods-per-year is given; the
 * return-history options refused), else the return history loaded with
 * cu's options (--missing alive: a history with gaps is read period by
 * period, HC_SOURCE_RAGGED).  need_matrix and refusal: series with gaps
 * get their pairwise-complete matrix (hc_source_options): CLI_NEED_SAMPLING
 * for random portfolios, CLI_NEED_FUNDS for funds' variances (pairwise
 * sources only: a ragged one builds no matrix, its audit takes each fund's
 * own holdings' covariances).  A repair is announced on stderr.  Prints
 * its error; returns the exit status.  cli_source_from_universe does the
 * same for a universe already loaded (taking ownership of u).
 */
#define CLI_NEED_SAMPLING 1
#define CLI_NEED_FUNDS 2
struct hc_source;
int cli_load_source(const char *cmd, const struct cli_universe *cu, const struct cli_args *a,
		    const char *path, int need_matrix, const char *refusal, struct hc_source **out);
int cli_source_from_universe(const char *cmd, const struct cli_universe *cu, struct universe *u,
			     const char *path, int need_matrix, const char *refusal, struct hc_source **out);

/* The holding counts: text (NULL = the default grid up to m) parsed and
 * checked against m securities (0 = unbounded).  Prints its error;
 * HC_EUSAGE names the size and the securities kept. Free *sizes with hc_free. */
int cli_sizes(const char *cmd, const char *text, size_t m, size_t **sizes, size_t *nsizes);

/* ---- installed files (cli_paths.c) ------------------------------------------ */

/* The path of a bundled demo-data file (e.g. "demo-universe.csv") into buf:
 * from $HOLDCOUNT_DATA_DIR when set; else, for the build tree's binary, the
 * source tree's data/; else DATADIR/holdcount beside the installed binary
 * (BINDIR/../share/holdcount), then at the configured prefix.  Returns 1 when
 * the file there is readable, 0 otherwise (buf then names the last place
 * tried, for the message). */
int cli_data_file(char *buf, size_t size, const char *file);

/* ---- option groups shared by several commands ------------------------------ */

/* The rule options of `enough`, `report` and `rolling` (cli_rules.c):
 * --rules, each rule's parameters, --bootstrap and its kind,
 * --bootstrap-sampled. */
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

/* The rules configuration from the group; have_data 0 (summary statistics)
 * or covariance 1 select the exact rules by default.  Prints its error;
 * returns the exit status. */
struct rules_config;
int cli_rules_config(const char *cmd, const struct cli_rules *o, const struct cli_args *a,
		     int have_data, int covariance, struct rules_config *cfg);

/* The options of hc_enough_run (enough.h) from the rule and sampling groups
 * (cli_rules_config for its rules).  Prints its error; returns the exit
 * status. */
struct hc_enough_options;
int cli_enough_options(const char *cmd, const struct cli_rules *rul, const struct cli_sampling *smp,
		       const struct cli_args *a, int have_data, int covariance, struct hc_enough_options *eo);

/* Options that contradict the rules chosen, before any file is read: strata
 * without a sampled rule, --paths 0 with one.  Prints; returns the status. */
struct cli_strata;
int cli_enough_checks(const char *cmd, const struct cli_sampling *smp, const struct cli_strata *strat,
		      const struct rules_config *cfg);

/* The holdings inputs of `audit` (cli_audit.c; `audit` and `report`): --holdings, --sectors,
 * --allow-short, --strict and the column names. */
struct cli_holdings {
	struct cli_list holdings;  /* --holdings, repeatable: every file is read */
	const char *benchmark;
	const char *encoding;
	const char *type_column, *group_column;
	int cash_risk;             /* enum audit_cash_risk */
	double min_covered_weight;
	const char *sectors;
	int allow_short;
	int strict;
	const char *fund_column, *holding_id_column, *weight_column, *market_value_column, *issuer_column;
};
extern const struct cli_group cli_group_holdings;
/* Zeros, and the library's default least covered weight. */
void cli_holdings_init(struct cli_holdings *ho);

/* The audit policy: --min-holdings, --min-effective, --max-weight,
 * --max-sector-weight, --screens. */
struct cli_policy {
	size_t min_holdings;
	double min_effective;
	double max_weight;
	double max_sector_weight;
	const char *screens;
	int reading;               /* enum audit_reading: --basket-reading */
};
extern const struct cli_group cli_group_policy;

/* The library's audit options from ho, po and sam (usage errors printed),
 * and the holdings (every --holdings file, merged), the sector map (set as
 * ao->sectors) and the benchmark (--benchmark, set as ao->benchmark) loaded
 * with their warnings on stderr.  The caller frees *h, *labels and *bench
 * (each may be set on failure).  Prints its error; returns the exit status. */
struct holdings;
struct holdings_labels;
struct audit_result;
struct audit_options;
int cli_audit_load(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
		   const struct cli_sampling *sam, struct audit_options *ao, struct holdings **h,
		   struct holdings_labels **labels, struct holdings **bench);
/* One warning line per fund holding ids the universe lacks, and one per
 * fund without risk figures for two holdings sharing too few periods (a
 * history read period by period), on stderr. */
void cli_audit_say_missing(const char *cmd, const struct audit_result *res);
/* "holdcount CMD: 2 of 3 funds fail the policy: 'A' (max-weight), ..." on stderr. */
void cli_audit_say_failures(const char *cmd, const struct audit_result *res);
/* The audit's exit status: HC_EPOLICY (naming the failures on stderr) when
 * a fund fails the policy, else HC_EINSUFFICIENT (naming the funds and their
 * covered weight) when a fund has insufficient data, else HC_OK. */
int cli_audit_status(const char *cmd, const struct audit_result *res);

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
/* Load the map for u and describe it in su (analysis.h); nothing when no
 * --strata was given (returns HC_OK, su with no map).  Prints its error; returns the exit
 * status (HC_EUSAGE for a cap or --proportional without --strata, both
 * at once, or neither with --strata). */
struct hc_strata_use;
int cli_strata_apply(const char *cmd, struct cli_strata *s, const struct universe *u,
		     struct hc_strata_use *su);
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
CLI_DECLARE_COMMAND(compare);
CLI_DECLARE_COMMAND(horizon);
CLI_DECLARE_COMMAND(check);

#endif
