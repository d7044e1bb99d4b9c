/*
 * test_reportdir.c - the report folder appears complete or not at all.
 *
 * The reference is POSIX rename(2) and Linux renameat2(2) semantics, checked
 * through the file system itself (stat, opendir): what exists under which
 * name after each step.
 */
#define _GNU_SOURCE 1
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <dirent.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include "holdcount/memory.h"
#include "holdcount/reportdir.h"

static char base[4096], target[4200];

static void fresh(const char *name)
{
	const char *t = getenv("HOLDCOUNT_TEST_TMP");
	char cmd[8500];

	snprintf(base, sizeof base, "%s/test_reportdir_%s", t ? t : "/tmp", name);
	snprintf(cmd, sizeof cmd, "rm -rf '%s' && mkdir -p '%s'", base, base);
	assert_int_equal(system(cmd), 0);
	snprintf(target, sizeof target, "%s/report", base);
}

static int exists(const char *dir, const char *name)
{
	char p[8800];
	struct stat st;

	if (!name)
		return stat(dir, &st) == 0;
	snprintf(p, sizeof p, "%s/%s", dir, name);
	return stat(p, &st) == 0;
}

/* Entries of base other than "report" (temporary folders left behind). */
static int leftovers(void)
{
	DIR *d = opendir(base);
	struct dirent *e;
	int n = 0;

	assert_non_null(d);
	while ((e = readdir(d)))
		if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..") && strcmp(e->d_name, "report"))
			n++;
	closedir(d);
	return n;
}

static void unlink_all_and_rmdir(const char *dir)
{
	char cmd[8500];

	snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
	assert_int_equal(system(cmd), 0);
}

static void write_one(struct reportdir *rd, const char *name, const char *text)
{
	FILE *fp;

	assert_int_equal(hc_reportdir_open(rd, name, &fp, NULL), HC_OK);
	fputs(text, fp);
	assert_int_equal(hc_reportdir_close(rd, fp, name, NULL), HC_OK);
}

static void test_reportdir_commit_puts_the_folder_in_place(void **state)
{
	struct reportdir *rd;

	(void)state;
	fresh("commit");
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, NULL), HC_OK);
	assert_false(exists(target, NULL));            /* nothing under DIR yet */
	assert_true(exists(hc_reportdir_tmp_path(rd), REPORTDIR_MARKER));
	write_one(rd, "summary.json", "{}\n");
	assert_int_equal(hc_reportdir_commit(rd, NULL), HC_OK);
	hc_reportdir_free(rd);
	assert_true(exists(target, "summary.json"));
	assert_false(exists(target, REPORTDIR_MARKER));
	assert_int_equal(leftovers(), 0);
}

/* The finished folder's mode is what mkdir(2) gives under the umask
 * (POSIX.1-2008 mkdir and umask: requested mode 0777 & ~umask), while the
 * temporary folder stays 0700 as mkdtemp makes it (POSIX.1-2008 mkdtemp). */
static mode_t committed_mode(const char *name, mode_t mask)
{
	struct reportdir *rd;
	struct stat st;
	mode_t old = umask(mask), tmp_mode;

	fresh(name);
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, NULL), HC_OK);
	assert_int_equal(stat(hc_reportdir_tmp_path(rd), &st), 0);
	tmp_mode = st.st_mode & 07777;
	write_one(rd, "summary.json", "{}\n");
	assert_int_equal(hc_reportdir_commit(rd, NULL), HC_OK);
	hc_reportdir_free(rd);
	umask(old);
	assert_int_equal(tmp_mode, 0700);
	assert_int_equal(stat(target, &st), 0);
	return st.st_mode & 07777;
}

static void test_reportdir_commit_gives_the_folder_the_umask_mode(void **state)
{
	(void)state;
	assert_int_equal(committed_mode("umask022", 022), 0755);
	assert_int_equal(committed_mode("umask027", 027), 0750);
	assert_int_equal(committed_mode("umask077", 077), 0700);
	assert_int_equal(committed_mode("umask002", 002), 0775);
}

static void test_reportdir_refuses_an_existing_folder(void **state)
{
	struct reportdir *rd = NULL;
	struct hc_error err;
	char notes[8500];
	FILE *fp;

	(void)state;
	fresh("refuse");
	mkdir(target, 0777);
	snprintf(notes, sizeof notes, "%s/notes.txt", target);
	fp = fopen(notes, "w");
	fputs("keep\n", fp);
	fclose(fp);
	hc_error_clear(&err);
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, "--force"));
	/* a folder that is no report is not replaced even with force */
	assert_int_equal(hc_reportdir_begin(&rd, target, 1, NULL, &err), HC_EUSAGE);
	assert_null(rd);
	assert_true(exists(target, "notes.txt"));
	assert_int_equal(leftovers(), 0);
}

