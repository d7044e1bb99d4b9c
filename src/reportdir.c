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
	unlink(sig_join(REPORTDIR_MARKER));
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

/* ---- removing folders ------------------------------------------------------ */

static int remove_entry(const char *path, const struct stat *st, int flag, struct FTW *ftw)
{
	(void)st;
	(void)ftw;
	return (flag == FTW_DP ? rmdir(path) : unlink(path)) ? -1 : 0;
}

/* rm -r, not following symbolic links, staying on one file system. */
static int remove_tree(const char *path)
{
	return nftw(path, remove_entry, NFTW_FDS, FTW_DEPTH | FTW_PHYS | FTW_MOUNT);
}

/* The pid in path's marker, or 0 when there is no readable marker. */
static long marker_pid(const char *path)
{
	char *m = join(path, REPORTDIR_MARKER), buf[32];
	long pid = 0;
	FILE *fp;

	if (!m)
		return 0;
	fp = fopen(m, "r");
	if (fp) {
		if (fgets(buf, sizeof buf, fp))
			pid = strtol(buf, NULL, 10);
		fclose(fp);
	}
	hc_free(m);
	return pid;
}

/* Remove "DIR.tmp-XXXXXX" folders left by runs that were killed: those
 * whose marker names a process that is gone, and empty ones (a run killed
 * between making the folder and writing its marker). */
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
		long pid;
		if (strncmp(e->d_name, base, blen) || strncmp(e->d_name + blen, TMP_INFIX, strlen(TMP_INFIX)) ||
		    strlen(e->d_name) != blen + strlen(TMP_INFIX) + TMP_SUFFIX_LEN)
			continue;
		path = join(parent, e->d_name);
		if (!path)
			break;
		pid = marker_pid(path);
		if (pid > 0 && (kill((pid_t)pid, 0) == 0 || errno != ESRCH)) {
			hc_free(path);
			continue;   /* its writer still runs */
		}
		if (pid > 0 ? remove_tree(path) == 0 : rmdir(path) == 0)
			removed++;
		hc_free(path);
	}
	if (d)
		closedir(d);
	hc_free(copy);
	return removed;
}

/* ---- beginning --------------------------------------------------------------- */

static int is_earlier_report(const char *dir)
{
	static const char *const names[] = { "summary.json", "summary.md" };
	struct dirent *e;
	int empty = 1;
	size_t i;
	DIR *d = opendir(dir);

	if (!d)
		return 0;
	while ((e = readdir(d)) != NULL) {
		if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0)
			continue;
		empty = 0;
		for (i = 0; i < 2; i++)
			if (strcmp(e->d_name, names[i]) == 0) {
				closedir(d);
				return 1;
			}
	}
	closedir(d);
	return empty;
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
		return hc_error(err, HC_EUSAGE, "'%s' is not an earlier report (no summary.json or summary.md) "
				"and not empty; not replacing it", dir);
	return HC_OK;
}

static int write_marker(const char *tmp, struct hc_error *err)
{
	char *m = join(tmp, REPORTDIR_MARKER);
	FILE *fp;
	int ok;

	if (!m)
		return hc_error(err, HC_ENOMEM, "out of memory starting the report folder");
	fp = fopen(m, "w");
	ok = fp && fprintf(fp, "%ld\n", (long)getpid()) > 0;
	ok = fp ? (fclose(fp) == 0 && ok) : 0;
	hc_free(m);
	return ok ? HC_OK : hc_error(err, HC_EIO, "cannot write in '%s': %s", tmp, strerror(errno));
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
	if ((rc = write_marker(rd->tmp, err)) != HC_OK) {
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
	int existed, rc = HC_OK;
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
	/* the finished folder carries no marker; the old one gets one below */
	if (unlink(marker) != 0 || open_up(rd->tmp) != 0 || fsync_path(rd->tmp) != 0 || put_in_place(rd) != 0) {
		rc = hc_error(err, HC_EIO, "cannot put the report in place as '%s': %s", rd->dir,
			      errno == EEXIST || errno == ENOTEMPTY ? "it appeared while the report was written"
								     : strerror(errno));
		goto cleanup;
	}
	rd->committed = 1;
	fsync_path(parent);
	if (existed) {
		/* rd->tmp now names the old report: mark it, so that if this
		 * process dies while removing it the next run finishes the job. */
		hc_free(marker);
		marker = NULL;
		write_marker(rd->tmp, NULL);
		remove_tree(rd->tmp);
	}
	sig_active = 0;
cleanup:
	hc_free(marker);
	hc_free(parent);
	return rc;
}

void hc_reportdir_free(struct reportdir *rd)
{
	if (!rd)
		return;
	if (!rd->committed && rd->tmp && rd->tmp[0])
		remove_tree(rd->tmp);
	if (rd->tmp && strcmp(sig_tmp, rd->tmp) == 0) {
		sig_active = 0;
		sig_nnames = 0;
	}
	hc_free(rd->dir);
	hc_free(rd->tmp);
	hc_free(rd);
}
