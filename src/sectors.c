/*
 * sectors.c - sector map loading and the strata it gives a universe.
 */
#include "holdcount/sectors.h"

#include <stdlib.h>
#include <string.h>

#include "holdcount/csvread.h"
#include "holdcount/memory.h"

#define NO_COLUMN ((size_t)-1)

void hc_sectors_free(struct sectors *s)
{
	size_t i;

	if (!s)
		return;
	if (s->ids)
		for (i = 0; i < s->n; i++)
			hc_free(s->ids[i]);
	if (s->labels)
		for (i = 0; i < s->nlabels; i++)
			hc_free(s->labels[i]);
	hc_free(s->ids);
	hc_free(s->label_of);
	hc_free(s->labels);
	hc_free(s->by_id);
	hc_free(s);
}

struct reader {
	const char *name;
	const char *want_id, *want_label;
	size_t id_col, label_col, ncols;
	struct sectors *s;
	char **raw_labels;    /* n labels as read, before deduplication */
	size_t *line;         /* n lines */
	size_t cap;
	char *row_id, *row_label;
	size_t row_label_column;
};

static int grow(struct reader *r, struct hc_error *err)
{
	struct sectors *s = r->s;
	char **ids, **labels;
	size_t *line, nc;

	if (hc_grow_capacity(r->cap, r->cap + 1, 64, &nc))
		return hc_error(err, HC_ENOMEM, "%s: too many rows", r->name);
	ids = hc_reallocarray(s->ids, nc, sizeof *ids);
	if (ids)
		s->ids = ids;
	labels = hc_reallocarray(r->raw_labels, nc, sizeof *labels);
	if (labels)
		r->raw_labels = labels;
	line = hc_reallocarray(r->line, nc, sizeof *line);
	if (line)
		r->line = line;
	if (!ids || !labels || !line)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	r->cap = nc;
	return HC_OK;
}

static int on_field(void *ctx, const struct csvread_field *f, struct hc_error *err)
{
	struct reader *r = ctx;
	size_t col = f->column - 1;
	int rc;

	if (f->record == 0) {
		if (r->id_col == NO_COLUMN && hc_csvread_header_is(f->text, f->len, r->want_id))
			r->id_col = col;
		else if (r->label_col == NO_COLUMN && hc_csvread_header_is(f->text, f->len, r->want_label))
			r->label_col = col;
		r->ncols = f->column;
		return HC_OK;
	}
	if (col >= r->ncols)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has more fields than the header's %zu; expected %zu fields",
			r->name, f->line, f->column, r->ncols, r->ncols);
	if (col == r->id_col) {
		rc = hc_universe_check_id(r->name, f->line, f->column, f->text, f->len, err);
		if (rc != HC_OK)
			return rc;
		r->row_id = hc_strndup(f->text, f->len);
		if (!r->row_id)
			return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	} else if (col == r->label_col) {
		size_t i;

		for (i = 0; i < f->len && (f->text[i] == ' ' || f->text[i] == '\t'); i++)
			;
		if (i == f->len)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: empty sector label; expected a label", r->name, f->line, f->column);
		if (!hc_csvread_utf8_valid(f->text, f->len))
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: sector label is not valid UTF-8", r->name, f->line, f->column);
		if (strcmp(f->text, SECTORS_UNMAPPED_LABEL) == 0)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: the label '%s' is reserved for securities missing from the map; expected another label",
				r->name, f->line, f->column, SECTORS_UNMAPPED_LABEL);
		r->row_label = hc_strndup(f->text, f->len);
		if (!r->row_label)
			return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	}
	return HC_OK;
}

static int on_record(void *ctx, size_t record, size_t nfields, size_t line,
		     struct hc_error *err)
{
	struct reader *r = ctx;
	struct sectors *s = r->s;
	int rc;

	if (record == 0) {
		if (r->id_col == NO_COLUMN)
			return hc_error(err, HC_EDATA,
				"%s:1: no column named '%s' in the header; expected it to hold the security ids",
				r->name, r->want_id);
		if (r->label_col == NO_COLUMN)
			return hc_error(err, HC_EDATA,
				"%s:1: no column named '%s' in the header; expected it to hold the sector labels",
				r->name, r->want_label);
		return HC_OK;
	}
	if (nfields < r->ncols)
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: row has %zu fields; expected %zu as in the header",
			r->name, line, nfields, nfields, r->ncols);
	if (s->n == r->cap && (rc = grow(r, err)) != HC_OK)
		return rc;
	s->ids[s->n] = r->row_id;
	r->raw_labels[s->n] = r->row_label;
	r->line[s->n] = line;
	s->n++;
	r->row_id = r->row_label = NULL;
	return HC_OK;
}

