#!/usr/bin/env bash
# The commands on valid input, for the memcheck label (tests/reliability.cmake
# runs this under valgrind through HOLDCOUNT_WRAPPER; it also runs plainly).
# Each command must exit 0 and print something; valgrind's exit status 99
# (an invalid access, or a definite or indirect leak) fails the run.
# A command the binary does not know fails the test (nothing is skipped).
set -uo pipefail
: "${HOLDCOUNT:?set by ctest}" "${HOLDCOUNT_SOURCE_DIR:?set by ctest}" "${HOLDCOUNT_TEST_TMP:?set by ctest}"
PYTHON=${PYTHON:-/usr/bin/python3}
read -r -a WRAPPER <<<"${HOLDCOUNT_WRAPPER:-}"
SCRATCH=$HOLDCOUNT_TEST_TMP/memcheck-commands${HOLDCOUNT_WRAPPER_NAME:+-$HOLDCOUNT_WRAPPER_NAME}
rm -rf "$SCRATCH" && mkdir -p "$SCRATCH" || exit 1

# An invented 40-security, 104-week universe (one common factor plus noise).
"$PYTHON" - "$SCRATCH/universe.csv" <<'PY' || exit 1
import datetime, random, sys
rnd = random.Random(2385)
ids = ["W%03d" % (i + 1) for i in range(40)]
with open(sys.argv[1], "w") as f:
    f.write("date," + ",".join(ids) + "\n")
    for k in range(104):
        d = datetime.date(2019, 1, 4) + datetime.timedelta(days=7 * k)
        common = rnd.gauss(0.001, 0.015)
        f.write(d.isoformat() + "," + ",".join("%.5f" % (common + rnd.gauss(0, 0.03)) for _ in ids) + "\n")
PY
U=$SCRATCH/universe.csv

failed=0 ran=0
# run NAME ARGS...: stdout must not be empty; with OUT=FILE set, FILE must
# be written instead.
run() {
	local name=$1 out=${OUT:-}; shift
	"${WRAPPER[@]}" "$HOLDCOUNT" "$@" >"$SCRATCH/$name.out" 2>"$SCRATCH/$name.err" </dev/null
	local rc=$?
	ran=$((ran + 1))
	[ -n "$out" ] || out=$SCRATCH/$name.out
	if [ "$rc" != 0 ] || [ ! -s "$out" ]; then
		echo "FAIL: holdcount $*: exit status $rc, nothing written to $out" >&2
		sed 's/^/    /' "$SCRATCH/$name.err" | head -60 >&2
		failed=$((failed + 1))
	fi
}

run describe describe "$U"
run describe-json describe --format json "$U"
run curve curve --sizes 1-5,10,20,40 --paths 300 --seed 2385 "$U"
OUT=$SCRATCH/curve.csv run curve-csv curve --format csv --paths 200 --seed 7 --output "$SCRATCH/curve.csv" "$U"
run formula formula --average-sd 30% --average-correlation 0.25 --sizes 1,10,100
run enough enough --paths 200 --seed 11 "$U"
# two invented funds on the universe's ids: audit, and the report folder
# (whose only output is the folder: its summary.md must be written)
{ echo "fund,id,value"; for i in 1 2 3 4 5 6; do echo "Ashgrove Narrow,W00$i,0.1$i"; done
  for i in $(seq 10 39); do echo "Ashgrove Wide,W0$i,1"; done; } >"$SCRATCH/funds.csv"
run audit audit --paths 200 --seed 3 --max-weight 20% --holdings "$SCRATCH/funds.csv" "$U"
OUT=$SCRATCH/report/summary.md run report report -q --paths 100 --bootstrap 20 --seed 3 \
	--holdings "$SCRATCH/funds.csv" -o "$SCRATCH/report" "$U"
# a second report with --previous (report.html's since section), and compare
OUT=$SCRATCH/report2/report.html run report-previous report -q --paths 100 --bootstrap 20 --seed 4 \
	--holdings "$SCRATCH/funds.csv" --previous "$SCRATCH/report" -o "$SCRATCH/report2" "$U"
run compare compare --format json "$SCRATCH/report" "$SCRATCH/report2"

# rolling windows (and their bootstrap), kept small: 104 weeks in windows of 52
run rolling rolling --window 52 --step 26 --bootstrap 20 --seed 5 "$U"
# synth's three outputs
OUT=$SCRATCH/synth.csv run synth synth -q --securities 24 --periods 36 --sectors 4 --seed 7 \
	--output "$SCRATCH/synth.csv" --sectors-output "$SCRATCH/synth-sectors.csv" \
	--parameters-output "$SCRATCH/synth-parameters.csv"
# stratified draws: an invented id,label map with four labels
{ echo "id,label"; for i in $(seq 1 40); do printf 'W%03d,L%d\n' "$i" $((i % 4)); done; } >"$SCRATCH/strata.csv"
run curve-strata curve --sizes 1-4,8 --paths 200 --seed 9 --strata "$SCRATCH/strata.csv" --per-stratum-max 2 "$U"
run curve-proportional curve --sizes 4,8 --paths 200 --seed 9 --strata "$SCRATCH/strata.csv" --proportional "$U"
# a covariance matrix (variance 0.0016 + 0.0004 i, covariance 0.0004: positive definite)
"$PYTHON" - "$SCRATCH/cov.csv" <<'PY' || exit 1
import sys
ids = ["K%02d" % (i + 1) for i in range(12)]
with open(sys.argv[1], "w") as f:
    f.write("model," + ",".join(ids) + "\n")
    for i, a in enumerate(ids):
        f.write(a + "," + ",".join("%.6f" % (0.0016 + 0.0004 * i if i == j else 0.0004) for j in range(12)) + "\n")
PY
run describe-covariance describe --covariance --periods-per-year 12 "$SCRATCH/cov.csv"
run curve-covariance curve --covariance --sizes 1-6,12 --paths 200 --seed 4 "$SCRATCH/cov.csv"
# the long layout: the first ten securities as date,id,value rows
"$PYTHON" - "$U" "$SCRATCH/long.csv" <<'PY' || exit 1
import csv, sys
rows = list(csv.reader(open(sys.argv[1])))
with open(sys.argv[2], "w") as f:
    f.write("date,id,value\n")
    for r in rows[1:]:
        for j in range(1, 11):
            f.write("%s,%s,%s\n" % (r[0], rows[0][j], r[j]))
PY
run describe-long describe --layout long "$SCRATCH/long.csv"
run curve-long curve --layout long --sizes 1-5,10 --paths 200 --seed 2 "$SCRATCH/long.csv"

echo "memcheck cli_commands: $ran commands run, $failed failed" >&2
[ "$failed" = 0 ]
