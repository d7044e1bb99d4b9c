#!/usr/bin/env bash
# Every option a command's help lists is one the command can use.
#
# The contract checked (cli.h, struct cli_omit; docs/commands.md): an option
# of a shared group that a command could never use is left out of its
# help, manual page and completion, and the parser refuses it with
# "--NAME does not apply: WHY" (exit 2).  So, for every command and every
# option `holdcount help CMD` lists, run alone (with only what the command
# needs to run at all, on a small invented universe from `holdcount synth`)
# and, for a choice, with each of its values in turn:
#   - nothing says "does not apply", "unknown option", or that the value
#     given here is malformed (the harness's values are valid ones);
#   - a usage refusal (exit 2) names what else the option needs or clashes
#     with: another option or the UNIVERSE argument.  An option refused
#     alone with nothing to add is refused always (the old rolling and
#     report refusals of --covariance read so).
# The omitted options themselves are the control: the same judge must flag
# each of them, so the check cannot pass by never looking.
set -u
export LC_ALL=C
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
T=${HOLDCOUNT_TEST_TMP:-/tmp}/cli_option_scope.$$
mkdir -p "$T"; trap 'rm -rf "$T"' EXIT
fails=0
fail() { echo "FAIL: $*"; fails=$((fails+1)); }

# A complete invented universe (no late listings), its sector map and one fund.
"$HC" synth --securities 12 --periods 72 --seed 3 --late-share 0 --early-share 0 \
	-o "$T/u.csv" --sectors-output "$T/s.csv" -q || { echo "FAIL: synth exit $?"; exit 1; }
printf 'fund,id,weight\nAlder Growth,S01,0.35\nAlder Growth,S02,0.40\nAlder Growth,S07,0.25\n' >"$T/h.csv"
# A benchmark series on its dates (horizon --benchmark-file).
awk -F, 'NR == 1 { print "date,Bill"; next } { print $1 ",0.002" }' "$T/u.csv" >"$T/bill.csv"
# Market values by id (horizon --market-values).
head -1 "$T/u.csv" | tr , '\n' | tail -n +2 | awk 'BEGIN { print "id,market_value" } { print $1 "," NR * 10 }' >"$T/mv.csv"
# An earlier report folder, for compare and report --previous.
"$HC" report "$T/u.csv" -o "$T/rep0" --paths 50 --bootstrap 0 -q || { echo "FAIL: report exit $?"; exit 1; }
# a second holdings file (--holdings is repeatable; one file given twice is refused)
printf 'fund,id,weight\nBirch Income,S01,0.5\nBirch Income,S02,0.5\n' >"$T/h2.csv"

# What each command needs to run at all.
base() {
	case $1 in
	audit) echo "$T/u.csv --holdings $T/h.csv" ;;
	report) echo "$T/u.csv -o $T/rep --force" ;;
	formula) echo "--average-variance 0.0385 --average-covariance 0.0092" ;;
	synth) echo "-o $T/syn.csv" ;;
	compare) echo "$T/rep0 $T/rep0" ;;
	*) echo "$T/u.csv" ;;
	esac
}

