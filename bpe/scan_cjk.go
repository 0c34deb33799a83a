package bpe

import (
	"unicode"
	"unicode/utf8"
)

// The split patterns of bundles that cut a text in three passes, a
// Sequence of Isolated Splits: numbers into groups of up to three, then
// runs of Han and kana, then the rest by a rule that keeps combining marks
// with their letters and tells punctuation (P) from symbols (S) only to
// join them. Each is recognised by its text and run by a hand scanner that
// returns the matches and the text between them as pieces, which is what
// an Isolated Split makes of them.
const (
	// NumberGroupsPattern matches a run of up to three numbers.
	NumberGroupsPattern = `\p{N}{1,3}`
	// KanaHanPattern matches a run of CJK unified ideographs
	// (U+4E00-U+9FA5), hiragana (U+3040-U+309F) and katakana
	// (U+30A0-U+30FF).
	KanaHanPattern = "[\u4e00-\u9fa5\u3040-\u309f\u30a0-\u30ff]+"
	// LettersMarksPattern is the GPT-2 rule over letters with their
	// marks, where an ASCII punctuation character leads an ASCII word,
	// any one other character (not a line break) leads a letter run, and
	// punctuation and symbols run together.
	LettersMarksPattern = "[!\"#$%&'()*+,\\-./:;<=>?@\\[\\\\\\]^_`{|}~][A-Za-z]+|[^\\r\\n\\p{L}\\p{P}\\p{S}]?[\\p{L}\\p{M}]+| ?[\\p{P}\\p{S}]+[\\r\\n]*|\\s*[\\r\\n]+|\\s+(?!\\S)|\\s+"
)

// nextNumberGroups returns the end of the piece at t[i] under an Isolated
// Split by NumberGroupsPattern: up to three numbers, or the text up to the
// next number.
func nextNumberGroups(t []byte, i int) int {
	c, n := classAt(t, i)
	j := i + n
	if c == clsNumber {
		for k := 1; k < 3 && j < len(t); k++ {
			c2, n2 := classAt(t, j)
			if c2 != clsNumber {
				break
			}
			j += n2
		}
		return j
	}
	for j < len(t) {
		c2, n2 := classAt(t, j)
		if c2 == clsNumber {
			break
		}
		j += n2
	}
	return j
}

// isKanaHan reports whether a valid character of KanaHanPattern's class
// starts at t[i]; they are all three bytes long.
func isKanaHan(t []byte, i int) bool {
	b := t[i]
	if b < 0xE3 || b > 0xE9 || i+2 >= len(t) {
		return false
	}
	r, n := utf8.DecodeRune(t[i:])
	return n == 3 && (0x4e00 <= r && r <= 0x9fa5 || 0x3040 <= r && r <= 0x30ff)
}

// nextKanaHan returns the end of the piece at t[i] under an Isolated Split
// by KanaHanPattern: a run of its characters, or the text up to the next
// one. The text between runs is walked a byte at a time: a lead byte of
// 0xE3-0xE9 is never inside another character, valid or not, so it starts
// a character wherever it is, as utf8.DecodeRune steps through the text.
func nextKanaHan(t []byte, i int) int {
	j := i
	if isKanaHan(t, i) {
		for j < len(t) && isKanaHan(t, j) {
			j += 3
		}
		return j
	}
	for j++; j < len(t) && !isKanaHan(t, j); j++ {
	}
	return j
}

// Character classes of LettersMarksPattern.
const (
	lmOther  uint8 = iota // numbers and controls, format and unassigned characters: neither of the others
	lmLetter              // \p{L} or \p{M}
	lmPunct               // \p{P} or \p{S}, and an invalid byte (read as U+FFFD, a symbol)
	lmSpace               // \s
)

var lmASCII = func() (c [utf8.RuneSelf]uint8) {
	for b := range c {
		c[b] = lmRuneClass(rune(b))
	}
	return c
}()

func lmRuneClass(r rune) uint8 {
	switch {
	case unicode.IsLetter(r) || unicode.IsMark(r):
		return lmLetter
	case unicode.IsPunct(r) || unicode.IsSymbol(r):
		return lmPunct
	case unicode.IsSpace(r):
		return lmSpace
	}
	return lmOther
}

func lmClassAt(t []byte, i int) (uint8, int) {
	if b := t[i]; b < utf8.RuneSelf {
		return lmASCII[b], 1
	}
	r, n := utf8.DecodeRune(t[i:])
	if r == utf8.RuneError && n <= 1 {
		return lmPunct, 1
	}
	return lmRuneClass(r), n
}

