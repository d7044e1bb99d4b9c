#!/usr/bin/env bash
# holdcount describe and holdcount curve on tiny universes built here.
# References: numpy (Debian's python3-numpy) recomputes the sample
# covariance (divisor T-1), average variance and covariance, and the exact
# expected variance v/N + (1-1/N)c (design.md section 3) from the same
# file; the bad-input cases are those of issue 2, each with its exit
# status (include/holdcount/error.h) and the first words of its message.
set -u
. "$(dirname "$0")/lib.sh"
cli_begin cli_curve

# A monthly universe of 5 invented securities over 8 months (values made up).
cat >"$T/u.csv" <<'CSV'
date,QX01,QX02,QX03,QX04,QX05
2021-01-31,0.0123,-0.0211,0.0345,0.0071,-0.0102
2021-02-28,-0.0088,0.0154,0.0021,-0.0193,0.0240
2021-03-31,0.0311,0.0087,-0.0145,0.0226,0.0039
2021-04-30,0.0046,-0.0302,0.0198,0.0012,-0.0176
2021-05-31,-0.0215,0.0063,0.0281,-0.0094,0.0137
2021-06-30,0.0174,0.0229,-0.0067,0.0158,-0.0041
2021-07-31,-0.0031,-0.0118,0.0102,-0.0249,0.0205
2021-08-31,0.0262,0.0035,-0.0233,0.0083,0.0118
CSV

"$HC" describe "$T/u.csv" --format json >"$T/d.json" || fail "describe exit $?"
"$PY" - "$T/u.csv" "$T/d.json" <<'PY' || fail "describe against numpy"
import json, sys, numpy as np
x = np.genfromtxt(sys.argv[1], delimiter=",", skip_header=1)[:, 1:]
d = json.load(open(sys.argv[2]))
a = np.cov(x, rowvar=False, ddof=1)          # numpy: sample covariance, divisor T-1
m = a.shape[0]
vbar = np.trace(a) / m
cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
sd = np.sqrt(np.diag(a)); corr = a / np.outer(sd, sd)
rbar = (corr.sum() - m) / (m * (m - 1))
p = 12.0                                      # monthly dates: 12 a year
ok = True
def close(k, want, tol=1e-12):
    global ok
    if abs(d[k] - want) > tol * max(1.0, abs(want)):
        print(k, d[k], want); ok = False
for k in ("securities", "securities_dropped", "periods", "periods_per_year", "first_date", "last_date",
          "average_variance", "average_covariance", "average_correlation", "floor_sd", "universe_sd"):
    if k not in d: print("missing key", k); ok = False
if d["securities"] != 5 or d["periods"] != 8 or d["securities_dropped"] != 0: print("counts", d); ok = False
if d["first_date"] != "2021-01-31" or d["last_date"] != "2021-08-31": print("dates"); ok = False
close("periods_per_year", p)
close("average_variance", vbar * p)
close("average_covariance", cbar * p)
close("average_correlation", rbar)
if cbar >= 0: close("floor_sd", np.sqrt(cbar * p))
else:
    if d["floor_sd"] is not None: print("floor_sd should be null for a negative average covariance"); ok = False
close("universe_sd", np.sqrt(a.sum() / m**2 * p))
kept = {r["id"]: r for r in d["kept"]}
for i, name in enumerate(["QX01", "QX02", "QX03", "QX04", "QX05"]):
    if abs(kept[name]["sd"] - sd[i] * np.sqrt(p)) > 1e-12: print("sd", name); ok = False
sys.exit(0 if ok else 1)
PY

# describe's CSV: by default the summary figures as key,value rows, every
# one the JSON's value to the last digit (17 significant digits both ways)
# and the averages against numpy as above; --table securities and dropped
# give the tables.
"$HC" describe "$T/u.csv" --format csv >"$T/d.csv" || fail "describe csv exit $?"
"$PY" - "$T/u.csv" "$T/d.csv" "$T/d.json" <<'PY' || fail "describe csv summary against the JSON and numpy"
import csv, json, sys, numpy as np
x = np.genfromtxt(sys.argv[1], delimiter=",", skip_header=1)[:, 1:]
rows = list(csv.reader(open(sys.argv[2], newline="")))
d = json.load(open(sys.argv[3]))
assert rows[0] == ["key", "value"], rows[0]
kv = dict(rows[1:])
scalars = {k: v for k, v in d.items() if not isinstance(v, list)}
assert list(kv) == list(scalars), (list(kv), list(scalars))
for k, v in scalars.items():
    got = kv[k]
    if isinstance(v, bool):
        assert got == ("true" if v else "false"), (k, got, v)
    elif isinstance(v, (int, float)):
        assert float(got) == v, (k, got, v)
    else:
        assert got == ("" if v is None else v), (k, got, v)
