#!/usr/bin/env bash
# Benchmark: every --measures column against the sd-only sampled curve,
# same universe, same paths, same run (issue 15's target: at most 3x).
#
# usage: bench/bench_measures.sh [REPEATS] [THREADS]   (from the source tree, after a build)
# env:   BUILD (default build), WORK (scratch dir, default /tmp/holdcount-bench),
#        PYTHON (default /usr/bin/python3, for bench/gen_universe.py)
#
# For each repeat, one after the other: `holdcount curve` on 1000
# securities x 240 months, 10000 paths, the 25 sizes of bench_curve.sh,
# seed 1, CSV, first with the default columns (the sd family), then with
# --measures all.  Both whole processes, loading included; the ratios of
# wall time and of CPU time (user + system, GNU time) are printed per
# repeat and as medians.  THREADS (default 1) is passed as --threads: one
# thread keeps the CPU ratio free of the other processes' load.
#
# RAGGED=1 runs the same on a ragged copy of the universe (read period by
# period, --missing alive, the default for a file with gaps): every third
# security lists up to 80 months late, every fourth delists up to 80 months
# early (bench/gen_universe.py's file, cells blanked, seeded);
# PATHS (default 10000) sets the paths of both runs.
set -euo pipefail
cd "$(dirname "$0")/.."
REPEATS=${1:-5}
THREADS=${2:-1}
BUILD=${BUILD:-build}
WORK=${WORK:-/tmp/holdcount-bench}
PYTHON=${PYTHON:-/usr/bin/python3}
SIZES=1,2,3,4,5,6,8,10,12,15,20,25,30,40,50,60,75,100,150,200,300,400,500,750,1000
HC="$BUILD/holdcount"

if [ ! -x /usr/bin/time ]; then
  echo "bench_measures: needs GNU time (/usr/bin/time)" >&2
  exit 2
fi
mkdir -p "$WORK"
[ -s "$WORK/u1000x240.csv" ] || "$PYTHON" bench/gen_universe.py "$WORK/u1000x240.csv" --securities 1000 --periods 240

# wall seconds, CPU seconds (user + system) of a command
measure() {
  local out=$1; shift
  local t0 t1 cpu
  t0=$(date +%s.%N)
  if ! /usr/bin/time -v "$@" >"$out" 2>"$out.time"; then
    echo "failed: $*" >&2; cat "$out.time" >&2; exit 1
  fi
  t1=$(date +%s.%N)
  cpu=$(awk -F': ' '/User time|System time/ {s += $2} END {print s}' "$out.time")
  awk -v a="$t0" -v b="$t1" -v c="$cpu" 'BEGIN {printf "%.3f %.2f\n", b - a, c}'
}

median() { sort -n | awk '{a[NR] = $1} END {print (NR % 2) ? a[(NR + 1) / 2] : (a[NR / 2] + a[NR / 2 + 1]) / 2}'; }

U="$WORK/u1000x240.csv"
if [ "${RAGGED:-0}" = 1 ]; then
  U="$WORK/u1000x240-ragged.csv"
  [ -s "$U" ] || "$PYTHON" - "$WORK/u1000x240.csv" "$U" <<'PY'
import random, sys
rows = [line.rstrip("\n").split(",") for line in open(sys.argv[1])]
rng = random.Random(15)
t, m = len(rows) - 1, len(rows[0]) - 1
for i in range(m):
    lo = rng.randrange(80) if i % 3 == 1 else 0
    hi = t - rng.randrange(80) if i % 4 == 2 else t
    for k in list(range(lo)) + list(range(hi, t)):
        rows[k + 1][i + 1] = ""
open(sys.argv[2], "w").write("\n".join(",".join(r) for r in rows) + "\n")
PY
fi
CMD=("$HC" curve "$U" --paths "${PATHS:-10000}" --sizes "$SIZES" --seed 1 --format csv --quiet --threads "$THREADS")
echo "machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg) (1, 5, 15 min); --threads $THREADS; $U, ${PATHS:-10000} paths"
wr=(); cr=()
for r in $(seq 1 "$REPEATS"); do
  read -r sw sc < <(measure "$WORK/sd.csv" "${CMD[@]}")
  read -r aw ac < <(measure "$WORK/all.csv" "${CMD[@]}" --measures all)
  w=$(awk -v a="$aw" -v b="$sw" 'BEGIN {printf "%.2f", a / b}')
  c=$(awk -v a="$ac" -v b="$sc" 'BEGIN {printf "%.2f", a / b}')
  wr+=("$w"); cr+=("$c")
  echo "run $r: sd only ${sw} s wall, ${sc} s cpu; --measures all ${aw} s wall, ${ac} s cpu; ratio ${w}x wall, ${c}x cpu"
done
echo "median over $REPEATS runs: $(printf '%s\n' "${wr[@]}" | median)x wall, $(printf '%s\n' "${cr[@]}" | median)x cpu (target: at most 3x)"
