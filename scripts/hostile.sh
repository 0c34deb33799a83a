#!/usr/bin/env bash
# Hostile and huge inputs: builds morsel, makes each input on the fly (the
# large ones removed after their case), runs every case under a time limit,
# measures its time and peak memory (with /usr/bin/time -v where present)
# and prints a table of held / FAILED.
#
#   scripts/hostile.sh            every case (several GB of scratch space, minutes)
#   scripts/hostile.sh --quick    the small cases only (CI runs these: seconds)
#   ONLY=csv scripts/hostile.sh   the small cases and one group of large ones
#
# A case holds when its exit status is the one expected, it ends within its
# time limit, its peak memory stays within its limit, and its check (a shell
# test on its output, where it has one) passes. The last line is
# "N held, M failed"; the exit status is 1 when any case failed.
set -uo pipefail
cd "$(dirname "$0")/.."

quick=0
[[ ${1:-} == --quick ]] && quick=1

work=$(mktemp -d "${TMPDIR:-/tmp}/morsel-hostile.XXXXXX")
trap 'rm -rf "$work"' EXIT
M=$work/morsel
go build -o "$M" ./cmd/morsel || exit 2
targets=$PWD/testdata/demo/settings/morsel.toml
timer=""
[[ -x /usr/bin/time ]] && timer=/usr/bin/time

held=0 failed=0
# ONLY=WORD runs only the large cases whose group is WORD (zstd, letter,
# spaces, yes, jsonl, words, csv), with every small case.
want() { [[ -z ${ONLY:-} || ${ONLY} == "$1" ]]; }
printf '%-34s %5s %5s %8s %9s  %s\n' "case" "exit" "want" "seconds" "peak MB" "verdict"

# run NAME WANT_EXIT MAX_SECONDS MAX_MB COMMAND [CHECK]
# COMMAND and CHECK run in bash in $work, with $M the binary; the output is
# in $work/out and $work/err for CHECK.
run() {
	local name=$1 want=$2 secs=$3 mb=$4 cmd=$5 check=${6:-}
	local start end rc peak="-" verdict=held why=""
	start=$(date +%s.%N)
	if [[ -n $timer ]]; then
		(cd "$work" && M=$M $timer -v -o "$work/time.txt" timeout -k 5 "$secs" bash -c "$cmd" >"$work/out" 2>"$work/err")
		rc=$?
		peak=$(awk -F': ' '/Maximum resident set size/ {printf "%.0f", $2/1024}' "$work/time.txt" 2>/dev/null)
		[[ -z $peak ]] && peak="-"
	else
		(cd "$work" && M=$M timeout -k 5 "$secs" bash -c "$cmd" >"$work/out" 2>"$work/err")
		rc=$?
	fi
	end=$(date +%s.%N)
	local took
	took=$(awk -v a="$start" -v b="$end" 'BEGIN {printf "%.2f", b - a}')
	if [[ $rc == 124 || $rc == 137 ]]; then
		verdict=FAILED why="timed out"
	elif [[ $rc != "$want" ]]; then
		verdict=FAILED why="exit $rc: $(head -c 200 "$work/err" | tr '\n' ' ')"
	elif [[ $peak != "-" && $peak -gt $mb ]]; then
		verdict=FAILED why="over $mb MB"
	elif [[ -n $check ]] && ! (cd "$work" && M=$M bash -c "$check") >/dev/null 2>&1; then
		verdict=FAILED why="check failed: $check"
	fi
	if [[ $verdict == held ]]; then held=$((held + 1)); else failed=$((failed + 1)); fi
	printf '%-34s %5s %5s %8s %9s  %s\n' "$name" "$rc" "$want" "$took" "$peak" "$verdict${why:+ ($why)}"
}

