#!/usr/bin/env bash
# cli_rolling.sh - `holdcount rolling` against `describe`, `enough` and numpy.
#
#  1. One window over the whole demo sample prints, digit for digit, the
#     averages `describe` prints and the counts and bootstrap percentiles
#     `enough --rules exact` prints with the same resampling (moving blocks of round(T^(1/3)), percentile intervals; same seed).
#  2. On an invented universe with late listings and delistings, every
#     window's securities, averages, floor and near-floor and
#     tracking-error counts agree with numpy (np.cov, ddof=1) on the
#     securities complete in that window, to 1e-12 relative; the counts
#     from the formulas of design.md section 3 solved by brute force.
#  3. The CSV header contract, and documented exit statuses for bad use.
#  4. `report --window` writes the same table as rolling.csv, its plot data
#     hold the same counts, and summary.json carries it.
set -euo pipefail
HC=${HOLDCOUNT:?}
SRC=${HOLDCOUNT_SOURCE_DIR:?}
PY=${PYTHON:-/usr/bin/python3}
TMP=${HOLDCOUNT_TEST_TMP:?}/rolling
rm -rf "$TMP"
mkdir -p "$TMP"
fail=0
say() { echo "FAIL: $*"; fail=1; }

# ---- 1. whole sample = describe and enough ----------------------------------
D=$SRC/data/demo-universe.csv
"$HC" rolling "$D" --window 240 --bootstrap 200 --format json > "$TMP/roll.json"
"$HC" describe "$D" --format json > "$TMP/describe.json"
"$HC" enough "$D" --rules exact --bootstrap 200 --bootstrap-kind block --block-length 6 --interval percentile --format json > "$TMP/enough.json"
"$PY" - "$TMP" <<'PY' || fail=1
import json, sys
d = sys.argv[1]
# Compare the JSON text of each number: the writers print 17 significant
# digits, so equal text is equal doubles.
def raw(path):
    return json.load(open(path), parse_float=str, parse_int=str)
r, de, en = raw(d + "/roll.json"), raw(d + "/describe.json"), raw(d + "/enough.json")
w = r["windows"]
bad = 0
if len(w) != 1:
    print("FAIL: expected one window, found", len(w)); sys.exit(1)
w = w[0]
for key in ("average_variance", "average_covariance", "average_correlation", "floor_sd"):
    if w[key] != de[key]:
        print("FAIL: %s: rolling %s, describe %s" % (key, w[key], de[key])); bad = 1
if w["securities"] != de["securities"]:
    print("FAIL: securities: rolling %s, describe %s" % (w["securities"], de["securities"])); bad = 1
if (w["window_start"], w["window_end"]) != (de["first_date"], de["last_date"]):
    print("FAIL: dates differ"); bad = 1
for rule in en["rules"]:
    name = "count_" + rule["rule"].replace("-", "_")
    for suffix, key in (("", "count"), ("_p05", "count_p05"), ("_p50", "count_p50"), ("_p95", "count_p95")):
        if w[name + suffix] != rule[key]:
            print("FAIL: %s%s: rolling %s, enough %s" % (name, suffix, w[name + suffix], rule[key])); bad = 1
sys.exit(bad)
PY