static void test_reportdir_force_replaces_an_earlier_report(void **state)
{
	struct reportdir *rd;

	(void)state;
	fresh("force");
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, NULL), HC_OK);
	write_one(rd, "summary.md", "old\n");
	write_one(rd, "old-only.txt", "old\n");
	assert_int_equal(hc_reportdir_commit(rd, NULL), HC_OK);
	hc_reportdir_free(rd);
	assert_int_equal(hc_reportdir_begin(&rd, target, 1, NULL, NULL), HC_OK);
	write_one(rd, "summary.md", "new\n");
	assert_true(exists(target, "old-only.txt"));   /* old report intact until commit */
	assert_int_equal(hc_reportdir_commit(rd, NULL), HC_OK);
	hc_reportdir_free(rd);
	assert_true(exists(target, "summary.md"));
	assert_false(exists(target, "old-only.txt"));
	assert_int_equal(leftovers(), 0);
}

static void test_reportdir_free_without_commit_removes_everything(void **state)
{
	struct reportdir *rd;

	(void)state;
	fresh("abort");
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, NULL), HC_OK);
	write_one(rd, "curve.csv", "n\n1\n");
	hc_reportdir_free(rd);
	assert_false(exists(target, NULL));
	assert_int_equal(leftovers(), 0);
}

static void test_reportdir_unlink_pending_empties_the_temporary_folder(void **state)
{
	struct reportdir *rd;
	char tmp[8500];

	(void)state;
	fresh("signal");
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, NULL), HC_OK);
	write_one(rd, "a.dat", "1 2\n");
	assert_int_equal(hc_reportdir_expect(rd, "a.png", NULL), HC_OK);   /* never made */
	snprintf(tmp, sizeof tmp, "%s", hc_reportdir_tmp_path(rd));
	hc_reportdir_unlink_pending();
	assert_false(exists(tmp, NULL));
	hc_reportdir_free(rd);
	assert_int_equal(leftovers(), 0);
	assert_int_equal(hc_reportdir_expect(rd = NULL, "../x", NULL), HC_EUSAGE);
}

/* Write a marker in the tool's format into folder: this host and kernel
 * when foreign is 0, another machine's otherwise. */
static void put_marker(const char *folder, const char *name, long pid, int foreign)
{
	char p[8600], host[256], boot[64] = "";
	FILE *fp;

	gethostname(host, sizeof host);
	fp = fopen("/proc/sys/kernel/random/boot_id", "r");
	if (fp) {
		if (fgets(boot, sizeof boot, fp))
			boot[strcspn(boot, "\n")] = '\0';
		fclose(fp);
	}
	snprintf(p, sizeof p, "%s/%s", folder, name);
	fp = fopen(p, "w");
	assert_non_null(fp);
	fprintf(fp, "%s\npid %ld\nhost %s\nboot %s\n", REPORTDIR_MARKER_TEXT, pid,
		foreign ? "elsewhere.invalid" : host, foreign ? "00000000-0000-0000-0000-000000000000" : boot);
	fclose(fp);
}

static void touch(const char *folder, const char *name)
{
	char p[8600];

	snprintf(p, sizeof p, "%s/%s", folder, name);
	fclose(fopen(p, "w"));
}

/* Leftovers that are provably a dead run's (a marker in the tool's format,
 * unlocked, from this kernel; or only a half-made marker) are removed.
 * Kept: a live run's (its marker locked, as a run in another container on
 * this kernel would hold it, whatever its pid says), another machine's,
 * one with a marker in no format of the tool's, and an unmarked folder
 * with files in it. */
