#!/usr/bin/env bash
# Run the bad-input catalogue (tests/bad-inputs/catalogue.tsv) through the
# real binary, and check that input files are only ever read.
#
# Each catalogue row gives a file, a command line, the expected exit status
# (the HC_* codes of include/holdcount/error.h) and the expected start of the
# message.  A row fails when the status differs, when the first line of
# stderr (less a leading "holdcount: " or "holdcount CMD: ") does not start
# with the expected words, when the standard output (or {out}) lacks the
# expected text, when a run takes longer than ROW_TIMEOUT, when a run under
# --output {out} fails and leaves the output file or its temporary behind,
# when the row's file has changed afterwards (inputs are only read), or when
# valgrind (the memcheck label sets HOLDCOUNT_WRAPPER) reports an error.
#
# Catalogue syntax (tab-separated; '#' starts a comment line):
#   file       a name in tests/bad-inputs/, or gen:NAME for a file this script
#              writes at run time (large ones are not committed), or
#              gen:missing for a path that does not exist, or copy:NAME for
#              a fresh scratch copy of tests/bad-inputs/NAME with a hard link
#              NAME.hard and a symbolic link NAME.link beside it (for rows
#              that try to write over their input), or - for none
#   command    holdcount's arguments; {} is the file, {out} an output path in
#              the scratch directory, {dir} the tests/bad-inputs directory,
#              {parent} the directory holding the file
#   status     expected exit status
#   message    expected start of the message, with {}, {out} and {parent}
#              as in the command; "-" checks nothing (successful runs)
#   output     optional: text the standard output (or {out}, when the
#              command writes there) must contain, placeholders as above
#
# Every command exists now: a row whose command the binary does not know
# fails (it never skips).
set -uo pipefail

: "${HOLDCOUNT:?set by ctest}" "${HOLDCOUNT_SOURCE_DIR:?set by ctest}" "${HOLDCOUNT_TEST_TMP:?set by ctest}"
PYTHON=${PYTHON:-/usr/bin/python3}
read -r -a WRAPPER <<<"${HOLDCOUNT_WRAPPER:-}"
DIR=$HOLDCOUNT_SOURCE_DIR/tests/bad-inputs
# A run that hangs is a failure too, not a stuck test: seconds per row
# (valgrind is some 20-50 times slower).
if [ -n "${HOLDCOUNT_WRAPPER:-}" ]; then ROW_TIMEOUT=${HOLDCOUNT_ROW_TIMEOUT:-600}; else ROW_TIMEOUT=${HOLDCOUNT_ROW_TIMEOUT:-60}; fi
SCRATCH=$HOLDCOUNT_TEST_TMP/bad-inputs${HOLDCOUNT_WRAPPER_NAME:+-$HOLDCOUNT_WRAPPER_NAME}
rm -rf "$SCRATCH" && mkdir -p "$SCRATCH/gen" || exit 1

checked=0 failed=0
declare -A have_command=()

fail() { echo "FAIL: $*" >&2; failed=$((failed + 1)); }

# gen:NAME files, written once into $SCRATCH/gen.
generate() {
	local name=$1 path=$SCRATCH/gen/$1.csv
	[ -e "$path" ] && { printf '%s\n' "$path"; return 0; }
	case $name in
	missing) printf '%s\n' "$SCRATCH/gen/no-such-file.csv"; return 0 ;;
	directory) mkdir -p "$SCRATCH/gen/a-directory"; printf '%s\n' "$SCRATCH/gen/a-directory"; return 0 ;;
	esac
	"$PYTHON" - "$name" "$path" <<'EOF' || return 1
import random, sys
name, path = sys.argv[1], sys.argv[2]
rnd = random.Random(2385)
def returns(m, t, ids=None):
    ids = ids or ["S%05d" % (i + 1) for i in range(m)]
    out = ["date," + ",".join(ids)]
    day = 18000  # days since 1970-01-01; one row a week
    import datetime
    for k in range(t):
        d = datetime.date(1970, 1, 1) + datetime.timedelta(days=day + 7 * k)
        out.append(d.isoformat() + "," + ",".join("%.5f" % rnd.gauss(0.001, 0.02) for _ in ids))
    return "\n".join(out) + "\n"
