#!/usr/bin/env bash
# Set up, build, and run every test (the README's test command).
#
#   1. the plain build (build/) and its whole ctest suite;
#   2. a second build with AddressSanitizer and UndefinedBehaviorSanitizer
#      (build-sanitize/, gcc) and its whole suite, failing on any report;
#   3. the valgrind memcheck label (build-memcheck/, ctest -L memcheck);
#   4. a bounded libFuzzer run with clang (build-fuzz/): each seed corpus is
#      replayed, then each target fuzzes for FUZZ_SECONDS (default 60).
#
# Environment: FUZZ_SECONDS (0 replays the corpora only), FUZZ_HOLD (see
# below; FUZZ_HOLD= runs every target), SKIP_STAGES (a
# space-separated list of sanitize, memcheck, fuzz to leave out, e.g. while
# iterating locally; CI leaves it empty).  docs/reliability.md has the
# long-run fuzz command and the figures.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
JOBS=$(nproc)
FUZZ_SECONDS=${FUZZ_SECONDS:-60}
# Targets held out of the timed run because of a known, reported defect that
# the fuzzer finds within seconds (their seed corpora still replay): a
# space-separated list, each entry with a comment naming the defect; empty
# now (fuzz_sizes was held until the size-list cap landed).
FUZZ_HOLD=${FUZZ_HOLD-}
SKIP_STAGES=${SKIP_STAGES:-}

# Every ctest run is counted, so that the script ends with one plain line
# summing the tests of all stages.
TESTS_RUN=0
run_ctest() { # DIR ARGS...: ctest in DIR; fails as ctest fails
	local dir=$1 log n
	shift
	log=$(mktemp)
	(cd "$dir" && ctest --output-on-failure "$@") 2>&1 | tee "$log"
	n=$(sed -n 's/.*tests passed, 0 tests failed out of \([0-9][0-9]*\)$/\1/p' "$log" | tail -n 1)
	rm -f "$log"
	TESTS_RUN=$((TESTS_RUN + ${n:-0}))
}
stage() { printf '\n== test.sh: %s\n' "$*" >&2; }
skipped() { case " $SKIP_STAGES " in *" $1 "*) echo "test.sh: stage $1 skipped (SKIP_STAGES)" >&2; return 0;; esac; return 1; }

stage "plain build and test suite"
bash scripts/setup.sh
run_ctest build -j "$JOBS"

