/*
 * cmd_describe.c - `holdcount describe UNIVERSE`: what was read.
 *
 * The pattern other command files copy (see cli.h): an options struct with
 * the shared groups embedded, a group-use list, the exported command
 * record, and a command function that parses, builds the data source, calls
 * the library's analysis (here hc_describe) and hands its report to
 * cli_write_report.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/describe.h"
#include "holdcount/source.h"

struct describe_opts {
	int table;                 /* enum describe_table: what --format csv prints */
	struct cli_universe uni;
	struct cli_output out;
};

/* What the CSV carries: the summary figures as key,value rows (the
 * report's fields), or one of its tables, by key. */
enum describe_table { DESCRIBE_TABLE_SUMMARY = 0, DESCRIBE_TABLE_SECURITIES = 1, DESCRIBE_TABLE_DROPPED = 2 };
static const char *const table_words[] = { "summary", "securities", "dropped", NULL };
static const char *const table_keys[] = { NULL, "kept", "dropped" };

static const struct cli_option describe_own[] = {
	{ "table", 0, CLI_CHOICE, offsetof(struct describe_opts, table), NULL,
	  "with --format csv, what to print: summary (the figures as key,value rows), securities (one "
	  "row per security kept) or dropped (one row per security dropped, with the reason)",
	  table_words, "summary" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group describe_group = { "describe options", describe_own };

static const struct cli_group_use describe_groups[] = {
	{ &describe_group, 0, NULL, NULL },
	{ &cli_group_universe, offsetof(struct describe_opts, uni), NULL, NULL },
	{ &cli_group_matrix_repair, offsetof(struct describe_opts, uni), NULL, NULL },
	{ &cli_group_output, offsetof(struct describe_opts, out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_describe = {
	"describe", cmd_describe,
	"what was read from a universe: securities kept and dropped, periods, dates, and the averages",
	"UNIVERSE",
	"UNIVERSE is a CSV of returns (or prices, with --prices), or with --covariance a covariance "
	"matrix. Figures are annualised by the periods per year, which the output states. With --format "
	"csv it prints the summary figures as key,value rows, or with --table one table of securities.",
	1, 1, describe_groups
};

static int write(const struct describe_opts *o, const struct report *r)
{
	if (o->out.format != CLI_FORMAT_CSV)
		return cli_write_report("describe", &o->out, r);
	return cli_write_csv_part("describe", &o->out, r, table_keys[o->table]);
}

int cmd_describe(int argc, char **argv)
{
	struct describe_opts o;
	struct cli_args a;
	struct hc_source *src = NULL;
	struct report *r = NULL;
	struct hc_error err;
	int rc;

	memset(&o, 0, sizeof o);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_describe, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	if ((rc = cli_psd_usage("describe", &o.uni)) != HC_OK)
		goto cleanup;
	if (cli_given(&a, "table") && o.out.format != CLI_FORMAT_CSV) {
		rc = cli_usage_error("describe", "--table chooses what --format csv prints; the text and JSON outputs "
				     "hold everything");
		goto cleanup;
	}
	/* --repair-psd with gaps left: the averages of the repaired matrix,
	 * which is what curve, enough and audit then use. */
	if ((rc = cli_load_source("describe", &o.uni, &a, a.positional[0], 0, "", &src)) != HC_OK)
		goto cleanup;
	if (hc_describe(&r, src, &err) != HC_OK)
		rc = cli_fail("describe", &err);
	else
		rc = write(&o, r);
cleanup:
	hc_report_free(r);
	hc_source_free(src);
	cli_args_release(&a);
	return rc;
}
