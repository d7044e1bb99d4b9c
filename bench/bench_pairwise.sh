#!/usr/bin/env bash
# Benchmark: the pairwise-complete covariance matrix as built for the exact
# spread (masked Gram products on BLAS, then the exact curve with its
# spread: `curve --missing pairwise --paths 0`) against the numpy peer
# ../shared/peers/peer_pairwise.py, which does the same (pairwise matrix,
# average correlation, exact curve with its spread), whole process, same
# file, same run, alternating.  Both keep the securities with 80% coverage.
# The spread agrees when variance_sd / expected_variance at n = 10 (a ratio
# free of the annualisation) agrees.
#
# usage: bench/bench_pairwise.sh [M] [T] [REPEATS]   (from the source tree, after a build)
# env:   BUILD, WORK (default /tmp/holdcount-bench), PEER, PYTHON
set -euo pipefail
cd "$(dirname "$0")/.."
M=${1:-5000}
T=${2:-2500}
REPEATS=${3:-3}
BUILD=${BUILD:-build}
WORK=${WORK:-/tmp/holdcount-bench}
PEER=${PEER:-/work/shared/peers/peer_pairwise.py}
PYTHON=${PYTHON:-/usr/bin/python3}
U=$WORK/ragged${M}x${T}.csv
mkdir -p "$WORK"
[ -s "$U" ] || "$PYTHON" bench/gen_ragged.py "$U" --securities "$M" --periods "$T"
SIZES=1,2,5,10,20,50,100
for r in $(seq "$REPEATS"); do
  /usr/bin/time -f "%e %M" -o "$WORK/hc.t" "$BUILD/holdcount" curve "$U" --missing pairwise --min-coverage ${COVERAGE:-0.8} \
    --paths 0 --sizes "$SIZES" --format csv -q >"$WORK/hc.out"
  /usr/bin/time -f "%e %M" -o "$WORK/peer.t" "$PYTHON" "$PEER" "$U" --min-coverage "${COVERAGE:-0.8}" --sizes "$SIZES" >"$WORK/peer.out" 2>/dev/null
  read -r hs hk <"$WORK/hc.t"; read -r ps pk <"$WORK/peer.t"
  hcr=$(awk -F, '$1 == 10 { printf "%.12g", $4 / $2 }' "$WORK/hc.out")
  per=$(awk -F, '$1 == 10 { printf "%.12g", $3 / $2 }' "$WORK/peer.out")
  awk -v r="$r" -v hs="$hs" -v hk="$hk" -v ps="$ps" -v pk="$pk" -v a="$hcr" -v b="$per" 'BEGIN {
    printf "repeat %s: holdcount %.2f s %.0f MiB | peer %.2f s %.0f MiB | peer/holdcount %.2fx | variance_sd/expected_variance at n=10: %s vs %s\n",
      r, hs, hk / 1024, ps, pk / 1024, ps / hs, a, b }'
done
