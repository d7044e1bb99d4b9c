#!/usr/bin/env bash
# Benchmark: `holdcount audit` on a ragged daily universe read period by
# period (--missing alive, the default), where each fund's risk comes from
# its own holdings' pairwise-complete covariances and no M x M matrix is
# formed; against loading the file (`describe`), same file, same run.
#
# usage: bench/bench_audit_ragged.sh [M] [T] [PATHS]   (from the source tree, after a build)
# env:   BUILD (default build), WORK (scratch dir, default /tmp/holdcount-bench),
#        PYTHON (default /usr/bin/python3), OTHER (a second holdcount binary to
#        run on the same files, e.g. main's, for comparison; optional)
#
# The universe comes from bench/gen_ragged.py (invented: 30% of the
# securities listed late or delisted early, 0.5% of the other cells
# missing, weekdays).  The invented funds hold 30, 50, 200 and 500
# securities drawn (seed 11) among those observed in the last period, as a
# fund's current holdings are; equal weights.  Prints wall time, user CPU
# and peak RSS (GNU time) of describe, audit --paths 0 and audit --paths
# PATHS (default 1000), and each audit's exit status.
set -uo pipefail
cd "$(dirname "$0")/.."
M=${1:-2000}
T=${2:-2500}
PATHS=${3:-1000}
BUILD=${BUILD:-build}
WORK=${WORK:-/tmp/holdcount-bench}
PYTHON=${PYTHON:-/usr/bin/python3}
U=$WORK/ragged${M}x${T}.csv
F=$WORK/funds${M}x${T}.csv

mkdir -p "$WORK"
[ -s "$U" ] || "$PYTHON" bench/gen_ragged.py "$U" --securities "$M" --periods "$T" || exit 1
"$PYTHON" - "$U" "$F" <<'PY' || exit 1
import random, sys
lines = open(sys.argv[1]).read().splitlines()
ids = lines[0].split(",")[1:]
alive = [i for i, v in zip(ids, lines[-1].split(",")[1:]) if v not in ("", "NA")]
r = random.Random(11)
with open(sys.argv[2], "w") as f:
    f.write("fund,id,weight\n")
    for n in (30, 50, 200, 500):
        for i in r.sample(alive, min(n, len(alive))):
            f.write(f"Bench Fund {n},{i},{1 / n:.12g}\n")
PY
run() { # label, binary, args...
	local label=$1; shift
	/usr/bin/time -f "%e %U %M %x" -o "$WORK/time.txt" "$@" >"$WORK/out.txt" 2>"$WORK/err.txt"
	read -r secs user kb status < <(tail -n 1 "$WORK/time.txt")
	echo "$label: ${secs} s wall, ${user} s user, $((kb / 1024)) MiB peak RSS, exit ${status}"
	[ "$status" = 0 ] || [ "$status" = 10 ] || { head -c 300 "$WORK/err.txt"; echo; }
}
echo "universe $U ($M securities x $T periods), funds $F; load average $(cut -d' ' -f1-3 /proc/loadavg)"
for hc in "$BUILD/holdcount" ${OTHER:+"$OTHER"}; do
	echo "== $hc"
	run describe "$hc" describe "$U" -q
	run "audit --paths 0" "$hc" audit "$U" --holdings "$F" --paths 0 --format csv -q
	run "audit --paths $PATHS" "$hc" audit "$U" --holdings "$F" --paths "$PATHS" --format csv -q
done
