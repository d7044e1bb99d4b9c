"""Reference check of `holdcount audit` against numpy.

Generates a universe and funds (fixed seed), runs the binary with
`--format csv`, and recomputes every per-fund figure with numpy from the same
files: np.cov (ddof=1) for the covariance matrix, the quadratic form w'Aw for
the variance, and the formulas of design.md sections 3 and 6 for the rest.
numpy is the outside reference; the tool never forms A for a fund.
Tolerance 1e-10 relative: both sides are double precision, the CSV carries
17 significant digits, and the two compute the variance by different routes
(series variance vs quadratic form), which differ by rounding only.

From a covariance matrix (--covariance) the tool does form w'Aw; checked
(1) against numpy on a matrix generated directly (a factor model, not from
returns), on the matrix's own scale and annualised by --periods-per-year;
(2) the same funds audited from returns and from numpy's np.cov of those
returns written as a matrix: sd, equivalent count and diversification ratio
agree to 1e-10, and the sd percentile exactly, because the sampler's matrix
route draws the same portfolios from the same seed (sampler.h) and their
variances differ by rounding only; (3) --missing pairwise on a history with
gaps against --covariance on numpy's pairwise-complete matrix of that file
(each pair over the periods both have, divisor n_ij - 1).

(4) A fund below the floor (numpy's w'Aw under c-bar): the CSV says
"below the floor" and the JSON has equivalent_count null with below_floor
true, while a fund above it has numpy's number in both.
"""
import csv
import io
import json
import os
import shutil
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


def reference(held, raw, ids, x, a=None, p=P):
    w = np.array(raw) / np.sum(raw)
    if a is None:
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
        "sd": np.sqrt(p * s2),
        # Choueifaty & Coignard (2008): sum w_i sigma_i / sigma_p
        "diversification_ratio": (wi @ np.sqrt(np.diag(sub))) / np.sqrt(s2),
        "equivalent_count": (vbar - cbar) / (s2 - cbar) if s2 > cbar else "below the floor",
        "weighted_random_sd": np.sqrt(p * (hhi_in * vbar + (1 - hhi_in) * cbar)),
        "equal_weight_random_sd": np.sqrt(p * (vbar / len(inside) + (1 - 1 / len(inside)) * cbar)),
        "missing_weight": w.sum() - w[inside].sum(),
        # coverage: the share of the (long-only, cash-free) weight in the universe
        "covered_weight": w[inside].sum() / w.sum(),
        # below 95% covered the verdict is "insufficient data" (no policy is set)
        "verdict": "passed" if w[inside].sum() / w.sum() >= 0.95 else "insufficient data",
    }


def run(universe, holdings, *extra, paths="0"):
    out = subprocess.run([HOLDCOUNT, "audit", universe, "--holdings", holdings,
                          "--format", "csv", "--paths", paths, *extra],
                         capture_output=True, text=True)
    rows = list(csv.DictReader(io.StringIO(out.stdout)))
    # 10 (insufficient data) exactly when a fund's verdict says so
    want = 10 if any(r["verdict"] == "insufficient data" for r in rows) else 0
    if out.returncode != want or not rows:
        failures.append(f"exit status {out.returncode}, expected {want}: {out.stderr}")
        return []
    return rows


def same(what, got, want):
    """Two CSV cells: numbers within RTOL, or the same text ("below the floor")."""
    try:
        check(what, float(got), float(want))
    except ValueError:
        if got != want:
            failures.append(f"{what}: '{got}' vs '{want}'")


def write_matrix(path, ids, a):
    with open(path, "w") as f:
        f.write("id," + ",".join(ids) + "\n")
        for i, r in enumerate(a):
            f.write(ids[i] + "," + ",".join(f"{v:.17g}" for v in r) + "\n")
    # the numbers as the tool reads them
    return np.array([[float(c) for c in line.split(",")[1:]] for line in open(path).read().splitlines()[1:]])


