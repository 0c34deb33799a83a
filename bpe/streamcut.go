package bpe

import (
	"bytes"
	"unicode/utf8"
)

// Where a bundle's raw text may be cut, so that the stretches, run through
// the pipeline apart (all but the first as continuations: see state.cont),
// give the ids of the whole. Two places are tried, both between ASCII
// characters:
//
//   - after a line break that follows a character other than white space
//     and precedes a letter ("x\n|y"): the cut of cutNewline;
//   - before a space that follows a letter or digit and precedes a letter
//     ("x| y"): the cut of cutSpace.
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

// rawCuts is a bundle's rule: ok[kind][x<<7|y] says whether the cut of
// that kind is allowed between the ASCII characters x and y around it (x
// before the line break, or before the space; y after it).
type rawCuts struct {
	ok [2][1 << 14]bool
	// free says that a continuation runs as a text of its own would (no
	// Prepend, no Metaspace prepend for the first piece only), so that
	// callers that tokenize the stretches as texts get the ids too.
	free bool
}

// last returns the last place in buf at from or after where it may be cut,
// or 0 when there is none.
func (rc *rawCuts) last(buf []byte, from int) int {
	for i := len(buf) - 2; i >= max(from, 2); i-- {
		switch b := buf[i]; {
		case b == ' ':
			if x, y := buf[i-1], buf[i+1]; x|y < utf8.RuneSelf && rc.ok[cutSpace][int(x)<<7|int(y)] {
				return i
			}
		case buf[i-1] == '\n':
			if x := buf[i-2]; x|b < utf8.RuneSelf && rc.ok[cutNewline][int(x)<<7|int(b)] {
				return i
			}
		}
	}
	return 0
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
	for x := range utf8.RuneSelf {
		for y := range utf8.RuneSelf {
			xb, yb := byte(x), byte(y)
			rc.ok[cutNewline][x<<7|y] = allow[cutNewline] && isGraphic(xb) && isASCIILetter(yb)
			rc.ok[cutSpace][x<<7|y] = allow[cutSpace] && (isASCIILetter(xb) || isASCIIDigit(xb)) && isASCIILetter(yb)
		}
	}
	return rc.orNil()
}

func (rc *rawCuts) orNil() *rawCuts {
	for k := range rc.ok {
		for _, ok := range rc.ok[k] {
			if ok {
				return rc
			}
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
// cut table: a cut of each kind between x and y is allowed where the two
// sides' normalized forms may be cut between them.
func modelCuts(e *Encoder, rc *rawCuts, allow [2]bool) {
	p := e.v.pipe
	s := e.get()
	defer e.put(s)
	sample := make([]byte, 0, 4)
	for k := range allow {
		if !allow[k] {
			continue
		}
		for x := range utf8.RuneSelf {
			for y := range utf8.RuneSelf {
				xb, yb := byte(x), byte(y)
				if !isASCIILetter(yb) || (k == cutNewline && !isGraphic(xb)) || (k == cutSpace && !isASCIILetter(xb) && !isASCIIDigit(xb)) {
					continue
				}
				// The left side, normalized as a continuation (no
				// Prepend), and the whole: the cut is where the left
				// side's form ends, if the normalizers keep it a prefix.
				left := sample[:0]
				left = append(left, xb)
				if k == cutNewline {
					left = append(left, '\n')
				}
				whole := append(append([]byte(nil), left...), func() []byte {
					if k == cutSpace {
						return []byte{' ', yb}
					}
					return []byte{yb}
				}()...)
				nl := append([]byte(nil), normCont(s, p, left)...)
				nw := normCont(s, p, whole)
				if len(nl) == 0 || !bytes.HasPrefix(nw, nl) || len(nw) == len(nl) {
					continue
				}
				rc.ok[k][x<<7|y] = p.cuts.next(nw, len(nl)-1) == len(nl)
			}
		}
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
