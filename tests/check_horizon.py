#!/usr/bin/env python3
"""Reference check: ending wealth over a horizon by holding count
(holdcount horizon, docs/horizon.md) against numpy, exact enumeration and a
published example.

1. numpy recomputation on the same draws: the library exports each path's
   members and periods (hc_horizon_draw, through ctypes); numpy forms the
   rebalanced wealth prod_s(1 + mean_i r_is) and the buy-and-hold wealth
   mean_i prod_s(1 + r_is) of every portfolio, the equal-weight universe's
   the same two ways, the lag indicators, then the mean, its Monte Carlo
   standard error, numpy's linear quantiles and the lag share by count.
   `horizon --format json` must match to 1e-9 relative, on overlapping
   windows, on the stationary bootstrap (Politis & Romano, 1994, JASA
   89(428)) and against a fixed benchmark rate.
2. Exact enumeration (every N-subset x every window start of a 6-security,
   10-period universe): the mean ending wealth both ways and the
   probability of lagging; the sampled values must lie within 4.5 Monte
   Carlo standard errors (each comparison fails by chance with probability
   under 1e-5).
3. The stationary bootstrap with mean block length 1 draws periods
   independently (Politis & Romano, 1994), so the expected ending wealth
   is a product of sample means: (1 + mu_S)^h rebalanced, the mean of
   (1 + mu_i)^h buy-and-hold, enumerated over every N-subset; the sampled
   means within 4.5 standard errors.
4. Heaton, Polson & Witte (2017, "Why indexing works", Applied Stochastic
   Models in Business and Industry 33(6)), their example as quoted in
   issue 15: five stocks returning 10%, 10%, 10%, 10% and 50% -- 4 of the 5
   one-stock and 6 of the 10 two-stock portfolios lag the equal-weight
   index.  A second period of 0% for every stock makes the two-period
   window's wealth the example's one-period one; enumeration confirms the
   counts and holdcount's lag shares must be within 4.5 s.e. of 0.8 and 0.6.
5. A benchmark series (--benchmark-file): numpy compounds the series over
   each path's own periods (the draws exported as in 1) and recomputes the
   lag indicators against it, on windows and on the bootstrap, and the
   benchmark's own quantiles, to 1e-9 relative.
6. The rule of Domian, Louton & Racine (2007, The Financial Review 42(4)):
   exact enumeration of the buy-and-hold probability of lagging a series
   over every N-subset x every window start of an 8-security, 12-period
   universe; the sampled probabilities within 4.5 s.e., and the rule's
   count at a limit set in a wide gap between two counts' exact
   probabilities must be the exact count; a limit below every count's
   probability must give none.
7. Weights proportional to market value (--market-values): numpy forms
   prod_s(1 + sum_i c_i r_is / sum c) and sum_i c_i prod_s(1 + r_is) / sum c
   for each portfolio the library drew (as in 1), the universe weighted the
   same way as the benchmark, on windows, on the bootstrap and against a
   series, to 1e-9 relative.
8. A history with gaps (listings, delistings, a gap that resumes, a total
   loss): a plain-Python reimplementation that follows each holding's value
   (buy-and-hold reinvesting a delisted holding's value in the rest in
   proportion to their values; rebalanced equal weights over the holdings
   left), on the library's own draws, to 1e-9 relative; the bootstrap
   refused on such a history.

Environment: HOLDCOUNT (the binary), HOLDCOUNT_LIBRARY (libholdcount.so),
HOLDCOUNT_TEST_TMP (scratch dir).
"""
import ctypes
import itertools
import json
import math
import os
import subprocess
import sys

import numpy as np

import hclibrary  # tests/hclibrary.py: the library through ctypes

HC = os.environ["HOLDCOUNT"]
LIB = hclibrary.load()
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
failures = []
W = ("rebal", "hold")


def check(what, ok, detail=""):
    if not ok:
        failures.append("%s %s" % (what, detail))


def close(what, got, want, rel=1e-9, scale=1e-12):
    check(what, got is not None and abs(got - want) <= rel * max(abs(want), scale),
          "got %r want %.17g" % (got, want))


