/*
 * cli.c - option tables, parsing and help, shared by every command.
 *
 * The parser and the help printer walk the same tables (cli.h), which is
 * what keeps `--help`, `help COMMAND` and the behaviour in step.
 */
#define _XOPEN_SOURCE 700   /* realpath(3) */

#include "cli.h"

#include <errno.h>
#include <limits.h>
#include <math.h>
#include <signal.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "holdcount/analysis.h"
#include "holdcount/memory.h"
#include "holdcount/outfile.h"
#include "holdcount/universe.h"

#define HELP_WIDTH 79
#define HELP_INDENT 30

/* ---- the shared groups --------------------------------------------------- */

static const char *const format_words[] = { "table", "csv", "json", NULL };
static const char *const missing_words[] = { "complete", "pairwise", "alive", NULL };
static const char *const layout_words[] = { "wide", "long", NULL };
static const char *const bad_cell_words[] = { "refuse", "missing", NULL };
static const char *const frequency_words[] = { "as-read", "weekly", "monthly", "quarterly", NULL };

#define OUT(f) offsetof(struct cli_output, f)
static const struct cli_option output_options[] = {
	{ "format", 0, CLI_CHOICE, OUT(format), NULL, "output format", format_words, "table" },
	{ "output", 'o', CLI_STRING, OUT(output), "FILE",
	  "write to FILE instead of standard output; FILE appears complete or not at all", NULL, NULL },
	{ "quiet", 'q', CLI_FLAG, OUT(quiet), NULL, "no progress display on standard error", NULL, NULL },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_output = { "output options", output_options };

#define UNI(f) offsetof(struct cli_universe, f)
static const struct cli_option universe_options[] = {
	{ "prices", 0, CLI_FLAG, UNI(prices), NULL,
	  "cells are prices; simple returns are computed from them", NULL, NULL },
	{ "log-returns", 0, CLI_FLAG, UNI(log_returns), NULL,
	  "with --prices, compute log returns instead of simple returns", NULL, NULL },
	{ "percent", 0, CLI_FLAG, UNI(percent), NULL,
	  "cells are percents (2.5 means 2.5%); a trailing % on a cell says the same", NULL, NULL },
	{ "missing", 0, CLI_CHOICE, UNI(missing), NULL,
	  "securities with gaps: keep every one and let each period use the securities alive then, "
	  "so listings and delistings stay in (alive); drop them, keeping survivors only (complete); "
	  "or keep those meeting --min-coverage and use pairwise-complete covariances (pairwise)",
	  missing_words, "alive" },
	{ "from", 0, CLI_STRING, UNI(from), "DATE",
	  "first date of the sample (YYYY-MM-DD, or YYYY-MM for that month's end)", NULL, "the first date" },
	{ "to", 0, CLI_STRING, UNI(to), "DATE",
	  "last date of the sample, an as-of date (YYYY-MM-DD or YYYY-MM)", NULL, "the last date" },
	{ "exclude", 0, CLI_STRING, UNI(exclude), "ID,...",
	  "leave these securities out (listed as dropped)", NULL, NULL },
	{ "exclude-file", 0, CLI_STRING, UNI(exclude_file), "FILE",
	  "leave out the securities listed in FILE, one id a line ('#' starts a comment)", NULL, NULL },
	{ "frequency", 0, CLI_CHOICE, UNI(frequency), NULL,
	  "convert to calendar periods: returns compounded within each week, month or quarter "
	  "(prices: each period's last price), dated by the period's last date", frequency_words, "as-read" },
	{ "bad-cells", 0, CLI_CHOICE, UNI(bad_cells), NULL,
	  "spreadsheet errors such as #N/A, and zero or negative prices: an error naming the cell "
	  "(refuse), or read as missing, counted and the first named on standard error (missing)",
	  bad_cell_words, "refuse" },
	{ "strict-data", 0, CLI_FLAG, UNI(strict), NULL,
	  "a data-check finding (see 'holdcount check') is an error (exit 3), not a warning", NULL, NULL },
	{ "min-coverage", 0, CLI_FRACTION, UNI(min_coverage), "F",
	  "share of the periods a security must cover to be kept under --missing pairwise, "
	  "as 0.8 or 80%", NULL, "80%" },
	{ "periods-per-year", 0, CLI_REAL, UNI(periods_per_year), "P",
	  "periods per year, for annualising", NULL, "detected from the dates" },
	{ "layout", 0, CLI_CHOICE, UNI(layout), NULL,
	  "wide: a date column, then one column per security; long: date,id,value rows",
	  layout_words, "wide" },
	{ "date-column", 0, CLI_STRING, UNI(date_column), "NAME",
	  "name of the date column", NULL, "the first column (wide), 'date' (long)" },
	{ "id-column", 0, CLI_STRING, UNI(id_column), "NAME",
	  "long layout: name of the security id column", NULL, "id" },
	{ "value-column", 0, CLI_STRING, UNI(value_column), "NAME",
	  "long layout: name of the value column", NULL, "value" },
	{ "delimiter", 0, CLI_STRING, UNI(delimiter), "CHAR",
	  "field delimiter, ',' or ';'", NULL, "detected from the header" },
	{ "max-memory", 0, CLI_COUNT, UNI(max_memory_mib), "MIB",
	  "refuse an input when its numbers, with the working copies made of them, would need more "
	  "than MIB mebibytes; 0 means the default", NULL, "80% of the memory available" },
	{ "covariance", 0, CLI_FLAG, UNI(covariance), NULL,
	  "the file is a covariance matrix (ids in the header row and first column), "
	  "not a return history", NULL, NULL },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_universe = { "universe options", universe_options };

static const struct cli_option repair_options[] = {
	{ "repair-psd", 0, CLI_FLAG, UNI(repair_psd), NULL,
	  "when the covariance matrix (--covariance) or the pairwise-complete covariances (--missing "
	  "pairwise) are not positive semi-definite, use the nearest matrix that is (eigenvalue "
	  "clipping) and say so", NULL, "refuse such a matrix" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_matrix_repair = { "covariance matrix repair", repair_options };

#define SAM(f) offsetof(struct cli_sampling, f)
static const struct cli_option sampling_options[] = {
	{ "sizes", 0, CLI_STRING, SAM(sizes), "LIST",
	  "holding counts, as 1,2,5-30,50,100", NULL, "1 to 10, then a log-spaced grid up to every security" },
	{ "paths", 0, CLI_COUNT, SAM(paths), "K",
	  "random portfolios per holding count; 0 skips sampling", NULL, "10000" },
	{ "seed", 0, CLI_U64, SAM(seed), "S",
	  "seed of the random portfolios; the same seed gives the same output", NULL, "1" },
	{ "threads", 0, CLI_THREADS, SAM(threads), "N",
	  "threads for sampling; the output does not depend on it", NULL,
	  "$HOLDCOUNT_THREADS, else every core" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_sampling = { "sampling options", sampling_options };

#define SUM(f) offsetof(struct cli_summary, f)
static const struct cli_option summary_options[] = {
	{ "average-variance", 0, CLI_REAL, SUM(average_variance), "V",
	  "average variance of one security, on any scale", NULL, NULL },
	{ "average-covariance", 0, CLI_REAL, SUM(average_covariance), "C",
	  "average covariance of two distinct securities, on the same scale", NULL, NULL },
	{ "average-sd", 0, CLI_FRACTION, SUM(average_sd), "S",
	  "average standard deviation of one security, as 0.3 or 30% (instead of --average-variance)",
	  NULL, NULL },
	{ "average-correlation", 0, CLI_FRACTION, SUM(average_correlation), "R",
	  "average correlation of two distinct securities (instead of --average-covariance)", NULL, NULL },
	{ "securities", 0, CLI_COUNT, SUM(securities), "M",
	  "securities in the universe, for the finite-universe formulas, at most 1000000000; "
	  "0 means unbounded, as leaving it out does", NULL, "unbounded" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_summary = { "summary statistics", summary_options };

void cli_output_init(struct cli_output *o)
{
	o->format = CLI_FORMAT_TABLE;
	o->output = NULL;
	o->quiet = 0;
}

void cli_universe_init(struct cli_universe *u)
{
	memset(u, 0, sizeof *u);
	u->missing = CLI_MISSING_ALIVE;
	u->min_coverage = UNIVERSE_DEFAULT_MIN_COVERAGE;
	u->layout = CLI_LAYOUT_WIDE;
	u->periods_per_year = NAN;
}

void cli_sampling_init(struct cli_sampling *s)
{
	s->sizes = NULL;
	s->paths = CLI_DEFAULT_PATHS;
	s->seed = CLI_DEFAULT_SEED;
	s->threads = 0;
}

void cli_summary_init(struct cli_summary *s)
{
	s->average_variance = s->average_covariance = NAN;
	s->average_sd = s->average_correlation = NAN;
	s->securities = 0;
}

/* ---- parsing values ------------------------------------------------------ */

/* Each returns 0 and stores, or -1 with *expected naming what was wanted. */

/* A whole number of decimal digits only, at most limit. */
static int parse_unsigned(const char *s, unsigned long long limit, unsigned long long *out)
{
	unsigned long long v;
	char *end;

	if (!*s || strspn(s, "0123456789") != strlen(s))
		return -1;
	errno = 0;
	v = strtoull(s, &end, 10);
	if (errno || v > limit)
		return -1;
	*out = v;
	return 0;
}

static int parse_count(const char *s, size_t *out)
{
	unsigned long long v;

	if (parse_unsigned(s, SIZE_MAX, &v))
		return -1;
	*out = (size_t)v;
	return 0;
}

static int parse_u64(const char *s, uint64_t *out)
{
	unsigned long long v;

	if (parse_unsigned(s, UINT64_MAX, &v))
		return -1;
	*out = (uint64_t)v;
	return 0;
}

static int parse_real(const char *s, size_t len, double *out)
{
	char buf[128], *end;
	double v;

	if (len == 0 || len >= sizeof buf || strchr(" \t\n", s[0]))
		return -1;
	memcpy(buf, s, len);
	buf[len] = '\0';
	errno = 0;
	v = strtod(buf, &end);
	if (*end || errno == ERANGE || !isfinite(v))
		return -1;
	*out = v;
	return 0;
}

static int store_value(const struct cli_option *op, void *where, const char *val)
{
	size_t len = strlen(val);
	size_t i;

	switch (op->kind) {
	case CLI_STRING:
		*(const char **)where = val;
		return 0;
	case CLI_LIST: {
		struct cli_list *l = where;
		if (l->n == CLI_LIST_MAX)
			return -1;
		l->v[l->n++] = val;
		l->last = val;
		return 0;
	}
	case CLI_COUNT:
		return parse_count(val, where);
	case CLI_U64:
		return parse_u64(val, where);
	case CLI_THREADS:
		return cli_threads_parse(val, where);
	case CLI_REAL:
		return parse_real(val, len, where);
	case CLI_FRACTION:
		if (len > 1 && val[len - 1] == '%') {
			if (parse_real(val, len - 1, where))
				return -1;
			*(double *)where /= 100.0;
			return 0;
		}
		return parse_real(val, len, where);
	case CLI_CHOICE:
		for (i = 0; op->choices[i]; i++)
			if (strcmp(op->choices[i], val) == 0) {
				*(int *)where = (int)i;
				return 0;
			}
		return -1;
	default:
		return -1;
	}
}

static const char *expected_text(const struct cli_option *op, char *buf, size_t size)
{
	size_t i, used = 0;

	switch (op->kind) {
	case CLI_COUNT: return "a whole number (0, 1, 2, ...)";
	case CLI_U64: return "a whole number from 0 to 18446744073709551615";
	case CLI_THREADS: return cli_threads_expected;
	case CLI_REAL: return "a finite number";
	case CLI_FRACTION: return "a number, or a percent such as 10%";
	case CLI_LIST: return "at most 32 values (the option is given too often)";
	case CLI_CHOICE:
		used = (size_t)snprintf(buf, size, "one of ");
		for (i = 0; op->choices[i] && used < size; i++)
			used += (size_t)snprintf(buf + used, size - used, "%s%s",
					       i ? (op->choices[i + 1] ? ", " : " or ") : "", op->choices[i]);
		return buf;
	default: return "a value";
	}
}

/* ---- parsing the command line -------------------------------------------- */

static int usage_fail(const struct cli_command *cmd, const char *fmt, ...)
	__attribute__((format(printf, 2, 3)));

static int usage_fail(const struct cli_command *cmd, const char *fmt, ...)
{
	va_list ap;

	fprintf(stderr, "holdcount %s: ", cmd->name);
	va_start(ap, fmt);
	vfprintf(stderr, fmt, ap);
	va_end(ap);
	fprintf(stderr, " (see 'holdcount %s --help')\n", cmd->name);
	return HC_EUSAGE;
}

/* The entry leaving op out of the command's use g of its group, or NULL
 * when the command takes op. */
static const struct cli_omit *omitted(const struct cli_group_use *g, const struct cli_option *op)
{
	const struct cli_omit *om;

	for (om = g->omit; om && om->name; om++)
		if (strcmp(om->name, op->name) == 0)
			return om;
	return NULL;
}

/* The options of g the command shows and takes. */
static size_t options_taken(const struct cli_group_use *g)
{
	const struct cli_option *op;
	size_t n = 0;

	for (op = g->group->options; op->name; op++)
		n += !omitted(g, op);
	return n;
}

/* Find a long option (name of length len) or a short one (len 0) among
 * the command's groups; sets *base to the group's storage.  An option the
 * command leaves out is not found; *left_out (when not NULL) then says why. */
static const struct cli_option *find_option(const struct cli_command *cmd, const char *name,
					    size_t len, char shortc, void *opts, char **base,
					    const struct cli_omit **left_out)
{
	const struct cli_group_use *g;
	const struct cli_option *op;

	if (left_out)
		*left_out = NULL;
	for (g = cmd->groups; g && g->group; g++)
		for (op = g->group->options; op->name; op++) {
			const struct cli_omit *om;

			if (!(len ? (strlen(op->name) == len && strncmp(op->name, name, len) == 0)
				  : (shortc && op->short_name == shortc)))
				continue;
			if ((om = omitted(g, op)) != NULL) {
				if (left_out)
					*left_out = om;
				continue;
			}
			*base = (char *)opts + g->offset;
			return op;
		}
	return NULL;
}

/* HOLDCOUNT_THREADS as the default of --threads (issue 8), for every
 * command that has that option, whichever group holds it. */
static int threads_from_environment(const struct cli_command *cmd, void *opts)
{
	const struct cli_option *op;
	const char *env = getenv("HOLDCOUNT_THREADS");
	char *base;
	size_t n;

	if (!env || !*env || !(op = find_option(cmd, "threads", strlen("threads"), 0, opts, &base, NULL)))
		return HC_OK;
	if (cli_threads_parse(env, &n)) {
		fprintf(stderr, "holdcount %s: HOLDCOUNT_THREADS must be %s, found '%s'\n", cmd->name,
			cli_threads_expected, env);
		return HC_EUSAGE;
	}
	*(size_t *)(base + op->offset) = n; /* --threads is a CLI_THREADS, a size_t */
	return HC_OK;
}

static int take_option(const struct cli_command *cmd, struct cli_args *a, void *opts,
		       int argc, char **argv, int *i)
{
	const char *arg = argv[*i], *val = NULL, *eq = NULL;
	const struct cli_option *op;
	const struct cli_omit *left_out = NULL;
	char *base = NULL;

	if (arg[1] == '-') {
		eq = strchr(arg + 2, '=');
		op = find_option(cmd, arg + 2, eq ? (size_t)(eq - arg - 2) : strlen(arg + 2), 0, opts, &base,
				 &left_out);
		if (eq)
			val = eq + 1;
	} else {
		op = arg[1] ? find_option(cmd, NULL, 0, arg[1], opts, &base, &left_out) : NULL;
		if (arg[2])
			val = arg + 2;
	}
	if (!op && left_out)
		return usage_fail(cmd, "--%s does not apply: %s", left_out->name, left_out->why);
	if (!op && arg[1] == '-')
		return usage_fail(cmd, "unknown option '%.*s'", (int)(eq ? eq - arg : (long)strlen(arg)), arg);
	if (!op)
		return usage_fail(cmd, "unknown option '%.2s'", arg);
	a->given[a->ngiven++] = op;
	if (op->kind == CLI_FLAG) {
		if (val)
			return usage_fail(cmd, "option '--%s' takes no value, found '%s'", op->name, val);
		*(int *)(base + op->offset) = 1;
		return HC_OK;
	}
	if (!val) {
		if (*i + 1 >= argc)
			return usage_fail(cmd, "option '--%s' needs a value", op->name);
		val = argv[++*i];
	}
	if (store_value(op, base + op->offset, val)) {
		char buf[160];
		return usage_fail(cmd, "option '--%s' expects %s, found '%s'", op->name,
				  expected_text(op, buf, sizeof buf), val);
	}
	return HC_OK;
}

/* ---- inputs and outputs ---------------------------------------------------- */

/* The files a command line names, by the option tables' conventions
 * (cli.h): an option named "output" or "...-output" writes, an option
 * whose value is a FILE reads, and so does every positional argument. */
struct named_file {
	const char *option;    /* "holdings" (--holdings), or NULL for a positional input */
	const char *path;
	int folder;            /* an output folder (metavar DIR) */
};

static int is_output_option(const struct cli_option *op)
{
	size_t n = strlen(op->name);

	return op->kind == CLI_STRING &&
	       (strcmp(op->name, "output") == 0 || (n > 7 && strcmp(op->name + n - 7, "-output") == 0));
}

static int is_input_option(const struct cli_option *op)
{
	return (op->kind == CLI_STRING || op->kind == CLI_LIST) && op->metavar && strcmp(op->metavar, "FILE") == 0 &&
	       !is_output_option(op);
}

static void describe_file(char *buf, size_t size, const struct named_file *f)
{
	if (f->option)
		snprintf(buf, size, "--%s '%s'", f->option, f->path);
	else
		snprintf(buf, size, "the input '%s'", f->path);
}

/* Is the existing file path inside the existing folder dir (after
 * resolving links, "." and "..")? */
static int inside_folder(const char *path, const char *dir)
{
	char rp[PATH_MAX], rd[PATH_MAX];
	size_t n;

	if (!realpath(path, rp) || !realpath(dir, rd))
		return 0;
	n = strlen(rd);
	return strncmp(rp, rd, n) == 0 && (rp[n] == '/' || (n == 1 && rd[0] == '/'));
}

/* One output against one earlier-named file: a usage error naming both
 * when they are the same file (or the input lies in the output folder). */
static int check_pair(const struct cli_command *cmd, const struct named_file *out,
		      const struct named_file *other, int other_is_output)
{
	char a[PATH_MAX + 64], b[PATH_MAX + 64];
	struct hc_error err;
	int same = 0;

	if (out->folder) {
		if (other_is_output || !inside_folder(other->path, out->path))
			return HC_OK;
		describe_file(a, sizeof a, other);
		fprintf(stderr, "holdcount %s: %s is inside the report folder --output '%s', which this run "
			"would replace; keep inputs outside it\n", cmd->name, a, out->path);
		return HC_EUSAGE;
	}
	hc_error_clear(&err);
	if (hc_outfile_same_file(out->path, other->path, &same, &err) != HC_OK)
		return cli_fail(cmd->name, &err);
	if (!same)
		return HC_OK;
	describe_file(a, sizeof a, out);
	describe_file(b, sizeof b, other);
	fprintf(stderr, "holdcount %s: %s is the same file as %s; %s\n", cmd->name, a, b,
		other_is_output ? "each output needs a file of its own"
				: "writing it would replace an input, so choose another output file");
	return HC_EUSAGE;
}

/*
 * No output may be the same file as an input or as another output, and no
 * input may lie inside an output folder: the output would replace the data
 * it was computed from (a run of `describe --output u.csv u.csv` once did).
 */
static int check_files(const struct cli_command *cmd, const struct cli_args *a, void *opts)
{
	struct named_file in[16], out[4];
	const struct cli_group_use *g;
	const struct cli_option *op;
	size_t nin = 0, nout = 0, i, j;
	int rc;

	for (i = 0; i < a->npositional && nin < 16; i++)
		in[nin++] = (struct named_file){ NULL, a->positional[i], 0 };
	for (g = cmd->groups; g && g->group; g++)
		for (op = g->group->options; op->name; op++) {
			const char *v;

			if ((!is_output_option(op) && !is_input_option(op)) || omitted(g, op))
				continue;
			v = *(const char *const *)((const char *)opts + g->offset + op->offset);
			if (op->kind == CLI_LIST) {
				const struct cli_list *l = (const void *)((const char *)opts + g->offset + op->offset);
				size_t k;
				for (k = 0; k < l->n && nin < 16; k++)
					if (*l->v[k] && strcmp(l->v[k], "-") != 0)
						in[nin++] = (struct named_file){ op->name, l->v[k], 0 };
				continue;
			}
			if (!v || !*v || strcmp(v, "-") == 0)
				continue;
			if (is_output_option(op) && nout < 4)
				out[nout++] = (struct named_file){ op->name, v,
					op->metavar && strcmp(op->metavar, "DIR") == 0 };
			else if (is_input_option(op) && nin < 16)
				in[nin++] = (struct named_file){ op->name, v, 0 };
		}
	for (i = 0; i < nout; i++) {
		for (j = 0; j < nin; j++)
			if ((rc = check_pair(cmd, &out[i], &in[j], 0)) != HC_OK)
				return rc;
		for (j = 0; j < i; j++)
			if ((rc = check_pair(cmd, &out[i], &out[j], 1)) != HC_OK)
				return rc;
	}
	return HC_OK;
}

static int is_help(const char *arg)
{
	return strcmp(arg, "-h") == 0 || strcmp(arg, "--help") == 0;
}

int cli_parse(const struct cli_command *cmd, int argc, char **argv, void *opts, struct cli_args *a)
{
	int i, rc = HC_OK, options_done = 0;
	size_t n = argc > 0 ? (size_t)argc : 1;

	memset(a, 0, sizeof *a);
	a->cmd = cmd;
	for (i = 1; i < argc; i++)
		if (strcmp(argv[i], "--") == 0)
			break;
		else if (is_help(argv[i])) {
			cli_print_help(stdout, cmd);
			return cli_flush_stdout(cmd->name) == HC_OK ? CLI_HELP_SHOWN : HC_EIO;
		}
	a->positional = hc_calloc(n, sizeof *a->positional);
	a->given = hc_calloc(n, sizeof *a->given);
	if (!a->positional || !a->given) {
		fprintf(stderr, "holdcount %s: out of memory\n", cmd->name);
		cli_args_release(a);
		return HC_ENOMEM;
	}
	for (i = 1; rc == HC_OK && i < argc; i++) {
		const char *arg = argv[i];
		if (!options_done && strcmp(arg, "--") == 0)
			options_done = 1;
		else if (!options_done && arg[0] == '-' && arg[1])
			rc = take_option(cmd, a, opts, argc, argv, &i);
		else
			a->positional[a->npositional++] = argv[i];
	}
	/* After the options: an explicit --threads wins, so the variable is
	 * not even read (a bad value there cannot stop a run that names its
	 * own thread count). */
	if (rc == HC_OK && !cli_given(a, "threads"))
		rc = threads_from_environment(cmd, opts);
	if (rc == HC_OK && a->npositional < cmd->min_positional)
		rc = usage_fail(cmd, "missing %s", cmd->usage);
	if (rc == HC_OK && a->npositional > cmd->max_positional)
		rc = usage_fail(cmd, "unexpected argument '%s'", a->positional[cmd->max_positional]);
	if (rc == HC_OK)
		rc = check_files(cmd, a, opts);
	if (rc != HC_OK)
		cli_args_release(a);
	return rc;
}

void cli_args_release(struct cli_args *a)
{
	hc_free(a->positional);
	hc_free(a->given);
	a->positional = NULL;
	a->given = NULL;
	a->npositional = a->ngiven = 0;
}

int cli_parse_status(int rc)
{
	return rc == CLI_HELP_SHOWN ? HC_OK : rc;
}

int cli_given(const struct cli_args *a, const char *name)
{
	size_t i;

	for (i = 0; i < a->ngiven; i++)
		if (strcmp(a->given[i]->name, name) == 0)
			return 1;
	return 0;
}

/* ---- help ---------------------------------------------------------------- */

/* Print text wrapped to HELP_WIDTH, continuation lines indented by indent;
 * the first line starts at column col. */
static void wrap(FILE *fp, const char *text, size_t col, size_t indent)
{
	hc_report_wrap(fp, text, col, indent, HELP_WIDTH);
}

/* The default an option shows in this use of its group. */
static const char *default_of(const struct cli_group_use *g, const struct cli_option *op)
{
	const struct cli_default *d;

	for (d = g ? g->defaults : NULL; d && d->name; d++)
		if (strcmp(d->name, op->name) == 0)
			return d->default_text;
	return op->default_text;
}

static void print_option(FILE *fp, const struct cli_group_use *g, const struct cli_option *op)
{
	const char *def = default_of(g, op);
	char left[128], help[512];
	size_t used, i;

	used = (size_t)snprintf(left, sizeof left, "  %c%c%s--%s", op->short_name ? '-' : ' ',
				op->short_name ? op->short_name : ' ', op->short_name ? ", " : "  ", op->name);
	if (op->kind == CLI_CHOICE) {
		for (i = 0; op->choices[i] && used < sizeof left; i++)
			used += (size_t)snprintf(left + used, sizeof left - used, "%c%s", i ? '|' : ' ', op->choices[i]);
	} else if (op->kind != CLI_FLAG && used < sizeof left) {
		used += (size_t)snprintf(left + used, sizeof left - used, " %s", op->metavar ? op->metavar : "VALUE");
	}
	if (def)
		snprintf(help, sizeof help, "%s (default: %s)", op->help, def);
	else
		snprintf(help, sizeof help, "%s", op->help);
	fputs(left, fp);
	if (used + 2 > HELP_INDENT) {
		fprintf(fp, "\n%*s", HELP_INDENT, "");
	} else {
		fprintf(fp, "%*s", (int)(HELP_INDENT - used), "");
	}
	wrap(fp, help, HELP_INDENT, HELP_INDENT);
}

void cli_print_help(FILE *fp, const struct cli_command *cmd)
{
	static const struct cli_option help_option = {
		"help", 'h', CLI_FLAG, 0, NULL, "show this help and exit", NULL, NULL };
	const struct cli_group_use *g;
	const struct cli_option *op;

	fprintf(fp, "usage: holdcount %s%s%s [OPTIONS]\n\n", cmd->name, *cmd->usage ? " " : "", cmd->usage);
	wrap(fp, cmd->summary, 0, 0);
	if (cmd->description && *cmd->description) {
		fputc('\n', fp);
		wrap(fp, cmd->description, 0, 0);
	}
	fputs("\noptions:\n", fp);
	print_option(fp, NULL, &help_option);
	for (g = cmd->groups; g && g->group; g++) {
		if (!options_taken(g))
			continue;
		fprintf(fp, "\n%s:\n", g->group->title);
		for (op = g->group->options; op->name; op++)
			if (!omitted(g, op))
				print_option(fp, g, op);
	}
	fputs("\nExit status: 0 success, 1 a policy check failed, 2 usage error, 3 data error,\n"
	      "4 input/output error, 5 out of memory, 6 internal error, 7 interrupted,\n"
	      "8 resource limit, 9 renderer failed, 10 insufficient data (e.g. a fund's risk\n"
	      "rests on too little of its weight).\n", fp);
}

void cli_print_main_help(FILE *fp)
{
	size_t i;

	fputs("usage: holdcount COMMAND [OPTIONS] [ARGUMENTS]\n"
	      "       holdcount help [COMMAND]\n"
	      "       holdcount --version\n\n", fp);
	wrap(fp, "How portfolio risk falls as the number of holdings grows, for a universe of "
	     "securities, and past which count extra holdings add little.", 0, 0);
	fputs("\ncommands:\n", fp);
	for (i = 0; cli_commands[i]; i++) {
		fprintf(fp, "  %-12s", cli_commands[i]->name);
		wrap(fp, cli_commands[i]->summary, 14, 14);
	}
	fputs("\n'holdcount help COMMAND' or 'holdcount COMMAND --help' shows a command's options.\n"
	      "Environment: HOLDCOUNT_THREADS sets the default of --threads; NO_COLOR is honoured.\n", fp);
}

/* ---- manual pages and completion, from the same tables ------------------- */

/* roff text: a backslash is \e, a hyphen \- (so man does not break or
 * re-shape option names), and a line may not begin with '.' or '\''. */
static void roff_text(FILE *fp, const char *s)
{
	for (; *s; s++) {
		if (*s == '\\')
			fputs("\\e", fp);
		else if (*s == '-')
			fputs("\\-", fp);
		else
			fputc(*s, fp);
	}
}

static void roff_paragraph(FILE *fp, const char *s)
{
	if (*s == '.' || *s == '\'')
		fputs("\\&", fp);
	roff_text(fp, s);
	fputc('\n', fp);
}

static void roff_upper(FILE *fp, const char *s)
{
	for (; *s; s++)
		fputc(*s >= 'a' && *s <= 'z' ? *s - 'a' + 'A' : *s, fp);
}

static void man_option(FILE *fp, const struct cli_group_use *g, const struct cli_option *op)
{
	const char *def = default_of(g, op);
	size_t i;

	fputs(".TP\n", fp);
	if (op->short_name)
		fprintf(fp, "\\fB\\-%c\\fR, ", op->short_name);
	fputs("\\fB\\-\\-", fp);
	roff_text(fp, op->name);
	fputs("\\fR", fp);
	if (op->kind == CLI_CHOICE) {
		fputs(" ", fp);
		for (i = 0; op->choices[i]; i++)
			fprintf(fp, "%s\\fB%s\\fR", i ? "|" : "", op->choices[i]);
	} else if (op->kind != CLI_FLAG) {
		fputs(" \\fI", fp);
		roff_text(fp, op->metavar ? op->metavar : "VALUE");
		fputs("\\fR", fp);
	}
	fputc('\n', fp);
	roff_text(fp, op->help);
	if (def) {
		fputs(" (default: ", fp);
		roff_text(fp, def);
		fputc(')', fp);
	}
	fputs(".\n", fp);
}

static void man_common_sections(FILE *fp)
{
	static const char *const status[][2] = {
		{ "0", "success" }, { "1", "the computation succeeded but a policy check failed" },
		{ "2", "usage error: unknown option or command, bad option value, bad size list" },
		{ "3", "malformed or unusable input data (the message names file, line and column)" },
		{ "4", "a file could not be read, written or renamed" },
		{ "5", "out of memory, or the input exceeds the memory budget" },
		{ "6", "a numerical library failed or an internal check broke" },
		{ "7", "interrupted by a signal; partly written output is removed" },
		{ "8", "the system refused a resource other than memory: a thread or process (a process limit)" },
		{ "9", "the renderer (gnuplot) failed on a plot script; nothing is left behind" },
		{ "10", "the input is well formed but holds too little data for the question: in audit and report, "
		       "no fund fails the policy but a fund's risk figures rest on less than its least covered weight" },
	};
	size_t i;

	fputs(".SH EXIT STATUS\n", fp);
	for (i = 0; i < sizeof status / sizeof status[0]; i++)
		fprintf(fp, ".TP\n.B %s\n%s.\n", status[i][0], status[i][1]);
	fputs(".SH ENVIRONMENT\n"
	      ".TP\n.B HOLDCOUNT_THREADS\nthe default of \\fB\\-\\-threads\\fR (a whole number from 1 to 1024).\n"
	      ".TP\n.B NO_COLOR\nhonoured; holdcount prints no colour or terminal escape codes in any case.\n"
	      ".TP\n.B HOLDCOUNT_DATA_DIR\nthe folder of the demo data that \\fBholdcount report\\fR "
	      "reads when no universe is given, instead of the installed one.\n"
	      ".SH FILES\n.TP\n.I share/holdcount/\n"
	      "under the installation prefix, found from the binary's own place (\\fI/usr/share/holdcount/\\fR "
	      "for a package, \\fI/usr/local/share/holdcount/\\fR by default): "
	      "the invented demo universe, sector map and funds (\\fIdemo\\-universe.csv\\fR, "
	      "\\fIdemo\\-sectors.csv\\fR, \\fIdemo\\-funds.csv\\fR).\n"
	      ".SH NOTES\n"
	      "Figures are historical estimates and the past need not repeat; a universe of today's survivors "
	      "looks safer than its market did; averages carry estimation error; annualising assumes serially "
	      "independent returns.  Not investment advice: defer to licensed advisers and to each fund's own "
	      "legal limits.\n", fp);
}

void cli_print_man(FILE *fp, const struct cli_command *cmd, const char *version)
{
	const struct cli_group_use *g;
	const struct cli_option *op;
	size_t i;

	if (!cmd) {
		fprintf(fp, ".TH HOLDCOUNT 1 \"\" \"holdcount %s\" \"User Commands\"\n.SH NAME\nholdcount \\- ", version);
		fputs("risk by holding count for a universe of securities\n"
		      ".SH SYNOPSIS\n.B holdcount\n.I COMMAND\n[\\fIOPTIONS\\fR] [\\fIARGUMENTS\\fR]\n.br\n"
		      ".B holdcount help\n[\\fICOMMAND\\fR]\n.br\n.B holdcount \\-\\-version\n"
		      ".SH DESCRIPTION\nHow portfolio risk falls as the number of holdings grows, for a universe of "
		      "securities, and past which count extra holdings add little.\n.SH COMMANDS\n", fp);
		for (i = 0; cli_commands[i]; i++) {
			fprintf(fp, ".TP\n.BR holdcount\\-%s (1)\n", cli_commands[i]->name);
			roff_text(fp, cli_commands[i]->summary);
			fputs(".\n", fp);
		}
		man_common_sections(fp);
		return;
	}
	fputs(".TH HOLDCOUNT\\-", fp);
	roff_upper(fp, cmd->name);
	fprintf(fp, " 1 \"\" \"holdcount %s\" \"User Commands\"\n.SH NAME\nholdcount\\-%s \\- ", version, cmd->name);
	roff_text(fp, cmd->summary);
	fprintf(fp, "\n.SH SYNOPSIS\n.B holdcount %s\n", cmd->name);
	if (*cmd->usage)
		fprintf(fp, ".I %s\n", cmd->usage);
	fputs("[\\fIOPTIONS\\fR]\n.SH DESCRIPTION\n", fp);
	roff_paragraph(fp, cmd->description && *cmd->description ? cmd->description : cmd->summary);
	fputs(".SH OPTIONS\n.TP\n\\fB\\-h\\fR, \\fB\\-\\-help\\fR\nshow the help and exit.\n", fp);
	for (g = cmd->groups; g && g->group; g++) {
		if (!options_taken(g))
			continue;
		fputs(".SS \"", fp);
		roff_text(fp, g->group->title);
		fputs("\"\n", fp);
		for (op = g->group->options; op->name; op++)
			if (!omitted(g, op))
				man_option(fp, g, op);
	}
	man_common_sections(fp);
	fputs(".SH SEE ALSO\n.BR holdcount (1)\n", fp);
}

void cli_print_bash_completion(FILE *fp)
{
	const struct cli_group_use *g;
	const struct cli_option *op;
	size_t i, j;

	fputs("# bash completion for holdcount, generated by 'holdcount help --bash-completion'\n"
	      "# from the same option tables as the parser and --help.\n"
	      "_holdcount()\n{\n"
	      "\tlocal cur=${COMP_WORDS[COMP_CWORD]} prev=${COMP_WORDS[COMP_CWORD-1]} cmd=${COMP_WORDS[1]} opts\n"
	      "\t# --name=value: bash splits words at '=' too, so '=' arrives as a word\n"
	      "\tif [ \"$cur\" = \"=\" ]; then\n\t\tcur=\n"
	      "\telif [ \"$prev\" = \"=\" ] && [ \"$COMP_CWORD\" -gt 2 ]; then\n"
	      "\t\tprev=${COMP_WORDS[COMP_CWORD-2]}\n\tfi\n"
	      "\tif [ \"$COMP_CWORD\" -eq 1 ]; then\n\t\tCOMPREPLY=($(compgen -W \"help --help --version", fp);
	for (i = 0; cli_commands[i]; i++)
		fprintf(fp, " %s", cli_commands[i]->name);
	fputs("\" -- \"$cur\"))\n\t\treturn\n\tfi\n\tcase $cmd in\n\thelp)\n\t\tCOMPREPLY=($(compgen -W \"", fp);
	for (i = 0; cli_commands[i]; i++)
		fprintf(fp, "%s%s", i ? " " : "", cli_commands[i]->name);
	fputs("\" -- \"$cur\"))\n\t\treturn;;\n", fp);
	for (i = 0; cli_commands[i]; i++) {
		const struct cli_command *cmd = cli_commands[i];

		fprintf(fp, "\t%s)\n\t\tcase $prev in\n", cmd->name);
		for (g = cmd->groups; g && g->group; g++)
			for (op = g->group->options; op->name; op++) {
				if (op->kind == CLI_FLAG || omitted(g, op))
					continue;
				fprintf(fp, "\t\t--%s", op->name);
				if (op->short_name)
					fprintf(fp, "|-%c", op->short_name);
				if (op->kind == CLI_CHOICE) {
					fputs(")\n\t\t\tCOMPREPLY=($(compgen -W \"", fp);
					for (j = 0; op->choices[j]; j++)
						fprintf(fp, "%s%s", j ? " " : "", op->choices[j]);
					fputs("\" -- \"$cur\"))\n\t\t\treturn;;\n", fp);
				} else if ((op->kind == CLI_STRING || op->kind == CLI_LIST) && op->metavar &&
					   strcmp(op->metavar, "FILE") == 0) {
					fputs(")\n\t\t\tmapfile -t COMPREPLY < <(compgen -f -- \"$cur\")\n\t\t\treturn;;\n", fp);
				} else if (op->kind == CLI_STRING && op->metavar && strcmp(op->metavar, "DIR") == 0) {
					fputs(")\n\t\t\tmapfile -t COMPREPLY < <(compgen -d -- \"$cur\")\n\t\t\treturn;;\n", fp);
				} else {
					fputs(")\n\t\t\tCOMPREPLY=()\n\t\t\treturn;;\n", fp);
				}
			}
		fputs("\t\tesac\n\t\topts=\"--help", fp);
		for (g = cmd->groups; g && g->group; g++)
			for (op = g->group->options; op->name; op++)
				if (!omitted(g, op))
					fprintf(fp, " --%s", op->name);
		fputs("\";;\n", fp);
	}
	fputs("\t*) return;;\n\tesac\n"
	      "\tif [[ $cur == -* ]]; then\n\t\tCOMPREPLY=($(compgen -W \"$opts\" -- \"$cur\"))\n"
	      "\telse\n\t\tmapfile -t COMPREPLY < <(compgen -f -- \"$cur\")\n\tfi\n}\n"
	      "complete -o filenames -F _holdcount holdcount\n", fp);
}

const struct cli_command *cli_find_command(const char *name)
{
	size_t i;

	for (i = 0; name && cli_commands[i]; i++)
		if (strcmp(cli_commands[i]->name, name) == 0)
			return cli_commands[i];
	return NULL;
}

/* ---- messages and output ------------------------------------------------- */

int cli_fail(const char *cmd, const struct hc_error *err)
{
	fprintf(stderr, "holdcount %s: %s\n", cmd, err->message[0] ? err->message : hc_status_name(err->code));
	return err->code ? err->code : HC_EINTERNAL;
}

int cli_usage_error(const char *cmd, const char *fmt, ...)
{
	va_list ap;

	fprintf(stderr, "holdcount %s: ", cmd);
	va_start(ap, fmt);
	vfprintf(stderr, fmt, ap);
	va_end(ap);
	fputc('\n', stderr);
	return HC_EUSAGE;
}

int cli_flush_stdout(const char *cmd)
{
	int e;

	if (fflush(stdout) == 0 && !ferror(stdout))
		return HC_OK;
	/* errno still holds the failed write's reason (ENOSPC for /dev/full,
	 * EPIPE, EIO); EIO when nothing set it. */
	e = errno ? errno : EIO;
	fprintf(stderr, "holdcount%s%s: cannot write to standard output: %s\n", cmd ? " " : "", cmd ? cmd : "",
		strerror(e));
	return HC_EIO;
}

/* What is written: a whole report by a writer, or one part as CSV. */
struct rendering {
	const struct report_writer *w;   /* NULL: the CSV of part */
	const char *part;                /* a table's key; NULL = the fields */
};

static int render(FILE *fp, const struct rendering *how, const struct report *r, struct hc_error *err)
{
	return how->w ? how->w->write(fp, r, err) : hc_report_write_csv_part(fp, r, how->part, err);
}

/* Standard output cannot be taken back, so the whole rendering is made in
 * memory first and written only when it succeeded: a failure half-way
 * (out of memory in a writer) prints nothing but the message. */
static int write_stdout(const struct rendering *how, const struct report *r, struct hc_error *err)
{
	char *buf = NULL;
	size_t len = 0;
	FILE *mem = open_memstream(&buf, &len);
	int rc;

	if (!mem)
		return hc_error(err, HC_ENOMEM, "out of memory rendering the output");
	rc = render(mem, how, r, err);
	if (fclose(mem) != 0 && rc == HC_OK)
		rc = hc_error(err, HC_ENOMEM, "out of memory rendering the output");
	if (rc == HC_OK && (fwrite(buf, 1, len, stdout) != len || fflush(stdout) != 0))
		rc = hc_error(err, HC_EIO, "cannot write to standard output: %s", strerror(errno));
	free(buf);
	return rc;
}

static int write_output(const char *cmd, const struct cli_output *o, const struct rendering *how,
			const struct report *r)
{
	struct outfile of;
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	if (!o->output || strcmp(o->output, "-") == 0)
		return write_stdout(how, r, &err) ? cli_fail(cmd, &err) : HC_OK;
	rc = hc_outfile_open(&of, o->output, &err);
	if (rc)
		return cli_fail(cmd, &err);
	rc = render(of.fp, how, r, &err);
	if (rc) {
		hc_outfile_abort(&of);
		return cli_fail(cmd, &err);
	}
	rc = hc_outfile_commit(&of, &err);
	return rc ? cli_fail(cmd, &err) : HC_OK;
}

int cli_write_report(const char *cmd, const struct cli_output *o, const struct report *r)
{
	struct rendering how = { hc_report_writer_find(format_words[o->format]), NULL };
	struct hc_error err;

	if (!how.w) {
		hc_error_clear(&err);
		hc_error(&err, HC_EINTERNAL, "no writer for format %d", o->format);
		return cli_fail(cmd, &err);
	}
	return write_output(cmd, o, &how, r);
}

int cli_write_csv_part(const char *cmd, const struct cli_output *o, const struct report *r, const char *table)
{
	struct rendering how = { NULL, table };

	return write_output(cmd, o, &how, r);
}

/* ---- progress -------------------------------------------------------------- */

static double now_seconds(void)
{
	struct timespec ts;

	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

void cli_stage(const char *cmd, int quiet, const char *what)
{
	if (!quiet && isatty(STDERR_FILENO))
		fprintf(stderr, "holdcount %s: %s\n", cmd, what);
}

void cli_progress_init(struct cli_progress *p, const char *label, const char *unit, int quiet)
{
	p->label = label;
	p->unit = unit;
	p->enabled = !quiet && isatty(STDERR_FILENO);
	p->start = now_seconds();
	p->last_draw = 0.0;
}

int cli_progress_update(void *ctx, size_t done, size_t total)
{
	struct cli_progress *p = ctx;
	double t, rate;
	char bar[31];
	size_t filled, i;

	if (!p || !p->enabled || total == 0)
		return 0;
	t = now_seconds();
	/* Redraw at most ten times a second: a terminal is slower than the loop. */
	if (done < total && t - p->last_draw < 0.1)
		return 0;
	p->last_draw = t;
	filled = done >= total ? 30 : 30 * done / total;
	for (i = 0; i < 30; i++)
		bar[i] = i < filled ? '#' : '.';
	bar[30] = '\0';
	rate = t > p->start ? (double)done / (t - p->start) : 0.0;
	fprintf(stderr, "\r%s [%s] %3d%%  %.0f %s/s ", p->label, bar,
		(int)(100.0 * (double)done / (double)total), rate, p->unit);
	return 0;
}

void cli_progress_finish(struct cli_progress *p)
{
	if (p && p->enabled && p->last_draw > 0.0)
		fprintf(stderr, "\r%*s\r", 70, "");
}

/* ---- signals --------------------------------------------------------------- */

/* Only async-signal-safe calls here (POSIX.1-2008, 2.4.3): unlink, write,
 * _exit. */
static void on_signal(int sig)
{
	static const char msg[] = "holdcount: interrupted; partial output removed\n";
	ssize_t ignored;

	(void)sig;
	hc_outfile_unlink_pending();
	ignored = write(STDERR_FILENO, msg, sizeof msg - 1);
	(void)ignored;
	_exit(HC_EINTERRUPT);
}

/* A signal the parent set to be ignored (a shell does so for SIGINT in
 * background jobs, nohup for SIGHUP) stays ignored: the user asked for it. */
static void catch_unless_ignored(int sig, const struct sigaction *sa)
{
	struct sigaction old;

	if (sigaction(sig, NULL, &old) == 0 && old.sa_handler == SIG_IGN)
		return;
	sigaction(sig, sa, NULL);
}

void cli_install_signal_handlers(void)
{
	struct sigaction sa;

	memset(&sa, 0, sizeof sa);
	sa.sa_handler = on_signal;
	sigemptyset(&sa.sa_mask);
	catch_unless_ignored(SIGINT, &sa);
	catch_unless_ignored(SIGTERM, &sa);
	/* A file-size limit (ulimit -f) would kill the process with SIGXFSZ
	 * mid-write, with no message and the temporary left behind; ignored,
	 * the write fails with EFBIG instead, which the output's commit
	 * reports as an i/o error (exit 4) after removing the temporary. */
	signal(SIGXFSZ, SIG_IGN);
}

/* ---- an analysis's progress ----------------------------------------------- */

static void steps_begin(void *ctx, const char *stage, const char *label, const char *unit)
{
	struct cli_steps *s = ctx;

	if (stage && s->stages)
		cli_stage(s->cmd, s->quiet, stage);
	if (label)
		cli_progress_init(&s->bar, label, unit, s->quiet);
}

static int steps_update(void *ctx, size_t done, size_t total)
{
	return cli_progress_update(&((struct cli_steps *)ctx)->bar, done, total);
}

static void steps_end(void *ctx)
{
	cli_progress_finish(&((struct cli_steps *)ctx)->bar);
}

void cli_steps_bind(struct cli_steps *steps, struct hc_progress *p, const char *cmd, int quiet, int stages)
{
	memset(steps, 0, sizeof *steps);
	steps->cmd = cmd;
	steps->quiet = quiet;
	steps->stages = stages;
	cli_progress_init(&steps->bar, "", "", 1);
	p->begin = steps_begin;
	p->update = steps_update;
	p->end = steps_end;
	p->ctx = steps;
}
