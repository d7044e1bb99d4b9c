/*
 * cmd_formula.c - `holdcount formula`: the exact curve from summary
 * statistics alone.
 */
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"

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
	{ &cli_group_summary, offsetof(struct formula_opts, sum) },
	{ &formula_group, 0 },
	{ &cli_group_output, offsetof(struct formula_opts, out) },
	{ NULL, 0 }
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

int cmd_formula(int argc, char **argv)
{
	struct formula_opts o;
	struct cli_args a;
	int rc;

	memset(&o, 0, sizeof o);
	cli_summary_init(&o.sum);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_formula, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	cli_args_release(&a);
	fprintf(stderr, "holdcount formula: not built yet\n");
	return HC_EUSAGE;
}
