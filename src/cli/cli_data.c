/*
 * cli_data.c - the steps several commands share: loading a universe with
 * the universe options, the size grid, and stating the scale.
 */
#include "cli.h"

#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/covmatrix.h"
#include "holdcount/curve.h"
#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/source.h"
#include "holdcount/universe.h"

int cli_universe_options(const char *cmd, const struct cli_universe *cu,
			 struct universe_options *uo)
{
	hc_universe_options_init(uo);
	if (cu->log_returns && !cu->prices)
		return cli_usage_error(cmd, "--log-returns needs --prices (log returns are computed from prices)");
	uo->values = !cu->prices ? UNIVERSE_RETURNS : cu->log_returns ? UNIVERSE_PRICES_LOG : UNIVERSE_PRICES;
	uo->layout = cu->layout == CLI_LAYOUT_LONG ? UNIVERSE_LONG : UNIVERSE_WIDE;
	uo->percent = cu->percent;
	uo->frequency = cu->frequency;     /* the choice words are in the enum's order */
	uo->bad_cells = cu->bad_cells;
	uo->missing = cu->missing == CLI_MISSING_PAIRWISE ? UNIVERSE_MISSING_PAIRWISE
		    : cu->missing == CLI_MISSING_ALIVE ? UNIVERSE_MISSING_KEEP : UNIVERSE_MISSING_COMPLETE;
	if (!(cu->min_coverage > 0.0 && cu->min_coverage <= 1.0))
		return cli_usage_error(cmd, "--min-coverage must be above 0 and at most 1 (or 100%%), found %g",
				       cu->min_coverage);
	uo->min_coverage = cu->min_coverage;
	/* NaN: not given, so the loader detects it from the dates. */
	if (!isnan(cu->periods_per_year) && !(cu->periods_per_year > 0.0))
		return cli_usage_error(cmd, "--periods-per-year must be positive, found %g", cu->periods_per_year);
	uo->periods_per_year = isnan(cu->periods_per_year) ? 0.0 : cu->periods_per_year;
	if (cu->delimiter) {
		if (strcmp(cu->delimiter, ",") && strcmp(cu->delimiter, ";"))
			return cli_usage_error(cmd, "--delimiter must be ',' or ';', found '%s'", cu->delimiter);
		uo->delimiter = cu->delimiter[0];
	}
	uo->date_column = cu->date_column;
	uo->id_column = cu->id_column;
	uo->value_column = cu->value_column;
	return cli_max_bytes(cmd, cu, &uo->max_bytes);
}

int cli_load_universe(const char *cmd, const struct cli_universe *cu,
		      const char *path, struct universe **out)
{
	struct universe_options uo;
	struct hc_error err;
	int rc;

	*out = NULL;
	rc = cli_universe_options(cmd, cu, &uo);
	if (rc)
		return rc;
	int missing = uo.missing;

	/* a date range: the policy applies within it, not over the whole file */
	if (cu->from || cu->to)
		uo.missing = UNIVERSE_MISSING_KEEP;
	hc_error_clear(&err);
	rc = hc_universe_load(out, path, &uo, &err);
	if (rc)
		return cli_fail(cmd, &err);
	if ((rc = cli_restrict(cmd, cu, missing, out))) {
		hc_universe_free(*out);
		*out = NULL;
		return rc;
	}
	if (!cu->no_check && (rc = cli_data_check(cmd, cu, *out)) != HC_OK) {
		hc_universe_free(*out);   /* --strict-data: nothing is computed from it */
		*out = NULL;
	}
	return rc;
}

static int date_option(const char *cmd, const char *name, const char *text, int32_t *day)
{
	if (hc_universe_parse_date(text, strlen(text), day))
		return cli_usage_error(cmd, "--%s expects a date YYYY-MM-DD or YYYY-MM, found '%s'", name, text);
	return HC_OK;
}

/* The ids of --exclude (comma-separated) and --exclude-file (one a line,
 * blanks trimmed, '#' to the end of a line a comment) into *ids. */
static int add_id(char ***ids, size_t *n, size_t *cap, const char *s, size_t len)
{
	while (len && (*s == ' ' || *s == '\t'))
		s++, len--;
	while (len && (s[len - 1] == ' ' || s[len - 1] == '\t' || s[len - 1] == '\r'))
		len--;
	if (!len)
		return 0;
	if (*n == *cap) {
		size_t nc = *cap ? 2 * *cap : 16;
		char **p = hc_reallocarray(*ids, nc, sizeof *p);

		if (!p)
			return -1;
		*ids = p;
		*cap = nc;
	}
	if (!((*ids)[*n] = hc_malloc(len + 1)))
		return -1;
	memcpy((*ids)[*n], s, len);
	(*ids)[(*n)++][len] = '\0';
	return 0;
}

