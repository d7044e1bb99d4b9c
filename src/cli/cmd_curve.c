/*
 * cmd_curve.c - `holdcount curve UNIVERSE`: risk by holding count, exact
 * and sampled.
 */
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"

struct curve_opts {
	struct cli_sampling sam;
	struct cli_universe uni;
	struct cli_output out;
};

static const struct cli_group_use curve_groups[] = {
	{ &cli_group_sampling, offsetof(struct curve_opts, sam) },
	{ &cli_group_universe, offsetof(struct curve_opts, uni) },
	{ &cli_group_output, offsetof(struct curve_opts, out) },
	{ NULL, 0 }
};

const struct cli_command cli_command_curve = {
	"curve", cmd_curve,
	"risk by holding count: the exact curve and its spread, and random portfolios to check it",
	"UNIVERSE",
	"For each holding count N: the exact expected variance and its square root, the exact "
	"standard deviation of the variance across random portfolios of N, the exact expected "
	"tracking error against the equal-weight universe and the diversifiable share; then, from "
	"K random equal-weight portfolios per count, the mean variance with its Monte Carlo standard "
	"error, the mean standard deviation, its 5%, 50% and 95% quantiles, and the z-score of the "
	"sampled mean against the exact one. Figures are annualised by the periods per year.",
	1, 1, curve_groups
};

int cmd_curve(int argc, char **argv)
{
	struct curve_opts o;
	struct cli_args a;
	int rc;

	memset(&o, 0, sizeof o);
	cli_sampling_init(&o.sam);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_curve, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	cli_args_release(&a);
	fprintf(stderr, "holdcount curve: not built yet\n");
	return HC_EUSAGE;
}
