/*
 * audit.c - per-fund concentration, risk against the universe, screens and
 * policy (design.md section 6).
 *
 * From a return history, the fund's variance is the sample variance
 * (divisor T-1) of its portfolio return series p_t = sum_i w_i x_it.  That
 * equals w'Aw for the sample covariance A without forming A: O(nT) per fund
 * instead of O(n^2 T).  Two passes (mean, then squared deviations) keep it
 * accurate when the mean is large against the spread.  From a covariance
 * matrix (a risk model's, or pairwise-complete covariances) it is the
 * quadratic form w'Aw itself, O(n^2), and the random portfolios come from
 * the sampler's matrix route, which draws the same portfolios for the same
 * seed.  From a history with gaps read period by period it is w'Aw over
 * the pairwise-complete covariances of the fund's own n holdings
 * (O(n^2 T) per fund, never the universe's M x M matrix), and the random
 * portfolios and the curve come from the per-period route (periodic.h).
 */
#include "holdcount/audit.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "holdcount/covmatrix.h"
#include "holdcount/curve.h"
#include "holdcount/datacheck.h"
#include "holdcount/memory.h"
#include "holdcount/periodic.h"

/* What the funds' risk comes from: a return history or a covariance matrix. */
struct source {
	const struct universe *u;        /* complete return series, or NULL */
	const struct covmatrix *cm;      /* else the covariance matrix */
	const struct universe *history;  /* names dropped ids in messages; may be NULL */
	const char *name;                /* the file, for messages */
	double pp;                       /* variances are multiplied by this */
	const struct hc_source *view;    /* the source it was made from (random portfolios) */
	const struct hc_periodic *per;   /* a history with gaps read period by period (u has
	                                  * gaps): funds' own covariances, the per-period route */
};

/* What a ragged audit says of its comparisons (field "comparison") and of
 * its funds' own matrices (a note). */
#define AUDIT_RAGGED_COMPARISON "period by period: a random portfolio of N holds, at each period, the first N " \
	"securities alive then of a random order, equally weighted (the sd rank); the equal-weight random sd is " \
	"the exact per-period curve at the fund's count; the floor, equivalent count and sqrt E[var] with the " \
	"fund's weights use the per-period averages, which give that curve up to the fewest securities alive " \
	"in a period (alive_min)"
#define AUDIT_RAGGED_NOTE "on a history with gaps read period by period only the pairs among a fund's own " \
	"holdings need 3 common periods: a fund two of whose holdings share fewer has no risk figures " \
	"(risk_reason names them; its covered weight is 0, hence the verdict 'insufficient data'), the other " \
	"funds go on; a fund's own covariance matrix that is not positive semi-definite is replaced by the " \
	"nearest one (eigenvalue clipping, Higham 1988; risk_matrix_repaired)"

/* Scratch for a fund's own securities on a ragged history, allocated once
 * for the largest fund: their rows of returns and ids, and its weights. */
struct ragged_ws {
	double *x;        /* nmax x T */
	char **ids;       /* nmax, borrowed from the universe */
	double *w;        /* nmax */
};

/* The screens' limits, from memory of the published texts (audit.h). */
#define UCITS_ISSUER_LIMIT 0.10      /* 2009/65/EC Art. 52(2): raised ceiling per issuer */
#define UCITS_LARGE_THRESHOLD 0.05   /* Art. 52(1)/(2): holdings above 5% ... */
#define UCITS_LARGE_AGGREGATE 0.40   /* ... together at most 40% */
#define ACT1940_THRESHOLD 0.05       /* s. 5(b)(1): not more than 5% in one issuer ... */
#define ACT1940_SMALL_SHARE 0.75     /* ... for 75% of total assets */
#define RIC_THRESHOLD 0.05           /* IRC s. 851(b)(3)(A): each at most 5% ... */
#define RIC_SMALL_SHARE 0.50         /* ... for at least 50% of assets */
#define RIC_ISSUER_LIMIT 0.25        /* s. 851(b)(3)(B): no more than 25% in one issuer */

#define UCITS_GOVERNMENT_LIMIT 0.35  /* Art. 52(3): government securities, per issuer */
#define UCITS_GROUP_LIMIT 0.20       /* Art. 52(5): one group of companies, together */

static const struct {
	const char *screen;
	const char *part;
	const char *test;
	double limit;
	int screen_index;
	int basket;                  /* 1: a 5% basket, computed under a reading */
	int decides;                 /* 0: shown beside, not deciding */
} parts[AUDIT_NPARTS] = {
	{ "ucits", "largest issuer", "<=", UCITS_ISSUER_LIMIT, 0, 0, 1 },
	{ "ucits", "issuers above 5% together", "<=", UCITS_LARGE_AGGREGATE, 0, 0, 1 },
	{ "1940act", "basket of issuers within 5%", ">=", ACT1940_SMALL_SHARE, 1, 1, 1 },
	{ "ric", "basket of issuers within 5%", ">=", RIC_SMALL_SHARE, 2, 1, 1 },
	{ "ric", "largest issuer", "<=", RIC_ISSUER_LIMIT, 2, 0, 1 },
	{ "ucits", "largest government issuer", "<=", UCITS_GOVERNMENT_LIMIT, 0, 0, 1 },
	{ "ucits", "largest group of companies", "<=", UCITS_GROUP_LIMIT, 0, 0, 1 },
	{ "1940act", "basket of issuers within 5%", ">=", ACT1940_SMALL_SHARE, 1, 1, 0 },
	{ "ric", "basket of issuers within 5%", ">=", RIC_SMALL_SHARE, 2, 1, 0 },
};

/* The order of the parts in the screens table: each screen's together, the
 * basket under the other reading right after the deciding one. */
static const int part_order[AUDIT_NPARTS] = {
	AUDIT_PART_UCITS_ISSUER, AUDIT_PART_UCITS_AGGREGATE, AUDIT_PART_UCITS_GOVERNMENT,
	AUDIT_PART_UCITS_GROUP, AUDIT_PART_1940ACT_SMALL, AUDIT_PART_1940ACT_OTHER,
	AUDIT_PART_RIC_SMALL, AUDIT_PART_RIC_OTHER, AUDIT_PART_RIC_ISSUER
};

static const char *const reading_names[2] = { "excluded", "capped" };
static const char *const verdict_names[3] = { "passed", "failed", "insufficient data" };

const char *hc_audit_reading_name(int reading)
{
	return reading >= 0 && reading < 2 ? reading_names[reading] : NULL;
}

const char *hc_audit_verdict_name(int verdict)
{
	return verdict >= 0 && verdict < 3 ? verdict_names[verdict] : NULL;
}

static const char *const rule_names[AUDIT_NRULES] = {
	"min-holdings", "min-effective", "max-weight", "max-sector-weight",
	"ucits", "1940act", "ric"
};

const char *hc_audit_rule_name(unsigned rule)
{
	int k;

	for (k = 0; k < AUDIT_NRULES; k++)
		if (rule == 1u << k)
			return rule_names[k];
	return NULL;
}

const char *hc_audit_screen_name(int index)
{
	return index >= 0 && index < AUDIT_NSCREENS ? rule_names[4 + index] : NULL;
}

void hc_audit_options_init(struct audit_options *opt)
{
	memset(opt, 0, sizeof *opt);
	opt->paths = AUDIT_DEFAULT_PATHS;
	opt->seed = 1;
	opt->limit_tolerance = AUDIT_DEFAULT_LIMIT_TOLERANCE;
	opt->tie_rtol = AUDIT_DEFAULT_TIE_RTOL;
	opt->min_covered_weight = AUDIT_DEFAULT_MIN_COVERED_WEIGHT;
}

static int item_is(const char *s, size_t len, const char *name)
{
	size_t k;

	if (len != strlen(name))
		return 0;
	for (k = 0; k < len; k++) {
		char c = s[k];
		if (c >= 'A' && c <= 'Z')
			c = (char)(c - 'A' + 'a');
		if (c != name[k])
			return 0;
	}
	return 1;
}

int hc_audit_parse_screens(const char *text, unsigned *screens, struct hc_error *err)
{
	const char *p = text;
	unsigned bits = 0;

	while (1) {
		const char *end = strchr(p, ',');
		size_t len = end ? (size_t)(end - p) : strlen(p);
		int k, found = 0;

		while (len && (*p == ' ')) {
			p++;
			len--;
		}
		while (len && p[len - 1] == ' ')
			len--;
		for (k = 0; k < AUDIT_NSCREENS; k++)
			if (item_is(p, len, hc_audit_screen_name(k))) {
				bits |= 1u << k;
				found = 1;
			}
		if (item_is(p, len, "all")) {
			bits = AUDIT_SCREEN_UCITS | AUDIT_SCREEN_1940ACT | AUDIT_SCREEN_RIC;
			found = 1;
		} else if (item_is(p, len, "none"))
			found = 1;
		if (!found)
			return hc_error(err, HC_EUSAGE, "unknown screen '%.*s' in '%s', expected ucits, 1940act, ric, all or none",
					(int)len, p, text);
		if (!end)
			break;
		p = end + 1;
	}
	*screens = bits;
	return HC_OK;
}

/* ---- concentration ---- */

static int cmp_desc(const void *a, const void *b)
{
	double x = *(const double *)a, y = *(const double *)b;
	return x > y ? -1 : (x < y);
}

/* Whether (w, id) beats the largest so far (max, max_id): a larger weight,
 * or an equal one with the smaller id in byte order (strcmp).  One rule for
 * the largest position and the largest issuer, so both name the same id
 * when a fund holds several at the largest weight, whatever the file order. */
static int larger(double w, const char *id, double max, const char *max_id)
{
	return w > max || (w == max && max_id && strcmp(id, max_id) < 0);
}

/* Counts, exposures and line concentration.  Cash is not a holding; the
 * largest position and the top 10 are |weights| of net assets; the HHI is on
 * gross invested weights |w_i| / sum |w_j| over the non-cash positions (a
 * short concentrates risk as a long does; common practice, no single
 * source). */
