/*
 * compare.c - two report summaries side by side: what changed.
 *
 * Both summaries are parsed with cJSON and walked by key, never by
 * position, so that a figure one run has and the other lacks (an older
 * holdcount, a run without holdings) shows as "absent" rather than being
 * paired with the wrong one.  Rows go into one long table (section, item,
 * old, new, change), which reads the same in text, CSV and JSON; a changed
 * policy verdict comes first, since that is what a committee acts on.
 */
#include "holdcount/compare.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>

#include <cjson/cJSON.h>

#include "holdcount/memory.h"

/* Largest summary.json read (a summary of 10 000 securities is ~2 MB). */
#define COMPARE_MAX_BYTES (256u << 20)

enum { COL_SECTION, COL_ITEM, COL_OLD, COL_NEW, COL_CHANGE, COL_CHANGED, COL_N };

struct cmp {
	const cJSON *old, *new;
	struct report *rep;
	struct report_table *t;
	size_t changed, verdicts;
};

static void *json_malloc(size_t size)
{
	return hc_malloc(size);
}

static void json_free(void *p)
{
	hc_free(p);
}

static const cJSON *get(const cJSON *obj, const char *key)
{
	return obj ? cJSON_GetObjectItemCaseSensitive(obj, key) : NULL;
}

/* The row of array arr (of objects) whose key holds the string name. */
static const cJSON *find_row(const cJSON *arr, const char *key, const char *name)
{
	const cJSON *row;

	cJSON_ArrayForEach(row, arr) {
		const cJSON *v = get(row, key);
		if (cJSON_IsString(v) && strcmp(v->valuestring, name) == 0)
			return row;
	}
	return NULL;
}

/* Put a JSON value into a cell in the report's own kinds. */
static int set_cell(struct report_table *t, size_t row, size_t col, const cJSON *v, int style)
{
	int rc = HC_OK;

	if (cJSON_IsNumber(v)) {
		if (v->valuedouble == floor(v->valuedouble) && fabs(v->valuedouble) < 9e15 && style == REPORT_STYLE_PLAIN)
			hc_report_table_set_int(t, row, col, (long long)v->valuedouble);
		else
			hc_report_table_set_real(t, row, col, v->valuedouble);
	} else if (cJSON_IsBool(v)) {
		hc_report_table_set_bool(t, row, col, cJSON_IsTrue(v));
	} else if (cJSON_IsString(v)) {
		rc = hc_report_table_set_text(t, row, col, v->valuestring);
	} else {
		rc = hc_report_table_set_none(t, row, col, v ? "none" : "absent");
	}
	t->cells[row * t->ncols + col].style = style;
	return rc;
}

static int same(const cJSON *a, const cJSON *b)
{
	if (!a || !b)
		return !a && !b;
	return cJSON_Compare(a, b, 1);
}

/* One compared figure: a row of "changes". */
static int add(struct cmp *c, const char *section, const char *item, const cJSON *a, const cJSON *b, int style)
{
	struct report_table *t = c->t;
	size_t row;
	int changed = !same(a, b);

	if (hc_report_table_add_row(t))
		return HC_ENOMEM;
	row = t->nrows - 1;
	if (hc_report_table_set_text(t, row, COL_SECTION, section) || hc_report_table_set_text(t, row, COL_ITEM, item) ||
	    set_cell(t, row, COL_OLD, a, style) || set_cell(t, row, COL_NEW, b, style))
		return HC_ENOMEM;
	if (cJSON_IsNumber(a) && cJSON_IsNumber(b)) {
		hc_report_table_set_real(t, row, COL_CHANGE, b->valuedouble - a->valuedouble);
		t->cells[row * t->ncols + COL_CHANGE].style = style == REPORT_STYLE_PLAIN ? REPORT_STYLE_PLAIN : style;
	}
	hc_report_table_set_bool(t, row, COL_CHANGED, changed);
	c->changed += (size_t)changed;
	return HC_OK;
}

