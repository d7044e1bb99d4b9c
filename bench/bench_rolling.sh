#!/usr/bin/env bash
# Rolling windows: exact figures and counts for every window.
#
#   bench/bench_rolling.sh [M] [T] [W]      (default 1000 x 600, window 60)
#
# Writes an invented M-security, T-month return file (one-factor model,
# ids Q0001..; some securities listed late or delisted early so the kept
# set changes) into BENCH_TMP (default build/bench-tmp), then times
# `holdcount rolling --window W --step 1` (T-W+1 windows, the four exact
# rules) three ways: the default (sliding sums, rebuilt every 64 windows
# and whenever the kept set changes), --refresh 1 (every window from
# scratch through hc_universe_window + moments, for comparison), and the
# loader alone (`rolling --window T`: one window).  Target: under 2 s for
# 1000 x 600, window 60, step 1.  Best of 3 wall-clock runs each, on
# one thread (OMP_NUM_THREADS=1).  Figures go in docs/performance.md.
set -euo pipefail
cd "$(dirname "$0")/.."
M=${1:-1000}
T=${2:-600}
W=${3:-60}
HOLDCOUNT=${HOLDCOUNT:-build/holdcount}
TMP=${BENCH_TMP:-build/bench-tmp}
mkdir -p "$TMP"
FILE=$TMP/rolling-${M}x${T}.csv
export OMP_NUM_THREADS=1

if [ ! -s "$FILE" ]; then
	echo "bench_rolling: writing $FILE" >&2
	/usr/bin/python3 - "$M" "$T" "$FILE" <<'PY'
import sys
import numpy as np
m, t, path = int(sys.argv[1]), int(sys.argv[2]), sys.argv[3]
rng = np.random.default_rng(6061)
f = 0.0068 + 0.0441 * rng.standard_normal(t)
beta = 0.5 + rng.random(m)
s = 0.03 + 0.08 * rng.random(m)
x = beta[None, :] * f[:, None] + s[None, :] * rng.standard_normal((t, m))
# A tenth of the securities listed late, another tenth delisted early.
for i in range(0, m, 10):
    x[: rng.integers(1, t // 2), i] = np.nan
for i in range(5, m, 10):
    x[rng.integers(t // 2, t - 1):, i] = np.nan
with open(path, "w") as out:
    out.write("date," + ",".join("Q%04d" % (i + 1) for i in range(m)) + "\n")
    for k in range(t):
        y, mo = 1975 + (k // 12), k % 12 + 1
        cells = ("" if np.isnan(v) else "%.6f" % v for v in x[k])
        out.write("%04d-%02d," % (y, mo) + ",".join(cells) + "\n")
PY
fi

best() {
	local b=999 s e d
	for _ in 1 2 3; do
		s=$(date +%s.%N)
		"$@" >/dev/null
		e=$(date +%s.%N)
		d=$(echo "$e - $s" | bc)
		b=$(echo "if ($d < $b) $d else $b" | bc)
	done
	printf '%.3f' "$b"
}

nwin=$((T - W + 1))
load=$(best "$HOLDCOUNT" rolling "$FILE" --window "$T" --quiet --format csv)
slide=$(best "$HOLDCOUNT" rolling "$FILE" --window "$W" --step 1 --quiet --format csv)
scratch=$(best "$HOLDCOUNT" rolling "$FILE" --window "$W" --step 1 --refresh 1 --quiet --format csv)
echo "universe ${M} x ${T}, window ${W}, step 1: ${nwin} windows"
echo "load + one window:            ${load} s"
echo "rolling (sliding, default):   ${slide} s"
echo "rolling (--refresh 1):        ${scratch} s"
