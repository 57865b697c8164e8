#!/bin/sh
# SPDX-License-Identifier: MIT
# The audit page as a browser shows it: headless Chromium (Debian package
# chromium; installed here when missing and we are root with apt-get, else
# the test is skipped with status 77) renders the demo month's report to a
# screenshot, which must show the charts (tests/audit/pixels.py counts their
# colours), and its log must hold no console error.
# The screenshot is kept as tests/audit/report.png in a separate build folder.
set -u
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
syrinx="$build/syrinx"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cd "$src" || exit 1

browser=
find_browser() {
	for b in chromium chromium-browser; do
		if command -v "$b" >/dev/null 2>&1; then browser=$b; return 0; fi
	done
	return 1
}
if ! find_browser && [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
	echo "installing chromium (Debian package) for the rendering test"
	export DEBIAN_FRONTEND=noninteractive
	apt-get install -y -qq --no-install-recommends chromium >"$tmp/apt.log" 2>&1 ||
		{ apt-get update -qq >/dev/null 2>&1 &&
			apt-get install -y -qq --no-install-recommends chromium >"$tmp/apt.log" 2>&1; }
	find_browser
fi
if [ -z "$browser" ]; then
	echo "SKIP: no chromium (Debian package chromium) and it cannot be installed here"
	exit 77
fi
fail=0
"$syrinx" audit fixtures/demo/month.xml --html "$tmp/report.html" || { echo "FAIL: audit"; exit 1; }

run_browser() {
	timeout 180 "$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
		--disable-background-networking --disable-component-update --disable-sync \
		--user-data-dir="$(mktemp -d "$tmp/profile.XXXXXX")" --hide-scrollbars "$@"
}
run_browser --screenshot="$tmp/report.png" --window-size=1200,2400 \
	--enable-logging=stderr --v=0 "file://$tmp/report.html" >"$tmp/shot.out" 2>"$tmp/shot.err"
run_browser --dump-dom --enable-logging=stderr --v=0 "file://$tmp/report.html" \
	>"$tmp/dom.html" 2>"$tmp/dom.err"
if [ ! -s "$tmp/report.png" ]; then
	tail -20 "$tmp/shot.err"
	echo "FAIL: chromium made no screenshot"
	exit 1
fi
# kept for people to look at, in a build folder apart from the sources only
if [ "$(cd "$build" && pwd)" != "$(cd "$src" && pwd)" ]; then
	mkdir -p "$build/tests/audit" && cp "$tmp/report.png" "$build/tests/audit/report.png"
fi
/usr/bin/python3 "$src/tests/audit/pixels.py" "$tmp/report.png" || fail=1
if grep -E 'Uncaught|ERROR:CONSOLE|CONSOLE\(|Refused to|net::ERR' "$tmp/shot.err" "$tmp/dom.err"; then
	echo "FAIL: the browser reported errors on the page"
	fail=1
else
	echo "ok: no console errors"
fi
# the browser's own parse (HTML, not XML): still five charts with titles
svgs=$(grep -o '<svg' "$tmp/dom.html" | wc -l)
titles=$(grep -o '<svg[^>]*><title' "$tmp/dom.html" | wc -l)
if [ "$svgs" = 5 ] && [ "$titles" = 5 ]; then
	echo "ok: the browser sees 5 charts, each with its title first"
else
	echo "FAIL: the browser sees $svgs charts, $titles with a title first"
	fail=1
fi
exit $fail
