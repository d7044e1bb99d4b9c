/*
 * threads.h - how many threads a parallel step may start.
 *
 * Every OpenMP region in the library (sampler, strata, bootstrap) asks
 * here first, so that one rule holds for all of them: a thread count is
 * at most HC_THREADS_MAX, and a region never asks the OpenMP runtime for
 * more threads than the system lets the process start at that moment
 * (a process limit such as RLIMIT_NPROC, a container's pids limit, or
 * memory for thread stacks).  libgomp treats a failed pthread_create as
 * fatal (it prints "Thread creation failed" and exits with status 1), so
 * the only way to fall back to fewer threads is to find out beforehand.
 */
#ifndef HOLDCOUNT_THREADS_H
#define HOLDCOUNT_THREADS_H

#ifdef __cplusplus
extern "C" {
#endif

/* The most threads holdcount starts for one step.  A fixed figure, far
 * above any core count the tool is run on (the sampler's work does not
 * grow faster with threads than with cores), and far below the counts
 * that exhaust the OpenMP runtime's own stack (libgomp sets up a team on
 * the stack: 100 000 threads overflowed it). */
#define HC_THREADS_MAX 1024

/*
 * The thread count to use for a step asked to run on want threads
 * (want <= 0: one per core, as omp_get_max_threads() says).  The result is
 * min(want, HC_THREADS_MAX), reduced to the number of threads the process
 * can start now: want - 1 idle threads are started and joined again (the
 * calling thread is the first), and the count stops at the first that
 * cannot be created; a count already found startable by an earlier call is
 * not tried again (the OpenMP runtime keeps its last team's threads).
 * Always at least 1 (the calling thread).  *reduced,
 * when not NULL, is set to 1 when the result is below what was asked.
 * Thread-safe; costs about 20 microseconds per thread started.
 */
int hc_threads_usable(int want, int *reduced);

/*
 * Nonzero while a library step is inside an OpenMP parallel region: a
 * front end's atexit handler can tell an exit from inside the OpenMP
 * runtime (a thread it could not create after all, when another process
 * took the last slot between the check and the region) from its own.
 * Async-signal-safe to read.
 */
int hc_threads_in_region(void);

/* For the library's regions: mark entering and leaving one. */
void hc_threads_region_enter(void);
void hc_threads_region_leave(void);

#ifdef __cplusplus
}
#endif

#endif