# ---- 2. numpy on an invented universe with listings -----------------------
"$PY" - "$TMP/u.csv" <<'PY'
import sys
import numpy as np
rng = np.random.default_rng(2385)
t, m = 150, 31
f = 0.0061 + 0.047 * rng.standard_normal(t)
x = (0.6 + 0.8 * rng.random(m))[None, :] * f[:, None] + (0.03 + 0.09 * rng.random(m))[None, :] * rng.standard_normal((t, m))
x[:41, 0] = np.nan        # listed late
x[97:, 1] = np.nan        # delisted
x[60, 2] = np.nan         # one gap
with open(sys.argv[1], "w") as out:
    out.write("date," + ",".join("R%02d" % (i + 1) for i in range(m)) + "\n")
    for k in range(t):
        out.write("%04d-%02d," % (1991 + k // 12, k % 12 + 1) +
                  ",".join("" if np.isnan(v) else repr(float(v)) for v in x[k]) + "\n")
PY
"$HC" rolling "$TMP/u.csv" --missing complete --window 36 --step 5 --format csv > "$TMP/u-roll.csv"
"$PY" - "$TMP/u.csv" "$TMP/u-roll.csv" <<'PY' || fail=1
import csv, math, sys
import numpy as np
rows = list(csv.reader(open(sys.argv[1])))
x = np.array([[float(c) if c else np.nan for c in r[1:]] for r in rows[1:]])
dates = [r[0] for r in rows[1:]]
out = list(csv.DictReader(open(sys.argv[2])))
P, W, S = 12.0, 36, 5
bad = 0
if len(out) != (len(x) - W) // S + 1:
    print("FAIL: %d windows, expected %d" % (len(out), (len(x) - W) // S + 1)); sys.exit(1)
def count(meets, m):
    return next((n for n in range(1, m + 1) if meets(n)), None)
for j, row in enumerate(out):
    # anchored at the last period: the newest window ends at the last date
    a = (len(x) - W) - (len(out) - 1 - j) * S
    win = x[a:a + W]
    keep = ~np.isnan(win).any(axis=0)
    y = win[:, keep]
    m = y.shape[1]
    c = np.cov(y, rowvar=False, ddof=1)
    r = np.corrcoef(y, rowvar=False)
    off = ~np.eye(m, dtype=bool)
    vbar, cbar, rbar = np.diag(c).mean(), c[off].mean(), r[off].mean()
    want = {"average_variance": vbar * P, "average_covariance": cbar * P,
            "average_correlation": rbar, "floor_sd": math.sqrt(cbar * P)}
    for k, v in want.items():
        got = float(row[k])
        if abs(got - v) > 1e-12 * abs(v):
            print("FAIL: window %d %s: %r, numpy %r" % (j, k, got, v)); bad = 1
    if int(row["securities"]) != m or row["window_start"][:7] != dates[a][:7] or row["window_end"][:7] != dates[a + W - 1][:7]:
        print("FAIL: window %d: securities or dates" % j); bad = 1
    ev = lambda n: vbar / n + (1 - 1 / n) * cbar
    nf = count(lambda n: math.sqrt(ev(n)) <= 1.1 * math.sqrt(cbar), m)
    te = count(lambda n: math.sqrt((vbar - cbar) * (1 / n - 1 / m) * P) <= 0.02, m)
    for k, v in (("count_near_floor", nf), ("count_tracking_error", te)):
        got = int(row[k]) if row[k] else None
        if got != v:
            print("FAIL: window %d %s: %r, formula %r" % (j, k, got, v)); bad = 1
sys.exit(bad)
PY

# ---- 3. contract and exit statuses ---------------------------------------------
head -1 "$TMP/u-roll.csv" | grep -q '^window_start,window_end,securities,average_variance,average_covariance,average_correlation,floor_sd,count_near_floor,count_marginal,count_next_holding,count_tracking_error,' \
	|| say "csv header: $(head -1 "$TMP/u-roll.csv")"
status() { set +e; "$HC" "$@" > "$TMP/out" 2> "$TMP/err"; echo $?; set -e; }
[ "$(status rolling "$TMP/u.csv" --window 151)" = 2 ] || say "window longer than the data: not exit 2"
grep -q "longer than the 150 periods" "$TMP/err" || say "window message: $(cat "$TMP/err")"
[ "$(status rolling "$TMP/u.csv" --step 0)" = 2 ] || say "step 0: not exit 2"
[ "$(status rolling "$TMP/u.csv" --rules band)" = 2 ] || say "sampled rule: not exit 2"
[ "$(status rolling "$TMP/u.csv" --missing pairwise --bootstrap 10)" = 2 ] || say "pairwise bootstrap: not exit 2"
[ "$(status rolling "$TMP/nothing.csv")" = 4 ] || say "missing file: not exit 4"
[ -s "$TMP/out" ] && say "output written on failure"
# Rule parameters read as `enough` reads them.
cmp -s <("$HC" rolling "$TMP/u.csv" --window 36 --marginal 0.2pp --format csv) \
	<("$HC" rolling "$TMP/u.csv" --window 36 --marginal 0.002 --format csv) || say "--marginal 0.2pp is not 0.002"
[ "$(status rolling "$TMP/u.csv" --marginal 2x)" = 2 ] || say "bad --marginal: not exit 2"
[ "$(status rolling "$TMP/u.csv" --premium 4%)" = 2 ] || say "--premium alone: not exit 2"
# Nothing half-written: --output appears only complete.
"$HC" rolling "$TMP/u.csv" --missing complete --window 36 --step 5 --format csv -o "$TMP/o.csv"
cmp -s "$TMP/o.csv" "$TMP/u-roll.csv" || say "--output differs from standard output"

# ---- 4. the report folder's rolling table and plot ---------------------------
rm -rf "$TMP/rep"
"$HC" report "$TMP/u.csv" -o "$TMP/rep" --window 36 --step 5 --paths 200 --bootstrap 20 --quiet \
	|| say "report --window failed"
# the report reads the history period by period (--missing alive), as rolling does by default
"$HC" rolling "$TMP/u.csv" --window 36 --step 5 --format csv >"$TMP/u-roll-alive.csv"
cmp -s "$TMP/rep/rolling.csv" "$TMP/u-roll-alive.csv" || say "report's rolling.csv differs from holdcount rolling"
[ -s "$TMP/rep/rolling.gp" ] && [ -s "$TMP/rep/rolling.dat" ] || say "no rolling plot script or data"
"$PY" - "$TMP/rep/rolling.dat" "$TMP/u-roll-alive.csv" "$TMP/rep/summary.json" <<'PY' || fail=1
import csv, json, sys
dat = [l.split() for l in open(sys.argv[1]) if not l.startswith("#")]
out = list(csv.DictReader(open(sys.argv[2])))
bad = len(dat) != len(out)
for d, o in zip(dat, out):
    want = [o["window_end"]] + [o[k] or "-" for k in
            ("count_near_floor", "count_marginal", "count_next_holding", "count_tracking_error", "count_statman_borrowing", "count_statman_lending")]
    bad |= d != want
if bad:
    print("FAIL: rolling.dat does not hold the windows' counts")
if len(json.load(open(sys.argv[3]))["rolling"]["windows"]) != len(out):
    print("FAIL: summary.json lacks the rolling windows"); bad = 1
sys.exit(bad)
PY
[ "$(status report "$TMP/u.csv" -o "$TMP/rep2" --window 0 --step 3)" = 2 ] || say "--step with --window 0: not exit 2"
[ -e "$TMP/rep2" ] && say "report folder left after a usage error"

[ $fail = 0 ] && echo "cli_rolling: ok"
exit $fail
