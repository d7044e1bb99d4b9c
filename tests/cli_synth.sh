#!/usr/bin/env bash
# Command-line tests of `holdcount synth`: the bundled demo regenerates byte
# for byte, seeds decide the bytes, and bad options and unwritable files end
# with the documented exit status (docs/synth.md) and one message.
set -u
: "${HOLDCOUNT:?}" "${HOLDCOUNT_SOURCE_DIR:?}" "${HOLDCOUNT_TEST_TMP:?}"
dir="$HOLDCOUNT_TEST_TMP/cli_synth"
rm -rf "$dir" && mkdir -p "$dir"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

# expect STATUS FRAGMENT -- ARGS: run synth, check exit status and stderr
expect() {
	local want=$1 frag=$2 got
	shift 3
	"$HOLDCOUNT" synth "$@" >"$dir/out" 2>"$dir/err"
	got=$?
	[ "$got" -eq "$want" ] || fail "synth $* exited $got, expected $want"
	grep -qF -- "$frag" "$dir/err" || fail "synth $*: stderr lacks '$frag': $(cat "$dir/err")"
	[ "$want" -eq 0 ] || [ "$(wc -l <"$dir/err")" -eq 1 ] || fail "synth $*: expected one message line"
}

# 1. The demo, with exactly the command in data/README.md.
demo_cmd=$(sed -n '/^    holdcount synth /,/parameters-output/p' "$HOLDCOUNT_SOURCE_DIR/data/README.md" | sed 's/^    //')
[ -n "$demo_cmd" ] || fail "no holdcount synth command found in data/README.md"
(cd "$dir" && mkdir -p data && eval "\"\$HOLDCOUNT\" ${demo_cmd#holdcount }" 2>"$dir/demo.err") || fail "demo command failed: $(cat "$dir/demo.err")"
for f in demo-universe.csv demo-sectors.csv demo-parameters.csv; do
	cmp -s "$dir/data/$f" "$HOLDCOUNT_SOURCE_DIR/data/$f" || fail "regenerated data/$f differs from the bundled one"
done
grep -qF "wrote 150 securities over 240 monthly periods to data/demo-universe.csv" "$dir/demo.err" || fail "demo summary: $(cat "$dir/demo.err")"
grep -qF "3 returns fell below the floor -0.95" "$dir/demo.err" || fail "demo floor count: $(cat "$dir/demo.err")"

# 2. Same seed, same bytes (to a file and to standard output); another seed, other bytes.
"$HOLDCOUNT" synth --securities 12 --sectors 3 --periods 30 --seed 4242 -o "$dir/a.csv" -q || fail "synth to a.csv"
"$HOLDCOUNT" synth --securities 12 --sectors 3 --periods 30 --seed 4242 -q >"$dir/b.csv" 2>"$dir/err" || fail "synth to stdout"
[ -s "$dir/err" ] && fail "--quiet still wrote to stderr: $(cat "$dir/err")"
"$HOLDCOUNT" synth --securities 12 --sectors 3 --periods 30 --seed 4243 -o "$dir/c.csv" -q || fail "synth to c.csv"
cmp -s "$dir/a.csv" "$dir/b.csv" || fail "same seed gave different bytes"
cmp -s "$dir/a.csv" "$dir/c.csv" && fail "different seeds gave the same bytes"
[ "$(head -c 9 "$dir/a.csv")" = "date,S01," ] || fail "unexpected header: $(head -1 "$dir/a.csv")"
[ "$(wc -l <"$dir/a.csv")" -eq 31 ] || fail "expected 31 lines in a.csv"

# 3. Frequencies: weekly rows 7 days apart, daily rows on weekdays.
"$HOLDCOUNT" synth --securities 3 --sectors 1 --periods 10 --frequency weekly --start 2019-05-03 -q -o "$dir/w.csv" || fail "weekly"
[ "$(sed -n 2p "$dir/w.csv" | cut -d, -f1),$(sed -n 3p "$dir/w.csv" | cut -d, -f1)" = "2019-05-03,2019-05-10" ] || fail "weekly dates: $(cut -d, -f1 "$dir/w.csv" | head -3)"
"$HOLDCOUNT" synth --securities 3 --sectors 1 --periods 10 --frequency daily --start 2019-05-03 -q -o "$dir/d.csv" || fail "daily"
[ "$(sed -n 3p "$dir/d.csv" | cut -d, -f1)" = "2019-05-06" ] || fail "daily dates skip the weekend: $(cut -d, -f1 "$dir/d.csv" | head -3)"

# 4. Bad options: usage error 2, one message naming the problem; nothing written.
expect 2 "degrees of freedom must be above 2" -- --tail-df 1.5 -o "$dir/bad.csv"
expect 2 "option '--securities' expects a whole number" -- --securities many
expect 2 "unknown option '--securitys'" -- --securitys 5
expect 2 "--sector-names gives 2 names but --sectors is 3" -- --sector-names "Reef,Dune" --sectors 3
expect 2 "sectors must be from 1 to the number of securities (4), found 5" -- --securities 4 --sectors 5
expect 2 "start date '2019-02-30'" -- --start 2019-02-30
expect 2 "option '--frequency' expects one of monthly, weekly or daily" -- --frequency hourly
expect 2 "floor return must be above -1" -- --floor-return -1.2
[ -e "$dir/bad.csv" ] && fail "a usage error left bad.csv"

# 5. An unwritable output: i/o error 4; no temporary or partial file left.
expect 4 "no/such/dir/u.csv" -- -o "$dir/no/such/dir/u.csv"
expect 4 "no/such/dir/s.csv" -- -q -o "$dir/ok.csv" --sectors-output "$dir/no/such/dir/s.csv"
[ -e "$dir/ok.csv" ] && fail "universe committed although the sector map could not be written"
ls -A "$dir" | grep -q '\.tmp-' && fail "temporary files left: $(ls -A "$dir")"

# 6. Help: exit 0, lists the options.
"$HOLDCOUNT" synth --help >"$dir/help" || fail "--help exited non-zero"
for o in --securities --periods --sectors --seed --frequency --start --output --sectors-output --tail-df --late-share; do
	grep -qF -- "$o" "$dir/help" || fail "help lacks $o"
done

[ "$fails" -eq 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_synth: all checks passed"
