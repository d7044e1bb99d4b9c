# Command-line tests for `holdcount audit`: exit statuses (0 pass, 1 policy
# failed, 2 usage, 3 data, 4 i/o: include/holdcount/error.h), the exact
# messages for bad input, the CSV contract and the bundled demo.
set -u
: "${HOLDCOUNT:?}" "${HOLDCOUNT_SOURCE_DIR:?}" "${HOLDCOUNT_TEST_TMP:?}"
T="$HOLDCOUNT_TEST_TMP/cli_audit"
rm -rf "$T" && mkdir -p "$T"
fails=0

# expect STATUS 'STDERR-SUBSTRING' -- ARGS...
expect() {
	local want="$1" msg="$2"
	shift 3
	"$HOLDCOUNT" "$@" >"$T/out" 2>"$T/err"
	local got=$?
	if [ "$got" != "$want" ]; then
		echo "FAIL: holdcount $* exited $got, expected $want"; cat "$T/err"; fails=$((fails + 1))
	elif [ -n "$msg" ] && ! grep -qF -- "$msg" "$T/err"; then
		echo "FAIL: holdcount $*: stderr lacks '$msg':"; cat "$T/err"; fails=$((fails + 1))
	fi
}

# A small invented universe: 6 securities, 10 months (numbers made up).
cat >"$T/u.csv" <<'EOF'
date,QA1,QA2,QA3,QA4,QA5,QA6
2010-01,0.0123,-0.0211,0.0305,0.0017,-0.0142,0.0231
2010-02,-0.0385,0.0142,-0.0067,0.0251,0.0188,-0.0109
2010-03,0.0219,0.0311,0.0158,-0.0204,0.0062,0.0347
2010-04,0.0071,-0.0153,-0.0236,0.0129,-0.0311,0.0045
2010-05,-0.0127,0.0268,0.0194,-0.0083,0.0217,-0.0192
2010-06,0.0342,0.0027,0.0081,0.0356,0.0109,0.0163
2010-07,-0.0066,-0.0299,-0.0147,-0.0121,-0.0058,-0.0274
2010-08,0.0195,0.0183,0.0263,0.0072,0.0296,0.0118
2010-09,-0.0241,0.0076,-0.0189,-0.0268,-0.0017,0.0052
2010-10,0.0154,-0.0048,0.0121,0.0203,0.0135,-0.0085
EOF
printf 'fund,id,weight\nWren,QA1,0.25\nWren,QA2,0.25\nWren,QA3,0.25\nWren,QA4,0.25\nLark,QA5,0.6\nLark,QA6,0.4\n' >"$T/ok.csv"

# passes with no policy; fails (1) with one, naming the fund and the rule
expect 0 "" -- audit "$T/u.csv" --holdings "$T/ok.csv" --paths 200
expect 1 "holdcount audit: 1 of 2 funds fails the policy: 'Lark' (min-holdings, max-weight)" -- \
	audit "$T/u.csv" --holdings "$T/ok.csv" --paths 200 --min-holdings 3 --max-weight 50%
expect 0 "" -- audit "$T/u.csv" --holdings "$T/ok.csv" --paths 0 --min-holdings 2 --max-weight 60%

# the CSV contract's leading columns, in order
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/ok.csv" --paths 100 --format csv >"$T/out.csv" 2>"$T/err"
want='fund,holdings,weight_sum,max_weight,top10_share,hhi,effective_holdings,sd,diversification_ratio,equivalent_count,sd_percentile,weighted_random_sd,passed,failed_rules'
case "$(head -1 "$T/out.csv")" in
"$want"*) ;;
*) echo "FAIL: csv header: $(head -1 "$T/out.csv")"; fails=$((fails + 1)) ;;
esac
[ "$(wc -l <"$T/out.csv")" -eq 3 ] || { echo "FAIL: csv rows: $(wc -l <"$T/out.csv")"; fails=$((fails + 1)); }

