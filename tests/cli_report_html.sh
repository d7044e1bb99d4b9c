#!/usr/bin/env bash
# cli_report_html.sh - report.html checked in a real browser.
#
# Headless Chromium (Debian's chromium package, installed by
# scripts/setup.sh) renders the demo report's report.html, written with
# --previous against a report of the same demo cut to an earlier date range,
# to a PNG screenshot and to PDFs on US Letter and A4, and the test asserts:
#   - the document is self-contained: no <script>, <link>, <img> or url to
#     fetch (the SVG namespace URIs are names, not fetches);
#   - no console message from the page in Chromium's log (--enable-logging
#     --v=0 prints each as "CONSOLE"), checked blind-proof on a page that does
#     log an error;
#   - every figure is present with a non-zero rendered size: a test copy
#     (only the copy) gets a script at the end of its body that writes each
#     figure's laid-out size into the DOM, read back with --dump-dom; every
#     figure carries an accessible name; nothing is wider than the window
#     (no sideways scrolling at 1000 pixels);
#   - every section heading is in the DOM and in the PDF's text (pdftotext,
#     Debian's poppler-utils);
#   - the PDF's page count is within 8 to 30 pages on Letter and on A4
#     (pdfinfo; nine sections, each from a new page, figures kept whole);
#   - the recommendation sentence (the near-floor count from summary.json and
#     the policy sentence's minimum) is in the PDF's text;
#   - the tail-and-horizon section: on the demo (a history with gaps) its
#     heading, the expected-shortfall figure and caption, and the sentence
#     saying why ending wealth is left out; on an invented complete history
#     the ending-wealth and lagging figures laid out at a non-zero size and
#     their captions in the PDF's text.
# The screenshot is left in the test folder ($T/screenshot.png); docs/img/
# report-html.png is a copy of its top.
set -u
HC=${HOLDCOUNT:?}
T=${HOLDCOUNT_TEST_TMP:?}/cli_report_html
rm -rf "$T"; mkdir -p "$T"
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
U=$HOLDCOUNT_SOURCE_DIR/data/demo-universe.csv
FAST=(--paths 1000 --bootstrap 100 -q)

for tool in chromium pdfinfo pdftotext python3; do
	command -v "$tool" >/dev/null || { echo "FAIL: $tool is not installed (scripts/setup.sh installs it)"; exit 1; }
done

# Chromium as root needs --no-sandbox; each run gets a new, empty profile
# and no network-facing background services.
browse() { # OUT_LOG ARGS...: run headless Chromium, its log in OUT_LOG
	local log=$1 profile
	shift
	profile=$(mktemp -d "$T/profile.XXXXXX")
	timeout 120 chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
		--disable-background-networking --disable-component-update --disable-sync \
		--user-data-dir="$profile" --enable-logging=stderr --v=0 "$@" 2>"$log"
	local rc=$?
	rm -rf "$profile"
	return $rc
}
console_clean() { # LOG: no page console message in a Chromium log
	! grep -q 'CONSOLE' "$1"
}

# The previous report: the demo's first 180 months (2005-2019), with the
# demo's funds; then this quarter's on the whole demo with --previous.
# Relative names, as a quarterly script would use (the page shows them).
cd "$T" || exit 1
head -n 181 "$U" >universe-2019.csv
"$HC" report universe-2019.csv --holdings "$HOLDCOUNT_SOURCE_DIR/data/demo-funds.csv" \
	--sectors "$HOLDCOUNT_SOURCE_DIR/data/demo-sectors.csv" -o report-2019 "${FAST[@]}" || fail "older report exited $?"
"$HC" report --demo --previous report-2019 -o report-2024 "${FAST[@]}" || fail "report --previous exited $?"
H=$T/report-2024/report.html
[ -s "$H" ] || { echo "FAIL: no report.html"; exit 1; }

