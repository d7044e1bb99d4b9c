#!/usr/bin/env bash
# Progress on stderr only when it is a terminal and --quiet is absent
# (design.md section 9).  util-linux's script(1) gives the run a terminal.
set -u
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
PY=${PYTHON:-/usr/bin/python3}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_progress.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }
command -v script >/dev/null || { echo "FAIL: script(1) (util-linux) is needed"; exit 1; }

"$PY" - "$T/u.csv" <<'PY'
import sys, numpy as np
rng = np.random.default_rng(2385)
m, t = 120, 60
x = 0.01 * rng.standard_normal((t, 1)) + 0.03 * rng.standard_normal((t, m))
with open(sys.argv[1], "w") as f:
    f.write("date," + ",".join("ZR%03d" % i for i in range(m)) + "\n")
    for k in range(t):
        f.write("%04d-%02d," % (2001 + k // 12, k % 12 + 1) + ",".join("%.6f" % v for v in x[k]) + "\n")
PY
run="'$HC' curve '$T/u.csv' --sizes 1,2,60 --paths 20000 --threads 1 --format csv -o '$T/o.csv'"
script -qec "$run" /dev/null >"$T/tty" 2>&1 || fail "run on a terminal exit $?"
grep -q "sampling \[" "$T/tty" || fail "no progress bar on a terminal"
grep -q "paths/s" "$T/tty" || fail "progress bar without a rate"
script -qec "$run -q" /dev/null >"$T/tty_q" 2>&1 || fail "quiet run exit $?"
[ -s "$T/tty_q" ] && fail "--quiet still printed: $(head -c 200 "$T/tty_q")"
"$HC" curve "$T/u.csv" --sizes 1,2 --paths 20000 --format csv >/dev/null 2>"$T/err" || fail "plain run exit $?"
[ -s "$T/err" ] && fail "progress printed to a non-terminal stderr"

# The report names each stage on its own line before that stage's bar, the
# bootstrap among them (issue 5: "loading, exact curve, sampling with a
# progress bar and rate, bootstrap, rendering"); --quiet silences them all.
rep="'$HC' report '$T/u.csv' -o '$T/rep' --paths 2000 --bootstrap 300 --threads 1"
script -qec "$rep" /dev/null >"$T/rtty" 2>&1 || fail "report on a terminal exit $?"
tr '\r' '\n' <"$T/rtty" | grep -v '^ *$' >"$T/rlines"
for s in "loading '" "exact curve" "exact rules" "bootstrap of the exact rules (300 replicates)" \
	 "writing the folder" "wrote '"; do
	grep -q "^holdcount report: $s" "$T/rlines" || fail "report: no stage line '$s'"
done
# the bootstrap's bar comes after its stage line and before the next stage
awk '/^holdcount report: bootstrap of the exact rules/ { b = NR }
     /^bootstrap \[/ && b && !bar { bar = NR }
     /^holdcount report: / && b && NR > b && !next_stage { next_stage = NR }
     END { exit !(b && bar > b && (!next_stage || bar < next_stage)) }' "$T/rlines" ||
	fail "report: no bootstrap bar right after the bootstrap stage line"
grep -q "^bootstrap \[.*replicates/s" "$T/rlines" || fail "report: the bootstrap bar has no rate"
script -qec "$rep --force -q" /dev/null >"$T/rtty_q" 2>&1 || fail "quiet report exit $?"
[ -s "$T/rtty_q" ] && fail "report --quiet still printed: $(head -c 200 "$T/rtty_q")"

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_progress: all checks passed"
