package bpe

import (
	"bytes"
	"slices"
	"unicode/utf8"
)

// Where a bundle's raw text may be cut, so that the stretches, run through
// the pipeline apart (all but the first as continuations: see state.cont),
// give the ids of the whole. Two places are tried:
//
//   - after a line break that follows a character other than white space
//     and precedes a letter ("x\n|y"): the cut of cutNewline;
//   - before a space that follows a letter or digit and precedes a letter
//     ("x| y"): the cut of cutSpace.
//
// The letters are ASCII ones and those of wideLetter (basic Greek and
// Cyrillic, kana, Han, Hangul); the character before a line break is a
// visible ASCII one, a wideLetter, or CJK or full-width punctuation.
//
// A place is allowed when every part of the pipeline leaves it alone:
//
//   - no added token or special string holds the line break (or the
//     space, or what the normalizers make of them), so none spans the cut; none takes white space on the side
//     that a cut would take from it (lstrip before a line-break cut,
//     rstrip before a space cut);
//   - the normalizers act on each character alone and keep ASCII ones as
//     they are (NFC, NFD, NFKC, NFKD, Lowercase, Replace of one character
//     that is not ASCII or is the space) or act at the start of the text
//     only (Prepend, left out of a continuation);
//   - some pre-tokenizer stage always ends a piece there, whatever
//     follows (the hand scanners of the common split patterns, Whitespace,
//     WhitespaceSplit, Metaspace with split before a space cut), and the
//     stages before it at most cut the piece there too (Split by a
//     literal with neither the line break nor the space, Digits,
//     Punctuation, Isolated hand scanners of one class, Metaspace where
//     its prepend cannot tell the sides apart, ByteLevel's prefix space
//     before a space cut);
//   - or, with no pre-tokenizer, the model's cut table (cutTable) allows a
//     cut between the characters the two sides normalize to.
//
// fuzzStreamCut holds this to the whole text's ids on every bundle the
// tests have.

// Which of the two places a cut is.
const (
	cutNewline = iota
	cutSpace
)

// rawCuts is a bundle's rule, for each kind of cut: x says which ASCII
// characters may stand before it (before the line break, or before the
// space), y which after it; xWide and yWide whether the characters of
// wideLetter (and, before a line break, wideGraphic) may too. A cut is
// allowed where both sides are.
type rawCuts struct {
	x, y         [2][utf8.RuneSelf]bool
	xWide, yWide [2]bool
	// free says that a continuation runs as a text of its own would (no
	// Prepend, no Metaspace prepend for the first piece only), so that
	// callers that tokenize the stretches as texts get the ids too.
	free bool
}

// last returns the last place in buf at from or after where it may be cut,
// or 0 when there is none.
func (rc *rawCuts) last(buf []byte, from int) int {
	for i := len(buf) - 2; i >= max(from, 1); i-- {
		switch b := buf[i]; {
		case b == ' ':
			if rc.allows(cutSpace, buf[:i], buf[i+1:]) {
				return i
			}
		case buf[i-1] == '\n' && i >= 2:
			if rc.allows(cutNewline, buf[:i-1], buf[i:]) {
				return i
			}
		}
	}
	return 0
}

// allows reports whether a cut of the kind may fall between the last
// character of left and the first of right (less the line break or the
// space between them).
func (rc *rawCuts) allows(kind int, left, right []byte) bool {
	if x := left[len(left)-1]; x < utf8.RuneSelf {
		if !rc.x[kind][x] {
			return false
		}
	} else if r, _ := utf8.DecodeLastRune(left); !rc.xWide[kind] || !(wideLetter(r) || (kind == cutNewline && wideGraphic(r))) {
		return false
	}
	if y := right[0]; y < utf8.RuneSelf {
		return rc.y[kind][y]
	}
	r, _ := utf8.DecodeRune(right)
	return rc.yWide[kind] && wideLetter(r)
}

// allowsASCII is allows for ASCII x and y alone (Encoder.FreeCutAt).
func (rc *rawCuts) allowsASCII(kind int, x, y byte) bool {
	return x < utf8.RuneSelf && y < utf8.RuneSelf && rc.x[kind][x] && rc.y[kind][y]
}