# JSON carries the per-screen detail
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/ok.csv" --paths 0 --format json --screens ucits >"$T/out.json" 2>"$T/err"
[ $? -eq 1 ] || { echo "FAIL: json run: expected status 1 (Lark's 60% breaks UCITS)"; fails=$((fails + 1)); }
"${PYTHON:-/usr/bin/python3}" - "$T/out.json" <<'EOF' || fails=$((fails + 1))
import json, sys
doc = json.load(open(sys.argv[1]))
funds, screens = doc["funds"], doc["screens"]
# nine parts per fund: four UCITS (issuer, 5/40, government issuer, group),
# the 1940 Act basket under both readings, the s. 851(b)(3) basket under
# both readings and its 25% issuer limit
assert len(funds) == 2 and len(screens) == 18, (len(funds), len(screens))
assert [f["fund"] for f in funds] == ["Wren", "Lark"], funds
lark = [s for s in screens if s["fund"] == "Lark" and s["screen"] == "ucits"]
assert lark[0]["passed"] is False and abs(lark[0]["figure"] - 0.6) < 1e-15, lark
assert lark[0]["required"] is True
assert funds[1]["passed"] is False, funds[1]
# failed_rules in JSON: an array of objects, each check with its deciding
# figure and limit (Lark: 60% in one issuer against UCITS's 10%, and both
# issuers above 5% making 100% against 40%; Directive 2009/65/EC Art. 52,
# from memory of the text)
assert funds[1]["failed_rules"] == [
    {"check": "ucits: largest issuer", "figure": funds[1]["failed_rules"][0]["figure"], "test": "<=", "limit": 0.1},
    {"check": "ucits: issuers above 5% together", "figure": 1.0, "test": "<=", "limit": 0.4}], funds[1]
assert abs(funds[1]["failed_rules"][0]["figure"] - 0.6) < 1e-15, funds[1]
assert funds[0]["failed_rules"][0]["figure"] == doc["failures"][0]["figure"], funds[0]
# the failures: an array of objects naming the check, its figure and limit
# (Wren's four 25% positions break the same two UCITS parts as Lark's 60/40)
assert doc["failures"] == [{"fund": f, "check": c, "figure": x, "test": "<=", "limit": l}
                           for f, big in (("Wren", 0.25), ("Lark", 0.6))
                           for c, x, l in (("ucits: largest issuer", big, 0.1),
                                           ("ucits: issuers above 5% together", 1.0, 0.4))], doc["failures"]
assert [f["verdict"] for f in funds] == ["failed", "failed"], funds
assert any("compliance counsel" in c for c in doc["cautions"])
EOF

# --table: the screens' and sectors' tables as CSV, from the same report as
# the JSON (hc_report_write_csv_part), so every cell equals the JSON's value
# (17 significant digits both ways); the sector weights against sums by hand
# of the weights above (Wren: QA1+QA2+QA4 in Fen = 0.75, QA3 in Moor = 0.25;
# Lark: QA5 in Moor = 0.6, QA6 in Fen = 0.4), and Lark's largest issuer,
# 60%, is the figure deciding the UCITS 10% single-issuer part (Directive
# 2009/65/EC Art. 52, from memory of the text).
printf 'id,sector\nQA1,Fen\nQA2,Fen\nQA3,Moor\nQA4,Fen\nQA5,Moor\nQA6,Fen\n' >"$T/sec.csv"
A=(audit "$T/u.csv" --holdings "$T/ok.csv" --sectors "$T/sec.csv" --paths 0)
"$HOLDCOUNT" "${A[@]}" --format json >"$T/t.json" 2>"$T/err"
"$HOLDCOUNT" "${A[@]}" --format csv --table screens >"$T/screens.csv" 2>"$T/err" || { echo "FAIL: --table screens exited $?"; fails=$((fails + 1)); }
"$HOLDCOUNT" "${A[@]}" --format csv --table sectors >"$T/sectors.csv" 2>"$T/err" || { echo "FAIL: --table sectors exited $?"; fails=$((fails + 1)); }
"$HOLDCOUNT" "${A[@]}" --format csv --table funds >"$T/funds-t.csv" 2>"$T/err"
"$HOLDCOUNT" "${A[@]}" --format csv >"$T/funds.csv" 2>"$T/err"
cmp -s "$T/funds.csv" "$T/funds-t.csv" || { echo "FAIL: --table funds differs from the default CSV"; fails=$((fails + 1)); }
"${PYTHON:-/usr/bin/python3}" - "$T/t.json" "$T/screens.csv" "$T/sectors.csv" <<'EOF' || fails=$((fails + 1))
import csv, json, sys
doc = json.load(open(sys.argv[1]))

