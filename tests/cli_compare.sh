#!/usr/bin/env bash
# cli_compare.sh - `holdcount compare OLD NEW` and `report --previous DIR` on
# two reports of the invented demo universe made from different date ranges:
# "last year's" from its first 180 months (2005-2019, the CSV cut by rows)
# and this year's from all 240, where a --max-weight 10% policy is added so
# that one fund's verdict changes (the demo's Select Fund C holds 12% in one
# position; data/README.md).  The figures compared are checked against each
# folder's own summary.json and CSVs, and the securities in and out against
# the two CSV files read by Python.  A history with gaps is read period by
# period, so every security of the demo with returns stays in at both dates
# (docs/formats.md); the securities in and out come from the analyst's
# --exclude: last year's report left LIR148 out, this year's leaves LIR001
# out (neither is held by a demo fund).
set -u
HC=${HOLDCOUNT:?}
T=${HOLDCOUNT_TEST_TMP:?}/cli_compare
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
D=$HOLDCOUNT_SOURCE_DIR/data
FAST=(--paths 1000 --bootstrap 100 -q --holdings "$D/demo-funds.csv" --sectors "$D/demo-sectors.csv")

head -n 181 "$D/demo-universe.csv" >"$T/older.csv"
"$HC" report "$T/older.csv" -o "$T/old" --exclude LIR148 "${FAST[@]}" || fail "older report exited $?"
"$HC" report "$D/demo-universe.csv" -o "$T/new" --exclude LIR001 --max-weight 10% "${FAST[@]}" 2>/dev/null; rc=$?
[ $rc -eq 1 ] || fail "the new report with --max-weight 10%: exit $rc, expected 1 (a fund fails)"

# Text: the changed verdict is called out first, in the headline and the first row.
"$HC" compare "$T/old" "$T/new" >"$T/out.txt" 2>"$T/err"; rc=$?
[ $rc -eq 0 ] || fail "compare exited $rc: $(cat "$T/err")"
grep -q '^headline: *1 fund changed policy verdict: see the first rows$' "$T/out.txt" || fail "text headline: $(grep headline "$T/out.txt")"
sed -n '/^what changed$/,/^$/p' "$T/out.txt" | sed -n 3p | grep -Eq '^verdict +Lirrand Select Fund C passes the policy +yes +no +- +yes$' ||
	fail "the first row is not the changed verdict: $(sed -n '/^what changed$/,/^$/p' "$T/out.txt" | sed -n 3p)"

# CSV: the same table for scripts.
"$HC" compare "$T/old" "$T/new" --format csv >"$T/out.csv" || fail "compare --format csv exited $?"
[ "$(sed -n 1p "$T/out.csv")" = "section,item,old,new,change,changed" ] || fail "CSV header: $(sed -n 1p "$T/out.csv")"
[ "$(sed -n 2p "$T/out.csv")" = "verdict,Lirrand Select Fund C passes the policy,true,false,,true" ] ||
	fail "CSV first row: $(sed -n 2p "$T/out.csv")"
# A summary.json file reads as its folder.
"$HC" compare "$T/old/summary.json" "$T/new/summary.json" --format csv >"$T/files.csv" || fail "compare of two files exited $?"
diff <(sed 's|/summary.json||g' "$T/files.csv") "$T/out.csv" >/dev/null || fail "comparing the files differs from comparing the folders"

# JSON: every figure against the folders' own files and the CSVs read by Python.
"$HC" compare "$T/old" "$T/new" --format json >"$T/out.json" || fail "compare --format json exited $?"
python3 - "$T/out.json" "$T/old" "$T/new" "$T/older.csv" "$D/demo-universe.csv" <<'EOF' || fail "the JSON comparison disagrees with the reports (above)"
import csv, json, sys
out, old_dir, new_dir, old_csv, new_csv = sys.argv[1:]
c = json.load(open(out))
o, n = (json.load(open(d + "/summary.json")) for d in (old_dir, new_dir))
bad = []
def check(ok, what):
    if not ok:
        bad.append(what); print("FAIL:", what)
rows = {(r["section"], r["item"]): r for r in c["changes"]}
check(c["verdict_changes"] == 1, f"verdict_changes {c['verdict_changes']}")
check(c["changes"][0]["section"] == "verdict" and c["changes"][0]["changed"], "the first row is not a changed verdict")
check((c["old_period"], c["new_period"]) == ("2005-01-31 to 2019-12-31", "2005-01-31 to 2024-12-31"),
      f"periods {c['old_period']!r} {c['new_period']!r}")
for key, item in (("periods", "periods"), ("securities", "securities kept"), ("average_variance", "average variance a year"),
                  ("average_covariance", "average covariance a year"), ("average_correlation", "average correlation"),
                  ("floor_sd", "floor sd a year"), ("last_date", "last period")):
    r = rows[("universe", item)]
    check(r["old"] == o["universe"][key] and r["new"] == n["universe"][key], f"universe {item}: {r['old']} {r['new']}")
    if isinstance(r["old"], (int, float)):
        check(r["change"] == r["new"] - r["old"], f"universe {item}: change {r['change']} is not new - old")
