/*
 * cli_data.c - the steps several commands share: loading a universe with
 * the universe options, the size grid, and stating the scale.
 */
#include "cli.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/covmatrix.h"
#include "holdcount/curve.h"
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
	uo->missing = cu->missing == CLI_MISSING_PAIRWISE ? UNIVERSE_MISSING_PAIRWISE : UNIVERSE_MISSING_COMPLETE;
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
	hc_error_clear(&err);
	rc = hc_universe_load(out, path, &uo, &err);
	return rc ? cli_fail(cmd, &err) : HC_OK;
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
	"id-column", "value-column", "delimiter", NULL
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
	if ((*out)->psd.repaired) {
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
	so.need_matrix = need_matrix;
	so.psd_refusal = refusal;
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
