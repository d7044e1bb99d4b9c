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
#include <sys/stat.h>

#include "holdcount/analysis.h"
#include "holdcount/audit.h"
#include "holdcount/holdings.h"

/* Both groups are shared by `holdcount audit` and `holdcount report`. */
static const char *const cash_risk_words[] = { "exclude", "zero", NULL };
static const char *const reading_words[] = { "excluded", "capped", NULL };
#define HO(f) offsetof(struct cli_holdings, f)
static const struct cli_option holdings_own[] = {
	{ "holdings", 0, CLI_LIST, HO(holdings), "FILE",
	  "holdings CSV: fund,id,weight or fund,id,value, optionally issuer, type and group; repeat for several "
	  "files (a fund in two files is an error)", NULL, NULL },
	{ "holdings-encoding", 0, CLI_STRING, HO(encoding), "NAME",
	  "the holdings files' text encoding: utf-8 (checked), latin-1 or windows-1252 (transcoded)", NULL, "utf-8" },
	{ "type-column", 0, CLI_STRING, HO(type_column), "NAME",
	  "holdings column with the asset type: security, cash, government security, investment-company share, other",
	  NULL, "type, when present" },
	{ "group-column", 0, CLI_STRING, HO(group_column), "NAME",
	  "holdings column naming the issuer's group of companies (UCITS 20% group limit)", NULL, "group, when present" },
	{ "cash-risk", 0, CLI_CHOICE, HO(cash_risk), NULL,
	  "cash in the risk figures: exclude (risk of the invested assets, renormalised) or zero (risk of net "
	  "assets, cash at zero variance)", cash_risk_words, "exclude" },
	{ "min-covered-weight", 0, CLI_FRACTION, HO(min_covered_weight), "W",
	  "a fund whose risk figures rest on less than W of its invested weight gets the verdict 'insufficient "
	  "data' (exit 10); 0 turns the verdict off", NULL, "95%" },
	{ "benchmark", 0, CLI_STRING, HO(benchmark), "FILE",
	  "benchmark weights CSV id,weight (or id,value): each fund's active share against it", NULL, NULL },
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
	{ "basket-reading", 0, CLI_CHOICE, PO(reading), NULL,
	  "the reading of the 1940 Act and s. 851(b)(3) 5% baskets that decides: excluded (an issuer above 5% "
	  "is left out) or capped (counted up to 5%); the other is shown beside it", reading_words, "excluded" },
	{ NULL, 0, 0, 0, NULL, NULL, NULL, NULL }
};
const struct cli_group cli_group_policy = { "policy options", policy_own };

void cli_holdings_init(struct cli_holdings *ho)
{
	memset(ho, 0, sizeof *ho);
	ho->min_covered_weight = AUDIT_DEFAULT_MIN_COVERED_WEIGHT;
}

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
	if (!(ho->min_covered_weight >= 0 && ho->min_covered_weight <= 1))
		return cli_usage_error(cmd, "--min-covered-weight must be between 0 and 1 (or 100%%), found %g",
				       ho->min_covered_weight);
	hc_audit_options_init(ao);
	ao->reading = po->reading;
	ao->cash_risk = ho->cash_risk;
	ao->min_covered_weight = ho->min_covered_weight;
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

static void holdings_options_from(const struct cli_holdings *o, int encoding, struct holdings_options *ho)
{
	hc_holdings_options_init(ho);
	ho->fund_column = o->fund_column;
	ho->id_column = o->holding_id_column;
	ho->weight_column = o->weight_column;
	ho->value_column = o->market_value_column;
	ho->issuer_column = o->issuer_column;
	ho->type_column = o->type_column;
	ho->group_column = o->group_column;
	ho->encoding = encoding;
	ho->allow_short = o->allow_short;
}

/* Every --holdings file, merged (a fund in two files is an error), and the
 * benchmark into *bench when asked. */
static int load_inputs(const char *cmd, const struct cli_holdings *o, struct holdings **h,
		       struct holdings_labels **l, struct holdings **bench)
{
	struct holdings_options ho;
	struct holdings *more = NULL;
	struct hc_error err;
	int encoding = HOLDINGS_UTF8;
	size_t k;

