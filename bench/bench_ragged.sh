#!/usr/bin/env bash
# Benchmark: a ragged daily universe read period by period (--missing alive,
# the default for histories with gaps), against loading it (`describe`),
# same file, same run; and the pairwise-complete route for comparison.
#
# usage: bench/bench_ragged.sh [M] [T] [REPEATS]   (from the source tree, after a build)
# env:   BUILD (default build), WORK (scratch dir, default /tmp/holdcount-bench),
#        PYTHON (default /usr/bin/python3)
#
# The universe comes from bench/gen_ragged.py (invented: one factor plus
# noise, 30% of the securities listed late or delisted early, 0.5% of the
# other cells missing, weekdays).  For each repeat: describe, curve --paths 0,
# enough --rules exact --bootstrap 1000; wall time and peak RSS of each
# (GNU time), and the ratio of each to describe's.
set -euo pipefail
cd "$(dirname "$0")/.."
M=${1:-5000}
T=${2:-2500}
REPEATS=${3:-3}
BUILD=${BUILD:-build}
WORK=${WORK:-/tmp/holdcount-bench}
PYTHON=${PYTHON:-/usr/bin/python3}
HC=$BUILD/holdcount
U=$WORK/ragged${M}x${T}.csv

mkdir -p "$WORK"
[ -s "$U" ] || "$PYTHON" bench/gen_ragged.py "$U" --securities "$M" --periods "$T"
run() { # label, command...
  local label=$1; shift
  /usr/bin/time -f "%e %M" -o "$WORK/time.txt" "$@" >"$WORK/out.txt" 2>"$WORK/err.txt" || {
    echo "$label failed: $(head -2 "$WORK/err.txt")" >&2; exit 1; }
  read -r secs kb <"$WORK/time.txt"
  echo "$label $secs $kb"
}
echo "universe $U ($M securities x $T periods)"
for r in $(seq "$REPEATS"); do
  d=$(run describe "$HC" describe "$U" --format csv --table summary -q)
  c=$(run curve "$HC" curve "$U" --paths 0 -q)
  e=$(run enough "$HC" enough "$U" --rules exact --bootstrap 1000 -q)
  set -- $d; ds=$2; dk=$3
  set -- $c; cs=$2; ck=$3
  set -- $e; es=$2; ek=$3
  awk -v r="$r" -v ds="$ds" -v dk="$dk" -v cs="$cs" -v ck="$ck" -v es="$es" -v ek="$ek" 'BEGIN {
    printf "repeat %s: describe %.2f s %.0f MiB | curve --paths 0 %.2f s %.0f MiB (%.2fx) | enough --rules exact --bootstrap 1000 %.2f s %.0f MiB (%.2fx)\n",
      r, ds, dk / 1024, cs, ck / 1024, cs / ds, es, ek / 1024, es / ds }'
done
