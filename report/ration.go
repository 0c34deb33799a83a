package report

import (
	"errors"
	"fmt"
	"sort"
	"unicode"
	"unicode/utf8"

	"morsel/bpe"
)

// The kinds of cut a chunk ends at, from the most to the least wanted.
const (
	CutEnd       = "end"       // the document's end
	CutParagraph = "paragraph" // after a blank line
	CutLine      = "line"      // after a line break
	CutSentence  = "sentence"  // after . ! ? (or 。！？), before the space
	CutPreToken  = "pretoken"  // between two pre-tokens
	CutInside    = "inside"    // inside one pre-token too long for the budget
)

// ErrNoRoom is returned (wrapped) by Rationer.Cut when the budget cannot
// hold the frame and one more character of the document.
var ErrNoRoom = errors.New("the budget leaves no room")

// Chunk is one piece of a rationed document: bytes [Start, End) of the
// document, and the input tokens of its request (frame and overhead
// included), counted on the framed chunk itself.
type Chunk struct {
	Source string `json:"source"`
	Record int    `json:"record"`
	Chunk  int    `json:"chunk"`
	Start  int    `json:"start"`
	End    int    `json:"end"`
	Tokens int    `json:"tokens"`
	Cut    string `json:"cut"`
	Text   string `json:"text"`
}

// Rationer splits documents into chunks whose framed requests fit a token
// budget. Its fields are set before the first Cut and not changed after.
//
// Every chunk's count is exact: the framed chunk's own tokens, not a slice
// of the whole document's. With the GPT-2 split rule (Generic false) the
// count is taken piecewise: a character other than white space followed by
// an ASCII white-space byte is a pre-token edge whatever surrounds it, so
// the tokens between the first and the last such edge of a chunk are those
// of the whole document there, and only the two ends are encoded afresh
// together with the frame. With another split rule (Generic true) every
// framed chunk is counted whole.
type Rationer struct {
	Enc      *bpe.Encoder
	Frame    *Frame
	Budget   int  // input tokens a request may take, frame and overhead included
	Overlap  int  // tokens of the previous chunk's tail to repeat at the start of the next
	Overhead int  // fixed tokens added to every request
	Generic  bool // the encoder's split rule is not the GPT-2 rule
}

// encodeWindow is how much of a document is encoded at once.
const encodeWindow = 1 << 20

// Cut splits text, the document named source (record, for reports), and
// returns its chunks in order with the document's own token count. With
// keepText the chunks carry their text. Without overlap the chunks cover
// text end to end, so joined they give it back byte for byte. An empty text
// gives no chunks. It fails, with ErrNoRoom, when the budget cannot hold
// the frame and one character.
func (r *Rationer) Cut(source string, record int, text []byte, keepText bool) ([]Chunk, int, error) {
	c := r.newCutter(Where(source, record), text)
	if len(text) == 0 {
		return nil, 0, nil
	}
	var out []Chunk
	s, prevEnd := 0, 0
	for {
		e, cut, tok, err := c.next(s, prevEnd+1)
		if err != nil {
			return out, len(c.ends), err
		}
		ch := Chunk{Source: source, Record: record, Chunk: len(out), Start: s, End: e, Tokens: tok, Cut: cut}
		if keepText {
			ch.Text = string(text[s:e])
		}
		out = append(out, ch)
		if e == len(text) {
			return out, len(c.ends), nil
		}
		prevEnd = e
		s = e
		if r.Overlap > 0 {
			s = c.overlapStart(ch.Start, e)
		}
	}
}

// cutter holds one document's state while it is cut.
type cutter struct {
	r        *Rationer
	text     []byte
	ends     []uint32 // byte end of every token of the whole document's encoding
	generic  bool
	before   []byte
	after    []byte
	preCut   int // before[:preCut] counts on its own
	preTok   int
	postCut  int // after[postCut:] counts on its own
	postTok  int
	frameTok int // tokens of the frame around an empty document, overhead included
	buf      []byte
}

func (r *Rationer) newCutter(name string, text []byte) *cutter {
	c := &cutter{r: r, text: text, generic: r.Generic}
	c.before, c.after = r.Frame.Parts(name)
	c.preCut, c.postCut = 0, len(c.after)
	if !c.generic {
		if k := lastSafeCut(c.before, 0, len(c.before)); k > 0 {
			c.preCut = k
			c.preTok = r.Enc.Count(c.before[:k])
		}
		if k := firstSafeCut(c.after, 0, len(c.after)); k > 0 {
			c.postCut = k
			c.postTok = r.Enc.Count(c.after[k:])
		}
	}
	c.frameTok = r.Enc.Count(r.Frame.Assemble(name, nil)) + r.Overhead
	c.encode()
	return c
}

