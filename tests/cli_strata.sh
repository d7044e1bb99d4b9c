#!/usr/bin/env bash
# cli_strata.sh - stratified draws on the command line: `curve --strata` and
# `enough --strata`, with --per-stratum-max K or --proportional.
#
# Outside references, each named beside its check:
#   - exact enumeration (Python's itertools over every subset, numpy's
#     sample covariance with divisor T-1) of a 9-security universe built
#     here: the mean variance over every admissible portfolio, which the
#     sampled stratified mean must match within its Monte Carlo error, and
#     which the exact proportional column must match to rounding;
#   - the largest admissible portfolio, sum over strata of min(K, m_s),
#     counted by Python from the demo files themselves;
#   - Hamilton's largest-remainder allocation written out again in Python.
# Exit statuses are those of include/holdcount/error.h (2: usage).
set -u
. "$(dirname "$0")/lib.sh"
cli_begin cli_strata

# A monthly universe of 9 invented securities over 72 months (a seeded
# one-factor model) and an invented map: strata of 4, 3 and 2 securities.
"$PY" - "$T/u.csv" "$T/map.csv" <<'PY'
import sys, datetime as dt, numpy as np
rng = np.random.default_rng(6113)
m, t = 9, 72
beta = rng.uniform(0.6, 1.4, m)
f = rng.normal(0.0068, 0.043, t)
x = f[:, None] * beta[None, :] + rng.normal(0, 1, (t, m)) * rng.uniform(0.04, 0.10, m)[None, :]
ids = ["KV%02d" % (i + 1) for i in range(m)]
with open(sys.argv[1], "w") as fp:
    fp.write("date," + ",".join(ids) + "\n")
    for k in range(t):
        y, mo = 2011 + (k + 1) // 12, (k + 1) % 12 + 1
        d = dt.date(y, mo, 1) - dt.timedelta(days=1)
        fp.write(d.isoformat() + "," + ",".join(repr(float(v)) for v in x[k]) + "\n")
labels = ["Kiln"] * 4 + ["Loom"] * 3 + ["Quay"] * 2
order = [3, 0, 7, 1, 5, 8, 2, 6, 4]           # the map need not follow the file's order
with open(sys.argv[2], "w") as fp:
    fp.write("id,label\n")
    for i in order:
        fp.write("%s,%s\n" % (ids[i], labels[i]))
PY

# The enumeration reference, shared by the checks below: argv = universe,
# map, curve CSV, mode ("cap:K" or "proportional").
cat >"$T/enumerate.py" <<'PY'
import sys, csv, itertools, math, numpy as np
ufile, mfile, cfile, mode = sys.argv[1:5]
with open(ufile) as fp:
    ids = fp.readline().strip().split(",")[1:]
x = np.loadtxt(ufile, delimiter=",", skiprows=1, usecols=range(1, len(ids) + 1))
label = dict(r for r in csv.reader(open(mfile)) if r[0] != "id")
names = sorted(set(label.values()))
stratum = [names.index(label[i]) for i in ids]
m, S, P = len(ids), len(names), 12.0
size = [stratum.count(s) for s in range(S)]

