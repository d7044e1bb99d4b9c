/*
 * compare.h - what changed between two report summaries.
 *
 * A report folder's summary.json holds every figure of one run (universe,
 * curve, rules, audit, rolling).  Comparing two of them, say last quarter's
 * and this quarter's, gives one struct report (report.h), so that the
 * comparison is written as text, CSV or JSON like any other result and
 * the HTML and Markdown reports can show it as a "since last report"
 * section:
 *
 *   fields: "old", "new" (the labels given), "old_period", "new_period",
 *           "verdict_changes" (funds whose policy verdict changed),
 *           "changed_figures" (rows of "changes" that changed), "headline"
 *           (one sentence: the verdict changes first, else the count);
 *   table "changes": section, item, old, new, change, changed -- one row
 *           per compared figure, in this order: policy verdicts (changed
 *           ones first), the recommendation, the universe and its averages,
 *           each rule's count and interval, each fund's figures and
 *           coverage.  old and new are numbers, text or booleans as in the
 *           summaries (no value with the reason "absent" where one summary
 *           lacks the figure); change is new - old for numbers;
 *   table "securities": id, change ("in": kept in new only; "out": kept
 *           in old only), when both summaries list the kept securities;
 *   notes: how to read it, and the cautions.
 */
#ifndef HOLDCOUNT_COMPARE_H
#define HOLDCOUNT_COMPARE_H

#include "holdcount/error.h"
#include "holdcount/report.h"

#ifdef __cplusplus
extern "C" {
#endif

/*
 * Compare two summaries given as JSON text (summary.json's contents);
 * old_label and new_label name them in the result (a folder, a file).
 * *out is a new report the caller frees with hc_report_free, NULL on
 * error.  HC_EDATA when a text is not a holdcount summary (not JSON, or no
 * "holdcount_version"; err names the label), HC_ENOMEM.
 */
int hc_compare_summaries(struct report **out, const char *old_text, const char *old_label,
			 const char *new_text, const char *new_label, struct hc_error *err);

/*
 * The same, reading each path: a report folder (its summary.json is read)
 * or a summary.json file.  HC_EIO when a file cannot be read (err names
 * it), else as hc_compare_summaries; the labels are the paths as given.
 */
int hc_compare_paths(struct report **out, const char *old_path, const char *new_path, struct hc_error *err);

/* The summary.json text of path (a folder or a file) into *text (freed
 * with hc_free).  HC_EIO naming the file, HC_ENOMEM. */
int hc_compare_read(char **text, const char *path, struct hc_error *err);

#ifdef __cplusplus
}
#endif

#endif