static int exclusions(const char *cmd, const struct cli_universe *cu, char ***ids, size_t *n)
{
	size_t cap = 0;
	const char *s = cu->exclude;
	char line[4096];
	FILE *fp;

	*ids = NULL;
	*n = 0;
	while (s && *s) {
		const char *e = strchr(s, ',');
		size_t len = e ? (size_t)(e - s) : strlen(s);

		if (add_id(ids, n, &cap, s, len))
			return HC_ENOMEM;
		s += len + (e != NULL);
	}
	if (!cu->exclude_file)
		return HC_OK;
	if (!(fp = fopen(cu->exclude_file, "r"))) {
		fprintf(stderr, "holdcount %s: cannot open '%s': %s\n", cmd, cu->exclude_file, strerror(errno));
		return HC_EIO;
	}
	while (fgets(line, sizeof line, fp)) {
		char *hash = strchr(line, '#');
		size_t len;

		if (hash)
			*hash = '\0';
		len = strcspn(line, "\n");
		if (add_id(ids, n, &cap, line, len)) {
			fclose(fp);
			return HC_ENOMEM;
		}
	}
	fclose(fp);
	return HC_OK;
}

int cli_restrict(const char *cmd, const struct cli_universe *cu, int missing, struct universe **u)
{
	struct universe *w = NULL;
	struct hc_error err;
	int32_t from = INT32_MIN, to = INT32_MAX;
	size_t first = 0, last, k, n = 0;
	char **ids = NULL;
	int rc = HC_OK;

	if (!cu->from && !cu->to && !cu->exclude && !cu->exclude_file)
		return HC_OK;
	hc_error_clear(&err);
	if ((cu->from && (rc = date_option(cmd, "from", cu->from, &from))) ||
	    (cu->to && (rc = date_option(cmd, "to", cu->to, &to))))
		return rc;
	if (cu->from || cu->to) {
		while (first < (*u)->t && (*u)->dates[first] < from)
			first++;
		for (last = (*u)->t; last > first && (*u)->dates[last - 1] > to; last--)
			;
		if (last - first < 2)
			return cli_usage_error(cmd, "--from and --to leave %zu period%s of '%s'; expected at least 2",
					       last - first, last - first == 1 ? "" : "s", (*u)->source ? (*u)->source : "");
		if (hc_universe_window(&w, *u, first, last - first, missing, cu->min_coverage, &err))
			return cli_fail(cmd, &err);
		hc_universe_free(*u);
		*u = w;
	}
	/* exclusions: a message is printed here unless opening the file failed
	 * (exclusions printed that one itself) */
	rc = exclusions(cmd, cu, &ids, &n);
	if (rc == HC_ENOMEM)
		hc_error(&err, HC_ENOMEM, "out of memory for the excluded ids");
	else if (rc == HC_OK && n)
		rc = hc_universe_exclude(*u, ids, n, &err);
	for (k = 0; k < n; k++)
		hc_free(ids[k]);
	hc_free(ids);
	if (rc != HC_OK && rc != HC_EIO)
		return cli_fail(cmd, &err);
	return rc;
}

/* The data checks (datacheck.h) before any figure: a warning with the
 * count and the first finding on stderr, or under --strict-data an error;
 * the count is kept on u for the output (hc_datacheck_report_kept). */
int cli_data_check(const char *cmd, const struct cli_universe *cu, struct universe *u)
{
	struct datacheck_result *d = NULL;
	struct hc_error err;
	char first[320];

	hc_error_clear(&err);
	/* cells read as missing under --bad-cells missing: counted and named */
	if (u->bad_cells)
		fprintf(stderr, "holdcount %s: warning: %zu cell%s read as missing (--bad-cells missing), the first: %s\n",
			cmd, u->bad_cells, u->bad_cells == 1 ? "" : "s", u->bad_first);
	if (hc_datacheck_run(&d, u, &err))
		return cli_fail(cmd, &err);
	hc_datacheck_keep(u, d);   /* the count goes into the command's output too */
	if (d->nfindings) {
		hc_datacheck_describe(&d->findings[0], u, first, sizeof first);
		fprintf(stderr, "holdcount %s: %s: %zu data-check finding%s, the first: %s; 'holdcount check %s' "
			"lists them%s\n", cmd, cu->strict ? "error" : "warning", d->nfindings,
			d->nfindings == 1 ? "" : "s", first, u->source ? u->source : "FILE",
			cu->strict ? "" : " (--strict-data makes them an error)");
	}
	if (d->nfindings && cu->strict) {
		hc_datacheck_free(d);
		return HC_EDATA;
	}
	hc_datacheck_free(d);
	return HC_OK;
}

