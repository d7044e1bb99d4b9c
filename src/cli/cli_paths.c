/*
 * cli_paths.c - where the bundled demo data is, for the build tree's binary
 * and for an installed one.
 *
 * The build passes four strings (CMakeLists.txt):
 *   HOLDCOUNT_BUILD_BINDIR     the directory the build tree's binary is made in
 *   HOLDCOUNT_SOURCE_DATA_DIR  the source tree's data/
 *   HOLDCOUNT_DATA_RELATIVE    DATADIR/holdcount relative to BINDIR ("../share/holdcount")
 *   HOLDCOUNT_DATA_DIR         DATADIR/holdcount at the configured prefix
 * The relative lookup comes before the configured one so that a copy
 * installed under another prefix (cmake --install --prefix, DESTDIR, a
 * Debian package unpacked with dpkg -x) reads its own data, not another
 * installation's.
 */
#define _GNU_SOURCE 1

#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"

#ifndef HOLDCOUNT_DATA_DIR
#define HOLDCOUNT_DATA_DIR "/usr/local/share/holdcount"
#endif
#ifndef HOLDCOUNT_DATA_RELATIVE
#define HOLDCOUNT_DATA_RELATIVE "../share/holdcount"
#endif

/* The directory of the running executable (Linux: /proc/self/exe), with
 * symbolic links resolved; 0 when it cannot be found. */
static int exe_dir(char *buf, size_t size)
{
	char path[PATH_MAX];
	ssize_t n = readlink("/proc/self/exe", path, sizeof path - 1);
	char *slash;

	if (n <= 0)
		return 0;
	path[n] = '\0';
	slash = strrchr(path, '/');
	if (!slash)
		return 0;
	*slash = '\0';
	if (snprintf(buf, size, "%s", path[0] ? path : "/") >= (int)size)
		return 0;
	return 1;
}

static int same_dir(const char *a, const char *b)
{
	char ra[PATH_MAX], rb[PATH_MAX];

	return realpath(a, ra) && realpath(b, rb) && strcmp(ra, rb) == 0;
}

static int readable(char *buf, size_t size, const char *dir, const char *file)
{
	if (snprintf(buf, size, "%s/%s", dir, file) >= (int)size)
		return 0;
	return access(buf, R_OK) == 0;
}

int cli_data_file(char *buf, size_t size, const char *file)
{
	const char *env = getenv("HOLDCOUNT_DATA_DIR");
	char dir[PATH_MAX], rel[PATH_MAX], resolved[PATH_MAX];

	if (env && env[0])
		return readable(buf, size, env, file);
	if (exe_dir(dir, sizeof dir)) {
#ifdef HOLDCOUNT_BUILD_BINDIR
		if (same_dir(dir, HOLDCOUNT_BUILD_BINDIR))
			return readable(buf, size, HOLDCOUNT_SOURCE_DATA_DIR, file);
#endif
		/* realpath: messages and summaries name /usr/share/holdcount,
		 * not /usr/bin/../share/holdcount */
		if (snprintf(rel, sizeof rel, "%s/%s", dir, HOLDCOUNT_DATA_RELATIVE) < (int)sizeof rel
		    && realpath(rel, resolved) && readable(buf, size, resolved, file))
			return 1;
	}
	return readable(buf, size, HOLDCOUNT_DATA_DIR, file);
}
