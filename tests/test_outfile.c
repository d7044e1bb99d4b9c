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
	assert_int_equal(hc_outfile_open(&of, path, &err), HC_OK);
	/* The temporary sits beside the target, and is the pending name. */
	assert_non_null(hc_outfile_pending());
	assert_string_equal(hc_outfile_pending(), of.tmp);
	assert_int_equal(strncmp(of.tmp, dir, strlen(dir)), 0);
	assert_non_null(strstr(of.tmp, "/.curve.csv.tmp-"));
	fputs("n,expected_sd\n1,0.2385\n", of.fp);
	/* Until commit the old content is what readers see. */
	slurp(path, buf, sizeof buf);
	assert_string_equal(buf, "old\n");
	assert_int_equal(hc_outfile_commit(&of, &err), HC_OK);
	assert_null(hc_outfile_pending());
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
	assert_int_equal(hc_outfile_open(&of, path, &err), HC_OK);
	fputs("{}\n", of.fp);
	assert_int_equal(hc_outfile_commit(&of, &err), HC_OK);
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
	assert_int_equal(hc_outfile_open(&of, path, &err), HC_OK);
	fputs("half of a new", of.fp);
	hc_outfile_abort(&of);
	assert_null(hc_outfile_pending());
	slurp(path, buf, sizeof buf);
	assert_string_equal(buf, "earlier run\n");
	assert_int_equal(entries(), 1);
	remove_dir();
}

/* A directory as the target is refused when the output is opened
 * (HC_EIO), before anything is written; the directory stays, and no
 * temporary is made. */
