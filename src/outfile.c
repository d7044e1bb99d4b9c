/*
 * outfile.c - all-or-nothing output files.
 *
 * The classic write-to-temporary-then-rename pattern: rename(2) within one
 * directory replaces the target atomically (POSIX.1-2008, rename), so a
 * reader sees the old file or the complete new one, never a torn write.
 * The data are fsync'ed before the rename so that a crash cannot leave the
 * new name pointing at an empty file (the ext4 delayed-allocation problem).
 *
 * A symbolic link given as the output is written through: the temporary is
 * made beside the link's target and renamed over the target, so the link
 * stays a link (as it would for a plain open(2) of the name).
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
/* Symbolic links followed in a row before giving up with ELOOP: the
 * kernel's own limit (path_resolution(7)). */
#define OUTFILE_MAX_LINKS 40

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

const char *hc_outfile_pending(void)
{
	int i;

	for (i = OUTFILE_SLOTS - 1; i >= 0; i--)
		if (pending_used[i])
			return pending_name[i];
	return NULL;
}

void hc_outfile_unlink_pending(void)
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

/*
 * The descriptor a name stands for when it names one the process already
 * has open: /dev/stdout, /dev/stderr, /dev/fd/N, /proc/self/fd/N; else -1.
 * Such a name is written through that descriptor (its offset and O_APPEND
 * shared, as a shell's `-o /dev/stdout >> log` expects), never reopened
 * (a reopened /proc/self/fd/1 starts at offset 0) and never replaced.
 */