def write(path, r):
    """Write returns r (periods x securities) with invented ids; return
    what the file holds, as read back (the library's exact inputs)."""
    t, m = r.shape
    with open(path, "w") as fp:
        fp.write("date," + ",".join("LIR9%02d" % (i + 1) for i in range(m)) + "\n")
        for k, d in enumerate(hclibrary.month_ends(2003, t)):
            fp.write(d + "," + ",".join(repr(float(x)) for x in r[k]) + "\n")
    return np.array([[float(x) for x in line.split(",")[1:]] for line in open(path).read().split("\n")[1:] if line])


def invented(m, t, seed):
    rng = np.random.default_rng(seed)
    f = 0.045 * rng.standard_t(5, t)
    beta = rng.uniform(0.5, 1.5, m)
    s = rng.uniform(0.03, 0.10, m)
    return 0.007 + np.outer(f, beta) + s * rng.standard_t(4, (t, m)) / math.sqrt(2)


def horizon(path, sizes, paths, seed, h, *extra):
    """holdcount horizon at h months (periods per year 12)."""
    p = subprocess.run([HC, "horizon", path, "--sizes", ",".join(map(str, sizes)), "--paths", str(paths),
                        "--seed", str(seed), "--periods-per-year", "12", "--years", repr(h / 12.0),
                        "--format", "json", "--quiet"] + list(extra), capture_output=True, text=True)
    if p.returncode != 0:
        sys.exit("holdcount horizon failed: " + p.stderr)
    out = json.loads(p.stdout)
    if out["horizon_periods"] != h:
        sys.exit("horizon_periods %r, expected %d" % (out["horizon_periods"], h))
    return out


LIB.hc_horizon_draw.argtypes = [ctypes.c_uint64, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_size_t,
                                ctypes.c_size_t, ctypes.c_int, ctypes.c_size_t,
                                ctypes.POINTER(ctypes.c_uint32), ctypes.POINTER(ctypes.c_size_t), ctypes.c_void_p]


def draw(seed, k, m, t, h, route, block):
    idx = (ctypes.c_uint32 * m)()
    per = (ctypes.c_size_t * h)()
    err = ctypes.create_string_buffer(4096)
    if LIB.hc_horizon_draw(seed, k, m, t, h, route, block, idx, per, err) != 0:
        sys.exit("hc_horizon_draw failed")
    return list(idx), list(per)


def wealth(rp, c=None):
    """Rebalanced and buy-and-hold wealth of the returns rp (h x n), equal
    weights, or weights proportional to the market values c (n)."""
    if c is None:
        return float(np.prod(1 + rp.mean(axis=1))), float(np.mean(np.prod(1 + rp, axis=0)))
    w = c / c.sum()
    return float(np.prod(1 + rp @ w)), float(np.prod(1 + rp, axis=0) @ w)


def write_values(path, c):
    """Market values c by id, in reverse order, with an id the universe
    lacks (ignored) and an extra column (ignored)."""
    with open(path, "w") as fp:
        fp.write("note,Market_Value,ID\n")
        fp.write("x,17.5,LIR999\n")
        for i in reversed(range(len(c))):
            fp.write("y,%r,LIR9%02d\n" % (float(c[i]), i + 1))
    return c


def write_bench(path, b, name="LIR Bond Index"):
    """A benchmark series on the universe's month ends; returns it as read back."""
    with open(path, "w") as fp:
        fp.write("date,%s\n" % name)
        for d, x in zip(hclibrary.month_ends(2003, len(b)), b):
            fp.write("%s,%r\n" % (d, float(x)))
    return np.array([float(line.split(",")[1]) for line in open(path).read().split("\n")[1:] if line])