def hamilton(n):
    # largest remainder: floors of n m_s / M, then one seat each to the
    # largest remainders n m_s mod M (ties: larger stratum, then earlier)
    base = [n * size[s] // m for s in range(S)]
    rest = sorted(range(S), key=lambda s: (-(n * size[s] % m), -size[s], s))
    for s in rest[: n - sum(base)]:
        base[s] += 1
    return base

def admissible(n):
    if mode == "proportional":
        want = hamilton(n)
        ok = lambda c: c == want
    else:
        k = int(mode.split(":")[1])
        ok = lambda c: max(c) <= k
    for sub in itertools.combinations(range(m), n):
        c = [0] * S
        for i in sub:
            c[stratum[i]] += 1
        if ok(c):
            yield sub

rows = list(csv.DictReader(open(cfile)))
bad = 0
for r in rows:
    n = int(r["n"])
    subs = list(admissible(n))
    if not subs:
        if r["stratified_feasible"] != "false" or r["stratified_mean_variance"] != "":
            print("n=%d: no admissible portfolio, but feasible=%r mean=%r" % (n, r["stratified_feasible"], r["stratified_mean_variance"])); bad += 1
        continue
    # every admissible portfolio's variance (numpy, divisor T-1), annualised
    v = np.array([np.var(x[:, list(s)].mean(axis=1), ddof=1) * P for s in subs])
    exact = v.mean()
    if r["stratified_feasible"] != "true":
        print("n=%d: %d admissible portfolios, but feasible=%r" % (n, len(subs), r["stratified_feasible"])); bad += 1
        continue
    mean, se = float(r["stratified_mean_variance"]), float(r["stratified_variance_se"])
    if v.max() - v.min() <= 1e-12 * exact:     # a single portfolio: no spread to sample
        if abs(mean - exact) > 1e-10 * exact:
            print("n=%d: one portfolio %.17g, sampled %.17g" % (n, exact, mean)); bad += 1
    elif not abs(mean - exact) <= 4 * se:      # 4 Monte Carlo standard errors
        print("n=%d: sampled mean %.10g, enumeration %.10g, se %.3g" % (n, mean, exact, se)); bad += 1
    if mode == "proportional":
        ev = float(r["stratified_expected_variance"])
        if abs(ev - exact) > 1e-10 * exact:
            print("n=%d: exact column %.17g, enumeration %.17g" % (n, ev, exact)); bad += 1
    print("n=%d: %d admissible, enumeration %.6g, sampled %s (se %s)" % (n, len(subs), exact, r["stratified_mean_variance"], r["stratified_variance_se"]), file=sys.stderr)
sys.exit(1 if bad else 0)
PY

cols="stratified_feasible,stratified_expected_variance,stratified_mean_variance,stratified_variance_se,stratified_mean_sd,stratified_sd_p05,stratified_sd_p50,stratified_sd_p95,stratified_z_score"

# 1. The cap: columns present, feasibility, and the sampled mean variance
#    against enumeration.  With strata of 4, 3 and 2 and at most 2 in each,
#    the largest portfolio has 2 + 2 + 2 = 6 holdings.
expect 0 "" -- curve "$T/u.csv" --strata "$T/map.csv" --per-stratum-max 2 --sizes 1-9 \
	--paths 20000 --seed 11 --quiet --format csv
cp "$T/out" "$T/cap.csv"
head -1 "$T/cap.csv" | grep -q ",$cols\$" || fail "cap: stratified columns missing: $(head -1 "$T/cap.csv")"
"$PY" "$T/enumerate.py" "$T/u.csv" "$T/map.csv" "$T/cap.csv" cap:2 2>"$T/enum.log" \
	|| fail "cap: sampled stratified mean against enumeration: $(cat "$T/enum.log")"
expect 0 "" -- curve "$T/u.csv" --strata "$T/map.csv" --per-stratum-max 2 --sizes 1-9 \
	--paths 2000 --seed 11 --quiet --format json
"$PY" - "$T/out" <<'PY' || fail "cap: the feasibility note"
import sys, json
j = json.load(open(sys.argv[1]))
want = ("stratified: no portfolio of more than 6 holdings has at most 2 in every stratum "
        "(the sum over strata of the smaller of 2 and the stratum's size); "
        "left out of the stratified columns: 7-9")
assert want in j["cautions"], j["cautions"]
assert j["strata_count"] == 3 and j["per_stratum_max"] == 2, j
PY

# 2. Proportional: the exact column of the fixed allocation and the sampled
#    mean, both against enumeration of the portfolios with Hamilton's
#    allocation.
expect 0 "" -- curve "$T/u.csv" --strata "$T/map.csv" --proportional --sizes 1-9 \
	--paths 20000 --seed 12 --quiet --format csv
cp "$T/out" "$T/prop.csv"
head -1 "$T/prop.csv" | grep -q ",$cols\$" || fail "proportional: stratified columns missing"
"$PY" "$T/enumerate.py" "$T/u.csv" "$T/map.csv" "$T/prop.csv" proportional 2>"$T/enum.log" \
	|| fail "proportional: against enumeration: $(cat "$T/enum.log")"

# 3. The demo (invented data): the cap's maximum counted from the files
#    themselves, the note in curve, and enough's "not met up to N".
demo="$HOLDCOUNT_SOURCE_DIR/data/demo-universe.csv"
sectors="$HOLDCOUNT_SOURCE_DIR/data/demo-sectors.csv"
"$PY" - "$demo" "$sectors" >"$T/most" <<'PY'
import sys, csv
rows = list(csv.reader(open(sys.argv[1])))
ids = rows[0][1:]
# the securities kept: complete over the whole history (--missing complete:
# stratified draws need complete series)
kept = [i for j, i in enumerate(ids) if all(r[j + 1] not in ("", "NA", "NaN", ".") for r in rows[1:])]
sector = {r["id"]: r["sector"] for r in csv.DictReader(open(sys.argv[2]))}
count = {}
for i in kept:
    count[sector.get(i, "")] = count.get(sector.get(i, ""), 0) + 1
print(sum(min(2, c) for c in count.values()), len(kept))
PY
read -r most kept <"$T/most"
[ "$most" = 18 ] || fail "demo: sum of min(2, m_s) is $most, expected 18 (9 sectors of at least 2)"
expect 0 "" -- curve "$demo" --missing complete --strata "$sectors" --strata-column sector --per-stratum-max 2 \
	--paths 300 --quiet --format json
"$PY" - "$T/out" "$most" "$kept" <<'PY' || fail "demo curve: the feasibility note"
import sys, json
j = json.load(open(sys.argv[1])); most = int(sys.argv[2]); kept = int(sys.argv[3])
out = [p["n"] for p in j["curve"] if p["stratified_feasible"] is False]
assert all(n > most for n in out) and all(p["stratified_feasible"] for p in j["curve"] if p["n"] <= most), j["curve"]
named = ", ".join(str(n) for n in out[:-1]) + " and " + str(out[-1])
want = ("stratified: no portfolio of more than %d holdings has at most 2 in every stratum "
        "(the sum over strata of the smaller of 2 and the stratum's size); "
        "left out of the stratified columns: %s" % (most, named))
assert want in j["cautions"], (want, j["cautions"])
assert out[-1] == kept, out
PY
expect 0 "" -- enough "$demo" --missing complete --strata "$sectors" --strata-column sector --per-stratum-max 2 \
	--paths 300 --bootstrap 0 --format csv
"$PY" - "$T/out" "$most" <<'PY' || fail "demo enough: not met up to $most"
import sys, csv
rows = {r["rule"]: r for r in csv.DictReader(open(sys.argv[1]))}
for name in ("band", "lag-share"):
    r = rows[name]
    assert r["met"] == "false" and r["count"] == "", r
    assert r["note"] == "not met up to %s holdings, the most with at most 2 in every stratum" % sys.argv[2], r
PY

# 4. Reproducible: the same bytes for 1 and 2 threads (curve, and enough
#    with the sampled rules' bootstrap, which re-samples per replicate).
for mode in "--per-stratum-max 2" "--proportional"; do
	for th in 1 2; do
		"$HC" curve "$T/u.csv" --strata "$T/map.csv" $mode --sizes 1-9 --paths 3000 --seed 5 \
			--threads $th --quiet --format csv >"$T/c$th.csv" || fail "curve $mode --threads $th: exit $?"
		"$HC" enough "$T/u.csv" --strata "$T/map.csv" $mode --paths 500 --seed 5 --bootstrap 6 \
			--bootstrap-sampled --bootstrap-paths 100 --band 95%:40% --threads $th --quiet \
			--format json >"$T/e$th.json" || fail "enough $mode --threads $th: exit $?"
	done
	cmp -s "$T/c1.csv" "$T/c2.csv" || fail "curve $mode: 1 and 2 threads differ"
	cmp -s "$T/e1.json" "$T/e2.json" || fail "enough $mode: 1 and 2 threads differ"
done
"$PY" - "$T/e1.json" <<'PY' || fail "enough --proportional: the strata fields"
import sys, json
j = json.load(open(sys.argv[1]))
assert j["strata"].startswith("proportional") and j["strata_count"] == 3, j
assert [r["rule"] for r in j["rules"]][2] == "band", j["rules"]
PY

# 5. Usage errors: one message, exit 2, nothing on stdout.
"$PY" - "$T/u.csv" "$T/cov.csv" <<'PY'
import sys, numpy as np
with open(sys.argv[1]) as fp:
    ids = fp.readline().strip().split(",")[1:]
x = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1, usecols=range(1, len(ids) + 1))
a = np.cov(x, rowvar=False)
with open(sys.argv[2], "w") as fp:
    fp.write("id," + ",".join(ids) + "\n")
    for i, r in enumerate(a):
        fp.write(ids[i] + "," + ",".join(repr(float(v)) for v in r) + "\n")
