/*
 * reportdir.c - build a folder under a temporary name, then rename it into
 * place (see reportdir.h).
 *
 * rename(2) of a directory is atomic within one file system (POSIX.1-2008),
 * so readers see the old folder or the new one.  Linux's renameat2 adds
 * RENAME_NOREPLACE (fail rather than replace an empty DIR that appeared
 * meanwhile, which plain rename would silently do) and RENAME_EXCHANGE
 * (swap the old and new folders in one step).  Every file is fsync'ed, and
 * the folder and its parent after the renames, so that a crash cannot leave
 * DIR naming files with no data.
 *
 * The temporary folder's path and its file names live in static char
 * arrays, so hc_reportdir_unlink_pending can run in a signal handler (unlink
 * and rmdir are async-signal-safe; no heap, no stdio).
 */
#define _GNU_SOURCE 1

#include "holdcount/reportdir.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <ftw.h>
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include "holdcount/memory.h"

#ifndef PATH_MAX
#define PATH_MAX 4096
#endif

#define TMP_INFIX ".tmp-"
#define TMP_SUFFIX_LEN 6   /* mkdtemp's XXXXXX */
#define NFTW_FDS 16

struct reportdir {
	char *dir;         /* target */
	char *tmp;         /* temporary folder */
	int force;
	int committed;
	int lock_fd;       /* the marker, flock'ed for as long as the folder is being written */
};

/* The signal handler's view: plain arrays, written before each file is
 * created and cleared when the folder is committed or removed. */
static char sig_tmp[PATH_MAX];
static char sig_names[REPORTDIR_MAX_FILES][REPORTDIR_NAME_MAX];
static volatile sig_atomic_t sig_nnames;
static volatile sig_atomic_t sig_active;
static char sig_path[PATH_MAX + REPORTDIR_NAME_MAX + 2];

/* Join into sig_path without library calls (async-signal-safe). */
static const char *sig_join(const char *name)
{
	size_t i = 0, j;

	for (j = 0; sig_tmp[j] && i < sizeof sig_path - 2; j++)
		sig_path[i++] = sig_tmp[j];
	sig_path[i++] = '/';
	for (j = 0; name[j] && i < sizeof sig_path - 1; j++)
		sig_path[i++] = name[j];
	sig_path[i] = '\0';
	return sig_path;
}

void hc_reportdir_unlink_pending(void)
{
	sig_atomic_t i;

	if (!sig_active)
		return;
	for (i = 0; i < sig_nnames; i++)
		unlink(sig_join(sig_names[i]));
	unlink(sig_join(REPORTDIR_SIGNATURE));
	unlink(sig_join(REPORTDIR_MARKER ".new"));
	unlink(sig_join(REPORTDIR_MARKER));   /* last: a folder with it is still known to be ours */
	rmdir(sig_tmp);
}

static int valid_name(const char *name)
{
	return name[0] && name[0] != '.' && !strchr(name, '/') && strlen(name) < REPORTDIR_NAME_MAX;
}

static char *join(const char *a, const char *b)
{
	size_t la = strlen(a), lb = strlen(b);
	char *p = hc_malloc(la + lb + 2);

	if (p) {
		memcpy(p, a, la);
		p[la] = '/';
		memcpy(p + la + 1, b, lb + 1);
	}
	return p;
}

/* ---- markers ------------------------------------------------------------------ */

