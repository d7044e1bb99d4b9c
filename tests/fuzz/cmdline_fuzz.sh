#!/usr/bin/env bash
# cmdline_fuzz.sh - a command-line fuzzer for holdcount (issue 17).
#
#   tests/fuzz/cmdline_fuzz.sh BINARY [SECONDS] [SEED]
#
# Runs BINARY (a plain or an ASan+UBSan build) on random command lines for
# SECONDS (default 30, at most 60), mostly `report`, the command that runs
# every stage, and the others besides: option values drawn from hostile
# sets (0, 2^31, 2^32 + 1, 2^61 + 1, 2^64 - 1, negative, 1e308, empty), input
# files with extreme but finite cells (1e6, 1e9, 1e154), a header-only file,
# a ragged one, outputs that are /dev/null-like device nodes, FIFOs and
# /dev/stdout.  Every run is made under a memory limit (an address-space
# limit of 2 GiB with prlimit for a plain build; ASan's hard_rss_limit_mb
# for a sanitizer build, whose shadow memory needs the address space) and a
# 20 s timeout.  A run fails the fuzzer when it
#   - is killed by a signal or the timeout, or leaves a sanitizer report;
#   - exits with a status outside the table of docs/reliability.md, with 6
#     (internal), or with 1 when no policy option was given;
#   - fails without a first stderr line "holdcount ...: " (one message);
#   - leaves a temporary (".NAME.tmp-*", "DIR.tmp-*") behind, or replaces a
#     device node or a FIFO.
# The same SEED gives the same command lines.  Each failure prints the
# command line to reproduce it; the script exits 1 when any run failed.
set -u
HC=${1:?usage: cmdline_fuzz.sh BINARY [SECONDS] [SEED]}
SECONDS_MAX=${2:-30}
SEED=${3:-1}
[ "$SECONDS_MAX" -le 60 ] || SECONDS_MAX=60
PY=${PYTHON:-python3}
W=${HOLDCOUNT_TEST_TMP:-/tmp}/cmdline_fuzz.$$
mkdir -p "$W/in" "$W/out"
trap 'rm -rf "$W"' EXIT
SRC=$(cd "$(dirname "$0")/../.." && pwd)
export HOLDCOUNT_DATA_DIR=$SRC/data
fails=0
sanitized=0
if ldd "$HC" 2>/dev/null | grep -q 'libasan\|libclang_rt.asan' || nm "$HC" 2>/dev/null | grep -q __asan_init; then
	sanitized=1
	# added to the caller's settings (the sanitize stage's log_path among
	# them, so a report also reaches its logs)
	export ASAN_OPTIONS="${ASAN_OPTIONS:-detect_leaks=1}:hard_rss_limit_mb=2048:allocator_may_return_null=1"
	export UBSAN_OPTIONS="${UBSAN_OPTIONS:-halt_on_error=1:print_stacktrace=1}"
fi
limited() { # run under the memory limit and the timeout
	if [ $sanitized = 1 ]; then timeout 20 "$@"; else prlimit --as=$((2 << 30)) timeout 20 "$@"; fi
}

# ---- inputs -------------------------------------------------------------------
U=$SRC/data/demo-universe.csv
cp "$U" "$W/in/valid.csv"
cp "$SRC/data/demo-funds.csv" "$W/in/funds.csv"
cp "$SRC/data/demo-sectors.csv" "$W/in/sectors.csv"
for v in 1e6 1e9 1e154 -0.999; do
	awk -F, -v OFS=, -v v="$v" 'NR == 6 { $4 = v } { print }' "$U" >"$W/in/cell-$v.csv"
done
head -1 "$U" >"$W/in/header-only.csv"
awk -F, -v OFS=, 'NR == 9 { NF = 5 } { print }' "$U" >"$W/in/ragged.csv"
head -40 "$U" | cut -d, -f1-12 >"$W/in/small.csv"
if [ "$(id -u)" = 0 ]; then mknod "$W/out/null" c 1 3; else ln -s /dev/null "$W/out/null"; fi
mkfifo "$W/out/fifo"

# ---- command lines ---------------------------------------------------------------
"$PY" - "$SEED" "$W" >"$W/lines" <<'EOF'
import random, sys
rnd = random.Random(int(sys.argv[1]))
W = sys.argv[2]
inputs = [W + "/in/" + n for n in ("valid.csv", "small.csv", "cell-1e6.csv", "cell-1e9.csv",
          "cell-1e154.csv", "cell--0.999.csv", "header-only.csv", "ragged.csv")] + [W + "/in/missing.csv"]
huge = ["0", "1", "2", "3", "2147483648", "4294967297", "2305843009213693953",
        "18446744073709551615", "18446744073709551616", "-1", "", "1e308", "abc"]
