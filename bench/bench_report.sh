#!/usr/bin/env bash
# bench_report.sh - time `holdcount report` with its defaults (10000 paths,
# every count for the sampled rules, 1000 bootstrap replicates, gnuplot
# renders when gnuplot is on the PATH): the bundled demo (the README's first
# command, through scripts/demo.sh), then an invented universe of 600
# securities x 240 months from `holdcount synth` (above 256, so the sampled
# rules' staged sampling matters).
#
# Usage: bench/bench_report.sh [BUILD_DIR] [RUNS]   (defaults: build, 3)
# The machine is shared: read the best and the spread, and the CPU seconds
# (user + system, gnuplot's included) beside the wall seconds.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/.." && pwd)"
build="${1:-$root/build}"
runs="${2:-3}"
bin="$build/holdcount"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT

"$bin" synth -q --securities 600 --periods 240 --seed 7 -o "$work/u600.csv"

timeit() {   # label args...
	local label=$1; shift
	for ((i = 1; i <= runs; i++)); do
		rm -rf "$work/out"
		/usr/bin/time -f "$label: %e s wall, %U s user + %S s system, %M KiB peak" \
			/usr/bin/env ${run_path:+PATH=$run_path} "$bin" report -q -o "$work/out" "${@:---demo}" 2>&1 | tail -1
	done
}
echo "load average: $(cut -d' ' -f1-3 /proc/loadavg)"
timeit "demo report"
timeit "600 x 240 report" "$work/u600.csv"
run_path=/nonexistent timeit "demo report, no gnuplot"
