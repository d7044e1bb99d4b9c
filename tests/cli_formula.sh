#!/usr/bin/env bash
# holdcount formula: the exact curve from summary statistics.
# References (values from memory, as design.md section 11 records them):
#   Elton & Gruber (1977), "Risk Reduction and Portfolio Size: An Analytical
#   Solution", Journal of Business 50(4): expected variance 46.619/N +
#   7.058(1 - 1/N); rows N = 1, 10, infinity read 46.619, 11.014, 7.058
#   (printed table rounded: compare within 0.002).
#   Statman (1987), "How Many Stocks Make a Diversified Portfolio?", JFQA
#   22(3): the same model scaled by 52 weeks, expected annual sd 49.236% at
#   N = 1, 23.932% at 10, 19.158% in the limit (within 0.002).
set -u
. "$(dirname "$0")/lib.sh"
cli_begin cli_formula

# Elton & Gruber (1977), from memory: per-period scale, no annualisation.
"$HC" formula --average-variance 46.619 --average-covariance 7.058 --sizes 1,10,1000000 --format json >"$T/eg.json" \
	|| fail "formula (Elton & Gruber inputs) exit $?"
"$PY" - "$T/eg.json" <<'PY' || fail "Elton & Gruber (1977) table values"
import json, sys
d = json.load(open(sys.argv[1]))
rows = {r["n"]: r for r in d["curve"]}
ok = True
for n, want in ((1, 46.619), (10, 11.014)):
    got = rows[n]["expected_variance"]
    if abs(got - want) > 0.002:
        print("E&G N=%d: %.6f, table %.3f" % (n, got, want)); ok = False
# the limit: the floor, and N = 10^6 approaching it
if abs(d["floor_variance"] - 7.058) > 0.002 or abs(rows[1000000]["expected_variance"] - 7.058) > 0.002:
    print("E&G limit", d["floor_variance"], rows[1000000]["expected_variance"]); ok = False
if d["periods_per_year"] is not None or "not annualised" not in d["annualisation"]:
    print("scale statement", d["periods_per_year"], d["annualisation"]); ok = False
if d["securities"] is not None or d["universe"] != "unbounded": print("securities", d["securities"]); ok = False
# the sampled columns are empty (null) from summary statistics
if any(rows[1][k] is not None for k in ("sampled_mean_variance", "sd_p05", "z_score")):
    print("sampled columns not empty"); ok = False
if len(d["cautions"]) < 5: print("cautions missing"); ok = False
sys.exit(0 if ok else 1)
PY

# Statman (1987), from memory: the same inputs annualised by 52 weeks.
"$HC" formula --average-variance 46.619 --average-covariance 7.058 --periods-per-year 52 --sizes 1,10 --format csv >"$T/st.csv" \
	|| fail "formula (Statman inputs) exit $?"
head -n1 "$T/st.csv" | grep -q '^n,expected_variance,expected_sd,variance_sd,expected_tracking_error,diversifiable_share,sampled_mean_variance,sampled_variance_se,sampled_mean_sd,sd_p05,sd_p50,sd_p95,z_score' \
	|| fail "formula csv header: $(head -n1 "$T/st.csv")"
"$PY" - "$T/st.csv" <<'PY' || fail "Statman (1987) table values"
import csv, sys
rows = {int(r["n"]): r for r in csv.DictReader(open(sys.argv[1]))}
ok = True
for n, want in ((1, 49.236), (10, 23.932)):
    got = float(rows[n]["expected_sd"])
    if abs(got - want) > 0.002:
        print("Statman N=%d: %.6f, table %.3f" % (n, got, want)); ok = False
    if float(rows[n]["periods_per_year"]) != 52.0: print("periods_per_year column", rows[n]["periods_per_year"]); ok = False
sys.exit(0 if ok else 1)
PY
"$HC" formula --average-variance 46.619 --average-covariance 7.058 --periods-per-year 52 --format json >"$T/st.json"
"$PY" -c 'import json,sys; d=json.load(open(sys.argv[1])); sys.exit(0 if abs(d["floor_sd"]-19.158)<=0.002 and d["periods_per_year"]==52 else 1)' "$T/st.json" \
	|| fail "Statman (1987) limit 19.158"

