"""Reference check of `holdcount audit` on a return history with gaps read
period by period (--missing alive, the default).

The universe (invented, fixed seed) has 8 securities over 48 months: ZR01
is delisted after month 18 and ZR08 listed at month 25, so the two share no
period and the universe's whole pairwise-complete matrix cannot be formed;
ZR03 and ZR05 have gaps inside, ZR06 lists late and ZR07 delists early.
The audit must still run, each fund's risk coming from its own holdings'
covariances only.  numpy is the outside reference for every figure:

- sd and diversification ratio: numpy builds the fund's pairwise-complete
  covariance matrix with masks, pair by pair (np.cov over the periods both
  are observed, each with its own means there, divisor n_ij - 1: pandas'
  DataFrame.cov and R's cov(use = "pairwise.complete.obs") define it the
  same way; common practice), then w'Aw, annualised by 12;
- the per-period comparisons, from the definitions in docs/mathematics.md
  ("Ragged histories"): each security centred on its own mean over the
  periods it is observed, xbar_t and s2_t (ddof 1) of the securities alive
  at t; E[sigma^2(N)] = sum_t [xbar_t^2 + max(0, 1/N - 1/M_t) s2_t]/(T-1)
  (equal_weight_random_sd), floor = a - sum_t s2_t/(M_t (T-1)) and spread =
  sum_t s2_t/(T-1) (equivalent count spread/(s2 - floor), weighted random
  sd from v-bar = floor + spread, c-bar = floor);
- sd_percentile: exact enumeration of every one of the 8! orders the
  ragged sampler draws from (a path holds, at each period, the first N
  securities alive then of a uniformly random order), each order's
  variance sum_t p_t^2/(T-1), and the fund's exact rank among them; the
  tool's estimate from 20000 paths must lie within 5 binomial standard
  errors of it.

A fund holding the disjoint pair has no risk figures (empty in the CSV,
null in the JSON), a risk_reason naming both ids, covered weight 0 and the
verdict "insufficient data" (exit 10); without it the audit exits 0.  On
tests/bad-inputs/pairwise-not-psd.csv a fund whose own 3 x 3 pairwise
matrix is not positive semi-definite gets numpy's eigenvalue clipping
(Higham 1988) and risk_matrix_repaired true.

Tolerances: 1e-10 relative (17-digit CSV, different summation orders).
"""
import csv
import io
import itertools
import json
import os
import subprocess
import sys

import numpy as np

HOLDCOUNT = os.environ["HOLDCOUNT"]
SRC = os.environ.get("HOLDCOUNT_SOURCE_DIR", os.path.join(os.path.dirname(__file__), ".."))
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
RTOL = 1e-10
P = 12
PATHS = 20000

failures = []


def check(what, got, want, rtol=RTOL):
    if not np.isclose(got, want, rtol=rtol, atol=0):
        failures.append(f"{what}: holdcount {got!r}, numpy {want!r}")


def write_universe(path, rng, m=8, t=48):
    factor = rng.normal(0.005, 0.04, t)
    beta = rng.uniform(0.6, 1.4, m)
    spec = rng.uniform(0.03, 0.09, m)
    x = factor[:, None] * beta[None, :] + rng.normal(0, 1, (t, m)) * spec[None, :]
    x[18:, 0] = np.nan           # ZR01 delisted after month 18
    x[:24, 7] = np.nan           # ZR08 listed at month 25: no period shared with ZR01
    x[[5, 6, 30], 2] = np.nan    # ZR03: gaps inside
    x[[11, 40], 4] = np.nan      # ZR05: gaps inside
    x[:3, 5] = np.nan            # ZR06 lists late
    x[41:, 6] = np.nan           # ZR07 delists early
    ids = [f"ZR{i:02d}" for i in range(1, m + 1)]
    with open(path, "w") as f:
        f.write("date," + ",".join(ids) + "\n")
        for k in range(t):
            cells = ["" if np.isnan(v) else f"{v:.17g}" for v in x[k]]
            f.write(f"{2011 + k // 12:04d}-{k % 12 + 1:02d}-28," + ",".join(cells) + "\n")
    return ids, read(path)


