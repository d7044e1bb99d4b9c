/*
 * htmlreport.h - the report as one self-contained HTML document.
 *
 * report.html is the committee's copy of a report folder: one file, with
 * its stylesheet inline and its plots inline as SVG (gnuplot's SVG
 * terminal), no script and nothing fetched from the network, so that it
 * opens in any browser, mails as one attachment and prints to a paper
 * ("print to PDF") with a page per section on A4 or Letter.  It is a writer
 * of the result model (report.h): it reads the same struct report objects
 * that summary.json, summary.md and the CSVs are written from, so no figure
 * differs between them.
 *
 * Sections, in order (each an <h2>; the ids are stable for links):
 *   recommendation  the count to adopt, its interval and a policy sentence
 *   since           what changed since the previous report (with compare)
 *   universe        the data and their treatment
 *   curve           risk by holding count (figures and a readable table)
 *   rules           every rule's count with its 90% interval
 *   tail            tail risk and long horizons: expected shortfall and
 *                   drawdown by count, ending wealth and the chance of
 *                   ending behind the benchmark (or why a part is left out)
 *   funds           the audited funds (with an audit)
 *   time            the count needed through time (or why it is left out)
 *   cautions        the cautions
 *   appendix        the self-checks (sampled vs exact, z, bootstrap settings)
 */
#ifndef HOLDCOUNT_HTMLREPORT_H
#define HOLDCOUNT_HTMLREPORT_H

#include <stddef.h>
#include <stdio.h>

#include "holdcount/error.h"
#include "holdcount/report.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Which section a figure belongs to. */
enum htmlreport_place {
	HTMLREPORT_CURVE = 0,
	HTMLREPORT_FUNDS = 1,
	HTMLREPORT_TIME = 2,
	HTMLREPORT_TAIL = 3,       /* the tail measures' part of section "tail" */
	HTMLREPORT_HORIZON = 4     /* its ending-wealth part */
};

struct htmlreport_figure {
	const char *name;          /* "risk": the figure's id (also its ids' prefix inside the SVG) */
	const char *title;         /* heading, and the figure's accessible name */
	const char *caption;       /* how to read it */
	const char *svg;           /* the SVG document gnuplot wrote; NULL = not rendered (the
				    * figure then says so) */
	int place;                 /* enum htmlreport_place */
};

/* Everything the document shows; pointers are borrowed. */
struct htmlreport_input {
	const char *version;       /* holdcount's version */
	const char *date;          /* the day it was written, YYYY-MM-DD */
	const struct report *universe; /* required: fields as summary.json's "universe" */
	const struct report *curve;    /* required: table "curve" */
	const struct report *enough;   /* required: table "rules" */
	const struct report *audit;    /* NULL = no funds audited */
	const struct report *rolling;  /* NULL = no rolling windows (rolling_why says why) */
	const struct report *compare;  /* NULL = no previous report (compare.h) */
	const char *rolling_why;
	const struct report *tail;     /* NULL = no tail measures (tail_why says why) */
	const struct report *horizon;  /* NULL = no ending wealth (horizon_why says why) */
	const char *tail_why, *horizon_why;
	int tail_off;                  /* the whole section was left out (tail_why says how) */
	double horizon_years;
	const char *holdings_file;
	const struct htmlreport_figure *figures;
	size_t nfigures;
	const char *const *cautions;   /* extra cautions after the universe report's notes */
	size_t ncautions;
};

/*
 * Write the document to fp.  HC_OK; HC_EUSAGE when a required report is
 * missing; HC_EIO when fp reports a write error (err filled).
 */
int hc_htmlreport_write(FILE *fp, const struct htmlreport_input *in, struct hc_error *err);

/* Read the SVG file dir/name (gnuplot's render) into *svg, freed with
 * hc_free.  HC_EIO naming the file, HC_ENOMEM. */
int hc_htmlreport_read_svg(char **svg, const char *dir, const char *name, struct hc_error *err);

/* The section ids above, in order, and their headings (for tests and
 * checks of a rendered page). */
extern const char *const hc_htmlreport_sections[][2];
extern const size_t hc_htmlreport_nsections;

#ifdef __cplusplus
}
#endif

#endif
