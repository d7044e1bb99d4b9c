/*
 * Unit tests for all-or-nothing output files.
 *
 * Reference: POSIX.1-2008 rename(2) semantics (the new name replaces the old
 * atomically; a failed write must leave the old file as it was).  Each test
 * works in its own directory under HOLDCOUNT_TEST_TMP.
 */
#define _XOPEN_SOURCE 700
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <dirent.h>
#include <sys/stat.h>
#include <unistd.h>
#include <cmocka.h>

#include "holdcount/error.h"
#include "holdcount/memory.h"
#include "holdcount/outfile.h"

static char dir[4096];

static int make_dir(void **state)
{
	const char *base = getenv("HOLDCOUNT_TEST_TMP");

	snprintf(dir, sizeof dir, "%s/outfile-XXXXXX", base ? base : "/tmp");
	assert_non_null(mkdtemp(dir));
	return 0;
}

static int entries(void)
{
	DIR *d = opendir(dir);
	struct dirent *e;
	int n = 0;

	assert_non_null(d);
	while ((e = readdir(d)))
		if (strcmp(e->d_name, ".") && strcmp(e->d_name, ".."))
			n++;
	closedir(d);
	return n;
}

static void remove_dir(void)
{
	DIR *d = opendir(dir);
	struct dirent *e;
	char p[8192];

	while (d && (e = readdir(d))) {
		if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, ".."))
			continue;
		snprintf(p, sizeof p, "%s/%s", dir, e->d_name);
		unlink(p);
	}
	if (d)
		closedir(d);
	rmdir(dir);
}

static void slurp(const char *path, char *buf, size_t size)
{
	FILE *fp = fopen(path, "r");
	size_t n;

	assert_non_null(fp);
	n = fread(buf, 1, size - 1, fp);
	buf[n] = '\0';
	fclose(fp);
}

static void write_plain(const char *path, const char *text)
{
	FILE *fp = fopen(path, "w");

	assert_non_null(fp);
	fputs(text, fp);
	fclose(fp);
}

static void test_outfile_commit_replaces(void **state)
{
	struct outfile of;
	struct hc_error err;
	char path[8192], buf[256];

	make_dir(state);
	snprintf(path, sizeof path, "%s/curve.csv", dir);
	write_plain(path, "old\n");
	assert_int_equal(outfile_open(&of, path, &err), HC_OK);
	/* The temporary sits beside the target, and is the pending name. */
	assert_non_null(outfile_pending());
	assert_string_equal(outfile_pending(), of.tmp);
	assert_int_equal(strncmp(of.tmp, dir, strlen(dir)), 0);
	assert_non_null(strstr(of.tmp, "/.curve.csv.tmp-"));
	fputs("n,expected_sd\n1,0.2385\n", of.fp);
	/* Until commit the old content is what readers see. */
	slurp(path, buf, sizeof buf);
	assert_string_equal(buf, "old\n");
	assert_int_equal(outfile_commit(&of, &err), HC_OK);
	assert_null(outfile_pending());
	slurp(path, buf, sizeof buf);
	assert_string_equal(buf, "n,expected_sd\n1,0.2385\n");
	assert_int_equal(entries(), 1); /* no temporary left behind */
	remove_dir();
}

/* A new file gets the mode open(2) would give it: 0666 less the umask. */
static void test_outfile_new_file_mode(void **state)
{
	struct outfile of;
	struct hc_error err;
	struct stat st;
	char path[8192];
	mode_t old = umask(022);

	make_dir(state);
	snprintf(path, sizeof path, "%s/new.json", dir);
	assert_int_equal(outfile_open(&of, path, &err), HC_OK);
	fputs("{}\n", of.fp);
	assert_int_equal(outfile_commit(&of, &err), HC_OK);
	assert_int_equal(stat(path, &st), 0);
	assert_int_equal(st.st_mode & 0777, 0644);
	umask(old);
	remove_dir();
}

