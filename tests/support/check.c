/*
 * check.c - see check.h.
 */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"

void check_write_temp(char *path, size_t size, const char *name, const char *text)
{
	const char *tmp = getenv("HOLDCOUNT_TEST_TMP");
	FILE *fp;

	assert_non_null(tmp);
	assert_true((size_t)snprintf(path, size, "%s/%s", tmp, name) < size);
	fp = fopen(path, "wb");
	assert_non_null(fp);
	assert_true(fputs(text, fp) >= 0);
	assert_int_equal(fclose(fp), 0);
}

void check_status_prefix(int rc, int code, const char *message, const char *prefix)
{
	if (rc != code || strncmp(message, prefix, strlen(prefix)) != 0)
		fail_msg("rc %d (want %d), message '%s' (want '%s...')", rc, code, message, prefix);
}
