/*
 * main.c - dispatch to a command; nothing more.
 */
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_version.h>

#include "cli.h"
#include "holdcount/moments.h"

/* OpenBLAS's own report of its version and build (declared in its
 * cblas.h, which is not on every include path). */
extern char *openblas_get_config(void);

static int print_version(void)
{
	printf("holdcount %s\n", HOLDCOUNT_VERSION);
	printf("GSL %s\n", gsl_version);
	printf("BLAS %s\n", openblas_get_config());
	return cli_flush_stdout(NULL);
}

static int unknown(const char *what, const char *name)
{
	fprintf(stderr, "holdcount: unknown %s '%s' (see 'holdcount --help')\n", what, name);
	return HC_EUSAGE;
}

static int help(int argc, char **argv)
{
	const struct cli_command *cmd;

	if (argc < 3) {
		cli_print_main_help(stdout);
		return cli_flush_stdout(NULL);
	}
	/* For packagers: the manual pages and the completion script are
	 * generated from the option tables, like --help. */
	if (strcmp(argv[2], "--man") == 0) {
		cmd = argc > 3 ? cli_find_command(argv[3]) : NULL;
		if (argc > 3 && !cmd)
			return unknown("command", argv[3]);
		cli_print_man(stdout, cmd, HOLDCOUNT_VERSION);
		return cli_flush_stdout("help");
	}
	if (strcmp(argv[2], "--bash-completion") == 0 && argc == 3) {
		cli_print_bash_completion(stdout);
		return cli_flush_stdout("help");
	}
	if (argc > 3) {
		fprintf(stderr, "holdcount help: expected one command name, found %d words\n", argc - 2);
		return HC_EUSAGE;
	}
	cmd = cli_find_command(argv[2]);
	if (!cmd)
		return unknown("command", argv[2]);
	cli_print_help(stdout, cmd);
	return cli_flush_stdout("help");
}

int main(int argc, char **argv)
{
	const struct cli_command *cmd;

	/* Library code checks every GSL status itself; GSL must not abort. */
	gsl_set_error_handler_off();
	/* No threaded BLAS here: OpenBLAS's idle workers would spin on the
	 * cores the sampler's threads need. */
	hc_moments_blas_serial();
	cli_install_signal_handlers();
	if (argc < 2) {
		cli_print_main_help(stderr);
		return HC_EUSAGE;
	}
	if (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0) {
		cli_print_main_help(stdout);
		return cli_flush_stdout(NULL);
	}
	if (strcmp(argv[1], "--version") == 0)
		return print_version();
	if (strcmp(argv[1], "help") == 0)
		return help(argc, argv);
	if (argv[1][0] == '-')
		return unknown("option", argv[1]);
	cmd = cli_find_command(argv[1]);
	if (!cmd)
		return unknown("command", argv[1]);
	return cmd->run(argc - 1, argv + 1);
}
