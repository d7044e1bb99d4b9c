/*
 * periodic.c - the exact curve of a ragged universe from per-period sums
 * (design.md section 12; docs/mathematics.md, "Ragged histories").
 *
 * Why this form: for complete data, with x_it centred on each security's
 * own mean, sum_t xbar_t^2/(T-1) is the equal-weight universe's variance
 * (V + C)/M^2 and sum_t s2_t/(T-1) is v-bar - c-bar, so the familiar
 * v-bar/N + (1 - 1/N) c-bar is a sum over periods of the variance of a
 * sample mean drawn without replacement from that period's cross-section:
 * E[(mean_S x_t)^2] = xbar_t^2 + (1/N - 1/M_t) s2_t (Cochran, 1977,
 * Sampling Techniques, 3rd ed., Wiley, theorem 2.2).  Each period can
 * therefore use its own alive set without any covariance matrix.
 */
#include "holdcount/periodic.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_rng.h>

#include "holdcount/memory.h"
#include "holdcount/paths.h"
#include "holdcount/threads.h"


void hc_periodic_free(struct hc_periodic *p)
{
	if (!p)
		return;
	hc_periodic_curve_release(&p->curve);
	hc_free(p->alive);
	hc_free(p->mean);
	hc_free(p->cross);
	hc_free(p->raw_mean);
	hc_free(p->rank);
	hc_free(p->level);
	hc_free(p->member);
	hc_free(p->own_mean);
	hc_free(p);
}

static int cmp_size(const void *a, const void *b)
{
	size_t x = *(const size_t *)a, y = *(const size_t *)b;

	return (x > y) - (x < y);
}

/* Each security's mean over the window's periods it is observed; keeps
 * those observed at least twice. */
static void own_means(struct hc_periodic *p, const struct universe *u, size_t first, size_t len)
{
	size_t i, k, n;

	p->m = p->m_short = p->complete = 0;
	for (i = 0; i < u->m; i++) {
		const double *xi = u->x + i * u->t + first;
		double s = 0;

		for (k = n = 0; k < len; k++)
			if (!isnan(xi[k])) {
				s += xi[k];
				n++;
			}
		if (n < 2) {
			p->m_short += n == 1;
			continue;
		}
		p->complete += n == len;
		p->member[p->m] = i;
		p->own_mean[p->m++] = s / (double)n;
	}
}

/* Alive counts and period means (pass two), then spreads about those
 * means (pass three): two-pass sums keep the digits the 1e-12 agreement
 * with the complete-data route needs. */
static void period_sums(struct hc_periodic *p, const struct universe *u, size_t first)
{
	size_t i, k, len = p->t;

	for (i = 0; i < p->m; i++) {
		const double *xi = u->x + p->member[i] * u->t + first;
		double mu = p->own_mean[i];

		for (k = 0; k < len; k++)
			if (!isnan(xi[k])) {
				p->alive[k]++;
				p->mean[k] += xi[k] - mu;
				p->raw_mean[k] += xi[k];
			}
	}
	for (k = 0; k < len; k++) {
		p->mean[k] = p->alive[k] ? p->mean[k] / (double)p->alive[k] : 0.0;
		p->raw_mean[k] = p->alive[k] ? p->raw_mean[k] / (double)p->alive[k] : 0.0;
	}
	for (i = 0; i < p->m; i++) {
		const double *xi = u->x + p->member[i] * u->t + first;
		double mu = p->own_mean[i];

		for (k = 0; k < len; k++)
			if (!isnan(xi[k])) {
				double d = xi[k] - mu - p->mean[k];

				p->cross[k] += d * d;
			}
	}
	for (k = 0; k < len; k++)
		p->cross[k] = p->alive[k] > 1 ? p->cross[k] / (double)(p->alive[k] - 1) : 0.0;
}

/* Distinct alive counts, each period's rank among them, min/median/max. */
static int levels(struct hc_periodic *p)
{
	size_t k, j, *sorted = hc_mallocarray(p->t, sizeof *sorted);

	if (!sorted)
		return -1;
	memcpy(sorted, p->alive, p->t * sizeof *sorted);
	qsort(sorted, p->t, sizeof *sorted, cmp_size);
	p->alive_min = sorted[0];
	p->alive_max = sorted[p->t - 1];
	p->alive_median = sorted[(p->t - 1) / 2];
	for (k = j = 0; k < p->t; k++)
		if (j == 0 || sorted[k] != p->level[j - 1])
			p->level[j++] = sorted[k];
	p->nlevels = j;
	for (k = 0; k < p->t; k++) {
		size_t *hit = bsearch(&p->alive[k], p->level, p->nlevels, sizeof *p->level, cmp_size);

		p->rank[k] = (size_t)(hit - p->level);
	}
	hc_free(sorted);
	return 0;
}

int hc_periodic_alloc(struct hc_periodic **out, const struct universe *u,
		      size_t first, size_t len, struct hc_error *err)
{
	struct hc_periodic *p;
	size_t k, two = 0;
	int rc = HC_ENOMEM;

	*out = NULL;
	if (first > u->t || len > u->t - first)
		return hc_error(err, HC_EUSAGE, "window of %zu periods from period %zu lies outside the %zu periods",
				len, first, u->t);
	if (len < 2)
		return hc_error(err, HC_EDATA, "%s: the per-period route needs at least 2 periods, found %zu",
				u->source ? u->source : "universe", len);
	p = hc_calloc(1, sizeof *p);
	if (!p)
		return hc_error(err, HC_ENOMEM, "out of memory for per-period sums");
	p->t = len;
	p->periods_per_year = u->periods_per_year;
	p->max_bytes = u->max_bytes;
	if (!(p->alive = hc_calloc(len, sizeof *p->alive)) || !(p->mean = hc_calloc(len, sizeof *p->mean)) ||
	    !(p->cross = hc_calloc(len, sizeof *p->cross)) || !(p->raw_mean = hc_calloc(len, sizeof *p->raw_mean)) || !(p->rank = hc_calloc(len, sizeof *p->rank)) ||
	    !(p->level = hc_calloc(len, sizeof *p->level)) ||
	    !(p->member = hc_calloc(u->m ? u->m : 1, sizeof *p->member)) ||
	    !(p->own_mean = hc_calloc(u->m ? u->m : 1, sizeof *p->own_mean)))
		goto fail;
	own_means(p, u, first, len);
	if (p->m < 2) {
		rc = hc_error(err, HC_EDATA, "%s: fewer than 2 securities are observed in at least 2 periods",
			      u->source ? u->source : "universe");
		goto out;
	}
	period_sums(p, u, first);
	for (k = 0; k < len; k++)
		two += p->alive[k] > 1;
	if (two == 0) {
		rc = hc_error(err, HC_EDATA, "%s: no period has two securities observed together",
			      u->source ? u->source : "universe");
		goto out;
	}
	if (levels(p) || hc_periodic_curve_init(&p->curve, p))
		goto fail;
	hc_periodic_curve_set(&p->curve, p, NULL, len);
	*out = p;
	return HC_OK;
fail:
	rc = hc_error(err, HC_ENOMEM, "out of memory for the per-period sums of %zu periods", len);
out:
	hc_periodic_free(p);
	return rc;
}

