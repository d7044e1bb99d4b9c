#!/usr/bin/env bash
# SIGINT/SIGTERM during a long run: exit status 7 (HC_EINTERRUPT,
# include/holdcount/error.h), one message, and no --output file or
# temporary left behind.  The universe is random numbers made up here.
set -u
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
PY=${PYTHON:-/usr/bin/python3}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_signals.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }

"$PY" - "$T/big.csv" <<'PY'
import sys, numpy as np
rng = np.random.default_rng(2385)
m, t = 200, 120
x = 0.01 * rng.standard_normal((t, 1)) + 0.03 * rng.standard_normal((t, m))
with open(sys.argv[1], "w") as f:
    f.write("date," + ",".join("ZQ%03d" % i for i in range(m)) + "\n")
    for k in range(t):
        y, mo = 2000 + k // 12, k % 12 + 1
        f.write("%04d-%02d," % (y, mo) + ",".join("%.6f" % v for v in x[k]) + "\n")
PY

for sig in TERM INT; do
	# Enough paths to run for many seconds on two cores; stopped once running.
	# A shell starts background jobs with SIGINT ignored (and holdcount keeps
	# an ignored signal ignored), so the job is started with it restored.
	"$PY" -c 'import os, signal, sys; signal.signal(signal.SIGINT, signal.SIG_DFL); os.execv(sys.argv[1], sys.argv[1:])' \
		"$HC" curve "$T/big.csv" --paths 5000000 --threads 1 -q --format csv -o "$T/out.csv" 2>"$T/err" &
	pid=$!
	# Signal it once its handler is installed (the SigCgt mask of
	# /proc/PID/status has bit N-1 for signal N): a fixed sleep raced with a
	# slow start on a loaded machine.  Then let it run into the paths.
	case $sig in TERM) num=15 ;; INT) num=2 ;; esac
	for _ in $(seq 200); do
		cgt=$(awk '/^SigCgt:/ {print $2}' "/proc/$pid/status" 2>/dev/null)
		[ -n "$cgt" ] && [ $(( (0x$cgt >> (num - 1)) & 1 )) = 1 ] && break
		sleep 0.05
	done
	sleep 0.3
	kill -s "$sig" "$pid"
	wait "$pid"; rc=$?
	[ "$rc" = 7 ] || fail "SIG$sig: exit $rc, expected 7"
	grep -q "^holdcount: interrupted" "$T/err" || fail "SIG$sig: message '$(cat "$T/err")'"
	[ -e "$T/out.csv" ] && fail "SIG$sig: output file exists"
	ls -A "$T" | grep -q '\.tmp-' && fail "SIG$sig: temporary left behind"
done

# With SIGINT ignored by the parent it stays ignored: the run (about a
# second) finishes and writes its file.
"$HC" curve "$T/big.csv" --sizes 1,2,50 --paths 100000 -q --format csv -o "$T/bg.csv" &
pid=$!; sleep 0.2; kill -s INT "$pid" 2>/dev/null; wait "$pid"; rc=$?
[ "$rc" = 0 ] || fail "ignored SIGINT: exit $rc, expected 0"
[ -s "$T/bg.csv" ] || fail "ignored SIGINT: no output"

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_signals: all checks passed"
