#!/usr/bin/env bash
# Whole-process speed and memory of `morsel survey`, measured against
# `wc -w` on the same files (a fair floor: it reads every byte once).
#
#   scripts/bench-survey.sh            # 100+ MB corpus, 5 runs each, medians
#   RUNS=3 scripts/bench-survey.sh     # fewer runs
#   BIG=1 scripts/bench-survey.sh      # also peak memory on a ~1 GB corpus
#   CORPUS=prose scripts/bench-survey.sh
#
# Two corpora of real text already on the machine, gathered once under
# $BENCH_DIR (default /tmp/morsel-bench):
#   code   (default, $BENCH_DIR/corpus): the Go toolchain's own sources (*.go)
#          and the plain-text copyright notices of the installed Debian packages;
#   prose  ($BENCH_DIR/prose): the manual pages of the installed Debian packages,
#          decompressed (roff sources: prose with markup, mostly English, some
#          in other languages).
# The 1 GB corpus is ten hard-linked copies of the chosen one.
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
runs=${RUNS:-5}
mkdir -p "$dir"
corpus=$dir/corpus
if [ "${CORPUS:-code}" = prose ]; then
  corpus=$dir/prose
  if [ ! -f "$dir/prose.done" ]; then
    rm -rf "$corpus"; mkdir -p "$corpus"
    find /usr/share/man -name '*.gz' -type f |
      while read -r f; do
        out="$corpus/$(echo "${f#/usr/share/man/}" | tr / _)"
        zcat "$f" > "${out%.gz}" 2>/dev/null || rm -f "${out%.gz}"
      done
    touch "$dir/prose.done"
  fi
elif [ ! -f "$dir/corpus.done" ]; then
  rm -rf "$corpus"; mkdir -p "$corpus/go" "$corpus/doc"
  (cd "$(go env GOROOT)" && find src -name '*.go' -type f -size -4M -print0 | tar --null -T - -cf - | tar -xf - -C "$corpus/go")
  (cd /usr/share/doc && find . -name copyright -type f -print0 | tar --null -T - -cf - | tar -xf - -C "$corpus/doc")
  touch "$dir/corpus.done"
fi
go build -o "$dir/morsel" ./cmd/morsel
bytes=$(find "$corpus" -type f -printf '%s\n' | awk '{ s += $1 } END { print s + 0 }') # every path, as morsel reads it (du counts hard links once)
files=$(find "$corpus" -type f | wc -l)
echo "corpus: $files files, $((bytes / 1000000)) MB ($corpus)"
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"

# wall time of one run of a command, in seconds; output to /dev/null
wall() {
  local t0 t1
  t0=$(date +%s.%N)
  "$@" >/dev/null 2>&1 || true
  t1=$(date +%s.%N)
  echo "$t1 - $t0" | bc
}
median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

# The two commands take turns, so that a change in the machine's load
# between runs touches both alike; the first round warms the page cache.
wc_cmd=(sh -c "find '$corpus' -type f -print0 | xargs -0 cat | wc -w")
mo_cmd=("$dir/morsel" survey --quiet --format json "$corpus")
"${wc_cmd[@]}" >/dev/null; "${mo_cmd[@]}" >/dev/null
wc_ts=() mo_ts=() ratios=()
for _ in $(seq "$runs"); do
  w=$(wall "${wc_cmd[@]}"); m=$(wall "${mo_cmd[@]}")
  wc_ts+=("$w"); mo_ts+=("$m"); ratios+=("$(echo "$m / $w" | bc -l)")
done
wc_t=$(printf '%s\n' "${wc_ts[@]}" | median)
mo_t=$(printf '%s\n' "${mo_ts[@]}" | median)
ratio=$(printf '%s\n' "${ratios[@]}" | median)
printf 'wc -w          median %6.2f s  (%5.0f MB/s)\n' "$wc_t" "$(echo "$bytes / $wc_t / 1000000" | bc -l)"
printf 'morsel survey  median %6.2f s  (%5.0f MB/s)\n' "$mo_t" "$(echo "$bytes / $mo_t / 1000000" | bc -l)"
printf 'ratio morsel / wc -w, median of %d paired runs: %.2f\n' "$runs" "$ratio"
/usr/bin/time -f 'morsel survey peak memory: %M KB' "$dir/morsel" survey --quiet --format json "$corpus" >/dev/null

if [ "${BIG:-0}" = 1 ]; then
  big=$corpus-big
  if [ ! -d "$big" ]; then
    mkdir -p "$big"
    for i in $(seq 10); do cp -al "$corpus" "$big/copy$i"; done
  fi
  bigbytes=$((bytes * 10))
  echo "big corpus: $((bigbytes / 1000000)) MB (ten hard-linked copies)"
  /usr/bin/time -f 'morsel survey on the big corpus: %e s wall, peak memory %M KB' \
    "$dir/morsel" survey --quiet --format json "$big" >/dev/null
fi
