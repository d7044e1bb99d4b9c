/* Unit tests for the error record and the fault-injecting allocator. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <cmocka.h>

#include "holdcount/error.h"
#include "holdcount/memory.h"

static void test_error_formats_and_returns_code(void **state)
{
	struct hc_error err;

	hc_error_clear(&err);
	assert_int_equal(hc_error(&err, HC_EDATA, "%s:%d:%d: expected a number, found '%s'", "u.csv", 3, 7, "abc"), HC_EDATA);
	assert_int_equal(err.code, HC_EDATA);
	assert_string_equal(err.message, "u.csv:3:7: expected a number, found 'abc'");
	hc_error_prefix(&err, "describe");
	assert_string_equal(err.message, "describe: u.csv:3:7: expected a number, found 'abc'");
	assert_int_equal(hc_error(NULL, HC_EIO, "ignored"), HC_EIO);
}

static void test_memory_fault_injection(void **state)
{
	void *a, *b;
	size_t out;

	hc_alloc_fail_after(1);
	a = hc_malloc(16);
	b = hc_malloc(16);
	assert_non_null(a);
	assert_null(b);
	hc_alloc_fail_after(-1);
	b = hc_malloc(16);
	assert_non_null(b);
	hc_free(a);
	hc_free(b);
	hc_free(NULL);
	assert_null(hc_calloc(SIZE_MAX / 2, 4));
	assert_int_equal(hc_mul_size(SIZE_MAX / 2, 3, &out), -1);
	assert_int_equal(hc_mul_size(6, 7, &out), 0);
	assert_int_equal(out, 42);
}

/* Growth by doubling from the first capacity, overflow refused, and the
 * array unchanged when growth fails (its old contents kept). */
static void test_memory_grow(void **state)
{
	size_t cap = 0, nc, i;
	int *a = NULL, *p;

	assert_int_equal(hc_grow_capacity(0, 1, 16, &nc), 0);
	assert_int_equal(nc, 16);
	assert_int_equal(hc_grow_capacity(16, 17, 16, &nc), 0);
	assert_int_equal(nc, 32);
	assert_int_equal(hc_grow_capacity(256, 5000, 8, &nc), 0);
	assert_int_equal(nc, 8192);
	assert_int_equal(hc_grow_capacity(0, 3, 0, &nc), 0);
	assert_int_equal(nc, 4);
	assert_int_equal(hc_grow_capacity(SIZE_MAX / 2 + 1, SIZE_MAX, 8, &nc), -1);
	for (i = 0; i < 100; i++) {
		p = hc_grow(a, &cap, i, sizeof *a, 4);
		assert_non_null(p);
		a = p;
		a[i] = (int)i;
	}
	assert_int_equal(cap, 128);
	hc_alloc_fail_after(0);
	for (; i < cap; i++)
		a[i] = (int)i;
	assert_null(hc_grow(a, &cap, cap, sizeof *a, 4));
	hc_alloc_fail_after(-1);
	assert_int_equal(cap, 128);
	assert_int_equal(a[127], 127);
	hc_free(a);
}

/* A given budget counts what is held and what is asked for together; the
 * message rounds the need up and the budget down to 0.1 MiB, so it never
 * shows a need that seems to fit (1 MiB = 1048576 bytes). */
static void test_memory_check_given_budget(void **state)
{
	struct hc_error err;

	hc_error_clear(&err);
	assert_int_equal(hc_memory_check(3000000, 1000000.0, 2000000.0, &err, "u.csv: %s", "whole"), HC_OK);
	assert_int_equal(hc_memory_check(3000000, 1000000.0, 2000001.0, &err, "u.csv: %s", "whole"), HC_ENOMEM);
	/* 3000001 bytes = 2.86102 MiB -> 2.9; 3000000 bytes = 2.86102 MiB -> 2.8 */
	assert_string_equal(err.message, "u.csv: whole: needs at least 2.9 MiB, budget 2.8 MiB");
	assert_int_equal(hc_memory_check(1048576, 0.0, 1048577.0, &err, "m"), HC_ENOMEM);
	assert_string_equal(err.message, "m: needs at least 1.1 MiB, budget 1.0 MiB");
}

/* MemAvailable, read here from /proc/meminfo (Linux, proc(5)), bounds the
 * default budget: HC_MEMORY_SHARE of it, give or take what other processes
 * did between the two reads; and a need far beyond any machine's memory is
 * refused without a given budget, while a small one passes. */
static void test_memory_check_available(void **state)
{
	FILE *fp = fopen("/proc/meminfo", "r");
	unsigned long long kb = 0;
	char line[256];
	double avail, want;
	struct hc_error err;

	assert_non_null(fp);
	while (fgets(line, sizeof line, fp))
		if (sscanf(line, "MemAvailable: %llu kB", &kb) == 1)
			break;
	fclose(fp);
	assert_true(kb > 0);
	avail = (double)hc_memory_available();
	want = HC_MEMORY_SHARE * (double)kb * 1024.0;
	assert_true(avail > 0.9 * want && avail < 1.1 * want);
	hc_error_clear(&err);
	assert_int_equal(hc_memory_check(0, 0.0, 1e18, &err, "big"), HC_ENOMEM);
	assert_memory_equal(err.message, "big: needs at least 953674316406.3 MiB, budget ", 47);
	assert_int_equal(hc_memory_check(0, 1e18, 4096.0, &err, "held"), HC_OK);
}

/* The huge-page hint keeps what an array holds (it only changes how the
 * kernel backs the pages): values written before and after the hint on an
 * array not aligned to a page, and the hint on NULL and on a small block,
 * which it leaves alone. */
static void test_memory_advise_huge(void **state)
{
	size_t n = HC_MEMORY_HUGE_BYTES / sizeof(double) + 4099, k;
	double *a = hc_mallocarray(n, sizeof *a), small[3] = { 2.385, -0.5, 7.25 };

	(void)state;
	assert_non_null(a);
	for (k = 0; k < n; k += 509)
		a[k] = 0.125 * (double)k;
	hc_memory_advise_huge(a + 1, (n - 1) * sizeof *a);
	hc_memory_advise_huge(NULL, HC_MEMORY_HUGE_BYTES);
	hc_memory_advise_huge(small, sizeof small);
	for (k = 0; k < n; k++)
		if (k % 509)
			a[k] = -(double)k;
	for (k = 0; k < n; k++)
		if (a[k] != (k % 509 ? -(double)k : 0.125 * (double)k))
			fail_msg("element %zu is %g after the hint", k, a[k]);
	assert_true(small[0] == 2.385 && small[1] == -0.5 && small[2] == 7.25);
	hc_free(a);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_error_formats_and_returns_code),
		cmocka_unit_test(test_memory_fault_injection),
		cmocka_unit_test(test_memory_grow),
		cmocka_unit_test(test_memory_check_given_budget),
		cmocka_unit_test(test_memory_check_available),
		cmocka_unit_test(test_memory_advise_huge),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