struct ref {
	const char *key;
	size_t index;
};

/* By key, then by index, so equal keys keep file order. */
static int ref_cmp(const void *pa, const void *pb)
{
	const struct ref *a = pa, *b = pb;
	int c = strcmp(a->key, b->key);

	return c ? c : (a->index < b->index ? -1 : a->index > b->index);
}

/* refs sorted by the strings keys[0..n); NULL when out of memory. */
static struct ref *sorted_refs(char *const *keys, size_t n)
{
	struct ref *refs = hc_reallocarray(NULL, n, sizeof *refs);
	size_t i;

	if (!refs)
		return NULL;
	for (i = 0; i < n; i++) {
		refs[i].key = keys[i];
		refs[i].index = i;
	}
	qsort(refs, n, sizeof *refs, ref_cmp);
	return refs;
}

/* Distinct labels numbered in order of first appearance. */
static int number_labels(struct reader *r, struct hc_error *err)
{
	struct sectors *s = r->s;
	struct ref *refs = NULL;
	size_t *group = NULL, *order = NULL, i, g = 0;
	int rc = HC_OK;

	refs = sorted_refs(r->raw_labels, s->n);
	group = hc_reallocarray(NULL, s->n, sizeof *group);
	order = hc_reallocarray(NULL, s->n, sizeof *order);
	s->label_of = hc_reallocarray(NULL, s->n, sizeof *s->label_of);
	s->labels = hc_calloc(s->n, sizeof *s->labels);
	if (!refs || !group || !order || !s->label_of || !s->labels) {
		rc = hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
		goto cleanup;
	}
	/* group[i] = the first entry (in file order) with entry i's label */
	for (i = 0; i < s->n; i++)
		group[refs[i].index] = i > 0 && strcmp(refs[i].key, refs[i - 1].key) == 0
				     ? group[refs[i - 1].index] : refs[i].index;
	for (i = 0; i < s->n; i++) {
		if (group[i] == i) {
			order[i] = g;
			s->labels[g++] = r->raw_labels[i];
			r->raw_labels[i] = NULL;
		}
		s->label_of[i] = order[group[i]];
	}
	s->nlabels = g;
cleanup:
	hc_free(refs);
	hc_free(group);
	hc_free(order);
	return rc;
}

static int finish(struct reader *r, struct hc_error *err)
{
	struct sectors *s = r->s;
	struct ref *refs;
	size_t a, b, i;
	int rc;

	if (s->n == 0)
		return hc_error(err, HC_EDATA, "%s: no rows after the header; expected one row per security", r->name);
	rc = hc_universe_id_clash(s->ids, s->n, &a, &b);
	if (rc < 0)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	if (rc > 0) {
		if (strcmp(s->ids[a], s->ids[b]) == 0)
			return hc_error(err, HC_EDATA,
				"%s:%zu:%zu: duplicate id '%s' (first on line %zu); expected each id once",
				r->name, r->line[b], r->id_col + 1, s->ids[b], r->line[a]);
		return hc_error(err, HC_EDATA,
			"%s:%zu:%zu: id '%s' differs only in case or surrounding spaces from '%s' on line %zu; expected distinct ids",
			r->name, r->line[b], r->id_col + 1, s->ids[b], s->ids[a], r->line[a]);
	}
	rc = number_labels(r, err);
	if (rc != HC_OK)
		return rc;
	refs = sorted_refs(s->ids, s->n);
	s->by_id = hc_reallocarray(NULL, s->n, sizeof *s->by_id);
	if (!refs || !s->by_id) {
		hc_free(refs);
		return hc_error(err, HC_ENOMEM, "%s: out of memory", r->name);
	}
	for (i = 0; i < s->n; i++)
		s->by_id[i] = refs[i].index;
	hc_free(refs);
	return HC_OK;
}

