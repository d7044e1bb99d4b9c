#!/usr/bin/env bash
# cli_measures.sh - `curve --measures` on the command line: the default is
# the sd family with the bytes of today's output; each measure adds five
# columns and a universe field; the figures do not depend on the thread
# count, on complete and ragged histories; bad lists and sources without
# series are usage errors.  The
# measures' values are checked against numpy, exact enumeration and a
# published example in check_measures.py; this file checks the command.
# Exit statuses are those of include/holdcount/error.h (2: usage).
set -u
. "$(dirname "$0")/lib.sh"
cli_begin cli_measures

U="$HOLDCOUNT_SOURCE_DIR/data/demo-universe.csv"
# The demo has securities with gaps; the measures need complete series.
ARGS=(curve "$U" --missing complete --sizes 1,2,5,20 --paths 400 --seed 5 --quiet)

# The default, and --measures sd, are byte for byte the curve without the option.
for fmt in table csv json; do
  "$HC" "${ARGS[@]}" --format "$fmt" >"$T/plain.$fmt" || fail "curve --format $fmt"
  "$HC" "${ARGS[@]}" --format "$fmt" --measures sd >"$T/sd.$fmt" || fail "curve --measures sd --format $fmt"
  cmp -s "$T/plain.$fmt" "$T/sd.$fmt" || fail "--measures sd changed the $fmt output"
done

# Every measure: five columns each, in the documented order, after the sd family's.
"$HC" "${ARGS[@]}" --format csv --measures all --threads 1 >"$T/all1.csv" || fail "curve --measures all"
head -1 "$T/plain.csv" >"$T/h0"
head -1 "$T/all1.csv" >"$T/h1"
case "$(cat "$T/h1")" in
  "$(cat "$T/h0")",semidev_mean_mean,semidev_mean_se,semidev_mean_p05,semidev_mean_p50,semidev_mean_p95,semidev_zero_mean,*,lag_universe_p95) ;;
  *) fail "unexpected header: $(cat "$T/h1")" ;;
esac
[ "$(tr ',' '\n' <"$T/h1" | wc -l)" -eq $(( $(tr ',' '\n' <"$T/h0" | wc -l) + 55 )) ] ||
  fail "--measures all should add 55 columns (11 measures x 5)"
# The sd family's columns are unchanged by the measures beside them.
cut -d, -f1-14 "$T/all1.csv" | cmp -s - "$T/plain.csv" || fail "--measures all changed the sd columns"

# Thread count: the same bytes.
"$HC" "${ARGS[@]}" --format csv --measures all --threads 2 >"$T/all2.csv" || fail "curve --threads 2"
cmp -s "$T/all1.csv" "$T/all2.csv" || fail "--measures all differs between 1 and 2 threads"

# A subset: only its columns, and the universe's own value as a field.
"$HC" "${ARGS[@]}" --format json --measures es95,max_drawdown >"$T/sub.json" || fail "curve --measures es95,max_drawdown"
"$PY" - "$T/sub.json" <<'PY' || fail "JSON of --measures es95,max_drawdown"
import json, sys
d = json.load(open(sys.argv[1]))
row = d["curve"][0]
assert "es95_mean" in row and "max_drawdown_p95" in row, row.keys()
assert "var95_mean" not in row and "skewness_mean" not in row
assert 0 < d["universe_es95"] < 0.5 and 0 < d["universe_max_drawdown"] < 1, d
assert "universe_var95" not in d
# the 5/50/95% quantiles are ordered and bracket the typical portfolio
for r in d["curve"]:
    assert r["es95_p05"] <= r["es95_p50"] <= r["es95_p95"], r
    assert r["es95_se"] > 0
assert any("docs/measures.md" in c for c in d["cautions"])
assert not any("read period by period" in c for c in d["cautions"])
PY

# Usage errors (exit 2), nothing on stdout.
expect 2 "holdcount curve: bad measure list: 'es97' is not a measure" -- "${ARGS[@]}" --measures es97
expect 2 "holdcount curve: bad measure list: '' is not a measure" -- "${ARGS[@]}" --measures es95,
expect 2 "holdcount curve: --measures summarises random portfolios" -- curve "$U" --missing complete --paths 0 --measures es95 --quiet
# Read period by period (--missing alive, the default for a history with
# gaps): each portfolio's series is its held securities' mean return each
# period; the same bytes whatever the thread count, the sd columns those
# of the curve without --measures, and the universe's own value (every
# security alive, equally weighted) as a field.  The values themselves are
# checked against numpy and enumeration in check_measures.py.
RARGS=(curve "$U" --sizes 1,2,5,20 --paths 400 --seed 5 --quiet)
"$HC" "${RARGS[@]}" --format csv >"$T/rplain.csv" || fail "ragged curve"
"$HC" "${RARGS[@]}" --format csv --measures all --threads 1 >"$T/rall1.csv" || fail "ragged curve --measures all"
"$HC" "${RARGS[@]}" --format csv --measures all --threads 2 >"$T/rall2.csv" || fail "ragged curve --measures all --threads 2"
cmp -s "$T/rall1.csv" "$T/rall2.csv" || fail "ragged --measures all differs between 1 and 2 threads"
cut -d, -f1-14 "$T/rall1.csv" | cmp -s - "$T/rplain.csv" || fail "ragged --measures all changed the sd columns"
[ "$(head -1 "$T/rall1.csv" | tr ',' '\n' | wc -l)" -eq $(( $(head -1 "$T/rplain.csv" | tr ',' '\n' | wc -l) + 55 )) ] ||
  fail "ragged --measures all should add 55 columns"