int cli_sizes(const char *cmd, const char *text, size_t m, size_t **sizes, size_t *nsizes)
{
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	if (text)
		rc = hc_curve_parse_sizes(text, m, sizes, nsizes, &err);
	else
		rc = hc_curve_default_sizes(m, sizes, nsizes, &err);
	return rc ? cli_fail(cmd, &err) : HC_OK;
}

/* Options that describe a return history and mean nothing for a matrix
 * (--max-memory applies to both). */
static const char *const return_only_options[] = {
	"prices", "log-returns", "percent", "missing", "min-coverage", "layout", "date-column",
	"id-column", "value-column", "delimiter", "frequency", "bad-cells", NULL
};

int cli_max_bytes(const char *cmd, const struct cli_universe *cu, size_t *bytes)
{
	if (hc_mul_size(cu->max_memory_mib, (size_t)1 << 20, bytes))
		return cli_usage_error(cmd, "--max-memory %zu MiB does not fit in this machine's address space",
				       cu->max_memory_mib);
	return HC_OK;
}

/* ---- data sources ---------------------------------------------------------- */

int cli_psd_usage(const char *cmd, const struct cli_universe *cu)
{
	if (cu->repair_psd && !cu->covariance && cu->missing != CLI_MISSING_PAIRWISE)
		return cli_usage_error(cmd, "--repair-psd applies to a covariance matrix (--covariance) or to "
				       "pairwise-complete covariances (--missing pairwise); complete return series "
				       "always give a positive semi-definite matrix");
	return HC_OK;
}

/* A repair changes every figure: say so on stderr as well as in the output. */
static int source_made(const char *cmd, const char *path, int rc, struct hc_error *err,
		       struct hc_source **out)
{
	char text[600];

	if (rc)
		return cli_fail(cmd, err);
	/* a ragged history's repair touches only the funds' variances: the
	 * audit's output says so, and stderr stays for what stops a run */
	if ((*out)->psd.repaired && (*out)->kind != HC_SOURCE_RAGGED) {
		hc_source_psd_text(*out, text, sizeof text);
		fprintf(stderr, "holdcount %s: note: %s: %s\n", cmd, path, text);
	}
	return HC_OK;
}

int cli_source_from_universe(const char *cmd, const struct cli_universe *cu, struct universe *u,
			     const char *path, int need_matrix, const char *refusal, struct hc_source **out)
{
	struct hc_source_options so;
	struct hc_error err;

	hc_source_options_init(&so);
	so.repair_psd = cu->repair_psd;
	so.need_matrix = need_matrix != 0;
	so.need_fund_matrix = need_matrix == CLI_NEED_FUNDS;
	so.psd_refusal = refusal;
	/* --missing alive (the default): gaps are read period by period */
	so.ragged = cu->missing == CLI_MISSING_ALIVE;
	hc_error_clear(&err);
	return source_made(cmd, path, hc_source_from_universe(out, u, &so, &err), &err, out);
}

int cli_load_source(const char *cmd, const struct cli_universe *cu, const struct cli_args *a,
		    const char *path, int need_matrix, const char *refusal, struct hc_source **out)
{
	struct hc_source_options so;
	struct universe *u = NULL;
	struct hc_error err;
	size_t i, max_bytes;
	int rc;

	*out = NULL;
	if (!cu->covariance) {
		if ((rc = cli_load_universe(cmd, cu, path, &u)))
			return rc;
		return cli_source_from_universe(cmd, cu, u, path, need_matrix, refusal, out);
	}
	/* A matrix stays on its own scale unless told the periods per year. */
	if (!isnan(cu->periods_per_year) && !(cu->periods_per_year > 0.0))
		return cli_usage_error(cmd, "--periods-per-year must be positive, found %g", cu->periods_per_year);
	for (i = 0; return_only_options[i]; i++)
		if (cli_given(a, return_only_options[i]))
			return cli_usage_error(cmd, "--%s describes a return history and does not apply with --covariance",
					       return_only_options[i]);
	if ((rc = cli_max_bytes(cmd, cu, &max_bytes)))
		return rc;
	hc_source_options_init(&so);
	so.repair_psd = cu->repair_psd;
	so.periods_per_year = isnan(cu->periods_per_year) ? 0 : cu->periods_per_year;
	hc_error_clear(&err);
	return source_made(cmd, path, hc_source_load_covmatrix(out, path, max_bytes, &so, &err), &err, out);
}
