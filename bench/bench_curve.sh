#!/usr/bin/env bash
# Benchmark: the sampled risk-by-count curve, holdcount against the numpy
# peer (../shared/peers/numpy_curve.py), whole process, same run.
#
# usage: bench/bench_curve.sh [REPEATS]     (from the source tree, after a build)
# env:   BUILD (default build), WORK (scratch dir, default /tmp/holdcount-bench),
#        PEER (the numpy script), PYTHON (default /usr/bin/python3)
#
# For each repeat: holdcount curve on 1000 securities x 240 months, 2000
# paths, the peer's 25 sizes, seed 1, CSV; then the peer the same way; the
# wall-time ratio and both peak RSS.  Then `curve --paths 0` on 5000 x 600
# (loading included).  When the build has no `curve` command yet, the
# library is timed through bench/bench_sampler.c instead, and the script
# says so.
set -euo pipefail
cd "$(dirname "$0")/.."
REPEATS=${1:-3}
BUILD=${BUILD:-build}
WORK=${WORK:-/tmp/holdcount-bench}
PEER=${PEER:-/work/shared/peers/numpy_curve.py}
PYTHON=${PYTHON:-/usr/bin/python3}
SIZES=1,2,3,4,5,6,8,10,12,15,20,25,30,40,50,60,75,100,150,200,300,400,500,750,1000

if [ ! -x /usr/bin/time ]; then
  apt-get install -y time >/dev/null
fi
mkdir -p "$WORK"
[ -s "$WORK/u1000x240.csv" ] || "$PYTHON" bench/gen_universe.py "$WORK/u1000x240.csv" --securities 1000 --periods 240
[ -s "$WORK/u5000x600.csv" ] || "$PYTHON" bench/gen_universe.py "$WORK/u5000x600.csv" --securities 5000 --periods 600

HC="$BUILD/holdcount"
if [ -x "$HC" ] && "$HC" curve "$WORK/u1000x240.csv" --paths 1 --sizes 1 --format csv --quiet >/dev/null 2>&1; then
  subject="holdcount curve"
  curve_cmd() { CMD=("$HC" curve "$1" --paths "$2" --sizes "$SIZES" --seed 1 --format csv --quiet); }
else
  subject="bench_sampler (library alone: the CLI has no curve command yet)"
  gcc -O2 -std=c11 -D_POSIX_C_SOURCE=200809L -fopenmp -Iinclude bench/bench_sampler.c \
    "$BUILD/libholdcount.a" -lgsl -lopenblas -lcsv -lcjson -lm -o "$WORK/bench_sampler"
  curve_cmd() { CMD=("$WORK/bench_sampler" "$1" "$2" 1 0 "$SIZES"); }
fi

# wall seconds (from the clock around the process), CPU seconds (user +
# system) and peak RSS (KB), the last two from GNU time -v, of a command
measure() {
  local out=$1; shift
  local t0 t1 rss cpu
  t0=$(date +%s.%N)
  if ! /usr/bin/time -v "$@" >"$out" 2>"$out.time"; then
    echo "failed: $*" >&2; cat "$out.time" >&2; exit 1
  fi
  t1=$(date +%s.%N)
  rss=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$out.time")
  cpu=$(awk -F': ' '/User time|System time/ {s += $2} END {print s}' "$out.time")
  awk -v a="$t0" -v b="$t1" -v r="$rss" -v c="$cpu" 'BEGIN {printf "%.3f %s %.2f\n", b - a, r, c}'
}

echo "subject: $subject"
echo "machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg) (1, 5, 15 min)"
ratios=()
for r in $(seq 1 "$REPEATS"); do
  curve_cmd "$WORK/u1000x240.csv" 2000
  read -r hw hr hc < <(measure "$WORK/hc.csv" "${CMD[@]}")
  read -r pw pr pc < <(measure "$WORK/peer.csv" "$PYTHON" "$PEER" "$WORK/u1000x240.csv" --paths 2000 --seed 1 --sizes "$SIZES")
  ratio=$(awk -v a="$pw" -v b="$hw" 'BEGIN {printf "%.1f", a / b}')
  ratios+=("$ratio")
  echo "run $r: 1000x240, 2000 paths: holdcount ${hw} s wall, ${hc} s cpu, ${hr} KB; numpy ${pw} s wall, ${pc} s cpu, ${pr} KB; wall ratio ${ratio}x"
done
median=$(printf '%s\n' "${ratios[@]}" | sort -n | awk '{a[NR] = $1} END {print (NR % 2) ? a[(NR + 1) / 2] : (a[NR / 2] + a[NR / 2 + 1]) / 2}')
echo "median wall ratio over $REPEATS runs: ${median}x (target: at least 60x)"
for r in $(seq 1 "$REPEATS"); do
  curve_cmd "$WORK/u5000x600.csv" 0
  read -r zw zr zc < <(measure "$WORK/hc0.csv" "${CMD[@]}")
  echo "run $r: 5000x600, --paths 0: holdcount ${zw} s wall, ${zc} s cpu, ${zr} KB (target: under 1 s)"
done
