/*
 * cmd_describe.c - `holdcount describe UNIVERSE`: what was read.
 *
 * The pattern other command files copy (see cli.h): an options struct with
 * the shared groups embedded, a group-use list, the exported command
 * record, and a command function that parses, computes, fills one struct
 * report and hands it to cli_write_report.
 */
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"

struct describe_opts {
	struct cli_universe uni;
	struct cli_output out;
};

static const struct cli_group_use describe_groups[] = {
	{ &cli_group_universe, offsetof(struct describe_opts, uni) },
	{ &cli_group_output, offsetof(struct describe_opts, out) },
	{ NULL, 0 }
};

const struct cli_command cli_command_describe = {
	"describe", cmd_describe,
	"what was read from a universe: securities kept and dropped, periods, dates, and the averages",
	"UNIVERSE",
	"UNIVERSE is a CSV of returns (or prices, with --prices), or with --covariance a covariance "
	"matrix. Figures are annualised by the periods per year, which the output states.",
	1, 1, describe_groups
};

int cmd_describe(int argc, char **argv)
{
	struct describe_opts o;
	struct cli_args a;
	int rc;

	memset(&o, 0, sizeof o);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_describe, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	cli_args_release(&a);
	fprintf(stderr, "holdcount describe: not built yet\n");
	return HC_EUSAGE;
}