// encode records the byte end of every token of the whole document. With
// the GPT-2 rule it encodes a window at a time, cut at pre-token edges that
// do not depend on context.
func (c *cutter) encode() {
	n := len(c.text)
	v := c.r.Enc.Vocab()
	c.ends = make([]uint32, 0, n/3+16)
	var ids []int
	pos := 0
	for w0 := 0; w0 < n; {
		w1 := n
		if !c.generic && n-w0 > encodeWindow {
			if k := lastSafeCut(c.text, w0+encodeWindow/2, w0+encodeWindow); k > 0 {
				w1 = k
			} else if k := firstSafeCut(c.text, w0+encodeWindow, n); k > 0 {
				w1 = k
			}
		}
		ids, _ = c.r.Enc.EncodeStats(ids[:0], c.text[w0:w1])
		for _, id := range ids {
			t, _ := v.Token(id)
			pos += len(t)
			c.ends = append(c.ends, uint32(pos))
		}
		w0 = w1
	}
	if pos != n {
		// The ids do not spell the text back (a vocabulary whose special
		// tokens are not their own text, say): keep the counts as
		// estimates and count every chunk whole.
		c.generic = true
		for i := range c.ends {
			if int(c.ends[i]) > n {
				c.ends[i] = uint32(n)
			}
		}
		if len(c.ends) > 0 {
			c.ends[len(c.ends)-1] = uint32(n)
		}
	}
}

// tokAt returns how many of the document's tokens end at or before x.
func (c *cutter) tokAt(x int) int {
	return sort.Search(len(c.ends), func(i int) bool { return int(c.ends[i]) > x })
}

// posAfter returns the byte offset after the document's first k tokens.
func (c *cutter) posAfter(k int) int {
	if k <= 0 {
		return 0
	}
	if k > len(c.ends) {
		return len(c.text)
	}
	return int(c.ends[k-1])
}

// next finds the end of the chunk that starts at s: the latest good cut
// at or after minEnd whose framed chunk fits the budget. It returns the
// end, the kind of cut and the chunk's exact tokens.
func (c *cutter) next(s, minEnd int) (int, string, int, error) {
	limit := c.r.Budget - c.frameTok // estimated tokens the text may take
	ub := len(c.text)
	for {
		e, cut := c.pick(s, minEnd, limit, ub)
		if e < minEnd || e > ub {
			return 0, "", 0, fmt.Errorf("at byte %d: %w: the frame and overhead take %d of the %d-token budget, and the next piece of text does not fit",
				s, ErrNoRoom, c.frameTok, c.r.Budget)
		}
		got := c.framed(s, e)
		if got <= c.r.Budget {
			return e, cut, got, nil
		}
		limit -= got - c.r.Budget
		ub = e - 1
	}
}

// pick proposes a cut for the chunk from s whose text is estimated to
// take at most limit tokens, ending in [minEnd, ub].
func (c *cutter) pick(s, minEnd, limit, ub int) (int, string) {
	n := len(c.text)
	ks := c.tokAt(s)
	maxE := s
	if limit > 0 {
		if ks+limit >= len(c.ends) {
			maxE = n
		} else {
			maxE = c.posAfter(ks + limit)
		}
	}
	if maxE > ub {
		maxE = ub
	}
	if maxE == n {
		return n, CutEnd
	}
	if maxE >= minEnd {
		lo := minEnd
		if half := c.posAfter(ks + limit/2); half > lo {
			lo = half
		}
		if lo <= maxE {
			if p, cut := c.naturalBreak(lo, maxE); p > 0 {
				return p, cut
			}
		}
		if p := c.preTokenEdge(s, minEnd, maxE); p > 0 {
			return p, CutPreToken
		}
		// One pre-token is longer than the budget: cut between its
		// tokens, at a character edge.
		for k := c.tokAt(maxE); k > ks; k-- {
			p := c.posAfter(k)
			if p > maxE {
				continue
			}
			if p < minEnd {
				break
			}
			if charEdge(c.text, p) {
				return p, CutInside
			}
		}
		for p := maxE; p >= minEnd; p-- {
			if charEdge(c.text, p) {
				return p, CutInside
			}
		}
	}
	// Less than one token of room by the estimate: try the smallest
	// chunk that ends at minEnd or after, one character on.
	for p := minEnd; p <= n && p <= ub; p++ {
		if charEdge(c.text, p) {
			return p, CutInside
		}
	}
	return -1, ""
}

// naturalBreak returns the latest paragraph break in [lo, hi], else the
// latest line break, else the latest sentence end, or 0.
func (c *cutter) naturalBreak(lo, hi int) (int, string) {
	t := c.text
	line, sentence := 0, 0
	for p := hi; p >= lo && p > 0; p-- {
		if p >= len(t) {
			continue
		}
		prev := t[p-1]
		switch {
		case prev == '\n':
			if t[p] == '\n' || t[p] == '\r' {
				continue
			}
			q := p - 2
			if q >= 0 && t[q] == '\r' {
				q--
			}
			if q >= 0 && t[q] == '\n' {
				return p, CutParagraph
			}
			if line == 0 {
				line = p
			}
		case sentence == 0 && (t[p] == ' ' || t[p] == '\t') && endsSentence(t[:p]):
			sentence = p
		case sentence == 0 && prev >= 0x80 && endsSentenceWide(t[:p]):
			sentence = p
		}
	}
	if line > 0 {
		return line, CutLine
	}
	if sentence > 0 {
		return sentence, CutSentence
	}
	return 0, ""
}

