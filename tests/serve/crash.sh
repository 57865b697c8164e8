#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve: kill -9 in the middle of a burst of 2,000 messages; restart; every
# ACKed message logged once; resend all.
# The test is tests/serve/crash.py (Python standard library only; loopback only).
# The log is also read with the sqlite3 shell (Debian package sqlite3), installed here
# with apt-get when missing and we are root; without it that check is left out.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
if ! command -v sqlite3 >/dev/null 2>&1 && [ "$(id -u)" = 0 ] &&
	command -v apt-get >/dev/null 2>&1; then
	echo "installing the sqlite3 shell with apt-get"
	export DEBIAN_FRONTEND=noninteractive
	timeout 300 apt-get install -y -qq --no-install-recommends sqlite3 >/dev/null 2>&1 ||
		{ timeout 300 apt-get update -qq >/dev/null 2>&1 &&
		  timeout 300 apt-get install -y -qq --no-install-recommends sqlite3 >/dev/null 2>&1; }
fi
exec "$py" "$src/tests/serve/crash.py"
