#!/usr/bin/env bash
# cli_hostile.sh - holdcount under hostile environments (issue 17): output
# targets that are not regular files, thread counts and process limits,
# sizes whose products overflow, extreme but finite values, the memory
# budget's coverage, report folders shared with other runs, file-size
# limits, and every row of the exit-status table (docs/reliability.md).
# Each check names the defect class it guards; each failed on the code
# before issue 17 (docs/reliability.md, "Hostile environments").
. "$(dirname "$0")/lib.sh"
cli_begin cli_hostile
U=${HOLDCOUNT_SOURCE_DIR:?}/data/demo-universe.csv
F=${HOLDCOUNT_SOURCE_DIR:?}/data/demo-funds.csv
export HOLDCOUNT_DATA_DIR=${HOLDCOUNT_SOURCE_DIR}/data
# An address-space limit (KiB) for a run; an ASan build reserves terabytes
# of shadow address space, so there the limit is left off and the memory
# budget's own messages are what is checked.
asan=0; ldd "$HC" 2>/dev/null | grep -q libasan && asan=1
vlimit() { local kib=$1; shift; if [ $asan = 1 ]; then "$@"; else ( ulimit -v "$kib"; "$@" ); fi; }

# ---- 1. output targets: a non-regular target is written in place ----------
# A FIFO stays a FIFO and its reader gets the whole table.
mkfifo "$T/fifo"
timeout 60 cat "$T/fifo" >"$T/fifo.out" & reader=$!
"$HC" describe "$U" -o "$T/fifo" 2>"$T/err" || fail "describe -o FIFO exited $? ($(cat "$T/err"))"
[ -p "$T/fifo" ] || kill $reader   # replaced: the reader would wait for a writer forever
wait $reader
[ -p "$T/fifo" ] || fail "describe -o FIFO replaced the FIFO"
"$HC" describe "$U" >"$T/want"
cmp -s "$T/fifo.out" "$T/want" || fail "the FIFO's reader did not get the table"
ls -A "$T" | grep -q '\.tmp-' && fail "-o FIFO left a temporary"
# A character device (as root, a copy of /dev/null's node: a regression can
# only spoil the copy) stays a character device, for every writer.
if [ "$(id -u)" = 0 ] && mknod "$T/null" c 1 3 2>/dev/null; then
	for args in "describe $U" "curve $U --paths 50" "formula --average-sd 30% --average-correlation 0.2" \
		    "synth --securities 10 --periods 30 --sectors 2 -q"; do
		# shellcheck disable=SC2086
		"$HC" $args -o "$T/null" 2>"$T/err" || fail "$args -o NODE exited $? ($(cat "$T/err"))"
		[ -c "$T/null" ] || { fail "$args -o NODE replaced the character device"; rm -f "$T/null"; mknod "$T/null" c 1 3; }
	done
	"$HC" synth --securities 10 --periods 30 --sectors 2 -q -o "$T/s.csv" --sectors-output "$T/null" \
		--parameters-output "$T/null2" 2>"$T/err" || fail "synth --sectors-output NODE exited $?"
	[ -c "$T/null" ] || fail "synth --sectors-output NODE replaced the device"
	# only once the copy has stayed a device: the real /dev/null
	if [ -c "$T/null" ]; then
		"$HC" describe "$U" -o /dev/null || fail "describe -o /dev/null exited $?"
		[ -c /dev/null ] || fail "describe -o /dev/null turned /dev/null into a regular file"
	fi
else
	echo "NOTE: not root (or no mknod): the device-node check ran on /dev/null's write only"
	"$HC" describe "$U" -o /dev/null || fail "describe -o /dev/null exited $?"
	[ -c /dev/null ] || fail "/dev/null is no longer a character device"
