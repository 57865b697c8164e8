#!/bin/sh
# SPDX-License-Identifier: MIT
# The HL7 demo feed holds the same specimens as the XML one:
#  1. fixtures/demo/morning.hl7 is what tests/hl7/xml2hl7.py makes of
#     fixtures/demo/morning.xml today (the fixture is not stale);
#  2. `syrinx check --format json` gives every specimen the same disposition
#     and the same pO2 bias from either file.
# Skipped (exit 77) without python3.
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
py=$(command -v python3 || true)
if [ -z "$py" ]; then
	echo "SKIP: python3 is missing"
	exit 77
fi
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT INT TERM
fail=0
"$py" "$src/tests/hl7/xml2hl7.py" "$src/fixtures/demo/morning.xml" >"$tmp/morning.hl7" || exit 1
if ! cmp -s "$tmp/morning.hl7" "$src/fixtures/demo/morning.hl7"; then
	echo "FAIL: fixtures/demo/morning.hl7 is stale; run:"
	echo "  python3 tests/hl7/xml2hl7.py fixtures/demo/morning.xml > fixtures/demo/morning.hl7"
	fail=1
fi
export SYRINX_DATADIR="${SYRINX_DATADIR:-$src}"
"$build/syrinx" check --format json "$src/fixtures/demo/morning.xml" >"$tmp/xml.jsonl"
"$build/syrinx" check --format json "$src/fixtures/demo/morning.hl7" >"$tmp/hl7.jsonl"
"$py" - "$tmp/xml.jsonl" "$tmp/hl7.jsonl" <<'PY' || fail=1
import json, sys
def load(path):
    return {o["specimen_id"]: o for o in map(json.loads, open(path))}
xml, hl7 = load(sys.argv[1]), load(sys.argv[2])
bad = 0
for sid, x in sorted(xml.items()):
    h = hl7.get(sid)
    if h is None or (x["disposition"], x["po2_bias_mmhg"]) != (h["disposition"], h["po2_bias_mmhg"]):
        bad += 1
        print("FAIL: %s: xml %s %s, hl7 %s" % (sid, x["disposition"], x["po2_bias_mmhg"],
              None if h is None else (h["disposition"], h["po2_bias_mmhg"])))
if len(hl7) != len(xml):
    bad += 1
    print("FAIL: %d specimens from XML, %d from HL7" % (len(xml), len(hl7)))
print("demo: %d specimens, %d differ between morning.xml and morning.hl7" % (len(xml), bad))
sys.exit(1 if bad else 0)
PY
exit $fail
