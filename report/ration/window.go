package ration

import (
	"io"
	"math"
	"slices"
	"sort"

	"morsel/bpe"
)

// The window of a document read from a Reader (cutter.rd).

// Look-ahead. The choice of a chunk's end looks at the text from the
// chunk's start up to the estimated end of the budget's tokens (at most
// the budget less the frame), plus preTokenSlack bytes for the pre-token
// that crosses it; the estimate needs one mark past it. So the window
// reaches one mark past the budget's tokens and readAhead bytes past the
// end of the text counted. The text is counted a stretch at a time, from
// one free cut (Encoder.FreeCutAt) to the next at least blockMin (or
// fineBlock) bytes on, so a stretch with no such place (one long
// pre-token; under a bundle, a long run with no ASCII word edge, as CJK
// text has) is held whole: --max-document bounds it.
const (
	preTokenSlack = 256
	readAhead     = preTokenSlack + 8
	// lookBehind is the bytes kept before a chunk's start: character
	// edges and sentence ends look a few bytes back.
	lookBehind = 16
	// readSize is how much a window reads at a time.
	readSize = 1 << 20
	// slideMin is the least a window moves by.
	slideMin = 1 << 20
)

// ahead makes the window hold what the choice of the chunk from s that
// ends at minEnd or after may look at.
func (c *cutter) ahead(s, minEnd int) {
	if c.generic {
		return
	}
	c.countTo(-1, s+1)
	ks := c.tokAt(s)
	c.countTo(ks+max(c.r.Budget-c.frameTok, 0), minEnd+64)
	c.fill(c.reached() + readAhead)
}

// exact returns the places where the document's count is exact, and the
// tokens before each less cumBase: the marks, or a fine cutter's cuts.
func (c *cutter) exact() ([]uint32, []uint32) {
	if c.fine {
		return c.cuts, c.cutCums
	}
	return c.marks, c.cums
}

// reached returns where the count has reached, and counted the tokens
// before it less cumBase.
func (c *cutter) reached() int {
	xs, _ := c.exact()
	return int(xs[len(xs)-1])
}

func (c *cutter) counted() int {
	_, ks := c.exact()
	return int(ks[len(ks)-1])
}

// final reports whether the whole document is read and counted.
func (c *cutter) final() bool {
	return c.rd == nil && c.reached() == len(c.text)
}

// tokens returns the document's tokens counted so far (all of them once
// final).
func (c *cutter) tokens() int64 {
	if c.generic {
		return int64(c.genTotal)
	}
	return c.cumBase + int64(c.counted())
}

// size returns the document's bytes read so far.
func (c *cutter) size() int64 { return int64(c.base + len(c.text)) }

// total returns the document's tokens less cumBase once they are all
// counted, else a count larger than any.
func (c *cutter) total() int {
	if c.generic {
		return c.genTotal
	}
	if c.final() {
		return c.counted()
	}
	return math.MaxInt
}

// fill reads until the window holds n bytes or the document's end.
func (c *cutter) fill(n int) {
	for c.rd != nil && len(c.text) < n {
		c.read()
	}
}

// read reads once more from the document.
func (c *cutter) read() {
	if cap(c.text)-len(c.text) < readSize/2 {
		c.text = slices.Grow(c.text, readSize+len(c.text)/4)
	}
	m, err := c.rd.Read(c.text[len(c.text):cap(c.text)])
	c.text = c.text[:len(c.text)+m]
	if err != nil {
		c.rd = nil
		if err != io.EOF && c.err == nil {
			c.err = err
		}
	}
}

// countTo counts the document a stretch at a time until the marks pass
// tok tokens and reach offset pos, or the whole text is counted. Each
// stretch ends at a free cut, so the stretches tokenize as texts of their
// own: the sum is the whole document's count, and so are the ids.
func (c *cutter) countTo(tok, pos int) {
	for !c.final() && c.err == nil {
		last := len(c.marks) - 1
		if int(c.cums[last]) > tok && int(c.marks[last]) >= pos {
			return
		}
		x := c.reached()
		y := 0
		for {
			from := max(x+c.block, c.scanned)
			if y = c.firstCut(c.text, from, len(c.text)); y > 0 {
				break
			}
			if c.rd == nil {
				y = len(c.text)
				if i := y - 1; i >= from && c.endCut(c.text) {
					y = i
				}
				break
			}
			// The last byte held is no cut yet: FreeCutAt looks one past.
			c.scanned = max(from, len(c.text)-1)
			c.read()
		}
		if y == x {
			continue // an empty text: the last mark is its end
		}
		if c.fine {
			c.countStretch(x, y)
		} else {
			sum := int(c.cums[last]) + c.count(c.text[x:y])
			c.marks = append(c.marks, uint32(y))
			c.cums = append(c.cums, uint32(sum))
		}
		c.scanned = 0
	}
}

