#!/usr/bin/env bash
# `cpack -G DEB` from the build tree into a scratch directory (issue 8): the
# package's control fields, its Depends line against what Debian's own
# dpkg-shlibdeps derives from the shipped library, its contents, and the
# package unpacked with `dpkg -x` into a scratch root, where holdcount runs
# on its own library and its own demo data.
set -u
export LC_ALL=C
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
SRC=${HOLDCOUNT_SOURCE_DIR:?HOLDCOUNT_SOURCE_DIR must name the source tree}
PY=${PYTHON:-/usr/bin/python3}
B=$(dirname "$HC")
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_deb.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }
die() { echo "FAIL: $*"; exit 1; }
for tool in cpack dpkg dpkg-deb dpkg-query dpkg-shlibdeps readelf; do
	command -v "$tool" >/dev/null || die "$tool is needed (dpkg-dev, binutils, cmake)"
done
[ -f "$B/CPackConfig.cmake" ] || die "no CPackConfig.cmake beside $HC"

# Reuses the build tree's objects: cpack only installs them into its staging dir.
cpack -G DEB --config "$B/CPackConfig.cmake" -B "$T/pkg" >"$T/cpack.log" 2>&1 || die "cpack: $(tail -5 "$T/cpack.log")"
debs=("$T"/pkg/*.deb)
[ "${#debs[@]}" = 1 ] && [ -f "${debs[0]}" ] || die "expected one .deb, found: ${debs[*]}"
deb=${debs[0]}

# ---- control fields ----------------------------------------------------------
version=$("$HC" --version | sed -n '1s/^holdcount //p')
[ "$(dpkg-deb -f "$deb" Package)" = holdcount ] || fail "Package: $(dpkg-deb -f "$deb" Package)"
[ "$(dpkg-deb -f "$deb" Version)" = "$version" ] || fail "Version: $(dpkg-deb -f "$deb" Version), --version says $version"
[ "$(dpkg-deb -f "$deb" Architecture)" = "$(dpkg --print-architecture)" ] || fail "Architecture: $(dpkg-deb -f "$deb" Architecture)"
[ "$(basename "$deb")" = "holdcount_${version}_$(dpkg --print-architecture).deb" ] || fail "file name $(basename "$deb") is not Debian's NAME_VERSION_ARCH.deb"
depends=$(dpkg-deb -f "$deb" Depends)
echo "Depends: $depends"
for p in libgsl27 libopenblas0 libcsv3 libcjson1 libgomp1 libc6; do
	echo "$depends" | grep -qE "(^|, )$p( |,|$)" || fail "Depends lacks $p: $depends"
done
# GSL's reference CBLAS is not ours (OpenBLAS is): not a direct dependency.
echo "$depends" | grep -q libgslcblas0 && fail "Depends names libgslcblas0: $depends"

# ---- unpacked into a scratch root --------------------------------------------
R=$T/root
dpkg -x "$deb" "$R" || die "dpkg -x failed"
# lib/ is lib/<multiarch> when the build's prefix was /usr; find it either way.
lib=$(dirname "$(find "$R/usr/lib" -name 'libholdcount.so.1' | head -n1)")
[ -n "$lib" ] && [ -d "$lib" ] || die "no libholdcount.so.1 in the package"
for f in usr/bin/holdcount usr/share/man/man1/holdcount.1.gz usr/share/man/man1/holdcount-curve.1.gz \
	 usr/share/bash-completion/completions/holdcount usr/share/holdcount/demo-universe.csv \
	 usr/include/holdcount/curve.h usr/share/doc/holdcount/library.md usr/share/doc/holdcount/copyright; do
	[ -e "$R/$f" ] || fail "package lacks /$f"
done

# ---- the package as a Debian maintainer reads it --------------------------------
# The copyright file where Debian policy puts it (section 12.5, from memory).
cmp -s "$SRC/COPYRIGHT" "$R/usr/share/doc/holdcount/copyright" || fail "/usr/share/doc/holdcount/copyright is not COPYRIGHT"
# Manual pages: every page of docs/man, gzip'd (policy section 12.1, from
# memory: gzip -9n), nothing uncompressed.
(cd "$SRC/docs/man" && ls *.1 | sed 's/$/.gz/') >"$T/m_src"
(cd "$R/usr/share/man/man1" && ls) >"$T/m_deb"
cmp -s "$T/m_src" "$T/m_deb" || fail "packaged manual pages differ from docs/man: $(diff "$T/m_src" "$T/m_deb" | grep '^[<>]' | head -3 | tr '\n' ' ')"
for gz in "$R"/usr/share/man/man1/*; do
	gzip -dc "$gz" 2>/dev/null | cmp -s - "$SRC/docs/man/$(basename "$gz" .gz)" || fail "packaged ${gz#$R} does not unpack to docs/man/$(basename "$gz" .gz)"
done
# Bash completion where bash-completion loads it on demand, as checked in
# (tests/cli_completion.sh tests the checked-in script itself).
cmp -s "$SRC/share/bash-completion/completions/holdcount" "$R/usr/share/bash-completion/completions/holdcount" \
	|| fail "packaged completion differs from share/bash-completion/completions/holdcount"
# Every public header, each complete on its own: a program that includes
# just one compiles with nothing but the package's include directory.
(cd "$SRC/include/holdcount" && ls *.h) >"$T/h_src"
(cd "$R/usr/include/holdcount" && ls) >"$T/h_deb"
cmp -s "$T/h_src" "$T/h_deb" || fail "packaged headers differ from include/holdcount: $(diff "$T/h_src" "$T/h_deb" | grep '^[<>]' | head -3 | tr '\n' ' ')"
for h in $(cat "$T/h_deb"); do
	printf '#include <holdcount/%s>\n' "$h" | cc -std=c11 -pedantic -Wall -Wextra -Werror -fsyntax-only -I"$R/usr/include" -x c - 2>"$T/h.err" \
		|| fail "packaged holdcount/$h does not compile alone: $(head -c 300 "$T/h.err")"
done
# The long description's lines stay under 80 characters (policy section
# 5.6.13, from memory), and it repeats the usual cautions.
dpkg-deb -f "$deb" Description >"$T/desc"
awk 'length($0) > 80 {print NR": "length($0); bad=1} END {exit bad}' "$T/desc" >"$T/long" || fail "Description lines over 80 characters: $(tr '\n' ' ' <"$T/long")"
[ "$(wc -l <"$T/desc")" -ge 4 ] || fail "Description has no long description: $(cat "$T/desc")"
grep -q "Not investment advice" "$T/desc" || fail "Description lacks the cautions"
for f in libholdcount.a libholdcount.so pkgconfig/holdcount.pc cmake/holdcount/holdcountConfig.cmake; do
	[ -e "$lib/$f" ] || fail "package lacks ${lib#$R}/$f"
done
# Stripped binaries (debug information stays in the build tree), and a static
# archive that still links: its symbols survive.
readelf -S "$R/usr/bin/holdcount" | grep -q '\.debug_info' && fail "packaged holdcount is not stripped"
nm "$lib/libholdcount.a" 2>/dev/null | grep -q ' T hc_curve_exact$' || fail "packaged libholdcount.a lost its symbols"

# What the binary and the library load, against Depends: every NEEDED library
# of the binary is the library's or the library itself, and Debian's
# dpkg-shlibdeps names exactly the packages of Depends, at versions Depends
# does not undercut.
readelf -d "$R/usr/bin/holdcount" | sed -n 's/.*(NEEDED).*\[\(.*\)\]/\1/p' | sort >"$T/needed_bin"
readelf -d "$lib/libholdcount.so.1" | sed -n 's/.*(NEEDED).*\[\(.*\)\]/\1/p' | sort >"$T/needed_lib"
extra=$(comm -23 "$T/needed_bin" <(sort "$T/needed_lib" <(echo libholdcount.so.1)))
[ -z "$extra" ] || fail "holdcount needs libraries its library does not: $extra"
mkdir -p "$T/shl/debian"
printf 'Source: holdcount\n\nPackage: holdcount\nArchitecture: any\n' >"$T/shl/debian/control"
(cd "$T/shl" && dpkg-shlibdeps -O "$lib/libholdcount.so.1" 2>"$T/shl.err") >"$T/shl.out" || fail "dpkg-shlibdeps: $(head -c 300 "$T/shl.err")"
shl=$(sed -n 's/^shlibs:Depends=//p' "$T/shl.out")
echo "dpkg-shlibdeps: $shl"
names() { echo "$1" | tr ',' '\n' | sed 's/^ *//; s/ .*//' | sed '/^$/d' | sort; }
[ "$(names "$shl")" = "$(names "$depends")" ] \
	|| fail "Depends names $(names "$depends" | tr '\n' ' ')but dpkg-shlibdeps finds $(names "$shl" | tr '\n' ' ')"
echo "$shl" | tr ',' '\n' | sed -n 's/^ *\([^ ]*\) (>= \([^)]*\))$/\1 \2/p' | while read -r p v; do
	ours=$(echo "$depends" | tr ',' '\n' | sed -n "s/^ *$p (>= \([^)]*\))$/\1/p")
	[ -n "$ours" ] && dpkg --compare-versions "$ours" ge "$v" || echo "FAIL: Depends allows $p ${ours:-at any version}; its symbols need >= $v"
done >"$T/versions"
[ -s "$T/versions" ] && { cat "$T/versions"; fails=$((fails+1)); }

# ---- where the dynamic linker finds libholdcount --------------------------------
# Installed under /usr, the binary carries no RPATH or RUNPATH (common
# practice in Debian packaging, which lintian enforces; from memory) and
# finds libholdcount.so.1 on the system path instead.  The reference for "system
# path" is glibc's dynamic linker itself: the interpreter the binary names,
# asked with --help, lists its system search directories.
for f in "$R/usr/bin/holdcount" "$lib/libholdcount.so.1"; do
	readelf -d "$f" | grep -qE '\((RPATH|RUNPATH)\)' && fail "packaged ${f#$R} has $(readelf -d "$f" | grep -E '\((RPATH|RUNPATH)\)' | sed 's/.*(\(R[A-Z]*PATH\)).*\[/\1 [/')"
done
interp=$(readelf -l "$R/usr/bin/holdcount" | sed -n 's/.*Requesting program interpreter: \(.*\)\]$/\1/p')
[ -x "$interp" ] || die "no program interpreter '$interp' named by the packaged binary"
"$interp" --help | sed -n 's/^ *\(\/[^ ]*\) (system search path)$/\1/p' >"$T/sysdirs"
[ -s "$T/sysdirs" ] || die "$interp --help lists no system search path"
grep -qxF "${lib#$R}" "$T/sysdirs" || fail "the package's ${lib#$R} is not on the dynamic linker's system search path: $(tr '\n' ' ' <"$T/sysdirs")"
# readelf -d's NEEDED name is the library's SONAME, which ld.so looks up there.
readelf -d "$R/usr/bin/holdcount" | grep -q '(NEEDED).*\[libholdcount\.so\.1\]' || fail "packaged holdcount does not need libholdcount.so.1 by its SONAME"

# ---- ldconfig trigger and shlibs --------------------------------------------------
# The control archive: control, md5sums, the ldconfig trigger and shlibs; no
# maintainer scripts (the trigger replaces postinst/postrm calls to ldconfig).
C=$T/control
dpkg-deb -e "$deb" "$C" || die "dpkg-deb -e failed"
[ "$(cd "$C" && ls | tr '\n' ' ')" = "control md5sums shlibs triggers " ] || fail "control archive holds: $(cd "$C" && ls | tr '\n' ' ')"
[ "$(cat "$C/triggers" 2>/dev/null)" = "activate-noawait ldconfig" ] || fail "triggers file: '$(cat "$C/triggers" 2>/dev/null)'"
[ "$(cat "$C/shlibs" 2>/dev/null)" = "libholdcount 1 holdcount (>= $(echo "$version" | cut -d. -f1-2))" ] || fail "shlibs file: '$(cat "$C/shlibs" 2>/dev/null)'"
# dpkg itself reads the trigger: installed with dpkg --root into an empty
# database holding one package interested in ldconfig (as libc-bin is),
# with trigger processing held back, that package is left with ldconfig
# pending.
D=$T/dpkgroot
mkdir -p "$D/var/lib/dpkg/info" "$D/var/lib/dpkg/updates" "$D/var/lib/dpkg/triggers" "$T/watch/DEBIAN"
: >"$D/var/lib/dpkg/status"
printf 'Package: ldconfig-watch\nVersion: 1\nArchitecture: all\nMaintainer: test <test@example.invalid>\nDescription: waits for the ldconfig trigger\n' >"$T/watch/DEBIAN/control"
printf 'interest-noawait ldconfig\n' >"$T/watch/DEBIAN/triggers"
notroot=; [ "$(id -u)" = 0 ] || notroot=--force-not-root
dpkg-deb -b "$T/watch" "$T/watch.deb" >/dev/null 2>&1 || die "dpkg-deb -b of the watching package failed"
dpkg --root="$D" $notroot --log=/dev/null -i "$T/watch.deb" >"$T/dpkg.log" 2>&1 || die "dpkg --root -i watch.deb: $(tail -3 "$T/dpkg.log")"
dpkg --root="$D" $notroot --log=/dev/null --force-depends --no-triggers -i "$deb" >"$T/dpkg.log" 2>&1 || fail "dpkg --root -i the package: $(tail -3 "$T/dpkg.log")"
dpkg-query --admindir="$D/var/lib/dpkg" -f '${Status}|${Triggers-Pending}' -W ldconfig-watch >"$T/watch.status" 2>&1
[ "$(tr -s ' ' <"$T/watch.status")" = "install ok triggers-pending| ldconfig" ] || fail "after installing the package, the ldconfig watcher is '$(cat "$T/watch.status")'"
# dpkg-shlibdeps reads the shlibs file: a program linked to the packaged
# library gets a dependency on holdcount.
S=$T/shlibs
mkdir -p "$S/debian/holdcount/DEBIAN" "$S/debian/user/usr/bin"
cp -a "$R/." "$S/debian/holdcount/" && cp "$C/shlibs" "$S/debian/holdcount/DEBIAN/"
printf 'Source: user\n\nPackage: user\nArchitecture: any\n' >"$S/debian/control"
printf '#include <holdcount/error.h>\nint main(void) { return hc_status_name(HC_OK) == 0; }\n' >"$T/user.c"
cc -std=c11 "$T/user.c" -I"$S/debian/holdcount/usr/include" -L"$S/debian/holdcount${lib#$R}" -lholdcount \
	-o "$S/debian/user/usr/bin/user" 2>"$T/cc.err" || fail "linking a program to the packaged library: $(head -c 300 "$T/cc.err")"
(cd "$S" && dpkg-shlibdeps -O debian/user/usr/bin/user 2>"$T/shl2.err") >"$T/shl2.out" || fail "dpkg-shlibdeps on a program using libholdcount: $(head -c 300 "$T/shl2.err")"
grep -q "^shlibs:Depends=.*holdcount (>= $(echo "$version" | cut -d. -f1-2))" "$T/shl2.out" \
	|| fail "dpkg-shlibdeps gives a program using libholdcount '$(cat "$T/shl2.out")'"

# ---- run from the scratch root -----------------------------------------------
# (The scratch root is not on the system path, so LD_LIBRARY_PATH stands in
# for it; ldd shows that the package's library is the one loaded.)
export LD_LIBRARY_PATH=$lib
"$R/usr/bin/holdcount" --version >"$T/v" 2>"$T/err" || fail "unpacked holdcount --version: $(cat "$T/err")"
"$HC" --version | cmp -s - "$T/v" || fail "unpacked --version differs: $(head -n1 "$T/v")"
grep -q '^GSL [0-9]' "$T/v" && grep -q '^BLAS OpenBLAS' "$T/v" || fail "unpacked --version lacks GSL or BLAS: $(cat "$T/v")"
loaded=$(ldd "$R/usr/bin/holdcount" | awk '/libholdcount/ {print $3}')
[ "$(readlink -f "$loaded")" = "$(readlink -f "$lib/libholdcount.so.1")" ] || fail "unpacked holdcount loads '$loaded', not the package's library"
# The package's own demo data, found from the binary's place (UTF-8: see cli_install.sh).
(cd "$T" && env -u HOLDCOUNT_DATA_DIR LC_ALL=C.UTF-8 "$R/usr/bin/holdcount" report -o rep --paths 50 --bootstrap 0 -q) 2>"$T/err" \
	|| fail "unpacked report on the demo data: $(head -c 300 "$T/err")"
grep -q "^- source: $R/usr/share/holdcount/demo-universe.csv\$" "$T/rep/summary.md" 2>/dev/null \
	|| fail "unpacked report read $(grep -m1 'source:' "$T/rep/summary.md" 2>/dev/null)"
# holdcount.pc finds the unpacked prefix from its own place, and works with
# nothing but itself on pkg-config's path: the package's Depends are runtime
# libraries, without the -dev packages' .pc files.
pc() { env -u PKG_CONFIG_PATH PKG_CONFIG_LIBDIR="$lib/pkgconfig" pkg-config "$@"; }
inc=$(pc --variable=includedir holdcount)
[ -f "$inc/holdcount/curve.h" ] || fail "holdcount.pc's includedir '$inc' has no holdcount/curve.h"
pc --cflags --libs holdcount >"$T/pc.out" 2>"$T/pc.err" || fail "pkg-config --cflags --libs holdcount with only the package's holdcount.pc: $(cat "$T/pc.err")"
[ "$(tr ' ' '\n' <"$T/pc.out" | grep '^-l')" = "-lholdcount" ] || fail "pkg-config --libs holdcount: '$(cat "$T/pc.out")' should link -lholdcount alone"
# The example of docs/library.md, built on those flags alone (shared, then
# the static archive), prints what the packaged command prints.
sed -n '/^```c$/,/^```$/p' "$SRC/docs/library.md" | sed '1d;$d' >"$T/curve.c"
cc -std=c11 -Wall -Wextra -Werror "$T/curve.c" $(pc --cflags --libs holdcount) -o "$T/curve_so" 2>"$T/cc.err" \
	|| fail "example against the package with pkg-config: $(head -c 500 "$T/cc.err")"
cc -std=c11 -Wall -Wextra -Werror "$T/curve.c" $(pc --cflags holdcount) \
	$(pc --static --libs holdcount | sed 's/-lholdcount/-l:libholdcount.a/') -o "$T/curve_a" 2>"$T/cc.err" \
	|| fail "example against the package with pkg-config --static: $(head -c 500 "$T/cc.err")"
# the library's loader keeps complete series by default; the command reads
# a history with gaps period by period unless told --missing complete
"$R/usr/bin/holdcount" curve --missing complete --paths 0 --format csv "$R/usr/share/holdcount/demo-universe.csv" \
	>"$T/cmd.csv" 2>"$T/err" || fail "packaged holdcount curve on the demo universe: $(cat "$T/err")"
for exe in curve_so curve_a; do
	[ -x "$T/$exe" ] || continue
	"$T/$exe" "$R/usr/share/holdcount/demo-universe.csv" >"$T/$exe.out" 2>"$T/err" || { fail "$exe: $(cat "$T/err")"; continue; }
	"$PY" - "$T/cmd.csv" "$T/$exe.out" <<'PYEOF' || fail "$exe's curve differs from the packaged holdcount curve"
import sys, csv
cmd, ex = (list(csv.DictReader(open(f))) for f in sys.argv[1:3])
assert len(cmd) == len(ex) > 5, (len(cmd), len(ex))
for c, e in zip(cmd, ex):
    for k in e:
        assert abs(float(c[k]) - float(e[k])) <= 1e-8 * abs(float(c[k])) + 1e-15, (k, c[k], e[k])
PYEOF
done

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_deb: all checks passed"
