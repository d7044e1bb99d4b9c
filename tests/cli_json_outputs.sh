#!/usr/bin/env bash
# cli_json_outputs.sh - every JSON holdcount writes is valid JSON in UTF-8
# (RFC 8259: UTF-8 text, no NaN or Infinity).  Each command that has
# --format json is run on the demo files copied under names that are not
# UTF-8 (a Latin-1 e-acute, byte 0xE9: the file name reaches the output as
# the system gives it), and a report folder is written from them; then every
# *.json under the suite's temporary folder is parsed, the other tests'
# outputs included (tests/CMakeLists.txt runs this test after all others).
set -u
HC=${HOLDCOUNT:?}
D=${HOLDCOUNT_SOURCE_DIR:?}/data
ROOT=${HOLDCOUNT_TEST_TMP:?}
T=$ROOT/cli_json_outputs
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

e=$(printf '\351')
U="$T/universe-$e.csv"; F="$T/funds-$e.csv"; S="$T/sectors-$e.csv"
cp "$D/demo-universe.csv" "$U"; cp "$D/demo-funds.csv" "$F"; cp "$D/demo-sectors.csv" "$S"

run() {   # run NAME EXPECTED-STATUS ARGS...: holdcount ARGS --format json >NAME.json
	local name=$1 want=$2 rc
	shift 2
	"$HC" "$@" --format json >"$T/$name.json" 2>"$T/$name.err"; rc=$?
	[ $rc -eq "$want" ] || fail "$name: exit $rc, expected $want: $(head -c 300 "$T/$name.err")"
}
run describe 0 describe "$U"
run curve 0 curve "$U" --paths 200 -q
run enough 0 enough "$U" --paths 200 --bootstrap 20 -q
run audit 0 audit "$U" --holdings "$F" --sectors "$S" --paths 200 -q
run audit-fail 1 audit "$U" --holdings "$F" --max-weight 10% --paths 0 -q
run rolling 0 rolling "$U" --window 60 --step 12
run formula 0 formula --average-sd 30% --average-correlation 0.2 --securities 500
"$HC" report "$U" --holdings "$F" --sectors "$S" -o "$T/report-$e" --paths 200 --bootstrap 20 -q ||
	fail "report exited $?"

"${PYTHON:-/usr/bin/python3}" - "$ROOT" "$T" <<'PY' || fails=$((fails + 1))
import glob, json, os, sys
root, own = sys.argv[1], sys.argv[2]

def strict(c):
    raise ValueError(f"not JSON: {c}")

paths = sorted(glob.glob(os.path.join(glob.escape(root), "**", "*.json"), recursive=True))
mine = [p for p in paths if p.startswith(own + os.sep)]
# the seven command outputs and the report's summary.json
assert len(mine) == 8, mine
bad = []
for p in paths:
    try:
        doc = json.loads(open(p, "rb").read().decode("utf-8"), parse_constant=strict)
    except (ValueError, UnicodeDecodeError) as e:
        bad.append(f"{p}: {e}")
        continue
    if p.startswith(own + os.sep):
        # the name that is not UTF-8 is written with U+FFFD for its byte
        text = json.dumps(doc, ensure_ascii=False)
        # (formula reads no file; rolling's JSON names none)
        if os.path.basename(p) not in ("formula.json", "rolling.json") and "-\ufffd.csv" not in text:
            bad.append(f"{p}: the file name is not there with U+FFFD")
assert not bad, "\n".join(bad)
print(f"{len(paths)} JSON files parse ({len(mine)} written here)")
PY

if [ "$fails" -ne 0 ]; then
	echo "$fails failure(s)"
	exit 1
fi
echo "cli_json_outputs: all passed"