def compare_rows(what, rows, funds, ids, x, a=None, p=P):
    if len(rows) != len(funds):
        failures.append(f"{what}: {len(rows)} rows, expected {len(funds)}")
        return
    for row in rows:
        held, raw = funds[row["fund"]]
        ref = reference(held, raw, ids, x, a, p)
        for key, want in ref.items():
            got = row[key]
            if isinstance(want, str):
                if got != want:
                    failures.append(f"{what} {row['fund']} {key}: '{got}', expected '{want}'")
            elif key == "holdings":
                if int(got) != want:
                    failures.append(f"{what} {row['fund']} holdings: {got}, expected {want}")
            elif key == "missing_weight" and want == 0:
                check(f"{what} {row['fund']} {key}", float(got) + 1, 1.0)
            else:
                check(f"{what} {row['fund']} {key}", float(got), want)


def compare_matrix_generated(seed):
    """(1) A generated covariance matrix: numpy's w'Aw and the rest."""
    rng = np.random.default_rng(seed)
    m = 48
    ids = [f"ZQ{i:03d}" for i in range(1, m + 1)]
    load = np.column_stack([rng.uniform(0.5, 1.5, m), rng.normal(0, 0.4, m)])
    a = load @ np.diag([0.0021, 0.0006]) @ load.T + np.diag(rng.uniform(0.001, 0.012, m))
    cpath = os.path.join(TMP, "check_audit_cov.csv")
    hpath = os.path.join(TMP, "check_audit_h_cov.csv")
    a = write_matrix(cpath, ids, a)
    funds = write_funds(hpath, rng, ids, "weight")
    compare_rows("matrix", run(cpath, hpath, "--covariance"), funds, ids, None, a, 1.0)
    compare_rows("matrix x12", run(cpath, hpath, "--covariance", "--periods-per-year", "12"),
                 funds, ids, None, a, 12.0)


def compare_matrix_of_returns(seed):
    """(2) Returns against numpy's covariance matrix of the same returns."""
    rng = np.random.default_rng(seed)
    upath = os.path.join(TMP, "check_audit_u_same.csv")
    cpath = os.path.join(TMP, "check_audit_cov_same.csv")
    hpath = os.path.join(TMP, "check_audit_h_same.csv")
    ids, x = write_universe(upath, rng, 48, 96)
    write_matrix(cpath, ids, np.cov(x, rowvar=False, ddof=1))
    write_funds(hpath, rng, ids, "weight")
    from_returns = run(upath, hpath, paths="4000")
    from_matrix = run(cpath, hpath, "--covariance", "--periods-per-year", "12", paths="4000")
    if len(from_returns) != 5 or len(from_matrix) != 5:
        failures.append(f"returns vs matrix: {len(from_returns)} and {len(from_matrix)} rows, expected 5")
        return
    for r, c in zip(from_returns, from_matrix):
        for key in ("sd", "equivalent_count", "diversification_ratio"):
            same(f"returns vs matrix {r['fund']} {key}", c[key], r[key])
        if r["sd_percentile"] != c["sd_percentile"] or r["sd_percentile"] == "":
            failures.append(f"returns vs matrix {r['fund']}: sd_percentile {r['sd_percentile']} vs {c['sd_percentile']}")


def compare_pairwise(seed):
    """(3) --missing pairwise against numpy's pairwise-complete matrix."""
    rng = np.random.default_rng(seed)
    upath = os.path.join(TMP, "check_audit_u_gaps.csv")
    gpath = os.path.join(TMP, "check_audit_u_gaps2.csv")
    cpath = os.path.join(TMP, "check_audit_cov_gaps.csv")
    hpath = os.path.join(TMP, "check_audit_h_gaps.csv")
    ids, x = write_universe(upath, rng, 48, 120)
    y = x.copy()
    for i in rng.choice(48, 8, replace=False):     # 8 securities lose 2 to 10 periods each
        y[rng.choice(120, rng.integers(2, 11), replace=False), i] = np.nan
    lines = open(upath).read().splitlines()
    with open(gpath, "w") as f:
        f.write(lines[0] + "\n")
        for line, row in zip(lines[1:], y):
            f.write(line.split(",")[0] + "," + ",".join("NA" if np.isnan(v) else f"{v:.17g}" for v in row) + "\n")
    a = np.empty((48, 48))
    for i in range(48):
        for j in range(48):
            k = ~np.isnan(y[:, i]) & ~np.isnan(y[:, j])
            a[i, j] = np.cov(y[k, i], y[k, j])[0, 1]
    write_matrix(cpath, ids, a)
    write_funds(hpath, rng, ids, "weight")
    pw = run(gpath, hpath, "--missing", "pairwise", "--min-coverage", "90%", paths="2000")
    mx = run(cpath, hpath, "--covariance", "--periods-per-year", "12", paths="2000")
    if len(pw) != 5 or len(mx) != 5:
        failures.append(f"pairwise vs matrix: {len(pw)} and {len(mx)} rows, expected 5")
        return
    for r, c in zip(pw, mx):
        for key in ("sd", "equivalent_count", "diversification_ratio", "weighted_random_sd"):
            same(f"pairwise vs matrix {r['fund']} {key}", r[key], c[key])
        if r["sd_percentile"] != c["sd_percentile"]:
            failures.append(f"pairwise vs matrix {r['fund']}: sd_percentile {r['sd_percentile']} vs {c['sd_percentile']}")