int hc_periodic_moments(const struct hc_periodic *p, struct moments *mo, struct hc_error *err)
{
	double m = (double)p->m;

	(void)err;
	memset(mo, 0, sizeof *mo);
	mo->m = p->m;
	mo->t = p->t;
	mo->route = MOMENTS_ROUTE_PERIODIC;
	mo->average_covariance = p->curve.floor;
	mo->average_variance = p->curve.floor + p->curve.spread;
	mo->sum_var = m * mo->average_variance;
	mo->sum_cov = m * (m - 1) * mo->average_covariance;
	mo->average_correlation = NAN;
	mo->universe_variance = p->curve.a;
	return HC_OK;
}

/* ---- curves ------------------------------------------------------------ */

int hc_periodic_curve_init(struct hc_periodic_curve *c, const struct hc_periodic *p)
{
	memset(c, 0, sizeof *c);
	c->level = p->level;
	c->nlevels = p->nlevels;
	c->s1 = hc_calloc(p->nlevels + 1, sizeof *c->s1);
	c->s2 = hc_calloc(p->nlevels + 1, sizeof *c->s2);
	if (!c->s1 || !c->s2) {
		hc_periodic_curve_release(c);
		return -1;
	}
	return 0;
}

void hc_periodic_curve_release(struct hc_periodic_curve *c)
{
	hc_free(c->s1);
	hc_free(c->s2);
	c->s1 = c->s2 = NULL;
}

void hc_periodic_curve_set(struct hc_periodic_curve *c, const struct hc_periodic *p,
			   const size_t *idx, size_t n)
{
	size_t j, k, L = p->nlevels;
	double a = 0, d = 1.0 / (double)(n - 1);

	memset(c->s1, 0, (L + 1) * sizeof *c->s1);
	memset(c->s2, 0, (L + 1) * sizeof *c->s2);
	for (j = 0; j < n; j++) {
		size_t t = idx ? idx[j] : j;

		a += p->mean[t] * p->mean[t];
		c->s1[p->rank[t]] += p->cross[t];
		c->s2[p->rank[t]] += p->cross[t] / (double)p->alive[t];
	}
	for (k = L; k-- > 0;) {
		c->s1[k] += c->s1[k + 1];
		c->s2[k] += c->s2[k + 1];
	}
	for (k = 0; k <= L; k++) {
		c->s1[k] *= d;
		c->s2[k] *= d;
	}
	c->t = n;
	c->a = a * d;
	c->spread = c->s1[0];
	c->floor = c->a - c->s2[0];
	c->mmax = p->alive_max;
}

/* Index of the first level above n (nlevels when none). */
static size_t above(const struct hc_periodic_curve *c, double n)
{
	size_t lo = 0, hi = c->nlevels;

	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;

		if ((double)c->level[mid] > n)
			hi = mid;
		else
			lo = mid + 1;
	}
	return lo;
}

double hc_periodic_expected_te2(const struct hc_periodic_curve *c, double n)
{
	size_t k = above(c, n);
	double v = c->s1[k] / n - c->s2[k];

	return v > 0 ? v : 0.0;
}

double hc_periodic_expected_variance(const struct hc_periodic_curve *c, double n)
{
	size_t k = above(c, n);

	/* Write it as the floor plus non-negative parts, so that at N = M of
	 * complete data it rounds as (V + C)/M^2 does. */
	if (k == c->nlevels)
		return c->a;
	return c->a + (c->s1[k] / n - c->s2[k]);
}

double hc_periodic_diversifiable_share(const struct hc_periodic_curve *c, double n)
{
	double e = hc_periodic_expected_variance(c, n);

	return e > 0 ? (c->spread / n) / e : NAN;
}

int hc_periodic_curve_exact(struct curve **out, const struct hc_periodic *p,
			    const size_t *sizes, size_t nsizes, double ppy,
			    struct hc_error *err)
{
	const struct hc_periodic_curve *pc = &p->curve;
	struct curve *c;
	size_t i;

	*out = NULL;
	if (!isfinite(ppy) || ppy <= 0)
		return hc_error(err, HC_EUSAGE, "periods per year %g is not a positive number", ppy);
	for (i = 0; i < nsizes; i++)
		if (sizes[i] < 1 || sizes[i] > p->m)
			return hc_error(err, HC_EUSAGE, sizes[i] < 1 ? "size 0 is not a holding count" :
					"size %zu is larger than the %zu securities kept", sizes[i], p->m);
	c = hc_calloc(1, sizeof *c);
	if (!c || !(c->points = hc_calloc(nsizes ? nsizes : 1, sizeof *c->points))) {
		hc_curve_free(c);
		return hc_error(err, HC_ENOMEM, "out of memory for a curve of %zu points", nsizes);
	}
	c->npoints = nsizes;
	c->periods_per_year = ppy;
	c->m = p->m;
	c->floor_variance = pc->floor * ppy;
	c->universe_variance = pc->a * ppy;
	for (i = 0; i < nsizes; i++) {
		struct curve_point *q = &c->points[i];
		double n = (double)sizes[i];

		q->n = sizes[i];
		q->expected_variance = hc_periodic_expected_variance(pc, n) * ppy;
		q->expected_sd = sqrt(q->expected_variance);
		q->variance_sd = NAN;
		q->expected_tracking_error = sqrt(hc_periodic_expected_te2(pc, n) * ppy);
		q->diversifiable_share = hc_periodic_diversifiable_share(pc, n);
		q->sampled_mean_variance = q->sampled_variance_se = q->sampled_mean_sd = NAN;
		q->sd_p05 = q->sd_p50 = q->sd_p95 = q->z_score = NAN;
	}
	*out = c;
	return HC_OK;
}

/* ---- rules ------------------------------------------------------------- */

/* Annualised sqrt(E(n)). */
static double sd_at(const struct hc_periodic_curve *c, double ppy, size_t n)
{
	double v = hc_periodic_expected_variance(c, (double)n) * ppy;

	return v > 0 ? sqrt(v) : 0.0;
}

/* sqrt(E(N)) - sqrt(E(N+1)) annualised, as a difference of squares over the
 * sum: E(N) - E(N+1) = s1(N)/(N(N+1)), since a period with M_t = N+1 adds
 * (1/N - 1/(N+1)) s2_t on the left and nothing on the right. */
static double step_at(const struct hc_periodic_curve *c, double ppy, size_t n)
{
	double dn = (double)n, sum = sd_at(c, ppy, n) + sd_at(c, ppy, n + 1);
	size_t k = above(c, dn);

	if (sum <= 0)
		return 0.0;
	return c->s1[k] * ppy / (dn * (dn + 1) * sum);
}

/* Smallest n in 1..mmax with E-based meets(n), meets monotone (false then
 * true): bisection.  0 when none. */
static size_t first_true(const struct hc_periodic_curve *c, double ppy, double limit,
			 int (*meets)(const struct hc_periodic_curve *, double, double, size_t))
{
	size_t lo = 1, hi = c->mmax;

	if (!meets(c, ppy, limit, hi))
		return 0;
	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;

		if (meets(c, ppy, limit, mid))
			hi = mid;
		else
			lo = mid + 1;
	}
	return lo;
}

static int floor_meets(const struct hc_periodic_curve *c, double ppy, double limit, size_t n)
{
	(void)ppy;
	return hc_periodic_expected_variance(c, (double)n) <= limit;
}

static int te_meets(const struct hc_periodic_curve *c, double ppy, double limit, size_t n)
{
	return hc_periodic_expected_te2(c, (double)n) * ppy <= limit;
}

/* The steps need not fall monotonically once N passes the smallest alive
 * count, so every N is scanned: O(mmax log levels). */
