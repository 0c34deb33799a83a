#!/usr/bin/env bash
# extract-corpus.sh rebuilds testdata/golden/corpus/ from files that Debian
# packages and the Go distribution install on this machine. It needs the
# packages named in testdata/golden/SOURCES.md (unicode-data, gettext for
# msgunfmt, apt, sed, grep, libglib2.0-data, tzdata) and Go under /usr/local/go.
# The hand-written file (mixed-handwritten-crlf.txt) is not touched.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
out="$here/../../testdata/golden/corpus"
mkdir -p "$out"

# catalogue LANG DOMAIN BYTES NAME: decompile a gettext catalogue, drop its
# header entry (msgid ""), and keep whole entries up to about BYTES bytes.
catalogue() {
	local lang=$1 domain=$2 bytes=$3 name=$4
	msgunfmt --no-wrap "/usr/share/locale/$lang/LC_MESSAGES/$domain.mo" |
		awk -v max="$bytes" '
			BEGIN { RS = ""; ORS = "\n\n"; n = 0 }
			/^msgid ""\nmsgstr ""/ { next }
			{ if (full || n + length($0) > max) { full = 1; next }; n += length($0) + 2; print }
		' >"$out/$name"
}

# English prose: the start of the GPL version 3 text.
sed -n '1,75p' /usr/share/common-licenses/GPL-3 >"$out/en-gpl3-start.txt"
# English prose with long space runs (indentation), turned into CRLF lines.
sed -n '1,70p' /usr/share/common-licenses/Apache-2.0 | sed 's/$/\r/' >"$out/en-apache2-start-crlf.txt"
# Source code: tabs, punctuation runs, comments.
cp /usr/local/go/src/strings/reader.go "$out/go-strings-reader.go.txt"
# Numbers: long decimal constants and exponents.
cp /usr/local/go/src/math/const.go "$out/go-math-const.go.txt"
# Numbers with signs, tab-separated columns.
sed -n '1,90p' /usr/share/zoneinfo/zone1970.tab >"$out/tz-zone1970-start.tab.txt"
# Translation catalogues.
catalogue zh_CN apt 6000 zh_CN-apt.po.txt
catalogue ja sed 6000 ja-sed.po.txt
catalogue ko apt 4000 ko-apt.po.txt
catalogue hi glib20 6000 hi-glib20.po.txt
catalogue ar apt 6000 ar-apt.po.txt
catalogue ru grep 6000 ru-grep.po.txt
# Emoji: the file header, then the family subgroup (ZWJ sequences, skin
# tones), then the flag subgroups (regional-indicator pairs, tag sequences).
{
	sed -n '1,40p' /usr/share/unicode/emoji/emoji-test.txt
	awk '/^# subgroup: family/ { on = 1 } on && n < 70 { print; n++ }' /usr/share/unicode/emoji/emoji-test.txt
	awk '/^# subgroup: country-flag/ { on = 1 } on && n < 40 { print; n++ }' /usr/share/unicode/emoji/emoji-test.txt
	awk '/^# subgroup: subdivision-flag/,/^# Flags subtotal/' /usr/share/unicode/emoji/emoji-test.txt
} >"$out/emoji-test-15.0-excerpt.txt"