// wideLetter holds for the letters beyond ASCII that the rule allows on
// either side of a cut: the basic Greek and Cyrillic letters, kana, the
// unified Han ideographs and the Hangul syllables. Each is a starter
// (nothing before it composes with it), and its normalized forms start and
// end with a letter or a mark, never white space.
func wideLetter(r rune) bool {
	switch {
	case 0x391 <= r && r <= 0x3a9 && r != 0x3a2, 0x3b1 <= r && r <= 0x3c9: // Greek
		return true
	case 0x410 <= r && r <= 0x44f: // Cyrillic
		return true
	case 0x3041 <= r && r <= 0x3096, 0x30a1 <= r && r <= 0x30fa: // hiragana, katakana
		return true
	case 0x4e00 <= r && r <= 0x9fff, 0xac00 <= r && r <= 0xd7a3: // Han, Hangul
		return true
	}
	return false
}

// wideGraphic holds for the other characters beyond ASCII that may stand
// before a line-break cut: CJK punctuation (not the ideographic space) and
// the full-width forms of ASCII, none of them white space in any form.
func wideGraphic(r rune) bool {
	return 0x3001 <= r && r <= 0x303f || 0xff01 <= r && r <= 0xff5e
}

// isASCIIDigit and isGraphic are, with isASCIILetter, the ASCII classes
// of the rule.
func isASCIIDigit(b byte) bool { return '0' <= b && b <= '9' }
func isGraphic(b byte) bool    { return '!' <= b && b <= '~' }

// bundleCuts returns the rule of e's bundle, or nil when it allows no cut.
func bundleCuts(e *Encoder) *rawCuts {
	p := e.v.pipe
	if p == nil || e.re != nil {
		return nil
	}
	allow := [2]bool{true, true}
	mid := [2]string{"\n", " "}
	for k := range allow {
		for _, sp := range e.specials {
			if bytes.Contains(sp, []byte(mid[k])) {
				allow[k] = false
			}
		}
	}
	for _, set := range []*addedSet{&p.added, &p.addedNorm} {
		for _, t := range set.toks {
			for k := range allow {
				if bytes.Contains(t.content, []byte(mid[k])) {
					allow[k] = false
				}
			}
			if t.lstrip {
				allow[cutNewline] = false
			}
			if t.rstrip {
				allow[cutSpace] = false
			}
		}
	}
	spaceKept := true // the normalizers leave the space as it is
	prepends := false
	if !normCutSafe(p.norm, &spaceKept, &prepends) {
		return nil
	}
	// Tokens matched after normalization meet the line break and the space
	// as the normalizers leave them (a space replaced by a marker, say).
	s := e.get()
	for k, m := range mid {
		nm := normCont(s, p, []byte(m))
		for _, t := range p.addedNorm.toks {
			if bytes.Contains(t.content, nm) {
				allow[k] = false
			}
		}
	}
	e.put(s)
	rc := &rawCuts{free: !prepends}
	if len(p.pre) == 0 {
		if p.cuts == nil {
			return nil
		}
		modelCuts(e, rc, allow)
		return rc.orNil()
	}
	for k := range allow {
		if k == cutSpace && !spaceKept {
			allow[k] = false // the stages would see another character there
		}
		if allow[k] && !stagesCut(p.pre, k, &rc.free) {
			allow[k] = false
		}
	}
	for c := range utf8.RuneSelf {
		b := byte(c)
		rc.x[cutNewline][c] = allow[cutNewline] && isGraphic(b)
		rc.x[cutSpace][c] = allow[cutSpace] && (isASCIILetter(b) || isASCIIDigit(b))
		for k := range allow {
			rc.y[k][c] = allow[k] && isASCIILetter(b)
		}
	}
	rc.xWide, rc.yWide = allow, allow
	return rc.orNil()
}

func (rc *rawCuts) orNil() *rawCuts {
	for k := range rc.x {
		if slices.Contains(rc.x[k][:], true) && slices.Contains(rc.y[k][:], true) {
			return rc
		}
	}
	return nil
}

// normCutSafe reports whether n acts on each character alone and keeps
// the ASCII ones (but the space, which it records in spaceKept), or
// prepends (which it records in prepends).
func normCutSafe(n normalizer, spaceKept, prepends *bool) bool {
	switch n := n.(type) {
	case nil:
		return true
	case *nfx, *lowercase:
		return true
	case *prepend:
		*prepends = true
		return true
	case *replaceString:
		r, size := utf8.DecodeRune(n.old)
		if size != len(n.old) || (r < utf8.RuneSelf && r != ' ') {
			return false
		}
		if r == ' ' {
			*spaceKept = false
		}
		return true
	case *normSeq:
		for _, x := range n.list {
			if !normCutSafe(x, spaceKept, prepends) {
				return false
			}
		}
		return true
	}
	return false
}