static size_t first_small_step(const struct hc_periodic_curve *c, double ppy, double limit)
{
	size_t n;

	for (n = 1; n < c->mmax; n++)
		if (step_at(c, ppy, n) < limit)
			return n;
	return 0;
}

int hc_periodic_rule_count(const struct rules_config *cfg, int rule,
			   const struct hc_periodic_curve *c, double ppy, size_t *count)
{
	size_t n;
	double su;

	switch (rule) {
	case RULES_NEAR_FLOOR: {
		double x1 = 1 + cfg->near_floor_x;

		if (!(c->floor > 0))
			return -1;
		n = first_true(c, ppy, x1 * x1 * c->floor, floor_meets);
		break;
	}
	case RULES_MARGINAL:
		n = first_small_step(c, ppy, cfg->marginal_eps);
		break;
	case RULES_NEXT_HOLDING:
		/* After Statman (1987), JFQA 22(3), as in rules.c. */
		su = c->a > 0 ? sqrt(c->a * ppy) : 0.0;
		if (!(su > 0))
			return -1;
		n = first_small_step(c, ppy, cfg->holding_cost * su / cfg->premium);
		break;
	case RULES_TRACKING_ERROR:
		n = first_true(c, ppy, cfg->te_budget * cfg->te_budget, te_meets);
		break;
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING: {
		/* Statman (1987), JFQA 22(3), as in rules.c: premium
		 * (s(N)/s_i - 1) <= cost  <=>  E(N) <= ((1 + cost/premium))^2 s_i^2
		 * per period, s_i the equal-weight universe's sd. */
		double k = 1 + cfg->index_cost / (rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium
						   : cfg->lend_premium);

		if (!(c->a > 0))
			return -1;
		n = first_true(c, ppy, k * k * c->a, floor_meets);
		break;
	}
	default:
		return -1;
	}
	if (n == 0)
		return 0;
	*count = n;
	return 1;
}

int hc_periodic_rule(const struct rules_config *cfg, int rule,
		     const struct hc_periodic_curve *c, double ppy,
		     struct rule_result *res, struct hc_error *err)
{
	double vbar = c->floor + c->spread;
	int rc, got;

	/* The texts (parameters, unit, notes) as for complete data; the
	 * count and values are then the ragged curve's. */
	rc = hc_rules_exact(cfg, rule, vbar, c->floor, c->mmax, ppy, res, err);
	if (rc)
		return rc;
	got = hc_periodic_rule_count(cfg, rule, c, ppy, &res->count);
	if (got < 0) {
		res->defined = 0;
		res->met = 0;
		res->value = NAN;
		if (!res->note[0])
			snprintf(res->note, sizeof res->note, "undefined: %s is not above zero",
				 rule == RULES_NEAR_FLOOR ? "the floor" : "the universe portfolio's risk");
		return HC_OK;
	}
	res->defined = 1;
	res->met = got;
	res->value = NAN;
	if (!got) {
		res->count = 0;
		snprintf(res->note, sizeof res->note,
			 "not met with at most %zu securities alive in a period", c->mmax);
	} else {
		res->note[0] = '\0';
	}
	switch (rule) {
	case RULES_NEAR_FLOOR:
		res->threshold = (1 + cfg->near_floor_x) * sqrt(c->floor * ppy);
		if (got)
			res->value = sd_at(c, ppy, res->count);
		break;
	case RULES_MARGINAL:
		res->threshold = cfg->marginal_eps;
		if (got)
			res->value = step_at(c, ppy, res->count);
		break;
	case RULES_NEXT_HOLDING:
		res->threshold = cfg->holding_cost;
		if (got)
			res->value = cfg->premium * step_at(c, ppy, res->count) / sqrt(c->a * ppy);
		break;
	case RULES_TRACKING_ERROR:
		res->threshold = cfg->te_budget;
		if (got)
			res->value = sqrt(hc_periodic_expected_te2(c, (double)res->count) * ppy);
		break;
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING:
		res->threshold = cfg->index_cost;
		if (got)
			res->value = (rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium : cfg->lend_premium) *
				     (sd_at(c, ppy, res->count) / sqrt(c->a * ppy) - 1);
		break;
	}
	return HC_OK;
}

/* ---- continuous counts --------------------------------------------------- */

/* E(n) - E(n + 1) for real n > 0, per period: a period with M_t >= n + 1
 * adds (1/n - 1/(n+1)) s2_t, one with n < M_t < n + 1 adds (1/n - 1/M_t)
 * s2_t, written so that the digits of the difference are kept at large n. */
static double drop_real(const struct hc_periodic_curve *c, double n)
{
	size_t k1 = above(c, n), k2 = above(c, n + 1), k;
	double d = c->s1[k2] / (n * (n + 1));

	for (k = k1; k < k2; k++)
		d += (c->s1[k] - c->s1[k + 1]) * (1 / n - 1 / (double)c->level[k]);
	return d;
}

/* sqrt(E(n)) - sqrt(E(n+1)) annualised, at real n (step_at at whole n). */
static double step_real(const struct hc_periodic_curve *c, double ppy, double n)
{
	double e0 = hc_periodic_expected_variance(c, n) * ppy, e1 = hc_periodic_expected_variance(c, n + 1) * ppy;
	double sum = (e0 > 0 ? sqrt(e0) : 0) + (e1 > 0 ? sqrt(e1) : 0);

	return sum > 0 ? drop_real(c, n) * ppy / sum : 0.0;
}

/* Real n in (lo, hi] with step_real(n) = limit, by bisection keeping
 * step(lo) above the limit and step(hi) at most it. */
static double step_root_real(const struct hc_periodic_curve *c, double ppy, double limit, double lo, double hi)
{
	int k;

	for (k = 0; k < 60; k++) {
		double mid = 0.5 * (lo + hi);

		if (step_real(c, ppy, mid) <= limit)
			hi = mid;
		else
			lo = mid;
	}
	return hi;
}

double hc_periodic_rule_real(const struct rules_config *cfg, int rule, const struct hc_periodic_curve *c,
			     double ppy)
{
	size_t n, k;
	double x = NAN, lo, hi, limit;
	int got = hc_periodic_rule_count(cfg, rule, c, ppy, &n);

	if (got < 0)
		return NAN;
	if (got == 0)
		return INFINITY;
	hi = (double)n;
	lo = hi - 1;
	/* on (n - 1, n] the alive counts above n' are those at least n: one
	 * branch of the curve, E(n') = a + s1[k]/n' - s2[k] */
	k = above(c, lo);
	switch (rule) {
	case RULES_NEAR_FLOOR:
	case RULES_STATMAN_BORROWING:
	case RULES_STATMAN_LENDING:
		if (rule == RULES_NEAR_FLOOR)
			limit = (1 + cfg->near_floor_x) * (1 + cfg->near_floor_x) * c->floor;
		else {
			double kk = 1 + cfg->index_cost / (rule == RULES_STATMAN_BORROWING ? cfg->borrow_premium
							   : cfg->lend_premium);

			limit = kk * kk * c->a;
		}
		x = limit - c->a + c->s2[k] > 0 ? c->s1[k] / (limit - c->a + c->s2[k]) : hi;
		break;
	case RULES_TRACKING_ERROR:
		limit = cfg->te_budget * cfg->te_budget / ppy;
		x = c->s1[k] / (limit + c->s2[k]);
		break;
	case RULES_MARGINAL:
		x = step_root_real(c, ppy, cfg->marginal_eps, lo > 0 ? lo : 0, hi);
		break;
	case RULES_NEXT_HOLDING:
		x = step_root_real(c, ppy, cfg->holding_cost * sqrt(c->a * ppy) / cfg->premium, lo > 0 ? lo : 0, hi);
		break;
	}
	if (!(x > lo))
		x = lo + 1e-9;
	if (!(x <= hi))
		x = hi;
	return x;
}