# --- small inputs (both runs) ---
mkdir -p "$work/d"
printf '# Tide tables\n\nThe harbour keeps its tide tables here.\n' >"$work/d/README.md"
seq 1 3000 | sed 's/^/The keeper counts boat /' >"$work/d/log.txt"
mkfifo "$work/pipe"
seq 1 20000 | sed 's/.*/{"text": "record &"}/' >"$work/rows.jsonl" # a report far larger than a pipe holds
mkdir -p "$work/k" && echo "a short note" >"$work/k/x.txt" && ln -s /proc/kmsg "$work/k/kmsg"
printf 'aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaab' >"$work/backtrack.txt"
printf '{{document}}\0\n' >"$work/nul-frame.txt"
printf '[target.r]\nwindow = 100\nprice_in = 1\nprice_out = 1\nanswer_ratio = 1e20\n' >"$work/ratio.toml"
printf '[target.p]\nwindow = 100\nprice_in = 1e400\nprice_out = 1\n' >"$work/price.toml"
mkdir -p "$work/names"
echo "The keeper counts the boats." >"$work/names/"$'\e]0;pwned\a\e[2Jt.txt'
echo "The keeper counts the boats." >"$work/names/"$'report\u202etxt.md'
echo "The keeper counts the boats." >"$work/names/=HYPERLINK(1).txt"
seq 1 200000 | gzip >"$work/big.txt.gz"
head -c 100000 "$work/big.txt.gz" >"$work/trunc-large.txt.gz"
seq 1 100 | gzip | head -c 100 >"$work/trunc-small.txt.gz"
python3 -c "print('['*100000 + ']'*100000)" >"$work/deep.json" 2>/dev/null || printf '[[[[' >"$work/deep.json"
# One 9 MB document of 1M distinct words: past --memory 16MiB its words go
# to the summary in parts, never gathered whole (400 MB before).
awk 'BEGIN { srand(3); for (i = 0; i < 1000000; i++) { w = ""; for (j = 0; j < 8; j++) w = w sprintf("%c", 97 + int(rand() * 26)); printf "%s ", w } print "" }' >"$work/distinct.txt"
seq 1 100000 | sed 's/.*/{"text": "the keeper counts boat &"}/' >"$work/records.jsonl"

run "emit into the walked folder" 0 30 300 '$M ration d --budget 200 --emit d/plan.jsonl --hidden --quiet >/dev/null && $M ration d --budget 200 --emit d/plan.jsonl --hidden --quiet --force' \
	'test $(ls -A d | wc -l) = 3 && ! grep -q plan.jsonl d/plan.jsonl'
