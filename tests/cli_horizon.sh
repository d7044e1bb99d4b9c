#!/usr/bin/env bash
# cli_horizon.sh - `holdcount horizon` on the command line: the three
# formats and their columns, the route chosen by the horizon's length,
# the same bytes whatever the thread count, the cautions, and the usage
# errors (exit 2: include/holdcount/error.h).  The figures themselves are
# checked against numpy, exact enumeration and a published example in
# check_horizon.py and by hand in test_horizon.c; this file checks the
# command.
set -u
. "$(dirname "$0")/lib.sh"
cli_begin cli_horizon

U="$HOLDCOUNT_SOURCE_DIR/data/demo-universe.csv"
# The demo has securities with gaps; horizons need complete series.
ARGS=(horizon "$U" --missing complete --sizes 1,5,20,139 --paths 300 --seed 5 --quiet)

for fmt in table csv json; do
  "$HC" "${ARGS[@]}" --years 10 --format "$fmt" >"$T/w.$fmt" || fail "horizon --format $fmt"
done
[ "$(head -1 "$T/w.csv")" = "holdings,rebal_mean,rebal_se,rebal_p05,rebal_p50,rebal_p95,rebal_lag,rebal_lag_se,hold_mean,hold_se,hold_p05,hold_p50,hold_p95,hold_lag,hold_lag_se" ] \
  || fail "unexpected CSV header: $(head -1 "$T/w.csv")"
[ "$(wc -l <"$T/w.csv")" -eq 5 ] || fail "CSV should have a header and 4 rows"
grep -q "^paths from: *overlapping windows: each path a window of 120 consecutive periods, its start uniform over the 121 starts" "$T/w.table" \
  || fail "10 years of a 20-year monthly sample should be windows of 120 periods"
grep -q "a bootstrap of the past is not a forecast" "$T/w.json" && fail "windows should not carry the bootstrap's caution"
grep -q "neighbouring windows share most of their periods" "$T/w.json" || fail "the windows' caution is missing"
grep -q "survivorship bias" "$T/w.table" || fail "the cautions are missing"
"$PY" - "$T/w.json" <<'PY' || fail "JSON of horizon --years 10"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["horizon_periods"] == 120 and d["block_length"] is None, d
rows = d["horizon"]
assert [r["holdings"] for r in rows] == [1, 5, 20, 139]
for r in rows:
    for w in ("rebal", "hold"):
        assert 0 < r[w + "_p05"] <= r[w + "_p50"] <= r[w + "_p95"], r
        assert 0 <= r[w + "_lag"] <= 1
# one holding: the two weightings are the same portfolio
assert rows[0]["rebal_mean"] == rows[0]["hold_mean"]
# all 139: the universe itself, never behind
assert rows[-1]["rebal_lag"] == 0 and rows[-1]["hold_lag"] == 0
assert rows[-1]["rebal_p50"] == d["universe_rebal_p50"]
# the spread of ending wealth narrows with the holding count
assert rows[0]["rebal_p95"] - rows[0]["rebal_p05"] > rows[2]["rebal_p95"] - rows[2]["rebal_p05"]
PY

# Longer than the sample: the stationary bootstrap, its block length said;
# the same bytes with 1 and 2 threads.
"$HC" "${ARGS[@]}" --years 30 --threads 1 --format csv >"$T/b1.csv" || fail "horizon --years 30"
"$HC" "${ARGS[@]}" --years 30 --threads 2 --format csv >"$T/b2.csv" || fail "horizon --years 30 --threads 2"
cmp -s "$T/b1.csv" "$T/b2.csv" || fail "the bootstrap's figures differ between 1 and 2 threads"
"$HC" "${ARGS[@]}" --years 30 --block-length 6 >"$T/b.txt" || fail "horizon --block-length 6"
grep -q "stationary bootstrap (Politis & Romano, 1994) of whole periods, mean block length 6 periods (given)" "$T/b.txt" \
  || fail "the bootstrap route is not said"
