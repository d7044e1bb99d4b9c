#!/usr/bin/env bash
# The checked-in manual pages (docs/man/*.1): exactly what the binary
# generates from its option tables today (cmake/generate-docs.cmake, the same
# script as the update-generated-docs target), free of groff and man
# warnings, with the sections users of Unix manual pages look for, and the
# exit statuses of include/holdcount/error.h.
set -u
export LC_ALL=C
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
SRC=${HOLDCOUNT_SOURCE_DIR:?HOLDCOUNT_SOURCE_DIR must name the source tree}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_man.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }
command -v groff >/dev/null || { echo "FAIL: groff (groff-base) is needed"; exit 1; }
command -v man >/dev/null || { echo "FAIL: man (man-db) is needed"; exit 1; }

cmake -DHOLDCOUNT="$HC" -DOUTPUT_DIR="$T/gen" -P "$SRC/cmake/generate-docs.cmake" >"$T/gen.log" 2>&1 \
	|| { echo "FAIL: generate-docs.cmake: $(cat "$T/gen.log")"; exit 1; }
(cd "$SRC/docs/man" && ls) >"$T/in_tree"
(cd "$T/gen/docs/man" && ls) >"$T/generated"
cmp -s "$T/in_tree" "$T/generated" || fail "docs/man has other pages than the binary makes: $(diff "$T/in_tree" "$T/generated" | grep '^[<>]' | head -5 | tr '\n' ' ')"
stale=
for p in $(cat "$T/generated"); do
	cmp -s "$SRC/docs/man/$p" "$T/gen/docs/man/$p" || stale="$stale $p"
done
[ -z "$stale" ] || fail "stale manual pages:$stale (run: cmake --build build --target update-generated-docs)"
# One page per command of `holdcount --help`, plus holdcount.1.
for c in $("$HC" --help | sed -n '/^commands:/,/^$/p' | sed -n 's/^  \([a-z][a-z]*\) .*/\1/p'); do
	[ -f "$SRC/docs/man/holdcount-$c.1" ] || fail "no manual page for command '$c'"
done

for p in "$SRC"/docs/man/*.1; do
	name=$(basename "$p" .1)
	groff -ww -man -z "$p" 2>"$T/groff.err" || fail "groff on $name exit $?"
	[ -s "$T/groff.err" ] && fail "groff -ww warnings on $name: $(head -c 300 "$T/groff.err")"
	MANWIDTH=80 man --warnings -l "$p" >"$T/page.txt" 2>"$T/man.err" || fail "man -l $name exit $?"
	[ -s "$T/man.err" ] && fail "man --warnings on $name: $(head -c 300 "$T/man.err")"
	for sect in NAME SYNOPSIS DESCRIPTION "EXIT STATUS" ENVIRONMENT FILES NOTES; do
		grep -q "^$sect\$" "$T/page.txt" || fail "$name has no $sect section"
	done
	grep -qE "^ +$name +- " "$T/page.txt" || fail "$name: NAME line is not '$name - ...' (whatis/apropos read it)"
	head -n1 "$p" | grep -q "^\.TH $(echo "$name" | tr a-z A-Z | sed 's/-/\\\\-/') 1 " || fail "$name: .TH line '$(head -n1 "$p")'"
	grep -q "survivors.*Not investment advice" "$p" || fail "$name lacks the cautions (survivorship, not investment advice)"
	# EXIT STATUS lists every HC_* code of error.h, in order, and nothing else.
	sed -n '/^EXIT STATUS$/,/^[A-Z]/p' "$T/page.txt" | awk '$1 ~ /^[0-9]+$/ {print $1}' >"$T/codes_man"
	grep -oE 'HC_[A-Z]+ = [0-9]+' "$SRC/include/holdcount/error.h" | awk '{print $3}' >"$T/codes_h"
	cmp -s "$T/codes_man" "$T/codes_h" || fail "$name: EXIT STATUS lists $(tr '\n' ' ' <"$T/codes_man"), error.h has $(tr '\n' ' ' <"$T/codes_h")"
	for v in HOLDCOUNT_THREADS NO_COLOR HOLDCOUNT_DATA_DIR; do
		sed -n '/^ENVIRONMENT$/,/^[A-Z]/p' "$T/page.txt" | grep -q "^       $v\$" || fail "$name: ENVIRONMENT lacks $v"
	done
done
# `holdcount COMMAND --help` and holdcount-COMMAND(1) come from one option
# table: the same options, with the same argument names, in the same order
# (the help's option column against the tags of the page's OPTIONS items).
for p in "$SRC"/docs/man/holdcount-*.1; do
	c=$(basename "$p" .1); c=${c#holdcount-}
	"$HC" "$c" --help 2>/dev/null | sed -n 's/^ \{2,6\}\(-.*\)$/\1/p' | sed 's/  .*//; s/ *$//' >"$T/opts_help"
	sed -n '/^\.SH OPTIONS$/,/^\.SH /p' "$p" | sed -n '/^\.TP$/{n;p}' | sed 's/\\f[BIRP]//g; s/\\-/-/g' >"$T/opts_man"
	[ "$(wc -l <"$T/opts_help")" -gt 3 ] || fail "$c --help: no options found"
	cmp -s "$T/opts_help" "$T/opts_man" || fail "$c --help and holdcount-$c(1) list different options: $(diff "$T/opts_help" "$T/opts_man" | grep '^[<>]' | head -4 | tr '\n' ' ')"
done
# Command pages cross-refer to holdcount(1); holdcount(1) to every command page.
for p in "$SRC"/docs/man/holdcount-*.1; do
	grep -q '^\.BR holdcount (1)$' "$p" || fail "$(basename "$p") has no SEE ALSO holdcount(1)"
	c=$(basename "$p" .1); c=${c#holdcount-}
	grep -q "^\.BR holdcount\\\\-$c (1)\$" "$SRC/docs/man/holdcount.1" || fail "holdcount.1 does not list holdcount-$c(1)"
done
# The version in the pages' footer is the binary's.
v=$("$HC" --version | sed -n '1s/^holdcount //p')
grep -q "\"holdcount $v\"" "$SRC/docs/man/holdcount.1" || fail "holdcount.1 does not carry version $v"

# man finds the pages by name once they are on MANPATH (as after installing).
mkdir -p "$T/man/man1" && cp "$SRC"/docs/man/*.1 "$T/man/man1/"
MANPATH=$T/man MANWIDTH=80 man holdcount-enough 2>"$T/err" | grep -q "^NAME" || fail "man holdcount-enough via MANPATH: $(head -c 200 "$T/err")"

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_man: all checks passed"
