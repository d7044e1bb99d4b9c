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
	char p[8500];
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

/* A leftover whose marker names a finished process is removed; one whose
 * writer still runs (this process) is kept. */
static void test_reportdir_begin_removes_stale_leftovers(void **state)
{
	char dead[8500], live[8500], p[8600];
	struct reportdir *rd;
	size_t removed;
	pid_t child;
	FILE *fp;

	(void)state;
	fresh("stale");
	child = fork();
	if (child == 0)
		_exit(0);
	waitpid(child, NULL, 0);
	snprintf(dead, sizeof dead, "%s.tmp-Ab3dE9", target);
	snprintf(live, sizeof live, "%s.tmp-Zq7xY2", target);
	mkdir(dead, 0777);
	mkdir(live, 0777);
	snprintf(p, sizeof p, "%s/%s", dead, REPORTDIR_MARKER);
	fp = fopen(p, "w");
	fprintf(fp, "%ld\n", (long)child);
	fclose(fp);
	snprintf(p, sizeof p, "%s/half.csv", dead);
	fclose(fopen(p, "w"));
	snprintf(p, sizeof p, "%s/%s", live, REPORTDIR_MARKER);
	fp = fopen(p, "w");
	fprintf(fp, "%ld\n", (long)getpid());
	fclose(fp);
	assert_int_equal(hc_reportdir_begin(&rd, target, 0, &removed, NULL), HC_OK);
	assert_int_equal(removed, 1);
	assert_false(exists(dead, NULL));
	assert_true(exists(live, NULL));
	hc_reportdir_free(rd);
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
		cmocka_unit_test(test_reportdir_free_without_commit_removes_everything),
		cmocka_unit_test(test_reportdir_unlink_pending_empties_the_temporary_folder),
		cmocka_unit_test(test_reportdir_begin_removes_stale_leftovers),
		cmocka_unit_test(test_reportdir_allocation_failure_leaves_nothing),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