/*
 * The delta-method standard error of log theta, theta = hc_periodic_rule_real
 * of the curve c of the periods idx[0..n-1] (c is perturbed and restored).
 * The curve is (n/(n-1)) times the mean over the drawn periods of each
 * period's contribution: xbar_t^2 to a, s2_t to s1[k] and s2_t/M_t to s2[k]
 * for every k <= rank_t.  So period t's linearised value is
 *   g_t = n/(n-1) (xbar_t^2 Da + s2_t D1[rank_t] + s2_t/M_t D2[rank_t]),
 * Da = d log theta/da and D1[r], D2[r] the sums over k <= r of the
 * derivatives by s1[k], s2[k] (central differences).  theta reads s1, s2
 * only at the branches near itself and at k = 0 (the floor), so only those
 * are differenced.  Then hc_bootstrap_long_run_se, as on complete data.
 * g holds p->t.
 */
static double curve_log_dtheta(const struct rules_config *cfg, int rule, struct hc_periodic_curve *c,
			       double ppy, double *slot, double h, int also)
{
	double keep = *slot, keep_f = c->floor, up, dn;

	*slot = keep + h;
	c->floor = keep_f + also * h;
	up = hc_periodic_rule_real(cfg, rule, c, ppy);
	*slot = keep - h;
	c->floor = keep_f - also * h;
	dn = hc_periodic_rule_real(cfg, rule, c, ppy);
	*slot = keep;
	c->floor = keep_f;
	return (log(up) - log(dn)) / (2 * h);
}

#define PERIODIC_ACTIVE_MAX 8

static double periodic_log_se(const struct rules_config *cfg, int rule, const struct hc_periodic *p,
			      struct hc_periodic_curve *c, double ppy, const size_t *idx, size_t n, size_t bw,
			      double *g)
{
	double th = hc_periodic_rule_real(cfg, rule, c, ppy), da, d1[PERIODIC_ACTIVE_MAX], d2[PERIODIC_ACTIVE_MAX];
	double ha, scale = c->s1[0] > 0 ? c->s1[0] : fabs(c->a), f = (double)n / (double)(n - 1);
	size_t act[PERIODIC_ACTIVE_MAX], na = 0, k, k0, k1, t, j;

	if (!isfinite(th) || !(th > 0) || !(scale > 0))
		return NAN;
	ha = 1e-6 * (fabs(c->a) > 0 ? fabs(c->a) : scale);
	da = curve_log_dtheta(cfg, rule, c, ppy, &c->a, ha, 1);
	k0 = above(c, th - 1);
	k1 = above(c, th + 2);
	act[na++] = 0;
	for (k = k0 > 0 ? k0 : 1; k <= k1 && k < c->nlevels && na < PERIODIC_ACTIVE_MAX; k++)
		act[na++] = k;
	for (j = 0; j < na; j++) {
		double h1 = 1e-6 * (c->s1[act[j]] > 1e-6 * scale ? c->s1[act[j]] : scale);
		double h2 = 1e-6 * (c->s2[act[j]] > 1e-6 * scale / (double)c->mmax ? c->s2[act[j]]
				    : scale / (double)c->mmax);

		d1[j] = curve_log_dtheta(cfg, rule, c, ppy, &c->s1[act[j]], h1, 0);
		d2[j] = curve_log_dtheta(cfg, rule, c, ppy, &c->s2[act[j]], h2, act[j] == 0 ? -1 : 0);
	}
	if (!isfinite(da))
		return NAN;
	for (j = 0; j < na; j++)
		if (!isfinite(d1[j]) || !isfinite(d2[j]))
			return NAN;
	for (t = 0; t < p->t; t++) {
		double s1t = 0, s2t = 0;

		for (j = 0; j < na && act[j] <= p->rank[t]; j++) {
			s1t += d1[j];
			s2t += d2[j];
		}
		g[t] = f * p->mean[t] * p->mean[t] * da;
		if (p->alive[t] > 1)
			g[t] += f * p->cross[t] * (s1t + s2t / (double)p->alive[t]);
	}
	return hc_bootstrap_long_run_se(g, idx, n, bw);
}

/* ---- bootstrap --------------------------------------------------------- */

/* One replicate a path of the one parallel driver (paths.h): its periods
 * drawn as bootstrap.h draws them, its O(T) curve, the rule counts and,
 * for the studentized and BCa intervals, the continuous counts and the
 * standard errors of their logs. */
struct boot_job {
	const struct rules_config *cfg;
	const struct hc_periodic *p;
	const struct bootstrap_options *bopt;
	double ppy;
	const struct rule_result *res;
	const size_t *which;
	size_t nb, L;
	int method;
	size_t *counts;       /* B x nb */
	double *theta, *se;   /* nb x B each, when the method needs them */
};

struct boot_ws {
	struct hc_periodic_curve c;
	size_t *idx;
	double *g;
};

static int boot_ws_init(void *job, void *ws)
{
	const struct boot_job *j = job;
	struct boot_ws *w = ws;

	memset(w, 0, sizeof *w);
	if (!(w->idx = hc_mallocarray(j->p->t, sizeof *w->idx)) || !(w->g = hc_mallocarray(j->p->t, sizeof *w->g)) ||
	    hc_periodic_curve_init(&w->c, j->p)) {
		hc_free(w->idx);
		hc_free(w->g);
		memset(w, 0, sizeof *w);
		return -1;
	}
	return 0;
}

static void boot_ws_release(void *ws)
{
	struct boot_ws *w = ws;

	if (w->idx) {
		hc_periodic_curve_release(&w->c);
		hc_free(w->idx);
		hc_free(w->g);
	}
	memset(w, 0, sizeof *w);
}

static void boot_path(void *job, void *ws, size_t r)
{
	const struct boot_job *j = job;
	struct boot_ws *w = ws;
	size_t q, cnt, B = j->bopt->replicates;

	/* the kind was checked, so the draw cannot fail */
	hc_bootstrap_indices(j->bopt->kind, j->p->t, j->L, j->bopt->seed, r, w->idx, NULL);
	hc_periodic_curve_set(&w->c, j->p, w->idx, j->p->t);
	for (q = 0; q < j->nb; q++) {
		int rule = j->res[j->which[q]].rule;

		j->counts[r * j->nb + q] = hc_periodic_rule_count(j->cfg, rule, &w->c, j->ppy, &cnt) == 1 ? cnt : 0;
		if (j->method == HC_PERIODIC_INTERVAL_PERCENTILE)
			continue;
		j->theta[q * B + r] = hc_periodic_rule_real(j->cfg, rule, &w->c, j->ppy);
		if (j->method == HC_PERIODIC_INTERVAL_STUDENTIZED)
			j->se[q * B + r] = periodic_log_se(j->cfg, rule, j->p, &w->c, j->ppy, w->idx, j->p->t, j->L, w->g);
	}
}

