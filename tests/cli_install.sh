#!/usr/bin/env bash
# `cmake --install` into a scratch prefix, then use the installed copy as an
# outsider would (issue 8): the binary runs without the build tree and finds
# its own demo data; the C example of docs/library.md (extracted from the
# document, so the two cannot drift) builds with pkg-config (shared and
# static) and with find_package(holdcount), and its figures agree with numpy
# and with exact enumeration of every subset of a small universe.
set -u
export LC_ALL=C
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
SRC=${HOLDCOUNT_SOURCE_DIR:?HOLDCOUNT_SOURCE_DIR must name the source tree}
PY=${PYTHON:-/usr/bin/python3}
B=$(dirname "$HC")
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_install.$$
P=$T/prefix
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }
die() { echo "FAIL: $*"; exit 1; }

[ -f "$B/cmake_install.cmake" ] || die "no cmake_install.cmake beside $HC: is HOLDCOUNT the build tree's binary?"
cmake --install "$B" --prefix "$P" >"$T/install.log" 2>&1 || die "cmake --install: $(tail -5 "$T/install.log")"

# ---- what was installed ----------------------------------------------------
# GNUInstallDirs: lib/ for a prefix other than /usr on Debian.
L=$P/lib
for f in bin/holdcount lib/libholdcount.a lib/libholdcount.so lib/pkgconfig/holdcount.pc \
	 lib/cmake/holdcount/holdcountConfig.cmake lib/cmake/holdcount/holdcountConfigVersion.cmake \
	 lib/cmake/holdcount/holdcountTargets.cmake share/bash-completion/completions/holdcount \
	 share/holdcount/demo-universe.csv share/holdcount/demo-sectors.csv share/holdcount/demo-funds.csv \
	 share/man/man1/holdcount.1.gz share/doc/holdcount/library.md share/doc/holdcount/copyright; do
	[ -e "$P/$f" ] || fail "not installed: $f"