def read(path):
    lines = open(path).read().splitlines()
    return np.array([[float(c) if c not in ("", "NA") else np.nan for c in line.split(",")[1:]]
                     for line in lines[1:]])


def pairwise(x, cols):
    """numpy, pair by pair over the periods both are observed."""
    k = len(cols)
    a = np.empty((k, k))
    for i in range(k):
        for j in range(k):
            both = ~np.isnan(x[:, cols[i]]) & ~np.isnan(x[:, cols[j]])
            a[i, j] = np.cov(x[both, cols[i]], x[both, cols[j]], ddof=1)[0, 1]
    return a


def clip(a):
    """numpy's eigenvalue clipping: the nearest PSD matrix (Higham 1988)."""
    w, v = np.linalg.eigh(a)
    return v @ np.diag(np.maximum(w, 0)) @ v.T


def per_period(x):
    """The per-period sums of docs/mathematics.md, "Ragged histories"."""
    seen = ~np.isnan(x)
    xc = x - np.nanmean(x, axis=0)[None, :]
    t = x.shape[0]
    alive = seen.sum(axis=1)
    xbar = np.array([xc[k, seen[k]].mean() for k in range(t)])
    s2 = np.array([xc[k, seen[k]].var(ddof=1) if alive[k] > 1 else 0.0 for k in range(t)])
    a = np.sum(xbar ** 2) / (t - 1)

    def curve(n):
        return a + np.sum(np.maximum(0.0, 1.0 / n - 1.0 / alive) * s2) / (t - 1)

    floor = a - np.sum(s2 / alive) / (t - 1)
    spread = np.sum(s2) / (t - 1)
    return xc, seen, curve, floor, spread


def exact_percentiles(xc, seen, n):
    """Every order of the m securities: the variance of its portfolio of n."""
    t, m = xc.shape
    orders = np.array(list(itertools.permutations(range(m))))
    pos = np.argsort(orders, axis=1)             # pos[o, i]: where security i comes in order o
    p = np.zeros((len(orders), t))
    for k in range(t):
        live = np.flatnonzero(seen[k])
        take = min(n, len(live))
        first = np.argsort(pos[:, live], axis=1)[:, :take]
        p[:, k] = xc[k, live[first]].mean(axis=1)
    return np.sum(p ** 2, axis=1) / (t - 1)


def audit(universe, holdings, *extra, fmt="csv", paths=str(PATHS)):
    return subprocess.run([HOLDCOUNT, "audit", universe, "--holdings", holdings, "--format", fmt,
                           "--paths", paths, "--seed", "2385", *extra], capture_output=True, text=True)


FUNDS = {
    "Ragged Fund R": (["ZR02", "ZR03", "ZR06", "ZR08"], [0.31, 0.27, 0.22, 0.20]),
    "Ragged Fund S": (["ZR01", "ZR04", "ZR05", "ZR07"], [0.385, 0.245, 0.25, 0.12]),
    "Ragged Fund U": (["ZR02", "ZR03", "ZR04", "ZR05", "ZR06", "ZR07"], [0.2, 0.15, 0.2, 0.1, 0.2, 0.15]),
    "Ragged Fund T": (["ZR01", "ZR08"], [0.5, 0.5]),
    "Ragged Fund V": (["ZR01", "ZR08", "ZQ99"], [0.4, 0.4, 0.2]),
}


def write_funds(path, names):
    with open(path, "w") as f:
        f.write("fund,id,weight\n")
        for name in names:
            for h, w in zip(*FUNDS[name]):
                f.write(f"{name},{h},{w}\n")