def same_draws(r, path, route, extra, rate=None, bench=None, cap=None):
    t, m = r.shape
    sizes, paths, seed, h = [1, 3, 8, m], 300, 11, 18 if route == 1 else 40
    out = horizon(path, sizes, paths, seed, h, *extra)
    block = out["block_length"] or 0
    want_route = "overlapping windows" if route == 1 else "stationary bootstrap"
    check("%s route" % want_route, out["paths_from"].startswith(want_route), out["paths_from"])
    rows = {row["holdings"]: row for row in out["horizon"]}
    vals = {(n, w): [] for n in sizes for w in range(2)}
    lags = {(n, w): [] for n in sizes for w in range(2)}
    uni = {w: [] for w in range(2)}
    bws = []
    for k in range(paths):
        idx, per = draw(seed, k, m, t, h, route, block)
        rp = r[per]
        uw = wealth(rp, cap)
        for w in range(2):
            uni[w].append(uw[w])
        if bench is not None:
            bw = float(np.prod(1 + bench[per]))  # the same periods as the portfolios'
            bws.append(bw)
            bwk = (bw, bw)
        else:
            bwk = uw if rate is None else ((1 + rate) ** (h / 12.0),) * 2
        for n in sizes:
            pw = uw if n == m else wealth(rp[:, idx[:n]], None if cap is None else cap[idx[:n]])  # N = M: the universe
            for w in range(2):
                vals[n, w].append(pw[w])
                lags[n, w].append(1.0 if pw[w] < bwk[w] else 0.0)
    tag = "%s%s%s%s" % (want_route, "" if rate is None else " rate", "" if bench is None else " series",
                        "" if cap is None else " market values")
    for n in sizes:
        for w in range(2):
            x, g = np.array(vals[n, w]), np.array(lags[n, w])
            row = rows[n]
            close("%s n=%d %s_mean" % (tag, n, W[w]), row[W[w] + "_mean"], x.mean())
            close("%s n=%d %s_se" % (tag, n, W[w]), row[W[w] + "_se"], x.std(ddof=1) / math.sqrt(paths))
            for q, key in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
                close("%s n=%d %s%s" % (tag, n, W[w], key), row[W[w] + key], float(np.quantile(x, q)))
            close("%s n=%d %s_lag" % (tag, n, W[w]), row[W[w] + "_lag"], g.mean())
    for w in range(2):
        for q, key in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
            close("%s universe %s%s" % (tag, W[w], key), out["universe_" + W[w] + key], float(np.quantile(uni[w], q)))
    if bench is not None:
        for q, key in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
            close("%s benchmark%s" % (tag, key), out["benchmark" + key], float(np.quantile(bws, q)))
        check("%s benchmark named" % tag, out["benchmark_name"] == "LIR Bond Index", out["benchmark_name"])
    elif rate is None:
        check("%s: N = M never lags" % tag, rows[m]["rebal_lag"] == 0 and rows[m]["hold_lag"] == 0)
    else:
        close("%s benchmark wealth" % tag, out["benchmark_wealth"], (1 + rate) ** (h / 12.0))


def enumeration():
    path = os.path.join(TMP, "horizon_enum.csv")
    r = write(path, invented(6, 10, 77))
    t, m = r.shape
    h, sizes, paths = 4, [1, 2, 3, 5, 6], 20000
    out = horizon(path, sizes, paths, 5, h)
    rows = {row["holdings"]: row for row in out["horizon"]}
    starts = range(t - h + 1)
    for n in sizes:
        ws, lg = [], []
        for s in starts:
            rp = r[s:s + h]
            uw = wealth(rp)
            for c in itertools.combinations(range(m), n):
                pw = uw if n == m else wealth(rp[:, list(c)])
                ws.append(pw)
                lg.append([pw[w] < uw[w] for w in range(2)])
        ws, lg = np.array(ws), np.array(lg, dtype=float)
        for w in range(2):
            mean, sd = ws[:, w].mean(), ws[:, w].std()
            got = rows[n][W[w] + "_mean"]
            check("enumeration n=%d %s mean" % (n, W[w]), abs(got - mean) <= 4.5 * sd / math.sqrt(paths) + 1e-12,
                  "got %r exact %.12g (se %.3g)" % (got, mean, sd / math.sqrt(paths)))
            p = lg[:, w].mean()
            got = rows[n][W[w] + "_lag"]
            check("enumeration n=%d %s lag" % (n, W[w]),
                  abs(got - p) <= 4.5 * math.sqrt(p * (1 - p) / paths) + 1e-12,
                  "got %r exact %.12g" % (got, p))


