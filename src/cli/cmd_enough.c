/*
 * cmd_enough.c - placeholder so the tree links; its owner replaces this file.
 */
#include <stdio.h>

#include "cli.h"

static const struct cli_group_use enough_groups[] = {
	{ &cli_group_output, 0 },
	{ NULL, 0 }
};

const struct cli_command cli_command_enough = {
	"enough", cmd_enough, "the holding count past which extra holdings add little, by several published rules", "UNIVERSE",
	"Not built yet.", 0, 64, enough_groups
};

int cmd_enough(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "holdcount enough: not built yet\n");
	return 2;
}
