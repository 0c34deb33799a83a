package measure

import (
	"unicode/utf8"

	"github.com/rivo/uniseg"
)

// Word-break classes of the ASCII characters (UAX #29, Table 3 of Unicode
// 15.0.0, and WordBreakProperty.txt): the ones nextSegment decides alone.
const (
	WBOther   = iota // no property that joins it to a neighbour here, such as '-', '(', '"'
	WBAlnum          // ALetter A-Z a-z, Numeric 0-9
	WBMid            // MidLetter ':', MidNum ',' ';', MidNumLet '.', Single_Quote '\''
	WBSpace          // WSegSpace ' '
	WBCR             // CR
	WBNewline        // LF, and Newline VT and FF
	wbSlow           // ExtendNumLet '_': left to uniseg
)

// asciiGap holds the ASCII characters that can start no word: all but
// letters, digits and '_'.
var ASCIIGap = func() (t [utf8.RuneSelf]bool) {
	for c := range t {
		t[c] = ASCIIWordBreak[c] != WBAlnum && ASCIIWordBreak[c] != wbSlow
	}
	return t
}()

var ASCIIWordBreak = func() (t [utf8.RuneSelf]uint8) {
	for c := 'a'; c <= 'z'; c++ {
		t[c], t[c-'a'+'A'] = WBAlnum, WBAlnum
	}
	for c := '0'; c <= '9'; c++ {
		t[c] = WBAlnum
	}
	for _, c := range ":,;.'" {
		t[c] = WBMid
	}
	t[' '], t['\r'], t['\n'], t['\v'], t['\f'], t['_'] = WBSpace, WBCR, WBNewline, WBNewline, WBNewline, wbSlow
	return t
}()

// nextSegment returns the end of the word-boundary segment that starts at
// i, a boundary. ASCII text is decided here, by the rules of UAX #29 that
// can apply to it, whenever the characters that follow are ASCII too;
// everything else is left to uniseg, started afresh at i. Starting afresh
// at a boundary gives the same boundaries, since no rule joins across one
// (the tests check this against uniseg run over the whole text).
func NextSegment(t []byte, i int) int {
	if c := t[i]; c < utf8.RuneSelf {
		switch ASCIIWordBreak[c] {
		case WBAlnum, wbSlow:
			if j, ok := asciiWord(t, i); ok {
				return j
			}
		case WBSpace:
			// WB3d joins spaces; WB4 would join an Extend or Format after.
			j := i + 1
			for j < len(t) && t[j] == ' ' {
				j++
			}
			if j == len(t) || t[j] < utf8.RuneSelf {
				return j
			}
		case WBNewline:
			return i + 1 // WB3a, WB3b
		case WBCR:
			if i+1 < len(t) && t[i+1] == '\n' {
				return i + 2 // WB3
			}
			return i + 1
		case WBOther, WBMid:
			// A MidX that starts a segment joins nothing after it (WB6 and
			// WB11 need a letter or digit before it); WB999 otherwise.
			if i+1 == len(t) || t[i+1] < utf8.RuneSelf {
				return i + 1
			}
		}
	}
	seg, _, _ := uniseg.FirstWord(t[i:], -1)
	return i + len(seg)
}

// alnumRunEnds reports whether a run of ASCII letters and digits that
// reaches j ends there for sure: at the end of the text, before an ASCII
// character that joins no word (WB3a, WB999), or before a MidX not followed
// by an ASCII letter or digit (so WB6, WB7, WB11 and WB12 cannot apply).
// asciiWord returns the end of the word that starts at t[i], a letter,
// digit or '_', when the word and the character after it are ASCII. The
// rules: WB5, WB8, WB9, WB10 join letters and digits; WB13a and WB13b join
// '_' (ExtendNumLet) to them and to itself; WB6 and WB7 join a letter, one
// of ": . '" (MidLetter, MidNumLet, Single_Quote) and a letter; WB11 and
// WB12 join a digit, one of ", ; . '" (MidNum, MidNumLet, Single_Quote) and
// a digit. ok is false when a non-ASCII character decides.
func asciiWord(t []byte, i int) (end int, ok bool) {
	const (
		al = iota + 1
		num
		ex
	)
	kind := func(c byte) int {
		switch {
		case c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z':
			return al
		case c >= '0' && c <= '9':
			return num
		case c == '_':
			return ex
		}
		return 0
	}
	prev := kind(t[i])
	j := i + 1
	for j < len(t) {
		c := t[j]
		if c >= utf8.RuneSelf {
			return 0, false
		}
		if k := kind(c); k != 0 {
			prev = k
			j++
			continue
		}
		if j+1 >= len(t) {
			return j, true
		}
		d := t[j+1]
		if d >= utf8.RuneSelf {
			return 0, false
		}
		switch {
		case prev == al && (c == ':' || c == '.' || c == '\'') && kind(d) == al:
		case prev == num && (c == ',' || c == ';' || c == '.' || c == '\'') && kind(d) == num:
		default:
			return j, true
		}
		prev = kind(d)
		j += 2
	}
	return j, true
}

func AlnumRunEnds(t []byte, j int) bool {
	if j == len(t) {
		return true
	}
	d := t[j]
	if d >= utf8.RuneSelf {
		return false
	}
	switch ASCIIWordBreak[d] {
	case WBOther, WBSpace, WBCR, WBNewline:
		return true
	case WBMid:
		return j+1 == len(t) || t[j+1] < utf8.RuneSelf && ASCIIWordBreak[t[j+1]] != WBAlnum
	}
	return false
}
