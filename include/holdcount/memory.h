/*
 * memory.h - the project's allocator, with fault injection for tests.
 *
 * All library allocations go through these functions (libcsv's and cJSON's
 * too, through their hooks), so a test can make the k-th allocation fail and
 * check that every error path cleans up (the idea behind SQLite's fault
 * simulation).  They behave like malloc/calloc/realloc/free otherwise.
 */
#ifndef HOLDCOUNT_MEMORY_H
#define HOLDCOUNT_MEMORY_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Like their libc namesakes: NULL when out of memory (or when a failure is
 * injected, below), never an abort; the caller owns the result and frees it
 * with hc_free.  A zero size still returns a unique pointer.  hc_strndup
 * copies exactly n bytes of s (which must hold them) and NUL-terminates. */
void *hc_malloc(size_t size);
void *hc_calloc(size_t n, size_t size);          /* checks n*size overflow */
void *hc_realloc(void *p, size_t size);
void *hc_reallocarray(void *p, size_t n, size_t size); /* checks overflow */
void hc_free(void *p);                           /* accepts NULL */
char *hc_strdup(const char *s);
char *hc_strndup(const char *s, size_t n);

/*
 * Room for one more element in an array p of n elements (of size bytes)
 * allocated for *cap: p itself while n < *cap; else p grown by doubling
 * (to first elements when *cap is 0) through hc_reallocarray, with *cap
 * updated.  NULL when out of memory, with p and *cap unchanged (p still
 * the caller's).  The one grow-by-doubling of the library:
 *     nf = hc_grow(r->fields, &r->cap_fields, r->nfields, sizeof *nf, 16);
 *     if (!nf) return HC_ENOMEM;
 *     r->fields = nf;
 */
void *hc_grow(void *p, size_t *cap, size_t n, size_t size, size_t first);

/*
 * The capacity hc_grow would choose, for callers that grow several
 * parallel arrays under one capacity or need room for many elements at
 * once: cap doubled (first when cap is 0) until it holds need.  -1 when
 * that overflows a size_t, else 0 with *out set.
 */
int hc_grow_capacity(size_t cap, size_t need, size_t first, size_t *out);

/*
 * Fault injection: after n more successful allocations, every allocation
 * fails (returns NULL) until hc_alloc_fail_after(-1) turns it off.
 * hc_alloc_count() returns how many allocations succeeded since start.
 * Not thread-safe; for single-threaded tests.
 */
void hc_alloc_fail_after(long n);
unsigned long hc_alloc_count(void);

/*
 * Checked size arithmetic: every product or sum of sizes that a user's
 * numbers reach (--bootstrap, --paths, --securities, a file's M and T) goes
 * through these, so a huge value is refused instead of wrapping into a
 * small allocation (2^61 + 1 replicates of 8 bytes once became 8 bytes).
 * Each returns 0 and sets *out, or -1 on overflow (*out untouched).
 * hc_mallocarray is hc_malloc(n * size) with the product checked: NULL on
 * overflow, as for out of memory.
 */
int hc_mul_size(size_t a, size_t b, size_t *out);
int hc_add_size(size_t a, size_t b, size_t *out);
void *hc_mallocarray(size_t n, size_t size);

/*
 * Memory budget.  Large inputs are refused with a message (HC_ENOMEM) before
 * their arrays are allocated, not killed by the kernel half-way.  A budget
 * is a byte count given by the user (--max-memory), or 0 for "from the
 * memory available": HC_MEMORY_SHARE of Linux's MemAvailable
 * (/proc/meminfo; free pages elsewhere) at the moment of the check.
 */
#define HC_MEMORY_SHARE 0.8

/* HC_MEMORY_SHARE of the memory available now, in bytes; SIZE_MAX when it
 * cannot be found out. */
size_t hc_memory_available(void);

/* Ask the kernel for huge pages (2 MiB) behind the bytes at p, an array of
 * at least HC_MEMORY_HUGE_BYTES about to be written for the first time:
 * fewer page faults (on Linux, where transparent huge pages are often given
 * only on request).  A hint: nothing changes when it is refused or on
 * other systems.  Cannot fail; p may be NULL. */
#define HC_MEMORY_HUGE_BYTES ((size_t)8 << 20)
void hc_memory_advise_huge(void *p, size_t bytes);

/*
 * Check a step that allocates need bytes while held bytes of its input stay
 * allocated, against max_bytes (0 = from available memory).  With a given
 * budget, held + need must not exceed it; from available memory, need must
 * fit what is available now (held is already allocated, so no longer
 * counted as available).  HC_OK, or HC_ENOMEM with the message
 * "PREFIX: needs at least X MiB, budget Y MiB", X = held + need and Y the
 * budget in the same terms (max_bytes, or held plus the available share),
 * rounded away from the limit to 0.1 MiB.  prefix is printf-style.
 */
struct hc_error;
int hc_memory_check(size_t max_bytes, double held, double need, struct hc_error *err,
		    const char *prefix, ...) __attribute__((format(printf, 5, 6)));

#ifdef __cplusplus
}
#endif

#endif