# Self-contained: nothing to fetch, no script needed.
grep -Eiq '<script|<link|<img|<iframe|@import|src=' "$H" && fail "report.html loads or runs something: $(grep -Eio '<script|<link|<img|<iframe|@import|src=' "$H" | head -3)"
grep -Eo '(https?|ftp)://[^"'"'"' )]*' "$H" | grep -Ev '^http://www\.w3\.org/(2000/svg|1999/xlink)$' | head -3 >"$T/urls"
[ -s "$T/urls" ] && fail "report.html names a URL to fetch: $(cat "$T/urls")"
nfig=$(grep -c '<figure ' "$H")
[ "$nfig" -eq 9 ] || fail "report.html has $nfig figures, expected the demo's 9 (six, expected shortfall, ending wealth, lagging)"
[ "$(grep -c '<svg role="img" aria-label="[^"]' "$H")" -eq "$nfig" ] || fail "a figure lacks role=img and an aria-label"
[ "$(grep -c '<figcaption>' "$H")" -eq "$nfig" ] || fail "a figure lacks a caption"
grep -q '<th scope="col">' "$H" || fail "tables have no column headers with scope"
# the self-check columns stay out of the committee's tables: z appears in
# the appendix only
z_at=$(grep -n '<th scope="col">z</th>' "$H" | head -1 | cut -d: -f1)
app_at=$(grep -n '<section id="appendix"' "$H" | cut -d: -f1)
[ -n "$z_at" ] && [ -n "$app_at" ] && [ "$z_at" -gt "$app_at" ] || fail "the z column is not (only) in the appendix"

# The sections, in order.
SECTIONS=("Recommendation" "Since the last report" "The universe and its treatment" "Risk by holding count"
	  "How many holdings are enough: every rule" "Tail risk and long horizons" "Audited funds" "The count needed through time" "Cautions"
	  "Technical appendix: self-checks")

# 1. Screenshot (the page as a reader first sees it, at a desktop width).
browse "$T/shot.log" --window-size=1000,1300 --screenshot="$T/screenshot.png" "file://$H" || fail "screenshot: chromium exited $?"
console_clean "$T/shot.log" || fail "console messages while rendering: $(grep CONSOLE "$T/shot.log" | head -3)"
python3 - "$T/screenshot.png" <<'EOF' || fail "screenshot is not a 1000 x 1300 PNG of some content"
import struct, sys, zlib
data = open(sys.argv[1], "rb").read()
assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"    # PNG 1.2, 12.12 and 4.1.1
w, h = struct.unpack(">II", data[16:24])
assert (w, h) == (1000, 1300), (w, h)
assert len(data) > 30000, len(data)   # a blank page compresses to a few kB
EOF

# 2. Laid-out sizes of every figure and the headings, from a test copy.
sed 's|</body>|<script>(function(){var o=[];document.querySelectorAll("figure").forEach(function(f){var s=f.querySelector("svg");var r=s?s.getBoundingClientRect():{width:0,height:0};o.push("figure "+f.id+" "+Math.round(r.width)+" "+Math.round(r.height));});document.querySelectorAll("h2").forEach(function(h){o.push("h2 "+h.textContent);});var d=document.documentElement;o.push("width "+d.scrollWidth+" "+d.clientWidth);var p=document.createElement("pre");p.id="hc-sizes";p.textContent=o.join("\\n");document.body.appendChild(p);})();</script></body>|' \
	"$H" >"$T/report-2024/report-sizes.html"
browse "$T/dom.log" --window-size=1000,1300 --dump-dom "file://$T/report-2024/report-sizes.html" >"$T/dom.html" || fail "dump-dom: chromium exited $?"
console_clean "$T/dom.log" || fail "console messages in the sized copy: $(grep CONSOLE "$T/dom.log" | head -3)"
python3 -c '
import html, re, sys
m = re.search(r"<pre id=\"hc-sizes\">(.*?)</pre>", open(sys.argv[1]).read(), re.S)
print(html.unescape(m.group(1)) if m else "")' "$T/dom.html" >"$T/sizes"
[ "$(grep -c '^figure ' "$T/sizes")" -eq "$nfig" ] || fail "the browser laid out $(grep -c '^figure ' "$T/sizes") figures, expected $nfig"
while read -r _ id w h; do
	[ "$w" -gt 300 ] && [ "$h" -gt 150 ] || fail "figure $id rendered at ${w} x ${h} pixels"
	# the SVG keeps its 1000 x 640 shape
	[ $((w * 640 / 1000 - h)) -le 2 ] && [ $((h - w * 640 / 1000)) -le 2 ] || fail "figure $id is ${w} x ${h}, not 1000:640"
done < <(grep '^figure ' "$T/sizes")
for s in "${SECTIONS[@]}"; do
	grep -qxF "h2 $s" "$T/sizes" || fail "the page has no heading '$s'"
done
# the audited funds with their coverage and the statutes' readings (the
# demo's audit gives both baskets and a coverage figure per fund), in the
# DOM as the browser parsed it
for want in '<caption>Audited funds: coverage and the statute screens</caption>' \
	'<th scope="col">weight its risk uses (coverage)</th>' \
	'<th scope="col">1940 Act basket, positions counted up to 5%</th>' \
	'<th scope="col">IRC 851 basket, positions above 5% left out</th>' \
	'<h3>How the audit reads the funds and the statutes</h3>' \
	'<dt>data-check findings (holdcount check lists them)</dt><dd>0</dd>' \
	'<dt>securities alive per period, fewest</dt><dd>144</dd>' \
	'<p>Treatment: return history with gaps, read period by period'; do
	grep -qF "$want" "$T/dom.html" || fail "the page lacks $want"
done
# nothing wider than the window at the screenshot's width (no sideways scrolling)
read -r _ sw cw < <(grep '^width ' "$T/sizes")
[ -n "$cw" ] && [ "$sw" -le "$cw" ] || fail "the page is ${sw:-?} pixels wide in a window ${cw:-?} wide: a table or figure overflows"

# 3. PDF on Letter (Chromium's default paper) and on A4 (a copy whose
# @page names it), page counts and text.
browse "$T/pdf.log" --no-pdf-header-footer --print-to-pdf="$T/letter.pdf" "file://$H" || fail "print to PDF: chromium exited $?"
console_clean "$T/pdf.log" || fail "console messages while printing: $(grep CONSOLE "$T/pdf.log" | head -3)"
sed 's|@page{size:auto;|@page{size:A4;|' "$H" >"$T/report-2024/report-a4.html"
grep -q '@page{size:A4;' "$T/report-2024/report-a4.html" || fail "the A4 copy did not get its @page size"
browse "$T/pdf4.log" --no-pdf-header-footer --print-to-pdf="$T/a4.pdf" "file://$T/report-2024/report-a4.html" || fail "print to A4: chromium exited $?"
for paper in letter:612x792 a4:595x842; do
	f=$T/${paper%%:*}.pdf
	pages=$(pdfinfo "$f" 2>/dev/null | sed -n 's/^Pages: *//p')
	# points, rounded: Chromium lays A4 out as 594.96 x 841.92 (210 x 297 mm is 595.28 x 841.89)
	size=$(pdfinfo "$f" 2>/dev/null | awk '/^Page size:/ { printf "%.0fx%.0f", $3, $5 }')
	[ "$size" = "${paper#*:}" ] || fail "${paper%%:*}.pdf: page size $size, expected ${paper#*:} pt"
	[ -n "$pages" ] && [ "$pages" -ge 8 ] && [ "$pages" -le 30 ] || fail "${paper%%:*}.pdf: $pages pages, expected 8 to 30"
	pdftotext -layout "$f" - | tr -s ' \n' '  ' >"$T/${paper%%:*}.txt"
	for s in "${SECTIONS[@]}"; do
		grep -qF "$s" "$T/${paper%%:*}.txt" || fail "${paper%%:*}.pdf: no heading '$s' in its text"
	done
done
# The recommendation: the near-floor count and its 95% end from summary.json.
read -r count p05 p95 < <(python3 -c '
import json, sys
r = [r for r in json.load(open(sys.argv[1]))["enough"]["rules"] if r["rule"] == "near-floor"][0]
print(r["count"], r["count_p05"], r["count_p95"])' "$T/report-2024/summary.json")
grep -qF "$count holdings (near-floor rule; 90% interval $p05 to $p95)" "$T/letter.txt" ||
	fail "letter.pdf lacks the recommendation '$count holdings (near-floor rule; 90% interval $p05 to $p95)'"
grep -qF "The portfolio holds at least $p95 securities of its universe" "$T/letter.txt" ||
	fail "letter.pdf lacks the policy sentence with its minimum $p95"
grep -qF "not investment advice" "$T/letter.txt" || fail "letter.pdf lacks the cautions"
# the universe's securities with a return by year: the demo's 2011 row
# (144 to 146 of the file's securities; counted from the CSV by check_report.py)
grep -qF "Securities with a return, by year (the file as read)" "$T/letter.txt" || fail "letter.pdf lacks the securities-by-year table"
grep -qE "2011 12 144 146 " "$T/letter.txt" || fail "letter.pdf lacks the demo's 2011 row '2011 12 144 146'"

# The tail-and-horizon section: the demo's expected shortfall and ending
# wealth captions (its history has gaps: windows of its own dates), in the PDF.
grep -qF "Expected shortfall 95%: for a random equal-weight portfolio of N holdings, rebalanced every month, the mean loss in its worst 5% of months (12 of the 240)" "$T/letter.txt" ||
	fail "letter.pdf lacks the expected-shortfall caption"
grep -qF "Ending wealth of 1 invested over 10 years (120 months), by holding count" "$T/letter.txt" ||
	fail "letter.pdf lacks the demo's ending-wealth caption (windows of a history with gaps)"
for fig in fig-shortfall fig-wealth fig-lagging; do
	grep -q "^figure $fig " "$T/sizes" || fail "the browser laid out no $fig figure"
done
# A complete invented history (no listing or delisting): the ending-wealth
# and lagging figures, laid out at a non-zero size, and their captions in
# the PDF.
"$HC" synth -q --securities 60 --periods 180 --seed 2385 --late-share 0 --early-share 0 -o complete.csv || fail "synth exited $?"
"$HC" report complete.csv -o report-complete --window 0 --horizon-paths 300 "${FAST[@]}" || fail "report of a complete history exited $?"
HC2=$T/report-complete/report.html
sed 's|</body>|<script>(function(){var o=[];document.querySelectorAll("figure").forEach(function(f){var s=f.querySelector("svg");var r=s?s.getBoundingClientRect():{width:0,height:0};o.push("figure "+f.id+" "+Math.round(r.width)+" "+Math.round(r.height));});var p=document.createElement("pre");p.id="hc-sizes";p.textContent=o.join("\\n");document.body.appendChild(p);})();</script></body>|' \
	"$HC2" >"$T/report-complete/report-sizes.html"
browse "$T/dom2.log" --window-size=1000,1300 --dump-dom "file://$T/report-complete/report-sizes.html" >"$T/dom2.html" || fail "dump-dom (complete): chromium exited $?"
console_clean "$T/dom2.log" || fail "console messages in the complete history's copy: $(grep CONSOLE "$T/dom2.log" | head -3)"
for fig in fig-shortfall fig-wealth fig-lagging; do
	read -r _ _ w h < <(grep -o "figure $fig [0-9]* [0-9]*" "$T/dom2.html")
	[ "${w:-0}" -gt 300 ] && [ "${h:-0}" -gt 150 ] || fail "$fig of the complete history rendered at ${w:-?} x ${h:-?} pixels"
done
browse "$T/pdf2.log" --no-pdf-header-footer --print-to-pdf="$T/complete.pdf" "file://$HC2" || fail "print to PDF (complete): chromium exited $?"
pdftotext -layout "$T/complete.pdf" - | tr -s ' \n' '  ' >"$T/complete.txt"
for want in "Tail risk and long horizons" "Ending wealth over 10 years" \
	"Ending wealth of 1 invested over 10 years (120 months), by holding count: 300 random portfolios of each count" \
	"Chance of ending the 10 years behind the benchmark: the share of the 300 random portfolios of each count"; do
	grep -qF "$want" "$T/complete.txt" || fail "complete.pdf lacks '$want'"
done

# The console check is not blind: a page that logs an error is caught.
printf '<!DOCTYPE html><html lang="en"><title>x</title><p>x</p><script>console.error("hc-control")</script></html>\n' >"$T/control.html"
browse "$T/control.log" --dump-dom "file://$T/control.html" >/dev/null
console_clean "$T/control.log" && fail "the console check missed a page's console.error"

echo "cli_report_html: $fails failures"
[ $fails -eq 0 ]
