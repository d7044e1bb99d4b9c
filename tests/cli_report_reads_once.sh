#!/usr/bin/env bash
# cli_report_reads_once.sh - `holdcount report` opens its universe file once
# (counted by strace: open/openat calls naming the file), with the default
# rolling windows (which need every security, gaps kept) and without them
# (--window 0); the complete series the rest reads are made from the same
# read (hc_universe_apply_missing).  Before this, a report with windows read
# the file twice.
set -u
HC=${HOLDCOUNT:?}
D=${HOLDCOUNT_SOURCE_DIR:?}/data
T=${HOLDCOUNT_TEST_TMP:?}/cli_report_reads_once
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
command -v strace >/dev/null || { echo "FAIL: strace is needed to count the opens"; exit 1; }
cp "$D/demo-universe.csv" "$T/universe-under-test.csv"

# opens DIR args...: how many times the run opened universe-under-test.csv
opens() {
	local dir=$1; shift
	ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0" strace -f -qq -e trace=open,openat,openat2 \
		-o "$T/$dir.st" "$HC" report "$T/universe-under-test.csv" -q -o "$T/$dir" --paths 200 --bootstrap 0 "$@" \
		>/dev/null 2>"$T/$dir.err" || { fail "report $*: exit $? $(head -c 200 "$T/$dir.err")"; echo 0; return; }
	grep -c 'universe-under-test\.csv"' "$T/$dir.st"
}
n=$(opens windows)
[ "$n" = 1 ] || fail "report with rolling windows opened the universe $n times, expected 1"
[ -f "$T/windows/rolling.csv" ] || fail "report with rolling windows wrote no rolling.csv"
n=$(opens nowindows --window 0)
[ "$n" = 1 ] || fail "report --window 0 opened the universe $n times, expected 1"
# the strace log is not empty by accident: the holdings it was not given
# are not opened, and the report folder is
grep -q 'summary.json' "$T/windows.st" || fail "strace saw no open of summary.json: the count above proves nothing"

[ $fails -eq 0 ] && echo "cli_report_reads_once: ok"
exit $((fails > 0))
