#!/bin/sh
# SPDX-License-Identifier: MIT
# Recompute the mechanisms' reference table with scipy (Debian python3-scipy) and
# compare it with the committed tests/reference/mechanisms_scipy.tsv that the
# mechanism unit tests check the C code against; then refit the syringe-wall
# parameters and compare with tests/reference/wall_fit.tsv. Skipped (77) where
# scipy is not installed.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
py=/usr/bin/python3
[ -x "$py" ] || { echo "skip: /usr/bin/python3 not found"; exit 77; }
"$py" "$src/tests/reference/mechanisms_scipy.py" --check || exit $?
exec "$py" "$src/tests/reference/wall_fit.py" --check
