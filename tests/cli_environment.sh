#!/usr/bin/env bash
# Environment conventions (issue 8): NO_COLOR is honoured trivially --
# holdcount writes no colour or other terminal escape codes, on a terminal or
# not, whatever TERM or the colour-forcing variables say -- and
# HOLDCOUNT_THREADS is the default of --threads (a command-line --threads
# wins), changing how many threads run but not one printed figure.
set -u
export LC_ALL=C.UTF-8
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
SRC=${HOLDCOUNT_SOURCE_DIR:?HOLDCOUNT_SOURCE_DIR must name the source tree}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_environment.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }
U=$SRC/data/demo-universe.csv
F=$SRC/data/demo-funds.csv
S=$SRC/data/demo-sectors.csv
command -v script >/dev/null || { echo "FAIL: script (util-linux) is needed for a terminal"; exit 1; }
command -v strace >/dev/null || { echo "FAIL: strace is needed to count threads"; exit 1; }

# ---- no escape codes, on a terminal -------------------------------------------
# script(1) gives the command a pseudo-terminal for stdin, stdout and stderr,
# so the progress bars draw; the transcript holds everything written to it.
runs=(
	"--help"
	"curve --paths 40000 $U"
	"enough --paths 2000 --bootstrap 200 $U"
	"audit --holdings $F --sectors $S --paths 500 $U"
	"describe $U"
	"report -o $T/rep --paths 2000 --bootstrap 100 --force"
	"curve --pathz 3 $U"
	"curve $T/absent.csv"
)
for nc in unset 1; do
	for r in "${runs[@]}"; do
		if [ $nc = unset ]; then
			env -u NO_COLOR TERM=xterm-256color COLORTERM=truecolor CLICOLOR_FORCE=1 FORCE_COLOR=1 \
				script -qec "$HC $r" /dev/null >"$T/tty" 2>&1
		else
			NO_COLOR=1 TERM=xterm-256color script -qec "$HC $r" /dev/null >"$T/tty" 2>&1
		fi
		[ -s "$T/tty" ] || fail "holdcount $r on a terminal wrote nothing"
		LC_ALL=C grep -q $'\x1b' "$T/tty" && fail "holdcount $r (NO_COLOR $nc) wrote an escape code: $(LC_ALL=C grep -a -m1 -o $'.\{0,20\}\x1b.\{0,10\}' "$T/tty" | od -c | head -2)"
	done
	# the terminal path was taken: the curve's progress bar drew
	NO_COLOR=1 script -qec "$HC curve --paths 40000 $U" /dev/null >"$T/tty" 2>&1
	grep -aq 'sampling \[' "$T/tty" || fail "no progress bar on a terminal: the escape-code check did not see the terminal path"
done
# Off a terminal, NO_COLOR changes nothing.
"$HC" curve --paths 500 "$U" >"$T/a" 2>&1
NO_COLOR=1 "$HC" curve --paths 500 "$U" >"$T/b" 2>&1
cmp -s "$T/a" "$T/b" || fail "NO_COLOR changed the output of curve"

