#!/usr/bin/env bash
# cli_check.sh - `holdcount check` and the data checks every command runs:
# a daily universe with planted mistakes (an unadjusted split, a split undone
# two days later, a stale run, a percent column, a price column, a return
# below -100%) gives each finding at its security and date; other commands
# warn with the count, --strict-data makes it exit 3; the demo gives no finding.
# The plants are written here; the expected dates are those of the rows
# they were planted in (numpy only generates the noise).
set -u
HC=${HOLDCOUNT:?}
PY=${PYTHON:-/usr/bin/python3}
T=${HOLDCOUNT_TEST_TMP:?}/cli_check
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

"$PY" "${HOLDCOUNT_SOURCE_DIR:?}/tests/planted_universe.py" "$T/u.csv"
read -r d40 d60 d62 d20 d30 <"$T/u.csv.dates"

"$HC" check "$T/u.csv" --format json >"$T/f.json" || fail "check exited $?"
"$PY" -c 'import json,sys
j = json.load(open(sys.argv[1]))
print("security,date,check,finding")
for f in j["findings"]:
    print(",".join([f["security"], f["date"], f["check"], f["finding"]]))' "$T/f.json" >"$T/f.csv"
want() { grep -q "^$1,$2,$3," "$T/f.csv" || fail "no $3 finding for $1 at '$2': $(cat "$T/f.csv")"; }
want LIR901 "$d40" split
want LIR902 "$d60" split
want LIR902 "$d62" split
want LIR903 "$d20" stale
want LIR904 "" percents
want LIR905 "" prices
want LIR906 "$d30" total-loss
[ "$(tail -n +2 "$T/f.csv" | wc -l)" = 7 ] || fail "expected 7 findings: $(cat "$T/f.csv")"
grep "^LIR901," "$T/f.csv" | grep -q "(not reversed)" || fail "LIR901's split should read not reversed"
grep "^LIR902,$d60," "$T/f.csv" | grep -q "reversed within" || fail "LIR902's jump should read reversed"

"$PY" - "$T/f.json" <<'PY' || fail "calendar: weekdays, days a week, periods a year"
import json, sys
j = json.load(open(sys.argv[1]))
assert j["weekdays"] == "Mon Tue Wed Thu Fri", j["weekdays"]
assert j["days_a_week"] == 5, j["days_a_week"]
# 5 days a week with no holidays: 5 * 365.2425 / 7 = 260.9 a year (not 365)
assert abs(j["calendar_periods_per_year"] - 260.9) < 3, j["calendar_periods_per_year"]
assert len(j["findings"]) == 7 and j["count_split"] == 3, j
PY

# every other command: a warning with the count, the figures still printed
"$HC" describe "$T/u.csv" --missing complete >/dev/null 2>"$T/err" || fail "describe exited $?"
grep -q "^holdcount describe: warning: 7 data-check findings, the first: LIR901 $d40: " "$T/err" \
	|| fail "describe's warning: $(cat "$T/err")"
"$HC" curve "$T/u.csv" --paths 0 --strict-data >/dev/null 2>"$T/err"; rc=$?
[ $rc = 3 ] || fail "curve --strict-data exited $rc, expected 3"
grep -q "^holdcount curve: error: 7 data-check findings" "$T/err" || fail "curve --strict-data: $(cat "$T/err")"
"$HC" check "$T/u.csv" --strict-data >/dev/null 2>&1; rc=$?
[ $rc = 3 ] || fail "check --strict-data with findings exited $rc, expected 3"

# the report folder carries the count too: summary.json's universe and summary.md
"$HC" report "$T/u.csv" -o "$T/rep" --force -q --paths 100 --bootstrap 0 --window 0 2>"$T/err" || fail "report exited $?: $(cat "$T/err")"
"$PY" -c 'import json,sys; u=json.load(open(sys.argv[1]))["universe"]; assert u["data_check_findings"] == 7 and u["data_check_split"] >= 1 and "LIR" in u["data_check_first"], u' "$T/rep/summary.json" \
	|| fail "report: summary.json's universe lacks the 7 data-check findings"
grep -q "^- data-check findings (\`holdcount check\` lists them): 7$" "$T/rep/summary.md" || fail "report: summary.md lacks the data-check count"

# the invented demo: no finding, month ends, 12 a year
demo="$HOLDCOUNT_SOURCE_DIR/data/demo-universe.csv"
"$HC" check "$demo" --strict-data --format json >"$T/demo.json" || fail "check --strict-data on the demo exited $?"
"$PY" -c 'import json,sys; j=json.load(open(sys.argv[1])); assert j["findings"] == [] and j["month_end"] is True and abs(j["calendar_periods_per_year"] - 12) < 0.01, j' "$T/demo.json" \
	|| fail "demo: findings or calendar"
"$HC" describe "$demo" >/dev/null 2>"$T/err"
[ ! -s "$T/err" ] || fail "describe on the demo wrote to stderr: $(cat "$T/err")"

# --bad-cells: a #N/A and a zero price stop every command naming the cell
# (status 3), or, with --bad-cells missing, become gaps that check counts
# and every command warns of, naming the first
printf 'date,LIR901,LIR902,LIR903\n2024-01-02,10,20,30\n2024-01-03,#N/A,21,31\n2024-01-04,11,0,29\n2024-01-05,12,22,30.5\n2024-01-08,11.5,21.5,31\n' >"$T/bad.csv"
"$HC" curve "$T/bad.csv" --prices --paths 0 >/dev/null 2>"$T/err"; rc=$?
[ $rc = 3 ] && grep -q "bad.csv:3:2: expected a number or a missing marker, found the spreadsheet error '#N/A'" "$T/err" \
	|| fail "curve on a #N/A price exited $rc: $(cat "$T/err")"
"$HC" check "$T/bad.csv" --prices --bad-cells missing --format json >"$T/bad.json" 2>"$T/err" || fail "check --bad-cells missing exited $?"
"$PY" -c 'import json,sys; j=json.load(open(sys.argv[1])); assert j["bad_cells"] == 2 and "bad.csv:3:2:" in j["bad_cell_first"], j' "$T/bad.json" \
	|| fail "check --bad-cells missing: count or first cell"
"$HC" curve "$T/bad.csv" --prices --bad-cells missing --paths 0 >/dev/null 2>"$T/err" || fail "curve --bad-cells missing exited $?"
grep -q "warning: 2 cells read as missing (--bad-cells missing), the first: .*bad.csv:3:2: '#N/A'" "$T/err" \
	|| fail "curve --bad-cells missing: no warning naming the first cell: $(cat "$T/err")"

[ $fails = 0 ] || { echo "cli_check: $fails failures"; exit 1; }
echo "cli_check: ok"
