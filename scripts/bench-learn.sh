#!/usr/bin/env bash
# Learning 8,000 byte-level BPE merges from 100 MB of text, side by side
# with Debian's SentencePiece trainer on the same file:
#   spm_train --model_type=bpe --vocab_size=8000
# (apt-get install sentencepiece). Wall time and peak memory of each, in
# turns, medians of RUNS runs (default 3).
#
#   scripts/bench-learn.sh
#   RUNS=5 MERGES=8000 scripts/bench-learn.sh
#
# The text is the manual pages of the installed Debian packages,
# decompressed in path order into one file and cut at 100,000,000 bytes,
# under $BENCH_DIR (default /tmp/morsel-bench).
set -euo pipefail
cd "$(dirname "$0")/.."
dir=${BENCH_DIR:-/tmp/morsel-bench}
runs=${RUNS:-3}
merges=${MERGES:-8000}
mkdir -p "$dir"
text=$dir/learn-100mb.txt
if [ ! -f "$text" ]; then
  find /usr/share/man -name '*.gz' -type f | LC_ALL=C sort |
    while read -r f; do zcat "$f" 2>/dev/null || true; done | head -c 100000000 > "$text.tmp"
  mv "$text.tmp" "$text"
fi
go build -o "$dir/learnbench" ./scripts/learnbench
echo "text: $(stat -L -c %s "$text") bytes ($text)"
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"

# run LABEL CMD...: wall seconds and peak KB of one run, as "secs kb"
run() {
  /usr/bin/time -f '%e %M' -o "$dir/time.out" "$@" >/dev/null 2>&1
  cat "$dir/time.out"
}
median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

mo_cmd=("$dir/learnbench" -merges "$merges" "$text")
spm_cmd=(spm_train --input="$text" --model_prefix="$dir/spm-bpe" --model_type=bpe --vocab_size="$merges")
mo_t=() mo_m=() spm_t=() spm_m=() ratios=()
for i in $(seq "$runs"); do
  # alternate which goes first: the second run of a pair is often slower
  if [ $((i % 2)) = 1 ]; then
    read -r mt mm < <(run "${mo_cmd[@]}"); read -r st sm < <(run "${spm_cmd[@]}")
  else
    read -r st sm < <(run "${spm_cmd[@]}"); read -r mt mm < <(run "${mo_cmd[@]}")
  fi
  echo "run $i: learn ${mt}s ${mm}KB, spm_train ${st}s ${sm}KB"
  mo_t+=("$mt"); mo_m+=("$mm"); spm_t+=("$st"); spm_m+=("$sm"); ratios+=("$(echo "$mt / $st" | bc -l)")
done
printf 'bpe.Learn      median %7.2f s  peak %5d MB\n' "$(printf '%s\n' "${mo_t[@]}" | median)" "$(( $(printf '%s\n' "${mo_m[@]}" | median) / 1024 ))"
printf 'spm_train      median %7.2f s  peak %5d MB\n' "$(printf '%s\n' "${spm_t[@]}" | median)" "$(( $(printf '%s\n' "${spm_m[@]}" | median) / 1024 ))"
printf 'ratio learn / spm_train, median of %d paired runs: %.3f\n' "$runs" "$(printf '%s\n' "${ratios[@]}" | median)"
"$dir/learnbench" -merges "$merges" "$text"