# sd and correlation give the same curve as the variance and covariance they
# imply: 0.3^2 = 0.09, 0.2385 * 0.09 = 0.021465 (arithmetic).
"$HC" formula --average-sd 30% --average-correlation 0.2385 --securities 40 --sizes 1,7,40 --format csv >"$T/a.csv"
"$HC" formula --average-variance 0.09 --average-covariance 0.021465 --securities 40 --sizes 1,7,40 --format csv >"$T/b.csv"
"$PY" - "$T/a.csv" "$T/b.csv" <<'PY' || fail "sd/correlation inputs disagree with variance/covariance inputs"
import csv, sys
a = list(csv.DictReader(open(sys.argv[1]))); b = list(csv.DictReader(open(sys.argv[2])))
ok = len(a) == 3
for ra, rb in zip(a, b):
    for k in ("expected_variance", "expected_tracking_error", "diversifiable_share"):
        if abs(float(ra[k]) - float(rb[k])) > 1e-15: print(k, ra[k], rb[k]); ok = False
# finite universe: at N = M the tracking error is exactly 0 and the expected
# variance is the equal-weight universe's: (0.09 + 39*0.021465)/40 (design.md s.3)
if abs(float(a[2]["expected_variance"]) - (0.09 + 39 * 0.021465) / 40) > 1e-15: print("N=M", a[2]); ok = False
if float(a[2]["expected_tracking_error"]) != 0.0: print("TE at N=M", a[2]["expected_tracking_error"]); ok = False
sys.exit(0 if ok else 1)
PY

# The text view shows the scale.
"$HC" formula --average-variance 46.619 --average-covariance 7.058 --sizes 1 | grep -q '^annualisation: *not annualised' || fail "text view lacks the scale"

expect 2 "holdcount formula: needs --average-variance or --average-sd" -- formula --average-covariance 0.01
expect 2 "holdcount formula: needs --average-covariance or --average-correlation" -- formula --average-variance 0.04
expect 2 "holdcount formula: give --average-variance or --average-sd, not both" -- formula --average-variance 0.04 --average-sd 0.2 --average-covariance 0.01
expect 2 "holdcount formula: --average-correlation must lie from -1 to 1, found 1.5" -- formula --average-sd 0.2 --average-correlation 1.5
expect 2 "holdcount formula: average covariance" -- formula --average-variance 0.04 --average-covariance 0.05
expect 2 "holdcount formula: average variance" -- formula --average-variance -0.04 --average-covariance 0.01
expect 2 "holdcount formula: size 50 is larger than the 40 securities" -- formula --average-variance 0.04 --average-covariance 0.01 --securities 40 --sizes 1,50
expect 2 "holdcount formula: bad size list" -- formula --average-variance 0.04 --average-covariance 0.01 --sizes 1,x
expect 2 "holdcount formula: --periods-per-year must be positive" -- formula --average-variance 0.04 --average-covariance 0.01 --periods-per-year 0
expect 2 "holdcount formula: option '--average-sd' expects a number" -- formula --average-sd abc --average-covariance 0.01

# --output: nothing written on failure, the whole file on success.
"$HC" formula --average-variance 0.04 --average-covariance 0.01 --securities 40 --sizes 1,50 -o "$T/f.csv" 2>/dev/null
[ -e "$T/f.csv" ] && fail "--output file exists after a failed run"
"$HC" formula --average-variance 0.04 --average-covariance 0.01 --format csv -o "$T/f.csv" || fail "formula -o exit $?"
[ "$(head -c 2 "$T/f.csv")" = "n," ] || fail "formula -o content"
ls -A "$T" | grep -q '\.tmp-' && fail "temporary file left behind"

# A full device: exit 4 (HC_EIO) with one message, not a silent success.
"$HC" formula --average-variance 0.04 --average-covariance 0.01 --format csv >/dev/full 2>"$T/err"; rc=$?
[ "$rc" = 4 ] || fail "writing to /dev/full: exit $rc, expected 4"
grep -q "^holdcount formula: cannot write to standard output" "$T/err" || fail "/dev/full message: $(cat "$T/err")"

# Elton & Gruber's averages are percent squared (from memory): annualised as
# if decimals they give an average sd of 2365% a year, and the output says
# what the likely cause is; decimal inputs carry no such caution.
"$HC" formula --average-variance 46.619 --average-covariance 7.058 --periods-per-year 12 --format json >"$T/imp.json"
grep -q 'implausible: the average sd is 2365% a year, above 300%; are the inputs in percent (variances in percent squared?)' "$T/imp.json" \
	|| fail "no implausible-sd caution: $(cat "$T/imp.json")"
"$HC" formula --average-variance 0.0119 --average-covariance 0.0021 --periods-per-year 12 --format json | grep -q implausible \
	&& fail "implausible caution on decimal inputs"

cli_end cli_formula