/*
 * Which folders are provably the tool's own:
 *   - a finished report holds REPORTDIR_SIGNATURE, whose first line is
 *     REPORTDIR_SIGNATURE_TEXT; only such a folder (or an empty one) is
 *     replaced by --force;
 *   - a folder being written, or being removed, holds REPORTDIR_MARKER:
 *     "holdcount-incomplete", then "pid P", "host H" and "boot B" lines
 *     (B: the kernel's boot id).  Its writer holds an flock(2) on the
 *     marker for as long as it works, so another run, in this process's
 *     container or another on the same kernel (flock is the kernel's, not
 *     a pid namespace's), sees a live folder as locked and leaves it
 *     alone.  A marker nobody locks is a dead run's when its boot id is
 *     this kernel's (whoever locked it is gone) or when the host is this
 *     one and the boot id differs (the machine has restarted since);
 *     otherwise (another machine sharing the volume) it is kept.
 * The marker is written as MARKER.new, locked, then renamed into place, so
 * a marker is never half-written; a folder holding nothing but an
 * unlocked MARKER.new is a run killed while starting.
 */
static void read_line_file(const char *path, char *buf, size_t size)
{
	int fd = open(path, O_RDONLY | O_CLOEXEC);
	ssize_t n = fd >= 0 ? read(fd, buf, size - 1) : -1;
	char *nl;

	if (fd >= 0)
		close(fd);
	buf[n > 0 ? n : 0] = '\0';
	if ((nl = strchr(buf, '\n')) != NULL)
		*nl = '\0';
}

static void host_and_boot(char *host, size_t hsize, char *boot, size_t bsize)
{
	if (gethostname(host, hsize) != 0)
		host[0] = '\0';
	host[hsize - 1] = '\0';
	read_line_file("/proc/sys/kernel/random/boot_id", boot, bsize);
}

/* Write the marker into folder and lock it; the locked descriptor, or -1
 * (errno set). */
static int write_marker_locked(const char *folder)
{
	char host[256], boot[64], *path = join(folder, REPORTDIR_MARKER ".new"), *final = join(folder, REPORTDIR_MARKER);
	char text[512];
	int fd = -1, n, e;

	if (!path || !final) {
		errno = ENOMEM;
		goto done;
	}
	host_and_boot(host, sizeof host, boot, sizeof boot);
	n = snprintf(text, sizeof text, "%s\npid %ld\nhost %s\nboot %s\n", REPORTDIR_MARKER_TEXT,
		     (long)getpid(), host, boot);
	fd = open(path, O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0600);
	if (fd < 0)
		goto done;
	if (flock(fd, LOCK_EX) != 0 || write(fd, text, (size_t)n) != n || fsync(fd) != 0 ||
	    rename(path, final) != 0) {
		e = errno;
		close(fd);
		unlink(path);
		fd = -1;
		errno = e;
	}
done:
	hc_free(path);
	hc_free(final);
	return fd;
}

/* Is the marker (or MARKER.new) in folder a dead run's, provably?  Leaves
 * *lock_fd holding its lock when it is (so no second cleaner races this
 * one), else -1. */
static int marker_is_dead(const char *folder, const char *name, int *lock_fd)
{
	char host[256], boot[64], text[512], want[600], *p = join(folder, name);
	int fd, dead = 0;

	*lock_fd = -1;
	if (!p)
		return 0;
	fd = open(p, O_RDONLY | O_CLOEXEC);
	hc_free(p);
	if (fd < 0)
		return 0;
	if (flock(fd, LOCK_EX | LOCK_NB) != 0) {
		close(fd);
		return 0;      /* its writer still runs */
	}
	if (strcmp(name, REPORTDIR_MARKER ".new") == 0) {
		*lock_fd = fd;  /* killed before the marker was complete */
		return 1;
	}
	{
		ssize_t n = pread(fd, text, sizeof text - 1, 0);
		text[n > 0 ? n : 0] = '\0';
	}
	host_and_boot(host, sizeof host, boot, sizeof boot);
	if (strncmp(text, REPORTDIR_MARKER_TEXT "\n", strlen(REPORTDIR_MARKER_TEXT) + 1) == 0) {
		snprintf(want, sizeof want, "\nboot %s\n", boot);
		dead = boot[0] && strstr(text, want) != NULL;
		snprintf(want, sizeof want, "\nhost %s\n", host);
		dead = dead || (host[0] && strstr(text, want) != NULL);
	}
	if (dead)
		*lock_fd = fd;
	else
		close(fd);
	return dead;
}