// endsSentence reports whether t ends with . ! or ?, maybe followed by one
// closing quote or bracket.
func endsSentence(t []byte) bool {
	n := len(t)
	if n == 0 {
		return false
	}
	switch t[n-1] {
	case '.', '!', '?':
		return true
	case '"', '\'', ')', ']':
		return n >= 2 && (t[n-2] == '.' || t[n-2] == '!' || t[n-2] == '?')
	}
	return false
}

// endsSentenceWide reports whether t ends with an ideographic full stop or
// a full-width ! or ?.
func endsSentenceWide(t []byte) bool {
	r, _ := utf8.DecodeLastRune(t)
	return r == '。' || r == '！' || r == '？'
}

// preTokenEdge returns the latest pre-token edge in [minEnd, maxE] of the
// text from s, or 0.
func (c *cutter) preTokenEdge(s, minEnd, maxE int) int {
	w := maxE + 256
	if w > len(c.text) {
		w = len(c.text)
	}
	best := 0
	c.r.Enc.Split(c.text[s:w], func(a, b int, special bool) {
		p := s + b
		if p >= minEnd && p <= maxE && (p < w || w == len(c.text)) && charEdge(c.text, p) {
			best = p
		}
	})
	return best
}

// overlapStart returns where the chunk after [s, e) starts: the earliest
// pre-token edge after s from which at most Overlap tokens remain to e, or
// e when there is none.
func (c *cutter) overlapStart(s, e int) int {
	ke := c.tokAt(e)
	k := ke - c.r.Overlap
	if ks := c.tokAt(s) + 1; k < ks {
		k = ks
	}
	x0 := c.posAfter(k)
	if x0 >= e {
		return e
	}
	// Split from an edge that holds in any context, so the pre-tokens are
	// those of the whole document.
	y := s
	if !c.generic {
		if k := lastSafeCut(c.text, s+1, x0); k > 0 {
			y = k
		}
	}
	o := e
	found := false
	c.r.Enc.Split(c.text[y:e], func(a, b int, special bool) {
		p := y + a
		if !found && p >= x0 && p > s && p < e && charEdge(c.text, p) {
			o, found = p, true
		}
	})
	return o
}

// framed returns the exact input tokens of the request for text[s:e].
func (c *cutter) framed(s, e int) int {
	t := c.text[s:e]
	if !c.generic {
		a := firstSafeCut(t, 0, len(t))
		b := lastSafeCut(t, 0, len(t))
		if a > 0 && b > a {
			ka, kb := c.tokAt(s+a), c.tokAt(s+b)
			if c.posAfter(ka) == s+a && c.posAfter(kb) == s+b {
				c.buf = append(append(c.buf[:0], c.before[c.preCut:]...), t[:a]...)
				head := c.preTok + c.r.Enc.Count(c.buf)
				c.buf = append(append(c.buf[:0], t[b:]...), c.after[:c.postCut]...)
				tail := c.r.Enc.Count(c.buf) + c.postTok
				return head + (kb - ka) + tail + c.r.Overhead
			}
		}
	}
	c.buf = append(append(append(c.buf[:0], c.before...), t...), c.after...)
	return c.r.Enc.Count(c.buf) + c.r.Overhead
}

// safeCut reports whether i is a pre-token edge of t under the GPT-2 rule
// whatever comes before and after t: a character other than white space
// followed by an ASCII white-space byte. No GPT-2 pre-token holds white
// space after another character.
func safeCut(t []byte, i int) bool {
	if i <= 0 || i >= len(t) {
		return false
	}
	switch t[i] {
	case ' ', '\t', '\n', '\r', '\v', '\f':
	default:
		return false
	}
	p := t[i-1]
	if p < utf8.RuneSelf {
		return !(p == ' ' || p == '\t' || p == '\n' || p == '\r' || p == '\v' || p == '\f')
	}
	r, size := utf8.DecodeLastRune(t[:i])
	return !(r == utf8.RuneError && size <= 1) && !unicode.IsSpace(r)
}

// firstSafeCut returns the first safe cut of t in [from, to), or 0.
func firstSafeCut(t []byte, from, to int) int {
	if from < 1 {
		from = 1
	}
	for i := from; i < to && i < len(t); i++ {
		if safeCut(t, i) {
			return i
		}
	}
	return 0
}

// lastSafeCut returns the last safe cut of t in [from, to), or 0.
func lastSafeCut(t []byte, from, to int) int {
	if to > len(t) {
		to = len(t)
	}
	if from < 1 {
		from = 1
	}
	for i := to - 1; i >= from; i-- {
		if safeCut(t, i) {
			return i
		}
	}
	return 0
}

// charEdge reports whether offset p of t is not inside a UTF-8 character:
// bytes that are not valid UTF-8 count as characters of one byte.
func charEdge(t []byte, p int) bool {
	if p <= 0 || p >= len(t) || utf8.RuneStart(t[p]) {
		return true
	}
	for q := p - 1; q >= 0 && q >= p-3; q-- {
		if utf8.RuneStart(t[q]) {
			_, size := utf8.DecodeRune(t[q:])
			return size <= 1 || q+size <= p
		}
	}
	return true
}
