/*
 * cli_data.c - the steps several commands share: loading a universe with
 * the universe options, the size grid, and stating the scale.
 */
#include "cli.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/curve.h"
#include "holdcount/memory.h"
#include "holdcount/universe.h"

int cli_universe_options(const char *cmd, const struct cli_universe *cu,
			 struct universe_options *uo)
{
	universe_options_init(uo);
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
	if (hc_mul_size(cu->max_memory_mib, (size_t)1 << 20, &uo->max_bytes))
		return cli_usage_error(cmd, "--max-memory %zu MiB does not fit in this machine's address space",
				       cu->max_memory_mib);
	return HC_OK;
}

int cli_load_universe(const char *cmd, const struct cli_universe *cu,
		      const char *path, struct universe **out)
{
	struct universe_options uo;
	struct hc_error err;
	int rc;

	*out = NULL;
	if (cu->covariance)
		return cli_usage_error(cmd, "--covariance: reading a covariance matrix is not built yet; "
				       "give a return history");
	rc = cli_universe_options(cmd, cu, &uo);
	if (rc)
		return rc;
	hc_error_clear(&err);
	rc = universe_load(out, path, &uo, &err);
	return rc ? cli_fail(cmd, &err) : HC_OK;
}

int cli_sizes(const char *cmd, const char *text, size_t m, size_t **sizes, size_t *nsizes)
{
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	if (text)
		rc = curve_parse_sizes(text, m, sizes, nsizes, &err);
	else
		rc = curve_default_sizes(m, sizes, nsizes, &err);
	return rc ? cli_fail(cmd, &err) : HC_OK;
}

int cli_add_scale(struct report *r, double periods_per_year, int annualised)
{
	char text[200];
	int rc;

	if (annualised) {
		rc = report_add_real(r, "periods_per_year", "periods per year", periods_per_year, REPORT_STYLE_PLAIN);
		snprintf(text, sizeof text,
			 "annualised: variances times %g, standard deviations times sqrt(%g)", periods_per_year,
			 periods_per_year);
	} else {
		rc = report_add_none(r, "periods_per_year", "periods per year");
		snprintf(text, sizeof text, "not annualised: figures are on the scale of the inputs");
	}
	return rc ? rc : report_add_text(r, "annualisation", "annualisation", text);
}