int hc_periodic_block_length(const struct hc_periodic *p, size_t *length, struct hc_error *err)
{
	double *x = hc_mallocarray(p->t, sizeof *x), l1, l2, l;
	size_t t;

	if (!x)
		return hc_error(err, HC_ENOMEM, "out of memory for the block length");
	for (t = 0; t < p->t; t++)
		x[t] = p->mean[t] * p->mean[t];
	l1 = hc_bootstrap_politis_white(x, p->t);
	l2 = hc_bootstrap_politis_white(p->cross, p->t);
	hc_free(x);
	l = floor(fmax(l1, l2) + 0.5);
	*length = l < 1 ? 1 : l > (double)p->t ? p->t : (size_t)l;
	return HC_OK;
}

/*
 * The delete-a-block jackknife (Kuensch, 1989) of the continuous counts,
 * as on complete data (hc_bootstrap_jackknife): block b of L periods is
 * left out and the per-period sums of the rest are formed afresh
 * (hc_periodic_alloc on the history without it), because leaving out
 * periods moves each security's own mean, and with it every period's
 * centred cross-section; a security observed once in the rest drops out
 * of its period's alive set, as it would in a history that short.
 * See periodic.h.
 */
int hc_periodic_jackknife(const struct rules_config *cfg, const struct hc_periodic *p, const struct universe *u,
			  size_t L, double ppy, const int *rules, size_t nb, double **jack, size_t *nj,
			  struct hc_error *err)
{
	struct universe sub;
	size_t nblk, bk, i, q, keep, cells;
	int rc = HC_OK;

	*jack = NULL;
	*nj = 0;
	if (L < 1 || p->t / L < 2 || p->t - L < 2)
		return HC_OK;
	if (!u || u->t != p->t)
		return hc_error(err, HC_EUSAGE, "the jackknife needs the history the per-period sums came from");
	nblk = p->t / L;
	keep = p->t - L;
	if (hc_mul_size(u->m, keep, &cells))
		return hc_error(err, HC_ENOMEM, "history too large for the jackknife");
	if ((rc = hc_memory_check(p->max_bytes, (double)u->m * (double)u->t * 8.0, (double)cells * 8.0 +
				  (double)nblk * (double)nb * 8.0, err, "the jackknife's copy of %zu x %zu returns",
				  u->m, keep)))
		return rc;
	memset(&sub, 0, sizeof sub);
	sub.x = hc_mallocarray(cells ? cells : 1, sizeof *sub.x);
	*jack = hc_mallocarray(nblk * nb, sizeof **jack);
	if (!sub.x || !*jack) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the jackknife");
		goto out;
	}
	sub.m = sub.m_read = u->m;
	sub.t = keep;
	sub.source = u->source;
	sub.max_bytes = u->max_bytes;
	sub.periods_per_year = u->periods_per_year;
	sub.has_missing = 1;
	for (bk = 0; bk < nblk; bk++) {
		struct hc_periodic *pp = NULL;
		struct hc_error why;
		size_t first = bk * L;

		for (i = 0; i < u->m; i++) {
			const double *xi = u->x + i * u->t;
			double *yi = sub.x + i * keep;

			memcpy(yi, xi, first * sizeof *yi);
			memcpy(yi + first, xi + first + L, (u->t - first - L) * sizeof *yi);
		}
		rc = hc_periodic_alloc(&pp, &sub, 0, keep, &why);
		if (rc == HC_EDATA) {
			for (q = 0; q < nb; q++)
				(*jack)[q * nblk + bk] = NAN;
			rc = HC_OK;
			continue;
		}
		if (rc) {
			rc = hc_error(err, rc, "%s", why.message);
			goto out;
		}
		for (q = 0; q < nb; q++)
			(*jack)[q * nblk + bk] = hc_periodic_rule_real(cfg, rules[q], &pp->curve, ppy);
		hc_periodic_free(pp);
	}
	*nj = nblk;
out:
	hc_free(sub.x);
	if (rc) {
		hc_free(*jack);
		*jack = NULL;
	}
	return rc;
}

/* The studentized and BCa intervals from the replicates' continuous counts. */
static int set_intervals(const struct boot_job *j, const struct universe *u, struct rule_result *res,
			 struct hc_error *err)
{
	const struct hc_periodic *p = j->p;
	struct hc_periodic_curve c0;
	double *jack = NULL, *g = NULL;
	size_t q, nj = 0, B = j->bopt->replicates;
	int rc = HC_OK;

	if (hc_periodic_curve_init(&c0, p) || !(g = hc_mallocarray(p->t, sizeof *g))) {
		hc_periodic_curve_release(&c0);
		return hc_error(err, HC_ENOMEM, "out of memory for the interval");
	}
	hc_periodic_curve_set(&c0, p, NULL, p->t);
	if (j->method == HC_PERIODIC_INTERVAL_BCA) {
		int rules[RULES_COUNT];

		for (q = 0; q < j->nb; q++)
			rules[q] = res[j->which[q]].rule;
		rc = hc_periodic_jackknife(j->cfg, p, u, j->L, j->ppy, rules, j->nb, &jack, &nj, err);
	}
	for (q = 0; q < j->nb && rc == HC_OK; q++) {
		struct rule_result *r = &res[j->which[q]];
		double est = hc_periodic_rule_real(j->cfg, r->rule, &c0, j->ppy);

		if (!r->defined)
			continue;
		if (j->method == HC_PERIODIC_INTERVAL_BCA)
			hc_rules_interval_bca(r, est, j->theta + q * B, B, jack ? jack + q * nj : NULL, nj);
		else
			rc = hc_rules_interval_studentized(r, est, periodic_log_se(j->cfg, r->rule, p, &c0, j->ppy, NULL,
										  p->t, j->L, g),
							   j->theta + q * B, j->se + q * B, B, p->alive_max, err);
	}
	hc_free(jack);
	hc_free(g);
	hc_periodic_curve_release(&c0);
	return rc;
}

int hc_periodic_bootstrap(const struct rules_config *cfg, const struct hc_periodic *p,
			  const struct bootstrap_options *bopt, double ppy,
			  struct rule_result *res, size_t nres, struct hc_error *err)
{
	return hc_periodic_bootstrap_interval(cfg, p, NULL, bopt, ppy, HC_PERIODIC_INTERVAL_PERCENTILE, res, nres, err);
}

