#!/usr/bin/env bash
# Tokenizer bundles, whole process: survey speed under three bundles against
# `wc -w` on the same files, and the load of a large bundle.
#
#   scripts/bench-bundle.sh           # RUNS=3 rounds, medians
#
# Survey: the corpus of scripts/bench-survey.sh ($BENCH_DIR/corpus, made by
# that script), under the embedded GPT-2 pair for comparison, under qwen3 (testdata/vocab/qwen3), under qwen3 with the
# digit-groups split pattern, and under metaspace-32k; each round runs
# wc -w and the four in turns.
# Load: a 250k-token bundle grown from qwen3 by scripts/bigbundle (never
# committed), `morsel pieces --vocab BUNDLE hello` with the parsed-form cache
# off (a first load), then warm (from the cache), wall time and peak memory.
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
runs=${RUNS:-3}
corpus=$dir/corpus
[ -f "$dir/corpus.done" ] || { echo "make the corpus first: scripts/bench-survey.sh"; exit 1; }
go build -o "$dir/morsel" ./cmd/morsel
mkdir -p "$dir/bundles/qwen3"
zcat testdata/vocab/qwen3/tokenizer.json.gz > "$dir/bundles/qwen3/tokenizer.json"
cp testdata/vocab/qwen3/tokenizer_config.json "$dir/bundles/qwen3/"
mkdir -p "$dir/bundles/metaspace-32k"
zcat testdata/vocab/metaspace-32k/tokenizer.json.gz > "$dir/bundles/metaspace-32k/tokenizer.json"
go run ./scripts/bigbundle -digit-groups -tokens 0 -merges 0 -o "$dir/bundles/digit-groups/tokenizer.json" >/dev/null
go run ./scripts/bigbundle -o "$dir/bundles/big/tokenizer.json"
export MORSEL_CACHE_DIR=$dir/cache
bytes=$(find "$corpus" -type f -printf '%s\n' | awk '{ s += $1 } END { print s + 0 }')
echo "corpus: $((bytes / 1000000)) MB ($corpus); machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"
wall() {
  local t0 t1
  t0=$(date +%s.%N)
  "$@" >/dev/null 2>&1 || true
  t1=$(date +%s.%N)
  echo "$t1 - $t0" | bc
}
median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }
names=(wc gpt2 qwen3 digit-groups metaspace-32k)
declare -A times
for ((r = 0; r <= runs; r++)); do
  for n in "${names[@]}"; do
    if [ "$n" = wc ]; then
      t=$(wall sh -c "find '$corpus' -type f -print0 | xargs -0 cat | wc -w")
    elif [ "$n" = gpt2 ]; then
      t=$(wall "$dir/morsel" survey --quiet --format json "$corpus")
    else
      t=$(wall "$dir/morsel" survey --quiet --format json --vocab "$dir/bundles/$n" "$corpus")
    fi
    [ "$r" -gt 0 ] && times[$n]+="$t "
  done
done
w=$(echo "${times[wc]}" | tr ' ' '\n' | grep . | median)
printf '%-16s %8s s\n' "wc -w" "$w"
for n in gpt2 qwen3 digit-groups metaspace-32k; do
  m=$(echo "${times[$n]}" | tr ' ' '\n' | grep . | median)
  printf '%-16s %8s s  %5.2fx wc -w\n' "survey $n" "$m" "$(echo "$m / $w" | bc -l)"
done
big=$dir/bundles/big
size=$(stat -c %s "$big/tokenizer.json")
echo "large bundle: $((size / 1000000)) MB"
for mode in cold warm; do
  for ((r = 0; r < runs; r++)); do
    [ "$mode" = cold ] && rm -rf "$MORSEL_CACHE_DIR"
    /usr/bin/time -f "%e %M" -o "$dir/time.out" "$dir/morsel" pieces --vocab "$big" hello >/dev/null
    read -r secs kb < "$dir/time.out"
    echo "$secs $kb"
  done | sort -n | awk -v m="$mode" -v size="$size" '{t[NR]=$1; k[NR]=$2} END {i=int((NR+1)/2); printf "pieces hello, %s: %s s, peak %d MB (%.1fx the file)\n", m, t[i], k[i]/1024, k[i]*1024/size}'
done
