package bpe

import (
	"fmt"
	"unicode"
	"unicode/utf8"
)

// GPT2Pattern is the pre-tokenization rule of GPT-2, as a regular
// expression. The encoder runs a hand scanner that gives exactly the same
// pieces (a fuzz test holds the two together); the pattern itself is used
// only when a caller asks for it, or for another pattern, by name.
const GPT2Pattern = `'s|'t|'re|'ve|'m|'ll|'d| ?\p{L}+| ?\p{N}+| ?[^\s\p{L}\p{N}]+|\s+(?!\S)|\s+`

// Character classes of the GPT-2 rule.
const (
	clsOther  uint8 = iota // neither letter, number nor white space (also any invalid byte)
	clsLetter              // Unicode L*
	clsNumber              // Unicode N*
	clsSpace               // Unicode White_Space
)

// clsMulti marks, in byteClass, a byte that starts a multi-byte character
// (or is invalid): its class needs decoding.
const clsMulti uint8 = 4

var (
	asciiClass [utf8.RuneSelf]uint8
	byteClass  [256]uint8
)

func init() {
	for b := 0; b < 256; b++ {
		if b < utf8.RuneSelf {
			asciiClass[b] = runeClass(rune(b))
			byteClass[b] = asciiClass[b]
		} else {
			byteClass[b] = clsMulti
		}
	}
}

func runeClass(r rune) uint8 {
	switch {
	case unicode.IsLetter(r):
		return clsLetter
	case unicode.IsNumber(r):
		return clsNumber
	case unicode.IsSpace(r):
		return clsSpace
	}
	return clsOther
}

// classAt returns the class of the character at t[i] and its length in
// bytes. An invalid UTF-8 byte is one character of class other, as the
// replacement character U+FFFD (a symbol) would be.
func classAt(t []byte, i int) (uint8, int) {
	if b := t[i]; b < utf8.RuneSelf {
		return asciiClass[b], 1 // small enough to inline: the common case
	}
	return classOfRune(t, i)
}

func classOfRune(t []byte, i int) (uint8, int) {
	r, n := utf8.DecodeRune(t[i:])
	if r == utf8.RuneError && n <= 1 {
		return clsOther, 1
	}
	return runeClass(r), n
}

// runOf returns the end of the run of class c that continues at t[i].
func runOf(t []byte, i int, c uint8) int {
	for i < len(t) {
		x := byteClass[t[i]]
		if x == c {
			i++
			continue
		}
		if x != clsMulti {
			return i
		}
		cc, n := classOfRune(t, i)
		if cc != c {
			return i
		}
		i += n
	}
	return i
}

// contraction returns the length of the contraction ('s 't 're 've 'm 'll
// 'd, lower case only) that starts at t[i], which holds an apostrophe, or 0.
func contraction(t []byte, i int) int {
	if i+1 >= len(t) {
		return 0
	}
	switch t[i+1] {
	case 's', 't', 'm', 'd':
		return 2
	case 'r', 'v':
		if i+2 < len(t) && t[i+2] == 'e' {
			return 3
		}
	case 'l':
		if i+2 < len(t) && t[i+2] == 'l' {
			return 3
		}
	}
	return 0
}

// nextGPT2 returns the end of the GPT-2 pre-token that starts at t[i],
// i < len(t). The alternatives are tried in the order the pattern lists them.
func nextGPT2(t []byte, i int) int {
	c, n := byteClass[t[i]], 1
	if c == clsMulti {
		c, n = classOfRune(t, i)
	}
	switch c {
	case clsLetter, clsNumber:
		return runOf(t, i+n, c)
	case clsOther:
		if t[i] == '\'' {
			if m := contraction(t, i); m > 0 {
				return i + m
			}
		}
		return runOf(t, i+n, clsOther)
	}
	// White space. A plain space directly before a non-space character
	// starts that character's piece (" ?\p{L}+" and its two siblings).
	if t[i] == ' ' && i+1 < len(t) {
		c2, n2 := byteClass[t[i+1]], 1
		if c2 == clsMulti {
			c2, n2 = classOfRune(t, i+1)
		}
		if c2 != clsSpace {
			return runOf(t, i+1+n2, c2)
		}
	}
	// A run of white space: "\s+(?!\S)" leaves its last character to the
	// piece that follows, unless the run ends the text; a run of one
	// character before a non-space falls to "\s+".
	j, last := i+n, i
	for j < len(t) {
		cc, m := classAt(t, j)
		if cc != clsSpace {
			break
		}
		last = j
		j += m
	}
	if j == len(t) || last == i {
		return j
	}
	return last
}

// regexSplitter pre-tokenizes with a user's regular expression. Text that
// no match covers becomes pieces of its own, so no byte is lost.
type regexSplitter struct {
	re *splitRegex
}

// newRegexSplitter compiles pattern; it fails as compileSplitRegex does
// (a pattern that does not compile, or that matches the empty text).
func newRegexSplitter(pattern string) (*regexSplitter, error) {
	re, err := compileSplitRegex(pattern)
	if err != nil {
		return nil, fmt.Errorf("split pattern: %w", err)
	}
	return &regexSplitter{re: re}, nil
}

// spans calls fn with the byte span of every piece of t, in order; the
// pieces tile t. It returns an error wrapping ErrPatternTimeout when the
// search ran past MatchTimeout (the rest of t is then one piece).
func (s *regexSplitter) spans(t []byte, fn func(start, end int)) error {
	ms, err := s.re.matches(t, nil, nil)
	pos := 0
	for i := 0; i < len(ms); i += 2 {
		if ms[i] > pos {
			fn(pos, ms[i])
		}
		fn(ms[i], ms[i+1])
		pos = ms[i+1]
	}
	if pos < len(t) {
		fn(pos, len(t))
	}
	return err
}