def value(text, want):
    if text == "" or want is None:   # a cell with no value: empty, or its reason in words
        return None
    if isinstance(want, bool):
        return text == "true"
    if isinstance(want, int):
        return int(text)
    if isinstance(want, float):
        return float(text)
    return text

for path, key in ((sys.argv[2], "screens"), (sys.argv[3], "sectors")):
    rows = list(csv.DictReader(open(path, newline="")))
    js = doc[key]
    assert len(rows) == len(js) and len(rows) > 0, (key, len(rows), len(js))
    for row, obj in zip(rows, js):
        assert list(row) == list(obj), (key, list(row), list(obj))
        for k, v in row.items():
            assert value(v, obj[k]) == obj[k], (key, k, v, obj[k])
sectors = {(r["fund"], r["sector"]): float(r["weight"]) for r in csv.DictReader(open(sys.argv[3], newline=""))}
want = {("Wren", "Fen"): 0.75, ("Wren", "Moor"): 0.25, ("Lark", "Moor"): 0.6, ("Lark", "Fen"): 0.4}
assert set(sectors) == set(want), sectors
for k, w in want.items():
    assert abs(sectors[k] - w) < 1e-15, (k, sectors[k], w)
screens = list(csv.DictReader(open(sys.argv[2], newline="")))
lark = [r for r in screens if r["fund"] == "Lark" and r["screen"] == "ucits" and r["part"] == "largest issuer"]
assert len(lark) == 1 and lark[0]["passed"] == "false" and float(lark[0]["figure"]) == 0.6, lark
assert float(lark[0]["limit"]) == 0.1 and lark[0]["issuer"] == "QA5", lark
EOF
expect 2 "holdcount audit: --table sectors needs --sectors FILE" -- audit "$T/u.csv" --holdings "$T/ok.csv" --format csv --table sectors
expect 2 "holdcount audit: --table chooses the table of --format csv" -- audit "$T/u.csv" --holdings "$T/ok.csv" --table screens
expect 2 "--table" -- audit "$T/u.csv" --holdings "$T/ok.csv" --format csv --table missing

# a weight sum off 1 by more than 0.5% is a warning, not an error
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QA2,0.48\n' >"$T/off.csv"
expect 0 "holdcount audit: warning: $T/off.csv:2: fund 'Wren': weights sum to 0.98, not 1 (off by more than 0.5%); normalised" -- \
	audit "$T/u.csv" --holdings "$T/off.csv" --paths 0

# bad input: one message with file:line:column, exit status 3
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QA2,0.5\nMoss,QA1,0\nMoss,QA3,0\n' >"$T/empty.csv"
expect 3 "holdcount audit: $T/empty.csv:4:3: fund 'Moss' holds nothing: all its 2 weights are zero, expected at least one non-zero weight" -- \
	audit "$T/u.csv" --holdings "$T/empty.csv"
printf 'fund,id,weight,type\nWren,QA1,0.5,security\nWren,QA1,0.5,cash\n' >"$T/dup.csv"
expect 3 "holdcount audit: $T/dup.csv:3:2: id 'QA1' of fund 'Wren' repeats line 2 with another issuer, group or type, expected the same (repeated rows of an id are summed)" -- \
	audit "$T/u.csv" --holdings "$T/dup.csv"
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QA2,half\n' >"$T/nan.csv"
expect 3 "holdcount audit: $T/nan.csv:3:3: found 'half', expected a number (a weight such as 0.052 or 5.2%)" -- \
	audit "$T/u.csv" --holdings "$T/nan.csv"
