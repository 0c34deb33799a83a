#!/bin/sh
# check-html.sh renders morsel HTML pages in headless Chromium (Debian:
# apt-get install chromium) and prints every place where text leaves its
# box; it exits 1 when any page has a problem. The check itself is
# internal/pagecheck, which the HTML tests also run when a browser is there.
#
#   scripts/check-html.sh [-width PX] PAGE.html...
set -eu
repo=$(cd "$(dirname "$0")/.." && pwd)
args=""
for a in "$@"; do
	case $a in -*|[0-9]*) ;; *) a=$(realpath "$a") ;; esac
	args="$args $a"
done
cd "$repo"
# shellcheck disable=SC2086 # the page paths hold no spaces of their own
exec go run ./internal/pagecheck/checkpage $args
