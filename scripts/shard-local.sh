#!/bin/bash
# shard-local.sh runs a sharded morsel command as a job array would, with N
# local processes, then merges their partial reports: the recipe of the
# README's "Past one machine" section, on one machine.
#
#   scripts/shard-local.sh N OUTDIR COMMAND ARGS...   # e.g. 3 /tmp/parts survey docs/
#
# Task K (0-based, as a Kubernetes Indexed Job's JOB_COMPLETION_INDEX) runs
#   morsel COMMAND ARGS... --shard $((K+1))/N --format partial -o OUTDIR/part-K.gz
# and, once every task has succeeded, one
#   morsel merge OUTDIR/part-*.gz
# prints the report (MERGE_FLAGS, such as "--format json", are passed to it).
# MORSEL names the binary (default: morsel on PATH). A task that exits 2
# or more fails the run; exit status 1 (an unreadable input, listed in the
# report) does not.
set -u
if [ $# -lt 3 ]; then
  sed -n '2,16p' "$0" | sed 's/^# \{0,1\}//' >&2
  exit 2
fi
n=$1 out=$2
shift 2
morsel=${MORSEL:-morsel}
mkdir -p "$out"
pids=()
for ((k = 0; k < n; k++)); do
  "$morsel" "$@" --quiet --shard "$((k + 1))/$n" --format partial --force -o "$out/part-$k.gz" &
  pids+=($!)
done
failed=0
for k in "${!pids[@]}"; do
  wait "${pids[$k]}"
  rc=$?
  if [ "$rc" -ge 2 ]; then
    echo "shard-local.sh: task $k exited $rc" >&2
    failed=1
  fi
done
[ "$failed" = 0 ] || exit 1
parts=()
for ((k = 0; k < n; k++)); do parts+=("$out/part-$k.gz"); done
# shellcheck disable=SC2086
exec "$morsel" merge ${MERGE_FLAGS:-} "${parts[@]}"