	/* one file named twice (under any name) would read as every fund in two files */
	for (k = 0; k < o->holdings.n; k++) {
		struct stat a, b;
		size_t j;
		for (j = 0; j < k; j++)
			if (strcmp(o->holdings.v[j], o->holdings.v[k]) == 0 ||
			    (stat(o->holdings.v[j], &a) == 0 && stat(o->holdings.v[k], &b) == 0 && a.st_dev == b.st_dev &&
			     a.st_ino == b.st_ino))
				return cli_usage_error(cmd, "--holdings '%s' and '%s' are the same file; give each file once",
						       o->holdings.v[j], o->holdings.v[k]);
	}
	if (o->encoding && hc_holdings_parse_encoding(o->encoding, &encoding) != 0)
		return cli_usage_error(cmd, "--holdings-encoding expects utf-8, latin-1 or windows-1252, found '%s'",
				       o->encoding);
	holdings_options_from(o, encoding, &ho);
	hc_error_clear(&err);
	for (k = 0; k < o->holdings.n; k++) {
		if (hc_holdings_load(k ? &more : h, o->holdings.v[k], &ho, &err) != HC_OK ||
		    (k && hc_holdings_merge(*h, &more, &err) != HC_OK)) {
			hc_holdings_free(more);
			return cli_fail(cmd, &err);
		}
	}
	for (k = 0; k < (*h)->nwarnings; k++)
		fprintf(stderr, "holdcount %s: warning: %s\n", cmd, (*h)->warnings[k]);
	if (o->sectors && hc_holdings_labels_load(l, o->sectors, 0, &err) != HC_OK)
		return cli_fail(cmd, &err);
	if (o->benchmark) {
		holdings_options_from(o, encoding, &ho);
		ho.fund_column = NULL;
		ho.single_fund = "benchmark";
		ho.allow_short = 0;
		if (hc_holdings_load(bench, o->benchmark, &ho, &err) != HC_OK)
			return cli_fail(cmd, &err);
	}
	return HC_OK;
}

/* A status line names at most this many funds, then says how many more
 * (a nightly log of 3,000 funds keeps one readable line; the report's
 * tables hold every fund). */
#define CLI_AUDIT_NAMES_MAX 10

static void say_more(size_t named, size_t total)
{
	if (total > named)
		fprintf(stderr, ", and %zu more (the funds table's verdict column lists every fund)", total - named);
}

/* One line per fund holding ids the universe lacks, whatever the format,
 * so a script reading the CSV or JSON also hears that the fund's risk
 * figures rest on part of it (the ids themselves are in the "missing"
 * table).  Like the weight-sum warning it is not progress, so --quiet
 * (which silences progress) leaves it. */
void cli_audit_say_missing(const char *cmd, const struct audit_result *res)
{
	size_t f, said = 0, more = 0;

	for (f = 0; f < res->nfunds; f++) {
		const struct audit_fund *af = &res->funds[f];
		size_t n = af->nmissing;
		if (!n)
			continue;
		if (said == CLI_AUDIT_NAMES_MAX) {
			more++;
			continue;
		}
		said++;
		if (af->risk_known || af->risk_unpaired)
			fprintf(stderr, "holdcount %s: warning: %zu id%s of '%s' %s not in the universe (carrying "
				"%.3g%% of its weight); %s\n", cmd, n, n == 1 ? "" : "s",
				af->name, n == 1 ? "is" : "are", 100 * af->missing_weight,
				af->risk_known ? "its risk figures use the rest" : "its risk figures are left out for the reason below");
		else if (n == 1)
			fprintf(stderr, "holdcount %s: warning: the only id of '%s' is not in the universe; it has "
				"no risk figures\n", cmd, af->name);
		else
			fprintf(stderr, "holdcount %s: warning: all %zu ids of '%s' are not in the universe; it has "
				"no risk figures\n", cmd, n, af->name);
	}
	if (more)
		fprintf(stderr, "holdcount %s: warning: %zu more fund%s hold%s ids not in the universe (the missing "
			"table lists every such id)\n", cmd, more, more == 1 ? "" : "s", more == 1 ? "s" : "");
	/* a history read period by period: a fund two of whose holdings never
	 * overlap enough has no risk figures, the others go on */
	for (f = said = more = 0; f < res->nfunds; f++) {
		const struct audit_fund *af = &res->funds[f];
		if (!af->risk_unpaired)
			continue;
		if (said == CLI_AUDIT_NAMES_MAX) {
			more++;
			continue;
		}
		said++;
		fprintf(stderr, "holdcount %s: warning: '%s' has no risk figures: %s\n", cmd, af->name,
			af->risk_reason ? af->risk_reason : "two of its holdings share too few periods");
	}
	if (more)
		fprintf(stderr, "holdcount %s: warning: %zu more fund%s ha%s no risk figures for holdings sharing too "
			"few periods (the funds table's risk_reason says which)\n", cmd, more, more == 1 ? "" : "s",
			more == 1 ? "s" : "ve");
}

