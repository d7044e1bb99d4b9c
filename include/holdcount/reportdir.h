/*
 * reportdir.h - a report folder that appears complete or not at all.
 *
 * Everything is written into a temporary folder beside the target,
 * "DIR.tmp-XXXXXX", holding a marker file ".holdcount-incomplete" with the
 * writer's process id.  hc_reportdir_commit renames the folder into place:
 *   - without force, DIR must not exist (rename with RENAME_NOREPLACE, so
 *     a DIR created meanwhile is not replaced either);
 *   - with force, an existing DIR is replaced only after the new folder is
 *     complete, by swapping the two atomically (renameat2 RENAME_EXCHANGE,
 *     Linux 3.15 and later; elsewhere two renames, between which DIR is
 *     briefly absent), and the old report is then removed.  DIR must be an
 *     earlier report (it holds the signature file ".holdcount-report" that
 *     every finished folder gets) or empty: a folder of other files, even
 *     one holding a summary.md, is never replaced.
 * An interrupted run therefore leaves the previous report intact, or none.
 * The temporary folder is private (0700, as mkdtemp makes it); the
 * finished one has mode 0777 less the process's umask, as mkdir(2) gives.
 * A SIGINT/SIGTERM handler calls hc_reportdir_unlink_pending to remove the
 * temporary folder.  After SIGKILL the "DIR.tmp-XXXXXX" folder stays behind;
 * the next hc_reportdir_begin for the same DIR removes every such folder that
 * is provably a dead run's: its marker ("holdcount-incomplete", then pid,
 * host and boot id lines) is not flock'ed by a live writer (a live run holds
 * the lock on its marker until it commits or gives up, so a run in another
 * container on the same kernel never removes it), and names this kernel's
 * boot id or this host.  The marker is removed last, so a removal cut short
 * leaves a folder still marked.
 *
 * One report folder at a time per process (the signal handler's record is
 * static).
 */
#ifndef HOLDCOUNT_REPORTDIR_H
#define HOLDCOUNT_REPORTDIR_H

#include <stdio.h>

#include "holdcount/error.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Files one folder may hold (each registered before it is created). */
#define REPORTDIR_MAX_FILES 64
#define REPORTDIR_NAME_MAX 64
#define REPORTDIR_MARKER ".holdcount-incomplete"
#define REPORTDIR_MARKER_TEXT "holdcount-incomplete"
/* The signature a finished report folder holds: only a folder with it (or
 * an empty one) is replaced by force. */
#define REPORTDIR_SIGNATURE ".holdcount-report"
#define REPORTDIR_SIGNATURE_TEXT "holdcount report folder"

struct reportdir;

/*
 * Start a folder for dir.  HC_EUSAGE when dir exists and force is 0
 * ("'DIR' exists; use --force to replace it"), or when force is set but
 * dir is not a directory or not an earlier report; HC_EIO when the
 * temporary folder cannot be made; HC_ENOMEM.  Removes stale temporary
 * folders of dir first (see above); *removed (may be NULL) counts them.
 */
int hc_reportdir_begin(struct reportdir **out, const char *dir, int force, size_t *removed,
		    struct hc_error *err);

/* The temporary folder's path (for running gnuplot inside it). */
const char *hc_reportdir_tmp_path(const struct reportdir *rd);

/* Register a file name (no '/', at most REPORTDIR_NAME_MAX - 1 bytes) that
 * will be created inside the folder by someone else (gnuplot's render), so
 * that an interruption removes it.  HC_EUSAGE for a bad name, HC_ENOMEM
 * when the table is full. */
int hc_reportdir_expect(struct reportdir *rd, const char *name, struct hc_error *err);

/* Create name inside the folder for writing (registering it first).  The
 * stream must be finished with hc_reportdir_close. */
int hc_reportdir_open(struct reportdir *rd, const char *name, FILE **fp, struct hc_error *err);

/* Flush, fsync and close fp; HC_EIO (naming the file) when any write failed. */
int hc_reportdir_close(struct reportdir *rd, FILE *fp, const char *name, struct hc_error *err);

/* Does the temporary folder hold name? */
int hc_reportdir_has(const struct reportdir *rd, const char *name);

/* Put the folder in place (see above).  On failure the temporary folder is
 * removed and the previous DIR is untouched. */
int hc_reportdir_commit(struct reportdir *rd, struct hc_error *err);

/* Remove the temporary folder and free rd; accepts NULL.  After a commit
 * it only frees. */
void hc_reportdir_free(struct reportdir *rd);

/* Async-signal-safe: unlink the registered files and the marker of the
 * folder being written and remove it.  For a SIGINT/SIGTERM handler. */
void hc_reportdir_unlink_pending(void);

#ifdef __cplusplus
}
#endif

#endif
