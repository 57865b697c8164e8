#!/bin/sh
# SPDX-License-Identifier: MIT
# Differential test of the HL7 v2 parser against node-hl7-client 3.x (a
# general-purpose HL7 library on the npm registry, used here only as a test
# peer): 300 generated messages (tests/hl7/gen.js, fixed seed) are parsed by
# both, and every field, repetition, component and subcomponent must decode to
# the same text (tests/hl7/hl7dump.c against tests/hl7/node/dump.js).
# Skipped (exit 77) when node is missing or node-hl7-client cannot be installed.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
count=${SX_HL7_DIFF_COUNT:-300}
seed=${SX_HL7_DIFF_SEED:-20260314}

if ! command -v node >/dev/null 2>&1; then
	echo "SKIP: node is not installed; the differential test against node-hl7-client needs it"
	exit 77
fi
nodedir=$src/tests/hl7/node
if [ ! -f "$nodedir/node_modules/node-hl7-client/package.json" ]; then
	if ! command -v npm >/dev/null 2>&1; then
		echo "SKIP: node-hl7-client is not installed and npm is missing"
		exit 77
	fi
	echo "installing node-hl7-client 3.x into $nodedir (git ignores node_modules/)"
	if ! timeout 300 npm install --prefix "$nodedir" --no-audit --no-fund --silent \
		node-hl7-client@3 >/dev/null 2>&1; then
		echo "SKIP: could not install node-hl7-client 3.x (is the npm registry reachable?)"
		exit 77
	fi
fi
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT INT TERM
node "$src/tests/hl7/gen.js" "$count" "$seed" "$tmp" || { echo "FAIL: generator"; exit 1; }
"$build/tests/hl7/hl7dump" "$tmp/messages.hl7" >"$tmp/syrinx.jsonl" ||
	{ echo "FAIL: hl7dump"; exit 1; }
node "$nodedir/dump.js" "$tmp/messages.json" >"$tmp/node.jsonl" ||
	{ echo "FAIL: node-hl7-client could not parse the messages"; exit 1; }
lines=$(wc -l <"$tmp/syrinx.jsonl")
if [ "$lines" -ne "$count" ]; then
	echo "FAIL: syrinx read $lines messages of $count"
	exit 1
fi
if cmp -s "$tmp/syrinx.jsonl" "$tmp/node.jsonl"; then
	echo "differential: $count messages, every value the same in syrinx and node-hl7-client"
	exit 0
fi
n=$(cmp "$tmp/syrinx.jsonl" "$tmp/node.jsonl" | sed -n 's/.* line \([0-9]*\).*/\1/p')
echo "FAIL: message $n differs (seed $seed)"
echo "message:"; node -e "process.stdout.write(JSON.stringify(JSON.parse(require('fs').readFileSync('$tmp/messages.json','utf8'))[$n-1]))"; echo
echo "syrinx:"; sed -n "${n}p" "$tmp/syrinx.jsonl"
echo "node-hl7-client:"; sed -n "${n}p" "$tmp/node.jsonl"
exit 1
