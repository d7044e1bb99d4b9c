#!/usr/bin/env bash
# cli_sample.sh - sample control: --from/--to cut the periods before the
# missing-data policy (checked against numpy's covariance, ddof=1, of the
# securities complete between the dates), --exclude and --exclude-file
# leave securities out (listed as dropped), and bad values are refused.
set -u
HC=${HOLDCOUNT:?}
PY=${PYTHON:-/usr/bin/python3}
T=${HOLDCOUNT_TEST_TMP:?}/cli_sample
D=${HOLDCOUNT_SOURCE_DIR:?}/data/demo-universe.csv
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

"$HC" describe "$D" --missing complete --from 2012-06 --to 2020-05-31 --format json >"$T/d.json" || fail "describe exited $?"
"$PY" - "$D" "$T/d.json" <<'PY' || fail "--from/--to against numpy"
import csv, json, sys
import numpy as np
rows = list(csv.reader(open(sys.argv[1])))
j = json.load(open(sys.argv[2]))
body = [r for r in rows[1:] if "2012-06-30" <= r[0] <= "2020-05-31"]
cols = [[r[i] for r in body] for i in range(1, len(rows[0]))]
full = [c for c in cols if all(v != "" for v in c)]
x = np.array([[float(v) for v in c] for c in full])
a = np.cov(x, ddof=1); m = a.shape[0]
cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
assert j["periods"] == len(body) == 96, (j["periods"], len(body))
assert j["first_date"] == "2012-06-30" and j["last_date"] == "2020-05-31", j
assert j["securities"] == m, (j["securities"], m)
assert abs(j["average_covariance"] - 12 * cbar) <= 1e-12 * 12 * cbar, (j["average_covariance"], 12 * cbar)
PY
printf '# leave these out\nLIR003\n  LIR007  \n\n' >"$T/x.txt"
"$HC" describe "$D" --exclude LIR001,LIR002 --exclude-file "$T/x.txt" --format json >"$T/e.json" || fail "exclude exited $?"
"$PY" -c 'import json,sys
j = json.load(open(sys.argv[1]))
assert j["securities"] == 146, j["securities"]
got = sorted(d["id"] for d in j["dropped"] if d["reason"] == "excluded (--exclude)")
assert got == ["LIR001", "LIR002", "LIR003", "LIR007"], got' "$T/e.json" || fail "exclusions"
"$HC" describe "$D" --exclude LIR999 >/dev/null 2>"$T/err"; rc=$?
[ $rc = 3 ] && grep -q "excluded id 'LIR999' is not a security" "$T/err" || fail "unknown excluded id: exit $rc, $(cat "$T/err")"
"$HC" curve "$D" --from 2024-12 --paths 0 >/dev/null 2>"$T/err"; rc=$?
[ $rc = 2 ] && grep -q "leave 1 period" "$T/err" || fail "one period left: exit $rc, $(cat "$T/err")"
"$HC" curve "$D" --from 2024-13-01 --paths 0 >/dev/null 2>"$T/err"; rc=$?
[ $rc = 2 ] && grep -q "expects a date" "$T/err" || fail "bad date: exit $rc, $(cat "$T/err")"
# rolling's newest window ends at --to
"$HC" rolling "$D" --to 2022-12 --window 36 --step 12 --format csv >"$T/r.csv" || fail "rolling exited $?"
tail -1 "$T/r.csv" | cut -d, -f2 | grep -qx 2022-12-31 || fail "rolling's last window: $(tail -1 "$T/r.csv")"
[ $fails = 0 ] || { echo "cli_sample: $fails failures"; exit 1; }
echo "cli_sample: ok"