check(rows[("universe", "periods")]["change"] == 60, "240 - 180 periods is not 60")
for side, summ in (("old", o), ("new", n)):
    for rule in summ["enough"]["rules"]:
        for key, item in (("count", "count"), ("count_p05", "interval 5%"), ("count_p95", "interval 95%")):
            check(rows[("rules", f"{rule['rule']}: {item}")][side] == rule[key], f"{side} {rule['rule']} {item}")
    for fund in summ["audit"]["funds"]:
        r = rows[("funds", f"{fund['fund']}: sd a year")]
        check(r[side] == fund["sd"], f"{side} {fund['fund']} sd")
        r = rows[("funds", f"{fund['fund']}: weight missing from the universe")]
        check(r[side] == fund["missing_weight"], f"{side} {fund['fund']} missing weight")
# securities in and out, from the CSVs themselves
def kept(path, excluded):
    # every security with returns in the file (read period by period), less the excluded one
    with open(path, newline="") as fp:
        rd = csv.reader(fp)
        head = next(rd)
        rows_ = list(rd)
    return {head[j] for j in range(1, len(head))
            if sum(r[j].strip() not in ("", "NA", "NaN", ".") for r in rows_) >= 2} - {excluded}
ko, kn = kept(old_csv, "LIR148"), kept(new_csv, "LIR001")
check(kn - ko == {"LIR148"} and ko - kn == {"LIR001"}, f"the test's own sets: in {sorted(kn - ko)} out {sorted(ko - kn)}")
got_in = {s["id"] for s in c["securities"] if s["change"] == "in"}
got_out = {s["id"] for s in c["securities"] if s["change"] == "out"}
check(got_in == kn - ko and got_out == ko - kn, f"securities in {sorted(got_in)} out {sorted(got_out)}; "
      f"from the CSVs in {sorted(kn - ko)} out {sorted(ko - kn)}")
check(len(ko) == o["universe"]["securities"] and len(kn) == n["universe"]["securities"], "kept counts differ from the CSVs")
check(rows[("universe", "securities out (kept before, not now)")]["new"] == len(ko - kn), "securities out count")
check(any(s in c["cautions"][1] for s in ("survivorship",)) or any("survivorship" in x for x in c["cautions"]), "no cautions")
sys.exit(1 if bad else 0)
EOF

# report --previous: the same comparison as a section of summary.md and report.html.
"$HC" report "$D/demo-universe.csv" -o "$T/new2" --exclude LIR001 --max-weight 10% --previous "$T/old" "${FAST[@]}" 2>/dev/null; rc=$?
[ $rc -eq 1 ] || fail "report --previous: exit $rc, expected 1"
grep -q '^## Since the last report$' "$T/new2/summary.md" || fail "summary.md has no 'Since the last report'"
grep -q '(its data: 2005-01-31 to 2019-12-31). \*\*1 fund changed policy verdict: see the first rows\.\*\*$' "$T/new2/summary.md" || fail "summary.md: no headline"
sed -n '/^## Since the last report/,/^## /p' "$T/new2/summary.md" | grep -m1 '^| [A-Z]' |
	grep -q '^| Lirrand Select Fund C passes the policy | verdict | yes | no | - |$' || fail "summary.md: the verdict is not the first changed row"
grep -q '<section id="since"' "$T/new2/report.html" || fail "report.html has no since section"
grep -q 'Changed since the last report: Lirrand Select Fund C passes the policy: NO (was yes)' "$T/new2/report.html" ||
	fail "report.html does not call out the changed verdict in its recommendation"
# without --previous there is no such section
grep -q 'Since the last report' "$T/new/summary.md" && fail "summary.md has a since section without --previous"

# Errors: a folder without a summary (exit 4), a file that is not one (exit 3), usage (exit 2).
mkdir -p "$T/empty"
"$HC" compare "$T/empty" "$T/new" 2>"$T/err"; rc=$?
[ $rc -eq 4 ] && grep -q "cannot read '$T/empty/summary.json'" "$T/err" || fail "empty folder: exit $rc, $(cat "$T/err")"
echo '{"a": 1}' >"$T/other.json"
"$HC" compare "$T/other.json" "$T/new" 2>"$T/err"; rc=$?
[ $rc -eq 3 ] && grep -q "not a holdcount report summary" "$T/err" || fail "not a summary: exit $rc, $(cat "$T/err")"
# (a name without .json: cli_json_outputs parses every *.json the suite leaves)
echo '{"a": ' >"$T/broken-summary"
"$HC" compare "$T/new" "$T/broken-summary" 2>"$T/err"; rc=$?
[ $rc -eq 3 ] && grep -q "not JSON" "$T/err" || fail "broken JSON: exit $rc, $(cat "$T/err")"
"$HC" compare "$T/new" 2>"$T/err"; rc=$?
[ $rc -eq 2 ] || fail "one argument: exit $rc, expected 2"
"$HC" report --demo -o "$T/bad" --previous "$T/empty" -q 2>"$T/err"; rc=$?
[ $rc -eq 4 ] && [ ! -e "$T/bad" ] || fail "report --previous of a folder without a summary: exit $rc, $(cat "$T/err")"

echo "cli_compare: $fails failures"
[ $fails -eq 0 ]
