#!/usr/bin/env bash
# cli_data_check_counts.sh - every command that reads a return history
# (describe, curve, enough, audit, rolling) carries the data checks' count
# in its JSON and text output, with the same fields as the report folder's
# summary.json (data_check_findings, data_check_first, data_check_KIND), and
# says how the universe was treated (treatment, alive_min/median/max).
# The planted universe is cli_check.sh's (an unadjusted split, a split undone
# two days later, a stale run, a percent column, a price column, a return
# below -100%): 7 findings, 3 of them split-like, planted by hand here (numpy
# only draws the noise), so the counts are known without running the checks.
# The demo universe has no finding (total 0, as cli_check.sh asserts through
# `holdcount check`).
set -u
HC=${HOLDCOUNT:?}
PY=${PYTHON:-/usr/bin/python3}
SRC=${HOLDCOUNT_SOURCE_DIR:?}
T=${HOLDCOUNT_TEST_TMP:?}/cli_data_check_counts
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

"$PY" "$SRC/tests/planted_universe.py" "$T/u.csv"
read -r d40 _ <"$T/u.csv.dates"
{ echo "fund,id,weight"; for i in 01 02 03 04 05 06 07 08 09 10; do echo "Fund LIR,LIR9$i,0.1"; done; } >"$T/h.csv"

# name, then the command line after `holdcount`
run() {
	local name=$1 fmt=$2; shift 2
	"$HC" "$@" --format "$fmt" >"$T/$name.$fmt" 2>"$T/$name.err"
	local rc=$?
	# audit: 0 or 1 (a fund fails the policy) or 10 (insufficient data) are answers
	case $rc in 0|1|10) ;; *) fail "$name ($fmt) exited $rc: $(head -c 300 "$T/$name.err")" ;; esac
}
cmds="describe curve enough audit rolling"
args() {
	case $1 in
	describe) echo describe "$2" ;;
	curve) echo curve "$2" --paths 0 ;;
	enough) echo enough "$2" --rules exact ;;
	audit) echo audit "$2" --holdings "$T/h.csv" --paths 100 ;;
	rolling) echo rolling "$2" --window 60 ;;
	esac
}
for c in $cmds; do
	# shellcheck disable=SC2046
	run "$c" json $(args "$c" "$T/u.csv")
	run "$c" table $(args "$c" "$T/u.csv")
	run "clean-$c" json $(args "$c" "$SRC/data/demo-universe.csv")
done

"$PY" - "$T" "$d40" $cmds <<'PY' || fail "the counts in the JSON outputs"
import json, sys
T, d40, cmds = sys.argv[1], sys.argv[2], sys.argv[3:]
bad = 0
def check(cond, what):
    global bad
    if not cond:
        print("FAIL:", what); bad += 1
# the planted universe: the counts by kind, the total, the first finding
want = {"data_check_findings": 7, "data_check_split": 3, "data_check_stale": 1,
        "data_check_percents": 1, "data_check_prices": 1, "data_check_total_loss": 1}
for c in cmds:
    j = json.load(open(f"{T}/{c}.json"))
    got = {k: v for k, v in j.items() if k.startswith("data_check_") and k != "data_check_first"}
    check(got == want, f"{c}: data-check counts {got}, expected {want}")
    check(j.get("data_check_first", "").startswith(f"LIR901 {d40}: return -50.12%"),
          f"{c}: first finding {j.get('data_check_first')!r}")
    # complete series: every one of the 10 securities alive in every period
    check(j.get("treatment") and (j.get("alive_min"), j.get("alive_median"), j.get("alive_max")) == (10, 10, 10),
          f"{c}: treatment {j.get('treatment')!r}, alive {j.get('alive_min')}/{j.get('alive_median')}/{j.get('alive_max')}")
    # the demo: no finding, the count still there
    k = json.load(open(f"{T}/clean-{c}.json"))
    check(k.get("data_check_findings") == 0, f"clean {c}: data_check_findings {k.get('data_check_findings')!r}, expected 0")
    check(not [x for x in k if x.startswith("data_check_") and x != "data_check_findings"],
          f"clean {c}: data-check fields beyond the total: {[x for x in k if x.startswith('data_check_')]}")
    # the demo has delisted and late-listed securities: fewer alive than the most
    check(k.get("treatment") and 0 < k["alive_min"] < k["alive_max"] and k["alive_min"] <= k["alive_median"] <= k["alive_max"],
          f"clean {c}: treatment {k.get('treatment')!r}, alive {k.get('alive_min')}/{k.get('alive_median')}/{k.get('alive_max')}")
sys.exit(bad > 0)
PY

# the text output: the total with where to see them, and a line a kind found
for c in $cmds; do
	grep -qE '^data-check findings: +7$' "$T/$c.table" \
		|| fail "$c: no 'data-check findings ... 7' line in the text: $(grep -i 'data-check' "$T/$c.table")"
	grep -qE '^data-check findings: split: +3$' "$T/$c.table" || fail "$c: no split count line in the text"
	grep -qE "^the first finding: +LIR901 $d40: " "$T/$c.table" || fail "$c: no first finding in the text"
	grep -qE '^securities alive per period, fewest: +10$' "$T/$c.table" || fail "$c: no alive line in the text"
done
# describe's CSV summary is key,value rows: the count is one of them
"$HC" describe "$T/u.csv" --format csv 2>/dev/null | grep -qx 'data_check_findings,7' \
	|| fail "describe --format csv: no data_check_findings,7 row"

# the report folder carries the same fields (summary.json's universe)
"$HC" report "$T/u.csv" -o "$T/rep" --paths 100 --bootstrap 20 --window 0 -q >/dev/null 2>&1 || fail "report exited $?"
"$PY" - "$T/rep/summary.json" "$T/describe.json" <<'PY' || fail "the report folder's count differs from describe's"
import json, sys
s = json.load(open(sys.argv[1]))["universe"]
d = json.load(open(sys.argv[2]))
keys = lambda j: {k: v for k, v in j.items() if k.startswith("data_check_")}
assert keys(s) == keys(d), (keys(s), keys(d))
PY

[ $fails -eq 0 ] && echo "cli_data_check_counts: ok"
exit $((fails > 0))
