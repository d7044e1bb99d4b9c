/*
 * cli_audit.c - the holdings and policy options shared by `audit` and
 * `report`: their groups, the library's audit options from them, loading
 * the holdings, and the audit's messages on stderr.
 */
#include "cli.h"

#include <limits.h>
#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "holdcount/analysis.h"
#include "holdcount/audit.h"
#include "holdcount/holdings.h"

/* Both groups are shared by `holdcount audit` and `holdcount report`. */
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
void cli_audit_say_missing(const char *cmd, const struct audit_result *res)
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

int cli_audit_load(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
		   const struct cli_sampling *sam, struct audit_options *ao, struct holdings **h,
		   struct holdings_labels **labels)
{
	int rc;

	if ((rc = audit_options_from(cmd, ho, po, sam, ao)) != HC_OK ||
	    (rc = load_inputs(cmd, ho, h, labels)) != HC_OK)
		return rc;
	ao->sectors = *labels;
	return HC_OK;
}
