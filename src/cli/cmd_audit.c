/*
 * cmd_audit.c - `holdcount audit UNIVERSE --holdings FUNDS.csv`: judge funds'
 * concentration against the universe and a policy.
 *
 * Exit status: 0 when every fund passes every rule asked for, 1 (HC_EPOLICY)
 * when any fails, 10 (HC_EINSUFFICIENT) when none fails but a fund's risk
 * rests on less than --min-covered-weight of it, 2 for usage errors and 3
 * for data errors, so a nightly script can gate on it.
 */
#include <limits.h>
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/audit.h"
#include "holdcount/holdings.h"
#include "holdcount/source.h"

struct audit_opts {
	int table;                 /* enum audit_table: which table --format csv prints */
	struct cli_holdings hold;
	struct cli_policy pol;
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
};

/* The tables of hc_audit_report that --table chooses for the CSV, by key. */
enum audit_table { AUDIT_TABLE_FUNDS = 0, AUDIT_TABLE_SCREENS = 1, AUDIT_TABLE_SECTORS = 2,
		   AUDIT_TABLE_FAILURES = 3 };
static const char *const table_words[] = { "funds", "screens", "sectors", "failures", NULL };

#define AO(f) offsetof(struct audit_opts, f)
static const struct cli_option audit_own[] = {
	{ "table", 0, CLI_CHOICE, AO(table), NULL,
	  "with --format csv, the table to print: funds (one row per fund), screens (each screen's parts "
	  "with their deciding figures), sectors (each fund's sector weights; needs --sectors) or failures "
	  "(each failed rule with its figure and limit)",
	  table_words, "funds" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group audit_group = { "audit options", audit_own };

/* Each fund is compared at its own holding count, so there is no grid. */
static const struct cli_omit audit_sampling_omit[] = {
	{ "sizes", "the audit compares each fund at its own holding count" },
	{ NULL, NULL }
};

static const struct cli_group_use audit_groups[] = {
	{ &audit_group, 0, NULL, NULL },
	{ &cli_group_holdings, AO(hold), NULL, NULL },
	{ &cli_group_policy, AO(pol), NULL, NULL },
	{ &cli_group_sampling, AO(sam), audit_sampling_omit, NULL },
	{ &cli_group_universe, AO(uni), NULL, NULL },
	{ &cli_group_matrix_repair, AO(uni), NULL, NULL },
	{ &cli_group_output, AO(out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_audit = {
	"audit", cmd_audit,
	"concentration audit of actual funds against the universe and a policy",
	"UNIVERSE --holdings FILE",
	"Reads the funds in --holdings (required) and, for each, reports: positions, the input total (weights or "
	"market values, before normalising), largest weight, top-10 share, HHI and effective number of holdings; the "
	"fund's sd from the universe's history, its diversification ratio, its equivalent count (or "
	"'below the floor'), the percentile of its sd among random equal-weight portfolios of the "
	"same count (--paths), and the expected sd of a random portfolio laid out with its own "
	"weights; sector weights with --sectors; and three weight screens (UCITS 2009/65/EC Art. 52, "
	"Investment Company Act of 1940 s. 5(b)(1), Internal Revenue Code s. 851(b)(3)), written from "
	"memory of the texts. With --covariance the risk figures come from a covariance matrix (w'Aw), "
	"and with --missing pairwise from the pairwise-complete covariances. With --format csv it prints "
	"one table, the funds unless --table chooses the screens, the sector weights or the failures. Exit "
	"status 0 when every fund passes the rules asked for, 1 when any fails, 10 when none fails but a "
	"fund's risk rests on less than --min-covered-weight of its invested weight (insufficient data), 2 "
	"for usage and 3 for data errors.",
	1, 1, audit_groups
};

int cmd_audit(int argc, char **argv)
{
	struct audit_opts o;
	struct cli_args a;
	struct hc_source *src = NULL;
	struct holdings *h = NULL;
	struct holdings_labels *l = NULL;
	struct holdings *bench = NULL;
	struct audit_result *res = NULL;
	struct report *r = NULL;
	struct audit_options ao;
	struct cli_progress prog;
	struct hc_error err;
	int rc;

	memset(&o, 0, sizeof o);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	cli_holdings_init(&o.hold);
	rc = cli_parse(&cli_command_audit, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	if (!o.hold.holdings.n)
		rc = cli_usage_error("audit", "--holdings FILE is required (see 'holdcount audit --help')");
	else if (cli_given(&a, "table") && o.out.format != CLI_FORMAT_CSV)
		rc = cli_usage_error("audit", "--table chooses the table of --format csv; the text and JSON outputs "
				     "hold every table");
	else if (o.table == AUDIT_TABLE_SECTORS && !o.hold.sectors)
		rc = cli_usage_error("audit", "--table sectors needs --sectors FILE");
	else
		rc = cli_psd_usage("audit", &o.uni);
	if (rc != HC_OK)
		goto cleanup;
	/* With gaps left (--missing pairwise) no fund has a complete return
	 * series, so its risk comes from the pairwise-complete covariances,
	 * which must form a positive semi-definite matrix (or be repaired with
	 * --repair-psd); under --missing alive (the default) each fund's own
	 * holdings' covariances are used (no universe matrix), repaired when
	 * needed, and the output says so. */
	rc = cli_load_source("audit", &o.uni, &a, a.positional[0], CLI_NEED_FUNDS,
			     "the pairwise-complete covariances are not positive semi-definite, so some fund's "
			     "variance w'Aw could come out negative; " HC_SOURCE_PSD_HINT, &src);
	if (rc != HC_OK)
		goto cleanup;
	if ((rc = cli_audit_load("audit", &o.hold, &o.pol, &o.sam, &ao, &h, &l, &bench)) != HC_OK)
		goto cleanup;
	hc_error_clear(&err);
	cli_progress_init(&prog, "sampling the funds' counts", "paths", o.out.quiet);
	ao.progress = cli_progress_update;
	ao.progress_ctx = &prog;
	rc = hc_audit_run(&res, h, src, NULL, &ao, &err);
	cli_progress_finish(&prog);
	if (rc == HC_OK) {
		cli_audit_say_missing("audit", res);
		rc = hc_audit_report(&r, res, h, &err);
	}
	if (rc == HC_OK && hc_source_report_psd(src, r) != HC_OK)
		rc = hc_error(&err, HC_ENOMEM, "out of memory building the report");
	if (rc != HC_OK) {
		rc = cli_fail("audit", &err);
		goto cleanup;
	}
	rc = o.table == AUDIT_TABLE_FUNDS ? cli_write_report("audit", &o.out, r)
					  : cli_write_csv_part("audit", &o.out, r, table_words[o.table]);
	if (rc != HC_OK)
		goto cleanup;
	rc = cli_audit_status("audit", res);
cleanup:
	hc_report_free(r);
	hc_audit_result_free(res);
	hc_holdings_labels_free(l);
	hc_holdings_free(h);
	hc_holdings_free(bench);
	hc_source_free(src);
	cli_args_release(&a);
	return rc;
}