/* ---- removing folders ------------------------------------------------------ */

static int remove_entry(const char *path, const struct stat *st, int flag, struct FTW *ftw)
{
	const char *base = path + ftw->base;

	(void)st;
	/* the top folder and its marker go last, by remove_marked_tree */
	if (ftw->level == 0 ||
	    (ftw->level == 1 && (strcmp(base, REPORTDIR_MARKER) == 0 || strcmp(base, REPORTDIR_MARKER ".new") == 0)))
		return 0;
	return (flag == FTW_DP ? rmdir(path) : unlink(path)) ? -1 : 0;
}

/* rm -r, not following symbolic links, staying on one file system; the
 * marker is removed after everything else and just before the folder, so
 * a run killed half-way leaves a folder that is still marked as ours. */
static int remove_marked_tree(const char *path)
{
	char *m = join(path, REPORTDIR_MARKER), *mn = join(path, REPORTDIR_MARKER ".new");
	int rc = -1;

	if (m && mn && nftw(path, remove_entry, NFTW_FDS, FTW_DEPTH | FTW_PHYS | FTW_MOUNT) == 0) {
		unlink(mn);
		unlink(m);
		rc = rmdir(path);
	}
	hc_free(m);
	hc_free(mn);
	return rc;
}

/* Remove "DIR.tmp-XXXXXX" folders left by runs that were killed, when
 * provably ours and dead (see "markers" above), and empty ones (a run
 * killed between making the folder and writing its marker).  A folder
 * another live run holds is never touched. */
static size_t remove_stale(const char *dir)
{
	char *copy = hc_strdup(dir), *slash, *parent, *base, *path;
	size_t blen, removed = 0;
	struct dirent *e;
	DIR *d;

	if (!copy)
		return 0;
	slash = strrchr(copy, '/');
	if (slash) {
		*slash = '\0';
		parent = slash == copy ? "/" : copy;
		base = slash + 1;
	} else {
		parent = ".";
		base = copy;
	}
	blen = strlen(base);
	d = opendir(parent);
	while (d && (e = readdir(d)) != NULL) {
		int lock_fd;

		if (strncmp(e->d_name, base, blen) || strncmp(e->d_name + blen, TMP_INFIX, strlen(TMP_INFIX)) ||
		    strlen(e->d_name) != blen + strlen(TMP_INFIX) + TMP_SUFFIX_LEN)
			continue;
		path = join(parent, e->d_name);
		if (!path)
			break;
		if (rmdir(path) == 0)
			removed++;
		else if (marker_is_dead(path, REPORTDIR_MARKER, &lock_fd) ||
			 marker_is_dead(path, REPORTDIR_MARKER ".new", &lock_fd)) {
			if (remove_marked_tree(path) == 0)
				removed++;
			close(lock_fd);
		}
		hc_free(path);
	}
	if (d)
		closedir(d);
	hc_free(copy);
	return removed;
}

/* ---- beginning --------------------------------------------------------------- */

/* An earlier report: a folder holding the tool's signature file, or an
 * empty one.  A folder of the user's that merely holds a summary.md is
 * not one. */
static int is_earlier_report(const char *dir)
{
	char text[128], *p;
	struct dirent *e;
	int empty = 1;
	DIR *d = opendir(dir);

	if (!d)
		return 0;
	while ((e = readdir(d)) != NULL)
		if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) {
			empty = 0;
			break;
		}
	closedir(d);
	if (empty)
		return 1;
	if (!(p = join(dir, REPORTDIR_SIGNATURE)))
		return 0;
	read_line_file(p, text, sizeof text);
	hc_free(p);
	return strcmp(text, REPORTDIR_SIGNATURE_TEXT) == 0;
}