// lmRun returns the end of the run of class c that continues at t[j].
func lmRun(t []byte, j int, c uint8) int {
	for j < len(t) {
		c2, n := lmClassAt(t, j)
		if c2 != c {
			break
		}
		j += n
	}
	return j
}

func isASCIILetter(b byte) bool { return 'a' <= b|0x20 && b|0x20 <= 'z' }

// nextLettersMarks returns the end of the piece at t[i] under an Isolated
// Split by LettersMarksPattern, trying the alternatives in the pattern's
// order; a character at which none matches starts a piece of such
// characters, up to the next place where one does.
func nextLettersMarks(t []byte, i int) int {
	b := t[i]
	c, n := lmClassAt(t, i)
	next := func() (uint8, int) {
		if i+n < len(t) {
			return lmClassAt(t, i+n)
		}
		return lmOther, 0
	}
	switch c {
	case lmLetter:
		// "[^\r\n\p{L}\p{P}\p{S}]?[\p{L}\p{M}]+" with a mark taken by the
		// optional part or by the run: the same run either way.
		return lmRun(t, i+n, lmLetter)
	case lmPunct:
		// An ASCII punctuation character and ASCII letters; else
		// " ?[\p{P}\p{S}]+[\r\n]*".
		if b < utf8.RuneSelf && i+1 < len(t) && isASCIILetter(t[i+1]) {
			j := i + 2
			for j < len(t) && isASCIILetter(t[j]) {
				j++
			}
			return j
		}
		return crlfRun(t, lmRun(t, i+n, lmPunct))
	case lmOther:
		if c2, n2 := next(); c2 == lmLetter {
			return lmRun(t, i+n+n2, lmLetter)
		}
		j := i + n
		for j < len(t) {
			c2, n2 := lmClassAt(t, j)
			if c2 != lmOther {
				break
			}
			if j+n2 < len(t) {
				if c3, _ := lmClassAt(t, j+n2); c3 == lmLetter {
					break // this one leads a letter run
				}
			}
			j += n2
		}
		return j
	}
	// White space.
	if !isCRLF(b) {
		if c2, n2 := next(); c2 == lmLetter {
			return lmRun(t, i+n+n2, lmLetter)
		} else if c2 == lmPunct && b == ' ' {
			return crlfRun(t, lmRun(t, i+n+n2, lmPunct))
		}
	}
	// White space is the same class here as for the digits family (no
	// white-space character is a letter, mark, punctuation or symbol).
	return spaceRunEnd(t, i, n)
}

// markChains marks the stages that start the CJK chain: Isolated Splits by
// NumberGroupsPattern, KanaHanPattern and LettersMarksPattern in a row.
func markChains(stages []stage) {
	name := func(st stage) string {
		if sc, ok := st.(*scanStage); ok && sc.drop == nil {
			return sc.name
		}
		return ""
	}
	for k := 0; k+2 < len(stages); k++ {
		if name(stages[k]) == "number-groups" && name(stages[k+1]) == "kana-han" && name(stages[k+2]) == "letters-marks" {
			stages[k].(*scanStage).chain = true
		}
	}
}

// runChain gives the pre-tokens of p under the CJK chain, as its three
// stages would, to s.sink: a group of up to three numbers, a run of Han
// and kana, or a stretch with neither, each then cut by the letters-marks
// scanner. A run of Han and kana holds no number, so it lies inside one
// piece of the first stage; the stretch between them is found in one scan
// rather than one a stage.
func (s *state) runChain(p []byte) {
	for i := 0; i < len(p); {
		var j int
		switch c, _ := classAt(p, i); {
		case c == clsNumber:
			j = nextNumberGroups(p, i)
		case isKanaHan(p, i):
			j = nextKanaHan(p, i)
		default:
			j = plainEnd(p, i)
		}
		for a := i; a < j; {
			b := i + nextLettersMarks(p[i:j], a-i)
			s.sink(p[a:b], nil)
			a = b
		}
		i = j
	}
}

// plainEnd returns the end of the stretch at t[i] that holds no number
// and no Han or kana character.
func plainEnd(t []byte, i int) int {
	for i < len(t) {
		b := t[i]
		if b < utf8.RuneSelf {
			if asciiClass[b] == clsNumber {
				return i
			}
			i++
			continue
		}
		if isKanaHan(t, i) {
			return i
		}
		c, n := classOfRune(t, i)
		if c == clsNumber {
			return i
		}
		i += n
	}
	return i
}
