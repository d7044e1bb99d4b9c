#!/usr/bin/env bash
# bench_enough.sh - time `holdcount enough` with 1000 bootstrap replicates on
# 1000 securities x 240 months (issue 3's target: under 2 s, whole process).
#
# Usage: bench/bench_enough.sh [BUILD_DIR]   (default: build)
# Runs each timing 3 times; the machine is shared, so read the best and the
# spread, not one figure.  Prints CPU time and peak RSS from /usr/bin/time
# when present (CPU time is the steadier figure when other jobs hold a core).
# The machine's load average is printed first.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/.." && pwd)"
build="${1:-$root/build}"
bin="$build/holdcount"
py=/usr/bin/python3
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
data="$work/u1000x240.csv"

if [ -f "$here/gen_universe.py" ]; then
	"$py" "$here/gen_universe.py" --securities 1000 --periods 240 --seed 7 "$data"
else
	# A one-factor model (common practice), seeded; ISO month-end dates.
	"$py" - "$data" <<'PY'
import sys, numpy as np, datetime as dt
rng = np.random.default_rng(7)
m, t = 1000, 240
beta = rng.uniform(0.5, 1.5, m)
f = rng.normal(0.007, 0.045, t)
x = f[:, None] * beta[None, :] + rng.normal(0.0, 1.0, (t, m)) * rng.uniform(0.05, 0.12, m)[None, :]
dates = []
for k in range(t):
    y, mo = 2001 + (k + 1) // 12, (k + 1) % 12 + 1
    dates.append((dt.date(y, mo, 1) - dt.timedelta(days=1)).isoformat())
with open(sys.argv[1], "w") as fp:
    fp.write("date," + ",".join("S%04d" % i for i in range(m)) + "\n")
    for k in range(t):
        fp.write(dates[k] + "," + ",".join("%.6f" % v for v in x[k]) + "\n")
PY
fi

timeit() {
	local label="$1"; shift
	for run in 1 2 3; do
		if [ -x /usr/bin/time ]; then
			/usr/bin/time -f "$label run $run: %e s wall, %U s user + %S s sys cpu, %M KiB peak RSS" "$@" >/dev/null
		else
			local s e
			s=$(date +%s.%N); "$@" >/dev/null; e=$(date +%s.%N)
			echo "$label run $run: $(echo "$e - $s" | bc) s wall"
		fi
	done
}

echo "holdcount: $("$bin" --version | head -1); threads: ${HOLDCOUNT_THREADS:-all} of $(nproc) cores; load $(cut -d' ' -f1-3 /proc/loadavg)"
timeit "exact rules, --bootstrap 1000" "$bin" enough "$data" --rules exact --bootstrap 1000 --seed 1 --format csv --quiet
timeit "all rules, --paths 1000, --bootstrap 1000" "$bin" enough "$data" --paths 1000 --bootstrap 1000 --seed 1 --format csv --quiet
timeit "all rules, default --paths 10000, --bootstrap 1000" "$bin" enough "$data" --bootstrap 1000 --seed 1 --format csv --quiet
