/*
 * cmd_check.c - `holdcount check UNIVERSE`: the data checks alone
 * (datacheck.h), every finding with its security, date and cell.
 */
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "holdcount/datacheck.h"
#include "holdcount/universe.h"

struct check_opts {
	struct cli_universe uni;
	struct cli_output out;
};

static const struct cli_omit check_omit[] = {
	{ "covariance", "a covariance matrix has no cells to check; give a return history" },
	{ "repair-psd", "the checks read the cells, not a covariance matrix" },
	{ NULL, NULL }
};

static const struct cli_group_use check_groups[] = {
	{ &cli_group_universe, offsetof(struct check_opts, uni), check_omit, NULL },
	{ &cli_group_output, offsetof(struct check_opts, out), NULL, NULL },
	{ NULL, 0, NULL, NULL }
};

const struct cli_command cli_command_check = {
	"check", cmd_check,
	"the data checks every command runs first, with every finding",
	"UNIVERSE",
	"Reads the history as the other commands do and lists what looks wrong: securities "
	"whose cells look like prices or percents, returns of -100% or worse, split-like jumps "
	"(near -50%, -66.7%, -75%, -80%, -90%, +100%, +200%, +300%, +400% or +900%, far from the "
	"security's other returns; reversed within a few periods or not), runs of returns of "
	"exactly 0 (stale prices) and isolated spikes; and the calendar: the weekdays used, days a "
	"week, month-end dates and the periods a year the dates themselves show. Each finding names "
	"the security, the date and the cell. Every other command prints the count of findings as a "
	"warning; with --strict-data any finding is an error (exit 3).",
	1, 1, check_groups
};

int cmd_check(int argc, char **argv)
{
	struct check_opts o;
	struct cli_args a;
	struct universe *u = NULL;
	struct datacheck_result *d = NULL;
	struct report *r = NULL;
	struct hc_error err;
	int rc, strict;

	memset(&o, 0, sizeof o);
	cli_universe_init(&o.uni);
	cli_output_init(&o.out);
	rc = cli_parse(&cli_command_check, argc, argv, &o, &a);
	if (rc != HC_OK)
		return cli_parse_status(rc);
	/* the findings are this command's output, not a reason to stop */
	strict = o.uni.strict;
	o.uni.strict = 0;
	o.uni.no_check = 1;
	if ((rc = cli_load_universe("check", &o.uni, a.positional[0], &u)))
		goto cleanup;
	hc_error_clear(&err);
	if (hc_datacheck_run(&d, u, &err)) {
		rc = cli_fail("check", &err);
		goto cleanup;
	}
	if (hc_datacheck_report(&r, u, d, &err)) {
		rc = cli_fail("check", &err);
		goto cleanup;
	}
	rc = cli_write_report("check", &o.out, r);
	if (rc == HC_OK && strict && d->nfindings) {
		fprintf(stderr, "holdcount check: %zu finding%s under --strict-data\n", d->nfindings,
			d->nfindings == 1 ? "" : "s");
		rc = HC_EDATA;
	}
cleanup:
	hc_report_free(r);
	hc_datacheck_free(d);
	hc_universe_free(u);
	cli_args_release(&a);
	return rc;
}
