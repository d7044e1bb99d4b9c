/*
 * cmd_describe.c - `holdcount describe UNIVERSE`: what was read.
 *
 * The pattern other command files copy (see cli.h): an options struct with
 * the shared groups embedded, a group-use list, the exported command
 * record, and a command function that parses, computes, fills one struct
 * report and hands it to cli_write_report.
 */
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/covmatrix.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/universe.h"

struct describe_opts {
	int table;                 /* enum describe_table: what --format csv prints */
	struct cli_universe uni;
	struct cli_output out;
};

/* What the CSV carries: the summary figures as key,value rows (the
 * report's fields), or one of its tables, by key. */
enum describe_table { DESCRIBE_TABLE_SUMMARY = 0, DESCRIBE_TABLE_SECURITIES = 1, DESCRIBE_TABLE_DROPPED = 2 };
static const char *const table_words[] = { "summary", "securities", "dropped", NULL };
static const char *const table_keys[] = { NULL, "kept", "dropped" };

static const struct cli_option describe_own[] = {
	{ "table", 0, CLI_CHOICE, offsetof(struct describe_opts, table), NULL,
	  "with --format csv, what to print: summary (the figures as key,value rows), securities (one "
	  "row per security kept) or dropped (one row per security dropped, with the reason)",
	  table_words, "summary" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group describe_group = { "describe options", describe_own };

static const struct cli_group_use describe_groups[] = {
	{ &describe_group, 0, NULL },
	{ &cli_group_universe, offsetof(struct describe_opts, uni), NULL },
	{ &cli_group_matrix_repair, offsetof(struct describe_opts, uni), NULL },
	{ &cli_group_output, offsetof(struct describe_opts, out), NULL },
	{ NULL, 0, NULL }
};

const struct cli_command cli_command_describe = {
	"describe", cmd_describe,
	"what was read from a universe: securities kept and dropped, periods, dates, and the averages",
	"UNIVERSE",
	"UNIVERSE is a CSV of returns (or prices, with --prices), or with --covariance a covariance "
	"matrix. Figures are annualised by the periods per year, which the output states. With --format "
	"csv it prints the summary figures as key,value rows, or with --table one table of securities.",
	1, 1, describe_groups
};

/* One security's observed periods and annualised standard deviation, two
 * passes (mean, then squared deviations) for accuracy, gaps skipped, sample
 * divisor n-1 as in the covariance matrix. */
static void security_sd(const double *x, size_t t, double p, size_t *nobs, double *sd)
{
	double mean = 0.0, ss = 0.0;
	size_t k, n = 0;

	for (k = 0; k < t; k++)
		if (!isnan(x[k])) {
			mean += x[k];
			n++;
		}
	*nobs = n;
	*sd = NAN;
	if (n < 2)
		return;
	mean /= (double)n;
	for (k = 0; k < t; k++)
		if (!isnan(x[k]))
			ss += (x[k] - mean) * (x[k] - mean);
	*sd = sqrt(ss / (double)(n - 1) * p);
}

static int add_kept(struct report *r, const struct universe *u)
{
	struct report_table *t = hc_report_add_table(r, "kept", "securities kept");
	size_t i, nobs;
	double sd;

	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "periods", "periods", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "sd", "sd", REPORT_STYLE_PERCENT) ||
	    hc_report_table_add_column(t, "periods_per_year", "per year", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < u->m; i++) {
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, u->ids[i]))
			return HC_ENOMEM;
		security_sd(u->x + i * u->t, u->t, u->periods_per_year, &nobs, &sd);
		hc_report_table_set_int(t, i, 1, (long long)nobs);
		hc_report_table_set_real(t, i, 2, sd);
		/* A CSV of this table alone (--table securities) says its scale too. */
		hc_report_table_set_real(t, i, 3, u->periods_per_year);
	}
	return HC_OK;
}

static int add_dropped(struct report *r, const struct universe *u)
{
	struct report_table *t = hc_report_add_table(r, "dropped", "securities dropped");
	size_t i;

	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "reason", "reason", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < u->ndropped; i++)
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, u->dropped[i].id) ||
		    hc_report_table_set_text(t, i, 1, u->dropped[i].reason))
			return HC_ENOMEM;
	return HC_OK;
}

/* The universe's averages and the sds they imply, scaled by p (periods a
 * year, or 1): the same fields whether from returns or from a matrix. */
