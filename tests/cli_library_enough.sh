#!/usr/bin/env bash
# cli_library_enough.sh - the `enough` example of docs/library.md (the ```C
# block) compiled against this build's library prints, on the demo
# universe and on an invented universe with a security listed late, exactly
# what `holdcount enough UNIVERSE --format json` prints (byte for byte: the
# same source type, options, analysis and writer).
set -u
HC=${HOLDCOUNT:?}
SRC=${HOLDCOUNT_SOURCE_DIR:?}
T=${HOLDCOUNT_TEST_TMP:?}/cli_library_enough
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
LIBDIR=$(dirname "$HC")
[ -e "$LIBDIR/libholdcount.so" ] || { echo "FAIL: no libholdcount.so beside $HC"; exit 1; }

sed -n '/^```C$/,/^```$/p' "$SRC/docs/library.md" | sed '1d;$d' >"$T/enough.c"
lines=$(wc -l <"$T/enough.c")
[ "$lines" -ge 25 ] && [ "$lines" -le 40 ] || fail "docs/library.md enough example has $lines lines (about as many as the curve example)"
# A library built with the sanitizers (scripts/test.sh's second stage) needs
# its runtime first in the program: the example is built the same way.
SANFLAGS=
readelf -d "$LIBDIR/libholdcount.so" | grep -q 'NEEDED.*libasan' && SANFLAGS="-fsanitize=address,undefined"
cc -std=c11 -Wall -Wextra -Werror $SANFLAGS -I"$SRC/include" "$T/enough.c" -o "$T/enough" \
	-L"$LIBDIR" -Wl,-rpath,"$LIBDIR" -lholdcount -lgsl 2>"$T/cc.err" \
	|| { fail "the example does not build: $(head -c 500 "$T/cc.err")"; echo "cli_library_enough: $fails failures"; exit 1; }

# An invented universe of 40 securities over 60 months, some listed late
# (dropped under the complete-data policy, by the library as by the command).
"$HC" synth --securities 40 --periods 60 --seed 41 --late-share 0.2 -o "$T/syn.csv" -q >/dev/null 2>&1 \
	|| fail "synth exited $?"
U2=$T/syn.csv
for u in "$SRC/data/demo-universe.csv" "$U2"; do
	[ -n "$u" ] && [ -f "$u" ] || { fail "no universe '$u'"; continue; }
	"$T/enough" "$u" >"$T/lib.json" 2>"$T/lib.err"; rc=$?
	[ $rc -eq 0 ] || { fail "example on $u exited $rc: $(head -c 300 "$T/lib.err")"; continue; }
	"$HC" enough "$u" --format json -q >"$T/cmd.json" || { fail "holdcount enough $u exited $?"; continue; }
	cmp -s "$T/lib.json" "$T/cmd.json" || fail "the example's JSON differs from 'holdcount enough $u --format json': $(diff "$T/lib.json" "$T/cmd.json" | head -5)"
	grep -q '"count":' "$T/lib.json" || fail "no rule count in the example's output on $u"
done
# Usage and a missing file: the documented statuses.
"$T/enough" >/dev/null 2>&1; [ $? -eq 2 ] || fail "the example without an argument does not return HC_EUSAGE (2)"
"$T/enough" "$T/nonexistent.csv" >/dev/null 2>&1; [ $? -eq 4 ] || fail "the example on a missing file does not return HC_EIO (4)"

[ $fails -eq 0 ] && echo "cli_library_enough: ok"
exit $((fails > 0))
