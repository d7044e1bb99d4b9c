/*
 * bench_load.c - load a universe and nothing else, for bench_memory.sh:
 * the loader's own peak memory, apart from what the commands compute.
 *
 * usage: bench_load UNIVERSE.csv
 * The file is read by hc_universe_load with the default options (the same
 * call `holdcount describe UNIVERSE` makes); prints "M x T" on success,
 * the loader's message and its status otherwise.
 */
#include <stdio.h>

#include <gsl/gsl_errno.h>

#include "holdcount/universe.h"

int main(int argc, char **argv)
{
	struct universe *u = NULL;
	struct hc_error err;
	int rc;

	if (argc != 2) {
		fprintf(stderr, "usage: bench_load UNIVERSE.csv\n");
		return 2;
	}
	gsl_set_error_handler_off();
	hc_error_clear(&err);
	rc = hc_universe_load(&u, argv[1], NULL, &err);
	if (rc != HC_OK) {
		fprintf(stderr, "bench_load: %s\n", err.message);
		return rc;
	}
	printf("%zu x %zu\n", u->m, u->t);
	hc_universe_free(u);
	return 0;
}
