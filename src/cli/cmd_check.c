/*
 * cmd_check.c - `holdcount check UNIVERSE`: the data checks alone
 * (datacheck.h), every finding with its security, date and cell.
 */
#include <math.h>
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

static void weekday_text(unsigned mask, char *buf, size_t size)
{
	static const char *const names[7] = { "Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun" };
	size_t k, used = 0;

	buf[0] = '\0';
	for (k = 0; k < 7; k++)
		if (mask & (1u << k))
			used += (size_t)snprintf(buf + used, used < size ? size - used : 0, "%s%s",
						 used ? " " : "", names[k]);
}

static int build(struct report *r, const struct universe *u, const struct datacheck_result *d)
{
	struct report_table *t;
	char text[320], date[16];
	size_t j;
	int k;

	weekday_text(d->weekdays, text, sizeof text);
	if (hc_report_add_text(r, "source", "source", u->source ? u->source : "") ||
	    hc_report_add_int(r, "securities", "securities", (long long)u->m) ||
	    hc_report_add_int(r, "periods", "periods", (long long)u->t) ||
	    hc_report_add_text(r, "weekdays", "weekdays of the dates", text) ||
	    hc_report_add_real(r, "days_a_week", "days a week (daily data)", d->days_a_week > 0 ? d->days_a_week : NAN,
			       REPORT_STYLE_PLAIN) ||
	    hc_report_add_bool(r, "month_end", "every date a month end", d->month_end) ||
	    hc_report_add_real(r, "calendar_periods_per_year", "periods a year, counted from the dates",
			       d->calendar_periods_per_year, REPORT_STYLE_FIXED4) ||
	    hc_report_add_real(r, "periods_per_year", "periods per year used", u->periods_per_year,
			       REPORT_STYLE_PLAIN) ||
	    hc_report_add_int(r, "finding_count", "findings", (long long)d->nfindings))
		return HC_ENOMEM;
	for (k = 0; k < DATACHECK_NKINDS; k++) {
		char key[32], title[48];

		snprintf(key, sizeof key, "count_%s", hc_datacheck_name(k));
		for (char *c = key; *c; c++)
			if (*c == '-')
				*c = '_';
		snprintf(title, sizeof title, "findings: %s", hc_datacheck_name(k));
		if (hc_report_add_int(r, key, title, (long long)d->count[k]))
			return HC_ENOMEM;
	}
	t = hc_report_add_table(r, "findings", "findings");
	if (!t || hc_report_table_add_column(t, "security", "security", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "date", "date", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "check", "check", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "value", "cell", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "finding", "finding", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	for (j = 0; j < d->nfindings; j++) {
		const struct datacheck_finding *f = &d->findings[j];

		hc_universe_format_date(u->dates[f->period], date);
		hc_datacheck_describe(f, u, text, sizeof text);
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, j, 0, u->ids[f->security]) ||
		    hc_report_table_set_text(t, j, 1, f->kind <= 1 ? "" : date) ||
		    hc_report_table_set_text(t, j, 2, hc_datacheck_name(f->kind)) ||
		    hc_report_table_set_text(t, j, 4, text))
			return HC_ENOMEM;
		hc_report_table_set_real(t, j, 3, f->value);
	}
	return hc_report_add_cautions(r);
}

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
	r = hc_report_alloc();
	if (!r || build(r, u, d)) {
		hc_error(&err, HC_ENOMEM, "out of memory building the report");
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