static void test_outfile_failed_commit_leaves_target(void **state)
{
	struct outfile of;
	struct hc_error err;
	char path[8192];
	struct stat st;

	make_dir(state);
	snprintf(path, sizeof path, "%s/busy", dir);
	assert_int_equal(mkdir(path, 0755), 0);
	hc_error_clear(&err);
	assert_int_equal(hc_outfile_open(&of, path, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot write '"));
	assert_non_null(strstr(err.message, "Is a directory"));
	assert_null(of.fp);
	assert_int_equal(stat(path, &st), 0);
	assert_true(S_ISDIR(st.st_mode));
	assert_int_equal(entries(), 1);
	assert_null(hc_outfile_pending());
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
	assert_int_equal(hc_outfile_open(&of, path, &err), HC_EIO);
	assert_non_null(strstr(err.message, "cannot create a file beside"));
	assert_null(of.fp);
	assert_int_equal(hc_outfile_open(&of, "", &err), HC_EUSAGE);
	remove_dir();
}

static void test_outfile_stdout(void **state)
{
	struct outfile of;
	struct hc_error err;

	assert_int_equal(hc_outfile_open(&of, "-", &err), HC_OK);
	assert_ptr_equal(of.fp, stdout);
	assert_null(hc_outfile_pending());
	assert_int_equal(hc_outfile_commit(&of, &err), HC_OK);
	assert_int_equal(hc_outfile_open(&of, NULL, &err), HC_OK);
	assert_ptr_equal(of.fp, stdout);
	hc_outfile_abort(&of);
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
	assert_int_equal(hc_outfile_open(&a, pa, &err), HC_OK);
	assert_int_equal(hc_outfile_open(&b, pb, &err), HC_OK);
	assert_int_equal(entries(), 2);
	hc_outfile_unlink_pending();
	assert_int_equal(entries(), 0);
	assert_null(hc_outfile_pending());
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
		assert_int_equal(hc_outfile_open(&of, path, &err), HC_ENOMEM);
		hc_alloc_fail_after(-1);
		assert_null(of.fp);
		assert_int_equal(entries(), 0);
	}
	remove_dir();
}

/* What a plain fopen(3) for writing does through the same link: POSIX
 * open(2) follows a symbolic link in the last component (unless
 * O_NOFOLLOW), so the link stays and its target gets the text.  outfile
 * must end in that same state, while still writing all or nothing. */
static void write_through_fopen(const char *link, const char *text)
{
	write_plain(link, text);
}

static void link_state(const char *link, const char *target, char *buf, size_t size)
{
	struct stat st;
	char to[4096], content[256];
	ssize_t n;

	assert_int_equal(lstat(link, &st), 0);
	assert_true(S_ISLNK(st.st_mode));
	n = readlink(link, to, sizeof to - 1);
	assert_true(n > 0);
	to[n] = '\0';
	slurp(target, content, sizeof content);
	snprintf(buf, size, "%s -> %s: %s", link + strlen(dir), to, content);
}

static void test_outfile_writes_through_symlink(void **state)
{
	struct outfile of;
	struct hc_error err;
	char link[8192], target[8192], sub[8192], want[8192], got[8192];

	make_dir(state);
	/* a relative link to a file in a subfolder: the temporary goes beside
	 * the target, in the subfolder, and replaces it there */
	snprintf(sub, sizeof sub, "%s/sub", dir);
	assert_int_equal(mkdir(sub, 0777), 0);
	snprintf(target, sizeof target, "%s/sub/curve.csv", dir);
	snprintf(link, sizeof link, "%s/curve.lnk", dir);
	assert_int_equal(symlink("sub/curve.csv", link), 0);
	write_plain(target, "old\n");
	write_through_fopen(link, "n,sd\n1,0.2385\n");
	link_state(link, target, want, sizeof want);
	write_plain(target, "old\n");
	assert_int_equal(hc_outfile_open(&of, link, &err), HC_OK);
	assert_string_equal(of.path, target);
	assert_int_equal(strncmp(of.tmp, sub, strlen(sub)), 0);
	assert_non_null(strstr(of.tmp, "/sub/.curve.csv.tmp-"));
	fputs("n,sd\n1,0.2385\n", of.fp);
	assert_int_equal(hc_outfile_commit(&of, &err), HC_OK);
	link_state(link, target, got, sizeof got);
	assert_string_equal(got, want);
	assert_string_equal(got, "/curve.lnk -> sub/curve.csv: n,sd\n1,0.2385\n");
	assert_int_equal(entries(), 2);          /* the link and sub/, nothing else */
	unlink(target);

	/* a dangling link: its target is created, as fopen would create it */
	assert_int_equal(hc_outfile_open(&of, link, &err), HC_OK);
	fputs("fresh\n", of.fp);
	assert_int_equal(hc_outfile_commit(&of, &err), HC_OK);
	link_state(link, target, got, sizeof got);
	assert_string_equal(got, "/curve.lnk -> sub/curve.csv: fresh\n");
	unlink(target);
	rmdir(sub);
	unlink(link);

	/* two links in a row, the second absolute */
	snprintf(target, sizeof target, "%s/t.csv", dir);
	snprintf(sub, sizeof sub, "%s/second.lnk", dir);
	assert_int_equal(symlink(target, sub), 0);
	assert_int_equal(symlink("second.lnk", link), 0);
	assert_int_equal(hc_outfile_open(&of, link, &err), HC_OK);
	assert_string_equal(of.path, target);
	fputs("two hops\n", of.fp);
	assert_int_equal(hc_outfile_commit(&of, &err), HC_OK);
	slurp(link, got, sizeof got);
	assert_string_equal(got, "two hops\n");
	assert_int_equal(lstat(sub, &(struct stat){ 0 }), 0);
	assert_int_equal(entries(), 3);
	unlink(target);
	unlink(sub);
	unlink(link);

	/* a loop is refused (ELOOP, as open(2) refuses it), nothing created */
	assert_int_equal(symlink("b.lnk", link), 0);
	snprintf(sub, sizeof sub, "%s/b.lnk", dir);
	assert_int_equal(symlink("curve.lnk", sub), 0);
	assert_int_equal(hc_outfile_open(&of, link, &err), HC_EIO);
	assert_null(of.fp);
	assert_non_null(strstr(err.message, "cannot follow the symbolic link"));
	assert_non_null(strstr(err.message, "Too many levels of symbolic links"));
	assert_null(fopen(link, "w"));           /* the reference fails alike */
	assert_int_equal(entries(), 2);
	unlink(sub);
	unlink(link);
	remove_dir();
}

/* hc_outfile_same_file: one file under several names (a hard link, a
 * symbolic link, "./"), two distinct files, and names not created yet. */
static void test_outfile_same_file(void **state)
{
	char f[8192], g[8192], h[8192], l[8192], dot[8192], x[8192], xdot[8192], dl[8192];
	struct hc_error err;
	int same = -1;

	make_dir(state);
	snprintf(f, sizeof f, "%s/u.csv", dir);
	snprintf(g, sizeof g, "%s/v.csv", dir);
	snprintf(h, sizeof h, "%s/hard.csv", dir);
	snprintf(l, sizeof l, "%s/soft.csv", dir);
	snprintf(dot, sizeof dot, "%s/./u.csv", dir);
	snprintf(x, sizeof x, "%s/new.csv", dir);
	snprintf(xdot, sizeof xdot, "%s/../%s/new.csv", dir, strrchr(dir, '/') + 1);
	snprintf(dl, sizeof dl, "%s/dangling.csv", dir);
	write_plain(f, "date,A\n");
	write_plain(g, "date,A\n");
	assert_int_equal(link(f, h), 0);
	assert_int_equal(symlink("u.csv", l), 0);
	assert_int_equal(symlink("new.csv", dl), 0);
#define SAME(a, b, want) do { same = -1; \
	assert_int_equal(hc_outfile_same_file((a), (b), &same, &err), HC_OK); \
	assert_int_equal(same, (want)); } while (0)
	SAME(f, f, 1);
	SAME(f, h, 1);
	SAME(l, f, 1);
	SAME(dot, f, 1);
	SAME(f, g, 0);           /* same bytes, another file */
	SAME(x, xdot, 1);        /* neither exists: one resolved name */
	SAME(dl, x, 1);          /* a dangling link and the name it points at */
	SAME(x, g, 0);           /* one exists, the other does not */
	SAME("-", "-", 0);       /* standard output is no file */
	SAME(NULL, f, 0);
#undef SAME
	unlink(f); unlink(g); unlink(h); unlink(l); unlink(dl);
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
		cmocka_unit_test(test_outfile_writes_through_symlink),
		cmocka_unit_test(test_outfile_same_file),
	};

	return cmocka_run_group_tests(tests, NULL, NULL);
}
