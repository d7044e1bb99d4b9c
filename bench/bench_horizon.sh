#!/usr/bin/env bash
# Benchmark: ending wealth over 20 years (holdcount horizon) with 10 000
# stationary-bootstrap paths per count on 1000 securities x 240 months
# (issue 15's target: under 10 s on this machine).
#
# usage: bench/bench_horizon.sh [REPEATS] [THREADS]   (from the source tree, after a build)
# env:   BUILD (default build), WORK (scratch dir, default /tmp/holdcount-bench),
#        PYTHON (default /usr/bin/python3, for bench/gen_universe.py)
#
# For each repeat: `holdcount horizon U.csv --years 20 --resample bootstrap
# --paths 10000 --sizes (bench_curve.sh's 25, up to all 1000) --seed 1
# --format csv --quiet --threads THREADS`, the whole process with loading;
# wall and CPU (user + system, GNU time) seconds per repeat and medians.
# Every path follows all 1000 securities (the equal-weight universe is the
# benchmark), so each of the 10 000 paths costs 240 x (1000 + 1000) steps.
set -euo pipefail
cd "$(dirname "$0")/.."
REPEATS=${1:-3}
THREADS=${2:-2}
BUILD=${BUILD:-build}
WORK=${WORK:-/tmp/holdcount-bench}
PYTHON=${PYTHON:-/usr/bin/python3}
SIZES=1,2,3,4,5,6,8,10,12,15,20,25,30,40,50,60,75,100,150,200,300,400,500,750,1000
HC="$BUILD/holdcount"

if [ ! -x /usr/bin/time ]; then
  echo "bench_horizon: needs GNU time (/usr/bin/time)" >&2
  exit 2
fi
mkdir -p "$WORK"
[ -s "$WORK/u1000x240.csv" ] || "$PYTHON" bench/gen_universe.py "$WORK/u1000x240.csv" --securities 1000 --periods 240

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

CMD=("$HC" horizon "$WORK/u1000x240.csv" --years 20 --resample bootstrap --paths 10000 --sizes "$SIZES"
     --seed 1 --format csv --quiet --threads "$THREADS")
echo "machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg) (1, 5, 15 min); --threads $THREADS"
ws=(); cs=()
for r in $(seq 1 "$REPEATS"); do
  read -r w c < <(measure "$WORK/horizon.csv" "${CMD[@]}")
  ws+=("$w"); cs+=("$c")
  echo "run $r: ${w} s wall, ${c} s cpu"
done
echo "median over $REPEATS runs: $(printf '%s\n' "${ws[@]}" | median) s wall, $(printf '%s\n' "${cs[@]}" | median) s cpu (target: under 10 s)"