static int add_averages(struct report *r, const struct moments *mo, double p)
{
	if (hc_report_add_real(r, "average_variance", "average variance", mo->average_variance * p, REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_covariance", "average covariance", mo->average_covariance * p,
			    REPORT_STYLE_PLAIN) ||
	    hc_report_add_real(r, "average_correlation", "average correlation",
			    mo->has_correlation ? mo->average_correlation : NAN, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(r, "floor_sd", "floor sd (unbounded universe)",
			    mo->average_covariance >= 0 ? sqrt(mo->average_covariance * p) : NAN, REPORT_STYLE_PERCENT) ||
	    hc_report_add_real(r, "universe_sd", "equal-weight universe sd", sqrt(mo->universe_variance * p),
			    REPORT_STYLE_PERCENT))
		return HC_ENOMEM;
	return HC_OK;
}

static int build(struct report *r, const struct universe *u, const struct moments *mo,
		 const struct cli_psd *ps)
{
	double p = u->periods_per_year;
	char first[16] = "", last[16] = "";

	if (u->t > 0) {
		hc_universe_format_date(u->dates[0], first);
		hc_universe_format_date(u->dates[u->t - 1], last);
	}
	if (hc_report_add_text(r, "source", "source", u->source ? u->source : "") ||
	    hc_report_add_int(r, "securities", "securities kept", (long long)u->m) ||
	    hc_report_add_int(r, "securities_read", "securities read", (long long)u->m_read) ||
	    hc_report_add_int(r, "securities_dropped", "securities dropped", (long long)u->ndropped) ||
	    hc_report_add_int(r, "periods", "periods", (long long)u->t) ||
	    hc_report_add_text(r, "first_date", "first date", first) ||
	    hc_report_add_text(r, "last_date", "last date", last) ||
	    cli_add_scale(r, p, 1) ||
	    hc_report_add_bool(r, "periods_per_year_detected", "detected from the dates",
			    u->periods_detected) ||
	    hc_report_add_text(r, "covariances", "covariances",
			    ps->repaired ? "pairwise-complete (data with gaps), repaired to the nearest positive "
					   "semi-definite matrix"
			    : u->has_missing ? "pairwise-complete (data with gaps)" : "complete data") ||
	    add_averages(r, mo, p))
		return HC_ENOMEM;
	if (add_kept(r, u) || add_dropped(r, u) || cli_psd_fields(r, ps))
		return HC_ENOMEM;
	return hc_report_add_cautions(r);
}

/* From a covariance matrix: no periods or dates; its own units unless
 * --periods-per-year says the entries are per period. */
static int build_matrix(struct report *r, const char *path, const struct covmatrix *cm,
			const struct moments *mo, const struct cli_psd *ps)
{
	struct report_table *t;
	double p = ps->scale;
	int annualised = ps->annualised;
	size_t i;

	if (hc_report_add_text(r, "source", "source", path) ||
	    hc_report_add_text(r, "input", "input", "covariance matrix") ||
	    hc_report_add_int(r, "securities", "securities kept", (long long)cm->m) ||
	    hc_report_add_int(r, "securities_read", "securities read", (long long)cm->m) ||
	    hc_report_add_int(r, "securities_dropped", "securities dropped", 0) ||
	    hc_report_add_none(r, "periods", "periods") ||
	    hc_report_add_none(r, "first_date", "first date") ||
	    hc_report_add_none(r, "last_date", "last date") ||
	    cli_add_scale(r, p, annualised) ||
	    hc_report_add_bool(r, "periods_per_year_detected", "detected from the dates", 0) ||
	    add_averages(r, mo, p))
		return HC_ENOMEM;
	t = hc_report_add_table(r, "kept", "securities kept");
	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "periods", "periods", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "sd", "sd", REPORT_STYLE_PERCENT) ||
	    hc_report_table_add_column(t, "periods_per_year", "per year", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (i = 0; i < cm->m; i++) {
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, i, 0, cm->ids[i]))
			return HC_ENOMEM;
		hc_report_table_set_real(t, i, 2, sqrt(cm->a[i * cm->m + i] * p));
		if (annualised)
			hc_report_table_set_real(t, i, 3, p);
	}
	t = hc_report_add_table(r, "dropped", "securities dropped");
	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "reason", "reason", REPORT_STYLE_PLAIN) || cli_psd_fields(r, ps))
		return HC_ENOMEM;
	return hc_report_add_cautions(r);
}

static int write(const struct describe_opts *o, const struct report *r)
{
	if (o->out.format != CLI_FORMAT_CSV)
		return cli_write_report("describe", &o->out, r);
	return cli_write_csv_part("describe", &o->out, r, table_keys[o->table]);
}