int hc_periodic_bootstrap_interval(const struct rules_config *cfg, const struct hc_periodic *p,
				   const struct universe *u, const struct bootstrap_options *bopt, double ppy,
				   int method, struct rule_result *res, size_t nres, struct hc_error *err)
{
	size_t B = bopt->replicates, L, j, nb = 0, *counts = NULL, cells;
	size_t which[RULES_COUNT];
	double *theta = NULL, *se = NULL;
	int rc = HC_OK;

	if (B == 0)
		return hc_error(err, HC_EUSAGE, "the bootstrap needs at least one replicate");
	if (B > HC_BOOTSTRAP_MAX_REPLICATES)
		return hc_error(err, HC_EUSAGE, "%zu bootstrap replicates is more than the %u allowed",
				B, HC_BOOTSTRAP_MAX_REPLICATES);
	if (!hc_bootstrap_kind_name(bopt->kind))
		return hc_error(err, HC_EUSAGE, "unknown bootstrap kind %d", bopt->kind);
	if (method < HC_PERIODIC_INTERVAL_PERCENTILE || method > HC_PERIODIC_INTERVAL_BCA)
		return hc_error(err, HC_EUSAGE, "unknown interval method %d", method);
	if (method == HC_PERIODIC_INTERVAL_BCA && (!u || u->t != p->t))
		return hc_error(err, HC_EUSAGE, "the BCa interval needs the history the per-period sums came from");
	L = bopt->block_length ? bopt->block_length : hc_bootstrap_default_block_length(p->t);
	if (L > p->t)
		return hc_error(err, HC_EUSAGE, "block length %zu exceeds the %zu periods", L, p->t);
	for (j = 0; j < nres && nb < RULES_COUNT; j++)
		if (RULES_FLAG(res[j].rule) & RULES_EXACT_MASK)
			which[nb++] = j;
	if (nb == 0)
		return HC_OK;
	/* the counts (and continuous counts and standard errors) of every
	 * replicate and a curve, draw and series per thread, beside the sums
	 * (memory.h's budget) */
	if ((rc = hc_memory_check(p->max_bytes, (double)p->t * 48.0,
				  (double)B * (double)nb * (method == HC_PERIODIC_INTERVAL_PERCENTILE ? 8.0 : 24.0) +
				  2.0 * (double)p->t * 32.0, err, "%zu bootstrap replicates", B)))
		return rc;
	if (hc_mul_size(B, nb, &cells) || !(counts = hc_calloc(cells, sizeof *counts)) ||
	    (method != HC_PERIODIC_INTERVAL_PERCENTILE &&
	     (!(theta = hc_calloc(cells, sizeof *theta)) || !(se = hc_calloc(cells, sizeof *se))))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for %zu bootstrap counts", B);
		goto out;
	}
	{
		struct boot_job job = { cfg, p, bopt, ppy, res, which, nb, L, method, counts, theta, se };
		struct hc_paths run = {
			B, bopt->threads, 8, &job, sizeof(struct boot_ws), boot_ws_init, boot_ws_release,
			boot_path, bopt->progress, bopt->progress_ctx, "bootstrap's", "bootstrap", "replicates"
		};

		if ((rc = hc_paths_run(&run, err)) != HC_OK)
			goto out;
		if (method != HC_PERIODIC_INTERVAL_PERCENTILE) {
			rc = set_intervals(&job, u, res, err);
			goto out;
		}
	}
	{
		size_t *col = hc_mallocarray(B, sizeof *col), q, r;

		if (!col) {
			rc = hc_error(err, HC_ENOMEM, "out of memory for %zu bootstrap counts", B);
			goto out;
		}
		for (q = 0; q < nb; q++) {
			for (r = 0; r < B; r++)
				col[r] = counts[r * nb + q];
			hc_rules_set_interval(&res[which[q]], col, B);
		}
		hc_free(col);
	}
out:
	hc_free(counts);
	hc_free(theta);
	hc_free(se);
	return rc;
}

/* ---- sampler ----------------------------------------------------------- */

struct ragged_ws {
	size_t *order;
	size_t *cnt, *next;   /* t: securities taken so far, next grid index */
	double *sum;          /* t */
	double *raw;          /* t: uncentred sums (returns wanted) */
	double *acc;          /* nsizes */
	double *lacc;         /* nsizes: sums of log(1 + p_t) */
	double *ser;          /* nsizes * t: each size's return series (measures wanted), size-major */
	double *mscratch;     /* t: the measures' deviations and selection */
	gsl_rng *rng;
};

static void ws_release(struct ragged_ws *w)
{
	hc_free(w->order);
	hc_free(w->cnt);
	hc_free(w->next);
	hc_free(w->sum);
	hc_free(w->raw);
	hc_free(w->acc);
	hc_free(w->lacc);
	hc_free(w->ser);
	hc_free(w->mscratch);
	if (w->rng)
		gsl_rng_free(w->rng);
	memset(w, 0, sizeof *w);
}

static int ws_init(struct ragged_ws *w, size_t m, size_t t, size_t nsizes, int measures)
{
	size_t cells;

	memset(w, 0, sizeof *w);
	if (measures) {
		if (hc_mul_size(nsizes, t, &cells))
			return -1;
		w->ser = hc_mallocarray(cells, sizeof *w->ser);
		w->mscratch = hc_mallocarray(t, sizeof *w->mscratch);
		if (!w->ser || !w->mscratch) {
			ws_release(w);
			return -1;
		}
	}
	w->order = hc_mallocarray(m, sizeof *w->order);
	w->cnt = hc_mallocarray(t, sizeof *w->cnt);
	w->next = hc_mallocarray(t, sizeof *w->next);
	w->sum = hc_mallocarray(t, sizeof *w->sum);
	w->raw = hc_mallocarray(t, sizeof *w->raw);
	w->acc = hc_mallocarray(nsizes, sizeof *w->acc);
	w->lacc = hc_mallocarray(nsizes, sizeof *w->lacc);
	w->rng = gsl_rng_alloc(gsl_rng_taus2);
	if (!w->order || !w->cnt || !w->next || !w->sum || !w->raw || !w->acc || !w->lacc || !w->rng) {
		ws_release(w);
		return -1;
	}
	return 0;
}

/* log(1 + r), with a total loss (r <= -1) as -infinity: the compound
 * return is then -100%. */
static double log1p_total(double r)
{
	return r > -1 ? log1p(r) : -INFINITY;
}

/* A path's random order of the m kept securities: a full Fisher-Yates
 * shuffle (Durstenfeld, 1964, CACM 7(7), Algorithm 235) from seed. */
static void ragged_order(gsl_rng *rng, size_t *order, size_t m, unsigned long seed)
{
	size_t i;

	gsl_rng_set(rng, seed);
	for (i = 0; i < m; i++)
		order[i] = i;
	for (i = 0; i + 1 < m; i++) {
		size_t r = i + (size_t)gsl_rng_uniform_int(rng, m - i), tmp = order[i];

		order[i] = order[r];
		order[r] = tmp;
	}
}

/* The portfolio's return in period k when it holds its first cnt alive
 * securities, their raw sum raw: the equal-weight mean as observed; when
 * it holds every security alive then, the universe's own (raw_mean, the
 * same bits, so a portfolio of everything is the benchmark exactly). */
static double held_return(const struct hc_periodic *p, size_t k, size_t cnt, double raw)
{
	return cnt == p->alive[k] ? p->raw_mean[k] : raw / (double)cnt;
}

/* What a path computes beyond the variance: returns (ret, NULL for none)
 * and measures (mask 0 for none, into meas: ns rows of
 * HC_MEASURE_COUNT). */
struct ragged_out {
	double *ret;
	double ppy;
	unsigned mask;
	double log_growth_bar;
	double *meas;
};

/* One path: a random order (Fisher-Yates), then the securities in that
 * order, each adding its centred returns to every period it is alive in,
 * until every period holds n_max or all it has.  With measures, each
 * size's return series (the held securities' equal-weight mean return,
 * as observed, each period) is kept in w->ser and handed to measures.h,
 * the complete route's hook. */
