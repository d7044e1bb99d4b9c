#!/usr/bin/env bash
# The front end's framework: dispatch, help from one table, option errors,
# --version.  Expected messages are the project's own contract (cli.h);
# exit statuses are the HC_* codes of include/holdcount/error.h.
set -u
export LC_ALL=C
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
PY=${PYTHON:-/usr/bin/python3}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_framework.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }

# expect STATUS STDERR-PREFIX -- ARGS...: exit status and first words of stderr.
expect() {
	local want=$1 prefix=$2; shift 3
	"$HC" "$@" >"$T/out" 2>"$T/err"; local got=$?
	[ "$got" = "$want" ] || fail "holdcount $*: exit $got, expected $want ($(head -c 300 "$T/err"))"
	case "$(head -n1 "$T/err")" in "$prefix"*) ;; *) fail "holdcount $*: stderr '$(head -n1 "$T/err")', expected it to start '$prefix'";; esac
}

# Help for every command: `COMMAND --help`, `COMMAND -h` and `help COMMAND` identical.
for c in describe curve formula enough horizon audit rolling report synth; do
	"$HC" help "$c" >"$T/a" 2>&1 || fail "help $c exit $?"
	case $c in describe|curve|formula)
		"$HC" "$c" --help >"$T/b" 2>&1 || fail "$c --help exit $?"
		"$HC" "$c" -h >"$T/c" 2>&1 || fail "$c -h exit $?"
		cmp -s "$T/a" "$T/b" || fail "help $c differs from $c --help"
		cmp -s "$T/a" "$T/c" || fail "help $c differs from $c -h";;
	esac
	head -n1 "$T/a" | grep -q "^usage: holdcount $c" || fail "help $c: no usage line"
	grep -q "Exit status: 0 success" "$T/a" || fail "help $c: no exit status list"
done
# Every option a command's help lists is accepted by its parser (same table):
# each flag-or-value option of curve is parsed without 'unknown option'.
for opt in $("$HC" curve --help | grep -oE -- '--[a-z-]+' | sort -u); do
	"$HC" curve "$opt" 2>"$T/err" >/dev/null
	grep -q "unknown option" "$T/err" && fail "curve lists $opt but rejects it"
done
"$HC" curve --help | grep -q -- "--paths K" || fail "curve help lacks --paths K"
"$HC" curve --help | grep -q -- "(default: 10000)" || fail "curve help lacks the paths default"
"$HC" --help | grep -q "^  describe" || fail "--help does not list describe"
"$HC" help | cmp -s - <("$HC" --help) || fail "help differs from --help"

expect 2 "holdcount curve: unknown option '--pathz' (see 'holdcount curve --help')" -- curve --pathz 10 u.csv
expect 2 "holdcount curve: unknown option '--pathz' (see" -- curve --pathz=10 u.csv
expect 2 "holdcount curve: unknown option '-x'" -- curve -x u.csv
expect 2 "holdcount curve: option '--paths' expects a whole number" -- curve --paths -3 u.csv
expect 2 "holdcount curve: option '--paths' expects a whole number" -- curve --paths=2.5 u.csv
expect 2 "holdcount curve: option '--seed' expects a whole number" -- curve --seed 99999999999999999999 u.csv
expect 2 "holdcount curve: option '--paths' needs a value" -- curve u.csv --paths
expect 2 "holdcount curve: option '--format' expects one of table, csv or json, found 'xml'" -- curve --format xml u.csv
expect 2 "holdcount curve: option '--quiet' takes no value" -- curve --quiet=yes u.csv
expect 2 "holdcount curve: option '--min-coverage' expects a number, or a percent" -- curve --min-coverage 80%% u.csv
expect 2 "holdcount curve: option '--periods-per-year' expects a finite number, found 'inf'" -- curve --periods-per-year inf u.csv
expect 2 "holdcount curve: missing UNIVERSE" -- curve
expect 2 "holdcount curve: unexpected argument 'b.csv'" -- curve a.csv b.csv
expect 2 "holdcount formula: unexpected argument 'x.csv'" -- formula x.csv
expect 2 "holdcount: unknown command 'curvy' (see 'holdcount --help')" -- curvy
expect 2 "holdcount: unknown command 'curvy'" -- help curvy
expect 2 "holdcount: unknown option '--bogus'" -- --bogus
expect 2 "usage: holdcount COMMAND" --
HOLDCOUNT_THREADS=abc expect 2 "holdcount curve: HOLDCOUNT_THREADS must be a whole number from 1 to 1024 (the most threads holdcount starts), found 'abc'" -- curve u.csv
HOLDCOUNT_THREADS=0 expect 2 "holdcount curve: HOLDCOUNT_THREADS must be a whole number" -- curve u.csv
# An explicit --threads wins over the variable, even over a bad value: the
# run succeeds and prints what the same options print without the variable.
V=${HOLDCOUNT_SOURCE_DIR:?}/tests/bad-inputs/valid-small.csv
for t in "--threads 2" "--threads=2"; do
	# shellcheck disable=SC2086
	env -u HOLDCOUNT_THREADS "$HC" curve $t --sizes 1-3 --paths 50 --format csv "$V" >"$T/want" 2>/dev/null
	# shellcheck disable=SC2086
	HOLDCOUNT_THREADS=abc "$HC" curve $t --sizes 1-3 --paths 50 --format csv "$V" >"$T/got" 2>"$T/err"; rc=$?
	[ $rc = 0 ] || fail "curve $t with HOLDCOUNT_THREADS=abc: exit $rc, expected 0 ($(head -n1 "$T/err"))"
	[ -s "$T/want" ] && cmp -s "$T/want" "$T/got" || fail "curve $t with HOLDCOUNT_THREADS=abc printed other output"