static void concentration(struct audit_fund *af, const struct holdings_fund *fd,
			  double *work)
{
	size_t k, n = 0;
	double gross = 0;

	af->weight_sum = fd->raw_sum;
	af->max_weight = -INFINITY;
	af->max_id = NULL;
	af->hhi = 0;
	for (k = 0; k < fd->n; k++) {
		const struct holding *hd = &fd->h[k];
		double w = hd->weight, a = fabs(w);
		if (hd->type == HOLDING_CASH) {
			af->cash_weight += w;
			continue;
		}
		if (hd->type == HOLDING_GOVERNMENT)
			af->government_weight += w;
		else if (hd->type == HOLDING_FUND_SHARE)
			af->fund_share_weight += w;
		if (larger(a, hd->id, af->max_weight, af->max_id)) {
			af->max_weight = a;
			af->max_id = hd->id;
		}
		gross += a;
		af->net_exposure += w;
		if (w < 0)
			af->short_exposure += a;
		work[n++] = a;
	}
	af->holdings = n;
	af->gross_exposure = gross;
	qsort(work, n, sizeof *work, cmp_desc);
	af->top10_share = 0;
	for (k = 0; k < n; k++) {
		if (k < 10)
			af->top10_share += work[k];
		af->hhi += (work[k] / gross) * (work[k] / gross);
	}
	if (!n) {
		af->max_weight = af->hhi = NAN;
		af->effective_holdings = 0;
	} else
		af->effective_holdings = 1 / af->hhi;
}

/* ---- risk against the universe ---- */

static double series_variance(const double *x, size_t t)
{
	double mean = 0, ss = 0;
	size_t k;

	for (k = 0; k < t; k++)
		mean += x[k];
	mean /= (double)t;
	for (k = 0; k < t; k++)
		ss += (x[k] - mean) * (x[k] - mean);
	return ss / (double)(t - 1);
}

static const char *dropped_reason(const struct universe *u, const char *id)
{
	size_t k;

	for (k = 0; u && k < u->ndropped; k++)
		if (strcmp(u->dropped[k].id, id) == 0)
			return u->dropped[k].reason;
	return NULL;
}

/* Find each holding in u; record the missing ones (or refuse under strict). */
static int locate(struct audit_fund *af, const struct holdings_fund *fd,
		  const struct holdings *h, const struct source *src, int strict,
		  long *idx, struct hc_error *err)
{
	size_t k;

	for (k = 0; k < fd->n; k++) {
		/* cash has no return history to find: it is not a security */
		if (fd->h[k].type == HOLDING_CASH) {
			idx[k] = -1;
			continue;
		}
		idx[k] = src->u ? hc_universe_find(src->u, fd->h[k].id) : hc_covmatrix_find(src->cm, fd->h[k].id);
		if (idx[k] >= 0)
			continue;
		if (strict) {
			const char *why = dropped_reason(src->history, fd->h[k].id);
			return hc_error(err, HC_EDATA, "%s:%zu:%zu: id '%s' of fund '%s' is not in the universe '%s'%s%s%s, expected an id of the universe (without --strict the fund's risk is computed on the rest)",
					fd->source ? fd->source : h->source, fd->h[k].line,
					fd->id_column ? fd->id_column : h->id_column, fd->h[k].id, fd->name,
					src->name ? src->name : "", why ? " (dropped: " : "", why ? why : "", why ? ")" : "");
		}
		af->nmissing++;
	}
	if (!af->nmissing)
		return HC_OK;
	af->missing = hc_calloc(af->nmissing, sizeof *af->missing);
	if (!af->missing)
		return hc_error(err, HC_ENOMEM, "out of memory auditing fund '%s'", fd->name);
	af->nmissing = 0;
	for (k = 0; k < fd->n; k++) {
		struct audit_missing *mi;
		if (idx[k] >= 0 || fd->h[k].type == HOLDING_CASH)
			continue;
		mi = &af->missing[af->nmissing++];
		mi->id = fd->h[k].id;
		mi->weight = fd->h[k].weight;
		mi->line = fd->h[k].line;
		af->missing_weight += mi->weight;
	}
	return HC_OK;
}

/* The fund's per-period variance and sum w_i sigma_i from the return
 * series (w already renormalised to the in-universe weight in). */
static int series_risk(const struct holdings_fund *fd, const struct universe *u, const long *idx,
		       double in, double *series, double *s2, double *wsd, struct hc_error *err)
{
	size_t k, t, T = u->t;

	memset(series, 0, T * sizeof *series);
	*wsd = 0;
	for (k = 0; k < fd->n; k++) {
		const double *x;
		double w;
		if (idx[k] < 0)
			continue;
		x = &u->x[(size_t)idx[k] * T];
		w = fd->h[k].weight / in;
		for (t = 0; t < T; t++) {
			if (isnan(x[t]))
				return hc_error(err, HC_EDATA, "security '%s' has gaps in the universe '%s', expected complete series for an audit (load it keeping only complete securities)",
						fd->h[k].id, u->source ? u->source : "");
			series[t] += w * x[t];
		}
		*wsd += w * sqrt(series_variance(x, T));
	}
	*s2 = series_variance(series, T);
	return HC_OK;
}

/* The same from a covariance matrix: the quadratic form w'Aw, row by row. */
static void matrix_risk(const struct holdings_fund *fd, const struct covmatrix *cm, const long *idx,
			double in, double *s2, double *wsd)
{
	size_t k, l, m = cm->m;

	*s2 = *wsd = 0;
	for (k = 0; k < fd->n; k++) {
		const double *row;
		double w, cross = 0;
		if (idx[k] < 0)
			continue;
		row = cm->a + (size_t)idx[k] * m;
		w = fd->h[k].weight / in;
		for (l = 0; l < fd->n; l++)
			if (idx[l] >= 0)
				cross += fd->h[l].weight / in * row[idx[l]];
		*s2 += w * cross;
		*wsd += w * sqrt(row[idx[k]]);
	}
}

/* w'Aw and sum w_i sqrt(a_ii) over the k x k row-major a. */
static void quadratic(const double *a, const double *w, size_t k, double *s2, double *wsd)
{
	size_t i, j;

	*s2 = *wsd = 0;
	for (i = 0; i < k; i++) {
		double cross = 0;
		for (j = 0; j < k; j++)
			cross += a[i * k + j] * w[j];
		*s2 += w[i] * cross;
		*wsd += w[i] * sqrt(a[i * k + i]);
	}
}

/* Record why a fund has no risk figures (owned copy). */
static int no_risk(struct audit_fund *af, const char *why, struct hc_error *err)
{
	hc_free(af->risk_reason);
	af->risk_reason = hc_strdup(why);
	return af->risk_reason ? HC_OK : hc_error(err, HC_ENOMEM, "out of memory auditing fund '%s'", af->name);
}

/*
 * A history with gaps read period by period: the fund's covariances are
 * the pairwise-complete ones of its own k holdings, each pair over the
 * periods both are observed with its own means (hc_covmatrix_from_universe
 * on a universe of their rows: the masked products of covmatrix.c, the
 * same numbers the universe's M x M matrix would hold for these pairs), so
 * only pairs within the fund need COVMATRIX_MIN_COMMON_PERIODS periods in
 * common.  A pairwise matrix need not be positive semi-definite; a k x k
 * one that is not is replaced by the nearest (eigenvalue clipping, Higham,
 * 1988), as the ragged policy always did for the funds' variances, and the
 * fund says so.  *usable is 0 (and af->risk_reason set) when two holdings
 * share too few periods.
 */
/* The fund's found holdings as a universe of their own rows (copied into
 * ws) and their risk weights w_i / in; sub borrows ws and u's ids. */
static void own_rows(struct universe *sub, struct ragged_ws *ws, const struct holdings_fund *fd,
		     const struct universe *u, const long *idx, double in)
{
	size_t k = 0, l, t, T = u->t;

	memset(sub, 0, sizeof *sub);
	for (l = 0; l < fd->n; l++) {
		const double *x;
		if (idx[l] < 0)
			continue;
		x = &u->x[(size_t)idx[l] * T];
		memcpy(ws->x + k * T, x, T * sizeof *x);
		ws->ids[k] = u->ids[idx[l]];
		ws->w[k] = fd->h[l].weight / in;
		for (t = 0; t < T && !sub->has_missing; t++)
			sub->has_missing = isnan(x[t]);
		k++;
	}
	sub->m = sub->m_read = k;
	sub->t = T;
	sub->x = ws->x;
	sub->ids = ws->ids;
	sub->source = u->source;
	sub->periods_per_year = u->periods_per_year;
	sub->max_bytes = u->max_bytes;
}

static int ragged_risk(struct audit_fund *af, const struct holdings_fund *fd, const struct source *src,
		       const long *idx, double in, struct ragged_ws *ws, double *s2, double *wsd,
		       int *usable, struct hc_error *err)
{
	const struct universe *u = src->u;
	struct universe sub;
	struct covmatrix *cm = NULL;
	struct covmatrix_psd st;
	struct hc_error own;
	size_t k, name = u->source ? strlen(u->source) : 0;
	double *b = NULL;
	const double *a;
	int rc;

	own_rows(&sub, ws, fd, u, idx, in);
	k = sub.m;
	*usable = 0;
	hc_error_clear(&own);
	rc = hc_covmatrix_from_universe(&sub, &cm, &own);
	if (rc == HC_EDATA) {
		/* the only data error left with k >= 1 and T >= 2: a pair (or a
		 * security alone) with too few periods; the reason without the
		 * file's name, which the report gives once */
		const char *why = own.message;
		if (name && strncmp(why, u->source, name) == 0 && strncmp(why + name, ": ", 2) == 0)
			why += name + 2;
		return no_risk(af, why, err);
	}
	if (rc != HC_OK)
		return hc_error(err, rc, "%s", own.message);
	a = cm->a;
	if (k > 1) {
		if (!(b = hc_mallocarray(k * k, sizeof *b))) {
			rc = hc_error(err, HC_ENOMEM, "out of memory auditing fund '%s'", fd->name);
			goto cleanup;
		}
		if ((rc = hc_covmatrix_nearest_psd(cm->a, k, b, &st, err)) != HC_OK)
			goto cleanup;
		/* as source.c's policy: moves within the symmetry tolerance are rounding */
		if (st.max_relative_move > COVMATRIX_DEFAULT_SYMMETRY_TOL) {
			a = b;
			af->risk_repaired = 1;
		}
	}
	quadratic(a, ws->w, k, s2, wsd);
	*usable = 1;
cleanup:
	hc_free(b);
	hc_covmatrix_free(cm);
	return rc;
}

/*
 * Coverage and risk.  The covered weight is the share of the gross invested
 * weight whose history is usable (found in the universe or matrix).  The
 * risk weights are the found positions' weights over "in": their net sum
 * (AUDIT_CASH_EXCLUDE: the invested assets, renormalised), or that plus the
 * cash (AUDIT_CASH_ZERO: net assets, cash at zero variance and no
 * covariance, so it only scales the weights down).
 */