a = np.cov(x, rowvar=False, ddof=1)          # numpy: sample covariance, divisor T-1
m = a.shape[0]
vbar = np.trace(a) / m
cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
assert abs(float(kv["average_variance"]) - 12 * vbar) <= 1e-12 * 12 * vbar, (kv["average_variance"], 12 * vbar)
assert abs(float(kv["average_covariance"]) - 12 * cbar) <= 1e-12 * 12 * vbar, (kv["average_covariance"], 12 * cbar)
assert kv["securities"] == "5" and kv["periods"] == "8" and kv["periods_per_year"] == "12", kv
PY
"$HC" describe "$T/u.csv" --format csv --table securities >"$T/ds.csv" || fail "describe --table securities exit $?"
[ "$(head -n1 "$T/ds.csv")" = "id,periods,sd,periods_per_year" ] || fail "describe csv header: $(head -n1 "$T/ds.csv")"
[ "$(wc -l <"$T/ds.csv")" = 6 ] || fail "describe csv rows: $(wc -l <"$T/ds.csv")"
[ "$(sed -n 2p "$T/ds.csv" | cut -d, -f1,2,4)" = "QX01,8,12" ] || fail "describe csv first row: $(sed -n 2p "$T/ds.csv")"
"$HC" describe "$T/u.csv" --format csv --table dropped >"$T/dd.csv" || fail "describe --table dropped exit $?"
[ "$(cat "$T/dd.csv")" = "id,reason" ] || fail "describe --table dropped of a complete universe: $(cat "$T/dd.csv")"
expect 2 "holdcount describe: --table chooses what --format csv prints" -- describe "$T/u.csv" --table securities
expect 2 "holdcount describe: option '--table' expects one of summary, securities or dropped, found 'kept'" -- \
	describe "$T/u.csv" --format csv --table kept
"$HC" describe "$T/u.csv" | grep -q '^annualisation: *annualised: variances times 12' || fail "describe text lacks the scale"

# curve: exact columns against numpy, CSV header exactly the contract.
"$HC" curve "$T/u.csv" --sizes 1,2,3,5 --paths 4000 --seed 2385 --format csv --quiet >"$T/c.csv" || fail "curve exit $?"
head -n1 "$T/c.csv" | grep -q '^n,expected_variance,expected_sd,variance_sd,expected_tracking_error,diversifiable_share,sampled_mean_variance,sampled_variance_se,sampled_mean_sd,sd_p05,sd_p50,sd_p95,z_score' \
	|| fail "curve csv header: $(head -n1 "$T/c.csv")"
"$PY" - "$T/u.csv" "$T/c.csv" <<'PY' || fail "curve against numpy"
import csv, sys, numpy as np
x = np.genfromtxt(sys.argv[1], delimiter=",", skip_header=1)[:, 1:]
a = np.cov(x, rowvar=False, ddof=1); m = a.shape[0]; p = 12.0
vbar = np.trace(a) / m; cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
ok = True
for r in csv.DictReader(open(sys.argv[2])):
    n = int(r["n"])
    ev = (vbar / n + (1 - 1 / n) * cbar) * p
    if abs(float(r["expected_variance"]) - ev) > 1e-12 * ev: print("E[var]", n, r["expected_variance"], ev); ok = False
    if abs(float(r["expected_sd"]) - np.sqrt(ev)) > 1e-12: print("sd", n); ok = False
    te2 = (vbar - cbar) * (1 / n - 1 / m) * p
    if abs(float(r["expected_tracking_error"]) - np.sqrt(max(te2, 0))) > 1e-12: print("TE", n); ok = False
    if n == m:
        # every portfolio of all M securities is the universe itself: no
        # spread, so the z-score is undefined (empty) and the mean is exact
        if r["z_score"] != "" or abs(float(r["sampled_mean_variance"]) - ev) > 1e-12 * ev:
            print("N=M row", r); ok = False
    else:
        # the sampled mean lies within 4 Monte Carlo standard errors of the exact mean
        z = float(r["z_score"]); se = float(r["sampled_variance_se"])
        if not abs(z) < 4: print("z", n, z); ok = False
        if abs((float(r["sampled_mean_variance"]) - ev) / se - z) > 1e-6 * max(1, abs(z)): print("z formula", n); ok = False
    if float(r["periods_per_year"]) != p: print("periods_per_year column"); ok = False
    if not float(r["sd_p05"]) <= float(r["sd_p50"]) <= float(r["sd_p95"]): print("quantile order", n); ok = False
