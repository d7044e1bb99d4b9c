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
	{ &cli_group_summary, offsetof(struct formula_opts, sum), NULL },
	{ &formula_group, 0, NULL },
	{ &cli_group_output, offsetof(struct formula_opts, out), NULL },
	{ NULL, 0, NULL }
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

/* The averages from whichever pair of options was given: variance from
 * --average-variance or the square of --average-sd; covariance from
 * --average-covariance or correlation times the average variance (the
 * equal-variance reading, common practice, no single source). */
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
	*vbar = var ? o->sum.average_variance : o->sum.average_sd * o->sum.average_sd;
	if (cor && !(fabs(o->sum.average_correlation) <= 1.0))
		return cli_usage_error("formula", "--average-correlation must lie from -1 to 1, found %g",
				       o->sum.average_correlation);
	*cbar = cov ? o->sum.average_covariance : o->sum.average_correlation * *vbar;
	return HC_OK;
}

/* Text view: variance-scale inputs may be in any unit (percent squared,
 * say), so their figures are shown plain rather than as percents. */
static void plain_styles(struct report_table *t)
{
	size_t i, j;

	for (j = 0; j < t->ncols; j++) {
		/* A share is a share whatever the unit of the inputs. */
		if (t->cols[j].style != REPORT_STYLE_PERCENT || strcmp(t->cols[j].key, "diversifiable_share") == 0)
			continue;
		t->cols[j].style = REPORT_STYLE_PLAIN;
		for (i = 0; i < t->nrows; i++)
			t->cells[i * t->ncols + j].style = REPORT_STYLE_PLAIN;
	}
}

static int build(struct report *r, const struct moments *mo, const struct curve *c,
		 int annualised, int plain)
{
	int sd_style = plain ? REPORT_STYLE_PLAIN : REPORT_STYLE_PERCENT;
	double p = c->periods_per_year;
	struct report_table *t;

	if (hc_report_add_real(r, "average_variance", "average variance", mo->average_variance * p, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_covariance", "average covariance", mo->average_covariance * p, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_correlation", "average correlation (implied)",
			    mo->average_covariance / mo->average_variance, REPORT_STYLE_FIXED4) ||
	    (mo->m ? hc_report_add_int(r, "securities", "securities", (long long)mo->m)
		   : hc_report_add_none(r, "securities", "securities")) ||
	    hc_report_add_text(r, "universe", "universe", mo->m ? "finite" : "unbounded") ||
	    cli_add_scale(r, p, annualised) ||
	    hc_report_add_real(r, "floor_variance", "floor variance", c->floor_variance, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "floor_sd", "floor sd", c->floor_variance >= 0 ? sqrt(c->floor_variance) : NAN, sd_style) ||
	    hc_report_add_real(r, "universe_sd", "equal-weight universe sd",
			    mo->m ? sqrt(c->universe_variance) : NAN, sd_style))
		return HC_ENOMEM;
	if (cli_curve_table(r, c, annualised))
		return HC_ENOMEM;
	t = r->tables[r->ntables - 1];
	if (plain)
		plain_styles(t);
	/* An average sd above 300% a year is almost always a unit mistake
	 * (common practice, as in enough). */
	if (annualised && mo->average_variance * p > 9.0) {
		char text[300];

		snprintf(text, sizeof text,
			 "implausible: the average sd is %.4g%% a year, above 300%%; are the inputs in percent "
			 "(variances in percent squared?) rather than decimals?", 100 * sqrt(mo->average_variance * p));
		if (hc_report_add_note(r, text))
			return HC_ENOMEM;
	}
	return hc_report_add_cautions(r);
}

int cmd_formula(int argc, char **argv)
{
	struct formula_opts o;
	struct cli_args a;
	struct moments mo;
	struct curve *c = NULL;
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
	rc = hc_curve_exact(&c, &mo, sizes, nsizes, p, &err);
	if (rc) {
		rc = cli_fail("formula", &err);
		goto cleanup;
	}
	r = hc_report_alloc();
	if (!r || build(r, &mo, c, annualised, !annualised && !cli_given(&a, "average-sd"))) {
		rc = hc_error(&err, HC_ENOMEM, "out of memory building the report");
		rc = cli_fail("formula", &err);
		goto cleanup;
	}
	rc = cli_write_report("formula", &o.out, r);
cleanup:
	hc_report_free(r);
	hc_curve_free(c);
	hc_free(sizes);
	cli_args_release(&a);
	return rc;
}