fi
# -o /dev/stdout appended to a log keeps the log's earlier lines.
printf 'earlier line 1\nearlier line 2\n' >"$T/log"
"$HC" describe "$U" -o /dev/stdout >>"$T/log" || fail "describe -o /dev/stdout >> log exited $?"
[ "$(head -n 2 "$T/log")" = "$(printf 'earlier line 1\nearlier line 2')" ] || fail "-o /dev/stdout >> log wiped the log"
[ "$(tail -n +3 "$T/log")" = "$(cat "$T/want")" ] || fail "-o /dev/stdout >> log: the table is not after the earlier lines"
"$HC" curve "$U" --paths 50 -q -o /dev/fd/1 >>"$T/log" || fail "curve -o /dev/fd/1 >> log exited $?"
[ "$(head -n 1 "$T/log")" = "earlier line 1" ] || fail "-o /dev/fd/1 >> log wiped the log"
# a link to /dev/stdout is written through the descriptor too
ln -s /dev/stdout "$T/to-stdout"
"$HC" describe "$U" -o "$T/to-stdout" >>"$T/log" || fail "describe -o LINK-TO-STDOUT exited $?"
[ -L "$T/to-stdout" ] && [ "$(head -n 1 "$T/log")" = "earlier line 1" ] || fail "-o link to /dev/stdout replaced something"
# a directory is refused, untouched
mkdir "$T/adir"
expect 4 "holdcount describe: cannot write '$T/adir': Is a directory" -- describe "$U" -o "$T/adir"
[ -d "$T/adir" ] || fail "-o DIR removed the folder"

# ---- 2. thread counts: one parse, one message, a cap ------------------------
msg="a whole number from 1 to 1024 (the most threads holdcount starts)"
for n in 0 1025 100000 2147483648 4294967297 18446744073709551616 -1 2x; do
	expect 2 "holdcount curve: option '--threads' expects $msg, found '$n'" -- curve "$U" --threads "$n"
	expect 2 "holdcount enough: option '--threads' expects $msg, found '$n'" -- enough "$U" --threads "$n"
	expect 2 "holdcount audit: option '--threads' expects $msg, found '$n'" -- audit "$U" --holdings "$F" --threads "$n"
	expect 2 "holdcount rolling: option '--threads' expects $msg, found '$n'" -- rolling "$U" --threads "$n"
	expect 2 "holdcount report: option '--threads' expects $msg, found '$n'" -- report -o "$T/r-threads" --threads "$n"
	HOLDCOUNT_THREADS=$n expect 2 "holdcount curve: HOLDCOUNT_THREADS must be $msg, found '$n'" -- curve "$U"
	HOLDCOUNT_THREADS=$n expect 2 "holdcount audit: HOLDCOUNT_THREADS must be $msg, found '$n'" -- audit "$U" --holdings "$F"
done
[ -e "$T/r-threads" ] && fail "a refused thread count left a report folder"
expect 0 "" -- curve "$U" --threads 1024 --paths 300 -q

