"""check_report.py - the demo report folder against its own CSVs, numpy and
the PNG specification.

Runs `holdcount report` on the bundled demo and checks:
  - summary.json parses (Python's json) and every cell of curve.csv,
    enough.csv, audit.csv, audit-screens.csv, audit-sectors.csv and
    audit-failures.csv equals
    the same cell of summary.json to the last digit (both are printed with
    17 significant digits, so float equality is exact);
  - the exact curve against numpy on the same data, read period by period
    (the demo has listings and delistings; design.md section 12), times 12
    (rtol 1e-12, since both sum in a different order);
  - the rolling windows, in by default: every window's securities, floor
    and near-floor count against numpy on that window, the newest ending
    at the last month;
  - summary.json's universe.alive (securities with a return per year) against
    a count of the CSV's cells by calendar year;
  - exact.dat carries 100 * expected_sd to its 10 significant digits;
  - the plots' labels: no rule's leader line strikes another rule's label
    and no label sits on the curve or the band (risk.gp, risk-log.gp), and
    the curve and the floor strike no fund's name (funds.gp), from the
    scripts' own frame and axes and a measured text width;
  - each PNG is a PNG (signature, PNG specification 1.2 section 12.12) whose
    IHDR says 1000 x 640 (section 4.1.1);
  - the tail section: tail.csv carries the very columns of curve.csv (the
    same random portfolios), tail.dat 100 times them; the equal-weight
    universe's own expected shortfall (95%, 99%) and maximum drawdown
    against numpy on its return series (each month the mean return of the
    securities listed then), and every portfolio at N = M equal to it;
  - ending wealth, on the demo's securities with no gap (a complete
    history; the demo itself has gaps and gets the reason instead): with a
    horizon of the whole sample (one window) the universe's ending wealth,
    rebalanced and bought and held, against numpy's products of the
    returns, and no portfolio of N = M behind the universe.
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
subprocess.run([HC, "report", "--demo", "--force", "-q", "-o", out, "--paths", "2000", "--bootstrap", "200"],
               check=True)
with open(os.path.join(out, "summary.json")) as fp:
    summary = json.load(fp)

for name, section, table in (("curve.csv", "curve", "curve"), ("enough.csv", "enough", "rules"),
                             ("audit.csv", "audit", "funds"), ("audit-screens.csv", "audit", "screens"),
                             ("audit-sectors.csv", "audit", "sectors"), ("audit-failures.csv", "audit", "failures"),
                             ("rolling.csv", "rolling", "windows"), ("tail.csv", "tail", "tail")):
    with open(os.path.join(out, name), newline="") as fp:
        rows = list(csv.DictReader(fp))
    js = summary[section][table]
    # the demo's funds fail no policy (none is asked for): its failures table is empty
    check(len(rows) == len(js) and (len(rows) > 0 or name == "audit-failures.csv"),
          f"{name}: {len(rows)} rows, summary.json {len(js)}")
    for i, (row, obj) in enumerate(zip(rows, js)):
        check(list(row.keys()) == list(obj.keys()), f"{name}: row {i} keys differ from summary.json")
        for k, v in row.items():
            a, b = cell_value(v), obj.get(k)
            if isinstance(b, bool) or isinstance(a, bool):
                check(a == b or str(b).lower() == v, f"{name} row {i} {k}: {v!r} vs {b!r}")
            elif k == "failed_rules" and isinstance(b, list):
                # JSON: one object per failed check ("rule" or "rule: part");
                # CSV: the failed rules' names joined by ';'
                names = sorted({x["check"].split(":")[0] for x in b})
                check(sorted(v.split(";")) == names if v else not b,
                      f"{name} row {i} {k}: csv {v!r}, json {b!r}")
            elif b == "":
                # CSV writes empty text and no value alike (an empty cell)
                check(v == "", f"{name} row {i} {k}: csv {v!r}, json ''")
            elif k == "equivalent_count" and b is None and v != "":
                # no count: the CSV gives the reason, the JSON null and below_floor
                check(v == "below the floor" and obj.get("below_floor") is True,
                      f"{name} row {i} {k}: csv {v!r}, json null, below_floor {obj.get('below_floor')!r}")
            else:
                check(a == b, f"{name} row {i} {k}: csv {v!r}, json {b!r}")

# numpy reference on the demo, monthly, read period by period (the default
# --missing alive; design.md section 12, docs/mathematics.md "Ragged
# histories"), written here independently of src/periodic.c: each security
# centred on its own mean over the months it is listed, then per month the
# listed securities' mean xbar_t and cross-sectional variance s2_t (ddof=1):
# E[var(N)] = sum_t [xbar_t^2 + max(0, 1/N - 1/M_t) s2_t] / (T - 1).
with open(os.path.join(SRC, "data", "demo-universe.csv"), newline="") as fp:
    data = list(csv.reader(fp))
cols = list(zip(*data[1:]))[1:]
MISSING = ("", "NA", "NaN", ".")


def ragged(columns):
    x = np.array([[np.nan if v in MISSING else float(v) for v in c] for c in columns])
    x = x[np.sum(~np.isnan(x), axis=1) >= 2]
    x = x - np.nanmean(x, axis=1, keepdims=True)
    alive = ~np.isnan(x)
    mt = alive.sum(axis=0)
    xbar = np.where(mt > 0, np.nansum(x, axis=0) / np.maximum(mt, 1), 0.0)
    s2 = np.where(mt > 1, np.nansum((x - xbar) ** 2, axis=0) / np.maximum(mt - 1, 1), 0.0)
    t = x.shape[1]

    def ev(n):
        return (np.sum(xbar ** 2) + np.sum(np.maximum(0.0, 1.0 / n - 1.0 / np.maximum(mt, 1)) * s2)) / (t - 1)

    def te2(n):
        return np.sum(np.maximum(0.0, 1.0 / n - 1.0 / np.maximum(mt, 1)) * s2) / (t - 1)

    floor = np.sum(xbar ** 2 - np.where(mt > 0, s2 / np.maximum(mt, 1), 0.0)) / (t - 1)
    spread = np.sum(s2) / (t - 1)
    return x.shape[0], ev, te2, floor, spread, np.sum(xbar ** 2) / (t - 1)


m, ev_of, te2_of, floor, spread, uvar = ragged(cols)
check(summary["curve"]["securities"] == m, f"securities {summary['curve']['securities']} vs numpy {m}")
for row in summary["curve"]["curve"]:
    n = row["n"]
    ev = 12 * ev_of(n)
    check(abs(row["expected_variance"] - ev) <= 1e-12 * ev, f"E[var]({n}) {row['expected_variance']} vs numpy {ev}")
    te2 = 12 * te2_of(n)
    check(abs(row["expected_tracking_error"] ** 2 - te2) <= 1e-12 * 12 * (floor + spread),
          f"TE({n}) {row['expected_tracking_error']} vs numpy sqrt {te2}")
check(abs(summary["universe"]["floor_sd"] - np.sqrt(12 * floor)) <= 1e-12, "floor sd vs numpy")

# universe.alive (the "securities with a return, by year" table of
# summary.md and report.html) counted from the CSV itself: per calendar
# year of the date column, its periods and the fewest and most securities
# with a value in one of them.
by_year = {}
for row in data[1:]:
    n = sum(1 for v in row[1:] if v not in ("", "NA", "NaN", "."))
    by_year.setdefault(int(row[0][:4]), []).append(n)
want = [{"year": y, "periods": len(c), "fewest": min(c), "most": max(c)} for y, c in sorted(by_year.items())]
check(summary["universe"].get("alive") == want, f"universe.alive {summary['universe'].get('alive')!r} vs the CSV {want!r}")
check(min(r["fewest"] for r in want) < max(r["most"] for r in want), "the demo's alive counts vary (the check can fail)")

# audit.csv's missing_count (a count, so named; there is no missing_ids
# column) against the demo files themselves: per fund, the ids of
# demo-funds.csv that are not securities of demo-universe.csv (every one
# is kept when read period by period).
complete_ids = set(data[0][1:])
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
# against numpy window by window, read period by period as above within
# each window (each security centred on its own mean in the window): the
# securities listed in it, the floor (average covariance) and the
# near-floor count, the smallest N with E[var(N)] <= (1 + x)^2 floor at the
# default x = 10% (design.md section 5).
dates = [row[0] for row in data[1:]]
windows = summary["rolling"]["windows"]
check(len(windows) == 16, f"{len(windows)} rolling windows, expected (240 - 60)/12 + 1 = 16")
check(summary["rolling"]["window"] == 60 and summary["rolling"].get("step_months") == 12 and "step" not in summary["rolling"],
      "rolling window and calendar step not 60 periods and 12 months")
check(windows[-1]["window_end"] == dates[-1], "the newest rolling window does not end at the last month")
for w in windows:
    lo, hi = dates.index(w["window_start"]), dates.index(w["window_end"])
    check(hi - lo + 1 == 60, f"window {w['window_start']}: {hi - lo + 1} periods")
    mw, ev_w, _, fl_w, sp_w, _ = ragged([c[lo:hi + 1] for c in cols])
    want = next((n for n in range(1, mw + 1) if ev_w(n) <= 1.1 ** 2 * fl_w), None)
    check(w["securities"] == mw, f"window {w['window_start']}: {w['securities']} securities, numpy {mw}")
    check(w["count_near_floor"] == want, f"window {w['window_start']}: near-floor {w['count_near_floor']}, numpy {want}")
    check(abs(w["average_covariance"] - 12 * fl_w) <= 1e-12 * 12 * (fl_w + sp_w),
          f"window {w['window_start']}: average covariance {w['average_covariance']} vs numpy {12 * fl_w}")

# The share plot's caption states the diversifiable share left at N = M:
# (vbar - cbar)/M over E[var(M)] from numpy (design.md section 2; read
# period by period, vbar - cbar is the summed cross-sectional variance), to
# the caption's two decimals.
import re
caps = {p["name"]: p["caption"] for p in summary["plots"]["plots"]}
found = re.search(r"securities ([0-9.]+)% remains at N = ([0-9]+),", caps.get("share", ""))
share_m = 100 * (spread / m) / ev_of(m)
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
# xrange and yrange, and text 8.6 pixels a character (gnuplot 5.4's
# pngcairo draws these labels in Sans 9 at 6.2 to 6.4 pixels a character,
# measured by hand on a render; they are drawn in Sans 11 now, so 7.0 for
# Sans 9 scaled by 11/9).
CHAR_PX, W, H = 8.6, 1000, 640


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
check(len(rules) == 10, f"rules.dat: {len(rules)} marks, expected the demo's 10 (10 rules, the exact alexeev-tapon rule included: on a history read period by period, the report's default, it comes from the per-period mean and the pairwise-complete spread)")
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

# ---- the tail section ------------------------------------------------------
# tail.csv: the measures' columns of curve.csv itself (one pass of the same
# random portfolios), cell for cell; tail.dat: 100 * es95 to 10 digits.
with open(os.path.join(out, "tail.csv"), newline="") as fp:
    tail_rows = list(csv.DictReader(fp))
with open(os.path.join(out, "curve.csv"), newline="") as fp:
    curve_rows = {r["n"]: r for r in csv.DictReader(fp)}
check(len(tail_rows) == len(curve_rows) and len(tail_rows) > 10, f"tail.csv: {len(tail_rows)} rows, curve.csv {len(curve_rows)}")
for row in tail_rows:
    for k, v in row.items():
        check(curve_rows[row["n"]].get(k) == v, f"tail.csv n={row['n']} {k}: {v!r}, curve.csv {curve_rows[row['n']].get(k)!r}")
dat = [l.split() for l in open(os.path.join(out, "tail.dat")) if not l.startswith("#")]
check(len(dat) == len(tail_rows), "tail.dat rows")
for d, row in zip(dat, tail_rows):
    want = [float("%.10g" % (100 * float(row[k]))) for k in ("es95_mean", "es95_p05", "es95_p50", "es95_p95")]
    check(int(d[0]) == int(row["n"]) and [float(v) for v in d[1:]] == want, f"tail.dat row {d} vs tail.csv {want}")


def es(r, p):
    """Historical expected shortfall (docs/measures.md; Acerbi & Tasche 2002):
    the mean loss in the worst T p periods, the boundary one by its fraction."""
    x = np.sort(r)
    tp = len(r) * p
    f = int(np.floor(tp + 1e-9))
    return -(x[:f].sum() + (tp - f) * (x[f] if f < len(x) else 0.0)) / tp


def max_drawdown(r):
    """Largest fall of the compounded path from a prior peak, the start a peak
    (Magdon-Ismail & Atiya 2004)."""
    w = np.cumprod(1 + r)
    peak = np.maximum.accumulate(np.concatenate(([1.0], w)))[1:]
    return float(np.max(1 - w / peak))


# The equal-weight universe of a history read period by period: each month
# the mean return of the securities listed then (a security observed once
# has no mean and is left out; docs/measures.md "Histories with gaps").
x_raw = np.array([[np.nan if v in MISSING else float(v) for v in c] for c in cols])
x_raw = x_raw[np.sum(~np.isnan(x_raw), axis=1) >= 2]
alive = ~np.isnan(x_raw)
ubar = np.where(alive.sum(axis=0) > 0, np.nansum(x_raw, axis=0) / np.maximum(alive.sum(axis=0), 1), 0.0)
tl = summary["tail"]
for key, want in (("es95", es(ubar, 0.05)), ("es99", es(ubar, 0.01)), ("max_drawdown", max_drawdown(ubar))):
    got = tl["universe_" + key]
    check(abs(got - want) <= 1e-12 * abs(want), f"universe {key}: {got!r}, numpy {want!r}")
    last = tl["tail"][-1]
    check(last["n"] == m and all(abs(last[f"{key}_{q}"] - want) <= 1e-12 * abs(want) for q in ("mean", "p05", "p50", "p95")),
          f"tail at N = M: {key} {[last[key + '_' + q] for q in ('mean', 'p05', 'p95')]} vs the universe's {want}")
# The demo has gaps: ending wealth over the default 10 years (120 months)
# follows windows of its own dates, and the counts stop at the fewest
# securities with a return in the first month of any window (docs/horizon.md,
# "Histories with gaps"), counted here from the file.
hz_d = summary["horizon"]
t_d = x_raw.shape[1]
bound_d = int(min(alive[:, s].sum() for s in range(0, t_d - 120 + 1)))
check(hz_d is not None and hz_d["horizon_periods"] == 120 and hz_d.get("paths_from", "").startswith("overlapping windows"),
      f"the demo (with gaps): no 120-month windowed horizon: {None if hz_d is None else (hz_d.get('horizon_periods'), hz_d.get('paths_from'))}")
if hz_d is not None:
    counts_d = [row["holdings"] for row in hz_d["horizon"]]
    want_d = [row["n"] for row in tl["tail"] if row["n"] <= bound_d]
    check(counts_d == want_d, f"the demo's horizon counts {counts_d[-3:]}, expected the curve's up to {bound_d}: {want_d[-3:]}")
caps = {p["name"]: p["caption"] for p in summary["plots"]["plots"]}
check("shortfall" in caps and ("%.2f%% a month" % (100 * es(ubar, 0.05))) in caps["shortfall"]
      and "(12 of the 240)" in caps["shortfall"], f"shortfall caption: {caps.get('shortfall')!r}")

# Ending wealth on the demo's securities with no gap, a complete history,
# over the whole sample (20 years of 240 months: one window, so every path is
# the same 240 months): the universe's own ending wealth is the product of
# (1 + its monthly return) rebalanced, and the mean of the securities' own
# products bought and held (docs/horizon.md; common-practice arithmetic).
full = [i for i, c in enumerate(cols) if all(v not in MISSING for v in c)]
comp = os.path.join(TMP, "complete.csv")
with open(comp, "w", newline="") as fp:
    w = csv.writer(fp)
    for row in data:
        w.writerow([row[0]] + [row[1 + i] for i in full])
out_c = os.path.join(TMP, "complete")
subprocess.run([HC, "report", comp, "--force", "-q", "-o", out_c, "--paths", "300", "--bootstrap", "0", "--window", "0",
                "--horizon", "20", "--horizon-paths", "400"], check=True)
with open(os.path.join(out_c, "summary.json")) as fp:
    sc = json.load(fp)
xc = np.array([[float(v) for v in cols[i]] for i in full])
rebal = float(np.prod(1 + xc.mean(axis=0)))
hold = float(np.mean(np.prod(1 + xc, axis=1)))
hz = sc["horizon"]
check(hz is not None and hz["horizon_periods"] == 240 and hz["paths"] == 400, "complete report: no 240-period horizon")
if hz is not None:
    last = hz["horizon"][-1]
    check(last["holdings"] == len(full), f"horizon's last count {last['holdings']}, expected M = {len(full)}")
    for wkey, want in (("rebal", rebal), ("hold", hold)):
        for q in ("p05", "p50", "p95", "mean"):
            check(abs(last[f"{wkey}_{q}"] - want) <= 1e-12 * want, f"N = M {wkey}_{q}: {last[wkey + '_' + q]!r}, numpy {want!r}")
        check(abs(hz[f"universe_{wkey}_p50"] - want) <= 1e-12 * want, f"universe_{wkey}_p50 vs numpy {want!r}")
        check(last[f"{wkey}_lag"] == 0, f"N = M {wkey}: {last[wkey + '_lag']} of portfolios behind the universe itself")
    # with one window the spread at N = 1 is across single securities alone:
    # the median of the 400 drawn securities' own growth lies within the
    # securities' range
    one = hz["horizon"][0]
    own = np.prod(1 + xc, axis=1)
    check(one["holdings"] == 1 and own.min() <= one["hold_p05"] <= one["hold_p50"] <= one["hold_p95"] <= own.max(),
          f"N = 1 ending wealth {one['hold_p05']}..{one['hold_p95']} outside the securities' {own.min()}..{own.max()}")
    check(os.path.getsize(os.path.join(out_c, "wealth.png")) > 0 and os.path.getsize(os.path.join(out_c, "lagging.png")) > 0,
          "complete report: no wealth.png or lagging.png")
    caps_c = {p["name"]: p["caption"] for p in sc["plots"]["plots"]}
    check("over 20 years (240 months)" in caps_c.get("wealth", "") and "the whole history, 240 months (one window"
          in caps_c.get("wealth", ""), f"wealth caption: {caps_c.get('wealth')!r}")

print("check_report: %d failures" % len(failures))
sys.exit(1 if failures else 0)