printf 'fund,id,weight\nWren,QA1,0\nWren,QA2,0\n' >"$T/zero.csv"
expect 3 "holdcount audit: $T/zero.csv:2:3: fund 'Wren' holds nothing: all its 2 weights are zero" -- \
	audit "$T/u.csv" --holdings "$T/zero.csv"
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QZ9,0.5\n' >"$T/unknown.csv"
expect 3 "holdcount audit: $T/unknown.csv:3:2: id 'QZ9' of fund 'Wren' is not in the universe '$T/u.csv'" -- \
	audit "$T/u.csv" --holdings "$T/unknown.csv" --strict
# without --strict: risk on the rest, but on 50% of the weight the verdict is
# "insufficient data", exit 10 (HC_EINSUFFICIENT), unless --min-covered-weight allows it
expect 10 "holdcount audit: warning: 1 id of 'Wren' is not in the universe (carrying 50% of its weight); its risk figures use the rest" -- \
	audit "$T/u.csv" --holdings "$T/unknown.csv" --paths 0
grep -qxF "holdcount audit: 1 of 1 fund has insufficient data (risk figures on less than 95% of the invested weight): 'Wren' (50% covered, 1 of 2 holdings)" "$T/err" \
	|| { echo "FAIL: insufficient-data message: $(cat "$T/err")"; fails=$((fails + 1)); }
expect 0 "" -- audit "$T/u.csv" --holdings "$T/unknown.csv" --paths 0 --min-covered-weight 50%
expect 10 "" -- audit "$T/u.csv" --holdings "$T/unknown.csv" --paths 0 --min-covered-weight 50.01%
# a policy failure outranks insufficient data: exit 1
expect 1 "" -- audit "$T/u.csv" --holdings "$T/unknown.csv" --paths 0 --min-holdings 3
# a status line names ten funds at most, then how many more: twelve such
# funds (F01..F12, each QA1 and the unknown QZ9 at 50%)
{ echo "fund,id,weight"; for i in 01 02 03 04 05 06 07 08 09 10 11 12; do echo "F$i,QA1,0.5"; echo "F$i,QZ9,0.5"; done; } >"$T/twelve.csv"
names="'F01' (50% covered, 1 of 2 holdings)"
for i in 02 03 04 05 06 07 08 09 10; do names="$names, 'F$i' (50% covered, 1 of 2 holdings)"; done
expect 10 "" -- audit "$T/u.csv" --holdings "$T/twelve.csv" --paths 0 -q
# ... and the missing-id warnings: ten lines, then one counting the other two
[ "$(grep -c "warning: 1 id of 'F[0-9]*' is not in the universe" "$T/err")" -eq 10 ] && grep -q "warning: 1 id of 'F10'" "$T/err" &&
	grep -qxF "holdcount audit: warning: 2 more funds hold ids not in the universe (the missing table lists every such id)" "$T/err" \
	|| { echo "FAIL: twelve funds' missing-id warnings: $(cat "$T/err")"; fails=$((fails + 1)); }
grep -qxF "holdcount audit: 12 of 12 funds have insufficient data (risk figures on less than 95% of the invested weight): $names, and 2 more (the funds table's verdict column lists every fund)" "$T/err" \
	|| { echo "FAIL: twelve thin funds: $(grep -v warning "$T/err")"; fails=$((fails + 1)); }
names="'F01' (min-holdings)"
for i in 02 03 04 05 06 07 08 09 10; do names="$names 'F$i' (min-holdings)"; done
expect 1 "" -- audit "$T/u.csv" --holdings "$T/twelve.csv" --paths 0 -q --min-holdings 3
grep -qxF "holdcount audit: 12 of 12 funds fail the policy: $names, and 2 more (the funds table's verdict column lists every fund)" "$T/err" \
	|| { echo "FAIL: twelve failing funds: $(grep -v warning "$T/err")"; fails=$((fails + 1)); }