# ---- HOLDCOUNT_THREADS -----------------------------------------------------------
# Threads started (clone calls, counted by strace): for --threads N the
# library first starts and joins N - 1 idle threads, to see that the system
# lets it (src/threads.c: libgomp would exit if it could not), then OpenMP
# starts its team's N - 1, kept for later regions: 2(N - 1) in all.
# OpenBLAS starts none (main.c sets OPENBLAS_NUM_THREADS=1 for it).
# (LeakSanitizer cannot run under ptrace, so a sanitizer build's leak check
# is off for these strace runs alone; the rest of the suite keeps it.)
clones() {
	ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0" strace -f -qq -e trace=clone,clone3 -o "$T/st" "$@" >/dev/null 2>"$T/st.err" \
		|| { fail "strace $*: $(head -c 200 "$T/st.err")"; echo 0; return; }
	# a call interrupted by another thread's shows twice under -f ("<unfinished ...>",
	# then "<... clone3 resumed>"): count the starts only
	grep -v 'resumed>' "$T/st" | grep -c 'clone'
}
args=(curve --paths 2000 -q "$U")
c1=$(HOLDCOUNT_THREADS=1 clones "$HC" "${args[@]}")
c4=$(HOLDCOUNT_THREADS=4 clones "$HC" "${args[@]}")
cover=$(HOLDCOUNT_THREADS=4 clones "$HC" "${args[@]}" --threads 1)
cflag=$(clones env -u HOLDCOUNT_THREADS "$HC" "${args[@]}" --threads 4)
[ $((c4 - c1)) = 6 ] || fail "HOLDCOUNT_THREADS=4 started $c4 threads, =1 started $c1: expected 6 more (3 tried, 3 for OpenMP)"
[ "$cover" = "$c1" ] || fail "--threads 1 with HOLDCOUNT_THREADS=4 started $cover threads, expected $c1 (the option wins)"
[ "$cflag" = "$c4" ] || fail "--threads 4 started $cflag threads, HOLDCOUNT_THREADS=4 $c4: not the same default"
# rolling holds --threads in its own options (threads for the bootstrap):
# the variable is its default there too.
r1=$(HOLDCOUNT_THREADS=1 clones "$HC" rolling --bootstrap 20 "$U")
r3=$(HOLDCOUNT_THREADS=3 clones "$HC" rolling --bootstrap 20 "$U")
[ $((r3 - r1)) = 4 ] || fail "rolling: HOLDCOUNT_THREADS=3 started $r3 threads, =1 started $r1: expected 4 more (2 tried once, 2 for OpenMP)"
HOLDCOUNT_THREADS=abc "$HC" rolling --bootstrap 20 "$U" >/dev/null 2>"$T/err"
[ $? = 2 ] && grep -q "HOLDCOUNT_THREADS must be a whole number" "$T/err" || fail "rolling with HOLDCOUNT_THREADS=abc: $(cat "$T/err")"
# ... and the figures do not depend on it (the sampler's grouping is fixed).
for n in 1 3; do
	HOLDCOUNT_THREADS=$n "$HC" curve --paths 3000 --format csv "$U" >"$T/t$n.csv" || fail "curve with HOLDCOUNT_THREADS=$n"
done
cmp -s "$T/t1.csv" "$T/t3.csv" || fail "curve's figures differ between HOLDCOUNT_THREADS=1 and 3"
# Commands without --threads ignore it (describe has no sampling options).
HOLDCOUNT_THREADS=abc "$HC" describe "$U" >/dev/null 2>"$T/err" || fail "describe with HOLDCOUNT_THREADS=abc: $(cat "$T/err")"

# ---- no idle BLAS threads spinning ------------------------------------------------
# OpenBLAS's pthread build starts a worker per core when it loads, and an idle
# worker busy-waits with sched_yield for about 0.1 s (at start and after a
# threaded call), taking a core from the sampler.  holdcount stops those
# workers at start (hc_moments_blas_serial), and its one-thread products must
# not start them again: a curve run through the Gram route (T < M is not
# needed: every route calls the BLAS) makes next to no sched_yield call.
# Before the fix the same run made thousands (measured under strace: 465 to
# over 10 000), so 50 separates the two with room.
yields() {
	ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0" strace -f -qq -c -e trace=sched_yield -o "$T/sy" "$@" >/dev/null 2>"$T/sy.err" \
		|| { fail "strace $*: $(head -c 200 "$T/sy.err")"; echo 0; return; }
	awk '$NF == "sched_yield" {print $4}' "$T/sy" | head -n 1
}
y=$(yields "$HC" curve --paths 2000 --threads 2 -q "$U")
[ "${y:-0}" -lt 50 ] || fail "curve made $y sched_yield calls: idle BLAS threads are spinning"
y=$(yields "$HC" describe "$U")
[ "${y:-0}" -lt 50 ] || fail "describe made $y sched_yield calls: idle BLAS threads are spinning"

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_environment: all checks passed"
