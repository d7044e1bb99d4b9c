#!/usr/bin/env bash
# The checked-in bash completion (share/bash-completion/completions/holdcount):
# exactly what `holdcount help --bash-completion` writes from the option
# tables today, and, sourced in a fresh bash with COMP_WORDS/COMP_CWORD set
# as bash sets them, it offers the commands, each command's options as its
# --help lists them, the choices of an option's value (also after
# --name=), files and directories where a path is expected, and nothing
# where a number is.
set -u
export LC_ALL=C
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
SRC=${HOLDCOUNT_SOURCE_DIR:?HOLDCOUNT_SOURCE_DIR must name the source tree}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_completion.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }
COMP=$SRC/share/bash-completion/completions/holdcount

cmake -DHOLDCOUNT="$HC" -DOUTPUT_DIR="$T/gen" -P "$SRC/cmake/generate-docs.cmake" >"$T/gen.log" 2>&1 \
	|| { echo "FAIL: generate-docs.cmake: $(cat "$T/gen.log")"; exit 1; }
cmp -s "$COMP" "$T/gen/share/bash-completion/completions/holdcount" \
	|| fail "stale completion script (run: cmake --build build --target update-generated-docs): $(diff "$COMP" "$T/gen/share/bash-completion/completions/holdcount" | head -4)"
bash -n "$COMP" || fail "completion script: bash -n finds a syntax error"

# complete WORD...: what _holdcount offers for the last word, one per line,
# sorted; run in a clean bash (no rc files), under set -u as some users' shells are.
complete_words() {
	(cd "$T/files" && env -i PATH="$PATH" HOME="$T" bash --norc --noprofile -c '
		set -u; source "$1"; shift
		COMP_WORDS=("$@"); COMP_CWORD=$(($# - 1)); COMP_LINE="$*"; COMP_POINT=${#COMP_LINE}
		_holdcount
		printf "%s\n" "${COMPREPLY[@]}"' _ "$COMP" "$@" 2>"$T/bash.err" | sed '/^$/d' | sort)
	[ -s "$T/bash.err" ] && fail "bash errors completing '$*': $(head -c 200 "$T/bash.err")"
}
# expect "WANTED WORDS" WORD...: the offers, as a sorted set.
expect() {
	local want got
	want=$(printf '%s\n' $1 | sed '/^$/d' | sort); shift
	got=$(complete_words "$@")
	[ "$got" = "$want" ] || fail "completing '$*': got '$(echo $got)', expected '$(echo $want)'"
}

mkdir -p "$T/files/subdir" "$T/files/second dir"
touch "$T/files/u1.csv" "$T/files/u2.csv" "$T/files/sfile.csv"

# The function is registered for the command, with filename handling.
(env -i PATH="$PATH" bash --norc --noprofile -c 'source "$1"; complete -p holdcount' _ "$COMP") 2>&1 \
	| grep -q -- '-o filenames -F _holdcount holdcount' || fail "complete -p holdcount: not registered as expected"

commands=$("$HC" --help | sed -n '/^commands:/,/^$/p' | sed -n 's/^  \([a-z][a-z]*\) .*/\1/p')
[ -n "$commands" ] || fail "no commands found in holdcount --help"
expect "help --help --version $commands" holdcount ''
expect "rolling report" holdcount r
expect "--help --version" holdcount --
expect "describe" holdcount help des

for c in $commands; do
	# the options `holdcount help CMD` lists (long names at the start of an entry)
	want=$("$HC" help "$c" | grep -oE '^  +(-[a-zA-Z], )?--[a-z][a-z-]*' | grep -oE -- '--[a-z][a-z-]*' | sort -u)
	expect "$want" holdcount "$c" --
	# after one option, the rest are still offered
	expect "$(echo "$want" | grep '^--he')" holdcount "$c" --quiet --he
done

# Choices of a value, bare and after '=' (bash splits --format=c into
# '--format' '=' 'c').
expect "table csv json" holdcount curve --format ''
expect "csv" holdcount enough --format c
expect "table csv json" holdcount curve --format = ''
expect "json" holdcount audit --format = j
expect "alive complete pairwise" holdcount describe --missing ''
expect "png svg pdf" holdcount report --plot-format ''
expect "wide long" holdcount curve --layout ''
# Paths: files for FILE values and positional arguments, directories for DIR.
expect "u1.csv u2.csv" holdcount curve u
expect "u1.csv u2.csv" holdcount audit --holdings u
expect "u1.csv u2.csv" holdcount curve -o u
# (a directory with a space stays one offer; -o filenames quotes it)
[ "$(complete_words holdcount report -o s)" = "$(printf 'second dir\nsubdir')" ] \
	|| fail "completing 'holdcount report -o s': '$(complete_words holdcount report -o s | tr '\n' '|')'"
expect "subdir" holdcount report --output = su
# Numbers and names: nothing to offer (no file names for --paths).
expect "" holdcount curve --paths ''
expect "" holdcount curve --seed 1
expect "" holdcount formula --average-sd ''
# A word after an unknown command offers nothing.
expect "" holdcount frobnicate --

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_completion: all checks passed"
