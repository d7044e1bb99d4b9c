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
#include "holdcount/holdings.h"
#include "holdcount/moments.h"
#include "holdcount/universe.h"

struct audit_opts {
	const char *holdings;
	const char *sectors;
	size_t min_holdings;
	double min_effective;
	double max_weight;
	double max_sector_weight;
	const char *screens;
	int allow_short;
	int strict;
	const char *fund_column, *holding_id_column, *weight_column, *market_value_column, *issuer_column;
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
};

#define AO(f) offsetof(struct audit_opts, f)
static const struct cli_option audit_own[] = {
	{ "holdings", 0, CLI_STRING, AO(holdings), "FILE",
	  "holdings CSV: fund,id,weight or fund,id,value, optionally issuer (required)", NULL, NULL },
	{ "sectors", 0, CLI_STRING, AO(sectors), "FILE",
	  "sector map CSV id,label: sector weights, sector HHI, --max-sector-weight", NULL, NULL },
	{ "min-holdings", 0, CLI_COUNT, AO(min_holdings), "N",
	  "policy: at least N positions per fund", NULL, "no rule" },
	{ "min-effective", 0, CLI_REAL, AO(min_effective), "X",
	  "policy: effective number of holdings (1/HHI) at least X", NULL, "no rule" },
	{ "max-weight", 0, CLI_FRACTION, AO(max_weight), "W",
	  "policy: no position above W (0.05 or 5%)", NULL, "no rule" },
	{ "max-sector-weight", 0, CLI_FRACTION, AO(max_sector_weight), "W",
	  "policy: no sector above W (needs --sectors)", NULL, "no rule" },
	{ "screens", 0, CLI_STRING, AO(screens), "LIST",
	  "policy: weight screens each fund must pass: ucits, 1940act, ric, all or none", NULL, "none" },
	{ "allow-short", 0, CLI_FLAG, AO(allow_short), NULL,
	  "accept negative weights (short positions)", NULL, NULL },
	{ "strict", 0, CLI_FLAG, AO(strict), NULL,
	  "refuse ids missing from the universe instead of computing risk on the rest", NULL, NULL },
	{ "fund-column", 0, CLI_STRING, AO(fund_column), "NAME",
	  "holdings column naming the fund", NULL, "fund" },
	{ "holding-id-column", 0, CLI_STRING, AO(holding_id_column), "NAME",
	  "holdings column with the security id", NULL, "id" },
	{ "weight-column", 0, CLI_STRING, AO(weight_column), "NAME",
	  "holdings column with weights", NULL, "weight" },
	{ "market-value-column", 0, CLI_STRING, AO(market_value_column), "NAME",
	  "holdings column with market values, normalised per fund", NULL, "value" },
	{ "issuer-column", 0, CLI_STRING, AO(issuer_column), "NAME",
	  "holdings column mapping ids to issuers for the screens", NULL, "issuer, when present" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
static const struct cli_group audit_group = { "audit options", audit_own };

static const struct cli_group_use audit_groups[] = {
	{ &audit_group, 0 },
	{ &cli_group_sampling, AO(sam) },
	{ &cli_group_universe, AO(uni) },
	{ &cli_group_output, AO(out) },
	{ NULL, 0 }
};

const struct cli_command cli_command_audit = {
	"audit", cmd_audit,
	"concentration audit of actual funds against the universe and a policy",
	"UNIVERSE",
	"Reads the funds in --holdings and, for each, reports: positions, weight sum before "
	"normalising, largest weight, top-10 share, HHI and effective number of holdings; the "
	"fund's sd from the universe's history, its diversification ratio, its equivalent count (or "
	"'below the floor'), the percentile of its sd among random equal-weight portfolios of the "
	"same count (--paths), and the expected sd of a random portfolio laid out with its own "
	"weights; sector weights with --sectors; and three weight screens (UCITS 2009/65/EC Art. 52, "
	"Investment Company Act of 1940 s. 5(b)(1), Internal Revenue Code s. 851(b)(3)), written from "
	"memory of the texts. Exit status 0 when every fund passes the rules asked for, 1 when any "
	"fails, 2 for usage and 3 for data errors.",
	1, 1, audit_groups
};

static int check_options(const struct audit_opts *o, const struct cli_args *a,
			 struct audit_options *ao)
{
	struct hc_error err;

	if (!o->holdings)
		return cli_usage_error("audit", "--holdings FILE is required (see 'holdcount audit --help')");
	if (cli_given(a, "sizes"))
		return cli_usage_error("audit", "--sizes does not apply: each fund is compared at its own count");
	if (o->uni.missing == CLI_MISSING_PAIRWISE)
		return cli_usage_error("audit", "--missing pairwise does not apply: a fund's sd needs complete series");
	if (o->max_sector_weight > 0 && !o->sectors)
		return cli_usage_error("audit", "--max-sector-weight needs --sectors FILE");
	if (!(o->min_effective >= 0))
		return cli_usage_error("audit", "--min-effective must be 0 or more, found %g", o->min_effective);
	if (!(o->max_weight >= 0 && o->max_weight <= 1) || !(o->max_sector_weight >= 0 && o->max_sector_weight <= 1))
		return cli_usage_error("audit", "--max-weight and --max-sector-weight must be between 0 and 1 (or 100%%)");
	if (o->weight_column && o->market_value_column)
		return cli_usage_error("audit", "--weight-column and --market-value-column exclude each other");
	audit_options_init(ao);
	hc_error_clear(&err);
	if (o->screens && audit_parse_screens(o->screens, &ao->policy.screens, &err) != HC_OK)
		return cli_usage_error("audit", "--screens: %s", err.message);
	ao->policy.min_holdings = o->min_holdings;
	ao->policy.min_effective = o->min_effective;
	ao->policy.max_weight = o->max_weight;
	ao->policy.max_sector_weight = o->max_sector_weight;
	ao->strict = o->strict;
	ao->paths = o->sam.paths;
	ao->seed = o->sam.seed;
	ao->threads = o->sam.threads > INT_MAX ? INT_MAX : (int)o->sam.threads;
	return HC_OK;
}

/* The universe options as every command reads them (the shared loader in
 * the CLI framework was not on main when this was written). */
static int load_universe(const struct cli_universe *cu, const char *path,
			 struct universe **u)
{
	struct universe_options uo;
	struct hc_error err;

	universe_options_init(&uo);
	if (cu->covariance)
		return cli_usage_error("audit", "--covariance does not apply: a fund's sd needs return series");
	if (cu->log_returns && !cu->prices)
		return cli_usage_error("audit", "--log-returns needs --prices (log returns are computed from prices)");
	uo.values = !cu->prices ? UNIVERSE_RETURNS : cu->log_returns ? UNIVERSE_PRICES_LOG : UNIVERSE_PRICES;
	uo.layout = cu->layout == CLI_LAYOUT_LONG ? UNIVERSE_LONG : UNIVERSE_WIDE;
	uo.percent = cu->percent;
	uo.missing = UNIVERSE_MISSING_COMPLETE;
	if (!isnan(cu->periods_per_year) && cu->periods_per_year < 0)
		return cli_usage_error("audit", "--periods-per-year must be positive, found %g", cu->periods_per_year);
	uo.periods_per_year = isnan(cu->periods_per_year) ? 0.0 : cu->periods_per_year;
	if (cu->delimiter) {
		if (strcmp(cu->delimiter, ",") && strcmp(cu->delimiter, ";"))
			return cli_usage_error("audit", "--delimiter must be ',' or ';', found '%s'", cu->delimiter);
		uo.delimiter = cu->delimiter[0];
	}
	uo.date_column = cu->date_column;
	uo.id_column = cu->id_column;
	uo.value_column = cu->value_column;
	if (cu->max_memory_mib > SIZE_MAX >> 20)
		return cli_usage_error("audit", "--max-memory %zu MiB does not fit in this machine's address space",
				       cu->max_memory_mib);
	uo.max_bytes = cu->max_memory_mib << 20;
	hc_error_clear(&err);
	if (universe_load(u, path, &uo, &err) != HC_OK)
		return cli_fail("audit", &err);
	return HC_OK;
}

static int load_inputs(const struct audit_opts *o, struct holdings **h,
		       struct holdings_labels **l)
{
	struct holdings_options ho;
	struct hc_error err;

	holdings_options_init(&ho);
	ho.fund_column = o->fund_column;
	ho.id_column = o->holding_id_column;
	ho.weight_column = o->weight_column;
	ho.value_column = o->market_value_column;
	ho.issuer_column = o->issuer_column;
	ho.allow_short = o->allow_short;
	hc_error_clear(&err);
	if (holdings_load(h, o->holdings, &ho, &err) != HC_OK)
		return cli_fail("audit", &err);
	if (o->sectors && holdings_labels_load(l, o->sectors, 0, &err) != HC_OK)
		return cli_fail("audit", &err);
	return HC_OK;
}

/* Name the failing funds and rules on stderr, so a log shows why the
 * status is 1 even when the report went to a file. */
static void say_failures(const struct audit_result *res)
{
	size_t f;
	int k;

	fprintf(stderr, "holdcount audit: %zu of %zu fund%s fail%s the policy:", res->failed_funds,
		res->nfunds, res->nfunds == 1 ? "" : "s", res->failed_funds == 1 ? "s" : "");
	for (f = 0; f < res->nfunds; f++) {
		const char *sep = " (";
		if (res->funds[f].passed)
			continue;
		fprintf(stderr, " '%s'", res->funds[f].name);
		for (k = 0; k < AUDIT_NRULES; k++)
			if (res->funds[f].failed & (1u << k)) {
				fprintf(stderr, "%s%s", sep, audit_rule_name(1u << k));
				sep = ", ";
			}
		fputc(')', stderr);
	}
	fputc('\n', stderr);
}

int cmd_audit(int argc, char **argv)
{
	struct audit_opts o;
	struct audit_options ao;
	struct cli_args a;
	struct universe *u = NULL;
	struct holdings *h = NULL;
	struct holdings_labels *l = NULL;
	struct audit_result *res = NULL;
	struct report *r = NULL;
	struct moments mo;
	struct cli_progress prog;
	struct hc_error err;
	size_t k;
	int rc;

	memset(&o, 0, sizeof o);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_audit, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	hc_error_clear(&err);
	if ((rc = check_options(&o, &a, &ao)) != HC_OK)
		goto cleanup;
	if ((rc = load_universe(&o.uni, a.positional[0], &u)) != HC_OK)
		goto cleanup;
	if ((rc = load_inputs(&o, &h, &l)) != HC_OK)
		goto cleanup;
	for (k = 0; k < h->nwarnings; k++)
		fprintf(stderr, "holdcount audit: warning: %s\n", h->warnings[k]);
	ao.sectors = l;
	cli_progress_init(&prog, "sampling", "paths", o.out.quiet);
	ao.progress = cli_progress_update;
	ao.progress_ctx = &prog;
	rc = moments_from_universe(&mo, u, &err);
	if (rc == HC_OK)
		rc = audit_run(&res, h, u, &mo, &ao, &err);
	cli_progress_finish(&prog);
	if (rc == HC_OK)
		rc = audit_report(&r, res, h, &err);
	if (rc != HC_OK) {
		rc = cli_fail("audit", &err);
		goto cleanup;
	}
	if ((rc = cli_write_report("audit", &o.out, r)) != HC_OK)
		goto cleanup;
	if (res->failed_funds) {
		say_failures(res);
		rc = HC_EPOLICY;
	}
cleanup:
	report_free(r);
	audit_result_free(res);
	holdings_labels_free(l);
	holdings_free(h);
	universe_free(u);
	cli_args_release(&a);
	return rc;
}