def compare_fund(name, row, ids, x, per):
    held, w = FUNDS[name]
    w = np.array(w) / np.sum(w)
    cols = [ids.index(h) for h in held]
    a = pairwise(x, cols)
    if np.linalg.eigvalsh(a)[0] < 0:
        failures.append(f"{name}: the generated fund's pairwise matrix is not PSD; choose another seed")
    s2 = w @ a @ w
    xc, seen, curve, floor, spread = per
    n = len(held)
    hhi = np.sum(w ** 2)
    check(f"{name} sd", float(row["sd"]), np.sqrt(P * s2))
    check(f"{name} diversification_ratio", float(row["diversification_ratio"]),
          (w @ np.sqrt(np.diag(a))) / np.sqrt(s2))
    check(f"{name} equal_weight_random_sd", float(row["equal_weight_random_sd"]), np.sqrt(P * curve(n)))
    check(f"{name} equivalent_count", float(row["equivalent_count"]), spread / (s2 - floor))
    check(f"{name} weighted_random_sd", float(row["weighted_random_sd"]),
          np.sqrt(P * (hhi * (floor + spread) + (1 - hhi) * floor)))
    if row["risk_matrix_repaired"] != "false" or row["risk_reason"] != "" or row["verdict"] != "passed":
        failures.append(f"{name}: repaired {row['risk_matrix_repaired']!r}, reason {row['risk_reason']!r}, "
                        f"verdict {row['verdict']!r}")
    # the rank among every order the sampler draws from
    v = exact_percentiles(xc, seen, n)
    exact = np.mean(v < s2) + 0.5 * np.mean(np.isclose(v, s2, rtol=1e-12, atol=0))
    got = float(row["sd_percentile"])
    tol = 5 * np.sqrt(max(exact * (1 - exact), 1.0 / PATHS) / PATHS)
    if abs(got - exact) > tol:
        failures.append(f"{name} sd_percentile: holdcount {got} from {PATHS} paths, exact {exact} "
                        f"over 8! orders (tolerance {tol:.3g})")
    return exact