// stagesCut reports whether the stages always end a piece at a cut of the
// kind, as the package comment above says; free is cleared by a stage that
// a continuation runs differently.
func stagesCut(pre []stage, kind int, free *bool) bool {
	for _, st := range pre {
		switch st := st.(type) {
		case *scanStage:
			switch st.name {
			case "gpt2", "digits", "digit-groups", "letters-marks", "whitespace":
				return true
			case "number-groups", "kana-han":
				continue
			}
			return false
		case *charSplit:
			if st.white { // WhitespaceSplit: white space ends every piece
				return true
			}
			continue // Digits, Punctuation: neither side of the cut is a match
		case *stringSplit:
			if bytes.ContainsAny(st.lit, "\n ") {
				return false
			}
			continue
		case *metaspaceStage:
			if st.scheme == prependFirst {
				*free = false
			}
			if kind == cutSpace {
				// The right side starts with the space, so gets no
				// prepend; with split a piece starts there, and without,
				// the stages after it see no space.
				return st.split
			}
			if kind == cutNewline && st.scheme == prependAlways {
				return false // the right side would get a prepend that the whole's piece has not
			}
			continue
		case *prefixStage:
			if kind == cutSpace && bytes.Equal(st.s, []byte(" ")) {
				continue // the right side starts with the space already
			}
			return false
		}
		return false
	}
	return false
}

// modelCuts fills rc, for a bundle with no pre-tokenizer, from the model's
// cut table: the normalizers act on each character alone, so the
// normalized text is cut between what the characters on the two sides
// become, and the table decides by the bytes there. A line-break cut is
// between the line break and what follows it, whatever came before; a
// space cut between what comes before it and the space's form, whatever
// follows.
func modelCuts(e *Encoder, rc *rawCuts, allow [2]bool) {
	p := e.v.pipe
	s := e.get()
	defer e.put(s)
	// at reports whether the table cuts the normalized form of left+right
	// where left's form ends.
	at := func(left, right []byte) bool {
		nl := append([]byte(nil), normCont(s, p, left)...)
		nw := normCont(s, p, append(append([]byte(nil), left...), right...))
		return len(nl) > 0 && len(nw) > len(nl) && bytes.HasPrefix(nw, nl) && p.cuts.next(nw, len(nl)-1) == len(nl)
	}
	for c := range utf8.RuneSelf {
		b := byte(c)
		if allow[cutNewline] && isASCIILetter(b) && at([]byte("a\n"), []byte{b}) {
			rc.y[cutNewline][c] = true
		}
		if allow[cutSpace] && (isASCIILetter(b) || isASCIIDigit(b)) && at([]byte{b}, []byte(" a")) {
			rc.x[cutSpace][c] = true
		}
	}
	if allow[cutNewline] {
		for c := range utf8.RuneSelf {
			rc.x[cutNewline][c] = isGraphic(byte(c))
		}
		rc.xWide[cutNewline] = true
	}
	if allow[cutSpace] {
		for c := range utf8.RuneSelf {
			rc.y[cutSpace][c] = isASCIILetter(byte(c))
		}
		rc.yWide[cutSpace] = true
		// A character beyond ASCII ends, normalized, in a continuation
		// byte: the table must cut before the space's form after each.
		sp := normCont(s, p, []byte(" "))
		wide := len(sp) > 0
		for cb := 0x80; cb < 0xc0 && wide; cb++ {
			t := append([]byte{0xd0, byte(cb)}, sp...)
			t = append(t, 'a')
			wide = p.cuts.next(t, 1) == 2
		}
		rc.xWide[cutSpace] = wide
	}
}

// normCont returns text normalized as a continuation.
func normCont(s *state, p *pipeline, text []byte) []byte {
	if p.contNorm == nil {
		return text
	}
	out, _ := p.contNorm.normalize(s, text, nil)
	return out
}

// withoutPrepend returns n less its Prepend steps (nil when none is left):
// the normalizer of a continuation's start.
func withoutPrepend(n normalizer) normalizer {
	switch n := n.(type) {
	case *prepend:
		return nil
	case *normSeq:
		var list []normalizer
		for _, x := range n.list {
			if y := withoutPrepend(x); y != nil {
				list = append(list, y)
			}
		}
		switch len(list) {
		case 0:
			return nil
		case 1:
			return list[0]
		}
		return &normSeq{list}
	}
	return n
}