static int risk(struct audit_fund *af, const struct holdings_fund *fd,
		const struct source *src, const struct moments *mo, int cash_risk,
		const long *idx, double *series, struct ragged_ws *ws, struct hc_error *err)
{
	double in = 0, hhi = 0, wsd = 0, s2 = 0, neq, pp = src->pp, found = 0, sum = 0;
	size_t k;
	int rc, usable;

	for (k = 0; k < fd->n; k++)
		if (idx[k] >= 0) {
			in += fd->h[k].weight;
			found += fabs(fd->h[k].weight);
		}
	af->covered_weight = af->gross_exposure > 0 ? found / af->gross_exposure : NAN;
	if (cash_risk == AUDIT_CASH_ZERO && found > 0)
		in += af->cash_weight;
	if (!(in > 0))
		return no_risk(af, !af->holdings ? "it holds no security (cash only)"
				   : found > 0 ? "its holdings in the universe have no positive net weight"
				   : "none of its holdings is in the universe", err);
	if (src->per) {
		if ((rc = ragged_risk(af, fd, src, idx, in, ws, &s2, &wsd, &usable, err)) != HC_OK)
			return rc;
		if (!usable) {
			/* its risk rests on none of its weight: the coverage verdict
			 * ("insufficient data") follows */
			af->covered_weight = 0;
			af->risk_unpaired = 1;
			return HC_OK;
		}
	} else if (src->u) {
		if ((rc = series_risk(fd, src->u, idx, in, series, &s2, &wsd, err)) != HC_OK)
			return rc;
	} else
		matrix_risk(fd, src->cm, idx, in, &s2, &wsd);
	af->risk_known = 1;
	af->risk_subset = af->nmissing > 0;
	for (k = 0; k < fd->n; k++)
		if (idx[k] >= 0) {
			double w = fd->h[k].weight / in;
			hhi += w * w;
			sum += w;
			af->risk_holdings++;
		}
	af->variance = s2 * pp;
	af->sd = s2 >= 0 ? sqrt(af->variance) : NAN;
	/* Choueifaty & Coignard (2008), J. Portfolio Management 35(1): the ratio
	 * of the weighted average volatility to the portfolio's volatility. */
	af->diversification_ratio = s2 > 0 ? wsd / sqrt(s2) : NAN;
	af->below_floor = hc_curve_equivalent_count(mo, s2, &neq) != 0;
	af->equivalent_count = af->below_floor ? NAN : neq;
	/* design.md section 3: a weight vector laid on a random subset has
	 * E[w'Aw] = sum w^2 vbar + ((sum w)^2 - sum w^2) cbar; sum w = 1 but for
	 * cash held at zero variance. */
	s2 = hhi * mo->average_variance + (sum * sum - hhi) * mo->average_covariance;
	af->weighted_random_sd = s2 >= 0 ? sqrt(s2 * pp) : NAN;
	/* a ragged history: the exact per-period curve at the fund's count */
	s2 = src->per ? hc_periodic_expected_variance(&src->per->curve, (double)af->risk_holdings)
		      : hc_curve_expected_variance(mo, (double)af->risk_holdings);
	af->equal_random_sd = s2 >= 0 ? sqrt(s2 * pp) : NAN;
	return HC_OK;
}

/* ---- sectors ---- */

static int cmp_sector(const void *a, const void *b)
{
	const struct audit_sector *x = a, *y = b;

	if (!x->label != !y->label)
		return x->label ? -1 : 1;   /* the unmapped bucket last */
	if (x->weight != y->weight)
		return x->weight > y->weight ? -1 : 1;
	return x->label ? strcmp(x->label, y->label) : 0;
}

static int sectors(struct audit_fund *af, const struct holdings_fund *fd,
		   const struct holdings_labels *map, struct hc_error *err)
{
	size_t k, j;

	af->max_sector_weight = NAN;
	if (!map)
		return HC_OK;
	af->sectors = hc_calloc(fd->n, sizeof *af->sectors);
	if (!af->sectors)
		return hc_error(err, HC_ENOMEM, "out of memory auditing fund '%s'", fd->name);
	for (k = 0; k < fd->n; k++) {
		const char *label;
		if (fd->h[k].type == HOLDING_CASH)
			continue;
		label = hc_holdings_labels_find(map, fd->h[k].id);
		for (j = 0; j < af->nsectors; j++) {
			const char *l = af->sectors[j].label;
			if (l == label || (l && label && strcmp(l, label) == 0))
				break;
		}
		if (j == af->nsectors)
			af->sectors[af->nsectors++].label = label;
		af->sectors[j].weight += fd->h[k].weight;
		af->sectors[j].count++;
	}
	qsort(af->sectors, af->nsectors, sizeof *af->sectors, cmp_sector);
	af->sector_hhi = 0;
	for (j = 0; j < af->nsectors; j++) {
		af->sector_hhi += af->sectors[j].weight * af->sectors[j].weight;
		if (af->sectors[j].label && !(af->sectors[j].weight <= af->max_sector_weight)) {
			af->max_sector_weight = af->sectors[j].weight;
			af->max_sector = af->sectors[j].label;
		}
	}
	if (!af->max_sector)
		af->max_sector_weight = 0;
	return HC_OK;
}

/* ---- issuers, groups and screens ---- */

/* The statutes' classes of non-cash assets: an issuer's securities (and
 * "other"), government securities, other investment companies' shares. */
enum { CLASS_ISSUER = 0, CLASS_GOVERNMENT = 1, CLASS_FUND = 2 };

static int asset_class(int type)
{
	return type == HOLDING_GOVERNMENT ? CLASS_GOVERNMENT : type == HOLDING_FUND_SHARE ? CLASS_FUND : CLASS_ISSUER;
}

struct issuer_weight {
	const char *issuer;
	int cls;
	double w;      /* after aggregate(): the issuer's exposure, |net weight| */
	double net;    /* after aggregate(): its net weight (negative: net short) */
};

static int cmp_issuer(const void *a, const void *b)
{
	const struct issuer_weight *x = a, *y = b;

	if (x->cls != y->cls)
		return x->cls < y->cls ? -1 : 1;
	return strcmp(x->issuer, y->issuer);
}

/* Sort iw[0..n) by (class, name), sum the net weights of equal names and
 * take absolute values: an issuer's |net weight| of net assets.  Compacts in
 * place; returns the count. */
static size_t aggregate(struct issuer_weight *iw, size_t n)
{
	size_t k, m = 0;

	qsort(iw, n, sizeof *iw, cmp_issuer);
	for (k = 0; k < n; k++) {
		if (m && iw[m - 1].cls == iw[k].cls && strcmp(iw[m - 1].issuer, iw[k].issuer) == 0)
			iw[m - 1].w += iw[k].w;
		else
			iw[m++] = iw[k];
	}
	for (k = 0; k < m; k++) {
		iw[k].net = iw[k].w;
		iw[k].w = fabs(iw[k].w);
	}
	return m;
}

static void set_check(struct audit_check *c, int part, double figure,
		      const char *issuer, double tol)
{
	c->figure = figure;
	c->limit = parts[part].limit;
	c->issuer = issuer;
	c->applies = 1;
	if (parts[part].test[0] == '<')
		c->passed = figure <= c->limit + tol;
	else
		c->passed = figure >= c->limit - tol;
}

/* The largest group of companies (UCITS Art. 52(5): a group counts as one
 * body; 20% together), over the issuers' securities that name a group. */
static void groups(struct audit_fund *af, const struct holdings_fund *fd,
		   struct issuer_weight *iw, int has_groups, double tol)
{
	size_t k, n = 0;

	af->max_group_weight = NAN;
	af->max_group = NULL;
	for (k = 0; k < fd->n; k++)
		if (fd->h[k].group && fd->h[k].type != HOLDING_CASH && asset_class(fd->h[k].type) == CLASS_ISSUER)
			iw[n++] = (struct issuer_weight){ fd->h[k].group, 0, fd->h[k].weight, 0 };
	n = aggregate(iw, n);
	if (has_groups)
		af->max_group_weight = 0;
	for (k = 0; k < n; k++)
		if (larger(iw[k].w, iw[k].issuer, af->max_group_weight, af->max_group) || !af->max_group) {
			af->max_group_weight = iw[k].w;
			af->max_group = iw[k].issuer;
		}
	if (has_groups)
		set_check(&af->checks[AUDIT_PART_UCITS_GROUP], AUDIT_PART_UCITS_GROUP, af->max_group_weight,
			  af->max_group, tol);
	else {
		af->checks[AUDIT_PART_UCITS_GROUP] = (struct audit_check){ 1, NAN, UCITS_GROUP_LIMIT, NULL, 0 };
	}
}

/*
 * The 5% basket of the 1940 Act s. 5(b)(1) and IRC s. 851(b)(3)(A): cash,
 * government securities and investment companies' shares whatever their
 * size, plus each other issuer "limited to" 5% of assets.  Read as
 * AUDIT_READING_EXCLUDED an issuer above 5% adds nothing; as
 * AUDIT_READING_CAPPED it adds 5%.  (From memory of the texts; verify with
 * counsel.)  "Within 5%" is inclusive, within tol.  A net short issuer
 * is a liability, not an asset the fund holds: it adds nothing to either
 * reading (its exposure still counts in the issuer limits).
 */
static void baskets(double base, const struct issuer_weight *iw, size_t n, double threshold,
		    double tol, double out[2])
{
	size_t k;

	out[0] = out[1] = base;
	for (k = 0; k < n; k++) {
		if (iw[k].cls != CLASS_ISSUER || !(iw[k].net > 0))
			continue;
		if (iw[k].net <= threshold + tol)
			out[AUDIT_READING_EXCLUDED] += iw[k].net;
		out[AUDIT_READING_CAPPED] += fmin(iw[k].net, threshold);
	}
}

static void screens(struct audit_fund *af, const struct holdings_fund *fd,
		    struct issuer_weight *iw, int reading, int has_groups, double tol)
{
	size_t n = 0, k;
	double large_ucits = 0, total = 0, base;
	double sec_max = 0, gov_max = 0;
	const char *sec_id = NULL, *gov_id = NULL;
	int s, other = !reading;

