"""Reference check of the studentized and BCa intervals on a ragged history.

On a history with gaps (read period by period, the default) `enough` builds
the exact rules' intervals on each rule's continuous count on the
per-period curve
    E(N) = sum_t W_t [xbar_t^2 + max(0, 1/N - 1/M_t) s2_t],  W_t = w_t/(T-1),
(xbar_t, s2_t: the mean and cross-sectional variance, divisor M_t - 1, of
the M_t securities alive at period t, each centred on its own observed
mean; w_t the times period t was drawn) with the methods of complete data:

- studentized (bootstrap-t on log theta; Davison & Hinkley, 1997, Bootstrap
  Methods and their Application, section 5.2, from memory; Hall, 1988,
  Annals of Statistics 16(3)): t_k = (log theta*_k - log theta) / se*_k,
  se from the delta method, interval exp(log theta - t_(0.95) se0) to
  exp(log theta - t_(0.05) se0), counts their ceilings;
- BCa (Efron, 1987, "Better Bootstrap Confidence Intervals", JASA
  82(397)): z0 = Phi^-1(share of replicates below theta, ties half),
  acceleration a = sum d^3 / (6 (sum d^2)^1.5) over the delete-a-block
  jackknife (Kuensch, 1989), endpoints at the replicate quantiles
  Phi(z0 + (z0 + z)/(1 - a (z0 + z))).

numpy recomputes everything from the CSV by another route than the tool's:
the per-period sums from the cells; theta as the root of the rule's
quantity on E(N) written period by period (no suffix sums over alive
counts); the delta-method standard error from each period's influence,
d log theta / d W_t by central differences on the period's own weight
(not on the curve's branches, as the tool does), times T/(T-1), with
Bartlett weights (Newey & West, 1987) up to the block length; the
jackknife by re-forming the per-period sums of the history without each
block (each security re-centred on the periods left, one observed once
dropped).  Only the replicates' period draws come from the library
(hc_bootstrap_indices, through ctypes), so both use the same replicates.
Every interval end (whole holdings) must agree exactly, for six rules,
two seeds and both methods; as a guard against a vacuous pass the
intervals must not all be identical to the percentile ones.

Environment: HOLDCOUNT, HOLDCOUNT_LIBRARY, HOLDCOUNT_TEST_TMP.
"""
import ctypes
import json
import math
import os
import subprocess
import sys
from statistics import NormalDist

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import hclibrary  # tests/hclibrary.py: the library through ctypes

HC = os.environ["HOLDCOUNT"]
LIB = hclibrary.load()
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
PPY = 12.0
B = 99
L = 3
STATIONARY = 1  # enum bootstrap_kind

LIB.hc_bootstrap_indices.argtypes = [ctypes.c_int, ctypes.c_size_t, ctypes.c_size_t, ctypes.c_uint64,
                                     ctypes.c_size_t, ctypes.POINTER(ctypes.c_size_t), ctypes.c_void_p]
LIB.hc_bootstrap_indices.restype = ctypes.c_int

# the rules' defaults (docs/enough.md, "The rules")
NEAR_X, EPS, PREMIUM, HOLD_COST, TE_BUDGET = 0.10, 0.001, 0.05, 0.0005, 0.02
STATMAN = {"statman-borrowing": 0.055, "statman-lending": 0.073}
INDEX_COST = 0.005
RULES = ["near-floor", "marginal", "next-holding", "tracking-error", "statman-borrowing", "statman-lending"]

failures = []


