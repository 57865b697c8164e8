#!/bin/sh
# SPDX-License-Identifier: MIT
# Every example of docs/rules.md runs, through `syrinx rules`:
#   ```rules          must load with no error and no warning;
#   ```rules-site     the same, as a site ruleset on the shipped rulesets/default;
#   ```rules-error    must fail and print exactly the ```text block that follows it;
#   ```rules-warning  must load and print exactly the ```text block that follows it.
# Each example becomes my-rules/policy.rules (a site: my-site/site.rules), run from
# its folder's parent so file names read as in the docs; a version line is added in
# a file of its own (00-version.rules) when the example has none, so line numbers
# are the example's own.
set -u
src=${SX_SRCDIR:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${SX_BUILDDIR:-$src}
SYRINX="$build/syrinx"
doc="$src/docs/rules.md"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

mkdir "$tmp/ex"
awk -v dir="$tmp/ex" '
/^```/ {
	if (inblock) { inblock = 0; if (out != "") close(out); out = ""; next }
	lang = substr($0, 4)
	if (lang ~ /^rules(-error|-warning|-site)?$/) {
		n++
		out = sprintf("%s/%03d.%s", dir, n, lang)
		printf "%d\n", NR + 1 > sprintf("%s/%03d.line", dir, n)
		close(sprintf("%s/%03d.line", dir, n))
		inblock = 1
		want = (lang == "rules-error" || lang == "rules-warning")
		next
	}
	if (lang == "text" && want) {
		out = sprintf("%s/%03d.expected", dir, n)
		inblock = 1
		want = 0
		next
	}
	want = 0
	inblock = 1
	out = ""
	next
}
inblock && out != "" { print > out }
' "$doc"

pass=0 fail=0
for f in "$tmp"/ex/*.rules*; do
	base=${f%.*}
	kind=${f##*.}
	n=$(basename "$base")
	line=$(cat "$base.line")
	run="$tmp/run/$n"
	if [ "$kind" = rules-site ]; then
		folder=my-site
		mkdir -p "$run/$folder"
		cp -R "$src/rulesets/default" "$run/default"
		cp "$f" "$run/$folder/site.rules"
	else
		folder=my-rules
		mkdir -p "$run/$folder"
		cp "$f" "$run/$folder/policy.rules"
		grep -q '^version ' "$f" || echo 'version "example"' >"$run/$folder/00-version.rules"
	fi
	(cd "$run" && LC_ALL=C "$SYRINX" rules "$folder" >"$run/out" 2>&1)
	status=$?
	ok=1
	case $kind in
	rules | rules-site)
		if [ $status -ne 0 ] || grep -q 'warning:' "$run/out"; then ok=0; fi
		;;
	rules-error | rules-warning)
		if [ ! -f "$base.expected" ]; then
			echo "FAIL: example at docs/rules.md:$line has no \`\`\`text block after it"
			ok=0
		elif ! cmp -s "$base.expected" "$run/out"; then
			ok=0
		fi
		if [ $kind = rules-error ] && [ $status -ne 1 ]; then ok=0; fi
		if [ $kind = rules-warning ] && [ $status -ne 0 ]; then ok=0; fi
		;;
	esac
	if [ $ok = 1 ]; then
		pass=$((pass + 1))
		echo "ok: docs/rules.md:$line ($kind)"
	else
		fail=$((fail + 1))
		echo "FAIL: docs/rules.md:$line ($kind), exit status $status:"
		if [ -f "$base.expected" ]; then
			diff -u "$base.expected" "$run/out" | head -40
		else
			head -40 "$run/out"
		fi
	fi
done
echo "docs examples: $pass passed, $fail failed"
[ $fail = 0 ] && [ $pass -gt 0 ]
