/*
 * paths.c - the parallel driver for independent random paths and their
 * seeds (paths.h).
 */
#include "holdcount/paths.h"

#include <omp.h>

#include "holdcount/memory.h"
#include "holdcount/threads.h"

uint64_t hc_paths_splitmix64(uint64_t *state)
{
	uint64_t z = (*state += 0x9e3779b97f4a7c15ULL);

	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
	return z ^ (z >> 31);
}

uint64_t hc_paths_uniform_below(uint64_t *state, uint64_t n)
{
	uint64_t threshold = (0 - n) % n, x;

	do
		x = hc_paths_splitmix64(state);
	while (x < threshold);
	return x % n;
}

unsigned long hc_paths_seed32(uint64_t seed, size_t k)
{
	uint64_t st = seed + 0x9e3779b97f4a7c15ULL * (uint64_t)k, z;

	z = hc_paths_splitmix64(&st);
	return (unsigned long)((z ^ (z >> 32)) & 0xffffffffUL);
}

uint64_t hc_paths_stream(uint64_t key, uint64_t index)
{
	uint64_t s = key ^ hc_paths_splitmix64(&index);

	return hc_paths_splitmix64(&s);
}

uint64_t hc_paths_mix(uint64_t seed, uint64_t tag, uint64_t a, uint64_t b)
{
	uint64_t st = seed ^ tag;

	st += 0x9e3779b97f4a7c15ULL * a;
	st = hc_paths_splitmix64(&st) + b;
	return hc_paths_splitmix64(&st);
}

static void release(const struct hc_paths *p, char *ws, int n)
{
	while (n-- > 0)
		p->ws_release(ws + (size_t)n * p->ws_size);
	hc_free(ws);
}

int hc_paths_run(const struct hc_paths *p, struct hc_error *err)
{
	int nthreads = hc_threads_usable(p->threads, NULL), i, stop = 0;
	size_t done = 0, total = p->count;
	long kk, count = (long)p->count;
	char *ws;

	if (nthreads < 1)
		nthreads = 1;
	ws = hc_calloc((size_t)nthreads, p->ws_size);
	if (!ws)
		return hc_error(err, HC_ENOMEM, "out of memory for the %s workspaces", p->name);
	for (i = 0; i < nthreads; i++)
		if (p->ws_init(p->job, ws + (size_t)i * p->ws_size)) {
			release(p, ws, i);
			return hc_error(err, HC_ENOMEM, "out of memory for the %s workspaces", p->name);
		}
	hc_threads_region_enter();
#pragma omp parallel num_threads(nthreads)
	{
		char *w = ws + (size_t)omp_get_thread_num() * p->ws_size;
#pragma omp for schedule(dynamic, p->chunk)
		for (kk = 0; kk < count; kk++) {
			size_t now;
			int halted;
#pragma omp atomic read
			halted = stop;
			if (halted)
				continue;
			p->path(p->job, w, (size_t)kk);
#pragma omp atomic capture
			now = ++done;
			if (p->progress && omp_get_thread_num() == 0 && p->progress(p->progress_ctx, now, total)) {
#pragma omp atomic write
				stop = 1;
			}
		}
	}
	hc_threads_region_leave();
	release(p, ws, nthreads);
	if (stop)
		return hc_error(err, HC_EINTERRUPT, "%s stopped after %zu of %zu %s", p->what, done, total, p->unit);
	if (p->progress && p->progress(p->progress_ctx, total, total))
		return hc_error(err, HC_EINTERRUPT, "%s stopped after %zu of %zu %s", p->what, total, total, p->unit);
	return HC_OK;
}
