#!/bin/sh
# SPDX-License-Identifier: MIT
# The audit page of the demo month: well-formed (xmllint, libxml2's parser,
# Debian package libxml2-utils), every chart an <svg role="img"> with a
# title and a description, nothing loaded from elsewhere, the cautions shown,
# and the same numbers as the CSV export of the same run (counted with
# Python's csv module, a general-purpose library).
set -u
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
syrinx="$build/syrinx"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cd "$src" || exit 1
command -v xmllint >/dev/null 2>&1 ||
	{ echo "SKIP: xmllint is missing (Debian package libxml2-utils)"; exit 77; }
fail=0
ok() { echo "ok: $*"; }
bad() { echo "FAIL: $*"; fail=1; }

"$syrinx" audit fixtures/demo/month.xml --html "$tmp/r.html" --csv "$tmp/r.csv" \
	--json "$tmp/r.json" || bad "syrinx audit failed"
xmllint --noout --nonet "$tmp/r.html" && ok "the page is well-formed" || bad "not well-formed"
x() { xmllint --xpath "$1" "$tmp/r.html" 2>/dev/null; }
svgs=$(x "count(//*[local-name()='svg'])")
titled=$(x "count(//*[local-name()='svg'][*[1][local-name()='title'][normalize-space()]][*[2][local-name()='desc']][@role='img'][@aria-labelledby])")
[ "$svgs" = 5 ] && ok "5 charts" || bad "$svgs charts, expected 5"
[ "$titled" = "$svgs" ] && ok "every chart has a title, a description and role img" ||
	bad "$titled of $svgs charts have a title, a description and role img"
if grep -Eq '<script|src=|href="https?:|@import|url\(https?:' "$tmp/r.html"; then
	bad "the page loads something from elsewhere"
else
	ok "nothing is loaded from elsewhere"
fi
grep -q 'not for clinical use' "$tmp/r.html" && ok "the cautions are on the page" ||
	bad "the cautions are missing"
/usr/bin/python3 - "$tmp/r.html" "$tmp/r.csv" "$tmp/r.json" <<'PY' || fail=1
import csv, json, sys, xml.etree.ElementTree as ET
ns = {"h": "http://www.w3.org/1999/xhtml"}
page = ET.parse(sys.argv[1])
tiles = [li.find("h:span[@class='n']", ns).text
         for li in page.iterfind(".//h:ul[@class='tiles']/h:li", ns)]
with open(sys.argv[2], newline="") as f:
    rows = list(csv.DictReader(f))
want = [str(len(rows))] + [str(sum(r["disposition"] == d for r in rows))
                           for d in ("accept", "comment", "reject")]
if tiles[:4] != want:
    print("FAIL: page totals %s, CSV %s" % (tiles[:4], want)); sys.exit(1)
print("ok: the page's totals are the CSV's: %s" % " ".join(want))
data = json.load(open(sys.argv[3]))
if len(data) != len(rows) or any(d["specimen_id"] != r["specimen_id"] for d, r in zip(data, rows)):
    print("FAIL: the JSON rows are not the CSV rows"); sys.exit(1)
print("ok: the JSON holds the CSV's %d rows" % len(data))
codes = {}
for r in rows:
    for c in r["reason_codes"].split():
        codes[c] = codes.get(c, 0) + 1
table = {}
for tr in page.iterfind(".//h:section[@id='reasons']//h:tbody/h:tr", ns):
    cells = list(tr)
    table[cells[0].find("h:code", ns).text] = int(cells[2].text)
if table != codes:
    print("FAIL: reason counts: page %s, CSV %s" % (table, codes)); sys.exit(1)
print("ok: the reasons table counts what the CSV holds")
PY
exit $fail