sys.exit(0 if ok else 1)
PY

# Same seed, same bytes, whatever the thread count (design.md section 4).
"$HC" curve "$T/u.csv" --sizes 1-5 --paths 3000 --seed 77 --threads 1 --format csv -q >"$T/t1.csv"
"$HC" curve "$T/u.csv" --sizes 1-5 --paths 3000 --seed 77 --threads 2 --format csv -q >"$T/t2.csv"
HOLDCOUNT_THREADS=2 "$HC" curve "$T/u.csv" --sizes 1-5 --paths 3000 --seed 77 --format csv -q >"$T/t3.csv"
cmp -s "$T/t1.csv" "$T/t2.csv" || fail "threads 1 and 2 differ"
cmp -s "$T/t1.csv" "$T/t3.csv" || fail "HOLDCOUNT_THREADS=2 differs"

# --paths 0: sampled columns empty.
"$HC" curve "$T/u.csv" --sizes 2 --paths 0 --format csv >"$T/p0.csv" || fail "curve --paths 0 exit $?"
"$PY" -c 'import csv,sys; r=list(csv.DictReader(open(sys.argv[1])))[0]; sys.exit(0 if r["sampled_mean_variance"]=="" and r["z_score"]=="" and r["expected_variance"]!="" else 1)' "$T/p0.csv" \
	|| fail "--paths 0 sampled columns not empty"
# JSON parses and states the scale; text states it too.
"$HC" curve "$T/u.csv" --sizes 2,4 --paths 200 --format json -q | "$PY" -c 'import json,sys; d=json.load(sys.stdin); sys.exit(0 if d["periods_per_year"]==12 and len(d["curve"])==2 and d["cautions"] else 1)' \
	|| fail "curve json"
"$HC" curve "$T/u.csv" --sizes 2 --paths 0 | grep -q '^annualisation: *annualised: variances times 12' || fail "curve text lacks the scale"

# Option values at their limits: the largest seed, a percent and a decimal
# for the same fraction.
"$HC" curve "$T/u.csv" --sizes 2 --paths 50 --seed 18446744073709551615 -q --format json >"$T/s.json" || fail "largest seed exit $?"
"$PY" -c 'import json,sys; sys.exit(0 if json.load(open(sys.argv[1]))["seed"]=="18446744073709551615" else 1)' "$T/s.json" || fail "largest seed not echoed"
expect 2 "holdcount curve: option '--seed' expects a whole number from 0 to 18446744073709551615, found '18446744073709551616'" -- curve "$T/u.csv" --seed 18446744073709551616
expect 2 "holdcount curve: option '--paths' expects a whole number" -- curve "$T/u.csv" --paths 99999999999999999999999
"$HC" describe "$T/u.csv" --missing pairwise --min-coverage 80% --format csv >"$T/c1" || fail "--min-coverage 80% exit $?"
"$HC" describe "$T/u.csv" --missing pairwise --min-coverage 0.8 --format csv >"$T/c2" || fail "--min-coverage 0.8 exit $?"
cmp -s "$T/c1" "$T/c2" || fail "--min-coverage 80% and 0.8 differ"
expect 2 "holdcount describe: --min-coverage must be above 0 and at most 1" -- describe "$T/u.csv" --min-coverage 120%
expect 2 "holdcount describe: --periods-per-year must be positive" -- describe "$T/u.csv" --periods-per-year -12