static int describe_matrix(const struct describe_opts *o, const struct cli_args *a)
{
	const char *path = a->positional[0];
	int annualised = !isnan(o->uni.periods_per_year);
	double p = annualised ? o->uni.periods_per_year : 1.0;
	struct covmatrix *cm = NULL;
	struct report *r = NULL;
	struct cli_psd ps;
	struct moments mo;
	struct hc_error err;
	int rc;

	hc_error_clear(&err);
	if (annualised && !(p > 0.0))
		return cli_usage_error("describe", "--periods-per-year must be positive, found %g", p);
	cli_psd_init(&ps, o->uni.repair_psd, p, annualised, "the covariance matrix");
	rc = cli_load_covariance("describe", &o->uni, a, path, &ps, &cm);
	if (rc)
		return rc;
	rc = hc_moments_from_matrix(&mo, cm->a, cm->m, &err);
	if (rc) {
		hc_error_prefix(&err, path);
		rc = cli_fail("describe", &err);
		goto cleanup;
	}
	r = hc_report_alloc();
	if (!r || build_matrix(r, path, cm, &mo, &ps)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		rc = cli_fail("describe", &err);
		goto cleanup;
	}
	rc = write(o, r);
cleanup:
	hc_report_free(r);
	hc_covmatrix_free(cm);
	return rc;
}

/* With gaps left and no repair, warn when the pairwise-complete matrix the
 * averages come from is not positive semi-definite -- curve and enough
 * refuse that matrix, so describe must not print its averages silently. */
static int psd_note(const char *cmd, const struct universe *u, struct report *r)
{
	struct covmatrix *cm = NULL;
	struct hc_error err;
	double lmin;
	char text[400];
	int rc;

	hc_error_clear(&err);
	if ((rc = hc_covmatrix_from_universe(u, &cm, &err)) == HC_OK)
		rc = hc_covmatrix_min_eigenvalue(cm->a, cm->m, &lmin, &err);
	hc_covmatrix_free(cm);
	if (rc)
		return cli_fail(cmd, &err);
	if (lmin >= 0)
		return HC_OK;
	snprintf(text, sizeof text,
		 "warning: the pairwise-complete covariance matrix is not positive semi-definite (smallest "
		 "eigenvalue %.4g per period); these averages come from it as it is, and curve and enough refuse "
		 "it without --repair-psd", lmin);
	return hc_report_add_note(r, text) ? HC_ENOMEM : HC_OK;
}

int cmd_describe(int argc, char **argv)
{
	struct describe_opts o;
	struct cli_args a;
	struct universe *u = NULL;
	struct covmatrix *cm = NULL;
	struct report *r = NULL;
	struct cli_psd ps;
	struct moments mo;
	struct hc_error err;
	int rc;

	memset(&o, 0, sizeof o);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_describe, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	if ((rc = cli_psd_usage("describe", &o.uni)) != HC_OK)
		goto cleanup;
	if (cli_given(&a, "table") && o.out.format != CLI_FORMAT_CSV) {
		rc = cli_usage_error("describe", "--table chooses what --format csv prints; the text and JSON outputs "
				     "hold everything");
		goto cleanup;
	}
	if (o.uni.covariance) {
		rc = describe_matrix(&o, &a);
		goto cleanup;
	}
	rc = cli_load_universe("describe", &o.uni, a.positional[0], &u);
	if (rc)
		goto cleanup;
	cli_psd_init(&ps, o.uni.repair_psd, u->periods_per_year, 1, "the pairwise-complete covariance matrix");
	/* --repair-psd with gaps left: the averages of the repaired matrix,
	 * which is what curve, enough and audit then use. */
	if (ps.asked && u->has_missing) {
		rc = cli_pairwise_matrix("describe", u, a.positional[0], "", &ps, &cm);
		if (rc)
			goto cleanup;
		rc = hc_moments_from_matrix(&mo, cm->a, cm->m, &err);
	} else
		rc = hc_moments_from_universe(&mo, u, &err);
	if (rc) {
		rc = cli_fail("describe", &err);
		goto cleanup;
	}
	r = hc_report_alloc();
	if (r && u->has_missing && !ps.repaired && (rc = psd_note("describe", u, r)) != HC_OK)
		goto cleanup;
	if (!r || build(r, u, &mo, &ps)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		rc = cli_fail("describe", &err);
		goto cleanup;
	}
	rc = write(&o, r);
cleanup:
	hc_report_free(r);
	hc_covmatrix_free(cm);
	hc_universe_free(u);
	cli_args_release(&a);
	return rc;
}
