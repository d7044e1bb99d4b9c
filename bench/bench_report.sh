#!/usr/bin/env bash
# bench_report.sh - time `holdcount report` with its defaults (10000 paths,
# every count for the sampled rules, 1000 bootstrap replicates, gnuplot
# renders when gnuplot is on the PATH): the bundled demo (the README's first
# command, through scripts/demo.sh), then an invented universe of 600
# securities x 240 months from `holdcount synth` (above 256, so the sampled
# rules' staged sampling matters); the same size with no listing or
# delisting (a complete history, so the tail section's ending wealth over
# ten years is computed too); and each with the tail-and-horizon section
# off (--tail off), to show its cost.
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
"$bin" synth -q --securities 600 --periods 240 --seed 7 --late-share 0 --early-share 0 -o "$work/c600.csv"

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
timeit "demo report, --tail off" --demo --tail off
timeit "600 x 240 report" "$work/u600.csv"
timeit "600 x 240 report, --tail off" "$work/u600.csv" --tail off
timeit "600 x 240 complete report" "$work/c600.csv"
timeit "600 x 240 complete report, --tail off" "$work/c600.csv" --tail off
run_path=/nonexistent timeit "demo report, no gnuplot"
