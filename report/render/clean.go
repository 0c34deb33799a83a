package render

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Clean returns s as the text views (table, CSV, Markdown) and messages on
// a terminal show it, so that a file name or a word cannot drive the
// terminal, reorder the line or hide text: every byte that is not part of
// a whole UTF-8 character, and every C0 or C1 control character (ESC, BEL,
// CR, LF, DEL included), as "\xNN"; every bidirectional control (the
// embeddings, overrides and isolates, LRM, RLM and ALM) and the line and
// paragraph separators as "\uNNNN". Anything else is kept as it is; a
// string of printable ASCII is returned unchanged without a copy. JSON
// keeps the exact text instead.
func Clean(s string) string { return clean(s, false) }

// CleanMessage is Clean for a message of one or more lines: line feeds
// are kept.
func CleanMessage(s string) string { return clean(s, true) }

func clean(s string, lines bool) string {
	i := 0
	for i < len(s) && s[i] >= 0x20 && s[i] < 0x7f {
		i++
	}
	if i == len(s) {
		return s
	}
	var b strings.Builder
	b.Grow(len(s) + 8)
	b.WriteString(s[:i])
	for i < len(s) {
		c := s[i]
		if c >= 0x20 && c < 0x7f || c == '\n' && lines {
			b.WriteByte(c)
			i++
			continue
		}
		r, n := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && n <= 1, r < 0x20, r == 0x7f:
			fmt.Fprintf(&b, `\x%02x`, c)
			n = 1
		case r >= 0x80 && r < 0xa0, hiding(r):
			fmt.Fprintf(&b, `\u%04x`, r)
		default:
			b.WriteString(s[i : i+n])
		}
		i += n
	}
	return b.String()
}

// hiding reports whether r is a character that reorders or breaks a line
// without being seen: the bidirectional controls of Unicode's UAX #9
// (ALM U+061C, LRM U+200E, RLM U+200F, the embeddings and overrides
// U+202A-U+202E, the isolates U+2066-U+2069) and the line and paragraph
// separators U+2028 and U+2029.
func hiding(r rune) bool {
	switch {
	case r == 0x061c, r == 0x200e, r == 0x200f:
		return true
	case r >= 0x2028 && r <= 0x202e:
		return true
	case r >= 0x2066 && r <= 0x2069:
		return true
	}
	return false
}

// CSVCell returns a cell as the CSV view writes it: Clean, and, when it
// starts with "=", "+", "-" or "@" and is not a number, led by a "'", so
// that a spreadsheet opening the file shows it as text instead of running
// it as a formula (the usual defence against CSV injection, as OWASP's
// page on it describes; a negative number is left as it is, so that the
// column stays numeric).
func CSVCell(s string) string {
	s = Clean(s)
	if s == "" {
		return s
	}
	switch s[0] {
	case '=', '@':
		return "'" + s
	case '+', '-':
		if _, err := strconv.ParseFloat(s, 64); err == nil && !strings.ContainsAny(s, "xXpP_") {
			return s
		}
		return "'" + s
	}
	return s
}
