#!/usr/bin/env python3
"""Reference check: holdcount's moments and curve against numpy.

Debian's numpy computes, on invented universes generated here (seeded), the
sample covariance (np.cov, ddof=1), the average variance and covariance, the
average correlation (np.corrcoef), the equal-weight universe sd, and, by
enumerating every subset of a 12-security universe, the exact mean and sd of
the portfolio variance at each size and its sd quantiles; and, on a
universe with gaps, pairwise-complete covariances.  holdcount must
match (`describe --format json`, `curve --format csv`): exact figures to
1e-9 relative; sampled means within 4 Monte Carlo standard errors; sampled
sd quantiles inside the distribution-free band of the population quantile
(order statistics: q +- 4 sqrt(q(1-q)/K)).

Environment: HOLDCOUNT (the binary), HOLDCOUNT_TEST_TMP (scratch dir).
"""
import csv
import datetime
import io
import itertools
import json
import math
import os
import subprocess
import sys

import numpy as np

HC = os.environ["HOLDCOUNT"]
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
P = 12.0
failures = []


def check(what, ok, detail=""):
    if not ok:
        failures.append("%s %s" % (what, detail))


def close(what, got, want, rel=1e-9, scale=0.0):
    ok = abs(got - want) <= rel * max(abs(want), scale)
    check(what, ok, "got %.17g want %.17g" % (got, want))


def month_ends(n):
    out, y, m = [], 2003, 1
    for _ in range(n):
        nxt = datetime.date(y + (m == 12), m % 12 + 1, 1)
        out.append((nxt - datetime.timedelta(days=1)).isoformat())
        y, m = nxt.year, nxt.month
    return out


def universe(path, m, t, seed):
    rng = np.random.default_rng(seed)
    f = 0.043 * rng.standard_normal(t)
    beta = rng.uniform(0.6, 1.4, m)
    s = rng.uniform(0.025, 0.11, m)
    r = 0.0061 + np.outer(f, beta) + rng.standard_normal((t, m)) * s
    with open(path, "w") as fp:
        fp.write("date," + ",".join("QV%03d" % (i + 1) for i in range(m)) + "\n")
        for k, d in enumerate(month_ends(t)):
            fp.write(d + "," + ",".join(repr(float(x)) for x in r[k]) + "\n")
    # the file is the reference's input too: read back what was written
    return np.array([[float(x) for x in row[1:]] for row in
                     list(csv.reader(open(path)))[1:]])


def pairwise_reference(r):
    """Pairwise-complete covariances and correlations, written out with numpy:
    each pair over the periods both have (means over that overlap, ddof=1),
    each variance over the security's own periods."""
    t, m = r.shape
    ok = ~np.isnan(r)
    a = np.empty((m, m))
    rho = []
    for i in range(m):
        a[i, i] = np.var(r[ok[:, i], i], ddof=1)
        for j in range(i + 1, m):
            both = ok[:, i] & ok[:, j]
            x, y = r[both, i], r[both, j]
            c = np.cov(x, y)
            a[i, j] = a[j, i] = c[0, 1]
            rho.append(c[0, 1] / math.sqrt(c[0, 0] * c[1, 1]))
    return a, float(np.mean(rho))


def check_pairwise(path, r, label):
    m = r.shape[1]
    a, rho = pairwise_reference(r)
    vbar = np.trace(a) / m
    cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
    d = json.loads(run("describe", path, "--missing", "pairwise", "--min-coverage", "0.5",
                       "--format", "json"))
    check(label + " securities", d["securities"] == m, str(d["securities"]))
    close(label + " average_variance", d["average_variance"], P * vbar)
    close(label + " average_covariance", d["average_covariance"], P * cbar, scale=P * vbar)
    close(label + " average_correlation", d["average_correlation"], rho, scale=1.0)


def run(*args):
    p = subprocess.run([HC, *args], capture_output=True, text=True)
    if p.returncode != 0:
        sys.exit("holdcount %s failed (%d): %s" % (" ".join(args), p.returncode, p.stderr))
    return p.stdout


def check_describe(path, r, label):
    m = r.shape[1]
    a = np.cov(r, rowvar=False)
    vbar = np.trace(a) / m
    cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
    c = np.corrcoef(r, rowvar=False)
    rho = (c.sum() - m) / (m * (m - 1))
    d = json.loads(run("describe", path, "--format", "json"))
    check(label + " securities", d["securities"] == m, str(d["securities"]))
    check(label + " periods", d["periods"] == r.shape[0], str(d["periods"]))
    check(label + " periods_per_year", d["periods_per_year"] == P, str(d["periods_per_year"]))
    close(label + " average_variance", d["average_variance"], P * vbar)
    close(label + " average_covariance", d["average_covariance"], P * cbar, scale=P * vbar)
    close(label + " average_correlation", d["average_correlation"], rho, scale=1.0)
    close(label + " floor_sd", d["floor_sd"], math.sqrt(P * cbar))
    close(label + " universe_sd", d["universe_sd"], math.sqrt(P * a.mean()))
    return a


