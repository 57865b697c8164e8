#!/bin/sh
# SPDX-License-Identifier: MIT
# syrinx serve: MLLP framing faults (split frames, junk, restarts, size limit,
# timeouts) with a raw socket client.
# The test is tests/serve/framing.py (Python standard library only; loopback only).
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "SKIP: /usr/bin/python3 not found"; echo "0 passed, 0 failed"; exit 77; }
exec "$py" "$src/tests/serve/framing.py"
