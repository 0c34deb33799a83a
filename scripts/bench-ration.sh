#!/usr/bin/env bash
# Whole-process time of `morsel ration` against `morsel survey` on the same
# input; the two should differ by at most 1.5x.
#
#   scripts/bench-ration.sh                 # the corpus of bench-survey.sh (100+ MB)
#   scripts/bench-ration.sh testdata/demo/docs   # any folder or files, e.g. a quick check
#   RUNS=3 BUDGET=512 scripts/bench-ration.sh
#
# With no argument it uses the corpus scripts/bench-survey.sh gathers under
# $BENCH_DIR (default /tmp/morsel-bench), gathering it first if needed.
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
runs=${RUNS:-5}
budget=${BUDGET:-1024}
mkdir -p "$dir"
if [ "$#" -eq 0 ]; then
  corpus=$dir/corpus
  if [ ! -f "$dir/corpus.done" ]; then
    echo "gathering the corpus with scripts/bench-survey.sh first" >&2
    RUNS=1 scripts/bench-survey.sh >/dev/null
  fi
  set -- "$corpus"
fi
go build -o "$dir/morsel" ./cmd/morsel
bytes=$(find "$@" -type f -printf '%s\n' | awk '{ s += $1 } END { print s + 0 }') # every path, as morsel reads it (du counts hard links once)
echo "input: $((bytes / 1000)) kB in $(find "$@" -type f | wc -l) files; budget $budget tokens"
echo "machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg)"

# median of N wall times, in seconds, of a command; output to /dev/null
median() {
  local times=()
  "$@" >/dev/null 2>&1 || true # warm the page cache
  for _ in $(seq "$runs"); do
    local t0 t1
    t0=$(date +%s.%N)
    "$@" >/dev/null 2>&1 || true
    t1=$(date +%s.%N)
    times+=("$(echo "$t1 - $t0" | bc)")
  done
  printf '%s\n' "${times[@]}" | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'
}

sv=$(median "$dir/morsel" survey --quiet --format json "$@")
ra=$(median "$dir/morsel" ration --quiet --format json --budget "$budget" "$@")
printf 'morsel survey  median %7.3f s\n' "$sv"
printf 'morsel ration  median %7.3f s\n' "$ra"
printf 'ratio ration / survey: %.2f (the aim: at most 1.50)\n' "$(echo "$ra / $sv" | bc -l)"