	groups(af, fd, iw, has_groups, tol);
	for (k = 0; k < fd->n; k++)
		if (fd->h[k].type != HOLDING_CASH)
			iw[n++] = (struct issuer_weight){ fd->h[k].issuer, asset_class(fd->h[k].type), fd->h[k].weight, 0 };
	n = aggregate(iw, n);
	af->issuers = n;
	af->issuer_max = -1;
	af->issuer_max_id = NULL;
	for (k = 0; k < n; k++)
		total += iw[k].w;
	af->issuer_hhi = 0;
	for (k = 0; k < n; k++) {
		double w = iw[k].w;
		af->issuer_hhi += (w / total) * (w / total);
		if (larger(w, iw[k].issuer, af->issuer_max, af->issuer_max_id)) {
			af->issuer_max = w;
			af->issuer_max_id = iw[k].issuer;
		}
		if (iw[k].cls == CLASS_GOVERNMENT && (larger(w, iw[k].issuer, gov_max, gov_id) || !gov_id)) {
			gov_max = w;
			gov_id = iw[k].issuer;
		}
		if (iw[k].cls != CLASS_ISSUER)
			continue;
		if (larger(w, iw[k].issuer, sec_max, sec_id) || !sec_id) {
			sec_max = w;
			sec_id = iw[k].issuer;
		}
		/* "above 5%" is strict, within tol */
		if (w > UCITS_LARGE_THRESHOLD + tol)
			large_ucits += w;
	}
	af->effective_issuers = n ? 1 / af->issuer_hhi : 0;
	if (!n)
		af->issuer_max = af->issuer_hhi = NAN;
	base = af->cash_weight + af->government_weight + af->fund_share_weight;
	baskets(base, iw, n, ACT1940_THRESHOLD, tol, af->basket_1940);
	baskets(base, iw, n, RIC_THRESHOLD, tol, af->basket_ric);
	set_check(&af->checks[AUDIT_PART_UCITS_ISSUER], AUDIT_PART_UCITS_ISSUER, sec_max, sec_id, tol);
	set_check(&af->checks[AUDIT_PART_UCITS_AGGREGATE], AUDIT_PART_UCITS_AGGREGATE, large_ucits, NULL, tol);
	set_check(&af->checks[AUDIT_PART_UCITS_GOVERNMENT], AUDIT_PART_UCITS_GOVERNMENT, gov_max, gov_id, tol);
	set_check(&af->checks[AUDIT_PART_1940ACT_SMALL], AUDIT_PART_1940ACT_SMALL, af->basket_1940[reading], NULL, tol);
	set_check(&af->checks[AUDIT_PART_1940ACT_OTHER], AUDIT_PART_1940ACT_OTHER, af->basket_1940[other], NULL, tol);
	set_check(&af->checks[AUDIT_PART_RIC_SMALL], AUDIT_PART_RIC_SMALL, af->basket_ric[reading], NULL, tol);
	set_check(&af->checks[AUDIT_PART_RIC_OTHER], AUDIT_PART_RIC_OTHER, af->basket_ric[other], NULL, tol);
	set_check(&af->checks[AUDIT_PART_RIC_ISSUER], AUDIT_PART_RIC_ISSUER, sec_max, sec_id, tol);
	for (s = 0; s < AUDIT_NSCREENS; s++)
		af->screen_passed[s] = 1;
	for (k = 0; k < AUDIT_NPARTS; k++)
		if (parts[k].decides && !af->checks[k].passed)
			af->screen_passed[parts[k].screen_index] = 0;
}

/* ---- active share ---- */

struct bench_weight {
	const char *id;
	double w;
};

static int cmp_bench(const void *a, const void *b)
{
	return strcmp(((const struct bench_weight *)a)->id, ((const struct bench_weight *)b)->id);
}

/*
 * Active share (Cremers & Petajisto, 2009, "How Active Is Your Fund
 * Manager? A New Measure That Predicts Performance", Review of Financial
 * Studies 22(9)): half the sum over the union of ids of |fund weight -
 * benchmark weight|, both on their invested assets (cash left out, weights
 * over their net sum).  With sum b = 1 the ids held by the benchmark only
 * need no visit: AS = (1 + sum over the fund's ids of (|u - b| - b)) / 2.
 */
static double active_share(const struct holdings_fund *fd, const struct bench_weight *bw, size_t nb)
{
	double net = 0, sum = 0;
	size_t k;

	for (k = 0; k < fd->n; k++)
		if (fd->h[k].type != HOLDING_CASH)
			net += fd->h[k].weight;
	if (!(net > 0))
		return NAN;
	for (k = 0; k < fd->n; k++) {
		struct bench_weight key = { fd->h[k].id, 0 };
		const struct bench_weight *b;
		double u, bi;
		if (fd->h[k].type == HOLDING_CASH)
			continue;
		u = fd->h[k].weight / net;
		b = nb ? bsearch(&key, bw, nb, sizeof *bw, cmp_bench) : NULL;
		bi = b ? b->w : 0;
		sum += fabs(u - bi) - bi;
	}
	return 0.5 * (1 + sum);
}

/* The benchmark's invested weights, sorted by id. */
static int bench_weights(const struct holdings_fund *bf, struct bench_weight **out, size_t *nout,
			 struct hc_error *err)
{
	struct bench_weight *bw;
	double net = 0;
	size_t k, n = 0;

	*out = NULL;
	*nout = 0;
	if (!bf)
		return HC_OK;
	for (k = 0; k < bf->n; k++)
		if (bf->h[k].type != HOLDING_CASH)
			net += bf->h[k].weight;
	if (!(net > 0))
		return hc_error(err, HC_EDATA, "the benchmark '%s' has no positive invested weight, expected weights of securities",
				bf->source ? bf->source : bf->name);
	if (!(bw = hc_calloc(bf->n ? bf->n : 1, sizeof *bw)))
		return hc_error(err, HC_ENOMEM, "out of memory reading the benchmark");
	for (k = 0; k < bf->n; k++)
		if (bf->h[k].type != HOLDING_CASH)
			bw[n++] = (struct bench_weight){ bf->h[k].id, bf->h[k].weight / net };
	qsort(bw, n, sizeof *bw, cmp_bench);
	*out = bw;
	*nout = n;
	return HC_OK;
}

/* ---- policy ---- */

static void policy(struct audit_fund *af, const struct audit_policy *p, double tol)
{
	int s;

	af->failed = 0;
	if (p->min_holdings && af->holdings < p->min_holdings)
		af->failed |= AUDIT_RULE_MIN_HOLDINGS;
	/* a count, so the weight tolerance is applied relative to it */
	if (p->min_effective > 0 && af->effective_holdings < p->min_effective * (1 - tol))
		af->failed |= AUDIT_RULE_MIN_EFFECTIVE;
	if (p->max_weight > 0 && af->max_weight > p->max_weight + tol)
		af->failed |= AUDIT_RULE_MAX_WEIGHT;
	if (p->max_sector_weight > 0 && af->max_sector_weight > p->max_sector_weight + tol)
		af->failed |= AUDIT_RULE_MAX_SECTOR_WEIGHT;
	for (s = 0; s < AUDIT_NSCREENS; s++)
		if ((p->screens & (1u << s)) && !af->screen_passed[s])
			af->failed |= AUDIT_RULE_UCITS << s;
	af->passed = af->failed == 0;
}

/* A fund failing the policy has failed whatever its coverage (every rule is
 * on weights); one that passes but whose risk figures rest on less than
 * min_covered of its invested weight has too little data for a verdict on
 * them. */
static void verdict(struct audit_fund *af, double min_covered, double tol)
{
	if (!af->passed)
		af->verdict = AUDIT_VERDICT_FAILED;
	else if (min_covered > 0 && !(af->covered_weight >= min_covered - tol))
		af->verdict = AUDIT_VERDICT_INSUFFICIENT;
	else
		af->verdict = AUDIT_VERDICT_PASSED;
}

/* ---- percentile among random equal-weight portfolios ---- */

static int cmp_size(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;
	return x < y ? -1 : (x > y);
}

/*
 * Mid-rank percentile: (below + equal/2)/K, where "equal" means within
 * tie_rtol relative.  At n = M every random portfolio is the whole universe,
 * so an equal-weight fund of all M securities ranks exactly 0.5.
 */
static double mid_rank(const double *v, size_t stride, size_t k_paths,
		       double s2, double tie_rtol)
{
	size_t k, below = 0, equal = 0;

	for (k = 0; k < k_paths; k++) {
		double x = v[k * stride];
		double scale = fmax(fabs(x), fabs(s2));
		if (fabs(x - s2) <= tie_rtol * scale)
			equal++;
		else if (x < s2)
			below++;
	}
	return ((double)below + 0.5 * (double)equal) / (double)k_paths;
}

static int percentiles(struct audit_result *a, const struct source *src,
		       const struct audit_options *opt, struct hc_error *err)
{
	struct sampler_options so;
	struct sampler_result *sr = NULL;
	size_t *sizes = NULL, nsizes = 0, f, k;
	double pp = src->pp;
	int rc = HC_OK;

	if (opt->paths == 0)
		return HC_OK;
	sizes = hc_calloc(a->nfunds ? a->nfunds : 1, sizeof *sizes);
	if (!sizes)
		return hc_error(err, HC_ENOMEM, "out of memory sampling portfolios");
	/* (on a ragged history every holding with risk figures is observed at
	 * least 3 times, so among the per-period route's securities) */
	for (f = 0; f < a->nfunds; f++)
		if (a->funds[f].risk_known && (!src->per || a->funds[f].risk_holdings <= src->per->m))
			sizes[nsizes++] = a->funds[f].risk_holdings;
	if (!nsizes)
		goto cleanup;
	qsort(sizes, nsizes, sizeof *sizes, cmp_size);
	for (f = k = 1; f < nsizes; f++)
		if (sizes[f] != sizes[k - 1])
			sizes[k++] = sizes[f];
	nsizes = k;
	hc_sampler_options_init(&so);
	so.paths = opt->paths;
	so.seed = opt->seed;
	so.threads = opt->threads;
	so.periods_per_year = pp;
	so.progress = opt->progress;
	so.progress_ctx = opt->progress_ctx;
	/* a ragged history: each path a random order, its portfolio of n at
	 * each period the first n securities of that order alive then */
	rc = src->per ? hc_periodic_sample(&sr, src->per, src->u, 0, sizes, nsizes, &so, err)
		      : hc_sampler_run(&sr, src->view, sizes, nsizes, &so, err);
	if (rc != HC_OK)
		goto cleanup;
	for (f = 0; f < a->nfunds; f++) {
		struct audit_fund *af = &a->funds[f];
		size_t *at;
		if (!af->risk_known)
			continue;
		at = bsearch(&af->risk_holdings, sizes, nsizes, sizeof *sizes, cmp_size);
		if (!at)
			continue;
		af->sd_percentile = mid_rank(sr->variance + (at - sizes), nsizes, sr->paths,
					     af->variance / pp, opt->tie_rtol);
	}
cleanup:
	hc_sampler_result_free(sr);
	hc_free(sizes);
	return rc;
}