def universe(path, seed):
    rng = np.random.default_rng(seed)
    m, t = 24, 72
    beta = rng.uniform(0.6, 1.4, m)
    # volatility clustering in the factor, so the intervals are not symmetric
    vol = np.exp(np.cumsum(rng.normal(0, 0.25, t)) * 0.3) * 0.04
    f = rng.normal(0.006, 1, t) * vol
    x = f[:, None] * beta[None, :] + rng.normal(0, 1, (t, m)) * rng.uniform(0.03, 0.06, m)[None, :]
    for i in range(m):
        if i % 3 == 1:
            x[: rng.integers(5, t // 2), i] = np.nan
        if i % 4 == 2:
            x[t // 2 + rng.integers(0, t // 3):, i] = np.nan
    x[rng.uniform(size=(t, m)) < 0.04] = np.nan
    with open(path, "w") as fp:
        fp.write("date," + ",".join("QV%03d" % i for i in range(m)) + "\n")
        y, mo = 2012, 1
        days = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31]
        for k in range(t):
            d = days[mo - 1] + (1 if mo == 2 and y % 4 == 0 else 0)
            fp.write("%04d-%02d-%02d," % (y, mo, d) +
                     ",".join("" if np.isnan(v) else repr(float(v)) for v in x[k]) + "\n")
            mo += 1
            if mo == 13:
                y, mo = y + 1, 1
    return x


def period_sums(x):
    """xbar_t, s2_t, M_t of a (periods x securities) array with NaN gaps;
    securities observed fewer than twice are left out."""
    obs = ~np.isnan(x)
    keep = obs.sum(axis=0) >= 2
    x = x[:, keep]
    obs = obs[:, keep]
    xc = x - np.nanmean(x, axis=0)[None, :]
    alive = obs.sum(axis=1)
    xbar = np.where(alive > 0, np.nansum(xc, axis=1) / np.maximum(alive, 1), 0.0)
    dev = np.where(obs, xc - xbar[:, None], 0.0)
    s2 = np.where(alive > 1, (dev * dev).sum(axis=1) / np.maximum(alive - 1, 1), 0.0)
    return xbar, s2, alive


class Curve:
    """E(N) for a batch of weight vectors W (k x T)."""

    def __init__(self, xbar, s2, alive, W):
        self.xbar2, self.s2, self.alive, self.W = xbar ** 2, s2, alive.astype(float), np.atleast_2d(W)
        self.a = self.W @ self.xbar2
        inv = np.where(alive > 1, s2 / np.maximum(self.alive, 1), 0.0)
        self.floor = self.a - self.W @ inv
        self.mmax = int(alive.max())

    def te2(self, n):
        n = np.asarray(n, float)
        part = np.maximum(0.0, 1.0 / n[:, None] - 1.0 / np.maximum(self.alive, 1)[None, :]) * self.s2[None, :]
        return (self.W * part).sum(axis=1)

    def ev(self, n):
        return self.a + self.te2(n)

    def sd(self, n):
        return np.sqrt(np.maximum(self.ev(n) * PPY, 0))


def quantity(rule, c, n):
    """(value, limit) with the rule met where value <= limit (strict <
    for the steps, as the per-period route counts them)."""
    if rule == "near-floor":
        return c.ev(n), (1 + NEAR_X) ** 2 * c.floor
    if rule == "tracking-error":
        return c.te2(n) * PPY, np.full(c.a.shape, TE_BUDGET ** 2)
    if rule in STATMAN:
        k = 1 + INDEX_COST / STATMAN[rule]
        return c.ev(n), k * k * c.a
    step = c.sd(n) - c.sd(np.asarray(n, float) + 1)
    if rule == "marginal":
        return step, np.full(c.a.shape, EPS)
    return step, HOLD_COST * np.sqrt(c.a * PPY) / PREMIUM


def theta(rule, c):
    """Continuous count of every curve in the batch: the first whole count
    meeting the rule, then the crossing in (count - 1, count] by
    bisection; inf when not met, nan when undefined."""
    k = c.a.shape[0]
    top = c.mmax - 1 if rule in ("marginal", "next-holding") else c.mmax
    count = np.zeros(k, int)
    done = np.zeros(k, bool)
    for n in range(1, top + 1):
        v, lim = quantity(rule, c, np.full(k, float(n)))
        ok = v < lim if rule in ("marginal", "next-holding") else v <= lim
        hit = ok & ~done
        count[hit] = n
        done |= hit
    met = count > 0
    lo = np.where(met, count - 1.0, 0.0)
    hi = np.where(met, count * 1.0, 1.0)
    lo = np.maximum(lo, 0.0)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        v, lim = quantity(rule, c, mid)
        below = v <= lim
        hi = np.where(below, mid, hi)
        lo = np.where(below, lo, mid)
    lo0 = np.where(met, count - 1.0, 0.0)
    x = np.where(hi > lo0, hi, lo0 + 1e-9)
    out = np.where(met, x, np.inf)
    if rule == "near-floor":
        out = np.where(c.floor > 0, out, np.nan)
    if rule in STATMAN or rule == "next-holding":
        out = np.where(c.a > 0, out, np.nan)
    return out


def log_se(rule, xbar, s2, alive, w, idx):
    """Delta-method se of log theta for the replicate with period counts w
    (draw order idx): each period's influence by central differences on
    its own weight, then the Bartlett long-run variance of the drawn
    sequence of influences."""
    t = len(xbar)
    W0 = w / (t - 1.0)
    th = theta(rule, Curve(xbar, s2, alive, W0))[0]
    if not np.isfinite(th):
        return np.nan
    h = 1e-6
    E = np.eye(t)
    up = theta(rule, Curve(xbar, s2, alive, W0[None, :] + h * E))
    dn = theta(rule, Curve(xbar, s2, alive, W0[None, :] - h * E))
    g = t / (t - 1.0) * (np.log(up) - np.log(dn)) / (2 * h)
    if not np.all(np.isfinite(g)):
        return np.nan
    seq = g[idx]
    d = seq - seq.mean()
    lrv = 0.0
    for lag in range(0, min(L, t)):
        wgt = 1.0 if lag == 0 else 2.0 * (1.0 - lag / L)
        lrv += wgt * (d[lag:] * d[: t - lag]).sum()
    return math.sqrt(max(lrv, 0.0)) / t


def order_count(sorted_x, alpha):
    """The count at order statistic ceil(B alpha) (1-based) of sorted
    continuous counts; None when not met there."""
    n = len(sorted_x)
    k = math.ceil(n * alpha)
    i = 0 if k < 1 else n - 1 if k > n else k - 1
    v = sorted_x[i]
    if not np.isfinite(v):
        return None
    return max(1, math.ceil(v))


def studentized(est, se0, th, se, mmax):
    tk = np.where(np.isfinite(th) & (se > 0), (np.log(np.where(np.isfinite(th), th, 1)) - math.log(est)) /
                  np.where(se > 0, se, 1), np.inf)
    tk = np.sort(tk)
    n = len(tk)
    tl, thh = tk[max(math.ceil(0.05 * n) - 1, 0)], tk[max(math.ceil(0.95 * n) - 1, 0)]
    lo = math.exp(math.log(est) - thh * se0) if np.isfinite(thh) else 0.0
    hi = math.exp(math.log(est) - tl * se0)
    p05 = max(1, math.ceil(lo))
    p95 = None if math.ceil(hi) > mmax else max(1, math.ceil(hi))
    return p05, p95


def bca(est, th, jack):
    nd = NormalDist()
    x = np.where(np.isnan(th), np.inf, th)
    n = len(x)
    p = ((x < est).sum() + 0.5 * (x == est).sum()) / n
    p = min(max(p, 0.5 / n), 1 - 0.5 / n)
    z0 = nd.inv_cdf(p)
    acc = 0.0
    if len(jack) > 1 and np.all(np.isfinite(jack)):
        d = jack.mean() - jack
        den = (d * d).sum()
        acc = (d ** 3).sum() / (6 * den ** 1.5) if den > 0 else 0.0
    zl = nd.inv_cdf(0.05)
    al = nd.cdf(z0 + (z0 + zl) / (1 - acc * (z0 + zl)))
    ah = nd.cdf(z0 + (z0 - zl) / (1 - acc * (z0 - zl)))
    s = np.sort(x)
    return order_count(s, al), order_count(s, ah)


def run(csv, seed, interval):
    out = subprocess.run([HC, "enough", csv, "--rules", "exact", "--bootstrap", str(B), "--seed", str(seed),
                          "--bootstrap-kind", "stationary", "--block-length", str(L), "--interval", interval,
                          "--format", "json", "--threads", "1"], capture_output=True, text=True)
    if out.returncode != 0:
        raise SystemExit("enough failed: %s" % out.stderr)
    return {r["rule"]: r for r in json.loads(out.stdout)["rules"]}


def check(seed_data, seed):
    csv = os.path.join(TMP, "ragged_intervals_%d.csv" % seed_data)
    x = universe(csv, seed_data)
    xbar, s2, alive = period_sums(x)
    t = len(xbar)
    assert alive.min() < alive.max(), "the universe must be ragged"
    draws = []
    buf = (ctypes.c_size_t * t)()
    for k in range(B):
        if LIB.hc_bootstrap_indices(STATIONARY, t, L, seed, k, buf, None) != 0:
            raise SystemExit("hc_bootstrap_indices failed")
        draws.append(np.array(buf[:], dtype=int))
    W = np.array([np.bincount(d, minlength=t) for d in draws], float) / (t - 1.0)
    full = Curve(xbar, s2, alive, np.full(t, 1.0 / (t - 1)))
    reps = Curve(xbar, s2, alive, W)
    # the jackknife: the history without each block of L periods, re-formed
    nblk = t // L
    jcurves = []
    for b in range(nblk):
        rest = np.delete(x, np.s_[b * L:(b + 1) * L], axis=0)
        xb, sb, ab = period_sums(rest)
        jcurves.append((xb, sb, ab))
    tool = {iv: run(csv, seed, iv) for iv in ("studentized", "bca", "percentile")}
    differs = 0
    for rule in RULES:
        est = theta(rule, full)[0]
        th = theta(rule, reps)
        if not np.isfinite(est):
            print("seed %d %s: no count (%s)" % (seed, rule, tool["studentized"][rule]["note"]))
            failures.append("%s: not met or undefined on the test universe" % rule)
            continue
        se0 = log_se(rule, xbar, s2, alive, np.ones(t), np.arange(t))
        se = np.array([log_se(rule, xbar, s2, alive, np.bincount(d, minlength=t).astype(float), d)
                       for d in draws])
        mine = {"studentized": studentized(est, se0, th, se, full.mmax)}
        jack = np.array([theta(rule, Curve(xb, sb, ab, np.full(len(xb), 1.0 / (len(xb) - 1))))[0]
                         for xb, sb, ab in jcurves])
        mine["bca"] = bca(est, th, jack)
        p50 = order_count(np.sort(np.where(np.isnan(th), np.inf, th)), 0.5)
        for iv in ("studentized", "bca"):
            r = tool[iv][rule]
            got = (r["count_p05"], r["count_p95"])
            print("seed %d %s %s: tool %s numpy %s (estimate %s, p50 %s/%s)" %
                  (seed, rule, iv, got, mine[iv], r["count"], r["count_p50"], p50))
            if got != mine[iv]:
                failures.append("%s %s seed %d: tool %s, numpy %s" % (rule, iv, seed, got, mine[iv]))
            if r["count_p50"] != p50:
                failures.append("%s %s seed %d: p50 tool %s, numpy %s" % (rule, iv, seed, r["count_p50"], p50))
            if r["count"] != math.ceil(est):
                failures.append("%s: count %s, ceil(theta) %s" % (rule, r["count"], math.ceil(est)))
            pc = tool["percentile"][rule]
            differs += got != (pc["count_p05"], pc["count_p95"])
    if differs == 0:
        failures.append("seed %d: every studentized and BCa interval equals the percentile one" % seed)


for sd, seed in ((731, 17), (902, 4)):
    check(sd, seed)
if failures:
    print("\n".join(failures))
    sys.exit(1)
print("ragged studentized and BCa intervals agree with numpy")
