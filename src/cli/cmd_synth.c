/*
 * cmd_synth.c - placeholder so the tree links; its owner replaces this file.
 */
#include <stdio.h>

#include "cli.h"

static const struct cli_group_use synth_groups[] = {
	{ &cli_group_output, 0 },
	{ NULL, 0 }
};

const struct cli_command cli_command_synth = {
	"synth", cmd_synth, "write an invented universe and sector map from a factor model", "",
	"Not built yet.", 0, 64, synth_groups
};

int cmd_synth(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "holdcount synth: not built yet\n");
	return 2;
}
