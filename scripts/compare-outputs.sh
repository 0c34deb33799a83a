#!/usr/bin/env bash
# Byte-for-byte comparison of two morsel builds: every command in every
# format it offers, on each corpus given, standard output, the --emit file
# and the exit status. Standard error is not compared (it holds progress and
# notes, whose wording may change), but its difference is shown.
#
#   scripts/compare-outputs.sh BASE NEW CORPUS...
#   go build -o /tmp/morsel-base ./cmd/morsel     # before a change
#   go build -o /tmp/morsel-new ./cmd/morsel      # after it
#   scripts/compare-outputs.sh /tmp/morsel-base /tmp/morsel-new testdata/demo/docs /tmp/big-corpus
#
# The demo's targets, frame and glossary are used on every corpus, so that
# fit, ration and quote have a frame and prices wherever they run. Exit
# status 0 when every output matches, 1 otherwise.
set -uo pipefail
cd "$(dirname "$0")/.."
if [ $# -lt 3 ]; then
  echo "usage: $0 BASE NEW CORPUS..." >&2
  exit 2
fi
base=$1 new=$2
shift 2
demo=testdata/demo
targets=$demo/settings/morsel.toml frame=$demo/settings/frame.txt terms=$demo/settings/terms.txt
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
runs=0 diffs=0

# one NAME ARGS...: run both builds with ARGS (the string @EMIT@ names a
# file per build; standard input is $STDIN, else empty) and compare
# standard output, the emitted file and the exit status.
one() {
  local name=$1
  shift
  local b n
  for b in base new; do
    local bin=$base
    [ $b = new ] && bin=$new
    local args=() a
    for a in "$@"; do args+=("${a//@EMIT@/$work/$b.emit}"); done
    rm -f "$work/$b.emit"
    "$bin" "${args[@]}" >"$work/$b.out" 2>"$work/$b.err" <"${STDIN:-/dev/null}"
    echo $? >"$work/$b.rc"
    [ -f "$work/$b.emit" ] || : >"$work/$b.emit"
  done
  runs=$((runs + 1))
  local bad=""
  cmp -s "$work/base.out" "$work/new.out" || bad="$bad stdout"
  cmp -s "$work/base.emit" "$work/new.emit" || bad="$bad emit"
  cmp -s "$work/base.rc" "$work/new.rc" || bad="$bad exit($(cat "$work/base.rc")->$(cat "$work/new.rc"))"
  if [ -n "$bad" ]; then
    diffs=$((diffs + 1))
    echo "DIFFERS ($bad ): $name"
    diff "$work/base.out" "$work/new.out" | head -20
  else
    printf 'same  %-4s %6s bytes  %s\n' "$(cat "$work/new.rc")" "$(wc -c <"$work/new.out")" "$name"
  fi
  if ! cmp -s "$work/base.err" "$work/new.err"; then
    echo "      (stderr differs: $(diff "$work/base.err" "$work/new.err" | head -4 | tr '\n' ' '))"
  fi
}

one "pieces table" pieces "Bathyphorus quillandri, QX-7731-Rb 龘"
for f in table json csv md; do
  one "pieces $f file" pieces --file $demo/memo-ja-kirisaki-shipping.txt --format $f
done
tickets=$demo/support-tickets-2024-q4.jsonl
STDIN=$demo/notiz-de-werkstattbesuch-nordvellen.txt one "pieces json stdin" pieces --format json
for cmd in survey fit quote fragments ration; do
  extra=()
  case $cmd in fit | ration) extra=(--targets $targets --target harbor-small) ;; quote) extra=(--targets $targets) ;; esac
  STDIN=$tickets one "$cmd json stdin" $cmd --format json "${extra[@]}" -
done
for c in "$@"; do
  for f in table json csv md html; do
    one "survey $f $c" survey --format $f "$c"
    one "fit $f $c" fit --format $f --targets $targets --target harbor-small "$c"
    one "fit $f frame $c" fit --format $f --frame $frame --reserve 200 "$c"
    one "quote $f $c" quote --format $f --targets $targets "$c"
    one "quote $f ration $c" quote --format $f --targets $targets --ration --batch "$c"
    one "fragments $f $c" fragments --format $f "$c"
    one "fragments $f terms $c" fragments --format $f --terms $terms --top 0 --doc-rows 0 "$c"
  done
  one "survey html sample $c" survey --format html --rows 0 --sample $demo/memo-ja-kirisaki-shipping.txt "$c"
  for f in table json csv md; do
    one "ration $f $c" ration --format $f --targets $targets --target harbor-small "$c"
  done
  one "ration emit $c" ration --format json --budget 512 --frame $frame --overlap 40 --emit @EMIT@ "$c"
  one "ration html (refused) $c" ration --format html "$c"
done
echo "$runs runs, $diffs differ"
[ $diffs -eq 0 ]