# ids missing from the universe: one warning line per such fund on stderr,
# in every format (a script reading the CSV or JSON hears it too), and
# under --quiet too: --quiet silences progress, not warnings (as the
# weight-sum warning).  Wren: QZ9 and QZ8 carry 3.1% + 46.9% = 50%; Fern holds
# nothing the universe knows; Oak misses 10%; Lark misses nothing.
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QZ9,0.031\nWren,QZ8,0.469\nFern,ZZ1,1\nOak,QA2,0.9\nOak,ZZ3,0.1\nLark,QA3,1\n' >"$T/gone.csv"
cat >"$T/gone.want" <<'EOF'
holdcount audit: warning: 2 ids of 'Wren' are not in the universe (carrying 50% of its weight); its risk figures use the rest
holdcount audit: warning: the only id of 'Fern' is not in the universe; it has no risk figures
holdcount audit: warning: 1 id of 'Oak' is not in the universe (carrying 10% of its weight); its risk figures use the rest
holdcount audit: 3 of 4 funds have insufficient data (risk figures on less than 95% of the invested weight): 'Wren' (50% covered, 1 of 3 holdings), 'Fern' (0% covered, 0 of 1 holdings), 'Oak' (90% covered, 1 of 2 holdings)
EOF
for fmt in table csv json; do
	"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/gone.csv" --paths 0 --format $fmt >"$T/out" 2>"$T/err"
	rc=$?
	[ $rc -eq 10 ] || { echo "FAIL: missing ids, --format $fmt: exit $rc"; fails=$((fails + 1)); }
	cmp -s "$T/err" "$T/gone.want" || { echo "FAIL: missing ids, --format $fmt: stderr"; cat "$T/err"; fails=$((fails + 1)); }
	"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/gone.csv" --paths 0 --format $fmt -q >"$T/out" 2>"$T/err"
	cmp -s "$T/err" "$T/gone.want" || { echo "FAIL: missing ids, --format $fmt -q: stderr"; cat "$T/err"; fails=$((fails + 1)); }
done
# the CSV's missing_count counts them (QZ9: one id, 50% of Wren's weight)
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/unknown.csv" --paths 0 --format csv -q >"$T/unknown-out.csv" 2>"$T/err"
"${PYTHON:-/usr/bin/python3}" - "$T/unknown-out.csv" <<'EOF' || fails=$((fails + 1))
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1], newline="")))
assert "missing_ids" not in rows[0], list(rows[0])
assert rows[0]["missing_count"] == "1" and float(rows[0]["missing_weight"]) == 0.5, rows[0]
EOF
printf 'fund,id,weight\nWren,QA1,1.2\nWren,QA2,-0.2\n' >"$T/short.csv"
expect 3 "found negative weight '-0.2', expected zero or more (short positions need --allow-short)" -- \
	audit "$T/u.csv" --holdings "$T/short.csv"
expect 0 "" -- audit "$T/u.csv" --holdings "$T/short.csv" --allow-short --paths 0

# usage errors: exit status 2
expect 2 "--holdings FILE is required" -- audit "$T/u.csv"
expect 2 "unknown screen 'ucit'" -- audit "$T/u.csv" --holdings "$T/ok.csv" --screens ucits,ucit
expect 2 "--max-sector-weight needs --sectors FILE" -- audit "$T/u.csv" --holdings "$T/ok.csv" --max-sector-weight 30%
expect 2 "holdcount audit: --sizes does not apply: the audit compares each fund at its own holding count (see 'holdcount audit --help')" -- \
	audit "$T/u.csv" --holdings "$T/ok.csv" --sizes 1-3
# a return history read as a covariance matrix: the matrix loader's message, data error
expect 3 "holdcount audit: $T/u.csv:2:1: row id '2010-01' does not match 'QA1' in column 2 of the header" -- \
	audit "$T/u.csv" --holdings "$T/ok.csv" --covariance
