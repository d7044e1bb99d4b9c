#!/usr/bin/env python3
"""Reference check: the measures of random portfolios (curve --measures)
against numpy, exact enumeration and a published example.

1. numpy reimplementation on the same portfolios: the library exports the
   members each path draws (hc_sampler_members, through ctypes); numpy
   forms each portfolio's equal-weight return series and computes every
   measure from its definition (docs/measures.md: Acerbi & Tasche, 2002,
   J. Banking & Finance 26(7), the lower quantile and tail mean; Joanes &
   Gill, 1998, The Statistician 47(1), g1 and g2; Magdon-Ismail & Atiya,
   2004, Risk 17(10), the drawdown), then the mean, its Monte Carlo standard
   error and numpy's linear quantiles by count.  `curve --format json` must
   match to 1e-9 relative.
2. Exact enumeration: every N-subset of a 10-security universe, each
   measure's mean over subsets; the sampled mean must lie within 4.5 Monte
   Carlo standard errors (each of the ~40 comparisons fails by chance with
   probability under 1e-5).  The universe's own value (N = M) to 1e-9.
3. Heaton, Polson & Witte (2017, "Why indexing works", Applied Stochastic
   Models in Business and Industry 33(6)), their example as quoted in
   issue 15: five stocks returning 10%, 10%, 10%, 10% and 50%; 4 of the 5
   one-stock and 6 of the 10 two-stock portfolios lag the equal-weight
   index.  Enumeration here confirms the counts, and holdcount's
   lag_universe mean at N = 1 and 2 must be within 4.5 standard errors of
   0.8 and 0.6 (a second period of 0% for every stock makes the sample's
   compounded return the example's one-period return).

4. Ragged histories (--missing alive): (a) numpy on the same portfolios,
   each path's order exported by the library (hc_periodic_order), every
   summary to 1e-12; (b) exact enumeration of all 720 orders of a
   6-security ragged universe, the sampled means within 4.5 standard
   errors; (c) complete data read period by period against the complete
   route: the universe and N = M to 1e-12, smaller N within 4.5 standard
   errors of the difference.

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
KEYS = ["semidev_mean", "semidev_zero", "var95", "var99", "es95", "es99", "max_drawdown",
        "skewness", "excess_kurtosis", "worst_period", "lag_universe"]
failures = []


def check(what, ok, detail=""):
    if not ok:
        failures.append("%s %s" % (what, detail))


def close(what, got, want, rel=1e-9, scale=1e-12):
    check(what, got is not None and abs(got - want) <= rel * max(abs(want), scale),
          "got %r want %.17g" % (got, want))


def write(path, r):
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


def curve(path, sizes, paths, seed):
    p = subprocess.run([HC, "curve", path, "--measures", "all", "--sizes", ",".join(map(str, sizes)),
                        "--paths", str(paths), "--seed", str(seed), "--periods-per-year", "12",
                        "--format", "json", "--quiet"], capture_output=True, text=True)
    if p.returncode != 0:
        sys.exit("holdcount curve failed: " + p.stderr)
    return json.loads(p.stdout)


def measures(r, lg_bar):
    """Every measure of one return series r (numpy), per period."""
    t = len(r)
    mu = r.mean()
    d = r - mu
    out = {"semidev_mean": math.sqrt(np.sum(np.minimum(d, 0) ** 2) / t),
           "semidev_zero": math.sqrt(np.sum(np.minimum(r, 0) ** 2) / t)}
    s = np.sort(r)
    for lvl, p in (("95", 0.05), ("99", 0.01)):
        tp = t * round(p * 100) / 100.0
        c = math.ceil(t * round(p * 100) / 100 - 1e-12)
        f = (t * round(p * 100)) // 100
        out["var" + lvl] = -s[c - 1]
        out["es" + lvl] = -(s[:f].sum() + (tp - f) * s[c - 1]) / tp
    w = np.concatenate(([1.0], np.cumprod(1 + r)))
    out["max_drawdown"] = float(np.max(1 - w / np.maximum.accumulate(w)))
    m2, m3, m4 = (d ** 2).mean(), (d ** 3).mean(), (d ** 4).mean()
    out["skewness"] = m3 / m2 ** 1.5
    out["excess_kurtosis"] = m4 / m2 ** 2 - 3
    out["worst_period"] = r.min()
    out["lag_universe"] = 1.0 if np.sum(np.log1p(r)) < lg_bar else 0.0
    return out


def scale(key):
    return math.sqrt(12) if key.startswith("semidev") else 1.0


def members(seed, k, m):
    idx = (ctypes.c_uint32 * m)()
    err = ctypes.create_string_buffer(4096)
    LIB.hc_sampler_members.argtypes = [ctypes.c_uint64, ctypes.c_size_t, ctypes.c_size_t,
                                       ctypes.POINTER(ctypes.c_uint32), ctypes.c_void_p]
    if LIB.hc_sampler_members(seed, k, m, idx, err) != 0:
        sys.exit("hc_sampler_members failed")
    return list(idx)


def same_portfolios():
    r = write(os.path.join(TMP, "measures_same.csv"), invented(16, 150, 4242))
    t, m = r.shape
    sizes, paths, seed = [1, 3, 8, 16], 300, 9
    out = curve(os.path.join(TMP, "measures_same.csv"), sizes, paths, seed)
    rows = {row["n"]: row for row in out["curve"]}
    lg_bar = np.sum(np.log1p(r.mean(axis=1)))
    vals = {n: {k: [] for k in KEYS} for n in sizes}
    for p in range(paths):
        idx = members(seed, p, m)
        for n in sizes:
            mv = measures(r[:, idx[:n]].mean(axis=1), lg_bar)
            for k in KEYS:
                vals[n][k].append(mv[k] * scale(k))
    for n in sizes:
        for k in KEYS:
            x = np.array(vals[n][k])
            row = rows[n]
            if k == "lag_universe" and n == m:
                x = np.zeros_like(x)  # the universe does not lag itself (ties by construction)
            close("same portfolios n=%d %s_mean" % (n, k), row[k + "_mean"], x.mean(), scale=1e-6)
            se = x.std(ddof=1) / math.sqrt(paths)
            if se > 1e-9 * max(abs(x.mean()), 1e-6):
                close("same portfolios n=%d %s_se" % (n, k), row[k + "_se"], se)
            for q, key in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
                close("same portfolios n=%d %s%s" % (n, k, key), row[k + key], float(np.quantile(x, q)),
                      scale=1e-6)
    return r


def enumeration():
    path = os.path.join(TMP, "measures_enum.csv")
    r = write(path, invented(10, 120, 99))
    t, m = r.shape
    sizes, paths = [1, 2, 3, 5, 10], 4000
    out = curve(path, sizes, paths, 3)
    rows = {row["n"]: row for row in out["curve"]}
    lg_bar = np.sum(np.log1p(r.mean(axis=1)))
    uni = measures(r.mean(axis=1), lg_bar)
    for k in KEYS:
        if k != "lag_universe":
            close("universe %s" % k, out["universe_" + k], uni[k] * scale(k))
    for n in sizes:
        subsets = [measures(r[:, list(c)].mean(axis=1), lg_bar) for c in itertools.combinations(range(m), n)]
        for k in KEYS:
            exact = np.mean([s[k] for s in subsets]) * scale(k)
            if n == m and k == "lag_universe":
                exact = 0.0
            got, se = rows[n][k + "_mean"], rows[n][k + "_se"]
            if se is None or se <= 1e-12 * max(abs(exact), 1e-6):
                close("enumeration n=%d %s (one subset)" % (n, k), got, exact, scale=1e-6)
            else:
                check("enumeration n=%d %s" % (n, k), abs(got - exact) <= 4.5 * se,
                      "sampled %.10g exact %.10g se %.3g" % (got, exact, se))


def heaton_polson_witte():
    one = np.array([0.10, 0.10, 0.10, 0.10, 0.50])
    index = one.mean()
    lag1 = sum(1 for i in range(5) if one[i] < index)
    lag2 = sum(1 for c in itertools.combinations(range(5), 2) if one[list(c)].mean() < index)
    check("HPW one-stock lag count", lag1 == 4, "enumerated %d of 5" % lag1)
    check("HPW two-stock lag count", lag2 == 6, "enumerated %d of 10" % lag2)
    path = os.path.join(TMP, "measures_hpw.csv")
    write(path, np.vstack([one, np.zeros(5)]))
    out = curve(path, [1, 2, 5], 20000, 5)
    rows = {row["n"]: row for row in out["curve"]}
    for n, want in ((1, 0.8), (2, 0.6)):
        got, se = rows[n]["lag_universe_mean"], rows[n]["lag_universe_se"]
        check("HPW lag_universe n=%d" % n, abs(got - want) <= 4.5 * se,
              "sampled %.5f want %.1f se %.4f" % (got, want, se))
    check("HPW lag_universe n=5", rows[5]["lag_universe_mean"] == 0, "the index does not lag itself")


# ---- ragged histories (--missing alive, design: the per-period route) ----
#
# A path is a random order of the securities observed at least twice; its
# portfolio of N holdings holds, each period, the first min(N, M_t) of the
# order alive then, equally weighted, and its series is their mean return
# as observed.  The library exports each path's order (hc_periodic_order).


def write_ragged(path, r):
    """r with NaN for a gap, written with empty cells; read back as parsed."""
    t, m = r.shape
    with open(path, "w") as fp:
        fp.write("date," + ",".join("LIR9%02d" % (i + 1) for i in range(m)) + "\n")
        for k, d in enumerate(hclibrary.month_ends(2003, t)):
            fp.write(d + "," + ",".join("" if math.isnan(x) else repr(float(x)) for x in r[k]) + "\n")
    return np.array([[float(x) if x else math.nan for x in line.split(",")[1:]]
                     for line in open(path).read().split("\n")[1:] if line])


def ragged_invented(m, t, seed):
    """An invented market with listings and delistings: security i is
    observed from period a_i to b_i, with a few isolated gaps."""
    rng = np.random.default_rng(seed)
    r = invented(m, t, seed)
    for i in range(m):
        a = int(rng.integers(0, t // 3)) if i % 3 == 1 else 0
        b = t - int(rng.integers(0, t // 3)) if i % 3 == 2 else t
        r[:a, i] = math.nan
        r[b:, i] = math.nan
        if i % 4 == 3:
            r[rng.integers(a, b, 2), i] = math.nan
    return r


def curve_ragged(path, sizes, paths, seed, extra=()):
    p = subprocess.run([HC, "curve", path, "--measures", "all", "--sizes", ",".join(map(str, sizes)),
                        "--paths", str(paths), "--seed", str(seed), "--periods-per-year", "12",
                        "--format", "json", "--quiet"] + list(extra), capture_output=True, text=True)
    if p.returncode != 0:
        sys.exit("holdcount curve (ragged) failed: " + p.stderr)
    return json.loads(p.stdout)


def ragged_order(seed, k, m):
    order = (ctypes.c_size_t * m)()
    err = ctypes.create_string_buffer(4096)
    LIB.hc_periodic_order.argtypes = [ctypes.c_uint64, ctypes.c_size_t, ctypes.c_size_t,
                                      ctypes.POINTER(ctypes.c_size_t), ctypes.c_void_p]
    if LIB.hc_periodic_order(seed, k, m, order, err) != 0:
        sys.exit("hc_periodic_order failed")
    return list(order)


def ragged_series(r, alive, order, n):
    """The portfolio's per-period return: the mean of the first min(n, M_t)
    securities of order alive in period t (0 in a period with none)."""
    out = np.zeros(r.shape[0])
    for k in range(r.shape[0]):
        held = [i for i in order if alive[k, i]][:n]
        if held:
            out[k] = r[k, held].mean()
    return out


def ragged_universe(r, alive):
    return np.array([r[k, alive[k]].mean() if alive[k].any() else 0.0 for k in range(r.shape[0])])


def ragged_same_portfolios(name, r, sizes, paths, seed):
    """(a) numpy on the sampler's own portfolios: each path's order from
    the library, each measure recomputed from its definition, the summaries
    (mean, Monte Carlo standard error, linear quantiles) to 1e-12."""
    alive = ~np.isnan(r)
    kept = [i for i in range(r.shape[1]) if alive[:, i].sum() >= 2]
    rk, ak = r[:, kept], alive[:, kept]
    m = len(kept)
    out = curve_ragged(os.path.join(TMP, name), sizes, paths, seed)
    check("%s read period by period" % name, "read period by period" in out.get("treatment", ""),
          out.get("treatment"))
    rows = {row["n"]: row for row in out["curve"]}
    uni = ragged_universe(rk, ak)
    lg_bar = np.sum(np.log1p(uni))
    um = measures(uni, lg_bar)
    for k in KEYS:
        if k != "lag_universe":
            close("%s universe %s" % (name, k), out["universe_" + k], um[k] * scale(k), rel=1e-12)
    full = ak.sum(axis=1).max()
    vals = {n: {k: [] for k in KEYS} for n in sizes}
    for p in range(paths):
        order = ragged_order(seed, p, m)
        for n in sizes:
            mv = measures(ragged_series(rk, ak, order, n), lg_bar)
            for k in KEYS:
                vals[n][k].append(mv[k] * scale(k))
    for n in sizes:
        for k in KEYS:
            x = np.array(vals[n][k])
            if k == "lag_universe" and n >= full:
                x = np.zeros_like(x)  # everything alive each period: the universe itself, which does not lag
            row = rows[n]
            close("%s n=%d %s_mean" % (name, n, k), row[k + "_mean"], x.mean(), rel=1e-12, scale=1e-3)
            se = x.std(ddof=1) / math.sqrt(paths)
            if se > 1e-9 * max(abs(x.mean()), 1e-6):
                close("%s n=%d %s_se" % (name, n, k), row[k + "_se"], se, rel=1e-10)
            for q, key in ((0.05, "_p05"), (0.5, "_p50"), (0.95, "_p95")):
                close("%s n=%d %s%s" % (name, n, k, key), row[k + key], float(np.quantile(x, q)),
                      rel=1e-12, scale=1e-3)
    return out


def ragged_enumeration():
    """(b) Exact enumeration: on 6 securities every one of the 720 orders is
    equally likely, so the mean of each measure over all orders is the
    sampler's exact expectation; the sampled mean (20000 paths) must lie
    within 4.5 Monte Carlo standard errors (each comparison fails by chance
    with probability under 1e-5)."""
    path = os.path.join(TMP, "measures_ragged_enum.csv")
    r = write_ragged(path, ragged_invented(6, 48, 77))
    alive = ~np.isnan(r)
    m = r.shape[1]
    check("enumeration universe is ragged", not alive.all() and (alive.sum(axis=0) >= 2).all())
    sizes, paths = [1, 2, 3, 4, 6], 20000
    out = curve_ragged(path, sizes, paths, 11)
    rows = {row["n"]: row for row in out["curve"]}
    lg_bar = np.sum(np.log1p(ragged_universe(r, alive)))
    full = alive.sum(axis=1).max()
    orders = list(itertools.permutations(range(m)))
    for n in sizes:
        per = [measures(ragged_series(r, alive, o, n), lg_bar) for o in orders]
        for k in KEYS:
            exact = np.mean([v[k] for v in per]) * scale(k)
            if k == "lag_universe" and n >= full:
                exact = 0.0
            got, se = rows[n][k + "_mean"], rows[n][k + "_se"]
            if se is None or se <= 1e-12 * max(abs(exact), 1e-6):
                close("ragged enumeration n=%d %s (one portfolio)" % (n, k), got, exact, rel=1e-12, scale=1e-3)
            else:
                check("ragged enumeration n=%d %s" % (n, k), abs(got - exact) <= 4.5 * se,
                      "sampled %.10g exact %.10g se %.3g" % (got, exact, se))


def ragged_on_complete():
    """(c) Complete data read period by period: a complete universe plus
    one security observed once (the per-period route leaves it out, having
    no mean of its own; --missing complete leaves it out for its gaps), so
    both routes sample the same 9 complete securities.  numpy on the
    ragged route's own portfolios (as (a)); the universe's value and every
    measure at N = M the same to 1e-12 on both routes; at smaller N the two
    routes' means (different draws, the same distribution) within 4.5
    standard errors of their difference."""
    r = invented(10, 72, 31)
    r[1:, 9] = math.nan
    ragged_same_portfolios("measures_ragged_complete.csv", write_ragged(
        os.path.join(TMP, "measures_ragged_complete.csv"), r), [1, 3, 9], 200, 4)
    path = os.path.join(TMP, "measures_ragged_complete.csv")
    sizes = [1, 3, 9]
    rag = curve_ragged(path, sizes, 3000, 8)
    com = curve_ragged(path, sizes, 3000, 8, ["--missing", "complete"])
    check("ragged route on complete data", "read period by period" in rag.get("treatment", "")
          and rag["curve"][-1]["n"] == 9 and com["curve"][-1]["n"] == 9)
    for k in KEYS:
        if k != "lag_universe":
            close("complete vs ragged universe %s" % k, rag["universe_" + k], com["universe_" + k], rel=1e-12)
    for a, b in zip(rag["curve"], com["curve"]):
        for k in KEYS:
            ga, gb = a[k + "_mean"], b[k + "_mean"]
            if a["n"] == 9:
                close("complete vs ragged n=9 %s" % k, ga, gb, rel=1e-12, scale=1e-3)
            else:
                se = math.hypot(a[k + "_se"], b[k + "_se"])
                check("complete vs ragged n=%d %s" % (a["n"], k), abs(ga - gb) <= 4.5 * se,
                      "ragged %.10g complete %.10g se %.3g" % (ga, gb, se))


same_portfolios()
enumeration()
heaton_polson_witte()
ragged_same_portfolios("measures_ragged_same.csv",
                       write_ragged(os.path.join(TMP, "measures_ragged_same.csv"), ragged_invented(14, 96, 5150)),
                       [1, 2, 5, 9, 14], 150, 21)
ragged_enumeration()
ragged_on_complete()
if failures:
    print("\n".join(failures[:40]))
    print("%d failures" % len(failures))
    sys.exit(1)
print("check_measures: ok")
