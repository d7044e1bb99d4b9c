"""Reference check of `holdcount audit` against numpy.

Generates a universe and funds (fixed seed), runs the binary with
`--format csv`, and recomputes every per-fund figure with numpy from the same
files: np.cov (ddof=1) for the covariance matrix, the quadratic form w'Aw for
the variance, and the formulas of design.md sections 3 and 6 for the rest.
numpy is the outside reference; the tool never forms A for a fund.
Tolerance 1e-10 relative: both sides are double precision, the CSV carries
17 significant digits, and the two compute the variance by different routes
(series variance vs quadratic form), which differ by rounding only.
"""
import csv
import io
import os
import subprocess
import sys

import numpy as np

HOLDCOUNT = os.environ["HOLDCOUNT"]
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
RTOL = 1e-10
P = 12  # monthly dates below: the tool detects 12 periods a year

failures = []


def check(what, got, want, rtol=RTOL):
    if not np.isclose(got, want, rtol=rtol, atol=0):
        failures.append(f"{what}: holdcount {got!r}, numpy {want!r}")


def write_universe(path, rng, m, t):
    factor = rng.normal(0.006, 0.045, t)
    beta = rng.uniform(0.55, 1.45, m)
    spec = rng.uniform(0.03, 0.11, m)
    x = factor[:, None] * beta[None, :] + rng.standard_t(6, (t, m)) * spec[None, :] / np.sqrt(1.5)
    ids = [f"ZQ{i:03d}" for i in range(1, m + 1)]
    with open(path, "w") as f:
        f.write("date," + ",".join(ids) + "\n")
        for k in range(t):
            f.write(f"{2003 + k // 12:04d}-{k % 12 + 1:02d}," + ",".join(f"{v:.17g}" for v in x[k]) + "\n")
    # the numbers as the tool reads them: parse the text back
    return ids, np.array([[float(c) for c in line.split(",")[1:]]
                          for line in open(path).read().splitlines()[1:]])


def write_funds(path, rng, ids, kind):
    funds = {}
    rows = []
    for f, n in enumerate([3, 7, 12, 25, 40]):
        name = f"Fund {chr(ord('K') + f)}"
        chosen = list(rng.choice(len(ids), n, replace=False))
        raw = rng.dirichlet(np.full(n, 0.8)) * (2.385e6 if kind == "value" else 1.0)
        held = [ids[i] for i in chosen]
        if f == 2:                      # one fund holds an id the universe lacks
            held[4] = "ZQ999"
        funds[name] = (held, raw)
        rows += [(name, h, f"{r:.17g}") for h, r in zip(held, raw)]
    rng.shuffle(rows)                   # funds' rows need not be adjacent
    with open(path, "w") as f:
        f.write(f"fund,id,{kind}\n")
        for r in rows:
            f.write(",".join(r) + "\n")
    return funds


def reference(held, raw, ids, x):
    w = np.array(raw) / np.sum(raw)
    a = np.cov(x, rowvar=False, ddof=1)
    m = len(ids)
    vbar = np.trace(a) / m
    cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
    inside = [k for k, h in enumerate(held) if h in ids]
    wi = w[inside] / w[inside].sum()
    idx = [ids.index(held[k]) for k in inside]
    sub = a[np.ix_(idx, idx)]
    s2 = wi @ sub @ wi
    hhi_in = np.sum(wi ** 2)
    return {
        "holdings": len(held),
        "weight_sum": np.sum(raw),
        "max_weight": w.max(),
        "top10_share": np.sort(w)[::-1][:10].sum(),
        "hhi": np.sum(w ** 2),
        "effective_holdings": 1 / np.sum(w ** 2),
        "sd": np.sqrt(P * s2),
        # Choueifaty & Coignard (2008): sum w_i sigma_i / sigma_p
        "diversification_ratio": (wi @ np.sqrt(np.diag(sub))) / np.sqrt(s2),
        "equivalent_count": (vbar - cbar) / (s2 - cbar) if s2 > cbar else "below the floor",
        "weighted_random_sd": np.sqrt(P * (hhi_in * vbar + (1 - hhi_in) * cbar)),
        "equal_weight_random_sd": np.sqrt(P * (vbar / len(inside) + (1 - 1 / len(inside)) * cbar)),
        "missing_weight": w.sum() - w[inside].sum(),
    }


def run(universe, holdings):
    out = subprocess.run([HOLDCOUNT, "audit", universe, "--holdings", holdings,
                          "--format", "csv", "--paths", "0"],
                         capture_output=True, text=True)
    if out.returncode != 0:
        failures.append(f"exit status {out.returncode}: {out.stderr}")
        return []
    return list(csv.DictReader(io.StringIO(out.stdout)))


def compare(kind, seed):
    rng = np.random.default_rng(seed)
    upath = os.path.join(TMP, f"check_audit_u_{kind}.csv")
    hpath = os.path.join(TMP, f"check_audit_h_{kind}.csv")
    ids, x = write_universe(upath, rng, 48, 96)
    funds = write_funds(hpath, rng, ids, kind)
    rows = run(upath, hpath)
    if len(rows) != len(funds):
        failures.append(f"{kind}: {len(rows)} rows, expected {len(funds)}")
        return
    for row in rows:
        held, raw = funds[row["fund"]]
        ref = reference(held, raw, ids, x)
        for key, want in ref.items():
            got = row[key]
            if isinstance(want, str):
                if got != want:
                    failures.append(f"{row['fund']} {key}: '{got}', expected '{want}'")
            elif key == "holdings":
                if int(got) != want:
                    failures.append(f"{row['fund']} holdings: {got}, expected {want}")
            elif key == "missing_weight" and want == 0:
                check(f"{kind} {row['fund']} {key}", float(got) + 1, 1.0)
            else:
                check(f"{kind} {row['fund']} {key}", float(got), want)
        if row["sd_percentile"] != "":
            failures.append(f"{row['fund']}: sd_percentile '{row['sd_percentile']}' with --paths 0, expected empty")
        subset = "ZQ999" in held
        if row["risk_on_subset"] != ("true" if subset else "false"):
            failures.append(f"{row['fund']}: risk_on_subset '{row['risk_on_subset']}'")


compare("weight", 2385)
compare("value", 4711)
if failures:
    print("\n".join(failures))
    sys.exit(1)
print("check_audit: every figure agrees with numpy")