# --covariance: numpy's sample covariance of u.csv, written as a matrix CSV
# with 17 digits, must give the same exact curve as the returns themselves
# (annualised by the same 12), and a sampled mean within 4 standard errors.
"$PY" - "$T/u.csv" "$T/cov.csv" <<'PY'
import sys, numpy as np
x = np.genfromtxt(sys.argv[1], delimiter=",", skip_header=1)[:, 1:]
ids = open(sys.argv[1]).readline().strip().split(",")[1:]
a = np.cov(x, rowvar=False, ddof=1)
with open(sys.argv[2], "w") as f:
    f.write("id," + ",".join(ids) + "\n")
    for i, name in enumerate(ids):
        f.write(name + "," + ",".join("%.17g" % v for v in a[i]) + "\n")
PY
"$HC" curve "$T/u.csv" --sizes 1-5 --paths 0 --format csv >"$T/r.csv" || fail "curve (returns) exit $?"
"$HC" curve --covariance "$T/cov.csv" --periods-per-year 12 --sizes 1-5 --paths 4000 --seed 9 -q --format csv >"$T/m.csv" \
	|| fail "curve --covariance exit $?"
"$PY" - "$T/r.csv" "$T/m.csv" <<'PY' || fail "curve --covariance disagrees with curve on the returns"
import csv, sys
r = list(csv.DictReader(open(sys.argv[1]))); m = list(csv.DictReader(open(sys.argv[2])))
ok = len(r) == len(m) == 5
for a, b in zip(r, m):
    for k in ("expected_variance", "expected_sd", "variance_sd", "expected_tracking_error", "diversifiable_share"):
        x, y = float(a[k]), float(b[k])
        if abs(x - y) > 1e-12 * max(abs(x), 1e-300) and abs(x - y) > 1e-15: print(k, a["n"], x, y); ok = False
    if int(b["n"]) < 5 and not abs(float(b["z_score"])) < 4: print("z", b["n"], b["z_score"]); ok = False
    if float(b["periods_per_year"]) != 12: print("periods_per_year"); ok = False
sys.exit(0 if ok else 1)
PY
"$HC" describe --covariance "$T/cov.csv" --format json >"$T/dc.json" || fail "describe --covariance exit $?"
"$PY" - "$T/d.json" "$T/dc.json" <<'PY' || fail "describe --covariance disagrees with describe on the returns"
import json, sys
r = json.load(open(sys.argv[1])); m = json.load(open(sys.argv[2]))
ok = m["securities"] == 5 and m["periods"] is None and m["periods_per_year"] is None
# not annualised: the matrix's own per-period units, so 12 times smaller
for k in ("average_variance", "average_covariance"):
    if abs(m[k] * 12 - r[k]) > 1e-12 * abs(r[k]): print(k, m[k], r[k]); ok = False
if abs(m["average_correlation"] - r["average_correlation"]) > 1e-12: print("correlation"); ok = False
sys.exit(0 if ok else 1)
PY
# --missing pairwise with a gap left: the exact columns and the random
# portfolios both come from the pairwise-complete covariances (numpy below,
# pair by pair over common periods, divisor n_ij - 1).
sed 's/^2021-03-31,0.0311,0.0087,-0.0145,/2021-03-31,0.0311,0.0087,,/' "$T/u.csv" >"$T/gap.csv"
"$HC" curve "$T/gap.csv" --missing pairwise --sizes 1-4 --paths 20000 --seed 5 -q --format csv >"$T/g.csv" || fail "curve pairwise exit $?"
"$PY" - "$T/gap.csv" "$T/g.csv" <<'PY' || fail "curve --missing pairwise against numpy"
import csv, sys, numpy as np
x = np.genfromtxt(sys.argv[1], delimiter=",", skip_header=1)[:, 1:]
m = x.shape[1]; a = np.empty((m, m))
for i in range(m):
    for j in range(m):
        k = ~np.isnan(x[:, i]) & ~np.isnan(x[:, j])
        a[i, j] = np.cov(x[k, i], x[k, j], ddof=1)[0, 1]
vbar = np.trace(a) / m; cbar = (a.sum() - np.trace(a)) / (m * (m - 1)); p = 12.0
ok = True
rows = list(csv.DictReader(open(sys.argv[2])))
ok = len(rows) == 4
for r in rows:
    n = int(r["n"]); ev = (vbar / n + (1 - 1 / n) * cbar) * p
    if abs(float(r["expected_variance"]) - ev) > 1e-12 * ev: print("E[var]", n, r["expected_variance"], ev); ok = False
    if n < m and not abs(float(r["z_score"])) < 4: print("z", n, r["z_score"]); ok = False
