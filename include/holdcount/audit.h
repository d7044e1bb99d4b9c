/*
 * audit.h - concentration audit of actual funds against a universe and a policy.
 *
 * For each fund of a struct holdings (design.md section 6): how many
 * positions, how concentrated (largest weight, top-10 share, HHI, effective
 * number of holdings), how risky given the universe's return history
 * (sigma, diversification ratio, equivalent count, percentile among random
 * equal-weight portfolios of the same count, expected sigma of a random
 * portfolio laid out with the fund's own weights), sector weights when a
 * label map is given, three regulatory weight screens, and a policy verdict.
 *
 * Units: weights are fractions of the fund (0.052 = 5.2%); every sigma and
 * variance in struct audit_fund is annualised by the universe's periods per
 * year (variance times P, sigma times sqrt(P): common practice under serially
 * independent returns).
 *
 * Assets by kind (holdings.h, enum holding_type).  Weights are fractions of
 * net assets (the fund's lines summed, cash included, shorts negative).
 * Cash and cash equivalents are not a holding and not an issuer: counts,
 * HHI, effective holdings and issuer limits leave them out.  "Invested
 * assets" are the non-cash positions; the concentration figures (HHI,
 * effective holdings by line and by issuer) use their absolute weights
 * renormalised to sum to 1 (gross weights, so a short adds concentration as
 * a long does).  Largest position, top-10 share, exposures and every statute
 * figure are of net assets.  Risk figures are on invested assets by default
 * (AUDIT_CASH_EXCLUDE) or on net assets with cash at zero variance
 * (AUDIT_CASH_ZERO).
 *
 * The screens are written from memory of the published texts; every output
 * must say so, and that the current text and compliance counsel decide:
 *   UCITS Directive 2009/65/EC Art. 52: no issuer above 10%; the issuers
 *     above 5% together at most 40%; government securities at most 35% per
 *     issuer and outside the 40%; a group of companies at most 20% together
 *     (when groups are given).  Shares of other funds fall under Art. 55, not
 *     tested.
 *   US Investment Company Act of 1940, s. 5(b)(1), weight part: at least 75%
 *     of assets in cash, government securities, other investment companies'
 *     shares and other issuers "limited to" 5% each.  Two readings
 *     (enum audit_reading): an issuer above 5% left out of the basket
 *     (excluded, the stricter, the default) or counted up to 5% (capped).
 *     The 10%-of-voting-securities part needs shares outstanding and is not
 *     tested.
 *   US Internal Revenue Code s. 851(b)(3): the same basket at 50% (RICs'
 *     shares for investment companies'), under either reading, and no
 *     issuer (government securities and RICs' shares aside) above 25%.
 * Issuer weights are net weights summed over ids sharing an issuer (and
 * kind), taken by absolute value.
 */
#ifndef HOLDCOUNT_AUDIT_H
#define HOLDCOUNT_AUDIT_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/error.h"
#include "holdcount/holdings.h"
#include "holdcount/moments.h"
#include "holdcount/report.h"
#include "holdcount/sampler.h"
#include "holdcount/universe.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Defaults, named once. */
#define AUDIT_DEFAULT_PATHS 10000
/* A fund whose risk figures rest on less than this share of its invested
 * weight gets the verdict "insufficient data" (common practice: risk
 * figures on 95% of a portfolio are taken as the portfolio's). */
#define AUDIT_DEFAULT_MIN_COVERED_WEIGHT 0.95
/* Weight limits are met within this (fractions): far below the 0.01%
 * granularity of a stated limit, far above rounding in a normalised sum. */
#define AUDIT_DEFAULT_LIMIT_TOLERANCE 1e-9
/* Two portfolio variances are tied (mid-rank) when they agree to this
 * relative difference: the same portfolio summed in another order differs by
 * a few units in the last place. */
#define AUDIT_DEFAULT_TIE_RTOL 1e-12

enum audit_screen {
	AUDIT_SCREEN_UCITS = 1 << 0,
	AUDIT_SCREEN_1940ACT = 1 << 1,
	AUDIT_SCREEN_RIC = 1 << 2
};
#define AUDIT_NSCREENS 3

/* Policy rules; a fund's failed rules are a mask of these. */
enum audit_rule {
	AUDIT_RULE_MIN_HOLDINGS = 1 << 0,
	AUDIT_RULE_MIN_EFFECTIVE = 1 << 1,
	AUDIT_RULE_MAX_WEIGHT = 1 << 2,
	AUDIT_RULE_MAX_SECTOR_WEIGHT = 1 << 3,
	AUDIT_RULE_UCITS = 1 << 4,
	AUDIT_RULE_1940ACT = 1 << 5,
	AUDIT_RULE_RIC = 1 << 6
};
#define AUDIT_NRULES 7

