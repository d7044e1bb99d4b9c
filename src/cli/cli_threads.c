/*
 * cli_threads.c - the one reading of a thread count, for --threads (every
 * command that has it) and HOLDCOUNT_THREADS alike.
 *
 * A count is a whole number from 1 to HC_THREADS_MAX (threads.h), written
 * in decimal digits only.  Anything else, 0 and numbers beyond the cap or
 * beyond every integer type included, is refused with the same words,
 * before any cast can wrap it (2^32 + 1 once became one thread, 2^31 a
 * negative count).  Thread counts the system cannot start are not an
 * error: the library falls back to fewer (hc_threads_usable).
 */
#include "cli.h"

#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "holdcount/threads.h"

#define STR2(x) #x
#define STR(x) STR2(x)

const char cli_threads_expected[] = "a whole number from 1 to " STR(HC_THREADS_MAX)
				     " (the most threads holdcount starts)";

int cli_threads_parse(const char *text, size_t *out)
{
	size_t v = 0;
	const char *p;

	if (!text || !*text || strspn(text, "0123456789") != strlen(text))
		return -1;
	for (p = text; *p; p++) {
		v = v * 10 + (size_t)(*p - '0');
		if (v > HC_THREADS_MAX)
			return -1;
	}
	if (v == 0)
		return -1;
	*out = v;
	return 0;
}

/*
 * The OpenMP runtime ends the process with exit(1) when it cannot create a
 * thread it was asked for (libgomp's gomp_fatal), which a gate reading exit
 * statuses would take for a policy breach.  The library asks only for
 * threads it has just seen it can start (hc_threads_usable), so this runs
 * only when another process took the last slots in between; the status is
 * then put right: an exit from inside a parallel region is the resource
 * status, never 1.
 */
static void exit_inside_region(void)
{
	static const char msg[] =
		"holdcount: the system refused a thread the run needed (a process or thread limit); "
		"try a smaller --threads\n";

	if (hc_threads_in_region()) {
		(void)!write(STDERR_FILENO, msg, sizeof msg - 1);
		_exit(HC_ERESOURCE);
	}
}

void cli_threads_guard(void)
{
	atexit(exit_inside_region);
}