def curve_rows(path, paths, sizes, seed):
    out = run("curve", path, "--paths", str(paths), "--sizes", sizes, "--seed", str(seed),
              "--format", "csv", "--quiet")
    return list(csv.DictReader(io.StringIO(out)))


def num(cell):
    return float(cell) if cell != "" else float("nan")


def check_curve_enumerated(path, r, label, paths=4000):
    """Every subset of a small universe: exact columns and sampled ones."""
    m = r.shape[1]
    a = np.cov(r, rowvar=False)
    vbar = np.trace(a) / m
    cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
    rows = curve_rows(path, paths, "1-%d" % m, 20261201)
    check(label + " rows", len(rows) == m, str(len(rows)))
    ew = np.full(m, 1.0 / m)
    for row in rows:
        n = int(row["n"])
        var = []
        te2 = []
        for s in itertools.combinations(range(m), n):
            w = np.zeros(m)
            w[list(s)] = 1.0 / n
            var.append(w @ a @ w)
            te2.append((w - ew) @ a @ (w - ew))
        var = P * np.array(var)
        mean, sd = var.mean(), var.std()
        close(label + " n=%d expected_variance" % n, num(row["expected_variance"]), mean)
        close(label + " n=%d expected_sd" % n, num(row["expected_sd"]), math.sqrt(mean))
        close(label + " n=%d variance_sd" % n, num(row["variance_sd"]), sd, scale=1e-12 * mean)
        close(label + " n=%d expected_tracking_error" % n, num(row["expected_tracking_error"]),
              math.sqrt(P * np.mean(te2)), scale=1e-7)
        close(label + " n=%d diversifiable_share" % n, num(row["diversifiable_share"]),
              (vbar - cbar) / n / (vbar / n + (1 - 1 / n) * cbar))
        se = num(row["sampled_variance_se"])
        got = num(row["sampled_mean_variance"])
        if n < m:
            check(label + " n=%d sampled mean within 4 se" % n, abs(got - mean) <= 4 * se,
                  "mean %.6g exact %.6g se %.3g" % (got, mean, se))
            # the sampled sd of variance, se*sqrt(K), against the population sd
            close(label + " n=%d sampled spread" % n, se * math.sqrt(paths), sd, rel=0.10)
            close(label + " n=%d z_score" % n, num(row["z_score"]), (got - mean) / se, rel=1e-6)
        else:
            close(label + " n=M sampled", got, mean)
        sig = np.sort(np.sqrt(var))
        for q, key in ((0.05, "sd_p05"), (0.50, "sd_p50"), (0.95, "sd_p95")):
            band = 4 * math.sqrt(q * (1 - q) / paths)
            lo = np.quantile(sig, max(0.0, q - band), method="inverted_cdf")
            hi = np.quantile(sig, min(1.0, q + band), method="inverted_cdf")
            g = num(row[key])
            check(label + " n=%d %s in band" % (n, key), lo - 1e-12 <= g <= hi + 1e-12,
                  "%.6g not in [%.6g, %.6g]" % (g, lo, hi))


def main():
    os.makedirs(TMP, exist_ok=True)
    # Covariance sums on the Gram route (T < M) and the matrix route (T >= M).
    for m, t, seed in ((60, 36, 11), (25, 70, 12)):
        path = os.path.join(TMP, "check_moments_%dx%d.csv" % (m, t))
        r = universe(path, m, t, seed)
        check_describe(path, r, "%dx%d" % (m, t))
    # Enumeration of every subset of 12 securities, both routes.
    for m, t, seed in ((12, 9, 13), (12, 30, 14)):
        path = os.path.join(TMP, "check_moments_enum_%dx%d.csv" % (m, t))
        r = universe(path, m, t, seed)
        check_describe(path, r, "enum %dx%d" % (m, t))
        check_curve_enumerated(path, r, "enum %dx%d" % (m, t))
    # Gaps, pairwise-complete covariances: every 7th cell of a few columns.
    path = os.path.join(TMP, "check_moments_gaps.csv")
    r = universe(path, 15, 48, 15)
    r[3::7, 2] = np.nan
    r[5::11, 9] = np.nan
    r[:4, 14] = np.nan
    dates = month_ends(48)
    with open(path, "w") as fp:
        fp.write("date," + ",".join("QV%03d" % (i + 1) for i in range(15)) + "\n")
        for k in range(48):
            fp.write(dates[k] + "," + ",".join("" if np.isnan(x) else repr(float(x)) for x in r[k]) + "\n")
    check_pairwise(path, r, "pairwise 15x48")
    if failures:
        print("\n".join("FAIL: " + f for f in failures))
        sys.exit(1)
    print("check_moments: all figures agree with numpy")


if __name__ == "__main__":
    main()
