/*
 * bench_sampler.c - the library alone on a wide CSV, for bench_curve.sh
 * while (or where) the command-line tool is not available: read, moments,
 * exact curve, sampled curve, CSV out, with phase times on stderr.
 *
 * usage: bench_sampler UNIVERSE.csv PATHS SEED THREADS SIZES
 * The reader here is a plain strtod loop for complete, comma-separated
 * files of returns (the benchmark's own files); the tool's loader is the
 * one users get.
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

static double now(void)
{
	struct timespec ts;

	clock_gettime(CLOCK_MONOTONIC, &ts);
	return ts.tv_sec + 1e-9 * ts.tv_nsec;
}

static char *slurp(const char *path, size_t *len)
{
	FILE *fp = fopen(path, "rb");
	char *buf;
	long n;

	if (!fp)
		return NULL;
	fseek(fp, 0, SEEK_END);
	n = ftell(fp);
	fseek(fp, 0, SEEK_SET);
	buf = malloc((size_t)n + 1);
	if (buf && fread(buf, 1, (size_t)n, fp) != (size_t)n) {
		free(buf);
		buf = NULL;
	}
	fclose(fp);
	if (buf)
		buf[n] = 0;
	*len = (size_t)n;
	return buf;
}

/* Complete wide CSV -> security-major returns. */
static int read_wide(const char *path, struct universe *u)
{
	size_t len, m = 0, t = 0, cap = 256, i;
	char *buf = slurp(path, &len), *p, *end;
	double *rows;

	if (!buf)
		return -1;
	for (p = buf; *p && *p != '\n'; p++)
		m += *p == ',';
	rows = malloc(cap * m * sizeof *rows);
	p = strchr(buf, '\n') + 1;
	while (*p) {
		if (t == cap)
			rows = realloc(rows, (cap *= 2) * m * sizeof *rows);
		p = strchr(p, ',') + 1;
		for (i = 0; i < m; i++) {
			rows[t * m + i] = strtod(p, &end);
			p = end + 1;
		}
		t++;
	}
	free(buf);
	memset(u, 0, sizeof *u);
	u->m = m;
	u->t = t;
	u->x = hc_malloc(m * t * sizeof *u->x);
	for (i = 0; i < m; i++)
		for (size_t k = 0; k < t; k++)
			u->x[i * t + k] = rows[k * m + i];
	free(rows);
	u->periods_per_year = 12;
	return 0;
}

int main(int argc, char **argv)
{
	struct universe u;
	struct moments mo;
	struct curve *c;
	struct sampler_options opt;
	struct sampler_result *r = NULL;
	struct hc_error err;
	size_t *sizes, ns, j;
	double t0, t1, t2, t3;

	if (argc != 6) {
		fprintf(stderr, "usage: bench_sampler UNIVERSE.csv PATHS SEED THREADS SIZES\n");
		return 2;
	}
	gsl_set_error_handler_off();
	t0 = now();
	if (read_wide(argv[1], &u)) {
		fprintf(stderr, "bench_sampler: cannot read '%s'\n", argv[1]);
		return 4;
	}
	t1 = now();
	if (moments_from_universe(&mo, &u, &err) ||
	    curve_parse_sizes(argv[5], u.m, &sizes, &ns, &err) ||
	    curve_exact(&c, &mo, sizes, ns, 12.0, &err))
		goto fail;
	t2 = now();
	sampler_options_init(&opt);
	opt.paths = strtoul(argv[2], NULL, 10);
	opt.seed = strtoull(argv[3], NULL, 10);
	opt.threads = atoi(argv[4]);
	if (opt.paths && (sampler_run(&r, &u, sizes, ns, &opt, &err) ||
			  sampler_summarise(c, r, &err)))
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
	sampler_result_free(r);
	curve_free(c);
	hc_free(sizes);
	hc_free(u.x);
	return 0;
fail:
	fprintf(stderr, "bench_sampler: %s\n", err.message);
	return err.code;
}
