"""Reference check of --repair-psd against numpy.

A matrix that is not positive semi-definite is refused without the option
(exit 3, the message naming --repair-psd); with it, the tool replaces it by
the nearest positive semi-definite matrix in the Frobenius norm by eigenvalue
clipping (Higham, 1988, Linear Algebra and its Applications 103).  The
reference is numpy: w, V = numpy.linalg.eigh(A); B = V diag(max(w, 0)) V'.

The repaired matrix is read back through the tool's own output, with no
debugging hook: `audit --paths 0` of one-security funds gives b_ii = sd^2 and
of 50/50 pairs gives var = (b_ii + b_jj + 2 b_ij)/4, so every entry of the
matrix the tool used is recovered.  It must be positive semi-definite
(numpy.linalg.eigvalsh) and equal numpy's clipping to 1e-10 relative to its
largest entry: both sides are double precision, the CSV carries 17
significant digits, and recovering b_ij from two squared sds loses a few
digits more.  Checked for a hand-built covariance matrix (--covariance) and
for the pairwise-complete covariances of a return history with gaps
(--missing pairwise, tests/bad-inputs/pairwise-not-psd.csv).
"""
import csv
import io
import json
import os
import subprocess
import sys

import numpy as np

HOLDCOUNT = os.environ["HOLDCOUNT"]
TMP = os.environ.get("HOLDCOUNT_TEST_TMP", "/tmp")
BAD = os.path.join(os.environ["HOLDCOUNT_SOURCE_DIR"], "tests", "bad-inputs")
RTOL = 1e-10

failures = []


def fail(what):
    failures.append(what)


def run(*args):
    return subprocess.run([HOLDCOUNT, *args], capture_output=True, text=True)


def clip(a):
    """numpy's eigenvalue clipping: the nearest PSD matrix (Higham 1988)."""
    w, v = np.linalg.eigh(a)
    return v @ np.diag(np.maximum(w, 0)) @ v.T


def write_pairs(path, ids):
    """One fund per security and one 50/50 fund per pair."""
    with open(path, "w") as f:
        f.write("fund,id,weight\n")
        for i in ids:
            f.write(f"one {i},{i},1\n")
        for a in range(len(ids)):
            for b in range(a + 1, len(ids)):
                f.write(f"pair {ids[a]} {ids[b]},{ids[a]},0.5\n")
                f.write(f"pair {ids[a]} {ids[b]},{ids[b]},0.5\n")


def recovered(rows, ids, scale):
    """The matrix the tool used, from the funds' sds (divided by the scale)."""
    var = {r["fund"]: float(r["sd"]) ** 2 / scale for r in rows}
    m = len(ids)
    b = np.empty((m, m))
    for i in range(m):
        b[i, i] = var[f"one {ids[i]}"]
    for i in range(m):
        for j in range(i + 1, m):
            b[i, j] = b[j, i] = 2 * var[f"pair {ids[i]} {ids[j]}"] - (b[i, i] + b[j, j]) / 2
    return b


def compare_matrix(what, b, ref):
    tol = RTOL * np.abs(ref).max()
    if not np.allclose(b, ref, rtol=0, atol=tol):
        fail(f"{what}: repaired matrix differs from numpy's clipping by {np.abs(b - ref).max():.3g} (tolerance {tol:.3g})")
    lam = np.linalg.eigvalsh(b)[0]
    if lam < -tol:
        fail(f"{what}: repaired matrix has eigenvalue {lam!r}, expected >= 0 up to {tol:.3g}")