static void test_reportdir_begin_removes_stale_leftovers(void **state)
{
	char dead[8500], deadnew[8500], live[8500], foreign[8500], odd[8500], plain[8500], p[8600];
	struct reportdir *rd;
	size_t removed;
	int lock_fd;
	FILE *fp;

	(void)state;
	fresh("stale");
	snprintf(dead, sizeof dead, "%s.tmp-Ab3dE9", target);
	snprintf(deadnew, sizeof deadnew, "%s.tmp-Nw4rK1", target);
	snprintf(live, sizeof live, "%s.tmp-Zq7xY2", target);
	snprintf(foreign, sizeof foreign, "%s.tmp-Fo8rG3", target);
	snprintf(odd, sizeof odd, "%s.tmp-Od5dX4", target);
	snprintf(plain, sizeof plain, "%s.tmp-Pl6nQ5", target);
	mkdir(dead, 0777);
	mkdir(deadnew, 0777);
	mkdir(live, 0777);
	mkdir(foreign, 0777);
	mkdir(odd, 0777);
	mkdir(plain, 0777);
	/* pid 1 runs, but an unlocked marker is a dead run's all the same
	 * (in another pid namespace the number meant another process) */
	put_marker(dead, REPORTDIR_MARKER, 1, 0);
	touch(dead, "half.csv");
	put_marker(deadnew, REPORTDIR_MARKER ".new", (long)getpid(), 0);
	put_marker(live, REPORTDIR_MARKER, 999999, 0);
	touch(live, "curve.csv");
	snprintf(p, sizeof p, "%s/%s", live, REPORTDIR_MARKER);
	lock_fd = open(p, O_RDONLY);
	assert_true(lock_fd >= 0);
	assert_int_equal(flock(lock_fd, LOCK_EX), 0);
	put_marker(foreign, REPORTDIR_MARKER, 1, 1);
	touch(foreign, "curve.csv");
	snprintf(p, sizeof p, "%s/%s", odd, REPORTDIR_MARKER);
	fp = fopen(p, "w");
	fprintf(fp, "%ld\n", 999999L);
	fclose(fp);
	touch(plain, "mine.txt");
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, &removed, NULL), HC_OK);
	assert_int_equal(removed, 2);
	assert_false(exists(dead, NULL));
	assert_false(exists(deadnew, NULL));
	assert_true(exists(live, "curve.csv"));
	assert_true(exists(foreign, "curve.csv"));
	assert_true(exists(odd, REPORTDIR_MARKER));
	assert_true(exists(plain, "mine.txt"));
	hc_reportdir_free(rd);
	close(lock_fd);
	/* unlocked now: the next run removes the live one's leftover too */
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, &removed, NULL), HC_OK);
	assert_int_equal(removed, 1);
	assert_false(exists(live, NULL));
	hc_reportdir_free(rd);
}

/* --force replaces only a folder with the tool's signature: a user's
 * folder that merely holds a summary.md and a summary.json is kept. */
static void test_reportdir_force_needs_the_signature(void **state)
{
	struct reportdir *rd = NULL;
	struct hc_error err;

	(void)state;
	fresh("signature");
	mkdir(target, 0777);
	touch(target, "summary.md");
	touch(target, "summary.json");
	hc_error_clear(&err);
	assert_int_equal(hc_reportdir_begin(&rd, target, 1, NULL, &err), HC_EUSAGE);
	assert_non_null(strstr(err.message, REPORTDIR_SIGNATURE));
	assert_null(rd);
	assert_true(exists(target, "summary.md"));
	/* a report the tool wrote carries it, and is replaced */
	unlink_all_and_rmdir(target);
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, NULL), HC_OK);
	write_one(rd, "summary.md", "old\n");
	assert_int_equal(hc_reportdir_commit(rd, NULL), HC_OK);
	hc_reportdir_free(rd);
	assert_true(exists(target, REPORTDIR_SIGNATURE));
	assert_false(exists(target, REPORTDIR_MARKER));
	assert_int_equal(hc_reportdir_begin(&rd, target, 1, NULL, NULL), HC_OK);
	write_one(rd, "summary.md", "new\n");
	assert_int_equal(hc_reportdir_commit(rd, NULL), HC_OK);
	hc_reportdir_free(rd);
	assert_int_equal(leftovers(), 0);
}

static void test_reportdir_allocation_failure_leaves_nothing(void **state)
{
	struct reportdir *rd = NULL;
	struct hc_error err;

	(void)state;
	fresh("nomem");
	hc_alloc_fail_after(0);
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, NULL, &err), HC_ENOMEM);
	hc_alloc_fail_after(-1);
	assert_null(rd);
	assert_int_equal(leftovers(), 0);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_reportdir_commit_puts_the_folder_in_place),
		cmocka_unit_test(test_reportdir_commit_gives_the_folder_the_umask_mode),
		cmocka_unit_test(test_reportdir_refuses_an_existing_folder),
		cmocka_unit_test(test_reportdir_force_replaces_an_earlier_report),
		cmocka_unit_test(test_reportdir_force_needs_the_signature),
		cmocka_unit_test(test_reportdir_free_without_commit_removes_everything),
		cmocka_unit_test(test_reportdir_unlink_pending_empties_the_temporary_folder),
		cmocka_unit_test(test_reportdir_begin_removes_stale_leftovers),
		cmocka_unit_test(test_reportdir_allocation_failure_leaves_nothing),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
