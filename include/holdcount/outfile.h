/*
 * outfile.h - write a file so that readers see all of it or none of it.
 *
 * Output goes to a temporary file in the same directory (".NAME.tmp-XXXXXX"),
 * which hc_outfile_commit flushes, fsyncs and renames over NAME; hc_outfile_abort
 * (or a failed commit) removes it, leaving any earlier NAME untouched.
 * With path NULL or "-", output goes to stdout and commit only flushes.
 * A NAME that is a symbolic link is written through: the temporary is made
 * beside the file the link points at, and replaces that file; the link
 * stays (a dangling link's target is created).
 *
 * Only a regular file (or a name not there yet) is replaced.  Any other
 * target is written in place, as a shell's `>` would: a device such as
 * /dev/null or a FIFO is opened without O_CREAT or O_TRUNC, and a name for
 * a descriptor the process already has (/dev/stdout, /dev/stderr,
 * /dev/fd/N, /proc/self/fd/N, or a link to one) is written through a
 * duplicate of it, keeping its offset and O_APPEND (`-o /dev/stdout >> log`
 * appends).  What was written in place cannot be taken back on abort.  A
 * directory is refused (HC_EIO).
 */
#ifndef HOLDCOUNT_OUTFILE_H
#define HOLDCOUNT_OUTFILE_H

#include <stdio.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

struct outfile {
	FILE *fp;
	char *path;     /* final name, NULL for stdout */
	char *tmp;      /* temporary name (NULL when written in place) */
	int in_place;   /* a device, FIFO or inherited descriptor: no temporary */
};

/* Start writing path (NULL or "-": standard output) through of->fp; the
 * temporary gets the mode of the file it will replace, or 0666 less the
 * umask for a new one.  of is caller storage, overwritten; of->path is the
 * name that will be replaced (the link's target when path is a link).
 * HC_EUSAGE when path is empty or ends in '/', HC_EIO when the temporary
 * cannot be created or a link cannot be followed (more than 40 in a row:
 * ELOOP; the message carries strerror), HC_ENOMEM; on error of is zeroed
 * and nothing is left on disk. */
int hc_outfile_open(struct outfile *of, const char *path, struct hc_error *err);
/* Flush, fsync and rename the temporary over the final name (standard
 * output: flush only).  HC_EIO when any step fails, after removing the
 * temporary; HC_EINTERNAL when of was never opened or already committed.
 * Afterwards of->fp is NULL (a file is closed; standard output stays open). */
int hc_outfile_commit(struct outfile *of, struct hc_error *err);
/* Close and remove the temporary, leaving an earlier file at the final name
 * untouched (standard output: flush what was written).  of may be NULL or
 * already committed; cannot fail. */
void hc_outfile_abort(struct outfile *of);

/*
 * Do a and b name the same file?  *same = 1 when both exist and are one
 * file (same device and inode: hard links and symbolic links included), or
 * when neither exists yet and both resolve to one name (links followed,
 * the directory by realpath(3): "./x" and "x").  "-" (standard output) or
 * NULL is never the same as anything.  So a command can refuse to write
 * over its own input.  HC_OK, or HC_ENOMEM.
 */
int hc_outfile_same_file(const char *a, const char *b, int *same, struct hc_error *err);

/* The temporary name currently open, or NULL (for a signal handler that must
 * unlink it: async-signal-safe to read). */
const char *hc_outfile_pending(void);

/* Unlink every temporary still open (several outfiles may be open at once,
 * e.g. a report folder).  Async-signal-safe: for a SIGINT/SIGTERM handler.
 * The FILE streams are left alone; the process is expected to exit. */
void hc_outfile_unlink_pending(void);

#ifdef __cplusplus
}
#endif

#endif
