/*
 * cmd_formula.c - `holdcount formula`: the exact curve from summary
 * statistics alone.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/curve.h"
#include "holdcount/curverun.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"

struct formula_opts {
	const char *sizes;
	double periods_per_year;
	struct cli_summary sum;
	struct cli_output out;
};

static const struct cli_option formula_own[] = {
	{ "sizes", 0, CLI_STRING, offsetof(struct formula_opts, sizes), "LIST",
	  "holding counts, as 1,2,5-30,50,100", NULL, "1 to 10, then a log-spaced grid" },
	{ "periods-per-year", 0, CLI_REAL, offsetof(struct formula_opts, periods_per_year), "P",
	  "the inputs are per period: annualise by P", NULL, "none: the inputs' own scale" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group formula_group = { "curve options", formula_own };

static const struct cli_group_use formula_groups[] = {
	{ &cli_group_summary, offsetof(struct formula_opts, sum), NULL, NULL },
	{ &formula_group, 0, NULL, NULL },
	{ &cli_group_output, offsetof(struct formula_opts, out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_formula = {
	"formula", cmd_formula,
	"the exact curve from summary statistics alone, with no data file",
	"",
	"Give --average-variance and --average-covariance, or --average-sd and "
	"--average-correlation. Without --securities the universe is unbounded. Figures stay on "
	"the scale of the inputs unless --periods-per-year is given.",
	0, 0, formula_groups
};

/* The averages from whichever pair of options was given
 * (hc_moments_summary_averages). */
static int averages(const struct formula_opts *o, const struct cli_args *a, double *vbar, double *cbar)
{
	int var = cli_given(a, "average-variance"), sd = cli_given(a, "average-sd");
	int cov = cli_given(a, "average-covariance"), cor = cli_given(a, "average-correlation");

	if (var == sd)
		return cli_usage_error("formula", var ? "give --average-variance or --average-sd, not both"
					: "needs --average-variance or --average-sd (see 'holdcount formula --help')");
	if (cov == cor)
		return cli_usage_error("formula", cov ? "give --average-covariance or --average-correlation, not both"
					: "needs --average-covariance or --average-correlation (see 'holdcount formula --help')");
	if (sd && !(o->sum.average_sd > 0.0))
		return cli_usage_error("formula", "--average-sd must be positive, found %g", o->sum.average_sd);
	if (cor && !(fabs(o->sum.average_correlation) <= 1.0))
		return cli_usage_error("formula", "--average-correlation must lie from -1 to 1, found %g",
				       o->sum.average_correlation);
	hc_moments_summary_averages(var ? o->sum.average_variance : NAN, cov ? o->sum.average_covariance : NAN,
				    o->sum.average_sd, o->sum.average_correlation, vbar, cbar);
	return HC_OK;
}

int cmd_formula(int argc, char **argv)
{
	struct formula_opts o;
	struct cli_args a;
	struct moments mo;
	struct report *r = NULL;
	struct hc_error err;
	size_t *sizes = NULL, nsizes = 0;
	double vbar = 0.0, cbar = 0.0, p = 1.0;
	int rc, annualised;

	memset(&o, 0, sizeof o);
	cli_summary_init(&o.sum);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_formula, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	annualised = cli_given(&a, "periods-per-year");
	rc = averages(&o, &a, &vbar, &cbar);
	if (rc)
		goto cleanup;
	if (annualised && !(o.periods_per_year > 0.0)) {
		rc = cli_usage_error("formula", "--periods-per-year must be positive, found %g", o.periods_per_year);
		goto cleanup;
	}
	if (annualised)
		p = o.periods_per_year;
	rc = hc_moments_from_summary(&mo, vbar, cbar, o.sum.securities, &err);
	if (rc) {
		rc = cli_fail("formula", &err);
		goto cleanup;
	}
	rc = cli_sizes("formula", o.sizes, o.sum.securities, &sizes, &nsizes);
	if (rc)
		goto cleanup;
	rc = hc_curve_formula(&r, &mo, sizes, nsizes, annualised ? p : 0,
			      !annualised && !cli_given(&a, "average-sd"), &err);
	if (rc) {
		rc = cli_fail("formula", &err);
		goto cleanup;
	}
	rc = cli_write_report("formula", &o.out, r);
cleanup:
	hc_report_free(r);
	hc_free(sizes);
	cli_args_release(&a);
	return rc;
}
