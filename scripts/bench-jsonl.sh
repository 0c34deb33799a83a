#!/usr/bin/env bash
# Whole-process time and peak memory of `morsel survey` on a JSON Lines
# export of a million short records, against `wc -w` on the same file, in
# turns (the order of each pair alternates, as the machine's load moves).
# The goal: at most 2.5x wc -w's time, and a peak resident size of at most
# 150 MB + 8 bytes per record.
#
#   scripts/bench-jsonl.sh              # 1M records, 7 pairs, medians
#   N=5000000 RUNS=3 scripts/bench-jsonl.sh
#   FORMAT=csv scripts/bench-jsonl.sh   # the output format (default json)
#
# The corpus is made once by scripts/gen-jsonl.sh under $BENCH_DIR (default
# /tmp/morsel-bench).
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
n=${N:-1000000}
runs=${RUNS:-7}
format=${FORMAT:-json}
mkdir -p "$dir"
file=$dir/records-$n.jsonl
[ -f "$file" ] || scripts/gen-jsonl.sh "$file" "$n"
go build -o "$dir/morsel" ./cmd/morsel
echo "corpus: $n records, $(($(stat -c %s "$file") / 1000000)) MB ($file)"
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), load $(cut -d' ' -f1-3 /proc/loadavg)"

# timed LABEL CMD...: one run; prints "seconds peak-KB"
timed() {
  /usr/bin/time -f '%e %M' -o "$dir/time.$$" "$@" >/dev/null 2>&1 || true
  cat "$dir/time.$$"
}
median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

mo=("$dir/morsel" survey --quiet --format "$format" "$file")
wc_cmd=(wc -w "$file")
timed "${mo[@]}" >/dev/null # warm the page cache
: >"$dir/mo.$$"
: >"$dir/wc.$$"
: >"$dir/ratio.$$"
for ((i = 0; i < runs; i++)); do
  if ((i % 2)); then
    m=$(timed "${mo[@]}"); w=$(timed "${wc_cmd[@]}")
  else
    w=$(timed "${wc_cmd[@]}"); m=$(timed "${mo[@]}")
  fi
  echo "$m" >>"$dir/mo.$$"
  echo "$w" >>"$dir/wc.$$"
  echo "${m%% *} ${w%% *}" | awk '{ printf "%.3f\n", $1 / $2 }' >>"$dir/ratio.$$"
  echo "  pair $((i + 1)): survey $m KB, wc -w ${w%% *} s"
done
ms=$(cut -d' ' -f1 "$dir/mo.$$" | median)
ws=$(cut -d' ' -f1 "$dir/wc.$$" | median)
rss=$(cut -d' ' -f2 "$dir/mo.$$" | sort -n | tail -1)
ratio=$(median <"$dir/ratio.$$")
goal=$(((150000000 + 8 * n) / 1000))
echo "survey --format $format: median $ms s; wc -w: median $ws s; median of pair ratios $ratio (goal 2.5)"
echo "survey peak resident: $((rss / 1000)) MB, highest of the runs (goal $((goal / 1000)) MB)"
rm -f "$dir"/{time,mo,wc,ratio}.$$
