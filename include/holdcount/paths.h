/*
 * paths.h - one parallel driver for independent random paths (the
 * sampler's and the stratified sampler's portfolios, the bootstrap's
 * replicates), and the seeds they draw from.
 *
 * Path k's random stream is seeded from (seed, k) alone, never from the
 * thread that runs it, so every result is byte-identical whatever the
 * thread count (design.md section 4).  Seeds come from splitmix64 (Steele,
 * Lea & Flood, 2014, OOPSLA), whose outputs for neighbouring inputs are
 * unrelated: hc_paths_seed32 gives a 32-bit seed for a GSL generator of
 * path k, hc_paths_stream the state of a numbered stream (bootstrap
 * replicates, synth), hc_paths_mix that of a tagged stream of two indices
 * (the stratified allocations).  Every random stream of the library is
 * seeded through these three.
 */
#ifndef HOLDCOUNT_PATHS_H
#define HOLDCOUNT_PATHS_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Progress callback: done of total; nonzero stops the run (HC_EINTERRUPT).
 * Called from one thread only.  sampler.h's sampler_progress_fn is this. */
typedef int (*hc_progress_fn)(void *ctx, size_t done, size_t total);

/* splitmix64 step: advances *state and returns the next output. */
uint64_t hc_paths_splitmix64(uint64_t *state);

/* Uniform integer in 0..n-1 (n >= 1) from the splitmix64 stream *state,
 * without modulo bias: the low (2^64 mod n) outputs are rejected. */
uint64_t hc_paths_uniform_below(uint64_t *state, uint64_t n);

/* Seed for path k of a run seeded with seed: the (k+1)-th splitmix64
 * output from seed, folded to the 32 bits GSL's generators take. */
unsigned long hc_paths_seed32(uint64_t seed, size_t k);

/* The state of stream index under key: splitmix64(key ^ splitmix64(index))
 * (each splitmix64 of a copy).  The bootstrap's replicate rep is
 * (seed, rep); the sampled rules' bootstrap tags its key (seed ^ a
 * constant); synth's parameter and return streams are (stream, seed). */
uint64_t hc_paths_stream(uint64_t key, uint64_t index);

/* A 64-bit stream state from seed, a tag naming the stream's use, and two
 * indices (path, size): two splitmix64 steps over (seed ^ tag) + golden*a,
 * then + b. */
uint64_t hc_paths_mix(uint64_t seed, uint64_t tag, uint64_t a, uint64_t b);

/*
 * count independent paths, each run once by path(job, ws, k) on some
 * thread's workspace ws (ws_size bytes, set up by ws_init(job, ws), nonzero
 * when out of memory, and released by ws_release(ws)), under OpenMP's
 * dynamic schedule in chunks of chunk paths.  progress, when set, is called
 * from thread 0 as paths finish and once more with total of total at the
 * end; a nonzero return stops the run.  Errors: HC_ENOMEM "out of memory for
 * the NAME's workspaces", HC_EINTERRUPT "WHAT stopped after D of N UNIT".
 */
struct hc_paths {
	size_t count;
	int threads;                      /* 0 = OpenMP's default */
	int chunk;
	void *job;
	size_t ws_size;
	int (*ws_init)(void *job, void *ws);
	void (*ws_release)(void *ws);
	void (*path)(void *job, void *ws, size_t k);
	hc_progress_fn progress;
	void *progress_ctx;
	const char *name;                 /* "sampler's", for messages */
	const char *what;                 /* "sampling" */
	const char *unit;                 /* "paths" */
};
int hc_paths_run(const struct hc_paths *p, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
