/*
 * error.h - status codes and the caller-owned error record.
 *
 * Every fallible library function returns one of the HC_* status codes and
 * fills a struct hc_error supplied by the caller.  The numeric values double
 * as the command-line tool's exit statuses (see docs/commands.md, EXIT STATUS).
 * Library code never prints and never exits: it records and returns.
 *
 * GSL: the library checks every GSL status, but GSL's default error handler
 * aborts the process before a status is returned.  A program calling the
 * modules that use GSL's generators or eigensolvers (sampler, bootstrap,
 * synth, strata, covmatrix) should call gsl_set_error_handler_off() once at
 * start, as the holdcount command does (docs/library.md).
 */
#ifndef HOLDCOUNT_ERROR_H
#define HOLDCOUNT_ERROR_H

#include <stddef.h>

#ifdef __cplusplus
extern "C" {
#endif

enum hc_status {
	HC_OK = 0,        /* success */
	HC_EPOLICY = 1,   /* computed fine, but a policy check failed (audit) */
	HC_EUSAGE = 2,    /* bad command line: unknown option, bad value */
	HC_EDATA = 3,     /* malformed or unusable input data */
	HC_EIO = 4,       /* a file could not be read, written or renamed */
	HC_ENOMEM = 5,    /* out of memory, or input larger than the memory budget */
	HC_EINTERNAL = 6, /* a numerical library failed or an invariant broke */
	HC_EINTERRUPT = 7, /* stopped by a signal before finishing */
	HC_ERESOURCE = 8, /* the system refused a resource other than memory:
			   * a thread or process (RLIMIT_NPROC, a pids limit) */
	HC_ERENDER = 9,   /* the renderer (gnuplot) failed on a script the
			   * tool wrote; the data and tables were fine */
	HC_EINSUFFICIENT = 10 /* the input is well formed but holds too little
			   * data for the question (e.g. a fund whose holdings
			   * the universe covers too thinly) */
};

/* The highest status; exit statuses above it are not holdcount's own
 * (a shell reports 128 + N for a process killed by signal N). */
#define HC_STATUS_MAX HC_EINSUFFICIENT

#define HC_ERROR_MESSAGE_MAX 1024

/* The error record: a status code and a formatted message (lower case,
 * failure first, subject quoted; input errors as "FILE:LINE:COLUMN: ..."). */
struct hc_error {
	int code;
	char message[HC_ERROR_MESSAGE_MAX];
};

/* Reset to HC_OK with an empty message. err may be NULL. */
void hc_error_clear(struct hc_error *err);

/*
 * Record code and a printf-style message in err (which may be NULL) and
 * return code, so that callers write `return hc_error(err, HC_EDATA, ...)`.
 * A message already recorded is overwritten.
 */
int hc_error(struct hc_error *err, int code, const char *fmt, ...)
	__attribute__((format(printf, 3, 4)));

/* Prefix the recorded message with "prefix: " (for adding context); the
 * code is kept, the result cut at HC_ERROR_MESSAGE_MAX - 1 bytes.  Nothing
 * happens when err or prefix is NULL. */
void hc_error_prefix(struct hc_error *err, const char *prefix);

/* A short name for a status code ("data error", "usage error", ...): a
 * static string, never NULL (unknown codes get a generic name). */
const char *hc_status_name(int code);

#ifdef __cplusplus
}
#endif

#endif