# --missing pairwise on complete data: nothing left with gaps, the usual audit
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/ok.csv" --paths 300 --format csv >"$T/complete.csv" 2>"$T/err"
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/ok.csv" --paths 300 --format csv --missing pairwise >"$T/pw.csv" 2>"$T/err"
cmp -s "$T/complete.csv" "$T/pw.csv" || { echo "FAIL: --missing pairwise on complete data differs"; fails=$((fails + 1)); }
expect 2 "holdcount audit: --repair-psd applies to a covariance matrix (--covariance) or to pairwise-complete covariances (--missing pairwise)" -- \
	audit "$T/u.csv" --holdings "$T/ok.csv" --repair-psd
expect 2 "--log-returns needs --prices" -- audit "$T/u.csv" --holdings "$T/ok.csv" --log-returns
HOLDCOUNT_THREADS=0 expect 2 "HOLDCOUNT_THREADS must be a whole number from 1" -- audit "$T/u.csv" --holdings "$T/ok.csv"
# help lists what audit accepts: --paths, --seed and --threads, not --sizes
"$HOLDCOUNT" audit --help >"$T/help" 2>&1
for o in --paths --seed --threads --holdings --min-holdings --screens; do
	grep -q -- "^ *$o " "$T/help" || { echo "FAIL: audit --help lacks $o"; fails=$((fails + 1)); }
done
grep -q -- "--sizes" "$T/help" && { echo "FAIL: audit --help lists --sizes, which audit refuses"; fails=$((fails + 1)); }
# a holdings file that does not exist: i/o error, 4
expect 4 "$T/none.csv" -- audit "$T/u.csv" --holdings "$T/none.csv"

# the bundled demo: three invented funds; the concentrated and the
# screen-breaking fund fail --screens all, the broad one passes
D="$HOLDCOUNT_SOURCE_DIR/data"
expect 1 "2 of 3 funds fail the policy: 'Lirrand Focus Fund A' (1940act) 'Lirrand Select Fund C' (ucits, 1940act)" -- \
	audit "$D/demo-universe.csv" --holdings "$D/demo-funds.csv" --sectors "$D/demo-sectors.csv" --screens all --paths 500

# the demo's tie: Focus Fund A holds four positions at 9.8% (LIR106 first in
# the file); the largest position and the largest issuer both name the
# smallest id, LIR046 (the rule in docs/audit.md)
"$HOLDCOUNT" audit "$D/demo-universe.csv" --holdings "$D/demo-funds.csv" --paths 0 --format json -q >"$T/demo.json" 2>"$T/err"
"${PYTHON:-/usr/bin/python3}" - "$T/demo.json" "$D/demo-funds.csv" <<'EOF' || fails=$((fails + 1))
import csv, json, sys
focus = json.load(open(sys.argv[1]))["funds"][0]
rows = [r for r in csv.DictReader(open(sys.argv[2], newline="")) if r["fund"] == focus["fund"]]
top = [r["id"] for r in rows if float(r["weight"]) == 0.098]
assert len(top) == 4 and top[0] == "LIR106" and min(top) == "LIR046", top
assert focus["max_weight_id"] == "LIR046" and focus["max_issuer"] == "LIR046", focus
EOF

