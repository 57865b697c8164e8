#!/bin/sh
# SPDX-License-Identifier: MIT
# Recompute the oxygen reference table with scipy (Debian python3-scipy) and compare
# it with the committed tests/reference/oxygen_scipy.tsv that test_oxygen checks
# the C code against. Skipped (77) where scipy is not installed.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "skip: /usr/bin/python3 not found"; exit 77; }
exec "$py" "$src/tests/reference/oxygen_scipy.py" --check
