#!/usr/bin/env bash
# Tokenizer bundles, whole process: survey speed under four bundles against
# `wc -w` on the same files, and the load of a large bundle.
#
#   scripts/bench-bundle.sh                 # RUNS=5 rounds, medians
#   CORPUS=prose scripts/bench-bundle.sh    # the manual pages instead of code
#   CORPUS=/tmp/morsel-bench-spm/text.txt scripts/bench-bundle.sh   # any file or folder
#   ONLY="gpt2 metaspace-32k" scripts/bench-bundle.sh                # some surveys only
#   LOAD=0 scripts/bench-bundle.sh          # survey only
#
# Survey: a corpus of scripts/bench-survey.sh ($BENCH_DIR/corpus or
# $BENCH_DIR/prose, made by that script), under the embedded GPT-2 pair for
# comparison, under qwen3 (testdata/vocab/qwen3), under qwen3 with the
# digit-groups split pattern, under qwen3 with the three-Split CJK chain
# (scripts/bigbundle -cjk-sequence) and under metaspace-32k. Each round runs
# wc -w and the five in turns, forwards in odd rounds and backwards in even
# ones (the second of two runs is often a little slower on a shared
# machine); a warming round comes first. Ratios are taken within a round,
# then the median over rounds is given. CPU time (user + system) is given
# beside wall time: on a machine that others load, it moves less.
# Load: a 250k-token, 500k-merge bundle grown from qwen3 by scripts/bigbundle
# (never committed), `morsel pieces --vocab BUNDLE hello` with an empty
# parsed-form cache (a first load), then warm (from the cache): wall time
# and peak memory (/usr/bin/time -v's maximum resident set size).
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
runs=${RUNS:-5}
case ${CORPUS:-code} in
code | prose)
  corpus=$dir/corpus
  [ "${CORPUS:-code}" = prose ] && corpus=$dir/prose
  [ -f "$corpus.done" ] || { echo "make the corpus first: CORPUS=${CORPUS:-code} scripts/bench-survey.sh"; exit 1; }
  ;;
*)
  corpus=$CORPUS # one 100 MB file (scripts/bench-spm.sh makes one) is one document
  [ -e "$corpus" ] || { echo "no corpus $corpus"; exit 1; }
  ;;
esac
go build -o "$dir/morsel" ./cmd/morsel
mkdir -p "$dir/bundles/qwen3"
zcat testdata/vocab/qwen3/tokenizer.json.gz > "$dir/bundles/qwen3/tokenizer.json"
cp testdata/vocab/qwen3/tokenizer_config.json "$dir/bundles/qwen3/"
mkdir -p "$dir/bundles/metaspace-32k"
zcat testdata/vocab/metaspace-32k/tokenizer.json.gz > "$dir/bundles/metaspace-32k/tokenizer.json"
go run ./scripts/bigbundle -digit-groups -tokens 0 -merges 0 -o "$dir/bundles/digit-groups/tokenizer.json" >/dev/null
go run ./scripts/bigbundle -cjk-sequence -tokens 0 -merges 0 -o "$dir/bundles/cjk-sequence/tokenizer.json" >/dev/null
[ "${LOAD:-1}" = 1 ] && go run ./scripts/bigbundle -o "$dir/bundles/big/tokenizer.json"
export MORSEL_CACHE_DIR=$dir/cache
bytes=$(find "$corpus" -type f -printf '%s\n' | awk '{ s += $1 } END { print s + 0 }')
echo "corpus: $((bytes / 1000000)) MB ($corpus); machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'); load average $(cut -d' ' -f1-3 /proc/loadavg)"
# wall runs a command and prints its wall time and CPU time (user +
# system, its children included), in seconds.
wall() {
  /usr/bin/time -f "%e %U %S" -o "$dir/run.time" "$@" >/dev/null 2>&1 || true
  awk '{ printf "%s %.2f\n", $1, $2 + $3 }' "$dir/run.time"
}
median() { tr ' ' '\n' | grep . | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }
run() {
  case $1 in
  wc) wall sh -c "find '$corpus' -type f -print0 | xargs -0 cat | wc -w" ;;
  gpt2) wall "$dir/morsel" survey --quiet --format json "$corpus" ;;
  *) wall "$dir/morsel" survey --quiet --format json --vocab "$dir/bundles/$1" "$corpus" ;;
  esac
}
surveys=(${ONLY:-gpt2 qwen3 digit-groups cjk-sequence metaspace-32k})
names=(wc "${surveys[@]}")
declare -A times ratios gratios cpus cratios
for ((r = 0; r <= runs; r++)); do
  order=("${names[@]}")
  if ((r % 2 == 0)); then
    order=()
    for ((k = ${#names[@]} - 1; k >= 0; k--)); do order+=("${names[k]}"); done
  fi
  declare -A t=()
  declare -A c=()
  for n in "${order[@]}"; do read -r t[$n] c[$n] < <(run "$n"); done
  ((r == 0)) && continue
  for n in "${names[@]}"; do
    times[$n]+="${t[$n]} "
    ratios[$n]+="$(echo "${t[$n]} / ${t[wc]}" | bc -l) "
    [ -n "${t[gpt2]:-}" ] && gratios[$n]+="$(echo "${t[$n]} / ${t[gpt2]}" | bc -l) "
    cpus[$n]+="${c[$n]} "
    [ -n "${c[gpt2]:-}" ] && cratios[$n]+="$(echo "${c[$n]} / ${c[gpt2]}" | bc -l) "
  done
done
printf '%-22s %8s s wall, %5s s CPU\n' "wc -w" "$(echo "${times[wc]}" | median)" "$(echo "${cpus[wc]}" | median)"
for n in "${surveys[@]}"; do
  printf '%-22s %8.2f s wall  %5.2fx wc -w  %5.2fx gpt2;  %6.2f s CPU  %5.2fx gpt2  (medians of %d rounds)\n' "survey $n" \
    "$(echo "${times[$n]}" | median)" "$(echo "${ratios[$n]}" | median)" "$(echo "${gratios[$n]:-0}" | median)" \
    "$(echo "${cpus[$n]}" | median)" "$(echo "${cratios[$n]:-0}" | median)" "$runs"
done
[ "${LOAD:-1}" = 1 ] || exit 0
big=$dir/bundles/big
size=$(stat -c %s "$big/tokenizer.json")
echo "large bundle: $((size / 1000000)) MB"
for mode in cold warm; do
  for ((r = 0; r < runs; r++)); do
    [ "$mode" = cold ] && rm -rf "$MORSEL_CACHE_DIR"
    /usr/bin/time -f "%e %M" -o "$dir/time.out" "$dir/morsel" pieces --vocab "$big" hello >/dev/null
    read -r secs kb < "$dir/time.out"
    echo "$secs $kb"
  done > "$dir/load.out"
  secs=$(cut -d' ' -f1 "$dir/load.out" | median)
  kb=$(cut -d' ' -f2 "$dir/load.out" | median)
  printf 'pieces hello, %s: %s s, peak %d MB (%.1fx the file; medians of %d runs)\n' "$mode" "$secs" "$((kb / 1024))" "$(echo "$kb * 1024 / $size" | bc -l)" "$runs"
done
