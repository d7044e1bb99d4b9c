#!/usr/bin/env bash
# Benchmark: pairwise-complete covariances (masked Gram products on BLAS)
# against the numpy peer ../shared/peers/peer_pairwise.py, whole process,
# same file, same run, alternating.
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
for r in $(seq "$REPEATS"); do
  /usr/bin/time -f "%e %M" -o "$WORK/hc.t" "$BUILD/holdcount" describe "$U" --missing pairwise \
    --format csv --table summary -q >"$WORK/hc.out"
  /usr/bin/time -f "%e %M" -o "$WORK/peer.t" "$PYTHON" "$PEER" "$U" --sizes 1,2,5,10,20,50,100 >"$WORK/peer.out" 2>/dev/null
  read -r hs hk <"$WORK/hc.t"; read -r ps pk <"$WORK/peer.t"
  hcr=$(grep '^average_correlation,' "$WORK/hc.out" | cut -d, -f2)
  per=$(grep '^average_correlation,' "$WORK/peer.out" | cut -d, -f2)
  awk -v r="$r" -v hs="$hs" -v hk="$hk" -v ps="$ps" -v pk="$pk" -v a="$hcr" -v b="$per" 'BEGIN {
    printf "repeat %s: holdcount %.2f s %.0f MiB | peer %.2f s %.0f MiB | peer/holdcount %.2fx | average correlation %s vs %s\n",
      r, hs, hk / 1024, ps, pk / 1024, ps / hs, a, b }'
done