def bootstrap_expectation():
    """With mean block length 1 the stationary bootstrap draws each period
    independently and uniformly (Politis & Romano, 1994: a block continues
    with probability 1 - 1/L = 0), so for a fixed portfolio S
    E[prod_s (1 + r_S,p_s)] = (1 + mu_S)^h, mu_S the sample mean of its
    return, and E over random S is the mean over every N-subset
    (enumerated): rebalanced (1 + mean of the members' means)^h;
    buy-and-hold the mean over securities of (1 + mu_i)^h.  The sampled
    means must lie within 4.5 of their own standard errors."""
    path = os.path.join(TMP, "horizon_iid.csv")
    r = write(path, invented(6, 10, 31))
    t, m = r.shape
    h, sizes, paths = 15, [1, 2, 4, 6], 20000
    out = horizon(path, sizes, paths, 8, h, "--block-length", "1")
    check("bootstrap with L = 1", out["block_length"] == 1 and out["paths_from"].startswith("stationary bootstrap"),
          out["paths_from"])
    rows = {row["holdings"]: row for row in out["horizon"]}
    mu = r.mean(axis=0)
    for n in sizes:
        exact = (np.mean([(1 + mu[list(c)].mean()) ** h for c in itertools.combinations(range(m), n)]),
                 np.mean((1 + mu) ** h))
        for w in range(2):
            got, se = rows[n][W[w] + "_mean"], rows[n][W[w] + "_se"]
            check("bootstrap expectation n=%d %s" % (n, W[w]), abs(got - exact[w]) <= 4.5 * se,
                  "got %r exact %.12g (se %.3g)" % (got, exact[w], se))


def lag_rule():
    """Domian, Louton & Racine (2007): the smallest count whose buy-and-hold
    portfolios end behind the benchmark with probability at most p.  Exact
    enumeration of that probability over every N-subset x every window
    start (uniform and independent, as the tool draws them) of an
    8-security, 12-period universe against an invented bond series; p is
    set midway between the exact probabilities at the rule's count and the
    count before it, where the gap is at least 12 Monte Carlo standard
    errors, so the sampled rule must give the exact count; every sampled
    probability within 4.5 s.e. of the exact one.  Then a p below every
    count's probability: the tool must say no count meets it."""
    path, bpath = os.path.join(TMP, "horizon_rule.csv"), os.path.join(TMP, "horizon_rule_bond.csv")
    # invented: a weak common factor and wide own risks, so that the lag
    # falls steadily with the count (exact values 0.536 ... 0.143, 0)
    rng = np.random.default_rng(4)
    f = 0.01 * rng.standard_normal(12)
    r = write(path, 0.016 + np.outer(f, rng.uniform(0.5, 1.5, 8)) + rng.uniform(0.06, 0.14, 8) * rng.standard_normal((12, 8)))
    b = write_bench(bpath, 0.006 + 0.003 * np.random.default_rng(7).standard_normal(12))
    t, m = r.shape
    h, sizes, paths = 6, list(range(1, 9)), 20000
    exact = {}
    for n in sizes:
        lg = []
        for s in range(t - h + 1):
            rp, bw = r[s:s + h], float(np.prod(1 + b[s:s + h]))
            lg += [wealth(rp[:, list(c)])[1] < bw for c in itertools.combinations(range(m), n)]
        exact[n] = float(np.mean(lg))
    se = lambda p: math.sqrt(p * (1 - p) / paths)
    # the rule's count for a p between consecutive counts' probabilities
    pick = None
    for a, c in zip(sizes, sizes[1:]):
        lo, hi = exact[c], min(exact[x] for x in sizes if x <= a)
        if hi - lo >= 12 * max(se(lo), se(hi), 1e-3) and lo > 0:
            pick = (c, (lo + hi) / 2)
    if pick is None:
        check("lag rule: a universe with a clear gap", False, repr(exact))
        return
    want, p = pick
    out = horizon(path, sizes, paths, 9, h, "--benchmark-file", bpath, "--lag-limit", repr(p))
    rows = {row["holdings"]: row for row in out["horizon"]}
    for n in sizes:
        got = rows[n]["hold_lag"]
        check("lag rule enumeration n=%d" % n, abs(got - exact[n]) <= 4.5 * se(exact[n]) + 1e-12,
              "got %r exact %.12g" % (got, exact[n]))
    check("lag rule count", out["lag_rule_count"] == want, "got %r exact %d (p %.4g, %r)" % (out["lag_rule_count"], want, p, exact))
    close("lag rule lag", out["lag_rule_lag"], rows[want]["hold_lag"])
    close("lag rule s.e.", out["lag_rule_lag_se"], rows[want]["hold_lag_se"])
    close("lag limit", out["lag_limit"], p)
    check("lag rule names the benchmark", "LIR Bond Index" in out["lag_rule"], out["lag_rule"])
    # counts 1..M-1 only, and p half the smallest of their probabilities
    low = min(exact[n] for n in sizes[:-1])
    check("lag rule: every count below M lags sometimes", low > 0.02, repr(exact))
    out = horizon(path, sizes[:-1], paths, 9, h, "--benchmark-file", bpath, "--lag-limit", repr(low / 2))
    check("lag rule: none meets it", out["lag_rule_count"] is None and out["lag_rule"].startswith("none"),
          out["lag_rule"])


