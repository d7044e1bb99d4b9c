/*
 * cmd_compare.c - `holdcount compare OLD NEW`: what changed between two
 * report folders (or two summary.json files).  The comparison is the
 * library's (compare.h); this file parses, calls and writes.
 */
#include <stddef.h>
#include <string.h>

#include "cli.h"
#include "holdcount/compare.h"

struct compare_opts {
	struct cli_output out;
};

static const struct cli_group_use compare_groups[] = {
	{ &cli_group_output, offsetof(struct compare_opts, out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_compare = {
	"compare", cmd_compare, "what changed between two report folders: verdicts, the count, the universe, rules, funds",
	"OLD NEW",
	"OLD and NEW are report folders written by 'holdcount report' (their summary.json is read) or "
	"summary.json files. Prints one row per compared figure: first each fund's policy verdict (changed "
	"verdicts first), then the count the report leads with and its interval, the universe (period, "
	"securities kept, in and out, the averages), each rule's count and 90% interval, and each fund's "
	"figures and coverage; with the old value, the new one and the change. --format csv prints that table, "
	"--format json everything (with the securities in and out). 'holdcount report --previous DIR' puts "
	"the same comparison into the report as a section \"Since the last report\". The exit status is 0 "
	"whatever changed.",
	2, 2, compare_groups
};

int cmd_compare(int argc, char **argv)
{
	struct compare_opts o;
	struct cli_args a;
	struct report *r = NULL;
	struct hc_error err;
	int rc;

	memset(&o, 0, sizeof o);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_compare, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	if (hc_compare_paths(&r, a.positional[0], a.positional[1], &err) != HC_OK)
		rc = cli_fail("compare", &err);
	else
		rc = cli_write_report("compare", &o.out, r);
	hc_report_free(r);
	cli_args_release(&a);
	return rc;
}
