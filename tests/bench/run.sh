#!/bin/sh
# SPDX-License-Identifier: MIT
# make bench: speed and memory of `syrinx check --format json` over generated feeds of
# 10k, 100k and 1M invented specimens, streamed through a pipe (the generator is far
# faster than the screening). Reports specimens per second (wall clock) and peak
# resident memory (GNU time). Not part of make check: figures go to docs/performance.md.
set -eu
build=${SX_BUILDDIR:-.}
sizes=${BENCH_SIZES:-"10000 100000 1000000"}
gen="$build/tests/bench/genfeed"
syrinx="$build/syrinx"
command -v /usr/bin/time >/dev/null || { echo "bench: GNU time (Debian package time) is needed"; exit 1; }
printf '%-10s %12s %14s %14s\n' specimens seconds specimens/s peak_rss_MiB
for n in $sizes; do
	tmp=$(mktemp)
	start=$(date +%s.%N)
	"$gen" "$n" | /usr/bin/time -f '%M' -o "$tmp" "$syrinx" check --format json >/dev/null || true
	end=$(date +%s.%N)
	rss=$(tail -n 1 "$tmp")
	rm -f "$tmp"
	awk -v n="$n" -v s="$start" -v e="$end" -v r="$rss" \
		'BEGIN { t = e - s; printf "%-10d %12.2f %14.0f %14.1f\n", n, t, n / t, r / 1024 }'
done
