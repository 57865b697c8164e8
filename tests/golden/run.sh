#!/bin/sh
# SPDX-License-Identifier: MIT
# Golden tests: whole runs of the syrinx command.
#
# Each case is a folder tests/golden/<case>/ holding
#   cmd              one shell line; $SYRINX is the command under test; run in the
#                    source tree's top folder, so paths like fixtures/... work
#   stdin            (optional) given on standard input
#   expected.stdout  expected standard output, byte for byte
#   expected.stderr  expected standard error, byte for byte
#   expected.status  expected exit status
# Usage: run.sh [--update] [CASE...]   (--update rewrites the expected files)
set -u
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
SYRINX="$build/syrinx"
export SYRINX
SYRINX_DATADIR=${SYRINX_DATADIR:-$src}
export SYRINX_DATADIR
update=0
if [ "${1:-}" = "--update" ]; then update=1; shift; fi
cases=$*
[ -n "$cases" ] || cases=$(cd "$src/tests/golden" && for d in */; do printf '%s ' "${d%/}"; done)
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0 fail=0
for c in $cases; do
	dir="$src/tests/golden/$c"
	[ -f "$dir/cmd" ] || continue
	input=/dev/null
	[ -f "$dir/stdin" ] && input="$dir/stdin"
	(cd "$src" && LC_ALL=C TZ=UTC sh -c "$(cat "$dir/cmd")" <"$input" >"$tmp/out" 2>"$tmp/err")
	echo $? >"$tmp/status"
	if [ $update = 1 ]; then
		cp "$tmp/out" "$dir/expected.stdout"
		cp "$tmp/err" "$dir/expected.stderr"
		cp "$tmp/status" "$dir/expected.status"
		echo "updated: $c"
		continue
	fi
	ok=1
	for part in stdout stderr status; do
		case $part in stdout) got=out ;; stderr) got=err ;; status) got=status ;; esac
		if ! cmp -s "$dir/expected.$part" "$tmp/$got"; then
			ok=0
			echo "FAIL: $c: $part differs:"
			diff -u "$dir/expected.$part" "$tmp/$got" | head -40
		fi
	done
	if [ $ok = 1 ]; then pass=$((pass + 1)); echo "ok: $c"; else fail=$((fail + 1)); fi
done
echo "golden: $pass passed, $fail failed"
[ $fail = 0 ]