static void ragged_path(struct ragged_ws *w, const struct hc_periodic *p, const struct universe *u,
			size_t first, const size_t *sizes, size_t ns, unsigned long seed, double *out,
			const struct ragged_out *o)
{
	size_t i, j, k, t = p->t, nmax = sizes[ns - 1], open = t;
	double *ret = o->ret, ppy = o->ppy, *ser = o->mask ? w->ser : NULL;

	ragged_order(w->rng, w->order, p->m, seed);
	memset(w->cnt, 0, t * sizeof *w->cnt);
	memset(w->next, 0, t * sizeof *w->next);
	memset(w->sum, 0, t * sizeof *w->sum);
	memset(w->raw, 0, t * sizeof *w->raw);
	memset(w->acc, 0, ns * sizeof *w->acc);
	memset(w->lacc, 0, ns * sizeof *w->lacc);
	for (i = 0; i < p->m && open; i++) {
		size_t s = w->order[i];
		const double *xi = u->x + p->member[s] * u->t + first;
		double mu = p->own_mean[s];

		for (k = 0; k < t; k++) {
			double m;

			if (isnan(xi[k]) || w->cnt[k] >= nmax)
				continue;
			w->sum[k] += xi[k] - mu;
			w->raw[k] += xi[k];
			w->cnt[k]++;
			if (w->cnt[k] == sizes[w->next[k]]) {
				m = w->sum[k] / (double)w->cnt[k];
				if (ret)
					w->lacc[w->next[k]] += log1p_total(w->raw[k] / (double)w->cnt[k]);
				if (ser)
					ser[w->next[k] * t + k] = held_return(p, k, w->cnt[k], w->raw[k]);
				w->acc[w->next[k]++] += m * m;
				open -= w->next[k] == ns;
			}
		}
	}
	/* Sizes above a period's alive count hold everything alive then. */
	for (k = 0; k < t; k++) {
		double m = w->cnt[k] ? w->sum[k] / (double)w->cnt[k] : 0.0;
		double l = ret && w->cnt[k] ? log1p_total(w->raw[k] / (double)w->cnt[k]) : 0.0;
		double r = ser && w->cnt[k] ? held_return(p, k, w->cnt[k], w->raw[k]) : 0.0;

		for (j = w->next[k]; j < ns; j++) {
			w->acc[j] += m * m;
			w->lacc[j] += l;
			if (ser)
				ser[j * t + k] = r;
		}
	}
	for (j = 0; j < ns; j++) {
		out[j] = w->acc[j] / (double)(t - 1);
		if (ret)
			ret[j] = expm1(w->lacc[j] * ppy / (double)t);
		if (ser)
			hc_measures_series(ser + j * t, 1, t, o->mask, o->log_growth_bar, o->meas + j * HC_MEASURE_COUNT,
					   w->mscratch);
	}
}

/* The ragged sampler's job for the one parallel path driver (paths.h). */
struct sample_job {
	const struct hc_periodic *p;
	const struct universe *u;
	size_t first;
	const size_t *sizes;
	size_t nsizes;
	const struct sampler_options *opt;
	struct sampler_result *r;
	double log_growth_bar;   /* the universe's, for lag_universe */
};

static int sample_ws_init(void *job, void *ws)
{
	const struct sample_job *j = job;

	return ws_init(ws, j->p->m, j->p->t, j->nsizes, j->r->measures != 0);
}

static void sample_ws_release(void *ws)
{
	ws_release(ws);
}

static void sample_path(void *job, void *ws, size_t k)
{
	const struct sample_job *j = job;
	struct sampler_result *r = j->r;

	struct ragged_out o = {
		r->annual_return ? r->annual_return + k * j->nsizes : NULL, j->opt->periods_per_year, r->measures,
		j->log_growth_bar, r->measures_value ? r->measures_value + k * j->nsizes * HC_MEASURE_COUNT : NULL
	};

	ragged_path(ws, j->p, j->u, j->first, j->sizes, j->nsizes, hc_paths_seed32(j->opt->seed, k),
		    r->variance + k * j->nsizes, &o);
}

int hc_periodic_sample(struct sampler_result **out, const struct hc_periodic *p,
		       const struct universe *u, size_t first,
		       const size_t *sizes, size_t nsizes,
		       const struct sampler_options *opt, struct hc_error *err)
{
	struct sampler_result *r;
	struct sample_job job;
	size_t j, total, cells = 0;
	double need, *scratch;
	int rc, threads;

	*out = NULL;
	if (opt->paths == 0 || opt->strata || nsizes == 0)
		return hc_error(err, HC_EUSAGE, "the ragged sampler needs paths and sizes, and draws no strata");
	for (j = 0; j < nsizes; j++)
		if (sizes[j] < 1 || sizes[j] > p->m || (j && sizes[j] <= sizes[j - 1]))
			return hc_error(err, HC_EUSAGE, "sizes must ascend within 1..%zu (size %zu)", p->m, sizes[j]);
	if (hc_mul_size(opt->paths, nsizes, &total))
		return hc_error(err, HC_ENOMEM, "%zu paths of %zu sizes do not fit in memory", opt->paths, nsizes);
	if (opt->measures && hc_mul_size(total, HC_MEASURE_COUNT, &cells))
		return hc_error(err, HC_ENOMEM, "the measures of %zu sampled portfolios do not fit in memory", total);
	/* the result arrays within the universe's budget (memory.h), beside its
	 * numbers; with measures, their values and each thread's series of
	 * every size (nsizes x T doubles a thread) */
	need = (double)total * 8.0 * (opt->want_returns ? 2 : 1);
	if (opt->measures) {
		threads = hc_threads_usable(opt->threads, NULL);
		need += (double)cells * 8.0 + (double)threads * ((double)nsizes + 1.0) * (double)p->t * 8.0;
	}
	if ((rc = hc_memory_check(u->max_bytes, (double)u->m * (double)u->t * 8.0, need, err,
				  "%zu sampled portfolios (%zu paths of %zu sizes)", total, opt->paths, nsizes)))
		return rc;
	r = hc_calloc(1, sizeof *r);
	if (!r || !(r->sizes = hc_mallocarray(nsizes, sizeof *r->sizes)) ||
	    !(r->variance = hc_mallocarray(total, sizeof *r->variance)) ||
	    !(r->feasible = hc_malloc(nsizes)) ||
	    (opt->want_returns && !(r->annual_return = hc_mallocarray(total, sizeof *r->annual_return))) ||
	    (opt->measures && !(r->measures_value = hc_mallocarray(cells, sizeof *r->measures_value)))) {
		hc_sampler_result_free(r);
		return hc_error(err, HC_ENOMEM, "out of memory for %zu sampled portfolios", total);
	}
	r->measures = opt->measures;
	for (j = 0; j < HC_MEASURE_COUNT; j++)
		r->universe_measures[j] = NAN;
	job.log_growth_bar = NAN;
	/* The universe's own measures (N = M): the equal-weight portfolio of
	 * every security alive, each period (raw_mean), which is also the
	 * benchmark lag_universe compares with. */
	if (opt->measures) {
		if (!(scratch = hc_mallocarray(p->t, sizeof *scratch))) {
			hc_sampler_result_free(r);
			return hc_error(err, HC_ENOMEM, "out of memory for %zu periods", p->t);
		}
		job.log_growth_bar = hc_measures_series_log_growth(p->raw_mean, 1, p->t, scratch);
		hc_measures_series(p->raw_mean, 1, p->t, opt->measures, job.log_growth_bar, r->universe_measures,
				   scratch);
		hc_free(scratch);
	}
	r->paths = opt->paths;
	r->nsizes = nsizes;
	r->seed = opt->seed;
	memcpy(r->sizes, sizes, nsizes * sizeof *sizes);
	memset(r->feasible, 1, nsizes);
	job.p = p;
	job.u = u;
	job.first = first;
	job.sizes = sizes;
	job.nsizes = nsizes;
	job.opt = opt;
	job.r = r;
	{
		struct hc_paths run = {
			opt->paths, opt->threads, 4, &job, sizeof(struct ragged_ws), sample_ws_init,
			sample_ws_release, sample_path, opt->progress, opt->progress_ctx, "ragged sampler's",
			"sampling", "paths"
		};

		rc = hc_paths_run(&run, err);
	}
	if (rc != HC_OK) {
		hc_sampler_result_free(r);
		return rc;
	}
	*out = r;
	return HC_OK;
}