/* ---- the run ---- */

static int check_options(const struct audit_options *opt, struct hc_error *err)
{
	const struct audit_policy *p = &opt->policy;

	if (p->max_sector_weight > 0 && !opt->sectors)
		return hc_error(err, HC_EUSAGE, "a maximum sector weight needs a sector map");
	if (!(p->min_effective >= 0) || !(p->max_weight >= 0) || !(p->max_sector_weight >= 0) ||
	    p->max_weight > 1 || p->max_sector_weight > 1)
		return hc_error(err, HC_EUSAGE, "policy limits must be weights between 0 and 1 and counts of 0 or more");
	if (!(opt->limit_tolerance >= 0) || !(opt->tie_rtol >= 0))
		return hc_error(err, HC_EUSAGE, "tolerances must be zero or more");
	if (!(opt->min_covered_weight >= 0 && opt->min_covered_weight <= 1))
		return hc_error(err, HC_EUSAGE, "the minimum covered weight must be between 0 and 1, found %g",
				opt->min_covered_weight);
	if (opt->reading != AUDIT_READING_EXCLUDED && opt->reading != AUDIT_READING_CAPPED)
		return hc_error(err, HC_EUSAGE, "unknown reading %d of the 5%% baskets", opt->reading);
	if (opt->cash_risk != AUDIT_CASH_EXCLUDE && opt->cash_risk != AUDIT_CASH_ZERO)
		return hc_error(err, HC_EUSAGE, "unknown treatment %d of cash in the risk figures", opt->cash_risk);
	return HC_OK;
}

static int audit_one(struct audit_fund *af, const struct holdings_fund *fd,
		     const struct holdings *h, const struct source *src,
		     const struct moments *mo, const struct audit_options *opt,
		     long *idx, double *dwork, struct issuer_weight *iw,
		     double *series, struct ragged_ws *ws, const struct bench_weight *bw, size_t nb,
		     struct hc_error *err)
{
	int rc;

	af->name = fd->name;
	af->sd_percentile = NAN;
	af->variance = af->sd = af->diversification_ratio = NAN;
	af->equivalent_count = af->weighted_random_sd = af->equal_random_sd = NAN;
	af->active_share = opt->benchmark ? active_share(fd, bw, nb) : NAN;
	concentration(af, fd, dwork);
	if ((rc = locate(af, fd, h, src, opt->strict, idx, err)) != HC_OK)
		return rc;
	if ((rc = risk(af, fd, src, mo, opt->cash_risk, idx, series, ws, err)) != HC_OK)
		return rc;
	if ((rc = sectors(af, fd, opt->sectors, err)) != HC_OK)
		return rc;
	screens(af, fd, iw, opt->reading, h->has_group, opt->limit_tolerance);
	return HC_OK;
}

/* Every fund against src; a->t, a->input and a->annualised are the caller's. */
static int run(struct audit_result **out, const struct holdings *h, const struct source *src,
	       const struct moments *mo, const struct audit_options *opt, struct hc_error *err)
{
	struct audit_result *a = NULL;
	long *idx = NULL;
	double *dwork = NULL, *series = NULL;
	struct issuer_weight *iw = NULL;
	struct bench_weight *bw = NULL;
	struct ragged_ws ws = { NULL, NULL, NULL };
	size_t nmax = 1, f, nb = 0;
	int rc;

	*out = NULL;
	if ((rc = check_options(opt, err)) != HC_OK ||
	    (rc = bench_weights(opt->benchmark, &bw, &nb, err)) != HC_OK)
		return rc;
	for (f = 0; f < h->nfunds; f++)
		if (h->funds[f].n > nmax)
			nmax = h->funds[f].n;
	a = hc_calloc(1, sizeof *a);
	idx = hc_calloc(nmax, sizeof *idx);
	dwork = hc_calloc(nmax, sizeof *dwork);
	iw = hc_calloc(nmax, sizeof *iw);
	if (src->per) {
		/* the largest fund's rows of returns, within the universe's budget */
		if ((rc = hc_memory_check(src->u->max_bytes, (double)src->u->m * (double)src->u->t * 8.0,
					  (double)nmax * (double)src->u->t * 8.0, err,
					  "%s: the returns of a fund of %zu holdings", h->source, nmax)) != HC_OK)
			goto cleanup;
		ws.x = hc_mallocarray(nmax * src->u->t, sizeof *ws.x);
		ws.ids = hc_calloc(nmax, sizeof *ws.ids);
		ws.w = hc_calloc(nmax, sizeof *ws.w);
	} else if (src->u)
		series = hc_calloc(src->u->t, sizeof *series);
	if (!a || !idx || !dwork || !iw || (src->u && !src->per && !series) ||
	    (src->per && (!ws.x || !ws.ids || !ws.w)) ||
	    !(a->funds = hc_calloc(h->nfunds ? h->nfunds : 1, sizeof *a->funds))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory auditing '%s'", h->source);
		goto cleanup;
	}
	a->policy = opt->policy;
	a->has_sectors = opt->sectors != NULL;
	a->min_covered_weight = opt->min_covered_weight;
	a->reading = opt->reading;
	a->cash_risk = opt->cash_risk;
	a->has_benchmark = opt->benchmark != NULL;
	a->has_groups = h->has_group;
	a->paths = opt->paths;
	a->seed = opt->seed;
	a->tie_rtol = opt->tie_rtol;
	a->periods_per_year = src->pp;
	a->m = src->u ? src->u->m : src->cm->m;
	a->universe_source = src->name;
	a->holdings_source = h->source;
	for (f = 0; f < h->nfunds; f++) {
		a->nfunds = f + 1;
		rc = audit_one(&a->funds[f], &h->funds[f], h, src, mo, opt,
				idx, dwork, iw, series, &ws, bw, nb, err);
		if (rc != HC_OK)
			goto cleanup;
		a->repaired_funds += a->funds[f].risk_repaired;
		a->unpaired_funds += a->funds[f].risk_unpaired;
	}
	a->ragged = src->per != NULL;
	if ((rc = percentiles(a, src, opt, err)) != HC_OK)
		goto cleanup;
	for (f = 0; f < a->nfunds; f++) {
		policy(&a->funds[f], &opt->policy, opt->limit_tolerance);
		verdict(&a->funds[f], opt->min_covered_weight, opt->limit_tolerance);
		a->failed_funds += !a->funds[f].passed;
		a->insufficient_funds += a->funds[f].verdict == AUDIT_VERDICT_INSUFFICIENT;
	}
	*out = a;
	a = NULL;
cleanup:
	hc_audit_result_free(a);
	hc_free(idx);
	hc_free(dwork);
	hc_free(iw);
	hc_free(series);
	hc_free(ws.x);
	hc_free(ws.ids);
	hc_free(ws.w);
	hc_free(bw);
	return rc;
}

/* The private view above, from the public source: complete series give
 * funds' risk from their returns, a matrix (or the pairwise-complete
 * covariances of series with gaps) from w'Aw. */
static const char *input_text(const struct hc_source *s)
{
	switch (s->kind) {
	case HC_SOURCE_SERIES:
		return "return history";
	case HC_SOURCE_PAIRWISE:
		return s->psd.repaired ? "return history with gaps; risk from its pairwise-complete covariances, "
					 "repaired to the nearest positive semi-definite matrix"
				       : "return history with gaps; risk from its pairwise-complete covariances";
	case HC_SOURCE_RAGGED:
		return "return history with gaps, read period by period; each fund's risk from its own holdings' "
		       "pairwise-complete covariances";
	}
	return "covariance matrix";
}

int hc_audit_run(struct audit_result **out, const struct holdings *h,
		 const struct hc_source *s, const struct moments *mo,
		 const struct audit_options *opt, struct hc_error *err)
{
	struct source src = { NULL, NULL, s->u, s->name, s->periods_per_year > 0 ? s->periods_per_year : 1, s, NULL };
	struct hc_source view;
	struct moments own;
	int rc;

	*out = NULL;
	if (!mo) {
		/* Funds' risk from a matrix compares with that matrix's averages. */
		view = *s;
		if (hc_source_matrix(s))
			view.kind = HC_SOURCE_MATRIX;
		if ((rc = hc_moments_from_source(&own, &view, err)) != HC_OK)
			return rc;
		mo = &own;
	}
	if ((rc = check_options(opt, err)) != HC_OK)
		return rc;
	if (hc_source_has_series(s)) {
		src.u = s->u;
		if (s->u->t < 2)
			return hc_error(err, HC_EDATA, "the universe '%s' has %zu periods, expected at least 2",
					s->name ? s->name : "", s->u->t);
	} else if (s->kind == HC_SOURCE_RAGGED && s->per) {
		src.u = s->u;
		src.per = s->per;
		if (s->u->t < 2)
			return hc_error(err, HC_EDATA, "the universe '%s' has %zu periods, expected at least 2",
					s->name ? s->name : "", s->u->t);
	} else if (hc_source_matrix(s)) {
		src.cm = s->cm;
		if (s->cm->m < 2)
			return hc_error(err, HC_EDATA, "the covariance matrix '%s' has %zu securities, expected at least 2",
					s->name ? s->name : "", s->cm->m);
	} else
		return hc_error(err, HC_EUSAGE, "'%s' has gaps and no pairwise-complete matrix to take funds' risk from "
				"(build the source with need_matrix)", s->name ? s->name : "");
	if ((rc = run(out, h, &src, mo, opt, err)) != HC_OK)
		return rc;
	(*out)->t = hc_source_periods(s);
	(*out)->input = input_text(s);
	(*out)->source = s;
	(*out)->annualised = s->annualised;
	return HC_OK;
}

void hc_audit_result_free(struct audit_result *a)
{
	size_t f;

	if (!a)
		return;
	for (f = 0; a->funds && f < a->nfunds; f++) {
		hc_free(a->funds[f].missing);
		hc_free(a->funds[f].sectors);
		hc_free(a->funds[f].risk_reason);
	}
	hc_free(a->funds);
	hc_free(a);
}