done
expect 2 "holdcount synth: unknown option '--bogus' (see 'holdcount synth --help')" -- synth --bogus

# Manual pages (roff) from the same tables: groff -ww finds nothing to warn
# about, and each page lists exactly the options --help lists.
command -v groff >/dev/null || { echo "FAIL: groff is needed to check the manual pages"; exit 1; }
for c in "" describe curve formula enough horizon audit rolling report synth; do
	"$HC" help --man $c >"$T/page.1" || fail "help --man $c exit $?"
	groff -ww -man -Tutf8 -P-cbou "$T/page.1" >"$T/page.txt" 2>"$T/groff.err" || fail "groff on the $c page exit $?"
	[ -s "$T/groff.err" ] && fail "groff warnings on the $c page: $(head -c 300 "$T/groff.err")"
	if [ -n "$c" ]; then
		"$HC" help "$c" | grep -oE -- '--[a-z][a-z-]*' | sort -u >"$T/o_help"
		# roff spells a hyphen \- ; undo that, then collect the option names
		# (before EXIT STATUS: the ENVIRONMENT section names --threads)
		"$PY" -c 'import re,sys; t=open(sys.argv[1]).read().split(".SH EXIT STATUS")[0].replace("\\-","-"); print("\n".join(sorted(set(re.findall(r"--[a-z][a-z-]*", t)))))' "$T/page.1" >"$T/o_man"
		cmp -s "$T/o_help" "$T/o_man" || fail "help and manual page of $c list different options: $(diff "$T/o_help" "$T/o_man" | head -5)"
		grep -qE "^ *holdcount-$c +- " "$T/page.txt" || fail "$c page has no NAME line"
	fi
	grep -q "EXIT STATUS" "$T/page.txt" || fail "page '$c' lacks EXIT STATUS"
done
expect 2 "holdcount: unknown command 'curvy'" -- help --man curvy

# Bash completion: commands, options, choice values.
"$HC" help --bash-completion >"$T/comp.bash" || fail "help --bash-completion exit $?"
complete_words() { bash -c 'source "$1"; shift; COMP_WORDS=("$@"); COMP_CWORD=$(($# - 1)); _holdcount; echo "${COMPREPLY[*]}"' _ "$T/comp.bash" "$@"; }
[ "$(complete_words holdcount cu)" = "curve" ] || fail "completion of 'cu': '$(complete_words holdcount cu)'"
[ "$(complete_words holdcount curve --pa)" = "--paths" ] || fail "completion of 'curve --pa'"
[ "$(complete_words holdcount curve --format '')" = "table csv json" ] || fail "completion of --format values"
[ "$(complete_words holdcount formula --average-c)" = "--average-covariance --average-correlation" ] || fail "completion of 'formula --average-c': '$(complete_words holdcount formula --average-c)'"
[ "$(complete_words holdcount help des)" = "describe" ] || fail "completion of 'help des'"

# --version names holdcount, GSL and the BLAS (issue 8).
"$HC" --version >"$T/v" || fail "--version exit $?"
sed -n 1p "$T/v" | grep -qE '^holdcount [0-9]+\.[0-9]+\.[0-9]+$' || fail "--version line 1: $(sed -n 1p "$T/v")"
sed -n 2p "$T/v" | grep -qE '^GSL [0-9]+\.[0-9]+' || fail "--version line 2: $(sed -n 2p "$T/v")"
sed -n 3p "$T/v" | grep -q '^BLAS OpenBLAS' || fail "--version line 3: $(sed -n 3p "$T/v")"

# Text printed straight to standard output (help, manual pages, completion,
# --version) that cannot be written is an input/output error, exit 4, with
# one message naming the reason: on Linux every write to /dev/full fails
# with ENOSPC (null(4)), whose C-locale text is glibc's strerror.
for args in "--version" "--help" "-h" "help" "help curve" "curve --help" "synth -h" \
	"help --man" "help --man enough" "help --bash-completion"; do
	# shellcheck disable=SC2086
	"$HC" $args >/dev/full 2>"$T/err"; rc=$?
	[ $rc = 4 ] || fail "holdcount $args >/dev/full: exit $rc, expected 4"
	case $args in help*|-*) who="holdcount" ;; *) who="holdcount ${args%% *}" ;; esac
	case $args in help?*) who="holdcount help" ;; esac
	[ "$(cat "$T/err")" = "$who: cannot write to standard output: No space left on device" ] \
		|| fail "holdcount $args >/dev/full: stderr '$(cat "$T/err")'"
done

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_framework: all checks passed"