"$HC" "${ARGS[@]}" --years 30 --format json >"$T/b.json" || fail "horizon --years 30 --format json"
grep -q "a bootstrap of the past is not a forecast" "$T/b.json" || fail "the bootstrap's caution is missing"
# Forced bootstrap within the sample, and a fixed-rate benchmark.
"$HC" "${ARGS[@]}" --years 5 --resample bootstrap --benchmark-rate 3% --format json >"$T/r.json" || fail "horizon --benchmark-rate"
"$PY" - "$T/r.json" <<'PY' || fail "JSON of horizon --benchmark-rate 3%"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["paths_from"].startswith("stationary bootstrap"), d["paths_from"]
assert abs(d["benchmark_wealth"] - 1.03 ** 5) < 1e-12 and d["benchmark_rate"] == 0.03
assert d["horizon"][-1]["rebal_lag"] > 0 or d["universe_rebal_p05"] > 1.03 ** 5
PY

# A benchmark series on the universe's dates (invented: 0.25% a month and
# a small swing), named in the output; the lag rule reports its count.
awk -F, 'NR == 1 { print "date,LIR Bill Index"; next } { printf "%s,%.6f\n", $1, 0.0025 + 0.001 * ((NR % 7) - 3) }' \
  "$U" >"$T/bill.csv"
"$HC" "${ARGS[@]}" --years 10 --benchmark-file "$T/bill.csv" --lag-limit 20% --format json >"$T/s.json" \
  || fail "horizon --benchmark-file"
"$PY" - "$T/s.json" <<'PY' || fail "JSON of horizon --benchmark-file"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["benchmark_name"] == "LIR Bill Index", d["benchmark_name"]
assert d["benchmark"].startswith("LIR Bill Index ("), d["benchmark"]
assert d["benchmark_rate"] is None and 1 < d["benchmark_p05"] <= d["benchmark_p50"] <= d["benchmark_p95"] < 1.5
assert d["lag_limit"] == 0.2
rows = d["horizon"]
hold = [r["hold_lag"] for r in rows]
# the rule: the first count asked with a buy-and-hold lag within the limit
want = next((r["holdings"] for r in rows if r["hold_lag"] <= 0.2), None)
assert d["lag_rule_count"] == want, (d["lag_rule_count"], hold)
if want is None:
    assert d["lag_rule"].startswith("none of the counts asked") and d["lag_rule_lag"] is None
else:
    r = [r for r in rows if r["holdings"] == want][0]
    assert d["lag_rule_lag"] == r["hold_lag"] and d["lag_rule_lag_se"] == r["hold_lag_se"]
    assert d["lag_rule"].startswith("%d holdings: " % want) and "LIR Bill Index" in d["lag_rule"]
PY
# The default limit is 1%, and the universe is the default benchmark.
"$HC" "${ARGS[@]}" --years 10 --format json >"$T/d.json" || fail "horizon default rule"
"$PY" -c 'import json,sys; d=json.load(open(sys.argv[1])); assert d["lag_limit"] == 0.01 and d["benchmark_name"] == "the equal-weight universe" and d["benchmark_p50"] is None, d["lag_rule"]' "$T/d.json" \
  || fail "the default lag limit or benchmark name"
# Bad series (exit 3: data), a file that cannot be read (exit 4).
sed '5s/-[0-9][0-9],/-15,/' "$T/bill.csv" >"$T/shifted.csv"
expect 3 "holdcount horizon: $T/shifted.csv:5:1: date " -- "${ARGS[@]}" --years 10 --benchmark-file "$T/shifted.csv"
sed '7d' "$T/bill.csv" >"$T/hole.csv"
expect 3 "holdcount horizon: $T/hole.csv: no row dated " -- "${ARGS[@]}" --years 10 --benchmark-file "$T/hole.csv"
expect 4 "holdcount horizon: cannot open '$T/none.csv'" -- "${ARGS[@]}" --benchmark-file "$T/none.csv"

