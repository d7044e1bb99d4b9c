/*
 * heapcheck.h - exact heap accounting for the allocation-failure tests.
 *
 * glibc's per-thread cache (tcache) keeps freed chunks counted as in use,
 * so a test that compares mallinfo2 before and after a call first re-runs
 * itself with the cache off (GLIBC_TUNABLES, documented in the glibc
 * manual, "Memory Allocation Tunables"); then mallinfo2's uordblks (plus
 * hblkhd for mmapped chunks) is exact and a leak of one byte shows.
 */
#ifndef HOLDCOUNT_TEST_HEAPCHECK_H
#define HOLDCOUNT_TEST_HEAPCHECK_H

#include <stddef.h>

#include "holdcount/error.h"

/*
 * Call first in main(argc, argv): unless this is already the re-run, execute
 * /proc/self/exe again with argv, HOLDCOUNT_TEST_NO_TCACHE=1 and
 * GLIBC_TUNABLES=glibc.malloc.tcache_count=0.  Returns only in the re-run;
 * if the exec fails it says so on stderr and exits with status 1.
 */
void heapcheck_rerun_without_tcache(char **argv);

/* Bytes of heap in use (mallinfo2 uordblks + hblkhd); exact once re-run. */
size_t heapcheck_in_use(void);

/* One call under test in an allocation-failure sweep. */
struct heapcheck_call {
	int (*run)(void *ctx, struct hc_error *err);   /* the call; returns its status */
	void (*release)(void *ctx);   /* after HC_OK: free what run made (NULL: nothing to free) */
	void (*failed)(void *ctx);    /* after HC_ENOMEM: assertions on the outputs (NULL: none) */
	void *ctx;
};

/*
 * Make allocation 0, 1, 2, ... (hc_alloc_fail_after) fail in turn until
 * call->run returns HC_OK.  Each failing run must return HC_ENOMEM (any
 * other status fails the test with the run's message); after each run (and
 * its release, on success) the heap in use must equal the heap before it.
 * Returns the index of the allocation failed in the successful run, which
 * is how many runs failed (the tests bound it from their own count of the
 * call's allocations).
 */
long heapcheck_sweep(const struct heapcheck_call *call);

#endif