with open(path, "w") as f:
    if name == "line-10mb":
        # one 10 MB line: a header whose second field never ends
        f.write("date," + "Q" * (10 * 1024 * 1024) + "\n2021-01-29,0.01\n")
    elif name == "columns-100k":
        f.write(returns(100000, 4))
    elif name == "columns-100k-ragged":
        text = returns(100000, 4).split("\n")
        text[3] = text[3].rsplit(",", 1)[0]          # line 4 loses its last field
        f.write("\n".join(text))
    elif name == "budget-400x500":
        f.write(returns(400, 500))                    # 200000 numbers: 1.53 MiB as doubles
    elif name == "gram-600x500":
        f.write(returns(600, 500))                    # T < M: loads within 5 MiB, the Gram route does not fit
    elif name == "matrix-400x600":
        f.write(returns(400, 600))                    # T >= M: loads within 4 MiB, the row blocks do not fit
    elif name == "cov-header-40k":
        # a covariance header of 40 000 ids (a 12.8 GB matrix) and one row
        ids = ["I%05d" % (i + 1) for i in range(40000)]
        f.write("," + ",".join(ids) + "\n" + ids[0] + "," + ",".join(["0.01"] * 40000) + "\n")
    elif name == "cov-200":
        # a valid 200 x 200 covariance matrix: variances 0.04, covariances 0.01
        ids = ["I%03d" % (i + 1) for i in range(200)]
        f.write("," + ",".join(ids) + "\n")
        for i in range(200):
            f.write(ids[i] + "," + ",".join("0.04" if j == i else "0.01" for j in range(200)) + "\n")
    else:
        sys.exit("cli_bad_inputs.sh: unknown generator gen:" + name)
EOF
	printf '%s\n' "$path"
}

command_available() {
	local cmd=$1
	if [ -z "${have_command[$cmd]+x}" ]; then
		if "$HOLDCOUNT" "$cmd" --help >/dev/null 2>&1; then have_command[$cmd]=1; else have_command[$cmd]=0; fi
	fi
	[ "${have_command[$cmd]}" = 1 ]
}

# copy:NAME files: a fresh copy each time (a row that wrote over its input
# must not spoil the next), with a hard link and a symbolic link to it.
copy_input() {
	local name=$1 d=$SCRATCH/gen/copy
	mkdir -p "$d" && rm -f "$d/$name" "$d/$name.hard" "$d/$name.link" &&
		cp "$DIR/$name" "$d/$name" && ln "$d/$name" "$d/$name.hard" &&
		ln -s "$name" "$d/$name.link" && printf '%s\n' "$d/$name"
}

# A fingerprint of the row's input, to see that the run left it alone.
fingerprint() {
	[ -n "$1" ] && [ -f "$1" ] && cksum <"$1"
}