static int inherited_fd(const char *path)
{
	const char *digits = NULL;
	char *end;
	long n;

	if (strcmp(path, "/dev/stdout") == 0)
		return STDOUT_FILENO;
	if (strcmp(path, "/dev/stderr") == 0)
		return STDERR_FILENO;
	if (strncmp(path, "/dev/fd/", 8) == 0)
		digits = path + 8;
	else if (strncmp(path, "/proc/self/fd/", 14) == 0)
		digits = path + 14;
	if (!digits || !*digits || strspn(digits, "0123456789") != strlen(digits))
		return -1;
	errno = 0;
	n = strtol(digits, &end, 10);
	if (errno || n > INT_MAX || fcntl((int)n, F_GETFD) < 0)
		return -1;
	return (int)n;
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

/*
 * Follow path while it names a symbolic link, so that output replaces the
 * file the link points at and the link itself stays, as writing through
 * open(2) would.  A relative target is read from the link's directory.
 * *out is a new string: the last name reached, which exists as no link or
 * does not exist yet (a dangling link's target is created).  0 or an errno
 * (ENOMEM, ELOOP, or readlink's).
 */
static int follow_links(const char *path, char **out)
{
	char target[PATH_MAX], *cur = hc_strdup(path), *next;
	struct stat st;
	int hops;

	*out = NULL;
	for (hops = 0; cur; hops++) {
		const char *slash;
		ssize_t n;

		if (inherited_fd(cur) >= 0 || lstat(cur, &st) != 0 || !S_ISLNK(st.st_mode)) {
			*out = cur;
			return 0;
		}
		if (hops == OUTFILE_MAX_LINKS || (n = readlink(cur, target, sizeof target - 1)) < 0) {
			int e = hops == OUTFILE_MAX_LINKS ? ELOOP : errno;
			hc_free(cur);
			return e;
		}
		target[n] = '\0';
		slash = strrchr(cur, '/');
		if (target[0] == '/' || !slash) {
			next = hc_strdup(target);
		} else {
			size_t dirlen = (size_t)(slash - cur) + 1;
			next = hc_malloc(dirlen + (size_t)n + 1);
			if (next) {
				memcpy(next, cur, dirlen);
				memcpy(next + dirlen, target, (size_t)n + 1);
			}
		}
		hc_free(cur);
		cur = next;
	}
	return ENOMEM;
}

/* The canonical name of a file that may not exist yet: links followed,
 * then its directory resolved by realpath(3).  NULL when the directory
 * cannot be resolved (*e says why: ENOMEM, or realpath's). */
static char *canonical_name(const char *path, int *e)
{
	char dir[PATH_MAX], *name = NULL, *out = NULL;
	const char *slash, *base;
	size_t dirlen;

	if ((*e = follow_links(path, &name)) != 0)
		return NULL;
	slash = strrchr(name, '/');
	base = slash ? slash + 1 : name;
	dirlen = slash ? (size_t)(slash - name) : 0;
	if (dirlen >= sizeof dir) {
		*e = ENAMETOOLONG;
		goto done;
	}
	if (!slash)
		strcpy(dir, ".");
	else if (dirlen == 0)
		strcpy(dir, "/");
	else {
		memcpy(dir, name, dirlen);
		dir[dirlen] = '\0';
	}
	{
		char resolved[PATH_MAX];
		size_t rl, bl = strlen(base);

		if (!realpath(dir, resolved)) {
			*e = errno;
			goto done;
		}
		rl = strlen(resolved);
		out = hc_malloc(rl + bl + 2);
		if (!out) {
			*e = ENOMEM;
			goto done;
		}
		memcpy(out, resolved, rl);
		out[rl] = '/';
		memcpy(out + rl + 1, base, bl + 1);
	}
done:
	hc_free(name);
	return out;
}

int hc_outfile_same_file(const char *a, const char *b, int *same, struct hc_error *err)
{
	struct stat sa, sb;
	char *ca, *cb;
	int ea = 0, eb = 0, ok_a, ok_b;

	*same = 0;
	if (is_stdout(a) || is_stdout(b))
		return HC_OK;
	ok_a = stat(a, &sa) == 0;
	ok_b = stat(b, &sb) == 0;
	if (ok_a && ok_b) {
		*same = sa.st_dev == sb.st_dev && sa.st_ino == sb.st_ino;
		return HC_OK;
	}
	if (ok_a || ok_b)
		return HC_OK;   /* one exists and the other does not */
	ca = canonical_name(a, &ea);
	cb = canonical_name(b, &eb);
	*same = ca && cb && strcmp(ca, cb) == 0;
	hc_free(ca);
	hc_free(cb);
	if (ea == ENOMEM || eb == ENOMEM)
		return hc_error(err, HC_ENOMEM, "out of memory comparing '%s' and '%s'", a, b);
	return HC_OK;
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

/*
 * Open a target that is not a regular file where it is: a descriptor the
 * process has (/dev/stdout ...) through a duplicate, a device or a FIFO
 * with open(2), without O_CREAT or O_TRUNC.  Replacing such a name would
 * turn /dev/null into a regular file (as root) or cut a FIFO's reader off;
 * what was written to it cannot be taken back, as with standard output.
 */
static int open_in_place(struct outfile *of, const char *path, int fd, struct hc_error *err)
{
	struct stat st;
	int e;

	if (fd >= 0)
		fd = fcntl(fd, F_DUPFD_CLOEXEC, 3);
	else
		fd = open(of->path, O_WRONLY | O_NOCTTY | O_CLOEXEC);
	if (fd < 0) {
		e = errno;
		hc_free(of->path);
		memset(of, 0, sizeof *of);
		return hc_error(err, HC_EIO, "cannot open '%s' for writing: %s", path, strerror(e));
	}
	if (fstat(fd, &st) == 0 && S_ISDIR(st.st_mode)) {
		close(fd);
		hc_free(of->path);
		memset(of, 0, sizeof *of);
		return hc_error(err, HC_EIO, "cannot write '%s': %s", path, strerror(EISDIR));
	}
	of->in_place = 1;
	of->fp = fdopen(fd, "w");
	if (!of->fp) {
		close(fd);
		hc_free(of->path);
		memset(of, 0, sizeof *of);
		return hc_error(err, HC_ENOMEM, "out of memory opening '%s'", path);
	}
	return HC_OK;
}

int hc_outfile_open(struct outfile *of, const char *path, struct hc_error *err)
{
	struct stat st;
	int fd, e;

	memset(of, 0, sizeof *of);
	if (is_stdout(path)) {
		of->fp = stdout;
		return HC_OK;
	}
	if (path[0] == '\0' || path[strlen(path) - 1] == '/')
		return hc_error(err, HC_EUSAGE, "output name '%s' is not a file name", path);
	/* A link is written through: the temporary goes beside its target,
	 * which the rename then replaces. */
	e = follow_links(path, &of->path);
	if (e == ENOMEM)
		goto nomem;
	if (e)
		return hc_error(err, HC_EIO, "cannot follow the symbolic link '%s': %s", path, strerror(e));
	/* One rule for every output: a regular file (or a new name) is
	 * replaced atomically; anything else is written where it is. */
	if ((fd = inherited_fd(of->path)) >= 0)
		return open_in_place(of, path, fd, err);
	if (stat(of->path, &st) == 0 && !S_ISREG(st.st_mode)) {
		if (S_ISDIR(st.st_mode)) {
			hc_free(of->path);
			memset(of, 0, sizeof *of);
			return hc_error(err, HC_EIO, "cannot write '%s': %s", path, strerror(EISDIR));
		}
		return open_in_place(of, path, -1, err);
	}
	of->tmp = temp_template(of->path);
	if (!of->tmp)
		goto nomem;
	fd = mkstemp(of->tmp);
	if (fd < 0) {
		e = errno;
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
	set_final_mode(fd, of->path);
	of->fp = fdopen(fd, "w");
	if (!of->fp) {
		close(fd);
		hc_outfile_abort(of);
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

int hc_outfile_commit(struct outfile *of, struct hc_error *err)
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
	if (of->in_place) {
		if (fflush(of->fp) != 0 || ferror(of->fp))
			e = errno ? errno : EIO;
		if (fclose(of->fp) != 0 && !e)
			e = errno;
		of->fp = NULL;
		if (e)
			hc_error(err, HC_EIO, "cannot write '%s': %s", of->path, strerror(e));
		hc_free(of->path);
		of->path = NULL;
		of->in_place = 0;
		return e ? HC_EIO : HC_OK;
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
		hc_outfile_abort(of);
		return rc;
	}
	pending_remove(of->tmp);
	sync_directory(of->path);
	hc_free(of->path);
	hc_free(of->tmp);
	of->path = of->tmp = NULL;
	return HC_OK;
}

void hc_outfile_abort(struct outfile *of)
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
	of->in_place = 0;
	if (of->tmp) {
		unlink(of->tmp);
		pending_remove(of->tmp);
	}
	hc_free(of->path);
	hc_free(of->tmp);
	of->path = of->tmp = NULL;
}