static int check_target(const char *dir, int force, struct hc_error *err)
{
	struct stat st;

	if (!dir[0])
		return hc_error(err, HC_EUSAGE, "the report folder name is empty");
	if (lstat(dir, &st) != 0) {
		if (errno == ENOENT)
			return HC_OK;
		return hc_error(err, HC_EIO, "cannot check '%s': %s", dir, strerror(errno));
	}
	if (!force)
		return hc_error(err, HC_EUSAGE, "'%s' exists; use --force to replace it", dir);
	if (!S_ISDIR(st.st_mode))
		return hc_error(err, HC_EUSAGE, "'%s' exists and is not a folder; not replacing it", dir);
	if (!is_earlier_report(dir))
		return hc_error(err, HC_EUSAGE, "'%s' is not a report holdcount wrote (no %s file) and not "
				"empty; not replacing it", dir, REPORTDIR_SIGNATURE);
	return HC_OK;
}

int hc_reportdir_begin(struct reportdir **out, const char *dir, int force, size_t *removed,
		    struct hc_error *err)
{
	struct reportdir *rd;
	size_t len, n;
	int rc;

	*out = NULL;
	if (removed)
		*removed = 0;
	if ((rc = check_target(dir, force, err)) != HC_OK)
		return rc;
	n = remove_stale(dir);
	if (removed)
		*removed = n;
	rd = hc_calloc(1, sizeof *rd);
	if (rd)
		rd->lock_fd = -1;
	len = strlen(dir);
	/* a trailing slash would put the temporary folder inside DIR */
	while (len > 1 && dir[len - 1] == '/')
		len--;
	if (!rd || !(rd->dir = hc_strndup(dir, len)) || !(rd->tmp = hc_malloc(len + sizeof TMP_INFIX + TMP_SUFFIX_LEN))) {
		hc_reportdir_free(rd);
		return hc_error(err, HC_ENOMEM, "out of memory starting the report folder");
	}
	snprintf(rd->tmp, len + sizeof TMP_INFIX + TMP_SUFFIX_LEN, "%s%sXXXXXX", rd->dir, TMP_INFIX);
	if (strlen(rd->tmp) >= sizeof sig_tmp || !mkdtemp(rd->tmp)) {
		rc = hc_error(err, HC_EIO, "cannot make the folder '%s': %s", rd->tmp,
			      strlen(rd->tmp) >= sizeof sig_tmp ? "name too long" : strerror(errno));
		rd->tmp[0] = '\0';
		hc_reportdir_free(rd);
		return rc;
	}
	strcpy(sig_tmp, rd->tmp);
	sig_nnames = 0;
	sig_active = 1;
	rd->force = force;
	if ((rd->lock_fd = write_marker_locked(rd->tmp)) < 0) {
		rc = errno == ENOMEM ? hc_error(err, HC_ENOMEM, "out of memory starting the report folder")
				     : hc_error(err, HC_EIO, "cannot write in '%s': %s", rd->tmp, strerror(errno));
		hc_reportdir_free(rd);
		return rc;
	}
	*out = rd;
	return HC_OK;
}

const char *hc_reportdir_tmp_path(const struct reportdir *rd)
{
	return rd->tmp;
}

int hc_reportdir_has(const struct reportdir *rd, const char *name)
{
	char *p = join(rd->tmp, name);
	struct stat st;
	int has;

	if (!p)
		return 0;
	has = stat(p, &st) == 0;
	hc_free(p);
	return has;
}

int hc_reportdir_expect(struct reportdir *rd, const char *name, struct hc_error *err)
{
	sig_atomic_t i;

	if (!valid_name(name))
		return hc_error(err, HC_EUSAGE, "'%s' is not a plain file name for the report folder", name);
	for (i = 0; i < sig_nnames; i++)
		if (strcmp(sig_names[i], name) == 0)
			return HC_OK;
	if (sig_nnames >= REPORTDIR_MAX_FILES)
		return hc_error(err, HC_ENOMEM, "more than %d files in one report folder", REPORTDIR_MAX_FILES);
	strcpy(sig_names[sig_nnames], name);
	sig_nnames = sig_nnames + 1;   /* published after the name is complete */
	(void)rd;
	return HC_OK;
}

