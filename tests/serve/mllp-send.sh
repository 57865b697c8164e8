#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve against `mllp_send`, the MLLP sender of Debian's python3-hl7 package
# (a general HL7 library; a test peer only): tests/serve/peers.py. Installed with
# apt-get when missing and we are root; skipped (exit 77) otherwise.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
if ! command -v mllp_send >/dev/null 2>&1 && [ "$(id -u)" = 0 ] &&
	command -v apt-get >/dev/null 2>&1; then
	echo "installing python3-hl7 (for mllp_send) with apt-get"
	export DEBIAN_FRONTEND=noninteractive
	timeout 300 apt-get install -y -qq --no-install-recommends python3-hl7 >/dev/null 2>&1 ||
		{ timeout 300 apt-get update -qq >/dev/null 2>&1 &&
		  timeout 300 apt-get install -y -qq --no-install-recommends python3-hl7 >/dev/null 2>&1; }
fi
if ! command -v mllp_send >/dev/null 2>&1; then
	echo "SKIP: mllp_send (Debian package python3-hl7) is not installed and could not be"
	echo "0 passed, 0 failed"
	exit 77
fi
exec "$py" "$src/tests/serve/peers.py" mllp_send
