/*
 * cmd_report.c - placeholder so the tree links; its owner replaces this file.
 */
#include <stdio.h>

#include "cli.h"

static const struct cli_group_use report_groups[] = {
	{ &cli_group_output, 0 },
	{ NULL, 0 }
};

const struct cli_command cli_command_report = {
	"report", cmd_report, "write a report folder: tables, JSON summary, gnuplot scripts and plots", "UNIVERSE",
	"Not built yet.", 0, 64, report_groups
};

int cmd_report(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "holdcount report: not built yet\n");
	return 2;
}