run "emit over an existing file" 2 10 300 'cp d/README.md keep.md && $M ration d --budget 200 --emit d/README.md --quiet' 'cmp d/README.md keep.md'
run "emit over an input, --force" 2 10 300 '$M ration d/README.md --budget 200 --emit d/README.md --force --quiet' 'cmp d/README.md keep.md'
run "emit through a hard link" 2 10 300 'ln -f d/README.md hard.md && $M ration d/README.md --budget 200 --emit hard.md --force --quiet' 'cmp d/README.md keep.md'
run "learn --out over its last vocabulary" 2 60 500 '$M learn d --add 5 --out v --quiet >/dev/null && cp v/merges.txt keep-merges.txt && $M learn d --add 9 --out v --quiet' 'cmp v/merges.txt keep-merges.txt'
run "emit to /dev/full" 1 10 300 '$M ration d --budget 200 --emit /dev/full --quiet'
run "report to /dev/full" 1 10 300 '$M survey d --quiet >/dev/full' 'test $(wc -l <err) = 1 && grep -q "no space left" err'
run "report to a closed stdout" 1 10 300 '$M survey d --quiet >&-' 'grep -q "standard output is closed" err'
run "ration --emit - (standard output)" 0 10 300 '$M ration d --budget 200 --emit - --quiet' 'test ! -e ./- && head -1 out | grep -q "\"chunk\":0" && grep -q "Chunk plan" err'
run "report into a closed pipe" 1 30 300 '$M survey rows.jsonl --format json --quiet | head -c 10 >/dev/null; exit ${PIPESTATUS[0]}' 'test ! -s err'
run "named pipe on the command line" 1 10 300 '$M survey pipe --quiet'
run "link to /proc/kmsg in a folder" 0 10 300 '$M survey k --quiet'
run "backtracking split pattern" 1 30 300 '$M survey backtrack.txt --split-pattern "(a+)+\$" --quiet'
run "pattern matching the empty text" 2 10 300 '$M survey d --split-pattern "(?:)" --quiet'
run "--overhead 2^63-1" 2 10 300 '$M fit d --overhead 9223372036854775807 --quiet'
run "--reserve 2^63-1" 2 10 300 '$M fit d --reserve 9223372036854775807 --quiet'
run "--answer-tokens 2^62" 2 10 300 '$M quote d --targets '"$targets"' --answer-tokens 4611686018427387904 --quiet'
run "--overlap 2^62" 2 10 300 '$M ration d --overlap 4611686018427387904 --quiet'
run "answer_ratio = 1e20" 2 10 300 '$M quote d --targets ratio.toml --quiet'
run "price_in = 1e400" 2 10 300 '$M quote d --targets price.toml --quiet'
run "quote --window 1 --ration" 3 30 300 '$M quote d --targets '"$targets"' --target harbor-small --window 1 --ration --quiet'
run "--workers 1000000000" 2 10 300 '$M survey d --workers 1000000000 --quiet'
run "frame /dev/zero" 2 10 300 '$M fit d --frame /dev/zero --quiet'
run "frame a named pipe" 2 10 300 '$M fit d --frame pipe --quiet'
run "frame holding a NUL byte" 2 10 300 '$M fit d --frame nul-frame.txt --quiet'
run "targets /dev/zero" 2 10 300 '$M quote d --targets /dev/zero --quiet'
run "glossary /dev/zero" 2 10 300 '$M fragments d --terms /dev/zero --quiet'
run "--vocab /dev/zero" 1 10 300 '$M survey d --vocab /dev/zero --quiet'
run "--merges /dev/zero" 1 10 300 '$M survey d --vocab '"$PWD"'/bpe/gpt2/vocab.json --merges /dev/zero --quiet'
run "pieces --file /dev/zero" 2 10 300 '$M pieces --file /dev/zero --quiet'
run "--as bogus" 2 10 300 '$M survey d --as bogus --quiet'
run "--min-pieces NaN" 2 10 300 '$M fragments d --min-pieces NaN --quiet'
run "hostile file names, table" 0 10 300 '$M survey names --quiet --verbose' \
	'! LC_ALL=C grep -q $'"'"'[\x01-\x08\x0b-\x1f\x7f]'"'"' out && ! grep -q $'"'"'\u202e'"'"' out && grep -qF "\\x1b]0;pwned" out'
run "hostile file names, csv" 0 10 300 'cd names && $M survey . --quiet --format csv' 'grep -q "^'"'"'=HYPERLINK" out'
run "gzip cut short, small and large" 1 10 300 '$M survey trunc-small.txt.gz trunc-large.txt.gz --format json --quiet' \
	'test $(grep -c "\"reason\": \"truncated\"" out) = 2'
run "JSON nested 100,000 deep" 1 10 300 '$M survey deep.json --quiet'
run "fragments, 1M new words, 16MiB" 0 60 200 '$M fragments distinct.txt --memory 16MiB --quiet' 'grep -q "Counts are approximate" out'
run "fragments of 100k records, JSON" 0 60 100 '$M fragments records.jsonl --format json --quiet' 'test $(grep -c "\"record\": " out) = 100000'
run "survey of 300k identical records" 0 60 120 'yes "{\"text\": \"the same ticket again\"}" | head -n 300000 | $M survey - --quiet' \
	'grep -q "299,900 more copies, not named" out'
# Past the streaming threshold (32 MiB) ration keeps a window, not the text.
run "ration --emit, 96 MB of yes" 0 60 150 'yes | head -c 96M | $M ration - --emit plan.jsonl --quiet' \
	'test $(wc -l <plan.jsonl) -gt 90000 && rm plan.jsonl'

