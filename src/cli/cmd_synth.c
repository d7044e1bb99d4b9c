/*
 * cmd_synth.c - `holdcount synth`: write an invented universe and its
 * sector map from a factor model (src/synth.c, docs/synth.md).
 *
 * The universe goes to --output (standard output by default), the sector
 * map to --sectors-output and the drawn parameters to --parameters-output,
 * each all or nothing through outfile.  A one-line summary of what was
 * written and the model's true averages goes to standard error unless
 * --quiet.
 */
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/memory.h"
#include "holdcount/outfile.h"
#include "holdcount/synth.h"

struct synth_cli {
	size_t securities, periods, sectors;
	const char *sector_names;
	const char *start;
	int frequency;
	double market_vol, sector_vol, idio_vol, idio_spread, beta_spread, df;
	double late_share, early_share, mean_return, mean_spread, floor_return;
	uint64_t seed;
	const char *id_prefix, *sector_prefix;
	const char *output, *sectors_output, *parameters_output;
	int quiet;
};

static const char *const frequency_words[] = { "monthly", "weekly", "daily", NULL };

#define SO(f) offsetof(struct synth_cli, f)
#define STR_(x) #x
#define STR(x) STR_(x)

static const struct cli_option synth_universe_options[] = {
	{ "securities", 0, CLI_COUNT, SO(securities), "M", "number of securities", NULL, STR(SYNTH_DEFAULT_SECURITIES) },
	{ "periods", 0, CLI_COUNT, SO(periods), "T", "number of periods (rows of returns)", NULL, STR(SYNTH_DEFAULT_PERIODS) },
	{ "sectors", 0, CLI_COUNT, SO(sectors), "S", "number of sectors (default: as many as --sector-names, else "
	  STR(SYNTH_DEFAULT_SECTORS) ")", NULL, NULL },
	{ "sector-names", 0, CLI_STRING, SO(sector_names), "LIST", "comma-separated sector labels, one per sector", NULL, NULL },
	{ "sector-prefix", 0, CLI_STRING, SO(sector_prefix), "TEXT", "sector labels are TEXT1, TEXT2, ... without --sector-names",
	  NULL, SYNTH_DEFAULT_SECTOR_PREFIX },
	{ "id-prefix", 0, CLI_STRING, SO(id_prefix), "TEXT", "security ids are TEXT followed by zero-padded numbers",
	  NULL, SYNTH_DEFAULT_ID_PREFIX },
	{ "frequency", 0, CLI_CHOICE, SO(frequency), NULL, "period length (12, 52 or 252 periods a year)",
	  frequency_words, "monthly" },
	{ "start", 0, CLI_STRING, SO(start), "DATE", "first date, YYYY-MM-DD or YYYY-MM (monthly dates are month ends)",
	  NULL, SYNTH_DEFAULT_START },
	{ "seed", 0, CLI_U64, SO(seed), "N", "random seed: the same seed and options give the same bytes", NULL, STR(SYNTH_DEFAULT_SEED) },
	{ NULL }
};

static const struct cli_option synth_model_options[] = {
	{ "market-vol", 0, CLI_FRACTION, SO(market_vol), "SD", "annual sd of the market factor", NULL, STR(SYNTH_DEFAULT_MARKET_VOL) },
	{ "sector-vol", 0, CLI_FRACTION, SO(sector_vol), "SD", "annual sd of each sector factor", NULL, STR(SYNTH_DEFAULT_SECTOR_VOL) },
	{ "specific-vol", 0, CLI_FRACTION, SO(idio_vol), "SD", "median annual security-specific sd", NULL, STR(SYNTH_DEFAULT_IDIO_VOL) },
	{ "specific-spread", 0, CLI_REAL, SO(idio_spread), "X", "sd of the log of the specific sds across securities", NULL, STR(SYNTH_DEFAULT_IDIO_SPREAD) },
	{ "beta-spread", 0, CLI_REAL, SO(beta_spread), "X", "sd of market betas around 1", NULL, STR(SYNTH_DEFAULT_BETA_SPREAD) },
	{ "tail-df", 0, CLI_REAL, SO(df), "NU", "Student t degrees of freedom of the specific noise, above 2 (0 = Gaussian)", NULL, STR(SYNTH_DEFAULT_DF) },
	{ "late-share", 0, CLI_FRACTION, SO(late_share), "P", "probability that a security lists late (leading empty cells)", NULL, STR(SYNTH_DEFAULT_LATE_SHARE) },
	{ "early-share", 0, CLI_FRACTION, SO(early_share), "P", "probability that a security delists early (trailing empty cells)", NULL, STR(SYNTH_DEFAULT_EARLY_SHARE) },
	{ "mean-return", 0, CLI_FRACTION, SO(mean_return), "R", "average annual mean return", NULL, STR(SYNTH_DEFAULT_MEAN_RETURN) },
	{ "mean-spread", 0, CLI_FRACTION, SO(mean_spread), "SD", "sd of annual mean returns across securities", NULL, STR(SYNTH_DEFAULT_MEAN_SPREAD) },
	{ "floor-return", 0, CLI_FRACTION, SO(floor_return), "R", "per-period returns below R are set to R (above -1, below 0)", NULL, STR(SYNTH_DEFAULT_FLOOR_RETURN) },
	{ NULL }
};