run_row() {
	local lineno=$1 file=$2 command=$3 status=$4 message=$5 expect_out=$6
	local path out="" rc first want args=() word before parent

	case $file in
	-) path="" ;;
	gen:*) path=$(generate "${file#gen:}") || { fail "catalogue line $lineno: cannot generate $file"; return; } ;;
	copy:*) path=$(copy_input "${file#copy:}") || { fail "catalogue line $lineno: cannot copy $file"; return; } ;;
	*) path=$DIR/$file; [ -e "$path" ] || { fail "catalogue line $lineno: no file $path"; return; } ;;
	esac
	parent=$(dirname "${path:-.}")
	before=$(fingerprint "$path")
	read -r -a words <<<"$command"
	if ! command_available "${words[0]}"; then
		fail "catalogue line $lineno: the binary has no command '${words[0]}'"
		return
	fi
	case $command in *'{out}'*) out=$SCRATCH/out-$lineno.txt; rm -f "$out" ;; esac
	for word in "${words[@]}"; do
		word=${word//'{out}'/$out}
		word=${word//'{dir}'/$DIR}
		word=${word//'{parent}'/$parent}
		args+=("${word//'{}'/$path}")
	done
	checked=$((checked + 1))
	timeout -k 5 "$ROW_TIMEOUT" "${WRAPPER[@]}" "$HOLDCOUNT" "${args[@]}" >"$SCRATCH/stdout" 2>"$SCRATCH/stderr" </dev/null
	rc=$?
	if [ "$rc" = 124 ] || [ "$rc" = 137 ]; then
		fail "catalogue line $lineno ($file): holdcount ${args[*]}: no answer within ${ROW_TIMEOUT}s"
		return
	fi
	if [ "${HOLDCOUNT_WRAPPER_NAME:-}" = valgrind ] && [ "$rc" = 99 ]; then
		fail "catalogue line $lineno ($file): valgrind reported errors:"; sed 's/^/    /' "$SCRATCH/stderr" >&2
		return
	fi
	first=$(grep -v '^==[0-9]*==' "$SCRATCH/stderr" | head -n 1 | sed -E 's/^holdcount( [a-z-]+)?: //')
	want=${message//'{}'/$path}
	want=${want//'{out}'/$out}
	want=${want//'{parent}'/$parent}
	if [ "$rc" != "$status" ]; then
		fail "catalogue line $lineno ($file): holdcount ${args[*]}: exit status $rc, expected $status; stderr: $first"
	elif [ "$message" != "-" ] && [ "${first:0:${#want}}" != "$want" ]; then
		fail "catalogue line $lineno ($file): message '$first', expected it to start with '$want'"
	fi
	if [ -n "$expect_out" ]; then
		want=${expect_out//'{}'/$path}
		if ! grep -qF -- "$want" "${out:-$SCRATCH/stdout}" 2>/dev/null; then
			fail "catalogue line $lineno ($file): output lacks '$want'"
		fi
	fi
	if [ "$(fingerprint "$path")" != "$before" ]; then
		fail "catalogue line $lineno ($file): holdcount ${args[*]} changed its input $path"
	fi
	if [ -n "$out" ]; then
		if [ "$rc" != 0 ] && [ -e "$out" ]; then
			fail "catalogue line $lineno ($file): failed run left $out behind"
		fi
		if [ "$rc" = 0 ] && [ ! -s "$out" ]; then
			fail "catalogue line $lineno ($file): successful run wrote no $out"
		fi
		if compgen -G "$SCRATCH/.out-$lineno.txt*" >/dev/null || compgen -G "$SCRATCH/*.tmp-*" >/dev/null; then
			fail "catalogue line $lineno ($file): temporary output file left in $SCRATCH"
		fi
	fi
}

lineno=0
while IFS=$'\t' read -r file command status message output || [ -n "$file" ]; do
	lineno=$((lineno + 1))
	case $file in ''|'#'*) continue ;; esac
	if [ -z "$command" ] || [ -z "$status" ] || [ -z "$message" ]; then
		fail "catalogue line $lineno: needs four or five tab-separated columns"; continue
	fi
	run_row "$lineno" "$file" "$command" "$status" "$message" "$output"
done <"$DIR/catalogue.tsv"

# Inputs are opened read-only and never changed: a read-only copy of a valid
# file is described (to stdout and through --output); every open of it that
# strace sees must be O_RDONLY, and its bytes and mtime must not change.
# (The tests may run as root, who can write a 0444 file, hence strace.)
ro=$SCRATCH/read-only.csv
cp "$DIR/valid-small.csv" "$ro" && chmod 0444 "$ro" && touch -d '2021-06-30 12:00:00' "$ro"
before=$(stat -c '%Y %s' "$ro")$(sha256sum <"$ro")
for args in "describe $ro" "describe --output $SCRATCH/ro-out.txt $ro"; do
	checked=$((checked + 1))
	read -r -a words <<<"$args"
	if command -v strace >/dev/null; then
		# LeakSanitizer cannot run under ptrace; leaks of these same
		# commands are checked by the rows above, so it is off here.
		ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0" \
		strace -f -qq -o "$SCRATCH/strace" -e trace=open,openat,openat2,creat,truncate \
			"${WRAPPER[@]}" "$HOLDCOUNT" "${words[@]}" >/dev/null 2>"$SCRATCH/stderr"
		rc=$?
		if grep -F "\"$ro\"" "$SCRATCH/strace" | grep -Eq 'O_WRONLY|O_RDWR|O_TRUNC|O_CREAT|creat\(|truncate\('; then
			fail "read-only input: holdcount $args opened it for writing:"; grep -F "$ro" "$SCRATCH/strace" >&2
		fi
		grep -Fq "\"$ro\"" "$SCRATCH/strace" || fail "read-only input: strace saw no open of $ro"
	else
		fail "read-only input: strace is not installed (scripts/setup.sh installs it)"
		"${WRAPPER[@]}" "$HOLDCOUNT" "${words[@]}" >/dev/null 2>"$SCRATCH/stderr"
		rc=$?
	fi
	[ "$rc" = 0 ] || fail "read-only input: holdcount $args: exit status $rc: $(head -n 1 "$SCRATCH/stderr")"
done
after=$(stat -c '%Y %s' "$ro")$(sha256sum <"$ro")
[ "$before" = "$after" ] || fail "read-only input: $ro changed ($before -> $after)"

# An output that is a symbolic link is written through, as a shell's '>'
# (open(2) following the link) would: the link stays, its target gets the
# output, all or nothing.
checked=$((checked + 1))
mkdir -p "$SCRATCH/linked/real" && printf 'old\n' >"$SCRATCH/linked/real/out.txt" &&
	ln -sfn real/out.txt "$SCRATCH/linked/out.lnk"
"${WRAPPER[@]}" "$HOLDCOUNT" describe --format csv "$DIR/valid-small.csv" >"$SCRATCH/linked/want" 2>/dev/null
"${WRAPPER[@]}" "$HOLDCOUNT" describe --format csv --output "$SCRATCH/linked/out.lnk" "$DIR/valid-small.csv" 2>"$SCRATCH/stderr"
rc=$?
if [ "$rc" != 0 ] || [ ! -L "$SCRATCH/linked/out.lnk" ] || [ "$(readlink "$SCRATCH/linked/out.lnk")" != real/out.txt ] ||
	! cmp -s "$SCRATCH/linked/want" "$SCRATCH/linked/real/out.txt" || [ ! -s "$SCRATCH/linked/want" ]; then
	fail "symbolic-link output: exit $rc; the link or its target is not as a write through the link leaves them: $(ls -l "$SCRATCH/linked" "$SCRATCH/linked/real" | tr '\n' ' ')"
fi
[ "$(ls -A "$SCRATCH/linked/real")" = out.txt ] || fail "symbolic-link output: temporaries left in $SCRATCH/linked/real"

echo "cli_bad_inputs: $checked runs checked, $failed failed" >&2
[ "$failed" = 0 ]