static int load(struct sectors **out, const char *name, const char *path,
		const char *data, size_t len, const char *id_column,
		const char *label_column, struct hc_error *err)
{
	struct csvread_handler h;
	struct reader r;
	size_t i;
	int rc;

	*out = NULL;
	memset(&r, 0, sizeof r);
	r.name = name;
	r.want_id = id_column ? id_column : "id";
	r.want_label = label_column ? label_column : "label";
	r.id_col = r.label_col = NO_COLUMN;
	r.s = hc_calloc(1, sizeof *r.s);
	if (!r.s)
		return hc_error(err, HC_ENOMEM, "%s: out of memory", name);
	if (hc_csvread_header_is(r.want_id, strlen(r.want_id), r.want_label)) {
		rc = hc_error(err, HC_EUSAGE, "the id and label columns must differ; both are '%s'", r.want_id);
		goto cleanup;
	}
	h.field = on_field;
	h.record = on_record;
	h.ctx = &r;
	rc = path ? hc_csvread_file(path, NULL, &h, NULL, err)
		  : hc_csvread_buffer(name, data, len, NULL, &h, NULL, err);
	if (rc == HC_OK)
		rc = finish(&r, err);
cleanup:
	hc_free(r.row_id);
	hc_free(r.row_label);
	if (r.raw_labels)
		for (i = 0; i < r.s->n; i++)
			hc_free(r.raw_labels[i]);
	hc_free(r.raw_labels);
	hc_free(r.line);
	if (rc != HC_OK) {
		hc_sectors_free(r.s);
		return rc;
	}
	*out = r.s;
	return HC_OK;
}

int hc_sectors_load(struct sectors **out, const char *path, const char *id_column,
		 const char *label_column, struct hc_error *err)
{
	return load(out, path, path, NULL, 0, id_column, label_column, err);
}

int hc_sectors_load_buffer(struct sectors **out, const char *name,
			const char *data, size_t len, const char *id_column,
			const char *label_column, struct hc_error *err)
{
	return load(out, name, NULL, data, len, id_column, label_column, err);
}

long hc_sectors_find(const struct sectors *s, const char *id)
{
	size_t lo = 0, hi = s->n;

	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;
		int c = strcmp(s->ids[s->by_id[mid]], id);

		if (c == 0)
			return (long)s->label_of[s->by_id[mid]];
		if (c < 0)
			lo = mid + 1;
		else
			hi = mid;
	}
	return -1;
}

void hc_sectors_strata_free(size_t *stratum_of_security, char **labels, size_t nlabels)
{
	size_t i;

	hc_free(stratum_of_security);
	if (labels)
		for (i = 0; i < nlabels; i++)
			hc_free(labels[i]);
	hc_free(labels);
}

int hc_sectors_strata(const struct sectors *s, const struct universe *u,
		   size_t **stratum_of_security, char ***labels, size_t *nlabels,
		   size_t *unmapped, struct hc_error *err)
{
	size_t *st = NULL, *renum = NULL, i, n = 0, miss = 0;
	char **out = NULL;
	long k;

	*stratum_of_security = NULL;
	*labels = NULL;
	*nlabels = 0;
	*unmapped = 0;
	st = hc_calloc(u->m ? u->m : 1, sizeof *st);
	renum = hc_reallocarray(NULL, s->nlabels + 1, sizeof *renum);
	out = hc_calloc(s->nlabels + 1, sizeof *out);
	if (!st || !renum || !out)
		goto nomem;
	for (i = 0; i <= s->nlabels; i++)
		renum[i] = (size_t)-1;
	for (i = 0; i < u->m; i++) {
		k = hc_sectors_find(s, u->ids[i]);
		if (k < 0) {
			miss++;
			k = (long)s->nlabels;   /* the unmapped stratum, numbered last */
		} else {
			renum[k] = 0;   /* used */
		}
		st[i] = (size_t)k;
	}
	for (i = 0; i < s->nlabels; i++) {
		if (renum[i] == (size_t)-1)
			continue;
		renum[i] = n;
		out[n] = hc_strdup(s->labels[i]);
		if (!out[n])
			goto nomem;
		n++;
	}
	if (miss) {
		renum[s->nlabels] = n;
		out[n] = hc_strdup(SECTORS_UNMAPPED_LABEL);
		if (!out[n])
			goto nomem;
		n++;
	}
	for (i = 0; i < u->m; i++)
		st[i] = renum[st[i]];
	hc_free(renum);
	*stratum_of_security = st;
	*labels = out;
	*nlabels = n;
	*unmapped = miss;
	return HC_OK;
nomem:
	hc_free(renum);
	hc_sectors_strata_free(st, out, s->nlabels + 1);
	return hc_error(err, HC_ENOMEM, "out of memory for the sector strata");
}
