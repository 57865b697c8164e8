#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve: SIGTERM with messages in flight exits 0 with every ACKed message
# logged; SIGINT; SIGHUP keeps running.
# The test is tests/serve/signals.py (Python standard library only; loopback only).
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
exec "$py" "$src/tests/serve/signals.py"
