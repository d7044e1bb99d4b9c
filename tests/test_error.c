/* Unit tests for the error record and the fault-injecting allocator. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
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

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_error_formats_and_returns_code),
		cmocka_unit_test(test_memory_fault_injection),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
