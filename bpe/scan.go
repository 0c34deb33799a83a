package bpe

import (
	"strings"
	"unicode"
	"unicode/utf8"
)

// Split patterns that real bundles use, recognised by their text and run
// by hand scanners instead of regexp2. Each scanner is held equal to
// regexp2 on the same pattern by FuzzScannersMatchRegexp.
const (
	// DigitsPattern cuts numbers into single digits, with contractions of
	// any case and a letter run that takes one leading symbol or space.
	DigitsPattern = `(?i:'s|'t|'re|'ve|'m|'ll|'d)|[^\r\n\p{L}\p{N}]?\p{L}+|\p{N}| ?[^\s\p{L}\p{N}]+[\r\n]*|\s*[\r\n]+|\s+(?!\S)|\s+`
	// DigitGroupsPattern is DigitsPattern with numbers cut into groups of
	// up to three digits.
	DigitGroupsPattern = `(?i:'s|'t|'re|'ve|'m|'ll|'d)|[^\r\n\p{L}\p{N}]?\p{L}+|\p{N}{1,3}| ?[^\s\p{L}\p{N}]+[\r\n]*|\s*[\r\n]+|\s+(?!\S)|\s+`
)

// knownScanner returns the hand scanner for a split pattern it
// recognises, with a name for it, or nil. A line break written as itself
// and one written as \r or \n are the same to the regex engine, and bundles
// have both.
func knownScanner(pattern string) (func(t []byte, i int) int, string) {
	switch lineBreaksEscaped.Replace(pattern) {
	case GPT2Pattern:
		return nextGPT2, "gpt2"
	case DigitsPattern:
		return nextDigits1, "digits"
	case DigitGroupsPattern:
		return nextDigits3, "digit-groups"
	case NumberGroupsPattern:
		return nextNumberGroups, "number-groups"
	case KanaHanPattern:
		return nextKanaHan, "kana-han"
	case LettersMarksPattern:
		return nextLettersMarks, "letters-marks"
	}
	return nil, ""
}

var lineBreaksEscaped = strings.NewReplacer("\r", `\r`, "\n", `\n`)

func nextDigits1(t []byte, i int) int { return nextDigitsFamily(t, i, 1) }
func nextDigits3(t []byte, i int) int { return nextDigitsFamily(t, i, 3) }

// contractionFold is contraction with the letters in any case.
func contractionFold(t []byte, i int) int {
	if i+1 >= len(t) {
		return 0
	}
	low := func(c byte) byte { return c | 0x20 }
	switch low(t[i+1]) {
	case 's', 't', 'm', 'd':
		return 2
	case 'r', 'v':
		if i+2 < len(t) && low(t[i+2]) == 'e' {
			return 3
		}
	case 'l':
		if i+2 < len(t) && low(t[i+2]) == 'l' {
			return 3
		}
	}
	return 0
}

func isCRLF(b byte) bool { return b == '\r' || b == '\n' }

// nextDigitsFamily returns the end of the pre-token at t[i] under
// DigitsPattern (maxN 1) or DigitGroupsPattern (maxN 3), trying the
// alternatives in the pattern's order.
func nextDigitsFamily(t []byte, i int, maxN int) int {
	b := t[i]
	c, n := byteClass[b], 1
	if c == clsMulti {
		c, n = classOfRune(t, i)
	}
	switch c {
	case clsLetter:
		return runOf(t, i+n, clsLetter)
	case clsNumber:
		j := i + n
		for k := 1; k < maxN && j < len(t); k++ {
			c2, n2 := classAt(t, j)
			if c2 != clsNumber {
				break
			}
			j += n2
		}
		return j
	}
	if b == '\'' {
		if m := contractionFold(t, i); m > 0 {
			return i + m
		}
	}
	// [^\r\n\p{L}\p{N}]?\p{L}+: one symbol or space (not a line break)
	// before a letter run.
	if !isCRLF(b) && i+n < len(t) {
		if c2, n2 := classAt(t, i+n); c2 == clsLetter {
			return runOf(t, i+n+n2, clsLetter)
		}
	}
	// " ?[^\s\p{L}\p{N}]+[\r\n]*"
	if c == clsOther {
		return crlfRun(t, runOf(t, i+n, clsOther))
	}
	if b == ' ' && i+1 < len(t) {
		if c2, n2 := classAt(t, i+1); c2 == clsOther {
			return crlfRun(t, runOf(t, i+1+n2, clsOther))
		}
	}
	return spaceRunEnd(t, i, n)
}

// spaceRunEnd returns the end of the piece that the white space at t[i]
// (n bytes long) starts under the tail that the digits family and
// LettersMarksPattern share: "\s*[\r\n]+" ends after the run's last
// line break; else "\s+(?!\S)" leaves the last character to what
// follows, unless the run ends the text or is one character long ("\s+").
func spaceRunEnd(t []byte, i, n int) int {
	j, last, lastBreak := i+n, i, -1
	if isCRLF(t[i]) {
		lastBreak = i
	}
	for j < len(t) {
		cc, m := classAt(t, j)
		if cc != clsSpace {
			break
		}
		if isCRLF(t[j]) {
			lastBreak = j
		}
		last = j
		j += m
	}
	if lastBreak >= 0 {
		return lastBreak + 1
	}
	if j == len(t) || last == i {
		return j
	}
	return last
}

func crlfRun(t []byte, j int) int {
	for j < len(t) && isCRLF(t[j]) {
		j++
	}
	return j
}

// isWordRune is \w as the reference library's regex engine reads it:
// alphabetic, marks, decimal digits, connector punctuation, joiners.
func isWordRune(r rune) bool {
	if r < utf8.RuneSelf {
		return ('a' <= r && r <= 'z') || ('A' <= r && r <= 'Z') || ('0' <= r && r <= '9') || r == '_'
	}
	return unicode.IsLetter(r) || unicode.IsMark(r) || unicode.Is(unicode.Nd, r) || unicode.Is(unicode.Pc, r) ||
		unicode.Is(unicode.Nl, r) || unicode.Is(unicode.Other_Alphabetic, r) || unicode.Is(unicode.Join_Control, r)
}

// Classes of the Whitespace pre-tokenizer.
const (
	wsWord = iota
	wsSpace
	wsSymbol
)

func wsClass(t []byte, i int) (int, int) {
	r, n := utf8.DecodeRune(t[i:])
	switch {
	case r == utf8.RuneError && n <= 1:
		return wsSymbol, 1
	case isWordRune(r):
		return wsWord, n
	case unicode.IsSpace(r):
		return wsSpace, n
	}
	return wsSymbol, n
}

// nextWordOrSymbols returns the end of the run of one class (word
// characters, white space, or other symbols) at t[i]: the pieces of
// `\w+|[^\w\s]+`, with the white space between them as pieces of their
// own for dropSpace to leave out.
func nextWordOrSymbols(t []byte, i int) int {
	c, n := wsClass(t, i)
	j := i + n
	for j < len(t) {
		c2, m := wsClass(t, j)
		if c2 != c {
			break
		}
		j += m
	}
	return j
}

// dropSpace reports whether a piece of nextWordOrSymbols is white space.
func dropSpace(p []byte) bool {
	c, _ := wsClass(p, 0)
	return c == wsSpace
}
