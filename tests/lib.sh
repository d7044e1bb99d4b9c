# Shared helpers for the command-line tests, sourced by tests/cli_*.sh:
#   . "$(dirname "$0")/lib.sh"; cli_begin NAME
# Exit statuses are the HC_* codes of include/holdcount/error.h.

# cli_begin NAME: HC (the binary, from ctest's HOLDCOUNT), PY (Debian's
# python3, from PYTHON), T (a scratch directory NAME.PID under
# HOLDCOUNT_TEST_TMP, removed on exit) and the failure count.
cli_begin() {
	HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
	PY=${PYTHON:-/usr/bin/python3}
	T=${HOLDCOUNT_TEST_TMP:-/tmp}/$1.$$
	mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
	fails=0
}

# fail MESSAGE: say what failed and count it (the test goes on).
fail() { echo "FAIL: $*"; fails=$((fails+1)); }

# expect STATUS STDERR-PREFIX -- ARGS...: holdcount ARGS exits with STATUS,
# the first line of its stderr starts with STDERR-PREFIX, and on failure
# (STATUS not 0) it writes nothing to stdout.  Output is left in $T/out
# and $T/err.
expect() {
	local want=$1 prefix=$2; shift 3
	"$HC" "$@" >"$T/out" 2>"$T/err"; local got=$?
	[ "$got" = "$want" ] || fail "holdcount $*: exit $got, expected $want ($(head -c 300 "$T/err"))"
	case "$(head -n1 "$T/err")" in "$prefix"*) ;; *) fail "holdcount $*: stderr '$(head -n1 "$T/err")', expected '$prefix...'";; esac
	[ "$want" != 0 ] && [ -s "$T/out" ] && fail "holdcount $*: wrote to stdout on failure"
	return 0
}

# cli_end NAME: exit 1 with the count if anything failed.
cli_end() {
	[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
	echo "$1: all checks passed"
}
