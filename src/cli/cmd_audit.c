/*
 * cmd_audit.c - `holdcount audit UNIVERSE --holdings FUNDS.csv`: judge funds'
 * concentration against the universe and a policy.
 *
 * Exit status: 0 when every fund passes every rule asked for, 1 (HC_EPOLICY)
 * when any fails, 2 for usage errors and 3 for data errors, so a nightly
 * script can gate on it.
 */
#include <limits.h>
#include <math.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/audit.h"
#include "holdcount/covmatrix.h"
#include "holdcount/holdings.h"
#include "holdcount/moments.h"
#include "holdcount/universe.h"

struct audit_opts {
	int table;                 /* enum audit_table: which table --format csv prints */
	struct cli_holdings hold;
	struct cli_policy pol;
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
};

/* Both groups are shared with `holdcount report` (cli.h). */
#define HO(f) offsetof(struct cli_holdings, f)
static const struct cli_option holdings_own[] = {
	{ "holdings", 0, CLI_STRING, HO(holdings), "FILE",
	  "holdings CSV: fund,id,weight or fund,id,value, optionally issuer", NULL, NULL },
	{ "sectors", 0, CLI_STRING, HO(sectors), "FILE",
	  "sector map CSV id,label: sector weights, sector HHI, --max-sector-weight", NULL, NULL },
	{ "allow-short", 0, CLI_FLAG, HO(allow_short), NULL,
	  "accept negative weights (short positions)", NULL, NULL },
	{ "strict", 0, CLI_FLAG, HO(strict), NULL,
	  "refuse ids missing from the universe instead of computing risk on the rest", NULL, NULL },
	{ "fund-column", 0, CLI_STRING, HO(fund_column), "NAME",
	  "holdings column naming the fund", NULL, "fund" },
	{ "holding-id-column", 0, CLI_STRING, HO(holding_id_column), "NAME",
	  "holdings column with the security id", NULL, "id" },
	{ "weight-column", 0, CLI_STRING, HO(weight_column), "NAME",
	  "holdings column with weights", NULL, "weight" },
	{ "market-value-column", 0, CLI_STRING, HO(market_value_column), "NAME",
	  "holdings column with market values, normalised per fund", NULL, "value" },
	{ "issuer-column", 0, CLI_STRING, HO(issuer_column), "NAME",
	  "holdings column mapping ids to issuers for the screens", NULL, "issuer, when present" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_holdings = { "holdings options", holdings_own };

#define PO(f) offsetof(struct cli_policy, f)
static const struct cli_option policy_own[] = {
	{ "min-holdings", 0, CLI_COUNT, PO(min_holdings), "N",
	  "policy: at least N positions per fund", NULL, "no rule" },
	{ "min-effective", 0, CLI_REAL, PO(min_effective), "X",
	  "policy: effective number of holdings (1/HHI) at least X", NULL, "no rule" },
	{ "max-weight", 0, CLI_FRACTION, PO(max_weight), "W",
	  "policy: no position above W (0.05 or 5%)", NULL, "no rule" },
	{ "max-sector-weight", 0, CLI_FRACTION, PO(max_sector_weight), "W",
	  "policy: no sector above W (needs --sectors)", NULL, "no limit" },
	{ "screens", 0, CLI_STRING, PO(screens), "LIST",
	  "policy: legal weight limits (concentration tests, not exclusion lists) each fund must pass: ucits, 1940act, ric, all or none", NULL, "none" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_policy = { "policy options", policy_own };

/* The tables of hc_audit_report that --table chooses for the CSV, by key. */
enum audit_table { AUDIT_TABLE_FUNDS = 0, AUDIT_TABLE_SCREENS = 1, AUDIT_TABLE_SECTORS = 2 };
static const char *const table_words[] = { "funds", "screens", "sectors", NULL };

#define AO(f) offsetof(struct audit_opts, f)
static const struct cli_option audit_own[] = {
	{ "table", 0, CLI_CHOICE, AO(table), NULL,
	  "with --format csv, the table to print: funds (one row per fund), screens (each screen's parts "
	  "with their deciding figures) or sectors (each fund's sector weights; needs --sectors)",
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
	{ &audit_group, 0, NULL },
	{ &cli_group_holdings, AO(hold), NULL },
	{ &cli_group_policy, AO(pol), NULL },
	{ &cli_group_sampling, AO(sam), audit_sampling_omit },
	{ &cli_group_universe, AO(uni), NULL },
	{ &cli_group_matrix_repair, AO(uni), NULL },
	{ &cli_group_output, AO(out), NULL },
	{ NULL, 0, NULL }
};

const struct cli_command cli_command_audit = {
	"audit", cmd_audit,
	"concentration audit of actual funds against the universe and a policy",
	"UNIVERSE --holdings FILE",
	"Reads the funds in --holdings (required) and, for each, reports: positions, weight sum before "
	"normalising, largest weight, top-10 share, HHI and effective number of holdings; the "
	"fund's sd from the universe's history, its diversification ratio, its equivalent count (or "
	"'below the floor'), the percentile of its sd among random equal-weight portfolios of the "
	"same count (--paths), and the expected sd of a random portfolio laid out with its own "
	"weights; sector weights with --sectors; and three weight screens (UCITS 2009/65/EC Art. 52, "
	"Investment Company Act of 1940 s. 5(b)(1), Internal Revenue Code s. 851(b)(3)), written from "
	"memory of the texts. With --covariance the risk figures come from a covariance matrix (w'Aw), "
	"and with --missing pairwise from the pairwise-complete covariances. With --format csv it prints "
	"one table, the funds unless --table chooses the screens or the sector weights. Exit status 0 "
	"when every fund passes the rules asked for, 1 when any fails, 2 for usage and 3 for data errors.",
	1, 1, audit_groups
};

/* The audit's options from the groups; usage errors printed. */
static int audit_options_from(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
			      const struct cli_sampling *sam, struct audit_options *ao)
{
	struct hc_error err;

	if (po->max_sector_weight > 0 && !ho->sectors)
		return cli_usage_error(cmd, "--max-sector-weight needs --sectors FILE");
	if (!(po->min_effective >= 0))
		return cli_usage_error(cmd, "--min-effective must be 0 or more, found %g", po->min_effective);
	if (!(po->max_weight >= 0 && po->max_weight <= 1) || !(po->max_sector_weight >= 0 && po->max_sector_weight <= 1))
		return cli_usage_error(cmd, "--max-weight and --max-sector-weight must be between 0 and 1 (or 100%%)");
	if (ho->weight_column && ho->market_value_column)
		return cli_usage_error(cmd, "--weight-column and --market-value-column exclude each other");
	hc_audit_options_init(ao);
	hc_error_clear(&err);
	if (po->screens && hc_audit_parse_screens(po->screens, &ao->policy.screens, &err) != HC_OK)
		return cli_usage_error(cmd, "--screens: %s", err.message);
	ao->policy.min_holdings = po->min_holdings;
	ao->policy.min_effective = po->min_effective;
	ao->policy.max_weight = po->max_weight;
	ao->policy.max_sector_weight = po->max_sector_weight;
	ao->strict = ho->strict;
	ao->paths = sam->paths;
	ao->seed = sam->seed;
	ao->threads = sam->threads > INT_MAX ? INT_MAX : (int)sam->threads;
	return HC_OK;
}

static int load_inputs(const char *cmd, const struct cli_holdings *o, struct holdings **h,
		       struct holdings_labels **l)
{
	struct holdings_options ho;
	struct hc_error err;
	size_t k;

	hc_holdings_options_init(&ho);
	ho.fund_column = o->fund_column;
	ho.id_column = o->holding_id_column;
	ho.weight_column = o->weight_column;
	ho.value_column = o->market_value_column;
	ho.issuer_column = o->issuer_column;
	ho.allow_short = o->allow_short;
	hc_error_clear(&err);
	if (hc_holdings_load(h, o->holdings, &ho, &err) != HC_OK)
		return cli_fail(cmd, &err);
	for (k = 0; k < (*h)->nwarnings; k++)
		fprintf(stderr, "holdcount %s: warning: %s\n", cmd, (*h)->warnings[k]);
	if (o->sectors && hc_holdings_labels_load(l, o->sectors, 0, &err) != HC_OK)
		return cli_fail(cmd, &err);
	return HC_OK;
}

/* One line per fund holding ids the universe lacks, whatever the format,
 * so a script reading the CSV or JSON also hears that the fund's risk
 * figures rest on part of it (the ids themselves are in the "missing"
 * table).  Like the weight-sum warning it is not progress, so --quiet
 * (which silences progress) leaves it. */
static void say_missing(const char *cmd, const struct audit_result *res)
{
	size_t f;

	for (f = 0; f < res->nfunds; f++) {
		const struct audit_fund *af = &res->funds[f];
		size_t n = af->nmissing;
		if (!n)
			continue;
		if (af->risk_known)
			fprintf(stderr, "holdcount %s: warning: %zu id%s of '%s' %s not in the universe (carrying "
				"%.3g%% of its weight); its risk figures use the rest\n", cmd, n, n == 1 ? "" : "s",
				af->name, n == 1 ? "is" : "are", 100 * af->missing_weight);
		else if (n == 1)
			fprintf(stderr, "holdcount %s: warning: the only id of '%s' is not in the universe; it has "
				"no risk figures\n", cmd, af->name);
		else
			fprintf(stderr, "holdcount %s: warning: all %zu ids of '%s' are not in the universe; it has "
				"no risk figures\n", cmd, n, af->name);
	}
}

/* The audit against the return series u, or against the matrix am when
 * it is not NULL. */
static int audit_data(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
		      const struct cli_sampling *sam, int quiet, const struct universe *u,
		      const struct audit_matrix *am, const struct moments *mo, struct holdings **h,
		      struct holdings_labels **labels, struct audit_result **res, struct report **out)
{
	struct audit_options ao;
	struct cli_progress prog;
	struct hc_error err;
	int rc;

	if ((rc = audit_options_from(cmd, ho, po, sam, &ao)) != HC_OK ||
	    (rc = load_inputs(cmd, ho, h, labels)) != HC_OK)
		return rc;
	ao.sectors = *labels;
	hc_error_clear(&err);
	cli_progress_init(&prog, "sampling the funds' counts", "paths", quiet);
	ao.progress = cli_progress_update;
	ao.progress_ctx = &prog;
	rc = am ? hc_audit_run_matrix(res, *h, am, mo, &ao, &err) : hc_audit_run(res, *h, u, mo, &ao, &err);
	cli_progress_finish(&prog);
	if (rc == HC_OK) {
		say_missing(cmd, *res);
		rc = hc_audit_report(out, *res, *h, &err);
	}
	return rc ? cli_fail(cmd, &err) : HC_OK;
}

int cli_audit_data(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
		   const struct cli_sampling *sam, int quiet, const struct universe *u,
		   const struct moments *mo, struct holdings **h, struct holdings_labels **labels,
		   struct audit_result **res, struct report **out)
{
	return audit_data(cmd, ho, po, sam, quiet, u, NULL, mo, h, labels, res, out);
}

/* Name the failing funds and rules on stderr, so a log shows why the
 * status is 1 even when the report went to a file. */
void cli_audit_say_failures(const char *cmd, const struct audit_result *res)
{
	size_t f;
	int k;

	fprintf(stderr, "holdcount %s: %zu of %zu fund%s fail%s the policy:", cmd, res->failed_funds,
		res->nfunds, res->nfunds == 1 ? "" : "s", res->failed_funds == 1 ? "s" : "");
	for (f = 0; f < res->nfunds; f++) {
		const char *sep = " (";
		if (res->funds[f].passed)
			continue;
		fprintf(stderr, " '%s'", res->funds[f].name);
		for (k = 0; k < AUDIT_NRULES; k++)
			if (res->funds[f].failed & (1u << k)) {
				fprintf(stderr, "%s%s", sep, hc_audit_rule_name(1u << k));
				sep = ", ";
			}
		fputc(')', stderr);
	}
	fputc('\n', stderr);
}

/* --covariance: the matrix and its averages; figures on its own scale
 * unless --periods-per-year says its entries are per period. */
static int load_matrix(const struct audit_opts *o, const struct cli_args *a, struct cli_psd *ps,
		       struct covmatrix **cm, struct moments *mo, struct audit_matrix *am)
{
	const char *path = a->positional[0];
	int annualised = !isnan(o->uni.periods_per_year);
	double p = annualised ? o->uni.periods_per_year : 1.0;
	struct hc_error err;
	int rc;

	if (!(p > 0.0))
		return cli_usage_error("audit", "--periods-per-year must be positive, found %g", p);
	cli_psd_init(ps, o->uni.repair_psd, p, annualised, "the covariance matrix");
	if ((rc = cli_load_covariance("audit", &o->uni, a, path, ps, cm)) != HC_OK)
		return rc;
	hc_error_clear(&err);
	if (hc_moments_from_matrix(mo, (*cm)->a, (*cm)->m, &err) != HC_OK) {
		hc_error_prefix(&err, path);
		return cli_fail("audit", &err);
	}
	memset(am, 0, sizeof *am);
	am->cm = *cm;
	am->source = path;
	am->input = "covariance matrix";
	am->periods_per_year = p;
	am->annualised = annualised;
	return HC_OK;
}

/* --missing pairwise with gaps left: no fund has a complete return series,
 * so its risk comes from the pairwise-complete covariances, which must form
 * a positive semi-definite matrix (or be repaired with --repair-psd). */
static int pairwise_matrix(const struct audit_opts *o, const struct universe *u, const char *path,
			   struct cli_psd *ps, struct covmatrix **cm, struct moments *mo, struct audit_matrix *am)
{
	struct hc_error err;
	int rc;

	cli_psd_init(ps, o->uni.repair_psd, u->periods_per_year, 1, "the pairwise-complete covariance matrix");
	rc = cli_pairwise_matrix("audit", u, path,
				 "the pairwise-complete covariances are not positive semi-definite, so some fund's "
				 "variance w'Aw could come out negative; " CLI_PSD_HINT, ps, cm);
	if (rc)
		return rc;
	hc_error_clear(&err);
	if (hc_moments_from_matrix(mo, (*cm)->a, (*cm)->m, &err) != HC_OK)
		return cli_fail("audit", &err);
	memset(am, 0, sizeof *am);
	am->cm = *cm;
	am->source = u->source ? u->source : path;
	am->input = ps->repaired ? "return history with gaps; risk from its pairwise-complete covariances, "
				   "repaired to the nearest positive semi-definite matrix"
				 : "return history with gaps; risk from its pairwise-complete covariances";
	am->periods_per_year = u->periods_per_year;
	am->annualised = 1;
	am->periods = u->t;
	am->history = u;
	return HC_OK;
}

int cmd_audit(int argc, char **argv)
{
	struct audit_opts o;
	struct cli_args a;
	struct universe *u = NULL;
	struct covmatrix *cm = NULL;
	struct audit_matrix am;
	struct holdings *h = NULL;
	struct holdings_labels *l = NULL;
	struct audit_result *res = NULL;
	struct report *r = NULL;
	struct cli_psd ps;
	struct moments mo;
	struct hc_error err;
	int rc;

	memset(&o, 0, sizeof o);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_audit, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	cli_psd_init(&ps, 0, 1, 0, "");
	if (!o.hold.holdings)
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
	if (o.uni.covariance)
		rc = load_matrix(&o, &a, &ps, &cm, &mo, &am);
	else if ((rc = cli_load_universe("audit", &o.uni, a.positional[0], &u)) == HC_OK) {
		if (u->has_missing)
			rc = pairwise_matrix(&o, u, a.positional[0], &ps, &cm, &mo, &am);
		else if (hc_moments_from_universe(&mo, u, &err) != HC_OK)
			rc = cli_fail("audit", &err);
		/* --repair-psd had nothing to repair: say so in the output */
		else if (o.uni.repair_psd)
			cli_psd_init(&ps, 1, u->periods_per_year, 1, "");
	}
	if (rc != HC_OK)
		goto cleanup;
	rc = audit_data("audit", &o.hold, &o.pol, &o.sam, o.out.quiet, u, cm ? &am : NULL, &mo, &h, &l, &res, &r);
	if (rc == HC_OK && cli_psd_fields(r, &ps) != HC_OK) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
		rc = cli_fail("audit", &err);
	}
	if (rc != HC_OK)
		goto cleanup;
	rc = o.table == AUDIT_TABLE_FUNDS ? cli_write_report("audit", &o.out, r)
					  : cli_write_csv_part("audit", &o.out, r, table_words[o.table]);
	if (rc != HC_OK)
		goto cleanup;
	if (res->failed_funds) {
		cli_audit_say_failures("audit", res);
		rc = HC_EPOLICY;
	}
cleanup:
	hc_report_free(r);
	hc_audit_result_free(res);
	hc_holdings_labels_free(l);
	hc_holdings_free(h);
	hc_covmatrix_free(cm);
	hc_universe_free(u);
	cli_args_release(&a);
	return rc;
}