def compare_fields(what, doc, a, b, scale):
    """The JSON fields that say how far the repair moved the matrix."""
    w = np.linalg.eigvalsh(a)
    want = {
        "psd_min_eigenvalue": w[0] * scale,
        "psd_repair_distance": np.linalg.norm(a - b, "fro") * scale,
        "psd_repair_relative_distance": np.linalg.norm(a - b, "fro") / np.linalg.norm(a, "fro"),
    }
    for key, value in want.items():
        if not np.isclose(doc.get(key, np.nan), value, rtol=1e-9, atol=0):
            fail(f"{what}: {key} {doc.get(key)!r}, numpy {value!r}")
    if doc.get("psd_negative_eigenvalues") != int(np.sum(w < 0)) or doc.get("psd_repaired") is not True:
        fail(f"{what}: psd_negative_eigenvalues {doc.get('psd_negative_eigenvalues')}, repaired {doc.get('psd_repaired')}")
    # Higham (1988): the distance is sqrt of the sum of squared negative eigenvalues
    if not np.isclose(np.linalg.norm(a - b, "fro"), np.sqrt(np.sum(w[w < 0] ** 2)), rtol=1e-9):
        fail(f"{what}: numpy's own clipping distance disagrees with Higham's closed form")
    if not any("eigenvalue clipping, Higham 1988" in c for c in doc.get("cautions", [])):
        fail(f"{what}: no note saying the matrix was repaired: {doc.get('cautions')}")


# ---- a hand-built covariance matrix that is not PSD --------------------------
# Invented sds and correlations: 1-2 and 2-3 strongly positive but 1-3
# negative, which no five securities can have together.
IDS = ["NVA", "NVB", "NVC", "NVD", "NVE"]
sd = np.array([0.0523, 0.0714, 0.0468, 0.0831, 0.0645])
corr = np.array([
    [1.0, 0.91, -0.62, 0.23, 0.35],
    [0.91, 1.0, 0.88, 0.31, 0.27],
    [-0.62, 0.88, 1.0, 0.19, 0.42],
    [0.23, 0.31, 0.19, 1.0, 0.57],
    [0.35, 0.27, 0.42, 0.57, 1.0],
])
A = corr * np.outer(sd, sd)
assert np.linalg.eigvalsh(A)[0] < 0, "the hand-built matrix must not be PSD"
B = clip(A)
cov = os.path.join(TMP, "check_psd_cov.csv")
with open(cov, "w") as f:
    f.write("id," + ",".join(IDS) + "\n")
    for i, r in enumerate(A):
        f.write(IDS[i] + "," + ",".join(repr(float(v)) for v in r) + "\n")
A = np.array([[float(c) for c in line.split(",")[1:]] for line in open(cov).read().splitlines()[1:]])
B = clip(A)
funds = os.path.join(TMP, "check_psd_funds.csv")
write_pairs(funds, IDS)

# refused without the option, by every command that reads a matrix
for cmd in (["describe"], ["curve", "--paths", "0"], ["enough", "--rules", "exact"],
            ["audit", "--paths", "0", "--holdings", funds]):
    out = run(*cmd, "--covariance", cov)
    if out.returncode != 3 or "--repair-psd uses the nearest positive semi-definite matrix instead" not in out.stderr:
        fail(f"{cmd[0]} without --repair-psd: exit {out.returncode}, {out.stderr.strip()!r}")

out = run("audit", "--covariance", cov, "--repair-psd", "--paths", "0", "--holdings", funds, "--format", "csv")
if out.returncode != 0:
    fail(f"audit --repair-psd: exit {out.returncode}: {out.stderr}")
else:
    compare_matrix("--covariance", recovered(list(csv.DictReader(io.StringIO(out.stdout))), IDS, 1.0), B)
    if "note:" not in out.stderr or "Frobenius distance" not in out.stderr:
        fail(f"audit --repair-psd: no note on stderr: {out.stderr!r}")

# the fields, on the matrix's scale and annualised by --periods-per-year
for extra, scale in (([], 1.0), (["--periods-per-year", "12"], 12.0)):
    out = run("describe", "--covariance", cov, "--repair-psd", "--format", "json", *extra)
    if out.returncode != 0:
        fail(f"describe --repair-psd {extra}: exit {out.returncode}: {out.stderr}")
        continue
    doc = json.loads(out.stdout)
    compare_fields(f"describe {extra}", doc, A, B, scale)
    # the securities' sds are the repaired diagonal's
    for row in doc["kept"]:
        i = IDS.index(row["id"])
        if not np.isclose(row["sd"], np.sqrt(B[i, i] * scale), rtol=RTOL):
            fail(f"describe {extra}: sd of {row['id']} {row['sd']!r}, numpy {np.sqrt(B[i, i] * scale)!r}")