/* A figure of a section object (universe, enough, ...). */
static int add_key(struct cmp *c, const char *section, const char *obj, const char *key, const char *item, int style)
{
	return add(c, section, item, get(get(c->old, obj), key), get(get(c->new, obj), key), style);
}

/* ---- verdicts ---------------------------------------------------------------- */

static const cJSON *funds_of(const cJSON *root)
{
	return get(get(root, "audit"), "funds");
}

/* Each fund of either summary, once: calls fn on its name. */
static int each_fund(struct cmp *c, int (*fn)(struct cmp *, const char *, int), int arg)
{
	const cJSON *row, *name;
	int rc;

	cJSON_ArrayForEach(row, funds_of(c->old)) {
		name = get(row, "fund");
		if (cJSON_IsString(name) && (rc = fn(c, name->valuestring, arg)))
			return rc;
	}
	cJSON_ArrayForEach(row, funds_of(c->new)) {
		name = get(row, "fund");
		if (cJSON_IsString(name) && !find_row(funds_of(c->old), "fund", name->valuestring) &&
		    (rc = fn(c, name->valuestring, arg)))
			return rc;
	}
	return HC_OK;
}

/* The fund's verdict: whether it passes the policy and, when the audit
 * gives one, its verdict in words (pass, fail, insufficient data); with
 * want_changed 1 only changed ones, with 0 only unchanged ones, so that
 * changed verdicts come first. */