def compare_floor_json(seed):
    """(4) "below the floor" in the CSV, null with below_floor true in the
    JSON: ZQ002 is nearly ZQ001's mirror image, so numpy's w'Aw of the
    50/50 pair is under the average covariance c-bar; a fund of three
    ordinary securities has its number in both, equal to numpy's."""
    rng = np.random.default_rng(seed)
    upath = os.path.join(TMP, "check_audit_u_floor.csv")
    hpath = os.path.join(TMP, "check_audit_h_floor.csv")
    ids, x = write_universe(upath, rng, 12, 60)
    lines = open(upath).read().splitlines()
    x[:, 1] = -x[:, 0] + rng.normal(0, 0.001, 60)
    with open(upath, "w") as f:
        f.write(lines[0] + "\n")
        for line, row in zip(lines[1:], x):
            f.write(line.split(",")[0] + "," + ",".join(f"{v:.17g}" for v in row) + "\n")
    x = np.array([[float(c) for c in line.split(",")[1:]] for line in open(upath).read().splitlines()[1:]])
    funds = {"Hedge": (["ZQ001", "ZQ002"], [0.5, 0.5]), "Plain": (["ZQ004", "ZQ007", "ZQ010"], [0.5, 0.3, 0.2])}
    with open(hpath, "w") as f:
        f.write("fund,id,weight\n")
        for name, (held, raw) in funds.items():
            f.writelines(f"{name},{h},{r}\n" for h, r in zip(held, raw))
    ref = {name: reference(held, raw, ids, x)["equivalent_count"] for name, (held, raw) in funds.items()}
    if ref["Hedge"] != "below the floor" or isinstance(ref["Plain"], str):
        failures.append(f"floor: the constructed funds do not straddle the floor in numpy: {ref}")
        return
    rows = {r["fund"]: r for r in run(upath, hpath)}
    out = subprocess.run([HOLDCOUNT, "audit", upath, "--holdings", hpath, "--format", "json", "--paths", "0"],
                         capture_output=True, text=True)
    if out.returncode != 0 or len(rows) != 2:
        failures.append(f"floor: exit status {out.returncode}, {len(rows)} CSV rows: {out.stderr}")
        return
    js = {f["fund"]: f for f in json.loads(out.stdout)["funds"]}
    if rows["Hedge"]["equivalent_count"] != "below the floor":
        failures.append(f"floor: CSV equivalent_count '{rows['Hedge']['equivalent_count']}'")
    if js["Hedge"]["equivalent_count"] is not None or js["Hedge"]["below_floor"] is not True:
        failures.append(f"floor: JSON {js['Hedge']['equivalent_count']!r}, below_floor {js['Hedge']['below_floor']!r}")
    if js["Plain"]["below_floor"] is not False or not isinstance(js["Plain"]["equivalent_count"], float):
        failures.append(f"floor: JSON Plain {js['Plain']['equivalent_count']!r}, below_floor {js['Plain']['below_floor']!r}")
    else:
        check("floor: JSON Plain equivalent_count", js["Plain"]["equivalent_count"], ref["Plain"])
        check("floor: CSV Plain equivalent_count", float(rows["Plain"]["equivalent_count"]), ref["Plain"])


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


