"""check_report.py - the demo report folder against its own CSVs, numpy and
the PNG specification.

Runs `holdcount report` on the bundled demo and checks:
  - summary.json parses (Python's json) and every cell of curve.csv,
    enough.csv, audit.csv, audit-screens.csv and audit-sectors.csv equals
    the same cell of summary.json to the last digit (both are printed with
    17 significant digits, so float equality is exact);
  - the exact curve against numpy on the same data: E[var(N)] =
    vbar/N + (1 - 1/N) cbar from numpy's sample covariance (ddof=1) of the
    complete securities, times 12 (design.md section 3; rtol 1e-12, since
    both sum about 10^4 products in a different order);
  - the rolling windows, in by default: every window's complete securities,
    average covariance and near-floor count against numpy on that window;
  - exact.dat carries 100 * expected_sd to its 10 significant digits;
  - the plots' labels: no rule's leader line strikes another rule's label
    and no label sits on the curve or the band (risk.gp, risk-log.gp), and
    the curve and the floor strike no fund's name (funds.gp), from the
    scripts' own frame and axes and a measured text width;
  - each PNG is a PNG (signature, PNG specification 1.2 section 12.12) whose
    IHDR says 1000 x 640 (section 4.1.1).
"""
import csv
import json
import os
import shutil
import struct
import subprocess
import sys

import numpy as np

HC = os.environ["HOLDCOUNT"]
SRC = os.environ["HOLDCOUNT_SOURCE_DIR"]
TMP = os.path.join(os.environ["HOLDCOUNT_TEST_TMP"], "check_report")
failures = []


def check(ok, what):
    if not ok:
        failures.append(what)
        print("FAIL:", what)


def cell_value(text):
    if text == "":
        return None
    if text in ("true", "false"):
        return text == "true"
    try:
        return int(text)
    except ValueError:
        pass
    try:
        return float(text)
    except ValueError:
        return text


# A fresh folder each run (a folder left by an older build lacks the
# signature file that --force asks for).
shutil.rmtree(TMP, ignore_errors=True)
os.makedirs(TMP, exist_ok=True)
out = os.path.join(TMP, "demo")
subprocess.run([HC, "report", "--force", "-q", "-o", out, "--paths", "2000", "--bootstrap", "200"],
               check=True)
with open(os.path.join(out, "summary.json")) as fp:
    summary = json.load(fp)

for name, section, table in (("curve.csv", "curve", "curve"), ("enough.csv", "enough", "rules"),
                             ("audit.csv", "audit", "funds"), ("audit-screens.csv", "audit", "screens"),
                             ("audit-sectors.csv", "audit", "sectors"), ("rolling.csv", "rolling", "windows")):
    with open(os.path.join(out, name), newline="") as fp:
        rows = list(csv.DictReader(fp))
    js = summary[section][table]
    check(len(rows) == len(js) and len(rows) > 0, f"{name}: {len(rows)} rows, summary.json {len(js)}")
    for i, (row, obj) in enumerate(zip(rows, js)):
        check(list(row.keys()) == list(obj.keys()), f"{name}: row {i} keys differ from summary.json")
        for k, v in row.items():
            a, b = cell_value(v), obj.get(k)
            if isinstance(b, bool) or isinstance(a, bool):
                check(a == b or str(b).lower() == v, f"{name} row {i} {k}: {v!r} vs {b!r}")
            elif b == "":
                # CSV writes empty text and no value alike (an empty cell)
                check(v == "", f"{name} row {i} {k}: csv {v!r}, json ''")
            elif k == "equivalent_count" and b is None and v != "":
                # no count: the CSV gives the reason, the JSON null and below_floor
                check(v == "below the floor" and obj.get("below_floor") is True,
                      f"{name} row {i} {k}: csv {v!r}, json null, below_floor {obj.get('below_floor')!r}")
            else:
                check(a == b, f"{name} row {i} {k}: csv {v!r}, json {b!r}")

# numpy reference: complete securities of the demo, monthly.
with open(os.path.join(SRC, "data", "demo-universe.csv"), newline="") as fp:
    data = list(csv.reader(fp))
cols = list(zip(*data[1:]))[1:]
complete = [c for c in cols if all(x not in ("", "NA", "NaN", ".") for x in c)]
x = np.array([[float(v) for v in c] for c in complete])
a = np.cov(x, ddof=1)
m = a.shape[0]
vbar = np.trace(a) / m
cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
check(summary["curve"]["securities"] == m, f"securities {summary['curve']['securities']} vs numpy {m}")
for row in summary["curve"]["curve"]:
    n = row["n"]
    ev = 12 * (vbar / n + (1 - 1 / n) * cbar)
    check(abs(row["expected_variance"] - ev) <= 1e-12 * ev, f"E[var]({n}) {row['expected_variance']} vs numpy {ev}")
    te2 = 12 * (vbar - cbar) * (1 / n - 1 / m)
    check(abs(row["expected_tracking_error"] ** 2 - te2) <= 1e-12 * 12 * vbar,
          f"TE({n}) {row['expected_tracking_error']} vs numpy sqrt {te2}")