# ---- the nightly exit statuses (include/holdcount/error.h, docs/audit.md):
# 0 pass, 1 policy failure, 10 insufficient data, 2 usage, 3 data, 4 i/o,
# 5 memory (7, interrupted, is tests/cli_signals.sh's)
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QA2,0.5\n' >"$T/n-pass.csv"
printf 'fund,id,weight\nWren,QA1,0.5\nWren,QA2,0.46\nWren,ZZ1,0.04\n' >"$T/n-thin.csv"
expect 0 "" -- audit "$T/u.csv" --holdings "$T/n-pass.csv" --paths 0 --min-holdings 2
expect 1 "holdcount audit: 1 of 1 fund fails the policy: 'Wren' (min-holdings)" -- audit "$T/u.csv" --holdings "$T/n-pass.csv" --paths 0 --min-holdings 3
expect 0 "" -- audit "$T/u.csv" --holdings "$T/n-thin.csv" --paths 0            # 96% covered
expect 10 "" -- audit "$T/u.csv" --holdings "$T/n-thin.csv" --paths 0 --min-covered-weight 97%
expect 2 "holdcount audit: --min-covered-weight must be between 0 and 1" -- audit "$T/u.csv" --holdings "$T/n-pass.csv" --min-covered-weight 150%
expect 2 "holdcount audit: --holdings-encoding expects utf-8, latin-1 or windows-1252, found 'ebcdic'" -- \
	audit "$T/u.csv" --holdings "$T/n-pass.csv" --holdings-encoding ebcdic