small = ["0", "1", "2", "5", "20", "100"]
reals = ["0", "-1", "1e308", "-1e308", "1e-320", "nan", "inf", "0.5", "10%", "200%", ""]
outs = [W + "/out/null", W + "/out/fifo", "/dev/stdout", W + "/out/file.txt", "-", W + "/out"]
opts = {
    "--threads": huge + ["1", "2", "1024", "1025"],
    "--paths": small + huge, "--bootstrap": small + huge, "--block-length": small + huge,
    "--seed": huge, "--sizes": ["1-10", "1,2,3", "0", "1-18446744073709551615", "5-1", ""],
    "--max-memory": ["0", "1", "2", "64", "18446744073709551615"],
    "--min-coverage": reals, "--periods-per-year": reals, "--missing": ["complete", "pairwise", "x"],
    "--window": small + huge, "--step": small + huge,
}
for _ in range(4000):
    cmd = rnd.choice(["report"] * 6 + ["describe", "curve", "enough", "rolling", "audit", "formula", "synth"])
    words = [cmd]
    if cmd in ("describe", "curve", "enough", "rolling", "audit", "report"):
        words.append(rnd.choice(inputs))
    if cmd == "audit":
        words += ["--holdings", W + "/in/funds.csv"]
    if cmd == "formula":
        words += ["--average-sd", rnd.choice(reals + ["30%"]), "--average-correlation", rnd.choice(reals + ["0.2"])]
        if rnd.random() < 0.7:
            words += ["--securities", rnd.choice(huge)]
    if cmd == "synth":
        words += ["--securities", rnd.choice(["2", "10", "0", "100000000"]), "--periods", rnd.choice(["24", "0", "5"]),
                  "--sectors", "2", "--market-vol", rnd.choice(reals + ["0.16"])]
    # small defaults keep a run short; the fuzzed value below overrides them
    if cmd in ("curve", "enough", "audit", "report"):
        words += ["--paths", "50"]
    if cmd in ("enough", "report"):
        words += ["--bootstrap", "10"]
    for _ in range(rnd.choice([0, 0, 1, 1, 2, 3])):
        o = rnd.choice(sorted(opts))
        words += [o, rnd.choice(opts[o])]
    if cmd == "report":
        words += ["-o", rnd.choice([W + "/out/rep", W + "/out/null", W + "/out/fifo"])]
        if rnd.random() < 0.3:
            words.append("--force")
    elif cmd != "synth" or rnd.random() < 0.5:
        words += ["-o", rnd.choice(outs)]
    words.append("-q")
    words.append("--max-memory=64" if "--max-memory" not in words else "-q")
    print("\x1f".join(words))
EOF

# ---- running ----------------------------------------------------------------------
# A FIFO output needs a reader, as a shell pipeline would give it: one
# for the whole run (the descriptor held open read-write keeps a writer's
# open(2) from blocking; cat drains what is written).
exec 9<>"$W/out/fifo"
cat <&9 >/dev/null & drain=$!
trap 'kill $drain 2>/dev/null; rm -rf "$W"' EXIT
declare -A seen
runs=0
start=$(date +%s)
while IFS= read -r line; do
	[ $(( $(date +%s) - start )) -lt "$SECONDS_MAX" ] || break
	IFS=$'\x1f' read -r -a argv <<<"$line"
	limited "$HC" "${argv[@]}" >"$W/stdout" 2>"$W/stderr"; rc=$?
	runs=$((runs + 1)); seen[$rc]=$(( ${seen[$rc]:-0} + 1 ))
	why=""
	case $rc in
	0|2|3|4|5|7|8|9|10) ;;
	1) case " ${argv[*]} " in *" --min-"*|*" --max-weight"*|*" --policy"*) ;; *) why="exit 1 without a policy option";; esac ;;
	*) why="exit $rc (6: internal; 124: timeout; 128+N: signal N)";;
	esac
	grep -q 'ERROR: AddressSanitizer\|runtime error:\|ERROR: LeakSanitizer' "$W/stderr" && why="sanitizer report: $(grep -m1 'ERROR\|runtime error' "$W/stderr")"
	if [ -z "$why" ] && [ "$rc" != 0 ] && [ "$rc" != 1 ]; then
		case "$(head -n1 "$W/stderr")" in "holdcount "*) ;; *) why="no 'holdcount ...' message: $(head -c 200 "$W/stderr")";; esac
	fi
	left=$(find "$W/out" "$W/in" -name '*.tmp-*' 2>/dev/null | head -3)
	[ -n "$left" ] && why="${why:+$why; }left $left"
	if [ "$(id -u)" = 0 ]; then [ -c "$W/out/null" ] || why="${why:+$why; }the device node was replaced"; fi
	[ -p "$W/out/fifo" ] || why="${why:+$why; }the FIFO was replaced"
	if [ -n "$why" ]; then
		fails=$((fails + 1))
		printf 'FAIL: %s\n  holdcount' "$why"; printf ' %q' "${argv[@]}"; printf '\n  %s\n' "$(head -c 300 "$W/stderr")"
		find "$W/out" -name '*.tmp-*' -exec rm -rf {} + 2>/dev/null
		[ -c "$W/out/null" ] || { rm -rf "$W/out/null"; [ "$(id -u)" = 0 ] && mknod "$W/out/null" c 1 3; }
		[ -p "$W/out/fifo" ] || { rm -rf "$W/out/fifo"; mkfifo "$W/out/fifo"; exec 9<>"$W/out/fifo"; }
	fi
	rm -rf "$W/out/rep" "$W/out/file.txt"
done <"$W/lines"
summary=""
for k in $(printf '%s\n' "${!seen[@]}" | sort -n); do summary="$summary $k:${seen[$k]}"; done
echo "cmdline_fuzz: $runs command lines in $(( $(date +%s) - start )) s (seed $SEED, $([ $sanitized = 1 ] && echo ASan+UBSan || echo plain) build); exit statuses$summary; $fails failure(s)"
[ "$fails" = 0 ]
