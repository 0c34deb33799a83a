#!/bin/bash
# bench-beam.sh measures the Beam pipeline (beam/, on the prism runner, in
# process) against `morsel survey` on the same files: the bench corpus of
# bench-survey.sh (or CORPUS_DIR). The two take turns, the order
# alternating every round; the script checks that their JSON reports are
# the same, and prints the median wall and CPU time (user + system) of
# each, the throughput in MB/s of wall time, and the pipeline's share of
# survey's throughput (the median of the rounds' ratios).
#
#   scripts/bench-beam.sh                  # 5 rounds
#   ROUNDS=7 CORPUS_DIR=/data/x scripts/bench-beam.sh
set -eu
cd "$(dirname "$0")/.."
rounds=${ROUNDS:-5}
dir=${BENCH_DIR:-/tmp/morsel-bench}
corpus=${CORPUS_DIR:-$dir/corpus}
[ -d "$corpus" ] || { echo "no corpus at $corpus: run scripts/bench-survey.sh once, or set CORPUS_DIR" >&2; exit 2; }
tmp=$(mktemp -d /tmp/bench-beam.XXXXXX)
trap 'rm -rf "$tmp"' EXIT
go build -o "$tmp/morsel" ./cmd/morsel
(cd beam && go build -o "$tmp/morsel-beam" .)
bytes=$(find "$corpus" -type f -printf '%s\n' | awk '{ s += $1 } END { print s + 0 }')
echo "corpus: $((bytes / 1000000)) MB ($corpus); machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg)"

# run LABEL CMD...: appends "wall cpu" of CMD to $tmp/LABEL
run() {
  local label=$1
  shift
  /usr/bin/time -f '%e %U %S' -o "$tmp/t" "$@" >/dev/null 2>&1 || true
  awk '{ printf "%s %.2f\n", $1, $2 + $3 }' "$tmp/t" >>"$tmp/$label"
}
survey() { "$tmp/morsel" survey --quiet --format json "$corpus" >"$tmp/survey.json"; }
pipeline() { "$tmp/morsel-beam" --input "$corpus" --format json --output "$tmp/beam.json" 2>"$tmp/beam.log"; }
export -f survey pipeline
export tmp corpus
survey
pipeline
cmp -s "$tmp/survey.json" "$tmp/beam.json" && echo "the pipeline's report equals morsel survey's: yes" || echo "the pipeline's report equals morsel survey's: NO"
for ((r = 0; r < rounds; r++)); do
  if ((r % 2 == 0)); then
    run survey bash -c survey; run pipeline bash -c pipeline
  else
    run pipeline bash -c pipeline; run survey bash -c survey
  fi
done
median() { sort -n | awk '{ a[NR] = $1 } END { print a[int((NR + 1) / 2)] }'; }
for l in survey pipeline; do
  w=$(cut -d' ' -f1 "$tmp/$l" | median)
  printf '%-8s wall %ss  cpu %ss  %s MB/s   (walls: %s)\n' "$l" "$w" "$(cut -d' ' -f2 "$tmp/$l" | median)" \
    "$(awk -v b="$bytes" -v w="$w" 'BEGIN { printf "%.1f", b / 1e6 / w }')" "$(cut -d' ' -f1 "$tmp/$l" | tr '\n' ' ')"
done
paste -d' ' "$tmp/survey" "$tmp/pipeline" | awk '{ print $1 / $3, $4 / $2 }' >"$tmp/ratios"
echo "pipeline throughput / survey's, median of the rounds' pairs: wall $(cut -d' ' -f1 "$tmp/ratios" | median); CPU pipeline/survey: $(cut -d' ' -f2 "$tmp/ratios" | median)"
