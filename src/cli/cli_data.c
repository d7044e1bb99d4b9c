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

/*
 * cli_matrix_is_psd: a matrix whose eigenvalues are not all >= 0 gives some portfolio a
 * negative variance, so it is no covariance matrix.  The test: repair a copy
 * to the nearest positive semi-definite matrix (Higham, 1988, through
 * covmatrix_repair_psd) and see how far it moved.  Moves within the
 * loader's symmetry tolerance, relative to sqrt(a_ii a_jj), are rounding in
 * a printed file (a rank-deficient matrix printed to 9 digits) and pass.
 * Memory: the copy, and covmatrix_repair_psd's eigenvectors and rebuilt
 * matrix, three m x m arrays beside cm, checked against cm's budget first.
 */
int cli_matrix_is_psd(const char *cmd, const char *path, const struct covmatrix *cm, int *psd)
{
	struct hc_error err;
	size_t m = cm->m, i, j, bytes;
	double *b, worst = 0.0, mm = (double)m * (double)m * sizeof(double);
	int changed = 0, rc;

	hc_error_clear(&err);
	if (hc_memory_check(cm->max_bytes, mm, 3 * mm, &err,
			    "%s: covariance matrix of %zu securities too large to check for negative eigenvalues",
			    path, m))
		return cli_fail(cmd, &err);
	if (hc_mul_size(m * m, sizeof *b, &bytes) || !(b = hc_malloc(bytes))) {
		hc_error(&err, HC_ENOMEM, "out of memory checking the covariance matrix");
		return cli_fail(cmd, &err);
	}
	memcpy(b, cm->a, bytes);
	rc = covmatrix_repair_psd(b, m, &changed, &err);
	for (i = 0; rc == HC_OK && changed && i < m; i++)
		for (j = 0; j < m; j++) {
			double scale = sqrt(cm->a[i * m + i] * cm->a[j * m + j]);
			double d = fabs(b[i * m + j] - cm->a[i * m + j]) / scale;
			if (d > worst)
				worst = d;
		}
	hc_free(b);
	if (rc)
		return cli_fail(cmd, &err);
	*psd = worst <= COVMATRIX_DEFAULT_SYMMETRY_TOL;
	return HC_OK;
}

int cli_load_covariance(const char *cmd, const struct cli_universe *cu, const struct cli_args *a,
			const char *path, struct covmatrix **out)
{
	struct hc_error err;
	size_t i, max_bytes;
	int rc, psd = 0;

	*out = NULL;
	for (i = 0; return_only_options[i]; i++)
		if (cli_given(a, return_only_options[i]))
			return cli_usage_error(cmd, "--%s describes a return history and does not apply with --covariance",
					       return_only_options[i]);
	if ((rc = cli_max_bytes(cmd, cu, &max_bytes)))
		return rc;
	hc_error_clear(&err);
	rc = covmatrix_load_within(out, path, COVMATRIX_DEFAULT_SYMMETRY_TOL, max_bytes, &err);
	if (rc)
		return cli_fail(cmd, &err);
	rc = cli_matrix_is_psd(cmd, path, *out, &psd);
	if (rc == HC_OK && !psd) {
		hc_error(&err, HC_EDATA, "%s: not a covariance matrix: it is not positive semi-definite "
			 "(some portfolio of these securities would have a negative variance)", path);
		rc = cli_fail(cmd, &err);
	}
	if (rc) {
		covmatrix_free(*out);
		*out = NULL;
	}
	return rc;
}