static int verdict(struct cmp *c, const char *name, int want_changed)
{
	const cJSON *fa = find_row(funds_of(c->old), "fund", name), *fb = find_row(funds_of(c->new), "fund", name);
	const cJSON *a = get(fa, "passed"), *b = get(fb, "passed"), *va = get(fa, "verdict"), *vb = get(fb, "verdict");
	char item[256];
	int changed = !same(a, b) || !same(va, vb);

	if (changed != want_changed)
		return HC_OK;
	c->verdicts += (size_t)want_changed;
	snprintf(item, sizeof item, "%s passes the policy", name);
	if (add(c, "verdict", item, a, b, REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	snprintf(item, sizeof item, "%s: verdict", name);
	return va || vb ? add(c, "verdict", item, va, vb, REPORT_STYLE_PLAIN) : HC_OK;
}

static int add_verdicts(struct cmp *c)
{
	int rc;

	if ((rc = each_fund(c, verdict, 1)) || (rc = each_fund(c, verdict, 0)))
		return rc;
	if ((rc = add_key(c, "verdict", "audit", "failed_funds", "funds failing the policy", REPORT_STYLE_PLAIN)))
		return rc;
	/* an audit that judges coverage counts the funds it could not judge */
	if (!get(get(c->old, "audit"), "insufficient_funds") && !get(get(c->new, "audit"), "insufficient_funds"))
		return HC_OK;
	return add_key(c, "verdict", "audit", "insufficient_funds", "funds with insufficient data", REPORT_STYLE_PLAIN);
}

/* ---- the recommendation ------------------------------------------------------- */

/*
 * The count the report leads with: the enough report's recommendation when
 * it has one (fields "recommended_rule" and "recommended_count", with
 * "recommended_p05"/"recommended_p95"), else the near-floor rule's row, the
 * first rule of the report.
 */
static void recommendation(const cJSON *root, const cJSON **rule, const cJSON **count, const cJSON **p05,
			   const cJSON **p95)
{
	const cJSON *e = get(root, "enough"), *row;

	if (get(e, "recommended_count")) {
		*rule = get(e, "recommended_rule");
		*count = get(e, "recommended_count");
		*p05 = get(e, "recommended_p05");
		*p95 = get(e, "recommended_p95");
		return;
	}
	row = find_row(get(e, "rules"), "rule", "near-floor");
	if (!row)
		row = cJSON_GetArrayItem(get(e, "rules"), 0);
	*rule = get(row, "rule");
	*count = get(row, "count");
	*p05 = get(row, "count_p05");
	*p95 = get(row, "count_p95");
}

static int add_recommendation(struct cmp *c)
{
	const cJSON *ra, *ca, *la, *ha, *rb, *cb, *lb, *hb;

	recommendation(c->old, &ra, &ca, &la, &ha);
	recommendation(c->new, &rb, &cb, &lb, &hb);
	if (add(c, "recommendation", "rule", ra, rb, REPORT_STYLE_PLAIN) ||
	    add(c, "recommendation", "count", ca, cb, REPORT_STYLE_PLAIN) ||
	    add(c, "recommendation", "interval 5%", la, lb, REPORT_STYLE_PLAIN) ||
	    add(c, "recommendation", "interval 95%", ha, hb, REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	return HC_OK;
}

/* ---- the universe ------------------------------------------------------------- */

static int add_universe(struct cmp *c)
{
	static const struct {
		const char *key, *item;
		int style;
	} keys[] = {
		{ "first_date", "first period", REPORT_STYLE_PLAIN },
		{ "last_date", "last period", REPORT_STYLE_PLAIN },
		{ "periods", "periods", REPORT_STYLE_PLAIN },
		{ "securities_read", "securities read", REPORT_STYLE_PLAIN },
		{ "securities", "securities kept", REPORT_STYLE_PLAIN },
		{ "securities_dropped", "securities dropped", REPORT_STYLE_PLAIN },
		{ "average_variance", "average variance a year", REPORT_STYLE_FIXED4 },
		{ "average_covariance", "average covariance a year", REPORT_STYLE_FIXED4 },
		{ "average_correlation", "average correlation", REPORT_STYLE_FIXED4 },
		{ "floor_sd", "floor sd a year", REPORT_STYLE_PERCENT },
		{ "universe_sd", "equal-weight universe sd a year", REPORT_STYLE_PERCENT },
	};
	size_t i;

	for (i = 0; i < sizeof keys / sizeof keys[0]; i++)
		if (add_key(c, "universe", "universe", keys[i].key, keys[i].item, keys[i].style))
			return HC_ENOMEM;
	return HC_OK;
}

static const cJSON *kept_of(const cJSON *root)
{
	return get(get(root, "universe"), "kept");
}

/* Ids in a's kept list and not in b's, as rows of t marked word. */
static int one_side(struct report_table *t, const cJSON *a, const cJSON *b, const char *word, size_t *n)
{
	const cJSON *row, *id;

	cJSON_ArrayForEach(row, a) {
		id = get(row, "id");
		if (!cJSON_IsString(id) || find_row(b, "id", id->valuestring))
			continue;
		if (hc_report_table_add_row(t) || hc_report_table_set_text(t, t->nrows - 1, 0, id->valuestring) ||
		    hc_report_table_set_text(t, t->nrows - 1, 1, word))
			return HC_ENOMEM;
		(*n)++;
	}
	return HC_OK;
}

/* The securities in and out, when both summaries list the kept ones. */
static int add_securities(struct cmp *c)
{
	const cJSON *a = kept_of(c->old), *b = kept_of(c->new);
	struct report_table *t;
	size_t in = 0, out = 0;
	cJSON *ni, *no;
	int rc;

	if (!cJSON_IsArray(a) || !cJSON_IsArray(b))
		return hc_report_add_note(c->rep, "securities in and out: a summary does not list its kept securities "
					  "(an earlier holdcount wrote it), so only their numbers are compared");
	t = hc_report_add_table(c->rep, "securities", "securities in and out");
	if (!t || hc_report_table_add_column(t, "id", "id", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(t, "change", "change", REPORT_STYLE_PLAIN) ||
	    one_side(t, b, a, "in", &in) || one_side(t, a, b, "out", &out))
		return HC_ENOMEM;
	ni = cJSON_CreateNumber((double)in);
	no = cJSON_CreateNumber((double)out);
	if (!ni || !no) {
		cJSON_Delete(ni);
		cJSON_Delete(no);
		return HC_ENOMEM;
	}
	/* old 0, new the count: the change column then reads +n */
	{
		cJSON *zero = cJSON_CreateNumber(0.0);
		rc = zero ? add(c, "universe", "securities in (kept now, not before)", zero, ni, REPORT_STYLE_PLAIN) : HC_ENOMEM;
		rc = rc ? rc : add(c, "universe", "securities out (kept before, not now)", zero, no, REPORT_STYLE_PLAIN);
		cJSON_Delete(zero);
	}
	cJSON_Delete(ni);
	cJSON_Delete(no);
	return rc;
}

/* ---- rules and funds ---------------------------------------------------------- */

static int add_rules(struct cmp *c)
{
	static const char *const keys[][2] = {
		{ "count", "count" }, { "count_p05", "interval 5%" }, { "count_p95", "interval 95%" }, { "met", "met" },
	};
	const cJSON *ra = get(get(c->old, "enough"), "rules"), *rb = get(get(c->new, "enough"), "rules"), *row, *name;
	const cJSON *side;
	char item[160];
	size_t k;
	int pass;

	for (pass = 0; pass < 2; pass++) {
		side = pass ? rb : ra;
		cJSON_ArrayForEach(row, side) {
			name = get(row, "rule");
			if (!cJSON_IsString(name) || (pass && find_row(ra, "rule", name->valuestring)))
				continue;
			for (k = 0; k < sizeof keys / sizeof keys[0]; k++) {
				snprintf(item, sizeof item, "%s: %s", name->valuestring, keys[k][1]);
				if (add(c, "rules", item, get(find_row(ra, "rule", name->valuestring), keys[k][0]),
					get(find_row(rb, "rule", name->valuestring), keys[k][0]), REPORT_STYLE_PLAIN))
					return HC_ENOMEM;
			}
		}
	}
	return HC_OK;
}

/* A fund's figures, its coverage among them (ids missing from the universe
 * and the weight they carry; any coverage field a summary has). */
static int fund_figures(struct cmp *c, const char *name, int unused)
{
	static const struct {
		const char *key, *item;
		int style;
	} keys[] = {
		{ "holdings", "holdings", REPORT_STYLE_PLAIN },
		{ "effective_holdings", "effective holdings 1/HHI", REPORT_STYLE_FIXED2 },
		{ "max_weight", "largest weight", REPORT_STYLE_PERCENT },
		{ "sd", "sd a year", REPORT_STYLE_PERCENT },
		{ "sd_percentile", "sd percentile", REPORT_STYLE_PERCENT },
		{ "missing_count", "holdings missing from the universe", REPORT_STYLE_PLAIN },
		{ "missing_weight", "weight missing from the universe", REPORT_STYLE_PERCENT },
		{ "covered_weight", "weight its risk uses (coverage)", REPORT_STYLE_PERCENT },
		{ "risk_holdings", "holdings its risk uses", REPORT_STYLE_PLAIN },
		/* the statute screens and, when the audit gives them, both
		 * readings of the 5% baskets (a position above 5% counted up to
		 * 5%, or left out) */
		{ "ucits", "UCITS Art. 52 screen", REPORT_STYLE_PLAIN },
		{ "1940act", "1940 Act 5(b)(1) screen", REPORT_STYLE_PLAIN },
		{ "basket_1940act_capped", "1940 Act basket, positions counted up to 5%", REPORT_STYLE_PERCENT },
		{ "basket_1940act_excluded", "1940 Act basket, positions above 5% left out", REPORT_STYLE_PERCENT },
		{ "ric", "IRC 851(b)(3) screen", REPORT_STYLE_PLAIN },
		{ "basket_ric_capped", "IRC 851 basket, positions counted up to 5%", REPORT_STYLE_PERCENT },
		{ "basket_ric_excluded", "IRC 851 basket, positions above 5% left out", REPORT_STYLE_PERCENT },
	};
	const cJSON *a = find_row(funds_of(c->old), "fund", name), *b = find_row(funds_of(c->new), "fund", name);
	char item[320];
	size_t k;

	(void)unused;
	for (k = 0; k < sizeof keys / sizeof keys[0]; k++) {
		if (!get(a, keys[k].key) && !get(b, keys[k].key) && k >= 7)
			continue;   /* coverage and statute fields neither summary has */
		snprintf(item, sizeof item, "%s: %s", name, keys[k].item);
		if (add(c, "funds", item, get(a, keys[k].key), get(b, keys[k].key), keys[k].style))
			return HC_ENOMEM;
	}
	return HC_OK;
}

/* ---- the result ---------------------------------------------------------------- */

static void period_of(const cJSON *root, char *buf, size_t size)
{
	const cJSON *a = get(get(root, "universe"), "first_date"), *b = get(get(root, "universe"), "last_date");

	snprintf(buf, size, "%s to %s", cJSON_IsString(a) ? a->valuestring : "?", cJSON_IsString(b) ? b->valuestring : "?");
}

static int headline(struct cmp *c)
{
	const cJSON *ra, *ca, *la, *ha, *rb, *cb, *lb, *hb;
	char buf[512];

	recommendation(c->old, &ra, &ca, &la, &ha);
	recommendation(c->new, &rb, &cb, &lb, &hb);
	if (c->verdicts)
		snprintf(buf, sizeof buf, "%zu fund%s changed policy verdict: see the first rows", c->verdicts,
			 c->verdicts == 1 ? "" : "s");
	else if (cJSON_IsNumber(ca) && cJSON_IsNumber(cb) && same(ra, rb))
	{
		char to[32] = "";
		if (ca->valuedouble != cb->valuedouble)
			snprintf(to, sizeof to, " to %.0f", cb->valuedouble);
		snprintf(buf, sizeof buf, "No fund changed policy verdict; the %s count %s %.0f%s",
			 cJSON_IsString(rb) ? rb->valuestring : "leading",
			 ca->valuedouble == cb->valuedouble ? "stays at" : "went from", ca->valuedouble, to);
	}
	else
		snprintf(buf, sizeof buf, "No fund changed policy verdict");
	return hc_report_add_text(c->rep, "headline", "headline", buf);
}

static int fill(struct cmp *c, const char *old_label, const char *new_label)
{
	char pa[64], pb[64];
	int rc;

	period_of(c->old, pa, sizeof pa);
	period_of(c->new, pb, sizeof pb);
	c->t = hc_report_add_table(c->rep, "changes", "what changed");
	if (!c->t || hc_report_table_add_column(c->t, "section", "section", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(c->t, "item", "figure", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(c->t, "old", "old", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(c->t, "new", "new", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(c->t, "change", "change", REPORT_STYLE_PLAIN) ||
	    hc_report_table_add_column(c->t, "changed", "changed", REPORT_STYLE_PLAIN))
		return HC_ENOMEM;
	if ((rc = add_verdicts(c)) || (rc = add_recommendation(c)) || (rc = add_universe(c)) ||
	    (rc = add_securities(c)) || (rc = add_rules(c)) || (rc = each_fund(c, fund_figures, 0)))
		return rc;
	if (hc_report_add_text(c->rep, "old", "old", old_label) || hc_report_add_text(c->rep, "new", "new", new_label) ||
	    hc_report_add_text(c->rep, "old_period", "old period", pa) ||
	    hc_report_add_text(c->rep, "new_period", "new period", pb) ||
	    hc_report_add_int(c->rep, "verdict_changes", "funds whose verdict changed", (long long)c->verdicts) ||
	    hc_report_add_int(c->rep, "changed_figures", "figures that changed", (long long)c->changed) ||
	    headline(c))
		return HC_ENOMEM;
	if (hc_report_add_note(c->rep, "a change is new minus old; both are historical estimates with their own "
			       "estimation error, so a count that moves within the rules' intervals may be noise") ||
	    hc_report_add_cautions(c->rep))
		return HC_ENOMEM;
	return HC_OK;
}

static int parse(cJSON **root, const char *text, const char *label, struct hc_error *err)
{
	*root = cJSON_Parse(text);
	if (!*root) {
		const char *at = cJSON_GetErrorPtr();
		/* cJSON returns NULL alike for bad syntax and for a failed
		 * allocation; its tree takes a few times the text's size, so
		 * when that much cannot be had, say out of memory rather than
		 * blame the file. */
		void *probe = hc_malloc(4 * strlen(text) + 4096);
		if (!probe)
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", label);
		hc_free(probe);
		return hc_error(err, HC_EDATA, "'%s': not JSON (the parse stops at '%.20s')", label, at ? at : "");
	}
	if (!cJSON_IsString(get(*root, "holdcount_version")) || !cJSON_IsObject(get(*root, "universe")))
		return hc_error(err, HC_EDATA, "'%s': not a holdcount report summary (no \"holdcount_version\" and "
				"\"universe\")", label);
	return HC_OK;
}

int hc_compare_summaries(struct report **out, const char *old_text, const char *old_label, const char *new_text,
			 const char *new_label, struct hc_error *err)
{
	cJSON_Hooks hooks = { json_malloc, json_free };
	cJSON *a = NULL, *b = NULL;
	struct cmp c;
	int rc;

	*out = NULL;
	cJSON_InitHooks(&hooks);
	memset(&c, 0, sizeof c);
	if ((rc = parse(&a, old_text, old_label, err)) || (rc = parse(&b, new_text, new_label, err)))
		goto cleanup;
	c.old = a;
	c.new = b;
	if (!(c.rep = hc_report_alloc()) || fill(&c, old_label, new_label)) {
		rc = hc_error(err, HC_ENOMEM, "out of memory comparing '%s' with '%s'", old_label, new_label);
		goto cleanup;
	}
	*out = c.rep;
	c.rep = NULL;
cleanup:
	hc_report_free(c.rep);
	cJSON_Delete(a);
	cJSON_Delete(b);
	return rc;
}

int hc_compare_read(char **text, const char *path, struct hc_error *err)
{
	char file[4096];
	struct stat st;
	size_t len = 0, got;
	char *buf = NULL;
	FILE *fp;

	*text = NULL;
	if (stat(path, &st) == 0 && S_ISDIR(st.st_mode))
		snprintf(file, sizeof file, "%s/summary.json", path);
	else
		snprintf(file, sizeof file, "%s", path);
	fp = fopen(file, "rb");
	if (!fp)
		return hc_error(err, HC_EIO, "cannot read '%s': %s", file, strerror(errno));
	for (;;) {
		char *nb = hc_realloc(buf, len + 65536 + 1);
		if (!nb) {
			fclose(fp);
			hc_free(buf);
			return hc_error(err, HC_ENOMEM, "out of memory reading '%s'", file);
		}
		buf = nb;
		got = fread(buf + len, 1, 65536, fp);
		len += got;
		if (got < 65536 || len > COMPARE_MAX_BYTES)
			break;
	}
	if (ferror(fp) || len > COMPARE_MAX_BYTES) {
		int e = ferror(fp) ? errno : EFBIG;
		fclose(fp);
		hc_free(buf);
		return hc_error(err, HC_EIO, "cannot read '%s': %s", file, strerror(e));
	}
	fclose(fp);
	buf[len] = '\0';
	*text = buf;
	return HC_OK;
}

int hc_compare_paths(struct report **out, const char *old_path, const char *new_path, struct hc_error *err)
{
	char *a = NULL, *b = NULL;
	int rc;

	*out = NULL;
	if ((rc = hc_compare_read(&a, old_path, err)) == HC_OK && (rc = hc_compare_read(&b, new_path, err)) == HC_OK)
		rc = hc_compare_summaries(out, a, old_path, b, new_path, err);
	hc_free(a);
	hc_free(b);
	return rc;
}
