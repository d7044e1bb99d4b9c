/*
 * enough.h - the holding count past which extra holdings add little, by
 * every selected rule (rules.h), with a bootstrap interval: the analysis
 * `holdcount enough` prints, as one library call.
 *
 * The rules and their sources are in docs/enough.md.
 */
#ifndef HOLDCOUNT_ENOUGH_H
#define HOLDCOUNT_ENOUGH_H

#include <stddef.h>
#include <stdint.h>

#include "holdcount/analysis.h"
#include "holdcount/error.h"
#include "holdcount/measures.h"
#include "holdcount/moments.h"
#include "holdcount/report.h"
#include "holdcount/rules.h"
#include "holdcount/source.h"

#ifdef __cplusplus
extern "C" {
#endif

#define ENOUGH_DEFAULT_PATHS 10000
#define ENOUGH_DEFAULT_SEED 1
#define ENOUGH_DEFAULT_BOOTSTRAP_PATHS 1000
/* The default policy rule: near-floor.  It is exact (no sampling noise),
 * needs no premium or cost a committee would have to guess, has a bootstrap
 * interval, and asks what a minimum-holdings rule is for -- risk close to
 * the least that diversification within this universe can reach. */
#define ENOUGH_DEFAULT_POLICY RULES_NEAR_FLOOR

/* A McLeod-Li p-value below this says the history's volatility clusters
 * (the conventional 5% level), and the report says what that does to the
 * interval's coverage. */
#define HC_ENOUGH_CLUSTERING_ALPHA 0.05

/* The sampled rules that can draw from a covariance matrix. */
#define HC_ENOUGH_MATRIX_SAMPLED (RULES_FLAG(RULES_BAND) | RULES_FLAG(RULES_ALEXEEV_TAPON_SAMPLED))

/* The exact rules' interval: studentized on the log count (bootstrap-t,
 * Hall 1988), bias-corrected and accelerated (BCa, Efron 1987), or plain
 * percentiles of the replicates' counts.  Sampled rules take percentiles. */
enum hc_enough_interval {
	HC_ENOUGH_INTERVAL_STUDENTIZED = 0,
	HC_ENOUGH_INTERVAL_BCA = 1,
	HC_ENOUGH_INTERVAL_PERCENTILE = 2
};

/* Where the recommended count is taken: the upper end of the 90% interval
 * (prudent: allows for estimation error) or the estimate. */
enum hc_enough_policy_at {
	HC_ENOUGH_POLICY_UPPER = 0,
	HC_ENOUGH_POLICY_ESTIMATE = 1
};

struct hc_enough_options {
	struct rules_config rules;   /* the rules and their parameters (hc_rules_config_init) */
	size_t paths;                /* random portfolios a size for the sampled rules */
	uint64_t seed;               /* of the portfolios and the bootstrap */
	int threads;                 /* 0 = OpenMP's default */
	size_t bootstrap;            /* replicates for the interval; 0 = none */
	int bootstrap_kind;          /* enum bootstrap_kind (default stationary) */
	size_t block_length;         /* 0 = data-driven (hc_bootstrap_auto_block_length) */
	int interval;                /* enum hc_enough_interval (default studentized) */
	int bootstrap_sampled;       /* also bootstrap the sampled rules (costly) */
	size_t bootstrap_paths;      /* portfolios a size in each such replicate */
	const struct hc_strata_use *strata; /* NULL: unconstrained draws */
	const struct moments *moments; /* the source's, when the caller has them; NULL: computed */
	unsigned measures;           /* measures.h set at the counts the rules chose; 0 = none */
	int policy;                  /* enum rules_id of the recommendation; -1: ENOUGH_DEFAULT_POLICY */
	int policy_at;               /* enum hc_enough_policy_at (default the upper end) */
	int sentence_column;         /* 1 (default): the rules table also carries the policy sentence,
				      * so that its CSV alone holds the recommendation */
	struct hc_progress progress;
};

/* Defaults: hc_rules_config_init's rules, ENOUGH_DEFAULT_PATHS paths, seed
 * ENOUGH_DEFAULT_SEED, BOOTSTRAP_DEFAULT_REPLICATES stationary-bootstrap
 * replicates with the data-driven block length, studentized intervals,
 * ENOUGH_DEFAULT_BOOTSTRAP_PATHS, no strata, no progress, the default
 * policy rule at the upper end of its interval, the sentence column. */
void hc_enough_options_init(struct hc_enough_options *opt);

struct hc_enough {
	struct rule_result rules[RULES_COUNT];  /* one per selected rule, in rules.h's order */
	size_t nrules;
	double vbar, cbar;           /* average variance and covariance, per period */
	size_t m;                    /* securities; 0 = unbounded (summary statistics) */
	double periods_per_year;     /* figures are multiplied by it (1: not annualised) */
	int annualised;
	int bootstrapped;            /* the exact rules have an interval */
	size_t replicates, block_length;
	int kind;                    /* enum bootstrap_kind */
	int interval;                /* enum hc_enough_interval used */
	int auto_block;              /* the block length is the data-driven one */
	size_t clustering_lags;      /* volatility clustering test (hc_bootstrap_clustering): its lags, */
	double clustering_q, clustering_p; /* statistic and p-value; NaN when not run */
	uint64_t seed;
	size_t paths;                /* 0: no rule was sampled */
	size_t sampled_sizes;        /* sampled sizes 1..this */
	int sampled_bootstrapped;
	const char *no_interval;     /* static: why there is no interval, or NULL */
	char at_spread_reason[HC_ERROR_MESSAGE_MAX - 16]; /* ragged: why alexeev-tapon has no exact
				     * spread (the pairwise-complete matrix cannot be built); "" otherwise */
	struct hc_measures_curve *measures; /* with opt->measures and a rule met; else NULL */
	int policy_rule;             /* enum rules_id the recommendation took; -1: no rule was run */
	size_t policy_count;         /* the recommended minimum holdings; 0: none (see the report) */
	int policy_at_upper;         /* 1: taken at the upper end of the 90% interval */
	struct report *report;       /* fields, strata, table "rules" (and "measures"), notes and cautions */
};

/*
 * Every selected rule of opt on src: the exact rules from its averages
 * (alexeev-tapon from its exact spread); band, lag-share and
 * alexeev-tapon-sampled by random portfolios (hc_rules_sampled stops at the
 * smallest stage of sizes that settles them), band and
 * alexeev-tapon-sampled also from a matrix (a covariance matrix, or the
 * pairwise-complete covariances of series with gaps: build such a source
 * with need_matrix when they are selected) and lag-share only from complete
 * series; the bootstrap interval of the exact rules (complete series, or a
 * ragged history period by period: periodic.h;
 * opt->interval) and, with bootstrap_sampled, of the sampled ones; then the
 * recommendation (opt->policy, opt->policy_at) with its policy sentence.
 * A matrix's figures are on its own scale unless the source is
 * annualised.  With opt->measures, opt->paths random portfolios (seed
 * opt->seed) at each distinct count a rule chose give the measures of
 * measures.h there: table "measures" (n, the rules that chose it, then
 * five columns a measure as curve's) and fields universe_KEY; they need
 * complete series and paths above 0.  *out is new (hc_enough_free) or
 * NULL on error.
 * Errors: HC_EUSAGE with the reason (lag-share, --bootstrap or
 * --bootstrap-sampled from a matrix; strata with gaps or a matrix; paths 0
 * with a sampled rule; strata without a sampled rule), the moments',
 * rules', sampler's and bootstrap's errors, HC_ENOMEM, HC_EINTERRUPT.
 */
int hc_enough_run(struct hc_enough **out, const struct hc_source *src,
		  const struct hc_enough_options *opt, struct hc_error *err);

/*
 * The exact rules from summary statistics alone: average variance vbar and
 * covariance cbar per period, m securities (0 = unbounded), figures
 * multiplied by periods_per_year (0: not annualised, on the inputs' scale).
 * No interval; the recommendation at the estimate.  An average sd above
 * HC_MOMENTS_IMPLAUSIBLE_SD a year gets a note (percent squared?).  Errors: those of hc_moments_from_summary, the rules' (a
 * sampled rule is HC_EUSAGE), HC_ENOMEM.
 */
int hc_enough_summary(struct hc_enough **out, double vbar, double cbar, size_t m,
		      double periods_per_year, const struct hc_enough_options *opt,
		      struct hc_error *err);

/* Free e and everything it owns; NULL is a no-op. */
void hc_enough_free(struct hc_enough *e);

#ifdef __cplusplus
}
#endif

#endif
