#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve: messages that cannot be accepted: AE/AR with the right ERR-2 location
# and ERR-3 code; a locked log.
# The test is tests/serve/errors.py (Python standard library only; loopback only).
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
exec "$py" "$src/tests/serve/errors.py"
