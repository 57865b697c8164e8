#!/bin/sh
# SPDX-License-Identifier: MIT
# Style by machine: functions that invite overflows or hide errors are banned
# from the sources (common practice in C codebases that take input from outside).
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
hits=$(grep -nE '\b(strcpy|strcat|sprintf|vsprintf|strtok|atoi|atol|gets)[[:space:]]*\(' \
	"$src"/src/*/*.c "$src"/src/*/*.h 2>/dev/null)
if [ -n "$hits" ]; then
	echo "banned functions used (use snprintf, strtol with checks, sx_strbuf):"
	echo "$hits"
	echo "banned: 0 passed, 1 failed"
	exit 1
fi
echo "banned: 1 passed, 0 failed"