# (5) A fund administrator's files (issue 16): two holdings files, one
# ','-delimited in Latin-1 with market values as "1,234,567.89" and an
# accounting negative "(12,500.00)", a cash line with no issuer, two share
# classes of one issuer, a short, a government security, another fund's
# shares and an id the universe lacks; the other ';'-delimited with decimal
# commas.  One command; every figure against numpy, the statute baskets
# against a hand loop under both readings (1940 Act s. 5(b)(1), IRC
# s. 851(b)(3)(A), from memory of the text: cash, government securities and
# investment companies' shares count whole; an issuer above 5% is left out
# ("excluded") or counted up to 5% ("capped")).
ADMIN = [  # id, issuer, type, market value (negative: a short)
    ("CASH-EUR", "", "cash", 61250.00),
    ("ZQ001", "Émetteur Lirrand", "security", 118400.50),   # share class A
    ("ZQ002", "Émetteur Lirrand", "security", 42750.25),    # share class B of the same issuer
    ("ZQ003", "Iss 3", "security", 71000.00),
    ("ZQ004", "Iss 4", "security", -12500.00),               # a short, "(12,500.00)"
    ("ZQ005", "Trésor", "government security", 150000.00),
    ("ZQ006", "Fonds F", "investment-company share", 52000.00),
    ("ZQ007", "Iss 7", "security", 49500.00),
    ("ZQ008", "Iss 8", "other", 38250.75),
    ("ZQ009", "Iss 9", "security", 33000.00),
    ("ZQ010", "Iss 10", "security", 1234567.89),             # a seven-digit value: "1,234,567.89"
    ("ZQ011", "Iss 11", "security", 45100.00),
    ("ZQ998", "Iss 998", "security", 21000.00),              # not in the universe
]
for k in range(12, 40):
    ADMIN.append((f"ZQ{k:03d}", f"Iss {k}", "security", 9000.0 + 1375.5 * k))
SEMI = [("ZQ020", 0.3125), ("ZQ021", 0.28), ("ZQ022", 0.2075), ("ZQ023", 0.2)]
BENCH = [(f"ZQ{k:03d}", 1.0 + (k % 7)) for k in range(1, 31)]


def money(v):
    text = f"{abs(v):,.2f}"
    return f'"({text})"' if v < 0 else f'"{text}"'


