#!/bin/sh
# SPDX-License-Identifier: MIT
# The committed demo month (fixtures/demo/month.xml) is exactly what
# tests/audit/genmonth makes, small enough to commit, and valid against the
# feed schema (xmllint, libxml2's validator, Debian package libxml2-utils).
# After changing genmonth.c: tests/audit/genmonth > fixtures/demo/month.xml
set -u
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
month="$src/fixtures/demo/month.xml"
tmp=$(mktemp)
trap 'rm -f "$tmp"' EXIT
fail=0
"$build/tests/audit/genmonth" >"$tmp" || { echo "FAIL: genmonth did not run"; exit 1; }
if cmp -s "$tmp" "$month"; then
	echo "ok: fixtures/demo/month.xml is genmonth's output"
else
	echo "FAIL: fixtures/demo/month.xml differs from genmonth's output"
	fail=1
fi
size=$(wc -c <"$month")
if [ "$size" -lt 2000000 ]; then
	echo "ok: month.xml is $size bytes (under 2 MB)"
else
	echo "FAIL: month.xml is $size bytes, more than 2 MB"
	fail=1
fi
n=$(grep -c '<specimen>' "$month")
# 30 days of about 40 specimens (common sense for "a month of demo verdicts")
if [ "$n" -ge 1000 ] && [ "$n" -le 1500 ]; then
	echo "ok: $n specimens"
else
	echo "FAIL: $n specimens, expected about 1200"
	fail=1
fi
grep -q 'INVENTED DEMO DATA' "$month" || { echo "FAIL: month.xml does not say it is invented"; fail=1; }
if command -v xmllint >/dev/null 2>&1; then
	if xmllint --noout --schema "$src/docs/schema/feed.xsd" "$month" 2>"$tmp"; then
		echo "ok: month.xml is valid against docs/schema/feed.xsd"
	else
		cat "$tmp"
		echo "FAIL: month.xml is not valid against the feed schema"
		fail=1
	fi
else
	echo "note: xmllint missing (Debian package libxml2-utils); schema check not run"
fi
exit $fail
