#!/usr/bin/env bash
# Whole-process speed and memory of `morsel survey`, measured against
# `wc -w` on the same files (a fair floor: it reads every byte once).
#
#   scripts/bench-survey.sh            # 100+ MB corpus, 5 runs each, medians
#   RUNS=3 scripts/bench-survey.sh     # fewer runs
#   BIG=1 scripts/bench-survey.sh      # also peak memory on a ~1 GB corpus
#
# The corpus is real text already on the machine: the Go toolchain's own
# sources (*.go) and the plain-text copyright notices of the installed
# Debian packages. It is gathered once under $BENCH_DIR (default
# /tmp/morsel-bench); the 1 GB corpus is ten hard-linked copies of it.
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
runs=${RUNS:-5}
mkdir -p "$dir"
corpus=$dir/corpus
if [ ! -f "$dir/corpus.done" ]; then
  rm -rf "$corpus"; mkdir -p "$corpus/go" "$corpus/doc"
  (cd "$(go env GOROOT)" && find src -name '*.go' -type f -size -4M -print0 | tar --null -T - -cf - | tar -xf - -C "$corpus/go")
  (cd /usr/share/doc && find . -name copyright -type f -print0 | tar --null -T - -cf - | tar -xf - -C "$corpus/doc")
  touch "$dir/corpus.done"
fi
go build -o "$dir/morsel" ./cmd/morsel
bytes=$(find "$corpus" -type f -print0 | du -cb --files0-from=- | tail -1 | cut -f1)
files=$(find "$corpus" -type f | wc -l)
echo "corpus: $files files, $((bytes / 1000000)) MB ($corpus)"
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"

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

wc_t=$(median sh -c "find '$corpus' -type f -print0 | xargs -0 cat | wc -w")
mo_t=$(median "$dir/morsel" survey --quiet --format json "$corpus")
printf 'wc -w          median %6.2f s  (%5.0f MB/s)\n' "$wc_t" "$(echo "$bytes / $wc_t / 1000000" | bc -l)"
printf 'morsel survey  median %6.2f s  (%5.0f MB/s)\n' "$mo_t" "$(echo "$bytes / $mo_t / 1000000" | bc -l)"
printf 'ratio morsel / wc -w: %.2f\n' "$(echo "$mo_t / $wc_t" | bc -l)"
/usr/bin/time -f 'morsel survey peak memory: %M KB' "$dir/morsel" survey --quiet --format json "$corpus" >/dev/null

if [ "${BIG:-0}" = 1 ]; then
  big=$dir/big
  if [ ! -d "$big" ]; then
    mkdir -p "$big"
    for i in $(seq 10); do cp -al "$corpus" "$big/copy$i"; done
  fi
  bigbytes=$((bytes * 10))
  echo "big corpus: $((bigbytes / 1000000)) MB (ten hard-linked copies)"
  /usr/bin/time -f 'morsel survey on the big corpus: %e s wall, peak memory %M KB' \
    "$dir/morsel" survey --quiet --format json "$big" >/dev/null
fi