def ragged_reference(r, idx, per, n):
    """Plain-Python reference for one portfolio on a history with gaps
    (docs/horizon.md, "Histories with gaps"): the first n securities of the
    ordering idx with a return in the window's first period; each period, a
    holding with no return is delisted (for good): buy-and-hold moves its
    value to the holdings left in proportion to their values (none left
    with value: the portfolio is cash), rebalanced takes the equal-weight
    mean of the returns of the holdings left (none: no return).  n None: all
    listed at the start (the universe).  Values followed holding by holding,
    not by the library's shared factor."""
    first = per[0]
    held = [i for i in idx if not math.isnan(r[first, i])]
    if n is not None:
        held = held[:n]
    v = {i: 1.0 / len(held) for i in held}
    alive, reb, cash = set(held), 1.0, None
    for p_ in per:
        gone = [i for i in alive if math.isnan(r[p_, i])]
        if gone and cash is None:
            freed = sum(v[i] for i in gone)
            for i in gone:
                v[i] = 0.0
            rest = sum(v[i] for i in alive if i not in gone)
            if rest > 0:
                for i in alive:
                    if i not in gone:
                        v[i] += freed * v[i] / rest
            else:
                cash = freed + rest
        alive -= set(gone)
        rets = [r[p_, i] for i in alive]
        if rets:
            reb *= max(1 + sum(rets) / len(rets), 0.0)
        if cash is None:
            for i in alive:
                v[i] *= max(1 + r[p_, i], 0.0)
    return reb, (cash if cash is not None else sum(v[i] for i in alive))


