/*
 * cmd_audit.c - placeholder so the tree links; its owner replaces this file.
 */
#include <stdio.h>

#include "cli.h"

static const struct cli_group_use audit_groups[] = {
	{ &cli_group_output, 0 },
	{ NULL, 0 }
};

const struct cli_command cli_command_audit = {
	"audit", cmd_audit, "concentration audit of actual funds against the universe and a policy", "HOLDINGS",
	"Not built yet.", 0, 64, audit_groups
};

int cmd_audit(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "holdcount audit: not built yet\n");
	return 2;
}
