#!/usr/bin/env bash
# cli_layering.sh - the code's layering (docs/architecture.md), checked on
# the source tree: each src/cli/cmd_NAME.c defines no function other
# commands could call (only cmd_NAME and its cli_command_NAME record are
# global), no command file names another command's function, the library
# (src/*.c) never includes the front end, and no two library modules
# include each other's headers (an import cycle, as sampler.c <-> strata.c
# once was).
set -u
SRC=${HOLDCOUNT_SOURCE_DIR:?}
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

cmds=$(cd "$SRC/src/cli" && ls cmd_*.c | sed 's/^cmd_//; s/\.c$//')
for c in $cmds; do
	f=$SRC/src/cli/cmd_$c.c
	# global definitions: a line at column 0 that is not static, not a
	# preprocessor line, a comment or a brace, and declares a function or object
	globals=$(grep -E '^[a-z][a-z_ ]*[ *]+[a-z_][a-z_0-9]*(\(| =)' "$f" | grep -vE '^(static|struct [a-z_]+ \{|typedef)' |
		sed -E 's/^.*[ *]([a-z_][a-z_0-9]*)(\(| =).*$/\1/' | sort -u | tr '\n' ' ')
	for g in $globals; do
		case $g in
		cmd_$c|cli_command_$c) ;;
		*) fail "src/cli/cmd_$c.c defines the global '$g': shared code belongs in a cli_*.c file or the library" ;;
		esac
	done
	for o in $cmds; do
		[ "$o" = "$c" ] && continue
		grep -qE "\bcmd_$o\(|cmd_$o\.h" "$f" && fail "src/cli/cmd_$c.c calls or includes command '$o'"
	done
done
grep -lE '#include "(cli|\.\./cli/[a-z_]+)\.h"|#include "cli/' "$SRC"/src/*.c 2>/dev/null | while read -r f; do
	echo "FAIL: library file $f includes the front end"
done | grep -q FAIL && fail "the library includes the front end"

# include cycles between library modules: A.c includes B.h and B.c includes A.h
for a in "$SRC"/src/*.c; do
	ma=$(basename "$a" .c)
	for hb in $(grep -oE '#include "holdcount/[a-z_]+\.h"' "$a" | sed -E 's/.*holdcount\/([a-z_]+)\.h"/\1/'); do
		[ "$hb" = "$ma" ] && continue
		b=$SRC/src/$hb.c
		[ -f "$b" ] || continue
		grep -q "#include \"holdcount/$ma.h\"" "$b" && [ "$ma" \< "$hb" ] &&
			fail "import cycle: src/$ma.c includes $hb.h and src/$hb.c includes $ma.h"
	done
done
# the check can fail: sampler.c no longer includes strata.h, strata.c does include sampler's types
grep -q '#include "holdcount/strata.h"' "$SRC/src/sampler.c" && fail "sampler.c includes strata.h"

[ $fails -eq 0 ] && echo "cli_layering: ok"
exit $((fails > 0))
