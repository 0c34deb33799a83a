package render

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Readable returns a token piece as a person can read it in a table: a
// space as "␣", tab, line feed and carriage return as "␉", "␊" and "␍",
// other control characters and every byte that is not part of a whole
// UTF-8 character as hex in angle brackets, such as "<E3 81>".
func Readable(piece []byte) string {
	var b strings.Builder
	var bad []string
	flush := func() {
		if len(bad) > 0 {
			b.WriteString("<" + strings.Join(bad, " ") + ">")
			bad = bad[:0]
		}
	}
	for i := 0; i < len(piece); {
		r, n := utf8.DecodeRune(piece[i:])
		if r == utf8.RuneError && n <= 1 {
			bad = append(bad, fmt.Sprintf("%02X", piece[i]))
			i++
			continue
		}
		flush()
		switch {
		case r == ' ':
			b.WriteString("␣")
		case r == '\t':
			b.WriteString("␉")
		case r == '\n':
			b.WriteString("␊")
		case r == '\r':
			b.WriteString("␍")
		case r == '<' || r == '>':
			b.WriteRune(r)
		case unicode.IsControl(r) || r == '\u00a0' || (unicode.IsSpace(r) && r > 0x7f) || unicode.Is(unicode.Cf, r):
			b.WriteString(fmt.Sprintf("<U+%04X>", r))
		default:
			b.WriteRune(r)
		}
		i += n
	}
	flush()
	return b.String()
}

// PieceText returns a piece as JSON reports give it: its text when it is
// whole UTF-8, else its Readable form.
func PieceText(piece []byte) string {
	if utf8.Valid(piece) {
		return string(piece)
	}
	return Readable(piece)
}