done
# The shared library's SONAME (libholdcount.so.1) and its versioned file.
soname=$(readelf -d "$L/libholdcount.so" | sed -n 's/.*(SONAME).*\[\(.*\)\]/\1/p')
[ "$soname" = "libholdcount.so.1" ] || fail "SONAME is '$soname', expected libholdcount.so.1"
[ -f "$L/libholdcount.so.1.$(sed -n 's/^Version: 0\.//p' "$L/pkgconfig/holdcount.pc")" ] || fail "no libholdcount.so.1.MINOR.PATCH matching holdcount.pc's version"
# Every exported name carries the project prefix hc_ (so that none can collide
# with a user's own functions, e.g. a "report_free" of theirs): functions and
# data alike, as nm -D lists them for the installed library.
unprefixed=$(nm -D --defined-only "$L/libholdcount.so" | awk '$2 ~ /^[TDBRVW]$/ && $3 !~ /^hc_/ && $3 !~ /^_/ {print $3}')
[ -z "$unprefixed" ] || fail "exported without the hc_ prefix: $(echo $unprefixed | head -c 300)"
nexp=$(nm -D --defined-only "$L/libholdcount.so" | awk '$2 == "T" && $3 ~ /^hc_/' | wc -l)
[ "$nexp" -ge 150 ] || fail "only $nexp exported hc_ functions: is nm reading the right library?"
# Every public header, and nothing else, under include/holdcount/.
(cd "$SRC/include/holdcount" && ls *.h) >"$T/h_src"
(cd "$P/include/holdcount" && ls) >"$T/h_inst"
cmp -s "$T/h_src" "$T/h_inst" || fail "installed headers differ from include/holdcount: $(diff "$T/h_src" "$T/h_inst" | head -3)"
# Every checked-in manual page, gzip'd as gzip -9n makes it (Debian policy,
# from memory): the header read by RFC 1952's layout has no file name (FLG
# bit 3 clear), no time stamp (MTIME 0) and XFL 2 (best compression); man-db
# finds each page by name under the prefix and reads it.
(cd "$SRC/docs/man" && ls *.1 | sed 's/$/.gz/') >"$T/m_src"
(cd "$P/share/man/man1" && ls) >"$T/m_inst"
cmp -s "$T/m_src" "$T/m_inst" || fail "installed manual pages differ from docs/man: $(diff "$T/m_src" "$T/m_inst" | grep '^[<>]' | head -3 | tr '\n' ' ')"
for gz in "$P"/share/man/man1/*.gz; do
	page=$(basename "$gz" .gz)
	gzip -dc "$gz" 2>/dev/null | cmp -s - "$SRC/docs/man/$page" || fail "installed $page.gz does not unpack to docs/man/$page"
	head=$(od -An -tx1 -N10 "$gz" | tr -d ' \n')
	[ "${head:0:8}" = 1f8b0800 ] && [ "${head:8:8}" = 00000000 ] && [ "${head:16:2}" = 02 ] \
		|| fail "$page.gz header $head: expected 1f8b0800 (no name), 00000000 (no time stamp), 02 (gzip -9)"
	[ "$(man -M "$P/share/man" -w "${page%.1}" 2>/dev/null)" = "$gz" ] || fail "man -M PREFIX/share/man -w ${page%.1}: '$(man -M "$P/share/man" -w "${page%.1}" 2>&1)'"
done
MANWIDTH=80 man -M "$P/share/man" holdcount-curve 2>"$T/err" | grep -q '^NAME' || fail "man -M PREFIX/share/man holdcount-curve: $(head -c 200 "$T/err")"
# The copyright file in Debian's machine-readable format (copyright-format
# 1.0, from memory): a header paragraph naming the format, then a Files: *
# paragraph with Copyright and License fields.
cmp -s "$SRC/COPYRIGHT" "$P/share/doc/holdcount/copyright" || fail "share/doc/holdcount/copyright is not COPYRIGHT"
head -n1 "$SRC/COPYRIGHT" | grep -qx 'Format: https://www.debian.org/doc/packaging-manuals/copyright-format/1.0/' || fail "COPYRIGHT's first line: $(head -n1 "$SRC/COPYRIGHT")"
awk 'BEGIN{RS=""} /(^|\n)Files: \*\n/ && /\nCopyright: [^\n]*holdcount developers/ && /\nLicense: [^ \n]+/ {ok=1} END{exit !ok}' "$SRC/COPYRIGHT" \
	|| fail "COPYRIGHT has no 'Files: *' paragraph with Copyright and License"
# Each header compiles on its own, strictly: a library user includes one at
# a time; in C++ too (the headers declare C linkage for C++ programs).
for h in $(cat "$T/h_src"); do
	printf '#include <holdcount/%s>\nint hc_header_check_%s;\n' "$h" "${h%.h}" >"$T/h.c"
	cc -std=c11 -pedantic -Wall -Wextra -Werror -I"$P/include" -c "$T/h.c" -o "$T/h.o" 2>"$T/h.err" \
		|| fail "holdcount/$h does not compile alone: $(head -c 300 "$T/h.err")"
	c++ -std=c++11 -pedantic -Wall -Wextra -Werror -I"$P/include" -fsyntax-only -x c++ "$T/h.c" 2>"$T/h.err" \
		|| fail "holdcount/$h does not compile alone as C++: $(head -c 300 "$T/h.err")"
done

# ---- the installed binary ----------------------------------------------------
# Under a prefix whose library directory is not a system one, a relative
# RPATH finds the installed library, not the build tree's; wherever the tree
# is moved, it still does.
rp=$(readelf -d "$P/bin/holdcount" | sed -n 's/.*(R[UN]*PATH).*\[\(.*\)\]$/\1/p')
[ "$rp" = '$ORIGIN/../lib' ] || fail "installed holdcount's RPATH/RUNPATH is '$rp', expected '\$ORIGIN/../lib'"
# Under /usr (a distribution's build: DESTDIR and --prefix /usr), none: the
# dynamic linker finds the library on its system path.
DESTDIR=$T/dest cmake --install "$B" --prefix /usr >"$T/install-usr.log" 2>&1 || fail "DESTDIR=... cmake --install --prefix /usr: $(tail -5 "$T/install-usr.log")"
readelf -d "$T/dest/usr/bin/holdcount" | grep -qE '\((RPATH|RUNPATH)\)' \
	&& fail "holdcount installed under /usr has $(readelf -d "$T/dest/usr/bin/holdcount" | grep -E '\((RPATH|RUNPATH)\)')"
rm -rf "$T/dest"
env -u LD_LIBRARY_PATH "$P/bin/holdcount" --version >"$T/v" 2>&1 || fail "installed holdcount --version: $(cat "$T/v")"
"$HC" --version | cmp -s - "$T/v" || fail "installed --version differs from the build tree's"
lib=$(env -u LD_LIBRARY_PATH ldd "$P/bin/holdcount" | awk '/libholdcount/ {print $3}')
[ "$(readlink -f "$lib")" = "$(readlink -f "$L/libholdcount.so.1")" ] || fail "installed binary loads '$lib', not the installed library"
# report --demo runs on the demo data installed beside the binary.
# (A UTF-8 locale: under LC_ALL=C gnuplot warns that it cannot convert the
# plots' degree sign and report stops with status 6 -- left to the report's
# owner.)
(cd "$T" && env -u HOLDCOUNT_DATA_DIR LC_ALL=C.UTF-8 "$P/bin/holdcount" report --demo -o rep --paths 50 --bootstrap 0 -q) 2>"$T/err" \
	|| fail "installed report on the demo data: $(head -c 300 "$T/err")"
grep -q "^- source: $P/share/holdcount/demo-universe.csv\$" "$T/rep/summary.md" 2>/dev/null \
	|| fail "installed report did not read $P/share/holdcount: $(grep -m1 'source:' "$T/rep/summary.md" 2>/dev/null)"
# HOLDCOUNT_DATA_DIR overrides it, and a wrong one is named in the message.
(cd "$T" && HOLDCOUNT_DATA_DIR=$T/nowhere "$P/bin/holdcount" report --demo -o rep2 -q) 2>"$T/err"; rc=$?
[ "$rc" = 2 ] || fail "report with HOLDCOUNT_DATA_DIR=nowhere: exit $rc, expected 2"
grep -q "$T/nowhere/demo-universe.csv" "$T/err" || fail "report with a wrong HOLDCOUNT_DATA_DIR: '$(cat "$T/err")'"

# ---- the documented example, against the installed library -------------------
sed -n '/^```c$/,/^```$/p' "$SRC/docs/library.md" | sed '1d;$d' >"$T/curve.c"
lines=$(wc -l <"$T/curve.c")
[ "$lines" -ge 25 ] && [ "$lines" -le 35 ] || fail "docs/library.md example has $lines lines (issue 8 asks for about 30: 25 to 35)"
# Only the installed holdcount.pc on pkg-config's path, none of the
# dependencies' .pc files: a machine with the runtime libraries alone (the
# .deb's Depends) must still get the shared library's flags, and the static
# library's dependencies are plain -l flags that need no .pc either.
unset PKG_CONFIG_PATH
export PKG_CONFIG_LIBDIR=$L/pkgconfig
pc_flags_ok() { # WHAT FLAGS...: one -I (the prefix's include), one -L (its lib), -lholdcount, then EXTRA
	local what=$1 extra=$2 f inc= libd= rest=; shift 2
	for f in "$@"; do
		case "$f" in -I*) inc="$inc ${f#-I}";; -L*) libd="$libd ${f#-L}";; *) rest="$rest $f";; esac
	done
	[ "$(readlink -f $inc)" = "$(readlink -f "$P/include")" ] || fail "$what: -I$inc is not $P/include"
	[ "$(readlink -f $libd)" = "$(readlink -f "$L")" ] || fail "$what: -L$libd is not $L"
	[ "$rest" = " -lholdcount$extra" ] || fail "$what: libraries '$rest', expected ' -lholdcount$extra'"
}
flags=$(pkg-config --cflags --libs holdcount 2>"$T/pc.err") || fail "pkg-config --cflags --libs holdcount with only holdcount.pc: $(cat "$T/pc.err")"
pc_flags_ok "pkg-config --cflags --libs" "" $flags
flags=$(pkg-config --static --cflags --libs holdcount 2>"$T/pc.err") || fail "pkg-config --static with only holdcount.pc: $(cat "$T/pc.err")"
pc_flags_ok "pkg-config --static --cflags --libs" " -lgsl -lopenblas -lcsv -lcjson -fopenmp -lm" $flags
[ -z "$(pkg-config --print-requires --print-requires-private holdcount)" ] || fail "holdcount.pc requires other .pc files: $(pkg-config --print-requires --print-requires-private holdcount | tr '\n' ' ')"
[ "$(pkg-config --modversion holdcount)" = "$("$HC" --version | sed -n '1s/^holdcount //p')" ] || fail "pkg-config --modversion holdcount disagrees with --version"
cc -std=c11 -Wall -Wextra -Werror "$T/curve.c" $(pkg-config --cflags --libs holdcount) -o "$T/curve_pc" 2>"$T/cc.err" \
	|| fail "example with pkg-config: $(head -c 500 "$T/cc.err")"
# The static archive, as docs/library.md spells it.
cc -std=c11 -Wall -Wextra -Werror "$T/curve.c" $(pkg-config --cflags holdcount) \
	$(pkg-config --static --libs holdcount | sed 's/-lholdcount/-l:libholdcount.a/') -o "$T/curve_pc_static" 2>"$T/cc.err" \
	|| fail "example with pkg-config --static: $(head -c 500 "$T/cc.err")"
readelf -d "$T/curve_pc_static" 2>/dev/null | grep -q 'libholdcount' && fail "the static example still needs libholdcount.so"

# A C++ program links to the library by the headers' C names and gets Elton
# & Gruber's (1977, Journal of Business 50(4)) table from their averages,
# 46.619/N + 7.058(1 - 1/N): rows N = 1 and 10 read 46.619 and 11.014
# (values from memory; the table is rounded, so within 0.002).
cat >"$T/eg.cc" <<'EOF'
#include <cstdio>
#include <holdcount/curve.h>
#include <holdcount/moments.h>
int main()
{
	struct moments mo;
	struct hc_error err;
	if (hc_moments_from_summary(&mo, 46.619, 7.058, 0, &err) != HC_OK)
		return 1;
	std::printf("%.6f %.6f\n", hc_curve_expected_variance(&mo, 1), hc_curve_expected_variance(&mo, 10));
	return 0;
}
EOF
c++ -std=c++11 -Wall -Wextra -Werror "$T/eg.cc" $(pkg-config --cflags --libs holdcount) -o "$T/eg" 2>"$T/cc.err" \
	|| fail "a C++ program against the installed library: $(head -c 500 "$T/cc.err")"
LD_LIBRARY_PATH=$L "$T/eg" >"$T/eg.out" 2>&1 || fail "the C++ program: $(cat "$T/eg.out")"
awk 'NR == 1 { ok = $1 - 46.619 < 0.002 && 46.619 - $1 < 0.002 && $2 - 11.014 < 0.002 && 11.014 - $2 < 0.002 } END { exit !ok }' "$T/eg.out" \
	|| fail "the C++ program prints '$(cat "$T/eg.out")', Elton & Gruber's table 46.619 11.014"

mkdir -p "$T/proj"
cp "$T/curve.c" "$T/proj/"
cat >"$T/proj/CMakeLists.txt" <<'EOF'
cmake_minimum_required(VERSION 3.18)
project(uses_holdcount C)
find_package(holdcount 0.2 REQUIRED)
add_executable(curve_shared curve.c)
target_link_libraries(curve_shared PRIVATE holdcount::holdcount)
add_executable(curve_static curve.c)
target_link_libraries(curve_static PRIVATE holdcount::holdcount_static)
EOF
cmake -S "$T/proj" -B "$T/proj/build" -DCMAKE_PREFIX_PATH="$P" >"$T/cm.log" 2>&1 \
	&& cmake --build "$T/proj/build" >>"$T/cm.log" 2>&1 || fail "find_package(holdcount) project: $(tail -8 "$T/cm.log")"
# An incompatible version request is refused (SameMinorVersion before 1.0).
sed -i 's/find_package(holdcount 0.2 REQUIRED)/find_package(holdcount 0.3 REQUIRED)/' "$T/proj/CMakeLists.txt"
cmake -S "$T/proj" -B "$T/proj/build2" -DCMAKE_PREFIX_PATH="$P" >"$T/cm2.log" 2>&1 \
	&& fail "find_package(holdcount 0.3) accepted version $(pkg-config --modversion holdcount)"

# A universe small enough to enumerate: 8 invented securities, 61 months.
"$PY" - "$T/u8.csv" <<'EOF' || die "writing the test universe"
import sys, numpy as np, calendar
rng = np.random.default_rng(20240917)
m, t = 8, 61
f = rng.normal(0.007, 0.043, t)                      # one invented market factor
x = 0.0031 + np.outer(f, rng.uniform(0.55, 1.45, m)) + rng.normal(0, 0.052, (t, m)) * rng.uniform(0.6, 1.9, m)
with open(sys.argv[1], "w") as out:
    out.write("date," + ",".join("QV%03d" % (k * 7 + 3) for k in range(m)) + "\n")
    for i in range(t):
        y, mo = 2011 + (i + 2) // 12, (i + 2) % 12 + 1
        out.write("%d-%02d-%02d," % (y, mo, calendar.monthrange(y, mo)[1]) + ",".join("%.10f" % v for v in x[i]) + "\n")
EOF
# (The pkg-config build has no RPATH: the prefix is not a system directory.)
export LD_LIBRARY_PATH=$L${LD_LIBRARY_PATH:+:$LD_LIBRARY_PATH}
for exe in curve_pc curve_pc_static proj/build/curve_shared proj/build/curve_static; do
	[ -x "$T/$exe" ] || { fail "$exe was not built"; continue; }
	"$T/$exe" "$T/u8.csv" >"$T/$(basename "$exe").out" 2>"$T/err" || { fail "$exe on u8.csv: exit $? $(cat "$T/err")"; continue; }
	cmp -s "$T/curve_pc.out" "$T/$(basename "$exe").out" || fail "$exe prints different figures from curve_pc"
done
# The reference: numpy's covariance (ddof 1), and every n-subset's
# equal-weight variance enumerated (design.md section 11), annualised by 12.
"$PY" - "$T/u8.csv" "$T/curve_pc.out" <<'EOF' || fail "example output against numpy and enumeration"
import sys, itertools, numpy as np
x = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1, usecols=range(1, 9))
a = np.cov(x, rowvar=False, ddof=1)
m = a.shape[0]
vbar = np.trace(a) / m
cbar = (a.sum() - np.trace(a)) / (m * (m - 1))
rows = np.loadtxt(sys.argv[2], delimiter=",", skiprows=1, ndmin=2)
assert [int(r[0]) for r in rows] == list(range(1, m + 1)), rows[:, 0]
bad = 0
for n, sd, vsd, share in rows:
    n = int(n)
    subs = np.array([a[np.ix_(s, s)].sum() / n**2 for s in itertools.combinations(range(m), n)])
    ev = vbar / n + (1 - 1 / n) * cbar
    # expected_sd = sqrt(12 E[var]) = sqrt of the mean over every subset
    want = {"expected_sd": np.sqrt(12 * subs.mean()), "variance_sd": 12 * subs.std(),
            "diversifiable_share": (vbar - cbar) / n / ev}
    got = {"expected_sd": sd, "variance_sd": vsd, "diversifiable_share": share}
    for k in want:
        # printed with 9 significant digits (%.9g); variance_sd at n = m is 0 to rounding
        tol = 1e-8 * abs(want[k]) + (1e-12 if k == "variance_sd" else 0)
        if abs(got[k] - want[k]) > tol:
            print("n=%d %s: example %.12g, reference %.12g" % (n, k, got[k], want[k])); bad += 1
sys.exit(1 if bad else 0)
EOF
# The same figures as `holdcount curve --paths 0` (docs/library.md says so).
"$HC" curve --paths 0 --format csv "$T/u8.csv" >"$T/cmd.csv" 2>"$T/err" || fail "holdcount curve on u8.csv: $(cat "$T/err")"
"$PY" - "$T/cmd.csv" "$T/curve_pc.out" <<'EOF' || fail "example differs from holdcount curve"
import sys, csv
cmd = list(csv.DictReader(open(sys.argv[1])))
ex = list(csv.DictReader(open(sys.argv[2])))
assert len(cmd) == len(ex), (len(cmd), len(ex))
for c, e in zip(cmd, ex):
    for k in e:
        a, b = float(c[k]), float(e[k])
        assert abs(a - b) <= 1e-8 * abs(a) + 1e-15, (k, c[k], e[k])
EOF
# Its error paths: the loader's message and status (HC_EIO = 4, HC_EUSAGE = 2).
"$T/curve_pc" "$T/absent.csv" >/dev/null 2>"$T/err"; rc=$?
[ "$rc" = 4 ] || fail "example on a missing file: exit $rc, expected 4"
grep -q "absent.csv" "$T/err" || fail "example's message does not name the file: $(cat "$T/err")"
"$T/curve_pc" >/dev/null 2>"$T/err"; rc=$?
[ "$rc" = 2 ] || fail "example with no argument: exit $rc, expected 2"

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_install: all checks passed"
