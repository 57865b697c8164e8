#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve: resends: the same (sender, MSH-10) gets the same ACK and one log
# entry; another sender is a new message.
# The test is tests/serve/resend.py (Python standard library only; loopback only).
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
exec "$py" "$src/tests/serve/resend.py"
