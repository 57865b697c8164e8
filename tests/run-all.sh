#!/bin/sh
# SPDX-License-Identifier: MIT
# The whole test suite, as CI runs it:
#  1. a build with warnings as errors and `make check`;
#  2. the same tests again under AddressSanitizer and UndefinedBehaviorSanitizer.
# Builds go to build-test/ and build-asan/ beside the sources (git ignores them).
set -e
src=$(cd "$(dirname "$0")/.." && pwd)
cd "$src"
jobs=$(nproc 2>/dev/null || echo 2)
[ -x configure ] || autoreconf -fi
run() {
	dir=$1; shift
	mkdir -p "$src/$dir"
	cd "$src/$dir"
	[ -f Makefile ] || "$src/configure" --enable-werror "$@" >configure.out
	make -j"$jobs" >make.out 2>&1 || { cat make.out; exit 1; }
	make -j"$jobs" check || { cat tests/*/*.log tests/*.log 2>/dev/null | tail -200; exit 1; }
	cd "$src"
}
echo "== build with -Werror, make check"
run build-test
echo "== AddressSanitizer + UndefinedBehaviorSanitizer, make check"
run build-asan CFLAGS="-O1 -g -fno-omit-frame-pointer -fsanitize=address,undefined -fno-sanitize-recover=all" \
	LDFLAGS="-fsanitize=address,undefined"
echo "all test runs passed"
