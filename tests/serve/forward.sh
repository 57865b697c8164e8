#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve --forward: result messages to a downstream MLLP peer (a listener of the
# test on loopback); a peer that comes late, answers AE, or never answers the connection.
# The test is tests/serve/forward.py (Python standard library only; loopback only).
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
exec "$py" "$src/tests/serve/forward.py"