/* ---- the report ---- */

enum {
	FC_FUND, FC_HOLDINGS, FC_WEIGHT_SUM, FC_MAX_WEIGHT, FC_TOP10, FC_HHI,
	FC_EFFECTIVE, FC_SD, FC_DR, FC_EQUIVALENT, FC_PERCENTILE, FC_WRSD,
	FC_PASSED, FC_FAILED, FC_EQUAL_RSD, FC_MAX_ID, FC_RISK_HOLDINGS, FC_MISSING,
	FC_MISSING_WEIGHT, FC_SUBSET, FC_BELOW_FLOOR, FC_ISSUER_MAX,
	FC_ISSUER_MAX_ID, FC_UCITS, FC_1940, FC_RIC, FC_SECTOR_HHI,
	FC_MAX_SECTOR, FC_MAX_SECTOR_WEIGHT, FC_COVERED_WEIGHT, FC_VERDICT,
	FC_CASH, FC_GOVERNMENT, FC_FUND_SHARES, FC_GROSS, FC_NET, FC_SHORT,
	FC_ISSUERS, FC_ISSUER_HHI, FC_EFFECTIVE_ISSUERS, FC_MAX_GROUP,
	FC_MAX_GROUP_WEIGHT, FC_BASKET_1940_EXCLUDED, FC_BASKET_1940_CAPPED,
	FC_BASKET_RIC_EXCLUDED, FC_BASKET_RIC_CAPPED, FC_ACTIVE_SHARE, FC_RISK_REASON,
	FC_RISK_REPAIRED, FC_N
};

static const struct {
	const char *key, *title;
	int style;
} fund_columns[FC_N] = {
	{ "fund", "fund", REPORT_STYLE_PLAIN },
	{ "holdings", "holdings", REPORT_STYLE_PLAIN },
	{ "weight_sum", "input total", REPORT_STYLE_FIXED4 },
	{ "max_weight", "largest (net assets)", REPORT_STYLE_PERCENT },
	{ "top10_share", "top 10 (net assets)", REPORT_STYLE_PERCENT },
	{ "hhi", "HHI (invested, gross)", REPORT_STYLE_FIXED4 },
	{ "effective_holdings", "effective (invested, gross)", REPORT_STYLE_FIXED2 },
	{ "sd", "sd", REPORT_STYLE_PERCENT },
	{ "diversification_ratio", "div. ratio", REPORT_STYLE_FIXED2 },
	{ "equivalent_count", "equiv. count", REPORT_STYLE_FIXED2 },
	{ "sd_percentile", "sd rank (share)", REPORT_STYLE_FIXED4 },
	{ "weighted_random_sd", "sqrt E[var], own weights", REPORT_STYLE_PERCENT },
	{ "passed", "passed", REPORT_STYLE_PLAIN },
	{ "failed_rules", "limits failed", REPORT_STYLE_PLAIN },
	{ "equal_weight_random_sd", "random sd, equal weights", REPORT_STYLE_PERCENT },
	{ "max_weight_id", "largest id", REPORT_STYLE_PLAIN },
	{ "risk_holdings", "covered holdings", REPORT_STYLE_PLAIN },
	{ "missing_count", "ids missing", REPORT_STYLE_PLAIN },
	{ "missing_weight", "missing weight", REPORT_STYLE_PERCENT },
	{ "risk_on_subset", "risk on subset", REPORT_STYLE_PLAIN },
	{ "below_floor", "below floor", REPORT_STYLE_PLAIN },
	{ "max_issuer_weight", "largest issuer (net assets)", REPORT_STYLE_PERCENT },
	{ "max_issuer", "largest issuer id", REPORT_STYLE_PLAIN },
	{ "ucits", "ucits", REPORT_STYLE_PLAIN },
	{ "1940act", "1940act", REPORT_STYLE_PLAIN },
	{ "ric", "ric", REPORT_STYLE_PLAIN },
	{ "sector_hhi", "sector HHI", REPORT_STYLE_FIXED4 },
	{ "max_sector", "largest sector", REPORT_STYLE_PLAIN },
	{ "max_sector_weight", "largest sector weight", REPORT_STYLE_PERCENT },
	{ "covered_weight", "covered weight (invested, gross)", REPORT_STYLE_PERCENT },
	{ "verdict", "verdict", REPORT_STYLE_PLAIN },
	{ "cash_weight", "cash (net assets)", REPORT_STYLE_PERCENT },
	{ "government_weight", "government (net assets)", REPORT_STYLE_PERCENT },
	{ "fund_share_weight", "fund shares (net assets)", REPORT_STYLE_PERCENT },
	{ "gross_exposure", "gross exposure", REPORT_STYLE_PERCENT },
	{ "net_exposure", "net exposure", REPORT_STYLE_PERCENT },
	{ "short_exposure", "short exposure", REPORT_STYLE_PERCENT },
	{ "issuers", "issuers", REPORT_STYLE_PLAIN },
	{ "issuer_hhi", "issuer HHI (invested, gross)", REPORT_STYLE_FIXED4 },
	{ "effective_issuers", "effective issuers", REPORT_STYLE_FIXED2 },
	{ "max_group", "largest group", REPORT_STYLE_PLAIN },
	{ "max_group_weight", "largest group weight", REPORT_STYLE_PERCENT },
	{ "basket_1940act_excluded", "1940act basket, excluded", REPORT_STYLE_PERCENT },
	{ "basket_1940act_capped", "1940act basket, capped", REPORT_STYLE_PERCENT },
	{ "basket_ric_excluded", "ric basket, excluded", REPORT_STYLE_PERCENT },
	{ "basket_ric_capped", "ric basket, capped", REPORT_STYLE_PERCENT },
	{ "active_share", "active share", REPORT_STYLE_PERCENT },
	{ "risk_reason", "why no risk figures", REPORT_STYLE_PLAIN },
	{ "risk_matrix_repaired", "own covariances repaired", REPORT_STYLE_PLAIN },
};

static int failed_text(unsigned failed, char *buf, size_t size)
{
	size_t used = 0;
	int k;

	buf[0] = '\0';
	for (k = 0; k < AUDIT_NRULES; k++) {
		int n;
		if (!(failed & (1u << k)))
			continue;
		n = snprintf(buf + used, size - used, "%s%s", used ? ";" : "", rule_names[k]);
		if (n < 0 || (size_t)n >= size - used)
			return -1;
		used += (size_t)n;
	}
	return 0;
}

static int fund_row(struct report_table *t, const struct audit_result *a,
		    const struct audit_fund *af)
{
	char failed[256];
	size_t r;

	if (hc_report_table_add_row(t) != HC_OK)
		return HC_ENOMEM;
	r = t->nrows - 1;
	if (hc_report_table_set_text(t, r, FC_FUND, af->name) != HC_OK)
		return HC_ENOMEM;
	hc_report_table_set_int(t, r, FC_HOLDINGS, (long long)af->holdings);
	hc_report_table_set_real(t, r, FC_WEIGHT_SUM, af->weight_sum);
	hc_report_table_set_real(t, r, FC_MAX_WEIGHT, af->max_weight);
	hc_report_table_set_real(t, r, FC_TOP10, af->top10_share);
	hc_report_table_set_real(t, r, FC_HHI, af->hhi);
	hc_report_table_set_real(t, r, FC_EFFECTIVE, af->effective_holdings);
	hc_report_table_set_real(t, r, FC_SD, af->sd);
	hc_report_table_set_real(t, r, FC_DR, af->diversification_ratio);
	/* no number: "below the floor" in CSV and text, null in JSON, where
	 * the column below_floor says why */
	if (af->risk_known && af->below_floor) {
		if (hc_report_table_set_none(t, r, FC_EQUIVALENT, "below the floor") != HC_OK)
			return HC_ENOMEM;
	} else
		hc_report_table_set_real(t, r, FC_EQUIVALENT, af->equivalent_count);
	hc_report_table_set_real(t, r, FC_PERCENTILE, af->sd_percentile);
	hc_report_table_set_real(t, r, FC_WRSD, af->weighted_random_sd);
	hc_report_table_set_real(t, r, FC_EQUAL_RSD, af->equal_random_sd);
	hc_report_table_set_bool(t, r, FC_PASSED, af->passed);
	if (failed_text(af->failed, failed, sizeof failed) != 0 ||
	    hc_report_table_set_text(t, r, FC_FAILED, failed) != HC_OK ||
	    hc_report_table_set_text(t, r, FC_MAX_ID, af->max_id) != HC_OK ||
	    hc_report_table_set_text(t, r, FC_ISSUER_MAX_ID, af->issuer_max_id) != HC_OK)
		return HC_ENOMEM;
	hc_report_table_set_int(t, r, FC_RISK_HOLDINGS, (long long)af->risk_holdings);
	hc_report_table_set_int(t, r, FC_MISSING, (long long)af->nmissing);
	hc_report_table_set_real(t, r, FC_MISSING_WEIGHT, af->missing_weight);
	hc_report_table_set_bool(t, r, FC_SUBSET, af->risk_subset || !af->risk_known);
	if (af->risk_known)
		hc_report_table_set_bool(t, r, FC_BELOW_FLOOR, af->below_floor);
	hc_report_table_set_real(t, r, FC_ISSUER_MAX, af->issuer_max);
	hc_report_table_set_bool(t, r, FC_UCITS, af->screen_passed[0]);
	hc_report_table_set_bool(t, r, FC_1940, af->screen_passed[1]);
	hc_report_table_set_bool(t, r, FC_RIC, af->screen_passed[2]);
	if (a->has_sectors) {
		hc_report_table_set_real(t, r, FC_SECTOR_HHI, af->sector_hhi);
		hc_report_table_set_real(t, r, FC_MAX_SECTOR_WEIGHT, af->max_sector_weight);
		if (af->max_sector && hc_report_table_set_text(t, r, FC_MAX_SECTOR, af->max_sector) != HC_OK)
			return HC_ENOMEM;
	}
	hc_report_table_set_real(t, r, FC_COVERED_WEIGHT, af->covered_weight);
	if (hc_report_table_set_text(t, r, FC_VERDICT, hc_audit_verdict_name(af->verdict)) != HC_OK)
		return HC_ENOMEM;
	hc_report_table_set_real(t, r, FC_CASH, af->cash_weight);
	hc_report_table_set_real(t, r, FC_GOVERNMENT, af->government_weight);
	hc_report_table_set_real(t, r, FC_FUND_SHARES, af->fund_share_weight);
	hc_report_table_set_real(t, r, FC_GROSS, af->gross_exposure);
	hc_report_table_set_real(t, r, FC_NET, af->net_exposure);
	hc_report_table_set_real(t, r, FC_SHORT, af->short_exposure);
	hc_report_table_set_int(t, r, FC_ISSUERS, (long long)af->issuers);
	hc_report_table_set_real(t, r, FC_ISSUER_HHI, af->issuer_hhi);
	hc_report_table_set_real(t, r, FC_EFFECTIVE_ISSUERS, af->effective_issuers);
	if (a->has_groups) {
		hc_report_table_set_real(t, r, FC_MAX_GROUP_WEIGHT, af->max_group_weight);
		if (af->max_group && hc_report_table_set_text(t, r, FC_MAX_GROUP, af->max_group) != HC_OK)
			return HC_ENOMEM;
	}
	hc_report_table_set_real(t, r, FC_BASKET_1940_EXCLUDED, af->basket_1940[AUDIT_READING_EXCLUDED]);
	hc_report_table_set_real(t, r, FC_BASKET_1940_CAPPED, af->basket_1940[AUDIT_READING_CAPPED]);
	hc_report_table_set_real(t, r, FC_BASKET_RIC_EXCLUDED, af->basket_ric[AUDIT_READING_EXCLUDED]);
	hc_report_table_set_real(t, r, FC_BASKET_RIC_CAPPED, af->basket_ric[AUDIT_READING_CAPPED]);
	if (a->has_benchmark)
		hc_report_table_set_real(t, r, FC_ACTIVE_SHARE, af->active_share);
	if (af->risk_reason && hc_report_table_set_text(t, r, FC_RISK_REASON, af->risk_reason) != HC_OK)
		return HC_ENOMEM;
	if (a->ragged && af->risk_known)
		hc_report_table_set_bool(t, r, FC_RISK_REPAIRED, af->risk_repaired);
	return HC_OK;
}

