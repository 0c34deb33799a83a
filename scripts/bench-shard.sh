#!/bin/bash
# bench-shard.sh measures what sharding costs: one `morsel survey` with N
# workers against N local processes of `--shard K/N --format partial` (one
# worker each) plus the `morsel merge`, on the bench corpus of
# bench-survey.sh (or CORPUS_DIR). The two take turns, the order
# alternating every round, and the script prints the median wall time and
# CPU time (user + system, of every process) of each, with their ratios.
#
# The partials are named p1.gz and so on, which gzips them; EXT=.part
# writes them plain.
#
#   scripts/bench-shard.sh              # N=2, 5 rounds
#   N=4 ROUNDS=7 CORPUS_DIR=/data/x EXT=.part scripts/bench-shard.sh
set -eu
cd "$(dirname "$0")/.."
n=${N:-2} rounds=${ROUNDS:-5} ext=${EXT:-.gz}
dir=${BENCH_DIR:-/tmp/morsel-bench}
corpus=${CORPUS_DIR:-$dir/corpus}
[ -d "$corpus" ] || { echo "no corpus at $corpus: run scripts/bench-survey.sh once, or set CORPUS_DIR" >&2; exit 2; }
tmp=$(mktemp -d /tmp/bench-shard.XXXXXX)
trap 'rm -rf "$tmp"' EXIT
go build -o "$tmp/morsel" ./cmd/morsel
m=$tmp/morsel
bytes=$(find "$corpus" -type f -printf '%s\n' | awk '{ s += $1 } END { print s + 0 }')
echo "corpus: $((bytes / 1000000)) MB ($corpus); N=$n; partials *$ext; machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg)"

# run LABEL CMD...: appends "wall cpu" of CMD (its children included) to $tmp/LABEL
run() {
  local label=$1
  shift
  /usr/bin/time -f '%e %U %S' -o "$tmp/t" "$@" >/dev/null 2>&1 || true
  awk '{ printf "%s %.2f\n", $1, $2 + $3 }' "$tmp/t" >>"$tmp/$label"
}
single() { "$m" survey --quiet --workers "$n" --format json "$corpus"; }
sharded() {
  local k
  for ((k = 1; k <= n; k++)); do
    "$m" survey --quiet --workers 1 --shard "$k/$n" --format partial --force -o "$tmp/p$k$ext" "$corpus" &
  done
  wait
  "$m" merge --quiet --format json "$tmp"/p*"$ext"
}
export -f single sharded
export m n corpus tmp ext
single >"$tmp/one.json"
sharded >"$tmp/merged.json"
cmp -s "$tmp/one.json" "$tmp/merged.json" && echo "merged report equals the single run's: yes" || echo "merged report equals the single run's: NO"
for ((r = 0; r < rounds; r++)); do
  if ((r % 2 == 0)); then
    run single bash -c single; run sharded bash -c sharded
  else
    run sharded bash -c sharded; run single bash -c single
  fi
done
median() { sort -n | awk '{ a[NR] = $1 } END { print a[int((NR + 1) / 2)] }'; }
for l in single sharded; do
  printf '%-8s wall %ss  cpu %ss   (walls: %s)\n' "$l" "$(cut -d' ' -f1 "$tmp/$l" | median)" "$(cut -d' ' -f2 "$tmp/$l" | median)" "$(cut -d' ' -f1 "$tmp/$l" | tr '\n' ' ')"
done
paste -d' ' "$tmp/single" "$tmp/sharded" | awk '{ print $3 / $1, $4 / $2 }' >"$tmp/ratios"
echo "ratio sharded/single, median of the rounds' pairs: wall $(cut -d' ' -f1 "$tmp/ratios" | median), cpu $(cut -d' ' -f2 "$tmp/ratios" | median)"
