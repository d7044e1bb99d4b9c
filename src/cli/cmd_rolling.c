/*
 * cmd_rolling.c - placeholder so the tree links; its owner replaces this file.
 */
#include <stdio.h>

#include "cli.h"

static const struct cli_group_use rolling_groups[] = {
	{ &cli_group_output, 0 },
	{ NULL, 0 }
};

const struct cli_command cli_command_rolling = {
	"rolling", cmd_rolling, "how the averages and the count needed move through rolling windows", "UNIVERSE",
	"Not built yet.", 0, 64, rolling_groups
};

int cmd_rolling(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "holdcount rolling: not built yet\n");
	return 2;
}
