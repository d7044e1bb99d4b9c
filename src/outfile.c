/*
 * outfile.c - all-or-nothing output files.
 *
 * The classic write-to-temporary-then-rename pattern: rename(2) within one
 * directory replaces the target atomically (POSIX.1-2008, rename), so a
 * reader sees the old file or the complete new one, never a torn write.
 * The data are fsync'ed before the rename so that a crash cannot leave the
 * new name pointing at an empty file (the ext4 delayed-allocation problem).
 *
 * The names of open temporaries are kept in a fixed static table of plain
 * char arrays, so a signal handler can read and unlink them without
 * touching the heap (unlink(2) is async-signal-safe).
 */
#define _XOPEN_SOURCE 700

#include "holdcount/outfile.h"

#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "holdcount/memory.h"

#ifndef PATH_MAX
#define PATH_MAX 4096
#endif

#define OUTFILE_SLOTS 16

static char pending_name[OUTFILE_SLOTS][PATH_MAX];
static volatile sig_atomic_t pending_used[OUTFILE_SLOTS];

static int pending_add(const char *tmp)
{
	int i;

	if (strlen(tmp) >= PATH_MAX)
		return -1;
	for (i = 0; i < OUTFILE_SLOTS; i++) {
		if (!pending_used[i]) {
			strcpy(pending_name[i], tmp);
			pending_used[i] = 1;
			return 0;
		}
	}
	return -1;
}

static void pending_remove(const char *tmp)
{
	int i;

	for (i = 0; i < OUTFILE_SLOTS; i++)
		if (pending_used[i] && strcmp(pending_name[i], tmp) == 0)
			pending_used[i] = 0;
}

const char *outfile_pending(void)
{
	int i;

	for (i = OUTFILE_SLOTS - 1; i >= 0; i--)
		if (pending_used[i])
			return pending_name[i];
	return NULL;
}

void outfile_unlink_pending(void)
{
	int i;

	for (i = 0; i < OUTFILE_SLOTS; i++)
		if (pending_used[i]) {
			unlink(pending_name[i]);
			pending_used[i] = 0;
		}
}

static int is_stdout(const char *path)
{
	return !path || strcmp(path, "-") == 0;
}

/* "DIR/.BASE.tmp-XXXXXX" for path "DIR/BASE" (or ".BASE.tmp-XXXXXX"). */
static char *temp_template(const char *path)
{
	const char *slash = strrchr(path, '/');
	size_t dirlen = slash ? (size_t)(slash - path) + 1 : 0;
	const char *base = path + dirlen;
	size_t len = dirlen + 1 + strlen(base) + sizeof ".tmp-XXXXXX";
	char *t = hc_malloc(len);

	if (!t)
		return NULL;
	memcpy(t, path, dirlen);
	snprintf(t + dirlen, len - dirlen, ".%s.tmp-XXXXXX", base);
	return t;
}

/* mkstemp creates 0600; the finished file gets the mode an ordinary
 * open(2) would give it (0666 less the umask), or the old file's mode when
 * it replaces one. */
static void set_final_mode(int fd, const char *path)
{
	struct stat st;
	mode_t mask;

	if (stat(path, &st) == 0) {
		(void)fchmod(fd, st.st_mode & 07777);
		return;
	}
	mask = umask(0);
	umask(mask);
	(void)fchmod(fd, 0666 & ~mask);
}

int outfile_open(struct outfile *of, const char *path, struct hc_error *err)
{
	int fd;

	memset(of, 0, sizeof *of);
	if (is_stdout(path)) {
		of->fp = stdout;
		return HC_OK;
	}
	if (path[0] == '\0' || path[strlen(path) - 1] == '/')
		return hc_error(err, HC_EUSAGE, "output name '%s' is not a file name", path);
	of->path = hc_strdup(path);
	of->tmp = temp_template(path);
	if (!of->path || !of->tmp)
		goto nomem;
	fd = mkstemp(of->tmp);
	if (fd < 0) {
		int e = errno;
		hc_free(of->path);
		hc_free(of->tmp);
		memset(of, 0, sizeof *of);
		return hc_error(err, HC_EIO, "cannot create a file beside '%s': %s", path, strerror(e));
	}
	if (pending_add(of->tmp)) {
		close(fd);
		unlink(of->tmp);
		hc_free(of->path);
		hc_free(of->tmp);
		memset(of, 0, sizeof *of);
		return hc_error(err, HC_EIO, "too many output files open at once (or name too long) for '%s'", path);
	}
	set_final_mode(fd, path);
	of->fp = fdopen(fd, "w");
	if (!of->fp) {
		close(fd);
		outfile_abort(of);
		goto nomem;
	}
	return HC_OK;
nomem:
	hc_free(of->path);
	hc_free(of->tmp);
	memset(of, 0, sizeof *of);
	return hc_error(err, HC_ENOMEM, "out of memory opening '%s'", path);
}

/* Make the rename itself durable; failure here is not worth failing the
 * run over (the data are already safe), so the result is ignored. */
static void sync_directory(const char *path)
{
	const char *slash = strrchr(path, '/');
	char dir[PATH_MAX];
	int fd;

	if (!slash)
		strcpy(dir, ".");
	else if (slash == path)
		strcpy(dir, "/");
	else if ((size_t)(slash - path) < sizeof dir) {
		memcpy(dir, path, (size_t)(slash - path));
		dir[slash - path] = '\0';
	} else
		return;
	fd = open(dir, O_RDONLY);
	if (fd >= 0) {
		(void)fsync(fd);
		close(fd);
	}
}

int outfile_commit(struct outfile *of, struct hc_error *err)
{
	int e = 0;

	if (!of->fp)
		return hc_error(err, HC_EINTERNAL, "output committed twice or never opened");
	if (!of->path) {
		of->fp = NULL;
		if (fflush(stdout) != 0 || ferror(stdout))
			return hc_error(err, HC_EIO, "cannot write to standard output: %s", strerror(errno));
		return HC_OK;
	}
	if (fflush(of->fp) != 0 || ferror(of->fp))
		e = errno ? errno : EIO;
	else if (fsync(fileno(of->fp)) != 0)
		e = errno;
	if (fclose(of->fp) != 0 && !e)
		e = errno;
	of->fp = NULL;
	if (!e && rename(of->tmp, of->path) != 0)
		e = errno;
	if (e) {
		int rc = hc_error(err, HC_EIO, "cannot write '%s': %s", of->path, strerror(e));
		outfile_abort(of);
		return rc;
	}
	pending_remove(of->tmp);
	sync_directory(of->path);
	hc_free(of->path);
	hc_free(of->tmp);
	of->path = of->tmp = NULL;
	return HC_OK;
}

void outfile_abort(struct outfile *of)
{
	if (!of)
		return;
	if (!of->path) {
		/* Standard output cannot be taken back; flush what is there. */
		if (of->fp)
			fflush(of->fp);
		of->fp = NULL;
		return;
	}
	if (of->fp)
		fclose(of->fp);
	of->fp = NULL;
	if (of->tmp) {
		unlink(of->tmp);
		pending_remove(of->tmp);
	}
	hc_free(of->path);
	hc_free(of->tmp);
	of->path = of->tmp = NULL;
}
