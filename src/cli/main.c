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

/*
 * OpenBLAS's pthread build starts its worker threads when the library is
 * loaded, before main, and when it cannot (a process limit: RLIMIT_NPROC,
 * a container's pids limit) it raises SIGINT against its own process, so
 * every command "exited 130".  holdcount runs BLAS on one thread anyway
 * (hc_moments_blas_serial, below), and OPENBLAS_NUM_THREADS=1, read by
 * OpenBLAS's initialiser, keeps it from starting any.
 *
 * The executable's .preinit_array runs before any shared library's
 * initialiser (System V ABI, "Initialization and Termination Functions"),
 * but before libc's too, which then sets environ back to the array the
 * kernel passed, so setenv(3) there is lost.  The array itself is kept,
 * so one of its slots is lent to the variable for the libraries'
 * initialisers and given back at the top of main: the user's environment
 * is unchanged for everything the program does (gnuplot included).  With
 * an empty environment there is no slot to lend, and OpenBLAS starts its
 * threads as it would without holdcount's help.
 */
static char one_blas_thread_setting[] = "OPENBLAS_NUM_THREADS=1";
static char **lent_slot;
static char *lent_value;

static void lend_environment_slot(int argc, char **argv, char **envp)
{
	(void)argc;
	(void)argv;
	if (!envp || !envp[0])
		return;
	lent_slot = &envp[0];
	for (char **e = envp; *e; e++)
		if (strncmp(*e, "OPENBLAS_NUM_THREADS=", 21) == 0)
			lent_slot = e;
	lent_value = *lent_slot;
	*lent_slot = one_blas_thread_setting;
}
__attribute__((section(".preinit_array"), used))
static void (*const preinit_lend_slot)(int, char **, char **) = lend_environment_slot;

static void give_back_environment_slot(void)
{
	if (lent_slot && *lent_slot == one_blas_thread_setting)
		*lent_slot = lent_value;
	lent_slot = NULL;
}

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

	give_back_environment_slot();
	/* Library code checks every GSL status itself; GSL must not abort. */
	gsl_set_error_handler_off();
	/* No threaded BLAS here: OpenBLAS's idle workers would spin on the
	 * cores the sampler's threads need. */
	hc_moments_blas_serial();
	cli_install_signal_handlers();
	cli_threads_guard();
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