/* The parts of the screens, each deciding on one figure against one limit. */
enum audit_part {
	AUDIT_PART_UCITS_ISSUER = 0,     /* largest issuer <= 10% */
	AUDIT_PART_UCITS_AGGREGATE = 1,  /* issuers above 5% together <= 40% */
	AUDIT_PART_1940ACT_SMALL = 2,    /* issuers of at most 5% together >= 75% */
	AUDIT_PART_RIC_SMALL = 3,        /* issuers of at most 5% together >= 50% */
	AUDIT_PART_RIC_ISSUER = 4,       /* largest issuer <= 25% */
	AUDIT_PART_UCITS_GOVERNMENT = 5, /* largest government issuer <= 35% */
	AUDIT_PART_UCITS_GROUP = 6,      /* largest group <= 20% (groups given) */
	AUDIT_PART_1940ACT_OTHER = 7,    /* the 75% basket under the other reading: shown, not deciding */
	AUDIT_PART_RIC_OTHER = 8,        /* the 50% basket under the other reading: shown, not deciding */
	AUDIT_NPARTS = 9
};

/* How the 1940 Act and s. 851(b)(3) baskets count an issuer above 5%. */
enum audit_reading {
	AUDIT_READING_EXCLUDED = 0,  /* left out of the basket entirely (the default: the stricter) */
	AUDIT_READING_CAPPED = 1     /* counted up to 5% */
};

/* How cash enters the risk figures. */
enum audit_cash_risk {
	AUDIT_CASH_EXCLUDE = 0,      /* risk of the invested assets, their weights renormalised (default) */
	AUDIT_CASH_ZERO = 1          /* risk of net assets, cash held at zero variance */
};

/* A fund's verdict. */
enum audit_verdict {
	AUDIT_VERDICT_PASSED = 0,
	AUDIT_VERDICT_FAILED = 1,        /* fails the policy (whatever its coverage) */
	AUDIT_VERDICT_INSUFFICIENT = 2   /* passes, but its risk rests on too little of its weight */
};

struct audit_policy {
	size_t min_holdings;        /* 0 = no rule */
	double min_effective;       /* 0 = no rule */
	double max_weight;          /* 0 = no rule; largest position, fraction */
	double max_sector_weight;   /* 0 = no rule; needs a sector map */
	unsigned screens;           /* AUDIT_SCREEN_* the policy requires */
};

struct audit_options {
	struct audit_policy policy;
	int strict;                 /* an id missing from the universe is an error */
	size_t paths;               /* random portfolios for the percentile; 0 = none */
	uint64_t seed;
	int threads;                /* for the sampler; 0 = OpenMP default */
	double limit_tolerance;     /* AUDIT_DEFAULT_LIMIT_TOLERANCE */
	double tie_rtol;            /* AUDIT_DEFAULT_TIE_RTOL */
	const struct holdings_labels *sectors;  /* id -> sector, or NULL */
	int reading;                /* enum audit_reading deciding the baskets */
	int cash_risk;              /* enum audit_cash_risk */
	double min_covered_weight;  /* AUDIT_DEFAULT_MIN_COVERED_WEIGHT; 0 = no verdict */
	const struct holdings_fund *benchmark;  /* weights for active share, or NULL */
	sampler_progress_fn progress;
	void *progress_ctx;
};

/* Defaults: paths AUDIT_DEFAULT_PATHS, seed 1, limit_tolerance, tie_rtol and
 * min_covered_weight their AUDIT_DEFAULT_* values, reading excluded, cash
 * risk excluded, every rule and option off (zero/NULL).
 * Set fields afterwards.  Cannot fail. */
void hc_audit_options_init(struct audit_options *opt);

struct audit_check {
	int passed;
	double figure;              /* the figure that decided */
	double limit;
	const char *issuer;         /* the largest issuer (or group), for those parts; else NULL */
	int applies;                /* 0: nothing to test (no groups given); passed is 1 */
};

struct audit_missing {
	const char *id;             /* points into the holdings */
	double weight;              /* normalised fund weight it carries */
	size_t line;
};

struct audit_sector {
	const char *label;          /* points into the sector map; NULL = not in the map */
	double weight;
	size_t count;
};