def compare_administrator_files(seed):
    rng = np.random.default_rng(seed)
    upath = os.path.join(TMP, "check_audit_u_admin.csv")
    h1 = os.path.join(TMP, "check_audit_h_admin1.csv")
    h2 = os.path.join(TMP, "check_audit_h_admin2.csv")
    bpath = os.path.join(TMP, "check_audit_bench.csv")
    ids, x = write_universe(upath, rng, 48, 96)
    name = "Fondé Lirrand Équilibre"
    with open(h1, "wb") as f:
        f.write(b"fund,id,value,issuer,type\n")
        for i, iss, typ, v in ADMIN:
            f.write(f"{name},{i},{money(v)},{iss},{typ}\n".encode("latin-1"))
    with open(h2, "w") as f:
        f.write("fund;id;weight\n")
        f.writelines(f"Lirrand Semis;{i};{str(w).replace('.', ',')}\n" for i, w in SEMI)
    with open(bpath, "w") as f:
        f.write("id,weight\n")
        f.writelines(f"{i},{w}\n" for i, w in BENCH)

    def audit(*extra):
        out = subprocess.run([HOLDCOUNT, "audit", upath, "--holdings", h1, "--holdings", h2,
                              "--holdings-encoding", "latin-1", "--allow-short", "--benchmark", bpath,
                              "--format", "json", "--paths", "0", *extra], capture_output=True)
        try:
            doc = json.loads(out.stdout.decode("utf-8"))   # valid UTF-8 and valid JSON
        except (UnicodeDecodeError, json.JSONDecodeError) as e:
            failures.append(f"admin: output is not valid JSON: {e}")
            return None, out.returncode
        return doc, out.returncode

    doc, rc = audit()
    if doc is None:
        return
    if rc != 0:
        failures.append(f"admin: exit status {rc}, expected 0")
    funds = {f["fund"]: f for f in doc["funds"]}
    if set(funds) != {name, "Lirrand Semis"}:
        failures.append(f"admin: funds {sorted(funds)}")
        return
    got = funds[name]
    ids_ = [r[0] for r in ADMIN]
    raw = np.array([r[3] for r in ADMIN])
    kind = [r[2] for r in ADMIN]
    w = raw / raw.sum()                                  # of net assets, cash included
    nc = np.array([k != "cash" for k in kind])
    a = np.cov(x, rowvar=False, ddof=1)
    m = len(ids)
    vbar = np.trace(a) / m
    cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
    gross = np.abs(w[nc]).sum()
    found = np.array([i in ids for i in ids_])
    ref = {
        "holdings": int(nc.sum()),
        "cash_weight": w[~nc].sum(),
        "government_weight": sum(w[k] for k in range(len(w)) if kind[k] == "government security"),
        "fund_share_weight": sum(w[k] for k in range(len(w)) if kind[k] == "investment-company share"),
        "gross_exposure": gross,
        "net_exposure": w[nc].sum(),
        "short_exposure": -w[w < 0].sum(),
        "max_weight": np.abs(w[nc]).max(),
        "top10_share": np.sort(np.abs(w[nc]))[::-1][:10].sum(),
        "hhi": ((np.abs(w[nc]) / gross) ** 2).sum(),
        "effective_holdings": 1 / ((np.abs(w[nc]) / gross) ** 2).sum(),
        "covered_weight": np.abs(w[nc & found]).sum() / gross,
    }
    # issuers: net weights summed per (class, issuer), by absolute value
    cls = {"security": 0, "other": 0, "government security": 1, "investment-company share": 2}
    by = {}
    for k in range(len(w)):
        if kind[k] != "cash":
            key = (cls[kind[k]], ADMIN[k][1] or ids_[k])
            by[key] = by.get(key, 0.0) + w[k]
    e = {key: abs(v) for key, v in by.items()}
    tot = sum(e.values())
    ref["issuers"] = len(e)
    ref["issuer_hhi"] = sum((v / tot) ** 2 for v in e.values())
    ref["effective_issuers"] = 1 / ref["issuer_hhi"]
    ref["max_issuer_weight"] = max(e.values())
    # the baskets, by a plain loop under each reading; they count assets held,
    # so a net short issuer (a liability) adds nothing (from memory of the
    # texts, which speak of the value of total assets; verify with counsel)
    base = ref["cash_weight"] + ref["government_weight"] + ref["fund_share_weight"]
    excluded, capped = base, base
    for (c, _), v in by.items():
        if c == 0 and v > 0:
            excluded += v if v <= 0.05 else 0.0
            capped += min(v, 0.05)
    for key, val in (("basket_1940act_excluded", excluded), ("basket_1940act_capped", capped),
                     ("basket_ric_excluded", excluded), ("basket_ric_capped", capped)):
        ref[key] = val
    # risk of the invested assets found, renormalised (the default)
    inside = [k for k in range(len(w)) if nc[k] and found[k]]
    idx = [ids.index(ids_[k]) for k in inside]
    sub = a[np.ix_(idx, idx)]
    for treatment, denom in (("exclude", w[inside].sum()), ("zero", w[inside].sum() + ref["cash_weight"])):
        wi = w[inside] / denom
        s2 = wi @ sub @ wi
        h2_ = (wi ** 2).sum()
        r = {"sd": np.sqrt(P * s2),
             "diversification_ratio": (wi @ np.sqrt(np.diag(sub))) / np.sqrt(s2),
             "weighted_random_sd": np.sqrt(P * (h2_ * vbar + (wi.sum() ** 2 - h2_) * cbar))}
        if s2 > cbar:
            r["equivalent_count"] = (vbar - cbar) / (s2 - cbar)
        if treatment == "exclude":
            ref.update(r)
        else:
            zdoc, zrc = audit("--cash-risk", "zero")
            if zdoc is not None:
                zgot = {f["fund"]: f for f in zdoc["funds"]}[name]
                for key, want in r.items():
                    check(f"admin cash-risk zero {key}", zgot[key], want)
    # active share (Cremers & Petajisto, 2009): invested weights on both sides
    u = {ids_[k]: w[k] / w[nc].sum() for k in range(len(w)) if nc[k]}
    bsum = sum(v for _, v in BENCH)
    b = {i: v / bsum for i, v in BENCH}
    ref["active_share"] = 0.5 * sum(abs(u.get(i, 0) - b.get(i, 0)) for i in set(u) | set(b))
    for key, want in ref.items():
        if key in ("holdings", "issuers"):
            if got[key] != want:
                failures.append(f"admin {key}: {got[key]}, expected {want}")
        else:
            check(f"admin {key}", got[key], want)
    if got["risk_holdings"] != len(inside) or got["missing_count"] != 1 or got["verdict"] != "passed":
        failures.append(f"admin: risk_holdings {got['risk_holdings']}, missing {got['missing_count']}, verdict {got['verdict']}")
    # the ';' file with decimal commas: weights 0.3125 ... as written
    semi = funds["Lirrand Semis"]
    check("admin semis max_weight", semi["max_weight"], 0.3125)
    check("admin semis hhi", semi["hhi"], sum(v * v for _, v in SEMI))
    # the screens table: each basket under both readings, the deciding one marked
    rows = [s for s in doc["screens"] if s["fund"] == name and s["screen"] == "1940act"]
    readings = {s["reading"]: s for s in rows}
    if set(readings) != {"excluded", "capped"} or not readings["excluded"]["decides"] or readings["capped"]["decides"]:
        failures.append(f"admin: 1940act rows {rows}")
    else:
        check("admin 1940act excluded row", readings["excluded"]["figure"], excluded)
        check("admin 1940act capped row", readings["capped"]["figure"], capped)
    sec = {k: v for k, v in e.items() if k[0] == 0}
    ucits = {s["part"]: s for s in doc["screens"] if s["fund"] == name and s["screen"] == "ucits"}
    check("admin ucits largest issuer", ucits["largest issuer"]["figure"], max(sec.values()))
    check("admin ucits above 5%", ucits["issuers above 5% together"]["figure"],
          sum(v for v in sec.values() if v > 0.05))
    if ucits["largest government issuer"]["issuer"] != "Trésor":
        failures.append(f"admin: government issuer {ucits['largest government issuer']['issuer']!r}")
    # capped reading decides with --basket-reading capped
    cdoc, _ = audit("--basket-reading", "capped")
    if cdoc is not None:
        crow = [s for s in cdoc["screens"] if s["fund"] == name and s["screen"] == "ric" and s["decides"]
                and s["part"].startswith("basket")]
        if len(crow) != 1 or crow[0]["reading"] != "capped":
            failures.append(f"admin: ric deciding row under capped: {crow}")
        else:
            check("admin ric capped deciding", crow[0]["figure"], capped)
    # without the encoding the Latin-1 name is refused with file, line, column
    out = subprocess.run([HOLDCOUNT, "audit", upath, "--holdings", h1, "--allow-short"], capture_output=True, text=True)
    if out.returncode != 3 or f"{h1}:2:1: found byte 0xE9 at byte 5 of the cell" not in out.stderr:
        failures.append(f"admin: Latin-1 without --holdings-encoding: exit {out.returncode}, {out.stderr!r}")
    # a fund in two files is an error naming both (a copy: one file given
    # twice is a usage error of its own)
    h2copy = h2 + ".copy.csv"
    shutil.copyfile(h2, h2copy)
    out = subprocess.run([HOLDCOUNT, "audit", upath, "--holdings", h2, "--holdings", h2copy], capture_output=True, text=True)
    if out.returncode != 3 or f"{h2copy}:2: fund 'Lirrand Semis' is also in '{h2}' (line 2)" not in out.stderr:
        failures.append(f"admin: a fund in two files: exit {out.returncode}, {out.stderr!r}")
    out = subprocess.run([HOLDCOUNT, "audit", upath, "--holdings", h2, "--holdings", h2], capture_output=True, text=True)
    if out.returncode != 2 or f"--holdings '{h2}' and '{h2}' are the same file" not in out.stderr:
        failures.append(f"admin: one file twice: exit {out.returncode}, {out.stderr!r}")



compare("weight", 2385)
compare("value", 4711)
compare_matrix_generated(1913)
compare_administrator_files(1605)
compare_matrix_of_returns(3571)
compare_pairwise(6029)
compare_floor_json(8117)
if failures:
    print("\n".join(failures))
    sys.exit(1)
print("check_audit: every figure agrees with numpy")
