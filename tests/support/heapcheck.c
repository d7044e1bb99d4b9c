/*
 * heapcheck.c - see heapcheck.h.
 */
#define _GNU_SOURCE   /* setenv, execv, mallinfo2 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <malloc.h>
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "holdcount/memory.h"

#include "heapcheck.h"

void heapcheck_rerun_without_tcache(char **argv)
{
	if (getenv("HOLDCOUNT_TEST_NO_TCACHE"))
		return;
	setenv("HOLDCOUNT_TEST_NO_TCACHE", "1", 1);
	setenv("GLIBC_TUNABLES", "glibc.malloc.tcache_count=0", 1);
	execv("/proc/self/exe", argv);
	fprintf(stderr, "cannot re-run without the malloc cache\n");
	exit(1);
}

size_t heapcheck_in_use(void)
{
	struct mallinfo2 mi = mallinfo2();

	return mi.uordblks + mi.hblkhd;
}

long heapcheck_sweep(const struct heapcheck_call *call)
{
	struct hc_error err;
	long k;
	int rc;

	for (k = 0;; k++) {
		size_t before = heapcheck_in_use();

		hc_error_clear(&err);   /* a message to show even if run sets none */
		hc_alloc_fail_after(k);
		rc = call->run(call->ctx, &err);
		hc_alloc_fail_after(-1);
		if (rc == HC_OK) {
			if (call->release)
				call->release(call->ctx);
			assert_int_equal(heapcheck_in_use(), before);
			return k;
		}
		if (rc != HC_ENOMEM)
			fail_msg("allocation %ld: rc %d, %s", k, rc, err.message);
		if (call->failed)
			call->failed(call->ctx);
		assert_int_equal(heapcheck_in_use(), before);
	}
}
