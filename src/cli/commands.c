/*
 * commands.c - the list of commands, in the order `holdcount --help` shows.
 * A new command: declare it in cli.h (CLI_DECLARE_COMMAND) and add it here.
 */
#include <stddef.h>

#include "cli.h"

const struct cli_command *const cli_commands[] = {
	&cli_command_describe,
	&cli_command_curve,
	&cli_command_formula,
	&cli_command_enough,
	&cli_command_horizon,
	&cli_command_audit,
	&cli_command_rolling,
	&cli_command_report,
	&cli_command_compare,
	&cli_command_synth,
	&cli_command_check,
	NULL
};
