#!/bin/sh
# check-html.sh renders morsel HTML pages in headless Chromium (Debian:
# apt-get install chromium), runs scripts/check-html.js in each, and prints
# every place where text leaves its box. It exits 1 when any page has a
# problem. Run by hand or by the HTML test when a browser is installed.
#
#   scripts/check-html.sh PAGE.html... [WIDTH]
set -eu
here=$(cd "$(dirname "$0")" && pwd)
browser=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$browser" ]; then
	echo "check-html.sh: chromium not found (Debian: apt-get install chromium)" >&2
	exit 2
fi
width=${WIDTH:-1200}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
status=0
for page in "$@"; do
	copy=$tmp/page.html
	# The checker goes in just before </body>, so that it runs on the laid-out page.
	sed "s#</body>#<script src=\"file://$here/check-html.js\"></script></body>#" "$page" > "$copy"
	"$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
		--disable-background-networking --disable-component-update --disable-sync \
		--hide-scrollbars --user-data-dir="$tmp/profile" --window-size="$width,1600" \
		--dump-dom "file://$copy" 2>/dev/null |
		sed -n '/<pre id="check-html">/,/<\/pre>/p' | sed 's/<[^>]*>//g; s/&quot;/"/g; s/&amp;/\&/g; s/&lt;/</g; s/&gt;/>/g' > "$tmp/out"
	if [ ! -s "$tmp/out" ]; then
		echo "$page: the checker did not run" >&2
		status=1
		continue
	fi
	n=$(head -n 1 "$tmp/out" | cut -d' ' -f1)
	echo "$page: $(head -n 1 "$tmp/out")"
	tail -n +2 "$tmp/out" | sed 's/^/  /'
	[ "$n" = 0 ] || status=1
done
exit $status
