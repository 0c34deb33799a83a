#!/usr/bin/env bash
# bench-spm.sh: whole-process survey of about 100 MB of Debian
# documentation under a 32,000-piece SentencePiece BPE model (trained here
# with Debian's spm_train, byte fallback, default nmt_nfkc rules), against
# wc -w on the same file, in turns (the order alternating, since the
# second run of a pair is often slower on a loaded machine), with medians
# and the median of the paired ratios; then BenchmarkSentencePiece (the
# 1 MB line with no white space). ROUNDS (default 5) sets the pairs.
# SPM_ENCODE=1 also times Debian's spm_encode on the same file, once, and
# checks that its ids number what survey counts.
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
# t runs a command and prints its wall time; its CPU time (user and
# system) goes to the file cpu, which tells more when the machine is
# loaded.
t() {
	/usr/bin/time -f '%e %U %S' -o "$work/time.out" "$@" >/dev/null 2>&1
	read -r wall user sys <"$work/time.out"
	echo "$user + $sys" | bc >"$work/cpu"
	echo "$wall"
}
ms=() ws=() rs=() mc=() wc=()
for i in $(seq "${ROUNDS:-5}"); do
	if [ $((i % 2)) = 1 ]; then
		ms+=("$(t "$work/morsel" survey --quiet --vocab "$work/big32k.model" "$work/text.txt")") mc+=("$(cat "$work/cpu")")
		ws+=("$(t wc -w "$work/text.txt")") wc+=("$(cat "$work/cpu")")
	else
		ws+=("$(t wc -w "$work/text.txt")") wc+=("$(cat "$work/cpu")")
		ms+=("$(t "$work/morsel" survey --quiet --vocab "$work/big32k.model" "$work/text.txt")") mc+=("$(cat "$work/cpu")")
	fi
	rs+=("$(echo "scale=3; ${ms[-1]} / ${ws[-1]}" | bc)")
done
med() { printf '%s\n' "$@" | sort -n | awk '{a[NR]=$1} END{print a[int((NR+1)/2)]}'; }
m=$(med "${ms[@]}") w=$(med "${ws[@]}")
echo "survey under big32k.model: median ${m}s; wc -w: median ${w}s; ratio of medians $(echo "scale=2; $m / $w" | bc); median of paired ratios $(med "${rs[@]}") (pairs: ${rs[*]})"
echo "CPU time: survey median $(med "${mc[@]}")s, wc -w median $(med "${wc[@]}")s; load average now $(cut -d' ' -f1 /proc/loadavg) on $(nproc) cores"
if [ -n "${SPM_ENCODE:-}" ]; then
	s=$(date +%s.%N)
	ids=$(spm_encode --model="$work/big32k.model" --output_format=id <"$work/text.txt" | wc -w)
	e=$(echo "$(date +%s.%N) - $s" | bc)
	tokens=$("$work/morsel" survey --quiet --format json --vocab "$work/big32k.model" "$work/text.txt" | grep -o '"tokens": *[0-9]*' | head -1 | grep -o '[0-9]*$')
	echo "spm_encode: ${e}s, $ids ids; survey counts $tokens; spm_encode / survey median $(echo "scale=1; $e / $m" | bc)"
fi
go test ./bpe/ -run XXX -bench SentencePiece -benchtime 5x
