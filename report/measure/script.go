package measure

import (
	"unicode"
	"unicode/utf8"
)

// Script is a class of writing system that fertility is broken down by:
// one of the Unicode Script property values that the report names, the
// decimal digits of any script, or Other for the rest.
type Script uint8

// The script classes, in the order reports list them.
const (
	Latin Script = iota
	Cyrillic
	Greek
	Arabic
	Hebrew
	Devanagari
	Han
	Kana // Hiragana and Katakana
	Hangul
	Digits // General Category Nd, whatever the script
	OtherScript
	NumScripts
)

var scriptNames = [NumScripts]string{"Latin", "Cyrillic", "Greek", "Arabic", "Hebrew", "Devanagari", "Han",
	"Hiragana and Katakana", "Hangul", "digits", "other"}

// String returns the class's name as reports print it.
func (s Script) String() string {
	if s < NumScripts {
		return scriptNames[s]
	}
	return "other"
}

// scriptTables are the Unicode Script property tables (Go's unicode
// package) behind each class but Digits and OtherScript.
var scriptTables = []struct {
	t *unicode.RangeTable
	s Script
}{
	{unicode.Latin, Latin}, {unicode.Cyrillic, Cyrillic}, {unicode.Greek, Greek}, {unicode.Arabic, Arabic},
	{unicode.Hebrew, Hebrew}, {unicode.Devanagari, Devanagari}, {unicode.Han, Han}, {unicode.Hiragana, Kana},
	{unicode.Katakana, Kana}, {unicode.Hangul, Hangul},
}

// ScriptOf returns the class of r: Digits for a decimal digit (General
// Category Nd) of any script, else the class of its Unicode Script
// property, or OtherScript for a script the report does not name (Common
// and Inherited included).
func ScriptOf(r rune) Script {
	if r < utf8.RuneSelf {
		switch {
		case '0' <= r && r <= '9':
			return Digits
		case 'a' <= r && r <= 'z', 'A' <= r && r <= 'Z':
			return Latin
		}
		return OtherScript
	}
	if unicode.IsDigit(r) {
		return Digits
	}
	for _, st := range scriptTables {
		if unicode.Is(st.t, r) {
			return st.s
		}
	}
	return OtherScript
}

// WordScript returns the class a word is counted under: that of its first
// letter (General Category L) whose script the report names, else Digits
// when it holds a decimal digit, else OtherScript. So "TH9" is Latin,
// "7731" digits, and a Katakana word led by the Common prolonged sound mark
// is still Hiragana and Katakana.
func WordScript(word []byte) Script {
	digits := false
	for i := 0; i < len(word); {
		c := word[i]
		if c < utf8.RuneSelf {
			i++
			switch {
			case 'a' <= c && c <= 'z', 'A' <= c && c <= 'Z':
				return Latin
			case '0' <= c && c <= '9':
				digits = true
			}
			continue
		}
		r, n := utf8.DecodeRune(word[i:])
		i += n
		if unicode.IsLetter(r) {
			if s := ScriptOf(r); s != OtherScript {
				return s
			}
		} else if unicode.IsDigit(r) {
			digits = true
		}
	}
	if digits {
		return Digits
	}
	return OtherScript
}

// hasWordChar reports whether a word segment counts as a word: it holds a
// letter (General Category L) or a decimal digit (Nd).
func HasWordChar(seg []byte) bool {
	for i := 0; i < len(seg); {
		c := seg[i]
		if c < utf8.RuneSelf {
			if 'a' <= c && c <= 'z' || 'A' <= c && c <= 'Z' || '0' <= c && c <= '9' {
				return true
			}
			i++
			continue
		}
		r, n := utf8.DecodeRune(seg[i:])
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			return true
		}
		i += n
	}
	return false
}