/* Name the failing funds and rules on stderr, so a log shows why the
 * status is 1 even when the report went to a file. */
void cli_audit_say_failures(const char *cmd, const struct audit_result *res)
{
	size_t f, named = 0;
	int k;

	fprintf(stderr, "holdcount %s: %zu of %zu fund%s fail%s the policy:", cmd, res->failed_funds,
		res->nfunds, res->nfunds == 1 ? "" : "s", res->failed_funds == 1 ? "s" : "");
	for (f = 0; f < res->nfunds; f++) {
		const char *sep = " (";
		if (res->funds[f].passed)
			continue;
		if (named == CLI_AUDIT_NAMES_MAX)
			break;
		named++;
		fprintf(stderr, " '%s'", res->funds[f].name);
		for (k = 0; k < AUDIT_NRULES; k++)
			if (res->funds[f].failed & (1u << k)) {
				fprintf(stderr, "%s%s", sep, hc_audit_rule_name(1u << k));
				sep = ", ";
			}
		fputc(')', stderr);
	}
	say_more(named, res->failed_funds);
	fputc('\n', stderr);
}

int cli_audit_status(const char *cmd, const struct audit_result *res)
{
	size_t f, named = 0;
	const char *sep = " ";

	if (res->failed_funds) {
		cli_audit_say_failures(cmd, res);
		return HC_EPOLICY;
	}
	if (!res->insufficient_funds)
		return HC_OK;
	fprintf(stderr, "holdcount %s: %zu of %zu fund%s ha%s insufficient data (risk figures on less than %g%% of "
		"the invested weight):", cmd, res->insufficient_funds, res->nfunds, res->nfunds == 1 ? "" : "s",
		res->insufficient_funds == 1 ? "s" : "ve", 100 * res->min_covered_weight);
	for (f = 0; f < res->nfunds; f++) {
		const struct audit_fund *af = &res->funds[f];
		if (af->verdict != AUDIT_VERDICT_INSUFFICIENT)
			continue;
		if (named++ == CLI_AUDIT_NAMES_MAX)
			break;
		fprintf(stderr, "%s'%s' (%.4g%% covered, %zu of %zu holdings)", sep, af->name,
			isnan(af->covered_weight) ? 0.0 : 100 * af->covered_weight, af->risk_holdings, af->holdings);
		sep = ", ";
	}
	say_more(named > CLI_AUDIT_NAMES_MAX ? CLI_AUDIT_NAMES_MAX : named, res->insufficient_funds);
	fputc('\n', stderr);
	return HC_EINSUFFICIENT;
}

int cli_audit_load(const char *cmd, const struct cli_holdings *ho, const struct cli_policy *po,
		   const struct cli_sampling *sam, struct audit_options *ao, struct holdings **h,
		   struct holdings_labels **labels, struct holdings **bench)
{
	int rc;

	if ((rc = audit_options_from(cmd, ho, po, sam, ao)) != HC_OK ||
	    (rc = load_inputs(cmd, ho, h, labels, bench)) != HC_OK)
		return rc;
	ao->sectors = *labels;
	ao->benchmark = *bench ? &(*bench)->funds[0] : NULL;
	return HC_OK;
}
