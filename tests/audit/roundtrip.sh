#!/bin/sh
# SPDX-License-Identifier: MIT
# The decision log and the audit agree end to end:
#  - the demo month written into a log (tests/audit/makelog, as HL7-like
#    messages with their ACKs) and audited from the log gives the same rows,
#    the same filtered rows and the same report as auditing the feed file;
#  - logging the same messages again adds nothing (the resend table);
#  - the log is readable by the sqlite3 shell (Debian package sqlite3; it is
#    installed here when missing and we are root, else that check is left out);
#  - a file that is not a log is refused with a clear message.
# Row comparisons use Python's csv module (a general-purpose library).
set -u
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
syrinx="$build/syrinx"
month=fixtures/demo/month.xml
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cd "$src" || exit 1
fail=0
ok() { echo "ok: $*"; }
bad() { echo "FAIL: $*"; fail=1; }

# the CSV files, less the columns only a log fills, sorted: the same rows?
same_rows() {
	/usr/bin/python3 - "$1" "$2" <<'PY'
import csv, sys
drop = {"id", "sender", "control_id", "input_received_at"}
def rows(path):
    with open(path, newline="") as f:
        r = csv.DictReader(f)
        return sorted(tuple((k, v) for k, v in row.items() if k not in drop) for row in r)
a, b = rows(sys.argv[1]), rows(sys.argv[2])
if a != b:
    print("rows differ: %d against %d" % (len(a), len(b)))
    for x, y in zip(a, b):
        if x != y:
            print(" ", dict(x)); print(" ", dict(y)); break
    sys.exit(1)
print("%d rows" % len(a))
PY
}

"$build/tests/audit/makelog" --messages --batch 50 "$tmp/log.sqlite" "$month" 2>"$tmp/makelog.err" ||
	{ cat "$tmp/makelog.err"; bad "makelog could not write the log"; }

for filter in "" "--location ED --from 2026-03-16 --to 2026-03-23" \
	"--disposition reject --transport pneumatic-tube" "--reason delay-too-long" \
	"--collector RN-402 --to 2026-03-10T12:00+01:00"; do
	# shellcheck disable=SC2086 # the filter is several words on purpose
	"$syrinx" audit --db "$tmp/log.sqlite" $filter --csv "$tmp/db.csv" --html "$tmp/db.html" ||
		bad "audit of the log failed ($filter)"
	# shellcheck disable=SC2086
	"$syrinx" audit "$month" $filter --csv "$tmp/file.csv" --html "$tmp/file.html" ||
		bad "audit of the file failed ($filter)"
	if out=$(same_rows "$tmp/db.csv" "$tmp/file.csv"); then
		ok "log and file give the same rows [${filter:-no filter}]: $out"
	else
		echo "$out"
		bad "log and file give different rows [${filter:-no filter}]"
	fi
	# the pages differ only in where the rows were read from
	sed 's|<dt>Read from</dt><dd>[^<]*</dd>||' "$tmp/db.html" >"$tmp/a"
	sed 's|<dt>Read from</dt><dd>[^<]*</dd>||' "$tmp/file.html" >"$tmp/b"
	if cmp -s "$tmp/a" "$tmp/b"; then
		ok "log and file give the same report [${filter:-no filter}]"
	else
		bad "the reports of log and file differ [${filter:-no filter}]"
	fi
done

rows=$(($(wc -l <"$tmp/file.csv") - 1))
"$syrinx" audit --db "$tmp/log.sqlite" --csv "$tmp/before.csv" || bad "audit of the log failed"
"$build/tests/audit/makelog" --messages "$tmp/log.sqlite" "$month" 2>/dev/null ||
	bad "makelog failed on the resend"
"$syrinx" audit --db "$tmp/log.sqlite" --csv "$tmp/after.csv" || bad "audit of the log failed"
if cmp -s "$tmp/before.csv" "$tmp/after.csv"; then
	ok "sending every message again logged nothing twice"
else
	bad "a resend was logged twice"
fi

if ! command -v sqlite3 >/dev/null 2>&1 && [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null; then
	DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends sqlite3 \
		>/dev/null 2>&1
fi
if command -v sqlite3 >/dev/null 2>&1; then
	got=$(sqlite3 -readonly "$tmp/log.sqlite" "PRAGMA integrity_check;
		SELECT count(*) FROM verdict; SELECT count(*) FROM ack;
		SELECT count(*) FROM verdict WHERE control_id IS NULL OR sender IS NULL;" | tr '\n' ' ')
	all=$(($(wc -l <"$tmp/before.csv") - 1))
	if [ "$got" = "ok $all $all 0 " ]; then
		ok "the sqlite3 shell reads the log: $all verdicts, $all ACKs"
	else
		bad "the sqlite3 shell reads: $got (expected ok $all $all 0)"
	fi
else
	echo "note: the sqlite3 shell is missing (Debian package sqlite3); that check is left out"
fi

"$syrinx" audit --db "$month" --csv "$tmp/x.csv" 2>"$tmp/err"
status=$?
if [ $status = 4 ] && grep -q 'not an SQLite database' "$tmp/err"; then
	ok "a feed file given as the log is refused: $(cat "$tmp/err")"
else
	cat "$tmp/err"
	bad "a feed file given as the log: status $status"
fi
[ "$rows" -gt 0 ] || bad "no rows at all"
exit $fail
