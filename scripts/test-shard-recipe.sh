#!/bin/bash
# test-shard-recipe.sh checks the job-array recipe (scripts/shard-local.sh)
# on the demo: for N = 1, 2, 3 and 8 local processes, and each command, the
# merged report equals the single run's, byte for byte, with the same exit
# status.
set -u
cd "$(dirname "$0")/.."
tmp=$(mktemp -d /tmp/shard-recipe.XXXXXX)
trap 'rm -rf "$tmp"' EXIT
go build -o "$tmp/morsel" ./cmd/morsel || exit 1
export MORSEL=$tmp/morsel
d=testdata/demo
bad=0
check() { # N FORMAT COMMAND ARGS...
  local n=$1 f=$2
  shift 2
  "$MORSEL" "$@" --quiet --format "$f" >"$tmp/one" 2>/dev/null
  local want=$?
  MERGE_FLAGS="--format $f --quiet" scripts/shard-local.sh "$n" "$tmp/parts" "$@" >"$tmp/merged" 2>"$tmp/err"
  local got=$?
  if [ "$got" != "$want" ] || ! cmp -s "$tmp/one" "$tmp/merged"; then
    echo "FAIL: $n shards, --format $f: $* (exit $got, single run $want)"; head -3 "$tmp/err"
    bad=1
  else
    echo "ok: $n shards, --format $f: $1"
  fi
  rm -rf "$tmp/parts"
}
for n in 1 2 3 8; do
  check "$n" json survey $d/docs
  check "$n" table fit $d/docs --frame $d/settings/frame.txt --reserve 200
  check "$n" md quote $d/docs --targets $d/settings/morsel.toml
  check "$n" csv ration $d/docs --frame $d/settings/frame.txt --reserve 200
  check "$n" html fragments $d/docs --terms $d/settings/terms.txt
done
exit $bad