expect 3 "" -- audit "$T/u.csv" --holdings "$T/nan.csv"
expect 4 "" -- audit "$T/u.csv" --holdings "$T/none.csv"
"${PYTHON:-/usr/bin/python3}" -c '
import random, sys
random.seed(7)
ids = ["QB%03d" % i for i in range(400)]
with open(sys.argv[1], "w") as f:
    f.write("date," + ",".join(ids) + "\n")
    for t in range(400):
        f.write("%04d-%02d," % (1980 + t // 12, t % 12 + 1) + ",".join("%.4f" % random.uniform(-0.05, 0.05) for _ in ids) + "\n")
' "$T/big.csv"
expect 5 "" -- audit "$T/big.csv" --holdings "$T/n-pass.csv" --max-memory 1

# several --holdings files: all are read; a fund in two files is an error
# naming both; a Windows-1252 name (0x80, the euro sign) refused with file,
# line and column without --holdings-encoding, transcoded with it
printf 'fund,id,weight\nLark,QA5,0.6\nLark,QA6,0.4\n' >"$T/two.csv"
printf 'fund,id,weight\nSedge \x80 Fund,QA3,1\n' >"$T/cp1252.csv"
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/n-pass.csv" --holdings "$T/two.csv" --paths 0 --format csv -q >"$T/two-out.csv" 2>"$T/err" \
	|| { echo "FAIL: two holdings files: exit $?"; fails=$((fails + 1)); }
[ "$(cut -d, -f1 "$T/two-out.csv" | tr '\n' ' ')" = "fund Wren Lark " ] || { echo "FAIL: two holdings files: $(cat "$T/two-out.csv")"; fails=$((fails + 1)); }
expect 3 "holdcount audit: $T/ok.csv:6: fund 'Lark' is also in '$T/two.csv' (line 2), expected each fund in one holdings file" -- \
	audit "$T/u.csv" --holdings "$T/two.csv" --holdings "$T/ok.csv"
# one file given twice, by the same name or another (a symbolic link), is a
# usage error naming both, not every fund "in two files"
ln -sf two.csv "$T/two-link.csv"
expect 2 "holdcount audit: --holdings '$T/two.csv' and '$T/two.csv' are the same file; give each file once" -- \
	audit "$T/u.csv" --holdings "$T/two.csv" --holdings "$T/two.csv"
expect 2 "holdcount audit: --holdings '$T/two.csv' and '$T/two-link.csv' are the same file; give each file once" -- \
	audit "$T/u.csv" --holdings "$T/two.csv" --holdings "$T/ok.csv" --holdings "$T/two-link.csv"
expect 3 "holdcount audit: $T/cp1252.csv:2:1: found byte 0x80 at byte 7 of the cell, which is not UTF-8" -- \
	audit "$T/u.csv" --holdings "$T/cp1252.csv"
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/cp1252.csv" --holdings-encoding windows-1252 --paths 0 --format json -q >"$T/cp1252.json" 2>"$T/err" \
	|| { echo "FAIL: windows-1252: exit $?"; fails=$((fails + 1)); }
"${PYTHON:-/usr/bin/python3}" -c '
import json, sys
doc = json.loads(open(sys.argv[1], "rb").read().decode("utf-8"))
assert doc["funds"][0]["fund"] == "Sedge \u20ac Fund", doc["funds"][0]["fund"]
' "$T/cp1252.json" || fails=$((fails + 1))
# cash, a government security and a short in one file: the text table says
# each figure's basis
printf 'fund,id,value,type\nReed,CASH,"10,000.00",cash\nReed,QA1,"60,000.00",\nReed,QA2,"(5,000.00)",\nReed,QA3,"35,000.00",government security\n' >"$T/kinds.csv"
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/kinds.csv" --allow-short --paths 0 --format json -q >"$T/kinds.json" 2>"$T/err" \
	|| { echo "FAIL: kinds: exit $?"; fails=$((fails + 1)); }
"${PYTHON:-/usr/bin/python3}" -c '
import json, sys
f = json.load(open(sys.argv[1]))["funds"][0]
# by hand: net assets 100,000; cash 10%, QA1 60%, QA2 -5%, QA3 35% (government);
# the baskets count assets held, so the short QA2 adds nothing to them
want = {"holdings": 3, "cash_weight": 0.1, "government_weight": 0.35, "gross_exposure": 1.0,
        "net_exposure": 0.9, "short_exposure": 0.05, "max_weight": 0.6,
        "hhi": 0.6 ** 2 + 0.05 ** 2 + 0.35 ** 2, "basket_1940act_excluded": 0.1 + 0.35,
        "basket_1940act_capped": 0.1 + 0.35 + 0.05}
for k, v in want.items():
    assert abs(f[k] - v) < 1e-15, (k, f[k], v)
' "$T/kinds.json" || fails=$((fails + 1))
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/kinds.csv" --allow-short --paths 0 -q >"$T/kinds.txt" 2>"$T/err"
for s in "largest (net assets)" "HHI (invested, gross)" "covered weight (invested, gross)" \
	"statute figures are from memory of the text; verify with counsel" "s. 5(c)" "quarter end" "Art. 53"; do
	grep -qF -- "$s" "$T/kinds.txt" || { echo "FAIL: the text table lacks '$s'"; fails=$((fails + 1)); }
done

# a file name that is not UTF-8 (a Latin-1 e-acute, byte 0xE9) reaches the
# JSON as the system gave it; the writer puts U+FFFD in its place, so the
# JSON stays valid (RFC 8259 section 8.1: JSON text is UTF-8)
latin=$(printf 'ok-\351.csv')
cp "$T/ok.csv" "$T/$latin"
"$HOLDCOUNT" audit "$T/u.csv" --holdings "$T/$latin" --paths 0 --format json -q >"$T/latin-name.json" 2>"$T/err"
[ $? -eq 0 ] || { echo "FAIL: a Latin-1 file name: $(cat "$T/err")"; fails=$((fails + 1)); }
"${PYTHON:-/usr/bin/python3}" -c '
import json, sys
doc = json.loads(open(sys.argv[1], "rb").read().decode("utf-8"))
assert doc["holdings_file"].endswith("ok-\ufffd.csv"), doc["holdings_file"]
' "$T/latin-name.json" || fails=$((fails + 1))

# every JSON this test wrote parses (strict UTF-8, standard JSON: no NaN)
"${PYTHON:-/usr/bin/python3}" -c '
import glob, json, sys
paths = sorted(glob.glob(sys.argv[1] + "/*.json"))
assert len(paths) >= 5, paths
for p in paths:
    json.loads(open(p, "rb").read().decode("utf-8"), parse_constant=lambda c: (_ for _ in ()).throw(ValueError(c)))
' "$T" || { echo "FAIL: a JSON output does not parse"; fails=$((fails + 1)); }

if [ "$fails" -ne 0 ]; then
	echo "$fails failure(s)"
	exit 1
fi
echo "cli_audit: all passed"