static int funds_table(struct report *rep, const struct audit_result *a)
{
	struct report_table *t = hc_report_add_table(rep, "funds", "funds");
	size_t k;

	if (!t)
		return HC_ENOMEM;
	for (k = 0; k < FC_N; k++)
		if (hc_report_table_add_column(t, fund_columns[k].key, fund_columns[k].title,
					    fund_columns[k].style) != HC_OK)
			return HC_ENOMEM;
	for (k = 0; k < a->nfunds; k++)
		if (fund_row(t, a, &a->funds[k]) != HC_OK)
			return HC_ENOMEM;
	return HC_OK;
}

static int add_columns(struct report_table *t, const char *const *keys,
		       const int *styles, size_t n)
{
	size_t k;

	for (k = 0; k < n; k++)
		if (hc_report_table_add_column(t, keys[k], keys[k], styles[k]) != HC_OK)
			return HC_ENOMEM;
	return HC_OK;
}

static int screens_table(struct report *rep, const struct audit_result *a)
{
	static const char *const keys[] = { "fund", "screen", "part", "passed", "figure", "test", "limit", "issuer",
					    "required", "reading", "decides", "basis" };
	static const int styles[] = { 0, 0, 0, 0, REPORT_STYLE_PERCENT, 0, REPORT_STYLE_PERCENT, 0, 0, 0, 0, 0 };
	struct report_table *t = hc_report_add_table(rep, "screens", "legal weight limits (from memory of the text; verify with counsel)");
	size_t f, q, r;

	if (!t || add_columns(t, keys, styles, 12) != HC_OK)
		return HC_ENOMEM;
	for (f = 0; f < a->nfunds; f++)
		for (q = 0; q < AUDIT_NPARTS; q++) {
			int p = part_order[q];
			const struct audit_check *c = &a->funds[f].checks[p];
			const char *reading = parts[p].basket ? reading_names[parts[p].decides ? a->reading : !a->reading] : NULL;
			if (hc_report_table_add_row(t) != HC_OK)
				return HC_ENOMEM;
			r = t->nrows - 1;
			if (hc_report_table_set_text(t, r, 0, a->funds[f].name) != HC_OK ||
			    hc_report_table_set_text(t, r, 1, parts[p].screen) != HC_OK ||
			    hc_report_table_set_text(t, r, 2, parts[p].part) != HC_OK ||
			    hc_report_table_set_text(t, r, 5, parts[p].test) != HC_OK ||
			    (c->issuer && hc_report_table_set_text(t, r, 7, c->issuer) != HC_OK) ||
			    (reading && hc_report_table_set_text(t, r, 9, reading) != HC_OK) ||
			    hc_report_table_set_text(t, r, 11, "net assets") != HC_OK)
				return HC_ENOMEM;
			hc_report_table_set_bool(t, r, 3, c->passed);
			if (c->applies)     /* else empty: no groups given */
				hc_report_table_set_real(t, r, 4, c->figure);
			hc_report_table_set_real(t, r, 6, c->limit);
			hc_report_table_set_bool(t, r, 8, parts[p].decides && ((a->policy.screens >> parts[p].screen_index) & 1));
			hc_report_table_set_bool(t, r, 10, parts[p].decides);
		}
	return HC_OK;
}

/* One row per failed rule or screen part: what the JSON's readers need to
 * see why (the figure against its limit), not only which. */
static int failure_row(struct report_table *t, const char *fund, const char *check, double figure,
		       const char *test, double limit)
{
	size_t r;

	if (hc_report_table_add_row(t) != HC_OK)
		return HC_ENOMEM;
	r = t->nrows - 1;
	if (hc_report_table_set_text(t, r, 0, fund) != HC_OK || hc_report_table_set_text(t, r, 1, check) != HC_OK ||
	    hc_report_table_set_text(t, r, 3, test) != HC_OK)
		return HC_ENOMEM;
	hc_report_table_set_real(t, r, 2, figure);
	hc_report_table_set_real(t, r, 4, limit);
	return HC_OK;
}

static int failures_table(struct report *rep, const struct audit_result *a)
{
	static const char *const keys[] = { "fund", "check", "figure", "test", "limit" };
	static const int styles[] = { 0, 0, REPORT_STYLE_FIXED4, 0, REPORT_STYLE_FIXED4 };
	const struct audit_policy *p = &a->policy;
	struct report_table *t = hc_report_add_table(rep, "failures", "policy failures, with the deciding figures");
	char check[96];
	size_t f, q;
	int rc = HC_OK;

	if (!t || add_columns(t, keys, styles, 5) != HC_OK)
		return HC_ENOMEM;
	for (f = 0; f < a->nfunds && rc == HC_OK; f++) {
		const struct audit_fund *af = &a->funds[f];
		if (af->failed & AUDIT_RULE_MIN_HOLDINGS)
			rc = failure_row(t, af->name, "min-holdings", (double)af->holdings, ">=", (double)p->min_holdings);
		if (rc == HC_OK && (af->failed & AUDIT_RULE_MIN_EFFECTIVE))
			rc = failure_row(t, af->name, "min-effective", af->effective_holdings, ">=", p->min_effective);
		if (rc == HC_OK && (af->failed & AUDIT_RULE_MAX_WEIGHT))
			rc = failure_row(t, af->name, "max-weight", af->max_weight, "<=", p->max_weight);
		if (rc == HC_OK && (af->failed & AUDIT_RULE_MAX_SECTOR_WEIGHT))
			rc = failure_row(t, af->name, "max-sector-weight", af->max_sector_weight, "<=", p->max_sector_weight);
		for (q = 0; q < AUDIT_NPARTS && rc == HC_OK; q++) {
			int k = part_order[q];
			if (!parts[k].decides || af->checks[k].passed ||
			    !(af->failed & (AUDIT_RULE_UCITS << parts[k].screen_index)))
				continue;
			snprintf(check, sizeof check, "%s: %s", parts[k].screen, parts[k].part);
			rc = failure_row(t, af->name, check, af->checks[k].figure, parts[k].test, af->checks[k].limit);
		}
	}
	return rc;
}

/* In JSON each fund's failed_rules is the array of its failures' objects
 * (check, figure, test, limit); CSV and text keep the ';'-joined names. */
static int nest_failures(struct report *rep)
{
	size_t i;
	struct report_table *funds = NULL, *failures = NULL;

	for (i = 0; i < rep->ntables; i++) {
		if (strcmp(rep->tables[i]->key, "funds") == 0)
			funds = rep->tables[i];
		else if (strcmp(rep->tables[i]->key, "failures") == 0)
			failures = rep->tables[i];
	}
	if (!funds || !failures)
		return HC_EINTERNAL;
	return hc_report_table_nest(funds, "failed_rules", failures, "fund");
}

static int missing_table(struct report *rep, const struct audit_result *a)
{
	static const char *const keys[] = { "fund", "id", "weight", "line" };
	static const int styles[] = { 0, 0, REPORT_STYLE_PERCENT, 0 };
	struct report_table *t = NULL;
	size_t f, k, r;

	for (f = 0; f < a->nfunds; f++)
		for (k = 0; k < a->funds[f].nmissing; k++) {
			const struct audit_missing *mi = &a->funds[f].missing[k];
			if (!t) {
				t = hc_report_add_table(rep, "missing", "ids not in the universe");
				if (!t || add_columns(t, keys, styles, 4) != HC_OK)
					return HC_ENOMEM;
			}
			if (hc_report_table_add_row(t) != HC_OK)
				return HC_ENOMEM;
			r = t->nrows - 1;
			if (hc_report_table_set_text(t, r, 0, a->funds[f].name) != HC_OK ||
			    hc_report_table_set_text(t, r, 1, mi->id) != HC_OK)
				return HC_ENOMEM;
			hc_report_table_set_real(t, r, 2, mi->weight);
			hc_report_table_set_int(t, r, 3, (long long)mi->line);
		}
	return HC_OK;
}

