#define _GNU_SOURCE   /* sysconf(_SC_AVPHYS_PAGES) */
#include "holdcount/memory.h"

#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#ifdef __linux__
#include <sys/mman.h>
#endif

#include "holdcount/error.h"

static long fail_after = -1;
static unsigned long alloc_count;

/* Returns nonzero when this allocation must fail (fault injection). */
static int injected_failure(void)
{
	if (fail_after < 0)
		return 0;
	if (fail_after == 0)
		return 1;
	fail_after--;
	return 0;
}

void hc_alloc_fail_after(long n)
{
	fail_after = n;
}

unsigned long hc_alloc_count(void)
{
	return alloc_count;
}

int hc_mul_size(size_t a, size_t b, size_t *out)
{
	if (a != 0 && b > SIZE_MAX / a)
		return -1;
	*out = a * b;
	return 0;
}

void *hc_malloc(size_t size)
{
	void *p;

	if (injected_failure())
		return NULL;
	p = malloc(size ? size : 1);
	if (p)
		alloc_count++;
	return p;
}

int hc_add_size(size_t a, size_t b, size_t *out)
{
	if (b > SIZE_MAX - a)
		return -1;
	*out = a + b;
	return 0;
}

void *hc_mallocarray(size_t n, size_t size)
{
	size_t total;

	if (hc_mul_size(n, size, &total))
		return NULL;
	return hc_malloc(total);
}

void *hc_calloc(size_t n, size_t size)
{
	void *p;
	size_t total;

	if (hc_mul_size(n, size, &total) || injected_failure())
		return NULL;
	p = calloc(total ? total : 1, 1);
	if (p)
		alloc_count++;
	return p;
}

void *hc_realloc(void *p, size_t size)
{
	void *q;

	if (injected_failure())
		return NULL;
	q = realloc(p, size ? size : 1);
	if (q)
		alloc_count++;
	return q;
}

void *hc_reallocarray(void *p, size_t n, size_t size)
{
	size_t total;

	if (hc_mul_size(n, size, &total))
		return NULL;
	return hc_realloc(p, total);
}

int hc_grow_capacity(size_t cap, size_t need, size_t first, size_t *out)
{
	size_t nc = cap ? cap : (first ? first : 1);

	while (nc < need)
		if (hc_mul_size(nc, 2, &nc))
			return -1;
	*out = nc;
	return 0;
}

void *hc_grow(void *p, size_t *cap, size_t n, size_t size, size_t first)
{
	size_t nc;
	void *q;

	if (n < *cap)
		return p;
	if (hc_grow_capacity(*cap, *cap ? *cap + 1 : 1, first, &nc))
		return NULL;
	q = hc_reallocarray(p, nc, size);
	if (q)
		*cap = nc;
	return q;
}

void hc_free(void *p)
{
	free(p);
}

char *hc_strndup(const char *s, size_t n)
{
	char *d = hc_malloc(n + 1);

	if (!d)
		return NULL;
	memcpy(d, s, n);
	d[n] = '\0';
	return d;
}

char *hc_strdup(const char *s)
{
	return hc_strndup(s, strlen(s));
}

size_t hc_memory_available(void)
{
	FILE *fp = fopen("/proc/meminfo", "r");
	char line[256];
	unsigned long long kb = 0;
	double bytes = 0;

	if (fp) {
		while (fgets(line, sizeof line, fp))
			if (sscanf(line, "MemAvailable: %llu kB", &kb) == 1)
				break;
		fclose(fp);
	}
	if (kb)
		bytes = (double)kb * 1024.0;
	else
		bytes = (double)sysconf(_SC_AVPHYS_PAGES) * (double)sysconf(_SC_PAGESIZE);
	bytes *= HC_MEMORY_SHARE;
	if (bytes <= 0 || bytes >= (double)SIZE_MAX)
		return SIZE_MAX;
	return (size_t)bytes;
}

int hc_memory_check(size_t max_bytes, double held, double need, struct hc_error *err,
		    const char *prefix, ...)
{
	double budget, mib = 1024.0 * 1024.0;
	char what[HC_ERROR_MESSAGE_MAX];
	va_list ap;

	if (max_bytes) {
		budget = (double)max_bytes;
	} else {
		size_t avail = hc_memory_available();

		if (avail == SIZE_MAX)
			return HC_OK;
		budget = held + (double)avail;
	}
	if (held + need <= budget)
		return HC_OK;
	va_start(ap, prefix);
	vsnprintf(what, sizeof what, prefix, ap);
	va_end(ap);
	return hc_error(err, HC_ENOMEM, "%s: needs at least %.1f MiB, budget %.1f MiB", what,
			ceil(10 * (held + need) / mib) / 10, floor(10 * budget / mib) / 10);
}

void hc_memory_advise_huge(void *p, size_t bytes)
{
#if defined(__linux__) && defined(MADV_HUGEPAGE)
	const uintptr_t page = 4096;
	uintptr_t b = ((uintptr_t)p + page - 1) & ~(page - 1), e = ((uintptr_t)p + bytes) & ~(page - 1);

	if (p && bytes >= HC_MEMORY_HUGE_BYTES && e > b)
		(void)madvise((void *)b, e - b, MADV_HUGEPAGE);
#else
	(void)p;
	(void)bytes;
#endif
}
