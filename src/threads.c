/*
 * threads.c - the thread count a parallel step may use (threads.h).
 *
 * A failed pthread_create inside the OpenMP runtime ends the process
 * (libgomp's gomp_fatal: exit status 1, the status a policy breach has),
 * so the count is tried out first with plain POSIX threads that only wait
 * to be released: whatever number of them could exist at once, the
 * runtime's team of the same size can exist too, unless another process
 * takes the slots in between (the front end turns that rare case into
 * its resource status; see hc_threads_in_region).
 */
#include "holdcount/threads.h"

#include <omp.h>
#include <pthread.h>
#include <signal.h>

#include "holdcount/memory.h"

static volatile sig_atomic_t in_region;
/* The largest count tried out and found startable.  libgomp keeps the
 * threads of its last team for the next region of the same thread, so a
 * later request up to this count needs no new thread and no new check
 * (rolling runs one bootstrap per window). */
static int proven = 1;

struct gate {
	pthread_mutex_t lock;
	pthread_cond_t open_cv;
	int open;
};

static void *wait_at_gate(void *arg)
{
	struct gate *g = arg;

	pthread_mutex_lock(&g->lock);
	while (!g->open)
		pthread_cond_wait(&g->open_cv, &g->lock);
	pthread_mutex_unlock(&g->lock);
	return NULL;
}

int hc_threads_usable(int want, int *reduced)
{
	struct gate g = { PTHREAD_MUTEX_INITIALIZER, PTHREAD_COND_INITIALIZER, 0 };
	pthread_t *ids;
	int asked = want > 0 ? want : omp_get_max_threads(), started = 0, i;

	if (reduced)
		*reduced = 0;
	if (asked > HC_THREADS_MAX)
		asked = HC_THREADS_MAX;
	if (asked <= __atomic_load_n(&proven, __ATOMIC_RELAXED))
		return asked;
	ids = hc_calloc((size_t)asked - 1, sizeof *ids);
	if (!ids) {
		if (reduced)
			*reduced = 1;
		return 1;
	}
	while (started < asked - 1 && pthread_create(&ids[started], NULL, wait_at_gate, &g) == 0)
		started++;
	pthread_mutex_lock(&g.lock);
	g.open = 1;
	pthread_cond_broadcast(&g.open_cv);
	pthread_mutex_unlock(&g.lock);
	for (i = 0; i < started; i++)
		pthread_join(ids[i], NULL);
	hc_free(ids);
	if (reduced)
		*reduced = started + 1 < asked;
	if (started + 1 == asked && asked > __atomic_load_n(&proven, __ATOMIC_RELAXED))
		__atomic_store_n(&proven, asked, __ATOMIC_RELAXED);
	return started + 1;
}

int hc_threads_in_region(void)
{
	return in_region != 0;
}

void hc_threads_region_enter(void)
{
	in_region = 1;
}

void hc_threads_region_leave(void)
{
	in_region = 0;
}