check(abs(summary["universe"]["floor_sd"] - np.sqrt(12 * cbar)) <= 1e-12, "floor sd vs numpy")

# audit.csv's missing_count (a count, so named; there is no missing_ids
# column) against the demo files themselves: per fund, the ids of
# demo-funds.csv that are not complete securities of demo-universe.csv.
complete_ids = {h for h, c in zip(data[0][1:], cols) if all(x not in ("", "NA", "NaN", ".") for x in c)}
with open(os.path.join(SRC, "data", "demo-funds.csv"), newline="") as fp:
    held = list(csv.DictReader(fp))
with open(os.path.join(out, "audit.csv"), newline="") as fp:
    audit_rows = list(csv.DictReader(fp))
check("missing_count" in audit_rows[0] and "missing_ids" not in audit_rows[0], "audit.csv lacks missing_count")
for row in audit_rows:
    want = sum(1 for h in held if h["fund"] == row["fund"] and h["id"] not in complete_ids)
    check(int(row["missing_count"]) == want, f"audit.csv {row['fund']}: missing_count {row['missing_count']}, "
          f"expected {want} from the demo files")

# The rolling windows (in by default: 240 months hold two five-year windows)
# against numpy window by window: the securities complete in the window, and
# the near-floor count, the smallest N <= M with vbar/N + (1 - 1/N) cbar <=
# (1 + x)^2 cbar at the default x = 10% (design.md section 5; numpy's
# covariance with ddof=1 of that window's complete columns).
dates = [row[0] for row in data[1:]]
windows = summary["rolling"]["windows"]
check(len(windows) == 16, f"{len(windows)} rolling windows, expected (240 - 60)/12 + 1 = 16")
check(summary["rolling"]["window"] == 60 and summary["rolling"]["step"] == 12, "rolling window and step not 60 and 12")
for w in windows:
    lo, hi = dates.index(w["window_start"]), dates.index(w["window_end"])
    check(hi - lo + 1 == 60, f"window {w['window_start']}: {hi - lo + 1} periods")
    part = [c[lo:hi + 1] for c in cols]
    full = [c for c in part if all(x not in ("", "NA", "NaN", ".") for x in c)]
    xw = np.array([[float(v) for v in c] for c in full])
    aw = np.cov(xw, ddof=1)
    mw = aw.shape[0]
    vb = np.trace(aw) / mw
    cb = (aw.sum() - np.trace(aw)) / (mw * (mw - 1))
    want = next((n for n in range(1, mw + 1) if vb / n + (1 - 1 / n) * cb <= 1.1 ** 2 * cb), None)
    check(w["securities"] == mw, f"window {w['window_start']}: {w['securities']} securities, numpy {mw}")
    check(w["count_near_floor"] == want, f"window {w['window_start']}: near-floor {w['count_near_floor']}, numpy {want}")
    check(abs(w["average_covariance"] - 12 * cb) <= 1e-12 * 12 * vb,
          f"window {w['window_start']}: average covariance {w['average_covariance']} vs numpy {12 * cb}")

# The share plot's caption states the diversifiable share left at N = M:
# (vbar - cbar)/M over E[var(M)] from numpy (design.md section 2), to the
# caption's two decimals.
import re
caps = {p["name"]: p["caption"] for p in summary["plots"]["plots"]}
found = re.search(r"securities ([0-9.]+)% remains at N = ([0-9]+),", caps.get("share", ""))
share_m = 100 * ((vbar - cbar) / m) / (vbar / m + (1 - 1 / m) * cbar)
check(found is not None and int(found.group(2)) == m and found.group(1) == "%.2f" % share_m,
      f"share caption: {found.group(0) if found else caps.get('share')!r}, numpy {share_m:.2f}% at N = {m}")
check("zero at N = M" in caps.get("tracking", ""), "the tracking caption does not say the error is zero at N = M")

# exact.dat: every count 1..M, 100 * expected_sd to 10 significant digits.
exact = {}
with open(os.path.join(out, "exact.dat")) as fp:
    for line in fp:
        if not line.startswith("#"):
            f = line.split()
            exact[int(f[0])] = float(f[1])
check(sorted(exact) == list(range(1, m + 1)), "exact.dat holds every count 1..M")
for row in summary["curve"]["curve"]:
    want = float("%.10g" % (100 * row["expected_sd"]))
    check(exact.get(row["n"]) == want, f"exact.dat at {row['n']}: {exact.get(row['n'])} vs {want}")

# Label layout, checked on the written scripts and data with geometry of
# its own: the frame from each script's "set lmargin/rmargin/tmargin/
# bmargin at screen" lines on the 1000 x 640 canvas, the axes from its
# xrange and yrange, and text 7.0 pixels a character (gnuplot 5.4's
# pngcairo draws these labels in Sans 9 at 6.2 to 6.4 pixels a character,
# measured by hand on a render).
CHAR_PX, W, H = 7.0, 1000, 640


