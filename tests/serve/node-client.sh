#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve against node-hl7-client 3.x, an MLLP client from the npm registry
# that no one here wrote (a test peer only, never a dependency): tests/serve/peers.py.
# The package is installed from tests/serve/node/package-lock.json into
# tests/serve/node/node_modules (git ignores it). Skipped (exit 77) where node,
# npm or the registry is missing.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
nodedir=$src/tests/serve/node
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
if ! command -v node >/dev/null 2>&1; then
	echo "SKIP: node is not installed; the test with node-hl7-client needs it"
	echo "0 passed, 0 failed"
	exit 77
fi
if [ ! -f "$nodedir/node_modules/node-hl7-client/package.json" ]; then
	if ! command -v npm >/dev/null 2>&1; then
		echo "SKIP: node-hl7-client is not installed and npm is missing"
		echo "0 passed, 0 failed"
		exit 77
	fi
	echo "installing node-hl7-client (tests/serve/node/package-lock.json) into $nodedir/node_modules"
	# npm ci installs exactly what the lock says and never rewrites it
	if ! timeout 300 npm ci --prefix "$nodedir" --no-audit --no-fund --silent >/dev/null 2>&1; then
		echo "SKIP: could not install node-hl7-client 3.x (is the npm registry reachable?)"
		echo "0 passed, 0 failed"
		exit 77
	fi
fi
exec "$py" "$src/tests/serve/peers.py" node