# the exact curve of the repaired matrix: v-bar/N + (1 - 1/N) c-bar of B
out = run("curve", "--covariance", cov, "--repair-psd", "--paths", "0", "--sizes", "1-5", "--format", "csv")
if out.returncode != 0:
    fail(f"curve --repair-psd: exit {out.returncode}: {out.stderr}")
else:
    m = len(IDS)
    vbar, cbar = np.trace(B) / m, (B.sum() - np.trace(B)) / (m * (m - 1))
    for row in csv.DictReader(io.StringIO(out.stdout)):
        n = int(row["n"])
        want = vbar / n + (1 - 1 / n) * cbar
        if not np.isclose(float(row["expected_variance"]), want, rtol=RTOL):
            fail(f"curve --repair-psd n={n}: {row['expected_variance']}, numpy {want!r}")

# random portfolios are drawn from the same repaired matrix: the sampled
# mean variance within 4 Monte Carlo standard errors of the exact one (the
# design's self-check, z; at N = M there is no spread and no z)
out = run("curve", "--covariance", cov, "--repair-psd", "--paths", "20000", "--seed", "3", "--sizes", "1-5",
          "--threads", "2", "--quiet", "--format", "csv")
if out.returncode != 0:
    fail(f"curve --repair-psd --paths 20000: exit {out.returncode}: {out.stderr}")
else:
    zs = [(int(r["n"]), r["z_score"]) for r in csv.DictReader(io.StringIO(out.stdout))]
    if [n for n, z in zs if z != ""] != [1, 2, 3, 4] or any(abs(float(z)) > 4 for n, z in zs if z != ""):
        fail(f"curve --repair-psd: z-scores {zs}, expected |z| <= 4 for N = 1..4 and none at N = 5")

# ---- pairwise-complete covariances of a history with gaps ---------------------
gaps = os.path.join(BAD, "pairwise-not-psd.csv")
lines = open(gaps).read().splitlines()
GIDS = lines[0].split(",")[1:]
y = np.array([[float(c) if c not in ("", "NA") else np.nan for c in line.split(",")[1:]] for line in lines[1:]])
m = len(GIDS)
P = np.empty((m, m))
for i in range(m):
    for j in range(m):
        k = ~np.isnan(y[:, i]) & ~np.isnan(y[:, j])
        P[i, j] = np.cov(y[k, i], y[k, j])[0, 1]     # numpy: each pair over the periods both have
assert np.linalg.eigvalsh(P)[0] < 0, "the pairwise matrix of the gap file must not be PSD"
PB = clip(P)
gfunds = os.path.join(TMP, "check_psd_gfunds.csv")
write_pairs(gfunds, GIDS)
base = ["--missing", "pairwise", "--min-coverage", "70%", "--paths", "0", "--holdings", gfunds]
out = run("audit", gaps, *base)
if out.returncode != 3 or "--repair-psd" not in out.stderr:
    fail(f"pairwise audit without --repair-psd: exit {out.returncode}, {out.stderr.strip()!r}")
out = run("audit", gaps, *base, "--repair-psd", "--format", "json")
if out.returncode != 0:
    fail(f"pairwise audit --repair-psd: exit {out.returncode}: {out.stderr}")
else:
    doc = json.loads(out.stdout)
    p = doc["periods_per_year"]
    if p != 12:
        fail(f"pairwise audit: periods_per_year {p}, expected 12 (month-end dates)")
    # "funds" is the table (the count is "fund_count")
    rows = [{"fund": f["fund"], "sd": f["sd"]} for f in doc["funds"]]
    compare_matrix("--missing pairwise", recovered(rows, GIDS, p), PB)
    compare_fields("--missing pairwise", doc, P, PB, p)

if failures:
    print("\n".join(failures))
    sys.exit(1)
print("check_psd: refusals, the repaired matrices and the repair figures agree with numpy")
