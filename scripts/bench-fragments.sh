#!/bin/sh
# bench-fragments.sh: time `morsel fragments` against `morsel survey` on the
# same input, whole process, and print the ratio (the bound is 2).
#
#   scripts/bench-fragments.sh [PATH...]      (default: testdata/demo/docs)
#   RUNS=15 scripts/bench-fragments.sh /tmp/morsel-bench/corpus
#
# The two commands take turns, RUNS times each (default 9), after one
# round that warms the page cache, and which goes first alternates. Each
# turn gives one ratio, fragments over the survey run next to it; the
# figure to quote is the median of those ratios, since a change in the
# machine's load between turns touches both runs of a pair alike. The best
# time of each command is printed too.
set -eu
cd "$(dirname "$0")/.."
RUNS=${RUNS:-9}
[ $# -gt 0 ] || set -- testdata/demo/docs
bin=$(mktemp -d)
trap 'rm -rf "$bin"' EXIT
go build -o "$bin/morsel" ./cmd/morsel

# secs CMD...: runs CMD once, output to /dev/null, and prints its wall time.
secs() {
	t0=$(date +%s.%N)
	"$@" >/dev/null 2>&1 || true
	t1=$(date +%s.%N)
	echo "$t0 $t1" | awk '{ printf "%.4f\n", $2 - $1 }'
}

"$bin/morsel" survey --quiet --format json "$@" >/dev/null 2>&1 || true
"$bin/morsel" fragments --quiet --format json "$@" >/dev/null 2>&1 || true
i=0
while [ "$i" -lt "$RUNS" ]; do
	# The order alternates: on this machine the second run of a pair is
	# often a few percent slower, whichever command it is.
	if [ $((i % 2)) -eq 0 ]; then
		s=$(secs "$bin/morsel" survey --quiet --format json "$@")
		f=$(secs "$bin/morsel" fragments --quiet --format json "$@")
	else
		f=$(secs "$bin/morsel" fragments --quiet --format json "$@")
		s=$(secs "$bin/morsel" survey --quiet --format json "$@")
	fi
	echo "$s $f"
	i=$((i + 1))
done >"$bin/times"
bytes=$(find "$@" -type f -printf '%s\n' 2>/dev/null | awk '{ s += $1 } END { print s + 0 }') # every path, as morsel reads it (du counts hard links once)
awk -v bytes="$bytes" '
	{ s[NR] = $1; f[NR] = $2; r[NR] = $2 / $1
	  if (NR == 1 || $1 < bs) bs = $1
	  if (NR == 1 || $2 < bf) bf = $2 }
	END {
		# insertion sort of the ratios, for the median
		for (i = 2; i <= NR; i++) { x = r[i]; for (j = i - 1; j >= 1 && r[j] > x; j--) r[j+1] = r[j]; r[j+1] = x }
		m = (NR % 2) ? r[(NR + 1) / 2] : (r[NR / 2] + r[NR / 2 + 1]) / 2
		printf "input %.1f MB, %d paired runs: fragments/survey median %.2f (lowest %.2f, highest %.2f); best survey %.3f s, best fragments %.3f s\n", bytes / 1e6, NR, m, r[1], r[NR], bs, bf
	}' "$bin/times"
