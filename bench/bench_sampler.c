/*
 * bench_sampler.c - the library alone on a wide CSV, for bench_curve.sh
 * while (or where) the command-line tool is not available: read, moments,
 * exact curve, sampled curve, CSV out, with phase times on stderr.
 *
 * usage: bench_sampler UNIVERSE.csv PATHS SEED THREADS SIZES
 * The file is read by the library's loader (hc_universe_load), as the tool
 * reads it.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <gsl/gsl_errno.h>

#include "holdcount/curve.h"
#include "holdcount/memory.h"
#include "holdcount/moments.h"
#include "holdcount/sampler.h"
#include "holdcount/universe.h"

static double now(void)
{
	struct timespec ts;

	clock_gettime(CLOCK_MONOTONIC, &ts);
	return ts.tv_sec + 1e-9 * ts.tv_nsec;
}

int main(int argc, char **argv)
{
	struct universe *u = NULL;
	struct universe_options uo;
	struct moments mo;
	struct curve *c;
	struct sampler_options opt;
	struct sampler_result *r = NULL;
	struct hc_error err;
	size_t *sizes, ns, j;
	struct hc_source src;
	double t0, t1, t2, t3;

	if (argc != 6) {
		fprintf(stderr, "usage: bench_sampler UNIVERSE.csv PATHS SEED THREADS SIZES\n");
		return 2;
	}
	gsl_set_error_handler_off();
	t0 = now();
	hc_universe_options_init(&uo);
	if (hc_universe_load(&u, argv[1], &uo, &err))
		goto fail;
	t1 = now();
	if (hc_moments_from_universe(&mo, u, &err) ||
	    hc_curve_parse_sizes(argv[5], u->m, &sizes, &ns, &err) ||
	    hc_curve_exact(&c, &mo, sizes, ns, u->periods_per_year, &err))
		goto fail;
	t2 = now();
	hc_sampler_options_init(&opt);
	opt.paths = strtoul(argv[2], NULL, 10);
	opt.seed = strtoull(argv[3], NULL, 10);
	opt.threads = atoi(argv[4]);
	hc_source_init_series(&src, u);
	if (opt.paths && (hc_sampler_run(&r, &src, sizes, ns, &opt, &err) ||
			  hc_sampler_summarise(c, r, &err)))
		goto fail;
	t3 = now();
	printf("n,expected_variance,sampled_mean_variance,sampled_variance_se,sd_p05,sd_p50,sd_p95\n");
	for (j = 0; j < ns; j++) {
		const struct curve_point *p = &c->points[j];
		printf("%zu,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g\n", p->n, p->expected_variance,
		       p->sampled_mean_variance, p->sampled_variance_se, p->sd_p05, p->sd_p50, p->sd_p95);
	}
	fprintf(stderr, "load %.3f s, moments %.3f s, sampling %.3f s, total %.3f s\n",
		t1 - t0, t2 - t1, t3 - t2, t3 - t0);
	hc_sampler_result_free(r);
	hc_curve_free(c);
	hc_free(sizes);
	hc_universe_free(u);
	return 0;
fail:
	fprintf(stderr, "bench_sampler: %s\n", err.message);
	return err.code;
}
