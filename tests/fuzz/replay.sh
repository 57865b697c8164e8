#!/bin/sh
# SPDX-License-Identifier: MIT
# Replays every saved fuzz corpus through its harness (tests/fuzz/corpus/<name>/
# with the program tests/fuzz/fuzz_<name>): no input may crash or leak.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
pass=0 fail=0
for dir in "$src"/tests/fuzz/corpus/*/; do
	name=$(basename "$dir")
	prog="$build/tests/fuzz/fuzz_$name"
	if [ ! -x "$prog" ]; then
		echo "FAIL: no harness $prog for corpus $name"
		fail=$((fail + 1))
		continue
	fi
	if "$prog" "$dir"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "FAIL: $name"; fi
done
echo "fuzz replay: $pass passed, $fail failed"
[ $fail = 0 ]