PY
need="needs one of --per-stratum-max K (K at least 1) or --proportional"
expect 2 "holdcount curve: --strata $need" -- curve "$T/u.csv" --strata "$T/map.csv" --quiet
# a history with gaps read period by period (the default): stratified draws need complete series
expect 2 "holdcount curve: --strata draws from complete return series, and '$demo' has gaps: --missing complete keeps only the securities with none" -- \
	curve "$demo" --strata "$sectors" --strata-column sector --per-stratum-max 2 --quiet
expect 2 "holdcount enough: --strata $need" -- enough "$T/u.csv" --strata "$T/map.csv" --quiet
expect 2 "holdcount curve: --strata $need" -- curve "$T/u.csv" --strata "$T/map.csv" --per-stratum-max 2 --proportional --quiet
expect 2 "holdcount curve: --per-stratum-max and --proportional need --strata FILE" -- curve "$T/u.csv" --per-stratum-max 2 --quiet
expect 2 "holdcount enough: --per-stratum-max and --proportional need --strata FILE" -- enough "$T/u.csv" --proportional --quiet
expect 2 "holdcount enough: --strata applies to the sampled rules (band, lag-share, alexeev-tapon-sampled), and none is chosen" -- \
	enough "$T/u.csv" --rules exact --strata "$T/map.csv" --proportional
expect 2 "holdcount curve: --strata draws from return series, not from a covariance matrix" -- \
	curve "$T/cov.csv" --covariance --periods-per-year 12 --strata "$T/map.csv" --proportional
expect 2 "holdcount enough: --strata draws from return series, not from a covariance matrix" -- \
	enough "$T/cov.csv" --covariance --strata "$T/map.csv" --proportional
expect 2 "holdcount enough: --strata draws from return series, not from summary statistics" -- \
	enough --average-sd 0.3 --average-correlation 0.2 --strata "$T/map.csv" --per-stratum-max 2
expect 2 "holdcount curve: --strata draws random portfolios: it needs --paths above 0" -- \
	curve "$T/u.csv" --strata "$T/map.csv" --proportional --paths 0

cli_end cli_strata