def main():
    rng = np.random.default_rng(2385)
    upath = os.path.join(TMP, "check_audit_ragged_u.csv")
    ids, x = write_universe(upath, rng)
    assert not np.any(~np.isnan(x[:, 0]) & ~np.isnan(x[:, 7])), "ZR01 and ZR08 must share no period"
    per = per_period(x)

    # (1) the disjoint pair in the universe, no fund holding it: exit 0
    hpath = os.path.join(TMP, "check_audit_ragged_f1.csv")
    write_funds(hpath, ["Ragged Fund R", "Ragged Fund S", "Ragged Fund U"])
    out = audit(upath, hpath)
    if out.returncode != 0:
        failures.append(f"funds R, S, U: exit {out.returncode}, expected 0: {out.stderr.strip()}")
    rows = {r["fund"]: r for r in csv.DictReader(io.StringIO(out.stdout))}
    exact = {}
    for name in ("Ragged Fund R", "Ragged Fund S", "Ragged Fund U"):
        if name not in rows:
            failures.append(f"{name}: no row")
            continue
        exact[name] = compare_fund(name, rows[name], ids, x, per)

    # (2) a fund holding the pair: null and the reason, the others unchanged, exit 10
    hpath2 = os.path.join(TMP, "check_audit_ragged_f2.csv")
    write_funds(hpath2, ["Ragged Fund R", "Ragged Fund T", "Ragged Fund S", "Ragged Fund U"])
    out = audit(upath, hpath2)
    if out.returncode != 10:
        failures.append(f"with fund T: exit {out.returncode}, expected 10 (insufficient data)")
    want_warn = ("holdcount audit: warning: 'Ragged Fund T' has no risk figures: securities 'ZR01' and 'ZR08' "
                 "have only 0 common periods; expected at least 3 for a pairwise covariance")
    if want_warn not in out.stderr:
        failures.append(f"with fund T: stderr lacks the reason: {out.stderr.strip()!r}")
    rows2 = {r["fund"]: r for r in csv.DictReader(io.StringIO(out.stdout))}
    t = rows2.get("Ragged Fund T", {})
    for key in ("sd", "diversification_ratio", "equivalent_count", "sd_percentile", "weighted_random_sd",
                "equal_weight_random_sd"):
        if t.get(key) != "":
            failures.append(f"fund T: {key} {t.get(key)!r}, expected empty")
    if t.get("covered_weight") != "0" or t.get("verdict") != "insufficient data":
        failures.append(f"fund T: covered_weight {t.get('covered_weight')!r}, verdict {t.get('verdict')!r}")
    for name in ("Ragged Fund R", "Ragged Fund S", "Ragged Fund U"):
        # the same paths for the same counts and seed: every cell as without T
        if rows2.get(name) != rows.get(name):
            failures.append(f"{name}: its row changed when fund T was added")
    # (2b) the pair and an id the universe lacks: the warning about the
    # missing id says the risk figures are left out (not "the only id")
    hpath3 = os.path.join(TMP, "check_audit_ragged_f3.csv")
    write_funds(hpath3, ["Ragged Fund V"])
    out = audit(upath, hpath3)
    want_missing = ("holdcount audit: warning: 1 id of 'Ragged Fund V' is not in the universe (carrying 20% of its "
                    "weight); its risk figures are left out for the reason below")
    if out.returncode != 10 or want_missing not in out.stderr or "'ZR01' and 'ZR08'" not in out.stderr:
        failures.append(f"fund V: exit {out.returncode}, stderr {out.stderr.strip()!r}")
    doc = json.loads(audit(upath, hpath2, fmt="json").stdout)
    tj = [f for f in doc["funds"] if f["fund"] == "Ragged Fund T"][0]
    if tj["sd"] is not None or tj["equivalent_count"] is not None or tj["risk_matrix_repaired"] is not None:
        failures.append(f"fund T JSON: sd {tj['sd']!r}, equivalent_count {tj['equivalent_count']!r}")
    if "'ZR01' and 'ZR08'" not in (tj["risk_reason"] or ""):
        failures.append(f"fund T JSON: risk_reason {tj['risk_reason']!r}")
    if doc.get("unpaired_funds") != 1 or doc.get("risk_matrix_repaired_funds") != 0 or \
            "period by period" not in doc.get("comparison", ""):
        failures.append(f"JSON fields: unpaired_funds {doc.get('unpaired_funds')!r}, "
                        f"comparison {doc.get('comparison')!r}")

    # (3) a fund's own pairwise matrix that is not PSD: numpy's clipping
    gaps = os.path.join(SRC, "tests", "bad-inputs", "pairwise-not-psd.csv")
    gids = open(gaps).readline().strip().split(",")[1:]
    y = read(gaps)
    held, w = ["LIR901", "LIR902", "DWN"], np.array([0.4, 0.35, 0.25])
    a = pairwise(y, [gids.index(h) for h in held])
    if not np.linalg.eigvalsh(a)[0] < 0:
        failures.append("the pairwise matrix of LIR901, LIR902, DWN must not be PSD")
    b = clip(a)
    bpath = os.path.join(TMP, "check_audit_ragged_bent.csv")
    with open(bpath, "w") as f:
        f.write("fund,id,weight\n" + "".join(f"Bent,{h},{v}\n" for h, v in zip(held, w)))
    out = audit(gaps, bpath, paths="0")
    row = next(csv.DictReader(io.StringIO(out.stdout)), {})
    if out.returncode != 0 or row.get("risk_matrix_repaired") != "true":
        failures.append(f"Bent: exit {out.returncode}, risk_matrix_repaired {row.get('risk_matrix_repaired')!r}")
    else:
        check("Bent sd (clipped)", float(row["sd"]), np.sqrt(P * (w @ b @ w)))
        check("Bent diversification_ratio (clipped)", float(row["diversification_ratio"]),
              (w @ np.sqrt(np.diag(b))) / np.sqrt(w @ b @ w))

    if failures:
        print("\n".join(failures))
        sys.exit(1)
    print(f"check_audit_ragged: 3 funds against numpy over each pair's common periods, "
          f"percentiles {', '.join(f'{v:.4f}' for v in exact.values())} exact over 8! orders; "
          "the disjoint pair's fund null with its reason; a clipped own matrix")


main()
