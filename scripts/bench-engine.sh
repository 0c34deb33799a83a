#!/usr/bin/env bash
# Engine figures for the README: count/encode speed on prose, code and CJK,
# pathological inputs at 1 MB and 10 MB, embedded vocabulary load, and the
# whole-process time of `morsel pieces hello` (median of 21 runs).
#
#   scripts/bench-engine.sh            # COUNT=5 benchmark repetitions by default
set -euo pipefail
cd "$(dirname "$0")/.."
count=${COUNT:-5}
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), $(go version | cut -d' ' -f3)"
go test ./bpe/ -run XXX -bench . -benchmem -count "$count" -cpu 1 > /tmp/morsel-bench-engine.txt
for name in $(grep -E '^Benchmark' /tmp/morsel-bench-engine.txt | awk '{print $1}' | sort -u); do
  ns=$(grep -E "^$name " /tmp/morsel-bench-engine.txt | awk '{print $3}' | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
  mbs=$(grep -E "^$name " /tmp/morsel-bench-engine.txt | awk '$6 == "MB/s" {print $5}' | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}')
  printf '%-28s median %14s ns/op  %8s MB/s\n' "$name" "$ns" "${mbs:--}"
done
bin=$(mktemp -d)/morsel
go build -o "$bin" ./cmd/morsel
times=()
for _ in $(seq 21); do
  t0=$(date +%s%N); "$bin" pieces hello >/dev/null; t1=$(date +%s%N)
  times+=($(( (t1 - t0) / 1000 )))
done
med=$(printf '%s\n' "${times[@]}" | sort -n | sed -n 11p)
echo "morsel pieces hello, whole process: median $((med / 1000)).$(( (med % 1000) / 100 )) ms over 21 runs"