// countStretch encodes text[x:y], the stretch after the last cut, and
// marks the end of each of its tokens as encodeWhole does for the whole
// text: where the tokens' bytes, summed from the document's start, reach,
// so that the marks are those of the whole text's ids. A token that
// reaches past y (a normalizer lengthened the text) waits in pend until
// the count passes it, or the document ends there.
func (c *cutter) countStretch(x, y int) {
	v := c.r.Enc.Vocab()
	var st bpe.Stats
	c.ids, st = c.r.Enc.EncodeStats(c.ids[:0], c.text[x:y])
	if st.Err != nil && c.err == nil {
		c.err = st.Err
	}
	for len(c.pend) > 0 && int(c.pend[0].pos) <= y {
		c.mark(int(c.pend[0].pos), c.pend[0].tok)
		c.pend = c.pend[1:]
	}
	k := uint32(c.counted())
	for _, id := range c.ids {
		t, _ := v.Token(id)
		c.pos += len(t)
		k++
		if len(c.pend) > 0 || c.pos > y {
			c.pend = append(c.pend, pending{uint32(c.pos), k})
		} else {
			c.mark(c.pos, k)
		}
	}
	c.cuts = append(c.cuts, uint32(y))
	c.cutCums = append(c.cutCums, k)
	if c.rd == nil && y == len(c.text) {
		c.pend = c.pend[:0]
		c.markEnd(y, k)
	}
}

// markEnd marks the document's end, offset n, with all its k tokens: the
// tokens that reach past it (a normalizer lengthened the text) end there.
func (c *cutter) markEnd(n int, k uint32) {
	if last := len(c.marks) - 1; int(c.marks[last]) == n {
		c.cums[last] = k
		return
	}
	c.marks = append(c.marks, uint32(n))
	c.cums = append(c.cums, k)
}

// pending is a token's end that the count has not reached yet.
type pending struct{ pos, tok uint32 }

// mark marks offset p, k tokens in, unless the last mark is there or
// past it.
func (c *cutter) mark(p int, k uint32) {
	if p > int(c.marks[len(c.marks)-1]) {
		c.marks = append(c.marks, uint32(p))
		c.cums = append(c.cums, k)
	}
}

// slide drops the window's text before the chunk that starts at s, but
// for the mark (and a fine cutter's cut) at or before s and lookBehind
// bytes, once that is slideAt bytes or more, and returns s and prevEnd in
// the moved window.
func (c *cutter) slide(s, prevEnd int) (int, int) {
	if c.generic {
		return s, prevEnd
	}
	i := sort.Search(len(c.marks), func(i int) bool { return int(c.marks[i]) > s }) - 1
	d := min(int(c.marks[i]), max(s-lookBehind, 0))
	cum0 := c.cums[i]
	j := 0
	if c.fine {
		j = sort.Search(len(c.cuts), func(j int) bool { return int(c.cuts[j]) > s }) - 1
		d = min(d, int(c.cuts[j]))
		cum0 = min(cum0, c.cutCums[j])
	}
	if d < c.slideAt {
		return s, prevEnd
	}
	n := copy(c.text, c.text[d:])
	c.text = c.text[:n]
	c.base += d
	c.cumBase += int64(cum0)
	c.marks, c.cums = dropBefore(c.marks, c.cums, i, d, cum0)
	if c.fine {
		c.pos -= d
		c.cuts, c.cutCums = dropBefore(c.cuts, c.cutCums, j, d, cum0)
		for q := range c.pend {
			c.pend[q].pos -= uint32(d)
			c.pend[q].tok -= cum0
		}
	}
	return s - d, prevEnd - d
}

// dropBefore drops the places before index i and moves the rest back by d
// bytes and cum0 tokens.
func dropBefore(xs, ks []uint32, i, d int, cum0 uint32) ([]uint32, []uint32) {
	k := copy(xs, xs[i:])
	xs = xs[:k]
	copy(ks, ks[i:])
	ks = ks[:k]
	for j := range xs {
		xs[j] -= uint32(d)
		ks[j] -= cum0
	}
	return xs, ks
}