def script_geometry(path):
    g = {"log": False}
    for line in open(path):
        f = line.split()
        if line.startswith("set logscale x"):
            g["log"] = True
        elif len(f) == 5 and f[0] == "set" and f[1].endswith("margin") and f[2:4] == ["at", "screen"]:
            g[f[1]] = float(f[4])
        elif len(f) == 3 and f[:2] == ["set", "xrange"]:
            g["x"] = [float(v) for v in f[2].strip("[]").split(":")]
        elif len(f) == 3 and f[:2] == ["set", "yrange"]:
            g["y"] = [float(v) for v in f[2].strip("[]").split(":")]
    return g


def px(g, x, y):
    (x0, x1), (y0, y1) = g["x"], g["y"]
    t = (np.log(x) - np.log(x0)) / (np.log(x1) - np.log(x0)) if g["log"] else (x - x0) / (x1 - x0)
    return (W * (g["lmargin"] + t * (g["rmargin"] - g["lmargin"])),
            H * (g["bmargin"] + (y - y0) / (y1 - y0) * (g["tmargin"] - g["bmargin"])))


rules = []
with open(os.path.join(out, "rules.dat")) as fp:
    for line in fp:
        if not line.startswith("#"):
            head, label = line.split('"')[0].split(), line.split('"')[1]
            rules.append([float(v) for v in head] + [label])
check(len(rules) == 9, f"rules.dat: {len(rules)} marks, expected the demo's 9 (10 rules; alexeev-tapon and alexeev-tapon-sampled share one mark at the same count)")
sampled = [[float(v) for v in l.split()] for l in open(os.path.join(out, "sampled.dat")) if not l.startswith("#")]
for script, hcol in (("risk.gp", 2), ("risk-log.gp", 4)):
    g = script_geometry(os.path.join(out, script))
    for i, ri in enumerate(rules):
        xi, yi = px(g, ri[0], ri[hcol])
        w = CHAR_PX * len(ri[6])
        lo, hi = (xi - 5 - w, xi - 5) if ri[hcol + 1] else (xi + 5, xi + 5 + w)
        check(lo >= W * g["lmargin"] - 1 and hi <= W * g["rmargin"] + 1, f"{script}: label '{ri[6]}' leaves the frame")
        for rj in rules:
            if rj is ri:
                continue
            xj, yj = px(g, rj[0], rj[hcol])
            # leader j rises to yj; it strikes label i when it passes i's row
            check(not (lo - 2 <= xj <= hi + 2 and yj >= yi), f"{script}: the leader of '{rj[6]}' strikes '{ri[6]}'")
        # the label's row clears the curve and the band under its span
        under = [exact[n] for n in exact if lo <= px(g, n, 0)[0] <= hi]
        under += [s[3] for s in sampled if lo <= px(g, s[0], 0)[0] <= hi]
        check(all(v < ri[hcol] for v in under), f"{script}: '{ri[6]}' sits on the curve or the band")

g = script_geometry(os.path.join(out, "funds.gp"))
pts = [px(g, n, v) for n, v in sorted(exact.items()) if g["x"][0] <= n <= g["x"][1] and v <= g["y"][1]]
line_pts = []
for (xa, ya), (xb, yb) in zip(pts, pts[1:]):     # the curve as points a pixel apart
    k = int(max(abs(xb - xa), abs(yb - ya))) + 1
    line_pts += [(xa + (xb - xa) * t / k, ya + (yb - ya) * t / k) for t in range(k + 1)]
floor_y = px(g, g["x"][0], 100 * summary["universe"]["floor_sd"])[1]
nfunds = 0
for line in open(os.path.join(out, "funds.dat")):
    if line.startswith("#"):
        continue
    head, name = line.split('"')[0].split(), line.split('"')[1]
    x, y = px(g, float(head[4]), float(head[5]))
    w = CHAR_PX * len(name)
    x0, x1 = (x - w, x) if head[6] == "1" else (x, x + w)
    check(not any(x0 <= a <= x1 and y - 6 <= b <= y + 6 for a, b in line_pts), f"funds.gp: the curve strikes '{name}'")
    check(not (y - 6 <= floor_y <= y + 6), f"funds.gp: the floor strikes '{name}'")
    nfunds += 1
check(nfunds == 3, f"funds.dat: {nfunds} funds, expected the demo's 3")

# PNG signature and IHDR.
pngs = [p for p in summary["plots"]["plots"] if p["image"]]
check(len(pngs) >= 4, f"{len(pngs)} rendered plots, expected at least 4")
for p in pngs:
    with open(os.path.join(out, p["image"]), "rb") as fp:
        head = fp.read(24)
    check(head[:8] == b"\x89PNG\r\n\x1a\n", f"{p['image']}: not a PNG signature")
    check(head[12:16] == b"IHDR", f"{p['image']}: first chunk is not IHDR")
    w, h = struct.unpack(">II", head[16:24])
    check((w, h) == (1000, 640), f"{p['image']}: {w}x{h}, expected 1000x640")

print("check_report: %d failures" % len(failures))
sys.exit(1 if failures else 0)
