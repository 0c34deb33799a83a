#!/bin/sh
# bench-fragments.sh: time `morsel fragments` against `morsel survey` on the
# same input, whole process, and print the ratio (the bound is 2).
#
#   scripts/bench-fragments.sh [PATH...]      (default: testdata/demo)
#   RUNS=5 scripts/bench-fragments.sh big/corpus/
#
# Each command runs RUNS times (default 3), in turns, and the best time of
# each counts. The machine's other load falls on both; on a shared machine
# the figures move between runs.
set -eu
cd "$(dirname "$0")/.."
RUNS=${RUNS:-3}
[ $# -gt 0 ] || set -- testdata/demo
bin=$(mktemp -d)
trap 'rm -rf "$bin"' EXIT
go build -o "$bin/morsel" ./cmd/morsel

# best SECONDS_SO_FAR CMD...: runs CMD once and prints the smaller of the two times.
now() { date +%s.%N; }
best() {
	b=$1
	shift
	t0=$(now)
	"$@" >/dev/null 2>&1 || true
	t1=$(now)
	echo "$b $t0 $t1" | awk '{ t = $3 - $2; if ($1 == "" || $1 == "-" || t < $1) print t; else print $1 }'
}

s=- f=-
i=0
while [ "$i" -lt "$RUNS" ]; do
	s=$(best "$s" "$bin/morsel" survey --quiet --format json "$@")
	f=$(best "$f" "$bin/morsel" fragments --quiet --format json "$@")
	i=$((i + 1))
done
bytes=$(du -cb "$@" 2>/dev/null | tail -1 | cut -f1)
echo "$s $f $bytes" | awk '{ printf "input %.1f MB; survey %.3f s, fragments %.3f s: fragments/survey %.2f\n", $3/1e6, $1, $2, $2/$1 }'
