/*
 * outfile.h - write a file so that readers see all of it or none of it.
 *
 * Output goes to a temporary file in the same directory (".NAME.tmp-XXXXXX"),
 * which outfile_commit flushes, fsyncs and renames over NAME; outfile_abort
 * (or a failed commit) removes it, leaving any earlier NAME untouched.
 * With path NULL or "-", output goes to stdout and commit only flushes.
 */
#ifndef HOLDCOUNT_OUTFILE_H
#define HOLDCOUNT_OUTFILE_H

#include <stdio.h>

#include "holdcount/error.h"

struct outfile {
	FILE *fp;
	char *path;     /* final name, NULL for stdout */
	char *tmp;      /* temporary name */
};

int outfile_open(struct outfile *of, const char *path, struct hc_error *err);
int outfile_commit(struct outfile *of, struct hc_error *err);
void outfile_abort(struct outfile *of);

/* The temporary name currently open, or NULL (for a signal handler that must
 * unlink it: async-signal-safe to read). */
const char *outfile_pending(void);

/* Unlink every temporary still open (several outfiles may be open at once,
 * e.g. a report folder).  Async-signal-safe: for a SIGINT/SIGTERM handler.
 * The FILE streams are left alone; the process is expected to exit. */
void outfile_unlink_pending(void);

#endif
