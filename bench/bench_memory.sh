#!/usr/bin/env bash
# Peak memory of loading a large universe, against the size of its numbers.
#
#   bench/bench_memory.sh [M] [T]          (default 5000 x 5000)
#
# Writes an invented M-security, T-period return file (weekly dates, ids
# Z00001..; about 9 bytes a cell, so 5000 x 5000 is about 230 MB) into
# BENCH_TMP (default build/bench-tmp), runs `holdcount describe` on it under
# /usr/bin/time -v, and prints the peak resident set size next to M*T*8
# bytes (the numbers as doubles).  The target is a ratio under 3.  The
# loader alone is measured the same way through bench/bench_load.c (built
# here against the build's libholdcount.a, as bench_curve.sh builds its
# driver).  It then
# checks that the same file is refused under a memory budget smaller than
# its numbers (--max-memory), with exit status 5 and a message instead of
# an out-of-memory kill.  Figures go in docs/reliability.md with the command.
set -euo pipefail
cd "$(dirname "$0")/.."
M=${1:-5000}
T=${2:-5000}
HOLDCOUNT=${HOLDCOUNT:-build/holdcount}
TMP=${BENCH_TMP:-build/bench-tmp}
mkdir -p "$TMP"
FILE=$TMP/universe-${M}x${T}.csv

if [ ! -s "$FILE" ]; then
	echo "bench_memory: writing $FILE" >&2
	/usr/bin/python3 - "$M" "$T" "$FILE" <<'PY'
import datetime, sys
import numpy as np
m, t, path = int(sys.argv[1]), int(sys.argv[2]), sys.argv[3]
rng = np.random.default_rng(2385)
start = datetime.date(1990, 1, 5)
with open(path + ".part", "w") as f:
    f.write("date," + ",".join("Z%05d" % (i + 1) for i in range(m)) + "\n")
    common = rng.normal(0.0008, 0.012, size=t)        # one invented market factor
    for k in range(t):
        row = common[k] + rng.normal(0.0, 0.025, size=m)
        d = start + datetime.timedelta(days=7 * k)
        f.write(d.isoformat() + "," + ",".join("%.5f" % v for v in row) + "\n")
import os
os.replace(path + ".part", path)
PY
fi

numbers=$((M * T * 8))
echo "bench_memory: $HOLDCOUNT describe $FILE" >&2
/usr/bin/time -v "$HOLDCOUNT" describe "$FILE" >"$TMP/describe.out" 2>"$TMP/time.txt" || {
	echo "bench_memory: describe failed:" >&2; cat "$TMP/time.txt" >&2; exit 1; }
rss_kb=$(sed -n 's/^[[:space:]]*Maximum resident set size (kbytes): //p' "$TMP/time.txt")
wall=$(sed -n 's/^[[:space:]]*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$TMP/time.txt")
ratio=$(awk -v r="$rss_kb" -v n="$numbers" 'BEGIN { printf "%.2f", r * 1024 / n }')
printf 'universe %sx%s: file %s bytes, numbers %s bytes as doubles\n' "$M" "$T" "$(stat -c %s "$FILE")" "$numbers"
printf 'describe: peak RSS %s kB (%.1f MB), %s x the numbers (target < 3), wall %s\n' \
	"$rss_kb" "$(awk -v r="$rss_kb" 'BEGIN { print r / 1024 }')" "$ratio" "$wall"

# The loader alone (bench/bench_load.c).
gcc -O2 -std=c11 -Iinclude bench/bench_load.c "$(dirname "$HOLDCOUNT")/libholdcount.a" \
	-fopenmp -lgsl -lopenblas -lcsv -lcjson -lm -o "$TMP/bench_load"
/usr/bin/time -v "$TMP/bench_load" "$FILE" >/dev/null 2>"$TMP/load.txt" || {
	echo "bench_memory: bench_load failed:" >&2; cat "$TMP/load.txt" >&2; exit 1; }
rss_load=$(sed -n 's/^[[:space:]]*Maximum resident set size (kbytes): //p' "$TMP/load.txt")
wall_load=$(sed -n 's/^[[:space:]]*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$TMP/load.txt")
printf 'loading alone (bench_load): peak RSS %s kB (%.1f MB), %s x the numbers, wall %s\n' \
	"$rss_load" "$(awk -v r="$rss_load" 'BEGIN { print r / 1024 }')" \
	"$(awk -v r="$rss_load" -v n="$numbers" 'BEGIN { printf "%.2f", r * 1024 / n }')" "$wall_load"

# A budget below the numbers' size must be refused cleanly (exit 5).
budget=$((numbers / 2 / 1048576))   # MiB
set +e
/usr/bin/time -v "$HOLDCOUNT" describe --max-memory "$budget" "$FILE" >/dev/null 2>"$TMP/budget.txt"
rc=$?
set -e
msg=$(grep -v -E '^\s|^Command' "$TMP/budget.txt" | head -n 1)
rss2=$(sed -n 's/^[[:space:]]*Maximum resident set size (kbytes): //p' "$TMP/budget.txt")
printf 'describe --max-memory %s: exit %s, peak RSS %s kB, message: %s\n' "$budget" "$rc" "$rss2" "$msg"
# A budget the loading fits (twice the numbers) but the averages' working
# arrays do not (a centred copy, and the covariance row blocks or the Gram
# matrix) must be refused too, before they are allocated.
budget2=$(((2 * numbers + 1048575) / 1048576 + 2))   # MiB
set +e
/usr/bin/time -v "$HOLDCOUNT" describe --max-memory "$budget2" "$FILE" >/dev/null 2>"$TMP/budget2.txt"
rc2=$?
set -e
msg2=$(grep -v -E '^\s|^Command' "$TMP/budget2.txt" | head -n 1)
rss3=$(sed -n 's/^[[:space:]]*Maximum resident set size (kbytes): //p' "$TMP/budget2.txt")
printf 'describe --max-memory %s: exit %s, peak RSS %s kB, message: %s\n' "$budget2" "$rc2" "$rss3" "$msg2"
status=0
[ "$rc" = 5 ] || { echo "bench_memory: expected exit status 5 under --max-memory $budget" >&2; status=1; }
[ "$rc2" = 5 ] || { echo "bench_memory: expected exit status 5 under --max-memory $budget2" >&2; status=1; }
awk -v r="$ratio" 'BEGIN { exit !(r < 3) }' || { echo "bench_memory: peak RSS ratio $ratio is not under 3" >&2; status=1; }
exit $status