int hc_periodic_order(uint64_t seed, size_t k, size_t m, size_t *order, struct hc_error *err)
{
	gsl_rng *rng;

	if (m < 1)
		return hc_error(err, HC_EUSAGE, "cannot order %zu securities", m);
	if (!(rng = gsl_rng_alloc(gsl_rng_taus2)))
		return hc_error(err, HC_ENOMEM, "out of memory for a random generator");
	ragged_order(rng, order, m, hc_paths_seed32(seed, k));
	gsl_rng_free(rng);
	return HC_OK;
}

int hc_periodic_universe_return(const struct hc_periodic *p, double ppy, double *ret,
				struct hc_error *err)
{
	double l = 0;
	size_t k;

	for (k = 0; k < p->t; k++) {
		if (!(p->raw_mean[k] > -1))
			return hc_error(err, HC_EDATA,
					"the equal-weight portfolio of the alive securities loses 100%% or more in period %zu",
					k + 1);
		l += log1p(p->raw_mean[k]);
	}
	*ret = expm1(l * ppy / (double)p->t);
	return HC_OK;
}

/* ---- the sampled rules ------------------------------------------------- */

/* Alexeev & Tapon's removable variance on a ragged history: from the
 * expected variance of a one-holding random portfolio, E[sigma^2(1)] of the
 * per-period curve (v-bar for complete data), down to the variance of the
 * equal-weight portfolio of the securities alive each period (curve.a). */
static int at_sampled(const struct rules_config *cfg, const struct hc_periodic *p,
		      const struct sampler_result *r, struct rule_result *res, struct hc_error *err)
{
	return hc_rules_alexeev_tapon_sampled_between(cfg, r, hc_periodic_expected_variance(&p->curve, 1),
						      p->curve.a, res, err);
}

int hc_periodic_rules_sampled(const struct rules_config *cfg, const struct hc_periodic *p,
			      const struct universe *u, const struct sampler_options *base,
			      struct rule_result sr[3], size_t *largest, struct hc_error *err)
{
	static const int which[3] = { RULES_BAND, RULES_LAG_SHARE, RULES_ALEXEEV_TAPON_SAMPLED };
	struct sampler_options so = *base;
	struct sampler_result *r = NULL;
	size_t K = RULES_SAMPLED_FIRST_K, *sizes, k;
	double uret = 0;
	int rc = HC_OK;

	memset(sr, 0, 3 * sizeof *sr);
	*largest = 0;
	so.want_returns = (cfg->selected & RULES_FLAG(RULES_LAG_SHARE)) != 0;
	so.periods_per_year = p->periods_per_year;
	if (so.want_returns && (rc = hc_periodic_universe_return(p, p->periods_per_year, &uret, err)))
		return rc;
	if (!(sizes = hc_mallocarray(p->m, sizeof *sizes)))
		return hc_error(err, HC_ENOMEM, "out of memory for the sampled sizes");
	for (k = 0; k < p->m; k++)
		sizes[k] = k + 1;
	for (;;) {
		int all_met = 1;

		if (K > p->m)
			K = p->m;
		hc_sampler_result_free(r);
		r = NULL;
		rc = hc_periodic_sample(&r, p, u, 0, sizes, K, &so, err);
		for (k = 0; rc == HC_OK && k < 3; k++) {
			int rule = which[k];

			if (!(cfg->selected & RULES_FLAG(rule)))
				continue;
			rc = rule == RULES_BAND ? hc_rules_band(cfg, r, p->curve.floor, p->periods_per_year, &sr[k], err)
			   : rule == RULES_LAG_SHARE ? hc_rules_lag_share(cfg, r, uret, &sr[k], err)
			   : at_sampled(cfg, p, r, &sr[k], err);
			all_met &= rc == HC_OK && (sr[k].met || (rule == RULES_ALEXEEV_TAPON_SAMPLED && !sr[k].defined));
		}
		if (rc || all_met || K == p->m)
			break;
		K *= RULES_SAMPLED_GROWTH;
	}
	*largest = K;
	hc_sampler_result_free(r);
	hc_free(sizes);
	return rc;
}

int hc_periodic_bootstrap_sampled(const struct rules_config *cfg, const struct universe *u,
				  const struct bootstrap_options *bo, const struct sampler_options *base,
				  struct rule_result *res, size_t nres, struct hc_error *err)
{
	size_t B = bo->replicates, L = bo->block_length ? bo->block_length : hc_bootstrap_default_block_length(u->t);
	static const int which[3] = { RULES_BAND, RULES_LAG_SHARE, RULES_ALEXEEV_TAPON_SAMPLED };
	size_t *idx = NULL, *cnt = NULL, *col = NULL, rep, k, j, K, n3;
	struct sampler_options so = *base;
	int rc = HC_OK;

	so.progress = NULL;
	if (B == 0 || B > HC_BOOTSTRAP_MAX_REPLICATES)
		return hc_error(err, HC_EUSAGE, "%zu bootstrap replicates: expected 1 to %u", B, HC_BOOTSTRAP_MAX_REPLICATES);
	if (hc_mul_size(3, B ? B : 1, &n3) || !(idx = hc_mallocarray(u->t, sizeof *idx)) ||
	    !(cnt = hc_calloc(n3, sizeof *cnt)) || !(col = hc_mallocarray(B ? B : 1, sizeof *col))) {
		rc = hc_error(err, HC_ENOMEM, "out of memory for the sampled bootstrap");
		goto out;
	}
	for (rep = 0; rep < B && rc == HC_OK; rep++) {
		struct universe *ru = NULL;
		struct hc_periodic *rp = NULL;
		struct rule_result sr[3];

		so.seed = hc_rules_replicate_seed(bo->seed, rep);
		rc = hc_bootstrap_indices(bo->kind, u->t, L, bo->seed, rep, idx, err);
		if (rc == HC_OK)
			rc = hc_universe_resample(&ru, u, idx, u->t, err);
		if (rc == HC_OK)
			rc = hc_periodic_alloc(&rp, ru, 0, ru->t, err);
		if (rc == HC_OK)
			rc = hc_periodic_rules_sampled(cfg, rp, ru, &so, sr, &K, err);
		for (k = 0; rc == HC_OK && k < 3; k++)
			cnt[3 * rep + k] = sr[k].met ? sr[k].count : 0;
		hc_periodic_free(rp);
		hc_universe_free(ru);
		if (rc == HC_OK && bo->progress && bo->progress(bo->progress_ctx, rep + 1, B))
			rc = hc_error(err, HC_EINTERRUPT, "the sampled bootstrap stopped after %zu of %zu replicates",
				      rep + 1, B);
	}
	for (k = 0; rc == HC_OK && k < 3; k++) {
		int rule = which[k];

		if (!(cfg->selected & RULES_FLAG(rule)))
			continue;
		for (j = 0; j < nres; j++)
			if (res[j].rule == rule && res[j].defined) {
				for (rep = 0; rep < B; rep++)
					col[rep] = cnt[3 * rep + k];
				hc_rules_set_interval(&res[j], col, B);
			}
	}
out:
	hc_free(col);
	hc_free(idx);
	hc_free(cnt);
	return rc;
}
