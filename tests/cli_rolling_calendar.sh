#!/usr/bin/env bash
# cli_rolling_calendar.sh - rolling windows anchored at the last date and
# aligned to calendar months: on a daily universe with holidays (one of them
# a month's last weekday) that ends mid-month, the newest window ends at the
# last date and every earlier one at the last trading day present in its
# month (expected ends computed here from the dates written, in Python);
# each window's averages equal numpy's on that window's slice (outside
# reference: numpy var/cov/corrcoef with ddof 1, annualised by the
# command's periods per year), whether the running sums slide (windows
# overlapping) or are rebuilt (windows apart); --step keeps the old
# period steps counted back from the last period.
set -u
HC=${HOLDCOUNT:?}
PY=${PYTHON:-/usr/bin/python3}
T=${HOLDCOUNT_TEST_TMP:?}/cli_rolling_calendar
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

"$PY" - "$T/u.csv" <<'PY'
import sys, datetime
import numpy as np
# weekdays from 2024-01-02 to 2024-06-20 (a Thursday, mid-month), without
# these invented holidays; 2024-03-29 and 2024-05-31 are their months' last
# weekdays, so March ends on the 28th and May on the 30th
holidays = {"2024-01-15", "2024-02-19", "2024-03-29", "2024-05-27", "2024-05-31"}
d, dates = datetime.date(2024, 1, 2), []
while d <= datetime.date(2024, 6, 20):
    if d.weekday() < 5 and d.isoformat() not in holidays:
        dates.append(d.isoformat())
    d += datetime.timedelta(days=1)
rng = np.random.default_rng(77)
m, t = 8, len(dates)
f = 0.01 * rng.standard_normal(t)
x = 0.0003 + f[:, None] + 0.015 * rng.standard_normal((t, m))
with open(sys.argv[1], "w") as out:
    out.write("date," + ",".join("LIR9%02d" % (i + 1) for i in range(m)) + "\n")
    for k in range(t):
        out.write(dates[k] + "," + ",".join(repr(float(v)) for v in x[k]) + "\n")
PY

"$HC" rolling "$T/u.csv" --missing complete --window 40 --format json >"$T/r40.json" 2>"$T/err" \
	|| fail "rolling --window 40 exited $?: $(cat "$T/err")"
"$HC" rolling "$T/u.csv" --missing complete --window 10 --format json >"$T/r10.json" 2>"$T/err" \
	|| fail "rolling --window 10 exited $?: $(cat "$T/err")"
"$HC" rolling "$T/u.csv" --missing complete --window 10 --step-months 2 --format json >"$T/r10s2.json" 2>"$T/err" \
	|| fail "rolling --step-months 2 exited $?: $(cat "$T/err")"
"$HC" rolling "$T/u.csv" --missing complete --window 40 --step 30 --format json >"$T/p30.json" 2>"$T/err" \
	|| fail "rolling --step 30 exited $?: $(cat "$T/err")"

"$PY" - "$T" <<'PY' || fail "window ends or figures"
import json, sys, csv
import numpy as np
T = sys.argv[1]
rows = list(csv.reader(open(f"{T}/u.csv")))[1:]
dates = [r[0] for r in rows]
x = np.array([[float(v) for v in r[1:]] for r in rows])
t = len(dates)
bad = 0
def check(cond, what):
    global bad
    if not cond:
        print("FAIL:", what); bad += 1

def month(d): return int(d[:4]) * 12 + int(d[5:7]) - 1
def calendar_ends(w, step):
    # the last index dated in each month step months apart, back from the last date's month
    ends, target = [t - 1], month(dates[-1])
    while True:
        target -= step
        ks = [k for k in range(t) if month(dates[k]) <= target]
        if not ks or ks[-1] + 1 < w:
            break
        ends.append(ks[-1])
    return ends[::-1]

def figures(j, name):
    ppy = j["periods_per_year"]
    for win in j["windows"]:
        k = dates.index(win["window_end"])
        w = j["window"]
        check(dates[k - w + 1] == win["window_start"], f"{name}: window ending {win['window_end']} starts "
              f"{win['window_start']}, expected {dates[k - w + 1]}")
        s = x[k - w + 1:k + 1]
        c = np.cov(s, rowvar=False, ddof=1)
        r = np.corrcoef(s, rowvar=False)
        m = c.shape[0]
        off = ~np.eye(m, dtype=bool)
        want = {"average_variance": np.mean(np.diag(c)) * ppy, "average_covariance": np.mean(c[off]) * ppy,
                "average_correlation": np.mean(r[off])}
        for key, v in want.items():
            check(abs(win[key] - v) <= 1e-9 * max(1e-12, abs(v)) + 1e-13,
                  f"{name} {win['window_end']}: {key} {win[key]!r}, numpy {v!r}")
        check(win["securities"] == 8, f"{name}: {win['securities']} securities")

