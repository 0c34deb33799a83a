package ration

import (
	"io"
	"math"
	"slices"
	"sort"
)

// The window of a document read from a Reader (cutter.rd).

// Look-ahead. The choice of a chunk's end looks at the text from the
// chunk's start up to the estimated end of the budget's tokens (at most
// the budget less the frame), plus preTokenSlack bytes for the pre-token
// that crosses it; the estimate needs one mark past it. So the window
// reaches one mark past the budget's tokens and readAhead bytes past that
// mark. Marks are at least blockMin bytes apart and fall only where a
// pre-token must end (safeCut), so a stretch with no such place (one long
// pre-token) is held whole: --max-document bounds it.
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
	c.fill(int(c.marks[len(c.marks)-1]) + readAhead)
}

// final reports whether the whole document is read and counted.
func (c *cutter) final() bool {
	return c.rd == nil && int(c.marks[len(c.marks)-1]) == len(c.text)
}

// tokens returns the document's tokens counted so far (all of them once
// final).
func (c *cutter) tokens() int64 {
	if c.generic {
		return int64(c.genTotal)
	}
	return c.cumBase + int64(c.cums[len(c.cums)-1])
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
		return int(c.cums[len(c.cums)-1])
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

// countTo counts the document a block at a time until the marks pass tok
// tokens and reach offset pos, or the whole text is counted. Each block
// ends at a pre-token edge that holds in any context (see safeCut), so the
// sum is the whole document's count and every mark's count is exact.
func (c *cutter) countTo(tok, pos int) {
	for !c.final() && c.err == nil {
		last := len(c.marks) - 1
		x := int(c.marks[last])
		if int(c.cums[last]) > tok && x >= pos {
			return
		}
		y := 0
		for {
			from := max(x+blockMin, c.scanned)
			if y = firstSafeCut(c.text, from, len(c.text)); y > 0 {
				break
			}
			if c.rd == nil {
				y = len(c.text)
				break
			}
			c.scanned = max(from, len(c.text))
			c.read()
		}
		if y == x {
			continue // an empty text: the last mark is its end
		}
		sum := int(c.cums[last]) + c.count(c.text[x:y])
		c.marks = append(c.marks, uint32(y))
		c.cums = append(c.cums, uint32(sum))
		c.scanned = 0
	}
}

// slide drops the window's text before the chunk that starts at s, but
// for the mark at or before s and lookBehind bytes, once that is slideAt
// bytes or more, and returns s and prevEnd in the moved window.
func (c *cutter) slide(s, prevEnd int) (int, int) {
	if c.generic {
		return s, prevEnd
	}
	i := sort.Search(len(c.marks), func(i int) bool { return int(c.marks[i]) > s }) - 1
	d := min(int(c.marks[i]), max(s-lookBehind, 0))
	if d < c.slideAt {
		return s, prevEnd
	}
	n := copy(c.text, c.text[d:])
	c.text = c.text[:n]
	c.base += d
	k := copy(c.marks, c.marks[i:])
	c.marks = c.marks[:k]
	copy(c.cums, c.cums[i:])
	c.cums = c.cums[:k]
	cum0 := c.cums[0]
	c.cumBase += int64(cum0)
	for j := range c.marks {
		c.marks[j] -= uint32(d)
		c.cums[j] -= cum0
	}
	return s - d, prevEnd - d
}
