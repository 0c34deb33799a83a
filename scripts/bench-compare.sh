#!/bin/sh
# bench-compare.sh: whole-process wall time of two morsel builds, command
# by command, run in turns on the same corpus.
#
#   scripts/bench-compare.sh BASE NEW CORPUS          (RUNS=7 by default)
#   CMDS="survey fragments" RUNS=9 scripts/bench-compare.sh /tmp/a /tmp/b /tmp/corpus
#
# For every command the two builds take turns, RUNS times each, after one
# round that warms the page cache, and which goes first alternates (the
# second run of a pair is often a few percent slower). Each turn gives one
# ratio, NEW over BASE; the figure to quote is the median ratio, with the
# median times beside it. fit, ration and quote use the demo's targets
# file and its harbor-small target.
set -eu
cd "$(dirname "$0")/.."
[ $# -eq 3 ] || { echo "usage: $0 BASE NEW CORPUS" >&2; exit 2; }
base=$1 new=$2 corpus=$3
RUNS=${RUNS:-7}
CMDS=${CMDS:-survey fit ration quote fragments}
t=$(mktemp -d)
trap 'rm -rf "$t"' EXIT

secs() {
	t0=$(date +%s.%N)
	"$@" >/dev/null 2>&1 || true
	t1=$(date +%s.%N)
	echo "$t0 $t1" | awk '{ printf "%.4f\n", $2 - $1 }'
}

echo "machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg); corpus $(find "$corpus" -type f -printf '%s\n' | awk '{ s += $1 } END { printf "%.1f MB", s / 1e6 }')"
for c in $CMDS; do
	set -- "$c" --quiet --format json
	case $c in
	fit | ration) set -- "$@" --targets testdata/demo/settings/morsel.toml --target harbor-small ;;
	quote) set -- "$@" --targets testdata/demo/settings/morsel.toml ;;
	esac
	"$base" "$@" "$corpus" >/dev/null 2>&1 || true
	"$new" "$@" "$corpus" >/dev/null 2>&1 || true
	i=0
	while [ "$i" -lt "$RUNS" ]; do
		if [ $((i % 2)) -eq 0 ]; then
			a=$(secs "$base" "$@" "$corpus")
			b=$(secs "$new" "$@" "$corpus")
		else
			b=$(secs "$new" "$@" "$corpus")
			a=$(secs "$base" "$@" "$corpus")
		fi
		echo "$a $b"
		i=$((i + 1))
	done >"$t/times"
	awk -v cmd="$c" '
		function median(x, n,   i, j, v) {
			for (i = 2; i <= n; i++) { v = x[i]; for (j = i - 1; j >= 1 && x[j] > v; j--) x[j+1] = x[j]; x[j+1] = v }
			return (n % 2) ? x[(n + 1) / 2] : (x[n / 2] + x[n / 2 + 1]) / 2
		}
		{ a[NR] = $1; b[NR] = $2; r[NR] = $2 / $1 }
		END {
			ma = median(a, NR); mb = median(b, NR); mr = median(r, NR)
			printf "%-10s %d paired runs: base median %.2f s, new median %.2f s, new/base median %.3f (lowest %.3f, highest %.3f)\n", cmd, NR, ma, mb, mr, r[1], r[NR]
		}' "$t/times"
done
