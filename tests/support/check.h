/*
 * check.h - small assertions and chores the unit tests share.
 */
#ifndef HOLDCOUNT_TEST_CHECK_H
#define HOLDCOUNT_TEST_CHECK_H

#include <stddef.h>

/*
 * Write text to the file name in the scratch directory $HOLDCOUNT_TEST_TMP
 * (set by ctest) and put its path into path (size bytes).  Fails the test
 * when the variable is unset or the file cannot be written.
 */
void check_write_temp(char *path, size_t size, const char *name, const char *text);

/*
 * Fail the test unless status rc is code and message starts with prefix;
 * the failure shows both statuses, the message and the prefix wanted.
 * (Messages are checked by prefix where the rest is a hint that may be
 * reworded; the prefix holds the position and what was found.)
 */
void check_status_prefix(int rc, int code, const char *message, const char *prefix);

#endif