def ragged():
    """A history with gaps: late listings, early delistings, a gap that
    resumes (used only up to the gap), and a security that falls to a total
    loss; the library's figures against the reference above on the same
    draws (windows), to 1e-9 relative; the bootstrap refused."""
    path = os.path.join(TMP, "horizon_ragged.csv")
    r = invented(12, 40, 99)
    r[:9, 0] = np.nan      # listed late
    r[:4, 1] = np.nan
    r[25:, 2] = np.nan     # delisted
    r[14:, 3] = np.nan
    r[18:22, 4] = np.nan   # a gap, then returns again (unused after the gap)
    r[31:, 5] = np.nan
    r[30:, 6] = np.nan
    r[12, 7] = -1.3        # a total loss, then a delisting
    r[13:, 7] = np.nan
    r = write(path, r)
    t, m = r.shape
    h, sizes, paths, seed = 18, [1, 2, 4, 7], 300, 13
    out = horizon(path, sizes, paths, seed, h)
    check("ragged: every security kept", out["securities"] == m, repr(out["securities"]))
    rows = {row["holdings"]: row for row in out["horizon"]}
    vals = {(n, w): [] for n in sizes for w in range(2)}
    lags = {(n, w): [] for n in sizes for w in range(2)}
    for k in range(paths):
        idx, per = draw(seed, k, m, t, h, 1, 0)
        uw = ragged_reference(r, idx, per, None)
        for n in sizes:
            pw = ragged_reference(r, idx, per, n)
            for w in range(2):
                vals[n, w].append(pw[w])
                lags[n, w].append(1.0 if pw[w] < uw[w] else 0.0)
    for n in sizes:
        for w in range(2):
            x, g = np.array(vals[n, w]), np.array(lags[n, w])
            close("ragged n=%d %s_mean" % (n, W[w]), rows[n][W[w] + "_mean"], x.mean())
            for q, key in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
                close("ragged n=%d %s%s" % (n, W[w], key), rows[n][W[w] + key], float(np.quantile(x, q)))
            close("ragged n=%d %s_lag" % (n, W[w]), rows[n][W[w] + "_lag"], g.mean())
    p = subprocess.run([HC, "horizon", path, "--sizes", "2", "--paths", "10", "--periods-per-year", "12",
                        "--years", "2", "--resample", "bootstrap", "--quiet"],
                       capture_output=True, text=True)
    check("ragged: the bootstrap refused", p.returncode == 2 and "windows of the history only" in p.stderr, p.stderr)


def heaton_polson_witte():
    path = os.path.join(TMP, "horizon_hpw.csv")
    r = write(path, np.array([[0.10, 0.10, 0.10, 0.10, 0.50], [0.0] * 5]))
    out = horizon(path, [1, 2], 20000, 3, 2)
    rows = {row["holdings"]: row for row in out["horizon"]}
    bar = np.prod(1 + r.mean(axis=1))
    for n, want in ((1, 0.8), (2, 0.6)):
        subsets = list(itertools.combinations(range(5), n))
        exact = np.mean([np.prod(1 + r[:, list(c)].mean(axis=1)) < bar for c in subsets])
        check("Heaton, Polson & Witte enumeration n=%d" % n, abs(exact - want) < 1e-12, "got %r" % exact)
        for w in W:
            got = rows[n][w + "_lag"]
            check("Heaton, Polson & Witte n=%d %s" % (n, w), abs(got - want) <= 4.5 * math.sqrt(want * (1 - want) / 20000),
                  "got %r want %r" % (got, want))


path = os.path.join(TMP, "horizon_same.csv")
r = write(path, invented(14, 36, 4242))
same_draws(r, path, 1, [])
same_draws(r, path, 2, ["--block-length", "3"])
same_draws(r, path, 2, [])  # Politis & White's length, from the output
same_draws(r, path, 1, ["--benchmark-rate", "4%"], rate=0.04)
bpath = os.path.join(TMP, "horizon_same_bond.csv")
b = write_bench(bpath, 0.003 + 0.01 * np.random.default_rng(5).standard_normal(r.shape[0]))
same_draws(r, path, 1, ["--benchmark-file", bpath], bench=b)
same_draws(r, path, 2, ["--benchmark-file", bpath, "--block-length", "2"], bench=b)
vpath = os.path.join(TMP, "horizon_same_values.csv")
cap = write_values(vpath, np.round(np.exp(np.random.default_rng(6).normal(5, 1.3, r.shape[1])), 2))
same_draws(r, path, 1, ["--market-values", vpath], cap=cap)
same_draws(r, path, 2, ["--market-values", vpath, "--block-length", "3"], cap=cap)
same_draws(r, path, 1, ["--market-values", vpath, "--benchmark-file", bpath], bench=b, cap=cap)
lag_rule()
ragged()
enumeration()
bootstrap_expectation()
heaton_polson_witte()
if failures:
    print("\n".join(failures[:40]))
    print("%d failure(s)" % len(failures))
    sys.exit(1)
print("check_horizon: numpy on the same draws (windows, bootstrap, rate), enumeration, bootstrap expectation, Heaton-Polson-Witte, benchmark series, lag rule, market values, gaps: ok")