static int sectors_table(struct report *rep, const struct audit_result *a)
{
	static const char *const keys[] = { "fund", "sector", "weight", "holdings" };
	static const int styles[] = { 0, 0, REPORT_STYLE_PERCENT, 0 };
	struct report_table *t;
	size_t f, k, r;

	if (!a->has_sectors)
		return HC_OK;
	t = hc_report_add_table(rep, "sectors", "sector weights");
	if (!t || add_columns(t, keys, styles, 4) != HC_OK)
		return HC_ENOMEM;
	for (f = 0; f < a->nfunds; f++)
		for (k = 0; k < a->funds[f].nsectors; k++) {
			const struct audit_sector *s = &a->funds[f].sectors[k];
			if (hc_report_table_add_row(t) != HC_OK)
				return HC_ENOMEM;
			r = t->nrows - 1;
			if (hc_report_table_set_text(t, r, 0, a->funds[f].name) != HC_OK ||
			    hc_report_table_set_text(t, r, 1, s->label ? s->label : "(not in the sector map)") != HC_OK)
				return HC_ENOMEM;
			hc_report_table_set_real(t, r, 2, s->weight);
			hc_report_table_set_int(t, r, 3, (long long)s->count);
		}
	return HC_OK;
}

static int policy_text(const struct audit_policy *p, int has_sectors, char *buf, size_t size)
{
	size_t used = 0;
	int n, s;

#define APPEND(...) do { \
		n = snprintf(buf + used, size - used, __VA_ARGS__); \
		if (n < 0 || (size_t)n >= size - used) return -1; \
		used += (size_t)n; \
	} while (0)
	buf[0] = '\0';
	if (p->min_holdings)
		APPEND("%sholdings >= %zu", used ? "; " : "", p->min_holdings);
	if (p->min_effective > 0)
		APPEND("%seffective holdings >= %g", used ? "; " : "", p->min_effective);
	if (p->max_weight > 0)
		APPEND("%slargest weight <= %g%%", used ? "; " : "", 100 * p->max_weight);
	if (p->max_sector_weight > 0 && has_sectors)
		APPEND("%slargest sector <= %g%%", used ? "; " : "", 100 * p->max_sector_weight);
	for (s = 0; s < AUDIT_NSCREENS; s++)
		if (p->screens & (1u << s))
			APPEND("%sscreen %s", used ? "; " : "", rule_names[4 + s]);
	if (!used)
		APPEND("none (every fund passes)");
#undef APPEND
	return 0;
}

static int fields(struct report *rep, const struct audit_result *a)
{
	char buf[512];

	if (policy_text(&a->policy, a->has_sectors, buf, sizeof buf) != 0)
		return HC_EINTERNAL;
	if (hc_report_add_text(rep, "universe", "universe", a->universe_source ? a->universe_source : "") != HC_OK ||
	    hc_report_add_text(rep, "input", "input", a->input ? a->input : "return history") != HC_OK ||
	    (a->source && (hc_source_report_treatment(a->source, rep) != HC_OK ||
			   hc_datacheck_report_kept(rep, a->source->u ? &a->source->u->checks : NULL) != HC_OK)) ||
	    hc_report_add_text(rep, "holdings_file", "holdings", a->holdings_source ? a->holdings_source : "") != HC_OK ||
	    hc_report_add_int(rep, "securities", "securities", (long long)a->m) != HC_OK ||
	    (a->t ? hc_report_add_int(rep, "periods", "periods", (long long)a->t)
		  : hc_report_add_none(rep, "periods", "periods")) != HC_OK ||
	    (a->annualised ? hc_report_add_real(rep, "periods_per_year", "periods per year", a->periods_per_year,
					     REPORT_STYLE_PLAIN)
			   : hc_report_add_none(rep, "periods_per_year", "periods per year")) != HC_OK ||
	    hc_report_add_int(rep, "paths", "random portfolios per count", (long long)a->paths) != HC_OK ||
	    hc_report_add_int(rep, "seed", "seed", (long long)a->seed) != HC_OK ||
	    hc_report_add_text(rep, "policy", "policy", buf) != HC_OK ||
	    hc_report_add_int(rep, "fund_count", "funds", (long long)a->nfunds) != HC_OK ||
	    hc_report_add_int(rep, "failed_funds", "funds failing the policy", (long long)a->failed_funds) != HC_OK ||
	    hc_report_add_real(rep, "min_covered_weight", "least covered weight for a verdict", a->min_covered_weight,
			       REPORT_STYLE_PERCENT) != HC_OK ||
	    hc_report_add_int(rep, "insufficient_funds", "funds with insufficient data", (long long)a->insufficient_funds) != HC_OK ||
	    hc_report_add_text(rep, "basket_reading", "5% basket reading deciding", reading_names[a->reading]) != HC_OK ||
	    hc_report_add_text(rep, "cash_risk", "cash in the risk figures",
			       a->cash_risk == AUDIT_CASH_ZERO ? "zero (risk of net assets, cash at zero variance)"
							       : "exclude (risk of the invested assets, renormalised)") != HC_OK)
		return HC_ENOMEM;
	if (a->ragged &&
	    (hc_report_add_text(rep, "comparison", "random portfolios and curve", AUDIT_RAGGED_COMPARISON) != HC_OK ||
	     hc_report_add_int(rep, "risk_matrix_repaired_funds", "funds whose own covariances were repaired",
			       (long long)a->repaired_funds) != HC_OK ||
	     hc_report_add_int(rep, "unpaired_funds", "funds without risk figures (holdings sharing too few periods)",
			       (long long)a->unpaired_funds) != HC_OK))
		return HC_ENOMEM;
	return HC_OK;
}

static int notes(struct report *rep, const struct audit_result *a, const struct holdings *h)
{
	char buf[512];
	size_t k;

	for (k = 0; h && k < h->nwarnings; k++)
		if (hc_report_add_note(rep, h->warnings[k]) != HC_OK)
			return HC_ENOMEM;
	snprintf(buf, sizeof buf,
		 "sd_percentile ranks the fund's sd among %zu random equal-weight portfolios of the same count (seed %llu%s); ties (relative difference within %g) count half: (below + equal/2)/paths",
		 a->paths, (unsigned long long)a->seed,
		 a->ragged ? "; each a random order of the securities, holding at every period the first N of them alive then" : "",
		 a->tie_rtol);
	if (hc_report_add_note(rep, buf) != HC_OK)
		return HC_ENOMEM;
	if (a->t == 0 && a->annualised)
		snprintf(buf, sizeof buf, "risk figures come from the covariance matrix, annualised: variances times %g, "
			 "standard deviations times sqrt(%g)", a->periods_per_year, a->periods_per_year);
	else if (a->t == 0)
		snprintf(buf, sizeof buf, "risk figures come from the covariance matrix, on its own scale (not annualised)");
	else
		snprintf(buf, sizeof buf, "risk figures are annualised sample estimates from the universe's history%s",
			 a->ragged ? ", each fund's through the pairwise-complete covariances of its own holdings (each "
				     "pair over the periods both are observed, with its own means)"
			 : a->input && strcmp(a->input, "return history") ? ", through its pairwise-complete covariances" : "");
	if (hc_report_add_note(rep, buf) != HC_OK ||
	    (a->ragged && hc_report_add_note(rep, AUDIT_RAGGED_NOTE) != HC_OK) ||
	    hc_report_add_note(rep, "funds with ids missing from the universe have their risk figures computed on the remaining weights, renormalised (risk_on_subset)") != HC_OK ||
	    hc_report_add_note(rep, "the UCITS (2009/65/EC Art. 52), Investment Company Act of 1940 s. 5(b)(1) and Internal Revenue Code s. 851(b)(3) screens are written from memory of the published texts and test weights only: verify against the current text and defer to compliance counsel") != HC_OK ||
	    hc_report_add_note(rep, "statute figures are from memory of the text; verify with counsel. The 1940 Act s. 5(b)(1) and s. 851(b)(3) baskets have two readings: 'excluded' leaves an issuer above 5% out of the basket, 'capped' counts it up to 5%; the screens table shows both and says which decides") != HC_OK ||
	    hc_report_add_note(rep, "the 1940 Act tests diversification when a security is acquired (s. 5(c): a fund that later drifts past the limits through market moves alone stays diversified); s. 851(b)(3) is tested at each quarter end, with a 30-day cure period after a quarter end for a failure caused by an acquisition (s. 851(d)); this audit tests the weights as given, at one date. UCITS funds replicating an index may hold up to 20% in one issuer, 35% in exceptional cases (Art. 53); this audit does not apply those exceptions") != HC_OK ||
	    hc_report_add_note(rep, "bases: largest position, top 10, cash, exposures, issuer and group weights and every screen are of net assets (the fund's lines summed, cash included); holdings, HHI, effective holdings by line and by issuer and the covered weight are of the invested assets (cash left out) by absolute (gross) weight; cash is not a holding or an issuer") != HC_OK)
		return HC_ENOMEM;
	snprintf(buf, sizeof buf, "a fund whose risk figures rest on less than %g%% of its invested weight (covered_weight; ids missing from the universe or dropped for gaps) gets the verdict 'insufficient data' unless it fails the policy; risk figures are %s",
		 100 * a->min_covered_weight,
		 a->cash_risk == AUDIT_CASH_ZERO ? "of net assets, cash held at zero variance" : "of the invested assets, cash left out and the rest renormalised");
	if (hc_report_add_note(rep, buf) != HC_OK)
		return HC_ENOMEM;
	if (a->has_benchmark && hc_report_add_note(rep, "active share (Cremers & Petajisto, 2009, Review of Financial Studies 22(9)) is half the sum of |fund weight - benchmark weight| over every id, both on invested assets") != HC_OK)
		return HC_ENOMEM;
	return hc_report_add_cautions(rep) == HC_OK ? HC_OK : HC_ENOMEM;
}

int hc_audit_report(struct report **out, const struct audit_result *a,
		 const struct holdings *h, struct hc_error *err)
{
	struct report *rep = hc_report_alloc();
	int rc;

	*out = NULL;
	if (!rep)
		return hc_error(err, HC_ENOMEM, "out of memory building the audit report");
	if ((rc = fields(rep, a)) != HC_OK || (rc = funds_table(rep, a)) != HC_OK ||
	    (rc = screens_table(rep, a)) != HC_OK || (rc = missing_table(rep, a)) != HC_OK ||
	    (rc = sectors_table(rep, a)) != HC_OK || (rc = failures_table(rep, a)) != HC_OK ||
	    (rc = nest_failures(rep)) != HC_OK ||
	    (rc = notes(rep, a, h)) != HC_OK) {
		hc_report_free(rep);
		return hc_error(err, rc, rc == HC_ENOMEM ? "out of memory building the audit report"
				: "the audit report's policy text is too long");
	}
	*out = rep;
	return HC_OK;
}
