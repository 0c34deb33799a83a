#!/bin/sh
# screenshot.sh renders a morsel HTML page and photographs it in headless
# Chromium (Debian: apt-get install chromium), for the README and docs/.
# It is run by hand; the tests do not need a browser.
#
#   scripts/screenshot.sh [OUT.png] [WIDTH,HEIGHT] [COMMAND PATH [FLAG...]]
#
# Without a command it photographs the demo survey into docs/survey-report.png.
# The page loads nothing from the network; the flags below also keep the
# browser itself from reaching out.
set -eu
cd "$(dirname "$0")/.."
out=${1:-docs/survey-report.png}
size=${2:-1200,1600}
[ $# -ge 2 ] && shift 2 || set --
[ $# -ge 2 ] || set -- survey testdata/demo/docs
browser=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$browser" ]; then
	echo "screenshot.sh: chromium not found (Debian: apt-get install chromium)" >&2
	exit 2
fi
page=$(mktemp --suffix=.html)
profile=$(mktemp -d)
trap 'rm -rf "$page" "$profile"' EXIT
go run ./cmd/morsel "$@" --format html --quiet > "$page" || [ $? -le 3 ]
mkdir -p "$(dirname "$out")"
case $out in /*) abs=$out ;; *) abs=$PWD/$out ;; esac
"$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
	--disable-background-networking --disable-component-update --disable-sync \
	--hide-scrollbars --user-data-dir="$profile" \
	--screenshot="$abs" --window-size="$size" "file://$page" 2>/dev/null
echo "wrote $out ($(wc -c < "$out") bytes)"