struct audit_fund {
	const char *name;           /* points into the holdings */
	size_t holdings;            /* non-cash positions with non-zero weight */
	double weight_sum;          /* raw sum before normalisation (market value total for values) */
	double max_weight;          /* largest |weight| of a non-cash position, of net assets */
	const char *max_id;         /* on a tie, the smallest id (strcmp order) */
	double top10_share;         /* ten largest |weights|, of net assets */
	double hhi;                 /* sum of squared gross invested weights */
	double effective_holdings;  /* 1/hhi */
	double cash_weight;         /* cash and cash equivalents, of net assets */
	double government_weight;   /* government securities, of net assets */
	double fund_share_weight;   /* other investment companies' shares, of net assets */
	double gross_exposure;      /* sum |w| of non-cash positions, of net assets */
	double net_exposure;        /* sum w of non-cash positions, of net assets */
	double short_exposure;      /* sum |w| of the negative positions */
	size_t issuers;             /* distinct issuers of the non-cash positions */
	double issuer_hhi;          /* sum of squared gross issuer shares of invested assets */
	double effective_issuers;   /* 1/issuer_hhi */
	double max_group_weight;    /* largest group of companies (NaN without groups) */
	const char *max_group;
	double covered_weight;      /* share of gross invested weight with a usable history */
	int verdict;                /* enum audit_verdict */
	double active_share;        /* against the benchmark; NaN without one */
	double basket_1940[2], basket_ric[2];   /* the baskets under each enum audit_reading */
	size_t nmissing;            /* ids not in the universe */
	struct audit_missing *missing;
	double missing_weight;
	int risk_known;             /* some weight is in the universe: figures below set */
	int risk_subset;            /* figures use the in-universe weights renormalised */
	size_t risk_holdings;       /* positions in the universe */
	double variance;            /* annualised, sample variance (T-1) of the portfolio series */
	double sd;
	double diversification_ratio;  /* sum w_i sigma_i / sigma_p */
	int below_floor;            /* variance <= the universe floor: no equivalent count */
	double equivalent_count;    /* NaN when below_floor */
	double sd_percentile;       /* mid-rank, 0..1; NaN when not sampled */
	double weighted_random_sd;  /* sqrt(P (hhi' vbar + (1 - hhi') cbar)) */
	double equal_random_sd;     /* sqrt(P E[sigma^2(n)]) at n = risk_holdings, equal weights */
	char *risk_reason;          /* owned; why there are no risk figures (risk_known 0), else NULL */
	int risk_repaired;          /* ragged history: the fund's own covariance matrix was not
	                             * positive semi-definite and its nearest one was used */
	int risk_unpaired;          /* ragged history: no risk figures, two of its holdings share
	                             * too few periods (risk_reason names them; covered_weight 0) */
	size_t nsectors;
	struct audit_sector *sectors;   /* by descending weight; unmapped last */
	double sector_hhi;          /* over sectors, the unmapped bucket counted as one */
	const char *max_sector;
	double max_sector_weight;   /* largest mapped sector; NaN without a map */
	double issuer_max;          /* largest non-cash issuer's |net weight|, of net assets */
	const char *issuer_max_id;  /* on a tie, the smallest issuer (strcmp order), as max_id */
	struct audit_check checks[AUDIT_NPARTS];
	int screen_passed[AUDIT_NSCREENS];
	unsigned failed;            /* AUDIT_RULE_* bits */
	int passed;
};

struct audit_result {
	size_t nfunds;
	struct audit_fund *funds;
	size_t failed_funds;
	size_t insufficient_funds;  /* verdict AUDIT_VERDICT_INSUFFICIENT */
	double min_covered_weight;
	int reading, cash_risk;
	int has_benchmark;
	int has_groups;
	struct audit_policy policy;
	int has_sectors;
	size_t paths;
	uint64_t seed;
	double tie_rtol;
	double periods_per_year;    /* what variances were multiplied by (1 when not annualised) */
	int annualised;             /* 0: figures on a covariance matrix's own scale */
	size_t m, t;                /* t: periods behind the risk figures, 0 = unknown (a matrix) */
	const char *input;          /* static: "return history", "covariance matrix", ... */
	int ragged;                 /* a history read period by period (HC_SOURCE_RAGGED) */
	size_t repaired_funds;      /* ragged: funds whose own matrix was repaired */
	size_t unpaired_funds;      /* ragged: funds without risk figures for a pair of holdings
	                             * sharing too few periods */
	const char *universe_source;
	const char *holdings_source;
	const struct hc_source *source; /* borrowed, as universe_source: the report states how it
	                            * was treated and its data checks' count; valid while it lives */
};