if ! skipped sanitize; then
	stage "sanitizer build (ASan + UBSan) and test suite"
	cmake -S . -B build-sanitize -DCMAKE_BUILD_TYPE=RelWithDebInfo -DHOLDCOUNT_SANITIZE=ON >/dev/null
	cmake --build build-sanitize -j "$JOBS" >/dev/null
	# Reports also go to files, so that one swallowed by a test that expects
	# a non-zero exit status (the bad-input catalogue) still fails the stage.
	SAN_LOGS=$ROOT/build-sanitize/sanitizer-logs
	rm -rf "$SAN_LOGS" && mkdir -p "$SAN_LOGS"
	export ASAN_OPTIONS="detect_leaks=1:abort_on_error=1:log_path=$SAN_LOGS/asan"
	export UBSAN_OPTIONS="halt_on_error=1:print_stacktrace=1:log_path=$SAN_LOGS/ubsan"
	# cli_install and cli_deb (label packaging) ran in the plain build: an
	# installed or packaged sanitizer build is not what anyone ships.
	echo "test.sh: the packaging tests (cli_install, cli_deb) run in the plain build only" >&2
	run_ctest build-sanitize -j "$JOBS" -LE packaging
	unset ASAN_OPTIONS UBSAN_OPTIONS
	if compgen -G "$SAN_LOGS/*" >/dev/null; then
		echo "test.sh: sanitizer reports found:" >&2
		for f in "$SAN_LOGS"/*; do echo "--- $f" >&2; head -40 "$f" >&2; done
		exit 1
	fi
	echo "test.sh: sanitizer suite clean" >&2
fi

if ! skipped memcheck; then
	stage "valgrind memcheck (ctest -L memcheck)"
	cmake -S . -B build-memcheck -DCMAKE_BUILD_TYPE=RelWithDebInfo -DHOLDCOUNT_MEMCHECK=ON >/dev/null
	cmake --build build-memcheck -j "$JOBS" >/dev/null
	run_ctest build-memcheck -j "$JOBS" -L memcheck
fi

if ! skipped fuzz; then
	stage "libFuzzer: corpus replay, then ${FUZZ_SECONDS}s per target"
	CC=clang cmake -S . -B build-fuzz -DCMAKE_BUILD_TYPE=RelWithDebInfo \
		-DHOLDCOUNT_FUZZ=ON -DHOLDCOUNT_TESTS=OFF >/dev/null
	targets=$(cat build-fuzz/tests/fuzz/targets.txt)
	if [ -n "$targets" ]; then
		# shellcheck disable=SC2086 # one word per target
		cmake --build build-fuzz -j "$JOBS" --target $targets >/dev/null
		run_ctest build-fuzz/tests/fuzz -L fuzz
	else
		echo "test.sh: no fuzz target has its modules yet (see the configure messages)" >&2
	fi
	export ASAN_OPTIONS="detect_leaks=1:abort_on_error=1"
	export UBSAN_OPTIONS="halt_on_error=1:print_stacktrace=1"
	SUMMARY=$ROOT/build-fuzz/fuzz-summary.tsv
	printf 'target\tseconds\texecutions\tcorpus_seed\tcorpus_after\n' >"$SUMMARY"
	while read -r target; do
		[ -n "$target" ] || continue
		[ "$FUZZ_SECONDS" -gt 0 ] || break
		case " $FUZZ_HOLD " in *" $target "*)
			echo "test.sh: $target HELD out of the timed run (known defect, see the FUZZ_HOLD comment)" >&2
			printf '%s\theld\t-\t-\t-\n' "$target" >>"$SUMMARY"
			continue ;;
		esac
		name=${target#fuzz_}
		work=$ROOT/build-fuzz/run/$name
		rm -rf "$work" && mkdir -p "$work/corpus" "$work/artifacts"
		# Fuzz into a scratch copy: new inputs stay out of the source tree
		# (merge the useful ones by hand, see docs/reliability.md).
		cp "$ROOT/tests/fuzz/corpus/$name/"* "$work/corpus/"
		seeds=$(ls "$work/corpus" | wc -l)
		if ! build-fuzz/tests/fuzz/"$target" -max_total_time="$FUZZ_SECONDS" -timeout=10 \
			-print_final_stats=1 -artifact_prefix="$work/artifacts/" \
			"$work/corpus" >"$work/log" 2>&1; then
			echo "test.sh: $target found a failure; input saved in $work/artifacts:" >&2
			tail -60 "$work/log" >&2
			exit 1
		fi
		runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$work/log" | tail -1)
		after=$(ls "$work/corpus" | wc -l)
		printf '%s\t%s\t%s\t%s\t%s\n' "$target" "$FUZZ_SECONDS" "$runs" "$seeds" "$after" >>"$SUMMARY"
		echo "test.sh: $target: $runs executions in ${FUZZ_SECONDS}s, corpus $seeds -> $after, no failure" >&2
	done <build-fuzz/tests/fuzz/targets.txt
	unset ASAN_OPTIONS UBSAN_OPTIONS
	# The command-line fuzzer (tests/fuzz/cmdline_fuzz.sh): `report` and the
	# other commands on hostile command lines under a memory limit, with a
	# fresh seed each time (printed, to reproduce), on the ASan+UBSan build
	# when the sanitize stage made one; at most 60 s.
	if [ "$FUZZ_SECONDS" -gt 0 ]; then
		cli_bin=$ROOT/build-fuzz/holdcount
		[ -x "$ROOT/build-sanitize/holdcount" ] && cli_bin=$ROOT/build-sanitize/holdcount
		[ -x "$cli_bin" ] || cmake --build build-fuzz -j "$JOBS" --target holdcount >/dev/null
		cli_secs=$FUZZ_SECONDS; [ "$cli_secs" -le 60 ] || cli_secs=60
		bash tests/fuzz/cmdline_fuzz.sh "$cli_bin" "$cli_secs" "$(date +%s)" || {
			echo "test.sh: the command-line fuzzer found a failure (above)" >&2; exit 1; }
	fi
fi

stage "all stages passed"
echo "test.sh: $TESTS_RUN passed, 0 failed"
