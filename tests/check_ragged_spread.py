"""Reference check of the exact spread on a return history with gaps.

On a ragged history (read period by period, the default for series with
gaps) `curve` fills variance_sd with the standard deviation, across the
fixed-membership N-subsets of the securities, of the subset's variance
w'Aw (w = 1/N on the subset) under A, the pairwise-complete covariance
matrix: each pair over the periods both are observed, with its own means
there and divisor n_ij - 1 (pandas' DataFrame.cov and R's
cov(use = "pairwise.complete.obs") define it the same way; common practice).

The reference is independent of the tool's formula: numpy builds A with
masks, pair by pair, then enumerates EVERY N-subset of an 8-security ragged
universe (a late listing, an early delisting, scattered gaps), computes each
subset's variance and takes the population standard deviation over the
subsets (numpy.std, ddof 0: the subsets are the whole population).  The
tool's figure is annualised by 12 (monthly data) like every variance.
Agreement to 1e-10 relative (17-digit JSON, two summation orders), and 0
at N = M.  The JSON must name what the figure is (variance_sd_basis) and,
on a universe where two securities never overlap, leave every variance_sd
null with variance_sd_reason naming the pair, the rest of the curve intact.
"""
import itertools
import json
import os
import subprocess
import sys

import numpy as np

HOLDCOUNT = os.environ["HOLDCOUNT"]
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
RTOL = 1e-10
PPY = 12.0

failures = []


def fail(what):
    failures.append(what)


def month_ends(t):
    out, y, m = [], 2011, 1
    days = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31]
    for _ in range(t):
        d = days[m - 1] + (1 if m == 2 and y % 4 == 0 else 0)
        out.append("%04d-%02d-%02d" % (y, m, d))
        m += 1
        if m == 13:
            y, m = y + 1, 1
    return out


def write_csv(path, x, ids):
    t = x.shape[1]
    with open(path, "w") as f:
        f.write("date," + ",".join(ids) + "\n")
        for k, d in enumerate(month_ends(t)):
            cells = ["" if np.isnan(v) else repr(float(v)) for v in x[:, k]]
            f.write(d + "," + ",".join(cells) + "\n")


def pairwise(x):
    """Pairwise-complete covariances, pair by pair with masks."""
    m = x.shape[0]
    a = np.empty((m, m))
    for i in range(m):
        for j in range(m):
            both = ~np.isnan(x[i]) & ~np.isnan(x[j])
            xi, xj = x[i, both], x[j, both]
            a[i, j] = ((xi - xi.mean()) * (xj - xj.mean())).sum() / (both.sum() - 1)
    return a


def curve(path, sizes):
    r = subprocess.run([HOLDCOUNT, "curve", path, "--paths", "0", "--sizes",
                        ",".join(str(n) for n in sizes), "--format", "json", "-q"],
                       capture_output=True, text=True)
    if r.returncode != 0:
        fail("curve %s: exit %d: %s" % (path, r.returncode, r.stderr.strip()))
        return None
    return json.loads(r.stdout)


rng = np.random.default_rng(20261203)
m, t = 8, 60
f = 0.045 * rng.standard_normal(t)
x = 0.006 + rng.uniform(0.5, 1.5, m)[:, None] * f[None, :] \
    + rng.uniform(0.02, 0.10, m)[:, None] * rng.standard_normal((m, t))
x[1, :14] = np.nan            # listed late
x[4, 47:] = np.nan            # delisted early
x[6, :5] = np.nan             # listed late, delisted early
x[6, 52:] = np.nan
gaps = rng.random((m, t)) < 0.04
x[gaps] = np.nan
ids = ["LIR9%02d" % (i + 1) for i in range(m)]
path = os.path.join(TMP, "check_ragged_spread.csv")
write_csv(path, x, ids)

a = pairwise(x)
sizes = list(range(1, m + 1))
out = curve(path, sizes)
if out is not None:
    if "pairwise-complete" not in out.get("variance_sd_basis", ""):
        fail("variance_sd_basis missing or does not name the pairwise-complete covariances")
    if "variance_sd_reason" in out:
        fail("variance_sd_reason present on a universe whose pairwise matrix exists")
    got = {p["n"]: p["variance_sd"] for p in out["curve"]}
    for n in sizes:
        subset_var = [a[np.ix_(s, s)].sum() / n ** 2
                      for s in map(list, itertools.combinations(range(m), n))]
        want = float(np.std(subset_var)) * PPY
        g = got.get(n)
        if g is None:
            fail("n=%d: variance_sd is null" % n)
        elif n == m:
            if g != 0.0:
                fail("n=%d: variance_sd %r, expected 0 (a single subset)" % (n, g))
        elif abs(g - want) > RTOL * abs(want):
            fail("n=%d: variance_sd %.17g, numpy enumeration %.17g (rel %.2e)"
                 % (n, g, want, abs(g - want) / abs(want)))
        else:
            print("n=%d: variance_sd %.17g, enumeration %.17g" % (n, g, want))

# Two securities that never overlap: no pairwise matrix, so no spread.
y = x.copy()
y[2, 30:] = np.nan            # LIR903 delisted after 30 periods
y[3, :35] = np.nan            # LIR904 listed at period 35
path2 = os.path.join(TMP, "check_ragged_spread_disjoint.csv")
write_csv(path2, y, ids)
out = curve(path2, [1, 2, 4])
if out is not None:
    why = out.get("variance_sd_reason", "")
    if "LIR903" not in why or "LIR904" not in why or "0 common periods" not in why:
        fail("disjoint universe: variance_sd_reason %r does not name the pair" % why)
    for p in out["curve"]:
        if p["variance_sd"] is not None:
            fail("disjoint universe: n=%d variance_sd %r, expected null" % (p["n"], p["variance_sd"]))
        if not (p["expected_variance"] and p["expected_variance"] > 0):
            fail("disjoint universe: n=%d expected_variance missing" % p["n"])

# describe reads a ragged history from per-period sums: two securities that
# never overlap are no reason to fail (it once built the pairwise matrix).
r = subprocess.run([HOLDCOUNT, "describe", path2, "--format", "json", "-q"], capture_output=True, text=True)
if r.returncode != 0:
    fail("describe on the disjoint universe: exit %d: %s" % (r.returncode, r.stderr.strip()))
elif json.loads(r.stdout).get("securities") != m:
    fail("describe on the disjoint universe: securities %r, expected %d"
         % (json.loads(r.stdout).get("securities"), m))

if failures:
    print("\n".join(failures), file=sys.stderr)
    sys.exit(1)
print("ok: exact spread on a ragged history equals numpy enumeration of every subset")