int hc_reportdir_open(struct reportdir *rd, const char *name, FILE **fp, struct hc_error *err)
{
	char *p;
	int rc;

	*fp = NULL;
	if ((rc = hc_reportdir_expect(rd, name, err)) != HC_OK)
		return rc;
	p = join(rd->tmp, name);
	if (!p)
		return hc_error(err, HC_ENOMEM, "out of memory opening '%s'", name);
	*fp = fopen(p, "w");
	rc = *fp ? HC_OK : hc_error(err, HC_EIO, "cannot create '%s': %s", p, strerror(errno));
	hc_free(p);
	return rc;
}

int hc_reportdir_close(struct reportdir *rd, FILE *fp, const char *name, struct hc_error *err)
{
	int bad;

	(void)rd;
	if (!fp)
		return HC_OK;
	bad = fflush(fp) != 0 || ferror(fp) || fsync(fileno(fp)) != 0;
	bad = fclose(fp) != 0 || bad;
	return bad ? hc_error(err, HC_EIO, "cannot write '%s' in the report folder: %s", name, strerror(errno))
		   : HC_OK;
}

/* ---- committing -------------------------------------------------------------- */

static int fsync_path(const char *path)
{
	int fd = open(path, O_RDONLY | O_DIRECTORY), rc;

	if (fd < 0)
		return -1;
	rc = fsync(fd);
	close(fd);
	return rc;
}

static char *parent_of(const char *path)
{
	const char *slash = strrchr(path, '/');

	if (!slash)
		return hc_strdup(".");
	return slash == path ? hc_strdup("/") : hc_strndup(path, (size_t)(slash - path));
}

/* The signature file that makes a finished folder provably a report. */
static int write_signature(const char *folder)
{
	static const char text[] = REPORTDIR_SIGNATURE_TEXT "\n"
		"This folder was written by holdcount report; 'holdcount report --force' may replace it.\n";
	char *p = join(folder, REPORTDIR_SIGNATURE);
	int fd, rc = -1;

	if (!p) {
		errno = ENOMEM;
		return -1;
	}
	fd = open(p, O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0666);
	if (fd >= 0) {
		rc = write(fd, text, sizeof text - 1) == (ssize_t)(sizeof text - 1) && fsync(fd) == 0 ? 0 : -1;
		if (close(fd) != 0)
			rc = -1;
	}
	hc_free(p);
	return rc;
}

/* Swap tmp and dir; afterwards tmp names the old report. */
static int swap(const char *tmp, const char *dir)
{
#ifdef RENAME_EXCHANGE
	if (renameat2(AT_FDCWD, tmp, AT_FDCWD, dir, RENAME_EXCHANGE) == 0)
		return 0;
	if (errno != EINVAL && errno != ENOSYS)
		return -1;
#endif
	{
		/* No exchange on this system or file system: move the old report
		 * aside under the temporary name's pattern, then the new one in. */
		char *aside = hc_malloc(strlen(tmp) + 2);
		int rc;

		if (!aside)
			return -1;
		strcpy(aside, tmp);
		strcpy(aside + strlen(aside) - TMP_SUFFIX_LEN, "XXXXXX");
		rc = mkdtemp(aside) && rename(dir, aside) == 0 && rename(tmp, dir) == 0 ? 0 : -1;
		if (rc == 0) {
			strcpy((char *)tmp, aside);   /* same length: the caller's buffer */
		}
		hc_free(aside);
		return rc;
	}
}

/* mkdtemp makes the temporary folder 0700 (POSIX.1-2008), which keeps a
 * half-written report private; the finished one gets the mode mkdir(2)
 * would have given it, 0777 less the umask.  umask(2) can only be read by
 * setting it, so it is set and restored at once. */
