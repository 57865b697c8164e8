#!/bin/sh
# SPDX-License-Identifier: MIT
#
# validate.sh - checks docs/schema/feed.xsd and the XML fixtures against each
# other with xmllint.
#
# xmllint (libxml2's XML Schema 1.0 validator, Debian package libxml2-utils)
# is the independent reference here: it is a general-purpose library, not
# syrinx's own reader, so it tells us whether the schema says what we mean
# and whether the fixtures are what their comments say they are.
#
# Checks:
#   - every fixtures/demo/*.xml is valid against the schema;
#   - every fixtures/bad/*.xml has the outcome listed in the table below:
#       not-wf   not well-formed XML at all,
#       invalid  well-formed but rejected by the schema, with a given word
#                in xmllint's message (so it fails for the intended reason),
#       valid    accepted by the schema: the defect is one only syrinx's
#                reader can see (unit names, calendar dates, delays);
#     a bad fixture missing from the table is itself a failure, and so is
#     one without its "WHAT IS WRONG" comment.
# Prints one line per failure and a summary "N passed, N failed".
# Exit status: 0 all passed, 1 a check failed, 77 xmllint missing (skip).

# The source tree: SX_SRCDIR from "make check", else found from this script.
if [ -n "${SX_SRCDIR:-}" ]; then
	top=$SX_SRCDIR
else
	top=$(cd "$(dirname "$0")/../.." && pwd) || exit 1
fi
xsd="$top/docs/schema/feed.xsd"

if ! command -v xmllint >/dev/null 2>&1; then
	echo "SKIP: xmllint not found; install the Debian package libxml2-utils to run the schema checks"
	exit 77
fi

passed=0
failed=0

pass() {
	passed=$((passed + 1))
}

fail() {
	failed=$((failed + 1))
	echo "FAIL: $*"
}

# Expected outcome of each bad fixture: file, outcome, word in the message.
expect_table='
truncated.xml        not-wf   Premature
bad-enum.xml         invalid  transport
unknown-field.xml    invalid  po2x
duplicate-field.xml  invalid  one_po2
missing-id.xml       invalid  one_specimen_id
bad-number.xml       invalid  po2
negative-count.xml   invalid  wbc
unknown-unit.xml     valid    -
impossible-date.xml  valid    -
long-delay.xml       valid    -
'

# The demo feeds must be valid.
found=0
for f in "$top"/fixtures/demo/*.xml; do
	[ -e "$f" ] || continue
	found=1
	if out=$(xmllint --noout --schema "$xsd" "$f" 2>&1); then
		pass
	else
		fail "${f#"$top"/} should be valid against feed.xsd:"
		printf '%s\n' "$out" | sed 's/^/    /'
	fi
done
if [ "$found" -eq 0 ]; then
	fail "no fixtures/demo/*.xml found"
fi

# The bad fixtures must fail in the way the table says.
for f in "$top"/fixtures/bad/*.xml; do
	[ -e "$f" ] || continue
	name=${f##*/}
	line=$(printf '%s\n' "$expect_table" | awk -v n="$name" '$1 == n { print $2, $3 }')
	if [ -z "$line" ]; then
		fail "fixtures/bad/$name is not listed in the table of validate.sh"
		continue
	fi
	outcome=${line%% *}
	word=${line#* }

	if grep -q 'WHAT IS WRONG' "$f"; then
		pass
	else
		fail "fixtures/bad/$name has no 'WHAT IS WRONG' comment"
	fi

	case $outcome in
	not-wf)
		if out=$(xmllint --noout "$f" 2>&1); then
			fail "fixtures/bad/$name should not be well-formed XML"
		elif printf '%s\n' "$out" | grep -q "$word"; then
			pass
		else
			fail "fixtures/bad/$name is not well-formed, but not for the expected reason ($word):"
			printf '%s\n' "$out" | sed 's/^/    /'
		fi
		;;
	invalid)
		if ! out=$(xmllint --noout "$f" 2>&1); then
			fail "fixtures/bad/$name should be well-formed XML:"
			printf '%s\n' "$out" | sed 's/^/    /'
		elif out=$(xmllint --noout --schema "$xsd" "$f" 2>&1); then
			fail "fixtures/bad/$name should FAIL schema validation"
		elif printf '%s\n' "$out" | grep 'validity error' | grep -q "$word"; then
			pass
		else
			fail "fixtures/bad/$name fails schema validation, but not for the expected reason ($word):"
			printf '%s\n' "$out" | sed 's/^/    /'
		fi
		;;
	valid)
		if out=$(xmllint --noout --schema "$xsd" "$f" 2>&1); then
			pass
		else
			fail "fixtures/bad/$name should pass the schema (its defect is for the reader to find):"
			printf '%s\n' "$out" | sed 's/^/    /'
		fi
		;;
	esac
done

# Every fixture named in the table must exist.
for name in $(printf '%s\n' "$expect_table" | awk 'NF { print $1 }'); do
	if [ -e "$top/fixtures/bad/$name" ]; then
		pass
	else
		fail "fixtures/bad/$name is listed in validate.sh but missing"
	fi
done

echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