# A valid value for each option that takes one (CMD:NAME first, then NAME).
# An option with no entry here is a failure: a new option needs one.
value() {
	case "$1:$2" in
	synth:securities) echo 12; return ;;
	synth:sectors) echo 3; return ;;
	synth:seed) echo 5; return ;;
	report:output) echo "$T/rep"; return ;;
	report:previous) echo "$T/rep0"; return ;;
	esac
	case $2 in
	sizes) echo 1-3 ;;            paths) echo 200 ;;           seed) echo 7 ;;
	threads) echo 2 ;;            min-coverage) echo 90% ;;    periods-per-year) echo 12 ;;
	date-column) echo date ;;     id-column) echo id ;;        value-column) echo value ;;
	delimiter) echo , ;;          max-memory) echo 512 ;;      output) echo "$T/o.$n" ;;
	holdings) echo "$T/h2.csv" ;;  sectors) echo "$T/s.csv" ;;  fund-column) echo fund ;;
	holding-id-column) echo id ;; weight-column) echo weight ;; market-value-column) echo weight ;;
	issuer-column) echo id ;;     min-holdings) echo 2 ;;      min-effective) echo 1.5 ;;
	max-weight) echo 60% ;;       max-sector-weight) echo 80% ;; screens) echo ucits ;;
	holdings-encoding) echo latin-1 ;; type-column) echo id ;; group-column) echo id ;;
	min-covered-weight) echo 50% ;; benchmark) echo "$T/h.csv" ;;
	rules) echo exact ;;          near-floor) echo 5% ;;       marginal) echo 0.10pp ;;
	band) echo 95%:10% ;;         premium) echo 4% ;;          holding-cost) echo 0.1% ;;
	te-budget) echo 3% ;;         shortfall|lag-share) echo 1%:10% ;;    bootstrap) echo 40 ;;
	statman) echo 5%:7% ;;        index-cost) echo 0.4% ;;     alexeev-tapon) echo 85%:90% ;;
	policy) echo near-floor ;;
	block-length) echo 3 ;;       bootstrap-paths) echo 100 ;; average-variance) echo 0.0385 ;;
	average-covariance) echo 0.0092 ;; average-sd) echo 20% ;; average-correlation) echo 0.3 ;;
	securities) echo 40 ;;        strata) echo "$T/s.csv" ;;   strata-id-column) echo id ;;
	strata-column) echo sector ;; per-stratum-max) echo 2 ;;   window) echo 24 ;;
	step) echo 6 ;;  step-months) echo 3 ;;              refresh) echo 8 ;;           periods) echo 36 ;;
	sector-names) echo alpha,beta,gamma ;; sector-prefix) echo grp- ;; id-prefix) echo Q ;;
	from) echo 2000-01 ;;         to) echo 2030-12 ;;          exclude) echo S03 ;;
	exclude-file) printf 'S04\n' >"$T/x.csv"; echo "$T/x.csv" ;;
	start) echo 2001-01-31 ;;     market-vol) echo 0.15 ;;     sector-vol) echo 0.07 ;;
	specific-vol) echo 0.2 ;;     specific-spread) echo 0.3 ;; beta-spread) echo 0.2 ;;
	tail-df) echo 6 ;;            late-share) echo 0.1 ;;      early-share) echo 0.1 ;;
	mean-return) echo 0.07 ;;     mean-spread) echo 0.02 ;;    floor-return) echo -0.9 ;;
	sectors-output) echo "$T/so.$n" ;; parameters-output) echo "$T/po.$n" ;;
	measures) echo es95,max_drawdown ;;
	years) echo 2 ;;               benchmark-rate) echo 3% ;;
	benchmark-file) echo "$T/bill.csv" ;; lag-limit) echo 5% ;;
	market-values) echo "$T/mv.csv" ;;
	horizon) echo 2 ;;             horizon-paths) echo 100 ;;
	*) return 1 ;;
	esac
}

# Options that do nothing without a companion, which the refusal alone
# names in words ("... apply only to the long layout", universe.c): each
# is judged with its companion instead.
companion() {
	case $1 in
	id-column|value-column) echo "--layout long" ;;
	esac
}

# judge CMD NAME ARGS...: run `holdcount CMD BASE ARGS`; 0 when the option
# was taken, else 1 with the reason in $why.
judge() {
	local c=$1 name=$2 rc others; shift 2
	# shellcheck disable=SC2046
	"$HC" "$c" $(base "$c") "$@" $(companion "$name") >/dev/null 2>"$T/err" </dev/null; rc=$?
	why=
	if grep -q "does not apply" "$T/err"; then why="refused as not applying"
	elif grep -q "unknown option" "$T/err"; then why="unknown option"
	elif grep -qE "option '--$name' (expects|needs a value|takes no value)" "$T/err"; then why="the test's value is malformed"
	elif [ $rc = 2 ]; then
		others=$(grep -oE -- '--[a-z][a-z-]*|UNIVERSE' "$T/err" | grep -vxE -- "--$name|--help")
		[ -n "$others" ] || why="refused alone, naming nothing else it needs"
	fi
	[ -z "$why" ] && return 0
	why="$why (exit $rc): $(head -c 300 "$T/err")"
	return 1
}