sys.exit(0 if ok else 1)
PY

# A matrix that no returns could have (correlations of +0.99, +0.99 and
# -0.99 among three securities): some portfolio would have negative variance.
printf 'id,AQ,BR,CT\nAQ,0.0025,0.00297,0.00347\nBR,0.00297,0.0036,-0.00416\nCT,0.00347,-0.00416,0.0049\n' >"$T/notpsd.csv"
expect 3 "holdcount curve: $T/notpsd.csv: not a covariance matrix: it is not positive semi-definite" -- curve --covariance "$T/notpsd.csv"
expect 2 "holdcount curve: --prices describes a return history and does not apply with --covariance" -- curve --covariance --prices "$T/cov.csv"
expect 2 "holdcount describe: --missing describes a return history" -- describe --covariance --missing pairwise "$T/cov.csv"
# Gaps that leave pairwise correlations +1, -1, +1 (A,B; A,C; B,C): a matrix
# no data can have (by hand: eigenvalues of [[1,1,-1],[1,1,1],[-1,1,1]] include
# -1).  curve refuses it; describe prints its averages with a warning.
"$PY" - >"$T/np.csv" <<'PY'
import random, datetime as dt
random.seed(5)
z = [random.gauss(0, 0.05) for _ in range(30)]; w = [random.gauss(0, 0.05) for _ in range(30)]
print("date,A,B,C")
for k in range(30):
    d = dt.date(2001 + (k + 1) // 12, (k + 1) % 12 + 1, 1) - dt.timedelta(days=1)
    a = z[k] if k < 20 else None
    b = z[k] if k < 10 else (w[k] if k >= 20 else None)
    c = -z[k] if 10 <= k < 20 else (w[k] if k >= 20 else None)
    print(d.isoformat() + "," + ",".join("NA" if v is None else repr(v) for v in (a, b, c)))
PY
"$HC" describe "$T/np.csv" --missing pairwise --min-coverage 60% --format json >"$T/np.json" || fail "describe non-PSD exit $?"
grep -q 'warning: the pairwise-complete covariance matrix is not positive semi-definite' "$T/np.json" \
	|| fail "describe prints averages of a non-PSD pairwise matrix without a warning: $(cat "$T/np.json")"
expect 2 "holdcount curve: size 6 is larger than the 5 securities kept" -- curve --covariance "$T/cov.csv" --sizes 6

# Bad input (issue 2).  Each file differs from u.csv in one way.
mk() { printf '%b' "$2" >"$T/$1"; }
mk bad_cell.csv  'date,QX01,QX02\n2021-01-31,0.01,0.02\n2021-02-28,0.03,abc\n2021-03-31,0.02,0.01\n'
mk dup_id.csv    'date,QX01,QX01\n2021-01-31,0.01,0.02\n2021-02-28,0.03,0.01\n2021-03-31,0.02,0.05\n'
mk unsorted.csv  'date,QX01,QX02\n2021-02-28,0.01,0.02\n2021-01-31,0.03,0.01\n2021-03-31,0.02,0.05\n'
mk dup_date.csv  'date,QX01,QX02\n2021-01-31,0.01,0.02\n2021-01-31,0.03,0.01\n2021-03-31,0.02,0.05\n'
mk ragged.csv    'date,QX01,QX02\n2021-01-31,0.01,0.02\n2021-02-28,0.03\n2021-03-31,0.02,0.05\n'
mk empty.csv     ''
mk header.csv    'date,QX01,QX02\n'
mk single.csv    'date,QX01\n2021-01-31,0.01\n2021-02-28,0.03\n2021-03-31,0.02\n'
mk zero_var.csv  'date,QX01,QX02\n2021-01-31,0.01,0.02\n2021-02-28,0.03,0.02\n2021-03-31,0.02,0.02\n'
mk price.csv     'date,QX01,QX02\n2021-01-31,10.5,20.1\n2021-02-28,0,20.7\n2021-03-31,11.2,19.8\n'
mk inf.csv       'date,QX01,QX02\n2021-01-31,0.01,0.02\n2021-02-28,inf,0.01\n2021-03-31,0.02,0.05\n'
mk nan.csv       'date,QX01,QX02\n2021-01-31,0.01,0.02\n2021-02-28,0.03,0.01\n2021-03-31,1e999,0.05\n'
for c in describe curve; do
	expect 3 "holdcount $c: $T/bad_cell.csv:3:3:" -- $c "$T/bad_cell.csv"
	expect 3 "holdcount $c: $T/dup_id.csv:1:3:" -- $c "$T/dup_id.csv"
	expect 3 "holdcount $c: $T/unsorted.csv:3:1:" -- $c "$T/unsorted.csv"
	expect 3 "holdcount $c: $T/dup_date.csv:3:1:" -- $c "$T/dup_date.csv"
	expect 3 "holdcount $c: $T/ragged.csv:3:" -- $c "$T/ragged.csv"
	expect 3 "holdcount $c: $T/empty.csv: empty file" -- $c "$T/empty.csv"
	expect 3 "holdcount $c: $T/header.csv" -- $c "$T/header.csv"
	expect 3 "holdcount $c: $T/single.csv" -- $c "$T/single.csv"
	expect 3 "holdcount $c: $T/zero_var.csv" -- $c "$T/zero_var.csv"
	expect 3 "holdcount $c: $T/price.csv:3:2:" -- $c --prices "$T/price.csv"
	expect 3 "holdcount $c: $T/inf.csv:3:2:" -- $c "$T/inf.csv"
	expect 3 "holdcount $c: $T/nan.csv:4:2:" -- $c "$T/nan.csv"
	expect 4 "holdcount $c: " -- $c "$T/no_such_file.csv"
	expect 2 "holdcount $c: --log-returns needs --prices" -- $c --log-returns "$T/u.csv"
	expect 2 "holdcount $c: --delimiter must be ',' or ';'" -- $c --delimiter '|' "$T/u.csv"
done
expect 2 "holdcount curve: size 6 is larger than the 5 securities kept" -- curve "$T/u.csv" --sizes 1,6
expect 2 "holdcount curve: bad size list" -- curve "$T/u.csv" --sizes 1,,x
expect 2 "holdcount curve: bad size list" -- curve "$T/u.csv" --sizes 5-2
expect 2 "holdcount curve: unknown option '--pathz'" -- curve "$T/u.csv" --pathz 10

# A ragged history where one security was delisted before another listed
# (QA and QC share no period) is ordinary vendor data: read period by period,
# every command that takes a history runs on it (describe once built the
# pairwise matrix for a check that only the pairwise policy needs and refused
# the pair).
printf 'date,QA,QB,QC\n' >"$T/disjoint.csv"
for row in 2021-01-31,0.01,0.02, 2021-02-28,-0.02,0.01, 2021-03-31,0.03,-0.01, 2021-04-30,0.00,0.02, \
	2021-05-31,,0.01,0.02 2021-06-30,,-0.03,0.01 2021-07-31,,0.02,-0.02 2021-08-31,,0.01,0.04; do
	echo "$row" >>"$T/disjoint.csv"
done
"$HC" describe "$T/disjoint.csv" >"$T/disjoint.txt" || fail "describe on a ragged history with a disjoint pair: exit $?"
grep -q '^securities kept: *3$' "$T/disjoint.txt" || fail "describe disjoint: securities kept"
grep -q '^securities alive per period, fewest: *2$' "$T/disjoint.txt" || fail "describe disjoint: fewest alive"
for c in curve "enough --rules exact"; do
	"$HC" $c "$T/disjoint.csv" >/dev/null || fail "$c on a ragged history with a disjoint pair: exit $?"
done

# --output: a failed run leaves no file (and an old file untouched).
echo "earlier" >"$T/keep.csv"
"$HC" curve "$T/u.csv" --sizes 1,6 -o "$T/keep.csv" 2>/dev/null
[ "$(cat "$T/keep.csv")" = "earlier" ] || fail "failed run changed the --output file"
"$HC" curve "$T/bad_cell.csv" -o "$T/new.csv" 2>/dev/null
[ -e "$T/new.csv" ] && fail "failed run created the --output file"
"$HC" curve "$T/u.csv" --sizes 1,2 --paths 100 -q --format csv -o "$T/keep.csv" || fail "curve -o exit $?"
head -n1 "$T/keep.csv" | grep -q '^n,expected_variance' || fail "curve -o content"
ls -A "$T" | grep -q '\.tmp-' && fail "temporary file left behind"

cli_end cli_curve
