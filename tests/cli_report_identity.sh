#!/usr/bin/env bash
# cli_report_identity.sh - curve.csv, enough.csv and audit.csv of a report
# are byte for byte what `holdcount curve`, `enough` and `audit` print with
# --format csv and the same options and seed.  A command that is not built
# yet cannot be compared: the script then says which and ends with 77, which
# ctest reports as skipped (not passed).
set -u
HC=${HOLDCOUNT:?}
T=${HOLDCOUNT_TEST_TMP:?}/cli_report_identity
D=${HOLDCOUNT_SOURCE_DIR:?}/data
rm -rf "$T"; mkdir -p "$T"
fails=0 pending=""
OPTS=(--paths 1000 --seed 11)
"$HC" report -q -o "$T/r" "${OPTS[@]}" --bootstrap 100 || { echo "FAIL: report exited $?"; exit 1; }
compare() {   # name command args...
	local name=$1; shift
	"$@" --format csv >"$T/$name" 2>"$T/$name.err"; local rc=$?
	if grep -q "not built yet" "$T/$name.err"; then pending="$pending ${name%.csv}"; return; fi
	if [ $rc -ne 0 ] && [ $rc -ne 1 ]; then echo "FAIL: $* exited $rc: $(head -1 "$T/$name.err")"; fails=$((fails + 1)); return; fi
	cmp -s "$T/$name" "$T/r/$name" || { echo "FAIL: $name differs from '$*'"; fails=$((fails + 1)); }
}
compare curve.csv "$HC" curve "$D/demo-universe.csv" "${OPTS[@]}"
compare enough.csv "$HC" enough "$D/demo-universe.csv" "${OPTS[@]}" --bootstrap 100
[ -f "$D/demo-funds.csv" ] &&
	compare audit.csv "$HC" audit "$D/demo-universe.csv" --holdings "$D/demo-funds.csv" --sectors "$D/demo-sectors.csv" "${OPTS[@]}"
echo "cli_report_identity: $fails failures${pending:+; not compared (command not built yet):$pending}"
[ $fails -eq 0 ] || exit 1
[ -z "$pending" ] || exit 77