/*
 * Audit every fund of h against the data source s (source.h) and mo (its
 * moments, hc_moments_from_source; NULL: computed here, from the matrix
 * when funds' risk is taken from one, so that a fund's equivalent count
 * compares like with like).  Complete series: a fund's risk from
 * its portfolio's return series.  A matrix (a covariance matrix, or the
 * pairwise-complete covariances of series with gaps; build such a source
 * with need_matrix): a fund's variance is the quadratic form w'Aw of its
 * in-matrix weights, the diversification ratio uses sigma_i = sqrt(a_ii);
 * the matrix must be positive semi-definite (source.h applies that policy);
 * a fund whose w'Aw is negative gets no sd.  The percentile's random
 * portfolios come from hc_sampler_run (same seed, same portfolios for either
 * kind).  A history with gaps read period by period (HC_SOURCE_RAGGED):
 * a fund's variance is w'Aw over the pairwise-complete covariances of its
 * own holdings only (each pair over the periods both are observed,
 * hc_covmatrix_from_universe on those securities' rows), repaired to the
 * nearest positive semi-definite matrix when it is not one (risk_repaired);
 * two holdings sharing fewer than COVMATRIX_MIN_COMMON_PERIODS periods
 * leave that fund without risk figures (risk_reason names them, its
 * covered_weight is 0) and the others go on; no M x M matrix is formed.
 * Its comparisons come from the per-period route (periodic.h): the
 * percentile from hc_periodic_sample, the equal-weight random sd from the
 * exact ragged curve, the floor, equivalent count and weighted random sd
 * from hc_periodic_moments (mo NULL computes them).
 * Variances are multiplied by s->periods_per_year.  *out points
 * into h, s and the sector map, which must outlive it.
 * Errors: HC_EDATA for an id missing from the universe under strict
 * ("HOLDINGS:LINE:COLUMN: ..."), fewer than 2 periods or securities;
 * HC_EUSAGE for a sector rule without a map, a bad option, or series with
 * gaps and no matrix; HC_ENOMEM; HC_EINTERRUPT from the progress callback;
 * sampler errors.  A failed policy is not an error: see
 * result->failed_funds.
 */
int hc_audit_run(struct audit_result **out, const struct holdings *h,
		 const struct hc_source *s, const struct moments *mo,
		 const struct audit_options *opt, struct hc_error *err);

/* Free a and everything it owns; NULL is a no-op. */
void hc_audit_result_free(struct audit_result *a);

/*
 * Build the report: fields describing the run, table "funds" (first: the
 * CSV columns fund,holdings,weight_sum,max_weight,top10_share,hhi,
 * effective_holdings,sd,diversification_ratio,equivalent_count,
 * sd_percentile,weighted_random_sd,passed,failed_rules, then more, among
 * them equal_weight_random_sd), table
 * "screens" (fund,screen,part,passed,figure,test,limit,issuer), "missing"
 * (fund,id,weight,line) and "sectors" (fund,sector,weight,holdings) when
 * there are any, the holdings' warnings and the cautions as notes.
 * equivalent_count has no value when there is no count, with the reason
 * "below the floor" (hc_report_table_set_none: that text in CSV and the text
 * table, null in JSON) and below_floor true;
 * failed_rules is a ';'-separated list of rule names (hc_audit_rule_name)
 * in CSV and text, and in JSON the array of the fund's rows of table
 * "failures" (check, figure, test, limit: hc_report_table_nest); table
 * "failures" (fund,check,figure,test,limit) has one row per failed rule or
 * screen part, so every reader gets the deciding figures.
 */
int hc_audit_report(struct report **out, const struct audit_result *a,
		 const struct holdings *h, struct hc_error *err);

/* Parse "ucits,1940act,ric" (any order, case-insensitive; "all" and "none"
 * too) into AUDIT_SCREEN_* bits.  HC_EUSAGE naming an unknown item. */
int hc_audit_parse_screens(const char *text, unsigned *screens, struct hc_error *err);

/* "min-holdings", "min-effective", "max-weight", "max-sector-weight",
 * "ucits", "1940act", "ric" for one AUDIT_RULE_* bit; NULL otherwise. */
const char *hc_audit_rule_name(unsigned rule);

/* "excluded", "capped" for an enum audit_reading; NULL otherwise. */
const char *hc_audit_reading_name(int reading);

/* "passed", "failed", "insufficient data" for an enum audit_verdict. */
const char *hc_audit_verdict_name(int verdict);

/* "ucits", "1940act", "ric" for AUDIT_SCREEN_* index 0..2. */
const char *hc_audit_screen_name(int index);

#ifdef __cplusplus
}
#endif

#endif