static int open_up(const char *tmp)
{
	mode_t mask = umask(0);

	umask(mask);
	return chmod(tmp, 0777 & ~mask);
}

static int put_in_place(struct reportdir *rd)
{
	struct stat st;

	if (lstat(rd->dir, &st) != 0) {
#ifdef RENAME_NOREPLACE
		if (renameat2(AT_FDCWD, rd->tmp, AT_FDCWD, rd->dir, RENAME_NOREPLACE) == 0)
			return 0;
		if (errno != EINVAL && errno != ENOSYS)
			return -1;
#endif
		return rename(rd->tmp, rd->dir);
	}
	if (!rd->force) {
		errno = EEXIST;
		return -1;
	}
	return swap(rd->tmp, rd->dir);
}

int hc_reportdir_commit(struct reportdir *rd, struct hc_error *err)
{
	char *marker = join(rd->tmp, REPORTDIR_MARKER), *parent = parent_of(rd->dir);
	int existed, rc = HC_OK, old_lock = -1;
	struct stat st;

	if (!marker || !parent) {
		rc = hc_error(err, HC_ENOMEM, "out of memory finishing '%s'", rd->dir);
		goto cleanup;
	}
	if (rd->force && lstat(rd->dir, &st) == 0 && !(S_ISDIR(st.st_mode) && is_earlier_report(rd->dir))) {
		rc = hc_error(err, HC_EUSAGE, "'%s' changed while the report was written and is no longer an "
			      "earlier report; not replacing it", rd->dir);
		goto cleanup;
	}
	existed = lstat(rd->dir, &st) == 0;
	/* The old report is marked (and locked) before it is swapped out, so
	 * that wherever this process dies it lies under a marked name: at DIR
	 * (a marker in a report with a signature does not stop a later
	 * --force) or at the temporary name, which a later run cleans. */
	if (existed && rd->force && (old_lock = write_marker_locked(rd->dir)) < 0) {
		rc = hc_error(err, HC_EIO, "cannot mark the earlier report '%s' for removal: %s", rd->dir,
			      strerror(errno));
		goto cleanup;
	}
	/* the finished folder carries the signature and no marker */
	if (write_signature(rd->tmp) != 0 || unlink(marker) != 0 || open_up(rd->tmp) != 0 ||
	    fsync_path(rd->tmp) != 0 || put_in_place(rd) != 0) {
		rc = hc_error(err, HC_EIO, "cannot put the report in place as '%s': %s", rd->dir,
			      errno == EEXIST || errno == ENOTEMPTY ? "it appeared while the report was written"
								     : strerror(errno));
		if (old_lock >= 0) {
			char *om = join(rd->dir, REPORTDIR_MARKER);
			if (om)
				unlink(om);
			hc_free(om);
		}
		goto cleanup;
	}
	rd->committed = 1;
	fsync_path(parent);
	if (existed)
		remove_marked_tree(rd->tmp);   /* rd->tmp now names the old report */
	sig_active = 0;
cleanup:
	if (old_lock >= 0)
		close(old_lock);
	if (rd->committed && rd->lock_fd >= 0) {
		close(rd->lock_fd);
		rd->lock_fd = -1;
	}
	hc_free(marker);
	hc_free(parent);
	return rc;
}

void hc_reportdir_free(struct reportdir *rd)
{
	if (!rd)
		return;
	if (!rd->committed && rd->tmp && rd->tmp[0])
		remove_marked_tree(rd->tmp);
	if (rd->lock_fd >= 0)
		close(rd->lock_fd);
	if (rd->tmp && strcmp(sig_tmp, rd->tmp) == 0) {
		sig_active = 0;
		sig_nnames = 0;
	}
	hc_free(rd->dir);
	hc_free(rd->tmp);
	hc_free(rd);
}
