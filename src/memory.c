#include "holdcount/memory.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

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