# Under a process limit the commands fall back to the threads they can
# start (exit 0, same output), and a process they cannot start is the
# resource status 8, never 1 or 130.  RLIMIT_NPROC counts every process of
# the user and does not bind root, so the runs are made as 'nobody'.
if [ "$(id -u)" = 0 ] && command -v setpriv >/dev/null && command -v prlimit >/dev/null; then
	chmod 755 "$T"; mkdir "$T/nobody"; chown 65534:65534 "$T/nobody"
	# (LeakSanitizer stops the world with a thread of its own at exit, which
	# a process limit of 1 refuses: its leak check is off for these runs.)
	as_limited() { ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0" \
		setpriv --reuid=65534 --regid=65534 --clear-groups prlimit --nproc="$1" "${@:2}"; }
	"$HC" curve "$U" --paths 2000 --threads 1 -q >"$T/one"
	for n in 1 2; do
		as_limited $n "$HC" curve "$U" --paths 2000 --threads 8 -q >"$T/lim" 2>"$T/err"; rc=$?
		[ $rc = 0 ] || fail "curve --threads 8 under nproc=$n: exit $rc ($(head -c 200 "$T/err"))"
		cmp -s "$T/one" "$T/lim" || fail "curve under nproc=$n: output differs from one thread's"
		for c in "enough $U --paths 200 --bootstrap 40" "audit $U --holdings $F --paths 200" \
			 "rolling $U --bootstrap 20" "describe $U"; do
			# shellcheck disable=SC2086
			as_limited $n "$HC" $c -q >/dev/null 2>"$T/err"; rc=$?
			[ $rc = 0 ] || fail "$c under nproc=$n: exit $rc ($(head -c 200 "$T/err"))"
		done
	done
	# report: the sampling falls back; gnuplot cannot be started at all
	as_limited 1 "$HC" report -o "$T/nobody/r-nproc" --paths 200 --bootstrap 20 -q 2>"$T/err"; rc=$?
	[ $rc = 8 ] || fail "report under nproc=1: exit $rc, expected 8 (resource) ($(cat "$T/err"))"
	grep -q "a process limit" "$T/err" || fail "report under nproc=1: message was $(cat "$T/err")"
	[ -z "$(ls -A "$T/nobody")" ] || fail "report under nproc=1 left $(ls -A "$T/nobody")"
else
	echo "NOTE: not root: the process-limit checks (RLIMIT_NPROC as 'nobody') did not run"
fi

# ---- 3. checked sizes ------------------------------------------------------
big=2305843009213693953   # 2^61 + 1: times 8 bytes wrapped to 8
expect 2 "holdcount enough: $big bootstrap replicates is more than the 10000000 allowed" -- enough "$U" --paths 100 --bootstrap $big -q
expect 2 "holdcount rolling: $big bootstrap replicates is more than the 10000000 allowed" -- rolling "$U" --bootstrap $big -q
expect 2 "holdcount report: $big bootstrap replicates is more than the 10000000 allowed" -- report -o "$T/r-big" --paths 100 --bootstrap $big -q
[ -e "$T/r-big" ] && fail "a refused --bootstrap left a report folder"
for m in 18446744073709551615 10000000000000000000 1000000001; do
	timeout 20 "$HC" formula --average-sd 30% --average-correlation 0.2 --securities $m >"$T/out" 2>"$T/err"; rc=$?
	[ $rc = 2 ] || fail "formula --securities $m: exit $rc, expected 2"
	grep -q "securities is more than the 1000000000 a summary may name" "$T/err" || fail "formula --securities $m: $(cat "$T/err")"
	[ -s "$T/out" ] && fail "formula --securities $m wrote output"
done
expect 0 "" -- formula --average-sd 30% --average-correlation 0.2 --securities 1000000000
grep -q '^securities: *1000000000$' "$T/out" || fail "formula --securities 1000000000: $(grep securities "$T/out")"

# ---- 4. extreme but finite values: refused with their position --------------
# row 6, column 4 of a copy of the demo universe
mkcell() { awk -F, -v OFS=, -v v="$1" 'NR == 6 { $4 = v } { print }' "$U" >"$2"; }
for v in 1e154 1e9 -2e6 1000001; do
	mkcell "$v" "$T/x.csv"
	for c in describe curve enough; do
		expect 3 "holdcount $c: $T/x.csv:6:4: expected a return of at most 1e+06 in size (100000000%), found '$v'" -- $c "$T/x.csv"
	done
	# report, in a 1 GB address space: refused before any layout is made
	vlimit 1000000 "$HC" report "$T/x.csv" -o "$T/r-x" --paths 100 --bootstrap 10 -q 2>"$T/err"; rc=$?
	[ $rc = 3 ] && grep -q "x.csv:6:4:" "$T/err" || fail "report with a cell $v: exit $rc ($(head -c 200 "$T/err"))"
	[ -e "$T/r-x" ] && fail "report with a cell $v left a folder"
done
# at the bound the report is complete, in the same address space, and
# gnuplot renders its scripts
mkcell 1e6 "$T/x.csv"
vlimit 1000000 "$HC" report "$T/x.csv" -o "$T/r-e6" --paths 100 --bootstrap 10 -q 2>"$T/err" \
	|| fail "report with a cell of 1e6: exit $? ($(head -c 300 "$T/err"))"
command -v gnuplot >/dev/null && { [ -s "$T/r-e6/risk.png" ] || fail "report with a cell of 1e6: no risk.png"; }
# percent cells: 1e8% is the bound
mkcell 100000001% "$T/x.csv"
expect 3 "holdcount describe: $T/x.csv:6:4: expected a return of at most 1e+06" -- describe "$T/x.csv"
# covariance matrices: 1e12 is the bound
printf 'id,A,B\nA,0.04,1e13\nB,1e13,0.09\n' >"$T/cov.csv"
expect 3 "holdcount describe: $T/cov.csv:2:3: expected a covariance of at most 1e+12 in size, found '1e13'" -- describe --covariance "$T/cov.csv"
# synth never writes a cell its own reader refuses, and writes nothing then
expect 2 "holdcount synth: the model options give security 'S1' a return of" -- synth --securities 5 --periods 5 --sectors 2 --market-vol 1e300 -q
expect 2 "holdcount synth: the model options give security" -- synth --securities 5 --periods 5 --sectors 2 --market-vol 1e308 -q -o "$T/syn.csv"
[ -e "$T/syn.csv" ] && fail "synth with returns beyond the bound wrote its file"

# ---- 5. the memory budget covers names, the sampler and the bootstrap ------
"$PY" - "$T/ids.csv" <<'EOF'
import sys
with open(sys.argv[1], "w") as f:
    f.write("date," + ",".join("LIR%07d" % i for i in range(6000000)) + "\n")
    f.write("2020-01-31" + ",0.01" * 3 + "\n")
EOF
# before: 475 MB under --max-memory 10; a 200 MB address space would kill it
vlimit 200000 "$HC" describe "$T/ids.csv" --max-memory 10 >/dev/null 2>"$T/err"; rc=$?
[ $rc = 5 ] && grep -q "ids.csv:1:[0-9]*: universe too large: its names alone need at least" "$T/err" \
	|| fail "six million ids under --max-memory 10: exit $rc ($(head -c 200 "$T/err"))"
rm -f "$T/ids.csv"
# an endless header from a FIFO stops at the budget
mkfifo "$T/hfifo"
"$PY" -c '
import sys
out = open(sys.argv[1], "w")
try:
    out.write("date")
    while True:
        out.write(",LIR123456789" * 1000)
except (BrokenPipeError, OSError):
    pass
' "$T/hfifo" 2>/dev/null & writer=$!
vlimit 200000 timeout 60 "$HC" describe "$T/hfifo" --max-memory 10 >/dev/null 2>"$T/err"; rc=$?
kill $writer 2>/dev/null; wait $writer 2>/dev/null
[ $rc = 5 ] && grep -q "hfifo:1:[0-9]*: universe too large" "$T/err" || fail "endless header: exit $rc ($(head -c 200 "$T/err"))"
expect 5 "holdcount curve: 2200000000 sampled portfolios (100000000 paths of 22 sizes): needs at least" -- \
	curve "$U" --paths 100000000 --max-memory 50 -q
expect 5 "holdcount enough: 10000000 bootstrap replicates: needs at least" -- \
	enough "$U" --paths 100 --bootstrap 10000000 --max-memory 10 -q

# ---- 6. report folders --------------------------------------------------------
# --force keeps a user's folder that merely holds a summary.md
mkdir "$T/mine"; echo "my notes" >"$T/mine/summary.md"
expect 2 "holdcount report: '$T/mine' is not a report holdcount wrote (no .holdcount-report file)" -- \
	report -o "$T/mine" --force --paths 100 --bootstrap 10 -q
[ "$(cat "$T/mine/summary.md")" = "my notes" ] || fail "--force touched a user's folder"
# a live run's temporary folder (its marker locked, as a run in another
# container holds it; the pid means nothing here) is never touched, a
# dead run's is removed, and a folder the tool cannot prove its own is kept
host=$(hostname); boot=$(cat /proc/sys/kernel/random/boot_id)
mkdir "$T/rep.tmp-Live01" "$T/rep.tmp-Dead01" "$T/rep.tmp-User01"
printf 'holdcount-incomplete\npid 1\nhost %s\nboot %s\n' "$host" "$boot" >"$T/rep.tmp-Live01/.holdcount-incomplete"
printf 'holdcount-incomplete\npid 1\nhost %s\nboot %s\n' "$host" "$boot" >"$T/rep.tmp-Dead01/.holdcount-incomplete"
echo half >"$T/rep.tmp-Live01/curve.csv"; echo half >"$T/rep.tmp-Dead01/curve.csv"
echo mine >"$T/rep.tmp-User01/notes.txt"
"$PY" -c 'import fcntl, sys, time
f = open(sys.argv[1]); fcntl.flock(f, fcntl.LOCK_EX); time.sleep(60)' "$T/rep.tmp-Live01/.holdcount-incomplete" & holder=$!
for _ in $(seq 50); do flock -n "$T/rep.tmp-Live01/.holdcount-incomplete" true || break; sleep 0.1; done
"$HC" report -o "$T/rep" --paths 100 --bootstrap 10 -q || fail "report beside leftovers exited $?"
[ -s "$T/rep.tmp-Live01/curve.csv" ] || fail "a run removed a live run's temporary folder"
[ -e "$T/rep.tmp-Dead01" ] && fail "a dead run's temporary folder was not removed"
[ -s "$T/rep.tmp-User01/notes.txt" ] || fail "an unmarked folder with a user's file was removed"
[ -s "$T/rep/.holdcount-report" ] || fail "the finished report has no signature file"
kill $holder 2>/dev/null; wait $holder 2>/dev/null
"$HC" report -o "$T/rep" --force --paths 100 --bootstrap 10 -q || fail "report --force over its own report exited $?"
[ -e "$T/rep.tmp-Live01" ] && fail "the leftover, dead now, was not removed"

# ---- 8. smaller ----------------------------------------------------------------
# a file-size limit: an i/o error with a message, no temporary left
mkdir -p "$T/fs"
( ulimit -f 8; "$HC" synth --securities 200 --periods 500 -q -o "$T/fs/big.csv" ) 2>"$T/err"; rc=$?
[ $rc = 4 ] && grep -q "File too large" "$T/err" || fail "synth under ulimit -f: exit $rc ($(cat "$T/err"))"
[ -z "$(ls -A "$T/fs")" ] || fail "synth under ulimit -f left $(ls -A "$T/fs")"
# what 0 means is said in help
"$HC" formula --help | tr -s ' \n' ' ' | grep -q "0 means unbounded" || fail "formula --help does not say what --securities 0 means"
"$HC" describe --help | tr -s ' \n' ' ' | grep -q "0 means the default" || fail "describe --help does not say what --max-memory 0 means"
"$HC" enough --help | tr -s ' \n' ' ' | grep -q "periods; 0 means the default" || fail "enough --help does not say what --block-length 0 means"

# ---- the exit-status table: every row ---------------------------------------
expect 0 "" -- describe "$U"
head -1 "$U" | tr ',' '\n' | sed -n 2,3p >"$T/ids"
printf 'fund,id,weight\nTiny,%s,0.5\nTiny,%s,0.5\n' $(cat "$T/ids") >"$T/tiny.csv"
"$HC" audit "$U" --holdings "$T/tiny.csv" --paths 100 --min-holdings 20 >"$T/out" 2>"$T/err"; rc=$?
[ $rc = 1 ] && grep -q "1 of 1 fund fails the policy" "$T/err" || fail "a fund failing the policy: exit $rc ($(cat "$T/err"))"
expect 2 "holdcount curve: unknown option '--pathz'" -- curve "$U" --pathz 3
expect 3 "holdcount describe: $T/x.csv:6:4:" -- describe "$T/x.csv"
expect 4 "holdcount describe: " -- describe "$T/no-such-file.csv"
expect 5 "holdcount curve: " -- curve "$U" --paths 100000000 --max-memory 50
# 6 (internal) has no command line that reaches it: it is an invariant
# broken inside the tool; the manual page lists it (tests/cli_man.sh).
set -m
"$HC" curve "$U" --paths 3000000 --threads 1 -q -o "$T/int.txt" 2>"$T/err" & pid=$!
sleep 1; kill -INT $pid; wait $pid; rc=$?
set +m
[ $rc = 7 ] || fail "SIGINT: exit $rc, expected 7"
# 8 (resource): above, under a process limit.  9 (renderer): a gnuplot
# that fails on the report's scripts.
mkdir -p "$T/bin"; printf '#!/bin/sh\necho "line 1: simulated failure" >&2\nexit 1\n' >"$T/bin/gnuplot"; chmod 755 "$T/bin/gnuplot"
PATH="$T/bin:$PATH" "$HC" report -o "$T/r-render" --paths 100 --bootstrap 10 -q 2>"$T/err"; rc=$?
[ $rc = 9 ] && grep -q "gnuplot failed on" "$T/err" || fail "failing renderer: exit $rc, expected 9 ($(cat "$T/err"))"
[ -e "$T/r-render" ] && fail "a failing renderer left a report folder"
# 10 (insufficient data) is reserved in include/holdcount/error.h for funds
# whose holdings the universe covers too thinly (issue 16).
grep -q "HC_EINSUFFICIENT = 10" "${HOLDCOUNT_SOURCE_DIR}/include/holdcount/error.h" || fail "status 10 is not HC_EINSUFFICIENT"

cli_end cli_hostile