if [[ $quick == 0 ]]; then
	# --- large inputs, made on the fly and removed after ---
	big() { rm -f "$work"/big-*; }
	for v in qwen3 metaspace-32k; do mkdir -p "$work/$v" && gzip -dc "testdata/vocab/$v/tokenizer.json.gz" >"$work/$v/tokenizer.json"; done
	if want zstd; then
		head -c 40M /dev/urandom | base64 -w100 >"$work/big-b.txt" && zstd -q "$work/big-b.txt"
		run "zstd text of 54 MB" 0 300 400 '$M survey big-b.txt.zst --quiet'
		run "zstd text of 54 MB, stdin" 0 300 400 '$M survey - --quiet <big-b.txt.zst'
		big
	fi
	if want letter; then
		head -c 100M /dev/zero | tr '\0' a >"$work/big-a.txt"
		run "100 MB of one letter (10 B/byte)" 0 600 1100 '$M survey big-a.txt --max-document 200MiB --quiet'
		run "100 MB of one letter, qwen3" 0 600 1100 '$M survey big-a.txt --max-document 200MiB --vocab qwen3/tokenizer.json --quiet'
		run "100 MB of one letter, ration" 0 600 1100 '$M ration big-a.txt --max-document 200MiB --quiet'
		big
	fi
	if want spaces; then
		head -c 100M /dev/zero | tr '\0' ' ' >"$work/big-s.txt"
		run "100 MB of spaces" 0 600 1100 '$M survey big-s.txt --quiet'
		# The normalizer makes each space a three-byte mark: one pre-token of 300 MB.
		run "100 MB of spaces, metaspace-32k" 0 600 1500 '$M survey big-s.txt --vocab metaspace-32k/tokenizer.json --quiet'
		big
	fi
	if want yes; then
		run "fit of 500 MB of yes on stdin" 3 600 300 'yes | head -c 500M | $M fit - --max-document 1GiB --quiet'
		run "ration of 500 MB of yes on stdin" 0 600 300 'yes | head -c 500M | $M ration - --max-document 1GiB --quiet'
		run "ration --emit, 200 MB of yes" 0 600 300 'yes | head -c 200M | $M ration - --max-document 1GiB --emit plan.jsonl --quiet' \
			'test $(wc -l <plan.jsonl) -gt 100000 && rm plan.jsonl'
		run "ration of an endless yes" 1 600 300 'yes | $M ration - --quiet' 'grep -q too-large out'
		run "fragments of 500 MB of yes" 0 600 1100 'yes | head -c 500M | $M fragments - --max-document 1GiB --quiet'
	fi
	if want jsonl; then
		bash scripts/gen-jsonl.sh "$work/big-r.jsonl" 1000000 >/dev/null 2>&1
		# 150 MB + 8 bytes a record.
		run "survey of 1M JSON Lines records" 0 300 158 '$M survey big-r.jsonl --quiet --format json >/dev/null'
		run "fragments of 1M JSON Lines records" 0 300 158 '$M fragments big-r.jsonl --quiet --format json >/dev/null'
		big
	fi
	if want words; then
		python3 - "$work/big-w.txt" <<-'EOF'
			import random, sys
			r = random.Random(7)
			letters = "abcdefghijklmnopqrstuvwxyz"
			with open(sys.argv[1], "w") as f:
			    for _ in range(200):
			        f.write(" ".join("".join(r.choice(letters) for _ in range(9)) for _ in range(100000)) + "\n")
		EOF
		# --memory 1GiB (the default) and a modest constant.
		run "fragments, 20M distinct words" 0 900 1500 '$M fragments big-w.txt --quiet'
		big
	fi
	if want csv; then
		# Rows of about 77 bytes, as in the export that showed the bug (13M rows
		# a GB), numbered so that they are not one group of identical texts. The
		# open quote holds about the row bound (256 MiB) of lines, whatever reads it.
		{ printf 'id,text\n1,"never closed\n'; awk 'BEGIN { for (i = 2; i < 13000000; i++) printf "%d,row %d of the export: the keeper counts the boats at dawn\n", i, i }'; } >"$work/big-c.csv"
		run "1 GB CSV, one open quote" 1 900 450 '$M survey big-c.csv --quiet' 'grep -q "(line 2): the quote opened" out'
		# fit keeps 24 bytes a fitting document: 13M rows take 312 MB of it.
		run "1 GB CSV, open quote, fit" 1 900 700 '$M fit big-c.csv --quiet --format json >/dev/null'
		# The row numbers are 13M distinct words: the tables kept to 128 MiB.
		run "1 GB CSV, open quote, fragments" 1 900 600 '$M fragments big-c.csv --memory 128MiB --quiet >/dev/null'
		big
	fi
fi

echo "$held held, $failed failed"
[[ $failed == 0 ]]