static const struct cli_option synth_output_options[] = {
	{ "output", 'o', CLI_STRING, SO(output), "FILE", "write the universe to FILE (- = standard output)", NULL, "-" },
	{ "sectors-output", 0, CLI_STRING, SO(sectors_output), "FILE", "write the sector map (id,sector) to FILE", NULL, NULL },
	{ "parameters-output", 0, CLI_STRING, SO(parameters_output), "FILE",
	  "write the drawn parameters (per period) to FILE", NULL, NULL },
	{ "quiet", 'q', CLI_FLAG, SO(quiet), NULL, "no summary on standard error", NULL, NULL },
	{ NULL }
};

static const struct cli_group synth_universe_group = { "universe options", synth_universe_options };
static const struct cli_group synth_model_group = { "model options (annual figures)", synth_model_options };
static const struct cli_group synth_output_group = { "output options", synth_output_options };

static const struct cli_group_use synth_groups[] = {
	{ &synth_universe_group, 0, NULL, NULL },
	{ &synth_model_group, 0, NULL, NULL },
	{ &synth_output_group, 0, NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_synth = {
	"synth", cmd_synth, "write an invented universe and sector map from a factor model", "",
	"Each return is a security's mean, plus its beta times a market factor, plus its sector's "
	"factor, plus fat-tailed security-specific noise (Student t scaled to unit variance) with "
	"volatilities spread lognormally across securities; some securities list late or delist early "
	"and have empty cells there. The universe is a wide CSV (date, then one column per id); "
	"numbers read back exactly. The summary on standard error gives the model's true average "
	"variance and covariance, to compare with what other commands estimate. See docs/synth.md.",
	0, 0, synth_groups
};

static void synth_cli_init(struct synth_cli *c)
{
	struct synth_options d;

	hc_synth_options_init(&d);
	memset(c, 0, sizeof *c);
	c->securities = d.securities;
	c->periods = d.periods;
	c->sectors = d.sectors;
	c->start = d.start;
	c->frequency = d.frequency;
	c->market_vol = d.market_vol;
	c->sector_vol = d.sector_vol;
	c->idio_vol = d.idio_vol;
	c->idio_spread = d.idio_spread;
	c->beta_spread = d.beta_spread;
	c->df = d.df;
	c->late_share = d.late_share;
	c->early_share = d.early_share;
	c->mean_return = d.mean_return;
	c->mean_spread = d.mean_spread;
	c->floor_return = d.floor_return;
	c->seed = d.seed;
	c->id_prefix = d.id_prefix;
	c->sector_prefix = d.sector_prefix;
}

static void synth_cli_apply(const struct synth_cli *c, struct synth_options *o)
{
	hc_synth_options_init(o);
	o->securities = c->securities;
	o->periods = c->periods;
	o->sectors = c->sectors;
	o->start = c->start;
	o->frequency = c->frequency;
	o->market_vol = c->market_vol;
	o->sector_vol = c->sector_vol;
	o->idio_vol = c->idio_vol;
	o->idio_spread = c->idio_spread;
	o->beta_spread = c->beta_spread;
	o->df = c->df;
	o->late_share = c->late_share;
	o->early_share = c->early_share;
	o->mean_return = c->mean_return;
	o->mean_spread = c->mean_spread;
	o->floor_return = c->floor_return;
	o->seed = c->seed;
	o->id_prefix = c->id_prefix;
	o->sector_prefix = c->sector_prefix;
}

/* Split "A,B,C" into a NULL-terminated array of copies in *out (count in
 * *n).  Empty names are kept so that hc_synth_options_check names them. */
static int split_names(const char *list, char ***out, size_t *n)
{
	size_t k = 1, i = 0;
	const char *p, *q;
	char **v;

	for (p = list; *p; p++)
		k += *p == ',';
	if (!(v = hc_calloc(k + 1, sizeof *v)))
		return -1;
	for (p = list;; p = q + 1) {
		q = strchr(p, ',');
		if (!q)
			q = p + strlen(p);
		if (!(v[i++] = hc_strndup(p, (size_t)(q - p)))) {
			while (i > 0)
				hc_free(v[--i]);
			hc_free(v);
			return -1;
		}
		if (!*q)
			break;
	}
	*out = v;
	*n = k;
	return 0;
}

static void free_names(char **v)
{
	size_t i;

	if (!v)
		return;
	for (i = 0; v[i]; i++)
		hc_free(v[i]);
	hc_free(v);
}

/* Write everything to temporaries, then commit them all (nothing is left
 * half-written: a failure aborts every file not yet committed). */
static int write_all(const struct synth_cli *c, const struct synth_options *opt,
		     size_t *nfloored, struct hc_error *err)
{
	struct outfile uf = { 0 }, sf = { 0 }, pf = { 0 };
	struct synth_model *mo = NULL;
	int rc;

	if ((rc = hc_outfile_open(&uf, c->output, err)) != HC_OK)
		return rc;
	if (c->sectors_output && (rc = hc_outfile_open(&sf, c->sectors_output, err)) != HC_OK)
		goto fail;
	if (c->parameters_output && (rc = hc_outfile_open(&pf, c->parameters_output, err)) != HC_OK)
		goto fail;
	if ((rc = hc_synth_write(opt, uf.fp, sf.fp, nfloored, err)) != HC_OK)
		goto fail;
	if (pf.fp) {
		if ((rc = hc_synth_model_alloc(&mo, opt, err)) != HC_OK ||
		    (rc = hc_synth_write_parameters(mo, pf.fp, err)) != HC_OK)
			goto fail;
	}
	if ((rc = hc_outfile_commit(&uf, err)) != HC_OK ||
	    (sf.fp && (rc = hc_outfile_commit(&sf, err)) != HC_OK) ||
	    (pf.fp && (rc = hc_outfile_commit(&pf, err)) != HC_OK))
		goto fail;
	hc_synth_model_free(mo);
	return HC_OK;
fail:
	hc_synth_model_free(mo);
	if (uf.fp)
		hc_outfile_abort(&uf);
	if (sf.fp)
		hc_outfile_abort(&sf);
	if (pf.fp)
		hc_outfile_abort(&pf);
	return rc;
}

/* What was written, with the true averages of the drawn model (over every
 * security, listed or not) and those the options imply before drawing. */
static void print_summary(const struct synth_cli *c, const struct synth_options *opt, size_t nfloored)
{
	struct synth_truth te, tm;
	struct synth_model *mo = NULL;
	struct hc_error err;
	double p;

	if (hc_synth_truth_expected(opt, &te, &err) != HC_OK || hc_synth_model_alloc(&mo, opt, &err) != HC_OK)
		return;
	if (hc_synth_truth_model(mo, NULL, 0, &tm, &err) != HC_OK) {
		hc_synth_model_free(mo);
		return;
	}
	hc_synth_model_free(mo);
	p = te.periods_per_year;
	fprintf(stderr, "holdcount synth: wrote %zu securities over %zu %s periods to %s\n"
		"  true average variance %.6g and average covariance %.6g a year for the drawn parameters\n"
		"  (%.6g and %.6g expected from the options; annualised by %g periods a year)\n",
		opt->securities, opt->periods, frequency_words[opt->frequency],
		c->output && strcmp(c->output, "-") ? c->output : "standard output",
		tm.average_variance * p, tm.average_covariance * p,
		te.average_variance * p, te.average_covariance * p, p);
	if (nfloored)
		fprintf(stderr, "  %zu returns fell below the floor %g and were set to it\n",
			nfloored, opt->floor_return);
}

int cmd_synth(int argc, char **argv)
{
	struct synth_cli c;
	struct synth_options opt;
	struct hc_error err;
	struct cli_args a;
	char **names = NULL;
	size_t nnames = 0, nfloored = 0;
	int rc;

	synth_cli_init(&c);
	rc = cli_parse(&cli_command_synth, argc, argv, &c, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	synth_cli_apply(&c, &opt);
	if (c.sector_names) {
		if (split_names(c.sector_names, &names, &nnames) < 0) {
			rc = cli_fail("synth", (hc_error(&err, HC_ENOMEM, "out of memory"), &err));
			goto cleanup;
		}
		if (!cli_given(&a, "sectors"))
			opt.sectors = nnames;
		else if (nnames != opt.sectors) {
			rc = cli_usage_error("synth", "--sector-names gives %zu names but --sectors is %zu",
					     nnames, opt.sectors);
			goto cleanup;
		}
		opt.sector_names = (const char *const *)names;
	}
	if ((rc = hc_synth_options_check(&opt, &err)) != HC_OK) {
		rc = cli_usage_error("synth", "%s", err.message);
		goto cleanup;
	}
	if ((rc = write_all(&c, &opt, &nfloored, &err)) != HC_OK) {
		rc = cli_fail("synth", &err);
		goto cleanup;
	}
	if (!c.quiet)
		print_summary(&c, &opt, nfloored);
cleanup:
	free_names(names);
	cli_args_release(&a);
	return rc;
}
