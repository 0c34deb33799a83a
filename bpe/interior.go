package bpe

import "runtime"

// Interior is a text whose tokens are counted once, so that the tokens of
// the text wrapped in many different frames (a prompt before it, another
// after it) cost only the encoding of its edges. With the GPT-2 rule, a
// pre-token always ends where a character other than white space is
// followed by ASCII white space, whatever comes before or after the text,
// so the text is cut at the first and last such place and only the head
// and tail are encoded again with each frame. Under a bundle whose
// pipeline allows cuts (streamcut.go) the text is cut at the first and
// last of those, the interior and tail counted as continuations. With
// another split pattern, another bundle, or special strings that hold
// white space, no place is known safe and each frame encodes the whole
// text.
type Interior struct {
	e         *Encoder
	text      []byte
	head, end int // the interior is text[head:end]; head > end means none
	tokens    int // tokens of text[head:end]
}

// Interior counts the interior of text for Interior.Count.
func (e *Encoder) Interior(text []byte) Interior {
	in := Interior{e: e, text: text, head: 1, end: 0}
	var head, end int
	switch {
	case e.v.pipe != nil && e.plan != nil:
		for i := 1; i+1 < len(text); i++ {
			if c, _ := e.plan.last(text[:i+2], i); c == i {
				head = i
				break
			}
		}
		end, _ = e.plan.last(text, 1)
	case e.re != nil || e.v.pipe != nil || e.specialsHoldSpace():
		return in
	default:
		head, end = firstCut(text), safeCut(text)
	}
	if head > 0 && end > head {
		st := e.countCont(text[head:end])
		if st.Err == nil {
			in.head, in.end, in.tokens = head, end, st.Tokens
		}
	}
	return in
}

// countCont counts text as a continuation: a stretch after the start of
// a longer text.
func (e *Encoder) countCont(text []byte) Stats {
	if len(text) >= longText && e.plan != nil && e.v.spm == nil {
		return e.countLong(text, streamChunk, runtime.GOMAXPROCS(0), true)
	}
	s := e.get()
	defer e.put(s)
	var st Stats
	e.countPart(s, text, true, &st)
	return st
}

// Count returns the tokens of before, the text and after, joined, as
// Encoder.Count would give them for the joined text, and the error of a
// split pattern that ran past its time limit (see CountChecked).
func (in Interior) Count(before, after []byte) (int, error) {
	if in.head > in.end {
		return in.e.CountChecked(join(before, in.text, after))
	}
	a, err := in.e.CountChecked(join(before, in.text[:in.head], nil))
	if err != nil {
		return 0, err
	}
	b := in.e.countCont(join(nil, in.text[in.end:], after))
	return a + in.tokens + b.Tokens, b.Err
}

func join(a, b, c []byte) []byte {
	out := make([]byte, 0, len(a)+len(b)+len(c))
	return append(append(append(out, a...), b...), c...)
}

// firstCut returns the first offset in t where a character other than
// white space is followed by an ASCII white-space byte, or 0: the
// counterpart of safeCut from the left.
func firstCut(t []byte) int {
	for i := 1; i < len(t); i++ {
		if b := t[i]; b >= 0x80 || asciiClass[b] != clsSpace {
			continue
		}
		if c, _ := classBefore(t, i); c != clsSpace {
			return i
		}
	}
	return 0
}

// classBefore returns the class of the character that ends at t[i-1].
func classBefore(t []byte, i int) (uint8, int) {
	start := i - 1
	for start > 0 && i-start < 4 && t[start]&0xC0 == 0x80 {
		start--
	}
	c, n := classAt(t, start)
	if start+n != i { // t[start:i] is not one character: the last byte alone is invalid
		return classAt(t, i-1)
	}
	return c, n
}
