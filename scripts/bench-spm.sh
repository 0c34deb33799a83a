#!/usr/bin/env bash
# bench-spm.sh: whole-process survey of about 100 MB of Debian
# documentation under a 32,000-piece SentencePiece BPE model (trained here
# with Debian's spm_train, byte fallback, default nmt_nfkc rules), against
# wc -w on the same file, in turns; then BenchmarkSentencePiece (the
# 1 MB line with no white space). ROUNDS (default 5) sets the pairs.
set -euo pipefail
cd "$(dirname "$0")/.."
work=${WORK:-/tmp/morsel-bench-spm}
mkdir -p "$work"
if [ ! -s "$work/text.txt" ]; then
	while [ "$(stat -c %s "$work/text.txt" 2>/dev/null || echo 0)" -lt 100000000 ]; do
		find /usr/share/doc -type f -name '*.gz' | LC_ALL=C sort | xargs zcat 2>/dev/null >>"$work/text.txt" || true
	done
	truncate -s 100000000 "$work/text.txt"
fi
if [ ! -s "$work/big32k.model" ]; then
	head -c 8000000 "$work/text.txt" >"$work/train.txt"
	spm_train --input="$work/train.txt" --model_prefix="$work/big32k" --vocab_size=32000 --model_type=bpe \
		--byte_fallback --num_threads=2 --minloglevel=2 >/dev/null 2>&1
fi
go build -o "$work/morsel" ./cmd/morsel
t() { local s=$(date +%s.%N); "$@" >/dev/null 2>&1; echo "$(date +%s.%N) - $s" | bc; }
ms=() ws=()
for i in $(seq "${ROUNDS:-5}"); do
	if [ $((i % 2)) = 1 ]; then
		ms+=("$(t "$work/morsel" survey --quiet --vocab "$work/big32k.model" "$work/text.txt")")
		ws+=("$(t wc -w "$work/text.txt")")
	else
		ws+=("$(t wc -w "$work/text.txt")")
		ms+=("$(t "$work/morsel" survey --quiet --vocab "$work/big32k.model" "$work/text.txt")")
	fi
done
med() { printf '%s\n' "$@" | sort -n | awk '{a[NR]=$1} END{print a[int((NR+1)/2)]}'; }
m=$(med "${ms[@]}") w=$(med "${ws[@]}")
echo "survey under big32k.model: median ${m}s; wc -w: median ${w}s; ratio $(echo "scale=2; $m / $w" | bc)"
go test ./bpe/ -run XXX -bench SentencePiece -benchtime 5x