# Weights by market value (invented values by id); at N = M the portfolio
# is the value-weighted universe, which never lags itself.
head -1 "$U" | tr , '\n' | tail -n +2 | awk '{ printf "%s,%.2f\n", $1, 40 + (NR * 37) % 911 }' \
  | { echo "id,market_value"; cat; } >"$T/mv.csv"
"$HC" "${ARGS[@]}" --years 10 --market-values "$T/mv.csv" --format json >"$T/v.json" || fail "horizon --market-values"
"$PY" - "$T/v.json" "$T/w.json" <<'PY' || fail "JSON of horizon --market-values"
import json, sys
d, e = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
assert d["weights"].startswith("proportional to market value ("), d["weights"]
assert e["weights"] == "equal", e["weights"]
assert d["benchmark_name"] == "the universe weighted by market value", d["benchmark_name"]
rows = d["horizon"]
assert rows[-1]["rebal_lag"] == 0 and rows[-1]["hold_lag"] == 0
# one holding weighs 100% whatever its value: equal weights' figures (to
# rounding: c r / c need not be r to the last bit)
for k in ("rebal_p50", "hold_p05", "hold_mean"):
    assert abs(rows[0][k] - e["horizon"][0][k]) <= 1e-12 * abs(e["horizon"][0][k]), k
# the universe's figures change with the weights
assert d["universe_rebal_p50"] != e["universe_rebal_p50"]
PY
grep -v '^LIR007,' "$T/mv.csv" >"$T/mv_hole.csv"
expect 3 "holdcount horizon: $T/mv_hole.csv: no market value for 'LIR007', a security of the universe" -- "${ARGS[@]}" --market-values "$T/mv_hole.csv"

# Usage errors (exit 2), nothing on stdout.
expect 2 "holdcount horizon: --benchmark-file and --benchmark-rate: one benchmark at a time" -- "${ARGS[@]}" --benchmark-file "$T/bill.csv" --benchmark-rate 2%
expect 2 "holdcount horizon: --lag-limit 0: expected a share between 0 and 1" -- "${ARGS[@]}" --lag-limit 0
expect 2 "holdcount horizon: --lag-limit 1: expected a share between 0 and 1" -- "${ARGS[@]}" --lag-limit 100%
# The demo with its gaps, read period by period: windows only, the default
# counts up to the fewest securities listed at a window's start.
"$HC" horizon "$U" --years 10 --paths 200 --seed 5 --quiet --format json >"$T/g.json" || fail "horizon on a history with gaps"
"$PY" - "$T/g.json" <<'PY' || fail "JSON of horizon on a history with gaps"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["securities"] == 150 and d["paths_from"].startswith("overlapping windows"), d
top = d["horizon"][-1]["holdings"]
assert 139 <= top < 150, top
assert any("taken as delisted then" in c for c in d["cautions"])
PY
expect 2 "holdcount horizon: $U has gaps (securities listed or delisted inside the sample): its horizons are windows of the history only" -- horizon "$U" --years 30 --quiet
expect 2 "holdcount horizon: bad holding count 150: the window starting " -- horizon "$U" --years 10 --sizes 150 --quiet
expect 2 "holdcount horizon: $U has gaps: weights by market value are provided on complete histories only" -- horizon "$U" --years 10 --market-values "$T/mv.csv" --quiet
expect 2 "holdcount horizon: a horizon of 30 years is 360 periods, longer than the sample's 240" -- "${ARGS[@]}" --years 30 --resample windows
expect 2 "holdcount horizon: --paths 0" -- "${ARGS[@]}" --paths 0
expect 2 "holdcount horizon: --block-length is the bootstrap's" -- "${ARGS[@]}" --resample windows --block-length 4
expect 2 "holdcount horizon: the horizon must be a positive number of years" -- "${ARGS[@]}" --years -1
expect 2 "holdcount horizon: the benchmark rate must be above -100%" -- "${ARGS[@]}" --benchmark-rate -100%
expect 2 "holdcount horizon: --covariance does not apply: ending wealth needs a return history" -- "${ARGS[@]}" --covariance

cli_end cli_horizon