# The options a command's help lists: "NAME" for a flag, "NAME VALUE" for
# an option with a value (VALUE a|b|c for a choice).
listed() {
	"$HC" help "$1" | grep -E '^  (-[a-zA-Z], |    )--[a-z]' | sed -E 's/^ +(-[a-zA-Z], )?--//; s/  .*//' \
		| grep -vx help
}

commands=$("$HC" --help | sed -n '/^commands:/,/^$/p' | sed -n 's/^  \([a-z][a-z]*\) .*/\1/p')
[ "$(echo $commands)" = "describe curve formula enough horizon audit rolling report compare synth check" ] \
	|| fail "the commands are now '$(echo $commands)': check this test covers each"
n=0
for c in $commands; do
	checked=0
	listed "$c" >"$T/opts"
	while read -r name meta; do
		n=$((n+1))
		if [ -z "$meta" ]; then
			judge "$c" "$name" "--$name" || fail "$c lists --$name but $why"
		elif [ "${meta#*|}" != "$meta" ]; then
			for v in ${meta//|/ }; do
				judge "$c" "$name" "--$name" "$v" || fail "$c lists --$name $v but $why"
			done
		elif v=$(value "$c" "$name"); then
			judge "$c" "$name" "--$name" "$v" || fail "$c lists --$name but $why"
		else
			fail "$c --$name $meta: no value for it in this test's table"
		fi
		checked=$((checked+1))
	done <"$T/opts"
	# compare takes the output options only (--format, --output, --quiet)
	[ "$checked" -ge "$([ "$c" = compare ] && echo 3 || echo 8)" ] || fail "$c: only $checked options read from its help"
done
# 11 commands, each but compare with at least 8 options (synth has 24, report 63).
[ "$n" -ge 150 ] || fail "only $n options checked in all"

# The options left out, per command (src/cli/cmd_*.c, cli_omit lists): not
# listed, refused with their reason, and flagged by the judge above.
while read -r c name reason; do
	grep -qx -- "$name\( .*\)\?" <(listed "$c") && fail "$c lists --$name, which it leaves out"
	"$HC" help --man "$c" | grep -qF -- "\\-\\-$name\\fR" && fail "the $c manual page lists --$name"
	"$HC" help --bash-completion | sed -n "/^\t$c)/,/;;\$/p" | grep -q -- "--$name[ \"]" \
		&& fail "the $c completion offers --$name"
	v=$(value "$c" "$name") || v=
	[ "$name" = missing ] && v=complete
	# shellcheck disable=SC2086
	"$HC" "$c" $(base "$c") "--$name" $v >/dev/null 2>"$T/err"; rc=$?
	[ $rc = 2 ] || fail "$c --$name: exit $rc, expected 2"
	grep -qF "holdcount $c: --$name does not apply: $reason" "$T/err" \
		|| fail "$c --$name: stderr '$(head -c 300 "$T/err")', expected '--$name does not apply: $reason'"
	# shellcheck disable=SC2086
	judge "$c" "$name" "--$name" $v && fail "the judge takes $c --$name, which $c refuses: the check above is blind"
done <<'EOF'
rolling covariance a covariance matrix has no periods to roll over
report covariance the report needs a return history
report missing the report reads the history period by period
report min-coverage it is the coverage --missing pairwise asks for
enough sizes enough looks at every holding count
audit sizes the audit compares each fund at its own holding count
EOF

[ "$fails" = 0 ] || { echo "$fails failure(s)"; exit 1; }
echo "cli_option_scope: $n listed options checked, all usable; the omitted ones refused"