"$HC" "${RARGS[@]}" --format json --measures es95,semidev_zero,lag_universe >"$T/rsub.json" || fail "ragged curve --measures es95"
"$PY" - "$T/rsub.json" <<'PY' || fail "JSON of ragged --measures"
import json, sys
d = json.load(open(sys.argv[1]))
assert "read period by period" in d["treatment"], d["treatment"]
assert any(c.startswith("measures, history with gaps read period by period") for c in d["cautions"])
assert 0 < d["universe_es95"] < 0.5 and 0 < d["universe_semidev_zero"] < 1, d
rows = d["curve"]
for r in rows:
    assert r["es95_p05"] <= r["es95_p50"] <= r["es95_p95"] and r["es95_se"] > 0, r
    assert 0 <= r["lag_universe_mean"] <= 1
# diversification: the mean expected shortfall falls from 1 to 20 holdings
assert rows[0]["es95_mean"] > rows[-1]["es95_mean"] > d["universe_es95"] * 0.9, rows
PY
"$HC" enough "$U" --paths 400 --seed 5 --rules near-floor,marginal,band --quiet --format json \
  --measures es95,worst_period >"$T/rem.json" || fail "ragged enough --measures"
"$PY" - "$T/rem.json" <<'PY' || fail "JSON of ragged enough --measures"
import json, sys
d = json.load(open(sys.argv[1]))
chosen = sorted({r["count"] for r in d["rules"] if r.get("count") is not None})
rows = d["measures"]
assert chosen and [r["n"] for r in rows] == chosen, (rows, chosen)
for r in rows:
    assert r["es95_p05"] <= r["es95_mean"] <= r["es95_p95"] and r["worst_period_mean"] < 0, r
assert 0 < d["universe_es95"] < 0.5
PY
# Pairwise covariances have no portfolio series.
expect 2 "holdcount curve: --measures needs each portfolio's return series: return series (complete, or with gaps read period by period under --missing alive), not a history with gaps under --missing pairwise" -- curve "$U" --missing pairwise --measures es95 --quiet
"$PY" - "$U" "$T/cov.csv" <<'PY'
import csv, sys
import numpy as np
rows = list(csv.reader(open(sys.argv[1])))
ids = rows[0][1:6]
x = np.array([[float(v) for v in r[1:6]] for r in rows[1:] if all(v != "" for v in r[1:6])])
a = np.cov(x, rowvar=False)
with open(sys.argv[2], "w") as fp:
    fp.write("id," + ",".join(ids) + "\n")
    for i, s in enumerate(ids):
        fp.write(s + "," + ",".join(repr(float(v)) for v in a[i]) + "\n")
PY
expect 2 "holdcount curve: --measures needs each portfolio's return series" -- curve "$T/cov.csv" --covariance --measures es95 --quiet

# enough: --measures sd leaves every format as it was; with measures, the
# table "measures" has a row for each distinct count a rule chose, named.
EARGS=(enough "$U" --missing complete --paths 400 --seed 5 --rules near-floor,marginal,band --quiet)
for fmt in table csv json; do
  "$HC" "${EARGS[@]}" --format "$fmt" >"$T/e.$fmt" || fail "enough --format $fmt"
  "$HC" "${EARGS[@]}" --format "$fmt" --measures sd >"$T/esd.$fmt" || fail "enough --measures sd --format $fmt"
  cmp -s "$T/e.$fmt" "$T/esd.$fmt" || fail "enough --measures sd changed the $fmt output"
done
"$HC" "${EARGS[@]}" --format json --measures es95,worst_period --threads 1 >"$T/em1.json" || fail "enough --measures"
"$HC" "${EARGS[@]}" --format json --measures es95,worst_period --threads 2 >"$T/em2.json" || fail "enough --measures --threads 2"
cmp -s "$T/em1.json" "$T/em2.json" || fail "enough --measures differs between 1 and 2 threads"
"$PY" - "$T/em1.json" <<'PY' || fail "JSON of enough --measures"
import json, sys
d = json.load(open(sys.argv[1]))
chosen = {}
for r in d["rules"]:
    if r.get("count") is not None:
        chosen.setdefault(r["count"], []).append(r["rule"])
rows = d["measures"]
assert [r["n"] for r in rows] == sorted(chosen), (rows, chosen)
for r in rows:
    assert r["rules"].split() == chosen[r["n"]], (r, chosen)
    assert r["es95_p05"] <= r["es95_mean"] <= r["es95_p95"] and r["worst_period_mean"] < 0
assert 0 < d["universe_es95"] < 0.5
PY
expect 2 "holdcount enough: --measures needs each portfolio's return series: a universe file" -- enough --average-sd 30% --average-correlation 0.2 --measures es95
expect 2 "holdcount enough: bad measure list: 'skew' is not a measure" -- "${EARGS[@]}" --measures skew

cli_end cli_measures