static void test_outfile_abort_keeps_old(void **state)
{
	struct outfile of;
	struct hc_error err;
	char path[8192], buf[256];

	make_dir(state);
	snprintf(path, sizeof path, "%s/table.txt", dir);
	write_plain(path, "earlier run\n");
	assert_int_equal(outfile_open(&of, path, &err), HC_OK);
	fputs("half of a new", of.fp);
	outfile_abort(&of);
	assert_null(outfile_pending());
	slurp(path, buf, sizeof buf);
	assert_string_equal(buf, "earlier run\n");
	assert_int_equal(entries(), 1);
	remove_dir();
}

/* A rename that cannot happen (the target is a directory) fails the
 * commit with HC_EIO, removes the temporary and leaves the target alone. */
static void test_outfile_failed_commit_leaves_target(void **state)
{
	struct outfile of;
	struct hc_error err;
	char path[8192];
	struct stat st;

	make_dir(state);
	snprintf(path, sizeof path, "%s/busy", dir);
	assert_int_equal(mkdir(path, 0755), 0);
	assert_int_equal(outfile_open(&of, path, &err), HC_OK);
	fputs("data\n", of.fp);
	hc_error_clear(&err);
	assert_int_equal(outfile_commit(&of, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot write '"));
	assert_int_equal(stat(path, &st), 0);
	assert_true(S_ISDIR(st.st_mode));
	assert_int_equal(entries(), 1);
	assert_null(outfile_pending());
	rmdir(path);
	remove_dir();
}

static void test_outfile_missing_directory_is_eio(void **state)
{
	struct outfile of;
	struct hc_error err;
	char path[8192];

	make_dir(state);
	snprintf(path, sizeof path, "%s/no/such/dir/x.csv", dir);
	hc_error_clear(&err);
	assert_int_equal(outfile_open(&of, path, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot create a file beside"));
	assert_null(of.fp);
	assert_int_equal(outfile_open(&of, "", &err), HC_EUSAGE);
	remove_dir();
}

static void test_outfile_stdout(void **state)
{
	struct outfile of;
	struct hc_error err;

	assert_int_equal(outfile_open(&of, "-", &err), HC_OK);
	assert_ptr_equal(of.fp, stdout);
	assert_null(outfile_pending());
	assert_int_equal(outfile_commit(&of, &err), HC_OK);
	assert_int_equal(outfile_open(&of, NULL, &err), HC_OK);
	assert_ptr_equal(of.fp, stdout);
	outfile_abort(&of);
}

/* Two files open at once (a report folder): the signal-safe sweep
 * removes both temporaries. */
static void test_outfile_unlink_pending_sweeps_all(void **state)
{
	struct outfile a, b;
	struct hc_error err;
	char pa[8192], pb[8192];

	make_dir(state);
	snprintf(pa, sizeof pa, "%s/a.csv", dir);
	snprintf(pb, sizeof pb, "%s/b.csv", dir);
	assert_int_equal(outfile_open(&a, pa, &err), HC_OK);
	assert_int_equal(outfile_open(&b, pb, &err), HC_OK);
	assert_int_equal(entries(), 2);
	outfile_unlink_pending();
	assert_int_equal(entries(), 0);
	assert_null(outfile_pending());
	fclose(a.fp);
	fclose(b.fp);
	hc_free(a.path); hc_free(a.tmp);
	hc_free(b.path); hc_free(b.tmp);
	remove_dir();
}

static void test_outfile_allocation_failure(void **state)
{
	struct outfile of;
	struct hc_error err;
	char path[8192];
	long k;

	make_dir(state);
	snprintf(path, sizeof path, "%s/x.csv", dir);
	for (k = 0; k < 2; k++) {
		hc_alloc_fail_after(k);
		assert_int_equal(outfile_open(&of, path, &err), HC_ENOMEM);
		hc_alloc_fail_after(-1);
		assert_null(of.fp);
		assert_int_equal(entries(), 0);
	}
	remove_dir();
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_outfile_commit_replaces),
		cmocka_unit_test(test_outfile_new_file_mode),
		cmocka_unit_test(test_outfile_abort_keeps_old),
		cmocka_unit_test(test_outfile_failed_commit_leaves_target),
		cmocka_unit_test(test_outfile_missing_directory_is_eio),
		cmocka_unit_test(test_outfile_stdout),
		cmocka_unit_test(test_outfile_unlink_pending_sweeps_all),
		cmocka_unit_test(test_outfile_allocation_failure),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