for name, w, step in (("r40", 40, 1), ("r10", 10, 1), ("r10s2", 10, 2)):
    j = json.load(open(f"{T}/{name}.json"))
    got = [win["window_end"] for win in j["windows"]]
    want = [dates[k] for k in calendar_ends(w, step)]
    check(got == want, f"{name}: window ends {got}, expected {want}")
    check(j.get("step_months") == step and "step" not in j, f"{name}: step_months {j.get('step_months')}")
    check(got[-1] == dates[-1] == "2024-06-20", f"{name}: the newest window ends {got[-1]}")
    figures(j, name)
# March's last trading day is the 28th (the 29th a holiday), May's the 30th
j = json.load(open(f"{T}/r10.json"))
ends = [win["window_end"] for win in j["windows"]]
check(ends == ["2024-01-31", "2024-02-29", "2024-03-28", "2024-04-30", "2024-05-30", "2024-06-20"],
      f"r10: window ends {ends}")
# --step 30: periods counted back from the last, as before
j = json.load(open(f"{T}/p30.json"))
got = [win["window_end"] for win in j["windows"]]
want = [dates[k] for k in range(t - 1, 38, -30)][::-1]
check(got == want and j["step"] == 30, f"p30: window ends {got}, expected {want}")
figures(j, "p30")
sys.exit(bad > 0)
PY

# one window against describe on a --from/--to slice of the same file (the
# command's own figures for that stretch, as rolling.h promises)
read -r s e <<<"$("$PY" -c 'import json,sys; w=json.load(open(sys.argv[1]))["windows"][2]; print(w["window_start"], w["window_end"])' "$T/r40.json")"
"$HC" describe "$T/u.csv" --missing complete --from "$s" --to "$e" --format json >"$T/d.json" 2>/dev/null \
	|| fail "describe --from $s --to $e exited $?"
"$PY" - "$T/r40.json" "$T/d.json" <<'PY' || fail "the window ending $e differs from describe on its slice"
import json, sys
w = json.load(open(sys.argv[1]))["windows"][2]
d = json.load(open(sys.argv[2]))
for k in ("average_variance", "average_covariance", "average_correlation"):
    assert abs(w[k] - d[k]) <= 1e-9 * abs(d[k]), (k, w[k], d[k])
PY

# --step and --step-months together: a usage error
"$HC" rolling "$T/u.csv" --step 5 --step-months 1 >/dev/null 2>"$T/err"; rc=$?
[ $rc = 2 ] && grep -q "give one" "$T/err" || fail "--step with --step-months: exit $rc, $(cat "$T/err")"

# The report's windows follow the same calendar: a daily history of about
# three years ending mid-month, with its June 2022 month-end a holiday; the
# report's default step is 12 calendar months, so its rolling.csv must have
# the windows `rolling --step-months 12` prints (the same starts and ends;
# the figures are checked against numpy above), the newest ending at the
# last date and each earlier one at the last trading day of the same month
# a year before (expected ends computed here from the dates written).
"$PY" - "$T/d3.csv" <<'PY'
import sys, datetime
import numpy as np
d, dates = datetime.date(2021, 1, 4), []
while d <= datetime.date(2023, 8, 16):
    if d.weekday() < 5 and d.isoformat() not in ("2022-08-31", "2021-08-31"):
        dates.append(d.isoformat())
    d += datetime.timedelta(days=1)
rng = np.random.default_rng(78)
m, t = 6, len(dates)
x = 0.0003 + 0.01 * rng.standard_normal(t)[:, None] + 0.015 * rng.standard_normal((t, m))
with open(sys.argv[1], "w") as out:
    out.write("date," + ",".join("LIR8%02d" % (i + 1) for i in range(m)) + "\n")
    for k in range(t):
        out.write(dates[k] + "," + ",".join(repr(float(v)) for v in x[k]) + "\n")
PY
"$HC" report "$T/d3.csv" -o "$T/rep" --window 200 --paths 200 --bootstrap 50 -q 2>"$T/err" \
	|| fail "report on a daily history exited $?: $(cat "$T/err")"
"$HC" rolling "$T/d3.csv" --window 200 --step-months 12 --format csv >"$T/d3roll.csv" 2>"$T/err" \
	|| fail "rolling --step-months 12 exited $?: $(cat "$T/err")"
cmp -s <(cut -d, -f1,2 "$T/rep/rolling.csv") <(cut -d, -f1,2 "$T/d3roll.csv") ||
	fail "the report's windows differ from rolling --step-months 12"
"$PY" - "$T/rep/rolling.csv" <<'PY' || fail "the report's window ends"
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1])))
ends = [r["window_end"] for r in rows]
# 2023-08-16 (the last date), then the last trading day of August 2022: the
# 31st is a holiday, so the 30th (August 2021 has fewer than 200 weekdays
# before it)
want = ["2022-08-30", "2023-08-16"]
if ends != want:
    print("window ends", ends, "expected", want)
    sys.exit(1)
PY

[ $fails -eq 0 ] && echo "cli_rolling_calendar: ok"
exit $((fails > 0))
