package ration

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"unicode/utf8"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/request"
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
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string `json:"source_bytes,omitempty"`
	Record      int    `json:"record"`
	Chunk       int    `json:"chunk"`
	Start       int    `json:"start"`
	End         int    `json:"end"`
	Tokens      int    `json:"tokens"`
	Cut         string `json:"cut"`
	Text        string `json:"text"`
}

// Rationer splits documents into chunks whose framed requests fit a token
// budget. Its fields are set before the first Cut and not changed after.
//
// Every chunk's count is exact: the framed chunk's own tokens, not a slice
// of the whole document's. Where the encoder has free cuts (FreeCuts: the
// GPT-2 rule, and most bundles) and Generic is false, the count is taken
// piecewise: the text cut at such places tokenizes stretch by stretch, so
// the tokens between the first and the last of them inside a chunk are
// those of the whole document there, and only the two ends are encoded
// afresh together with the frame. Otherwise (Generic true, or no free
// cuts) every framed chunk is counted whole.
//
// How the document is held and counted does not change the plan under a
// bundle: the estimates the choice of each end rests on are those of the
// whole text's ids (marks at every token's end), whether the text is
// encoded whole or stretch by stretch.
type Rationer struct {
	Enc      *bpe.Encoder
	Frame    *request.Frame
	Budget   int  // input tokens a request may take, frame and overhead included
	Overlap  int  // tokens of the previous chunk's tail to repeat at the start of the next
	Overhead int  // fixed tokens added to every request
	Generic  bool // count every framed chunk whole, and hold the document whole
}

// whole reports whether the document is encoded whole and every framed
// chunk counted whole.
func (r *Rationer) whole() bool { return r.Generic || !r.Enc.FreeCuts() }

// blockMin is the fewest bytes between two marks of the document's count
// under the GPT-2 rule; fineBlock between two stretches of a bundle's
// count, whose marks fall at every token's end whatever the stretches.
const (
	blockMin  = 128
	fineBlock = 1024
)

// Cut splits text, the document named source (record, for reports), and
// returns its chunks in order with the document's own token count. With
// keepText the chunks carry their text. Without overlap the chunks cover
// text end to end, so joined they give it back byte for byte. An empty text
// gives no chunks. It fails, with ErrNoRoom, when the budget cannot hold
// the frame and one character.
func (r *Rationer) Cut(source string, record int, text []byte, keepText bool) ([]Chunk, int, error) {
	var out []Chunk
	total, _, err := r.cut(r.newCutter(report.Where(source, record), text, nil), source, record, keepText, func(ch Chunk) error {
		out = append(out, ch)
		return nil
	})
	return out, int(total), err
}

// CutReader is Cut for a text read from rd, which it reads to the end:
// each chunk goes to fn once it is decided, and the document's tokens and
// bytes are returned. Where the encoder has free cuts it holds only a
// window of the text (see readAhead); otherwise, or with Generic, it reads
// the text whole first. The chunks are those Cut gives for the whole text.
func (r *Rationer) CutReader(source string, record int, rd io.Reader, keepText bool, fn func(Chunk) error) (tokens, bytes int64, err error) {
	name := report.Where(source, record)
	if r.whole() {
		text, err := io.ReadAll(rd)
		if err != nil {
			return 0, int64(len(text)), err
		}
		return r.cut(r.newCutter(name, text, nil), source, record, keepText, fn)
	}
	return r.cut(r.newCutter(name, nil, rd), source, record, keepText, fn)
}

// cutReader is CutReader with the window moved by slideAt bytes or more.
func (r *Rationer) cutReader(source string, record int, rd io.Reader, slideAt int, fn func(Chunk) error) (int64, int64, error) {
	c := r.newCutter(report.Where(source, record), nil, rd)
	c.slideAt = slideAt
	return r.cut(c, source, record, true, fn)
}

// cut runs c to the text's end, giving fn each chunk, and returns the
// document's tokens and bytes.
func (r *Rationer) cut(c *cutter, source string, record int, keepText bool, fn func(Chunk) error) (int64, int64, error) {
	c.countTo(-1, 1)
	if c.err != nil {
		return c.tokens(), c.size(), c.err
	}
	if c.final() && len(c.text) == 0 {
		return 0, 0, nil
	}
	sb := report.SourceBytes(source)
	s, prevEnd := 0, 0
	for k := 0; ; k++ {
		c.ahead(s, prevEnd+1)
		if c.err != nil {
			return c.tokens(), c.size(), c.err
		}
		e, cut, tok, err := c.next(s, prevEnd+1)
		if err == nil {
			err = c.err
		}
		if err != nil {
			return c.tokens(), c.size(), err
		}
		ch := Chunk{Source: source, SourceBytes: sb, Record: record, Chunk: k, Start: c.base + s, End: c.base + e, Tokens: tok, Cut: cut}
		if keepText {
			ch.Text = string(c.text[s:e])
		}
		if err := fn(ch); err != nil {
			return c.tokens(), c.size(), err
		}
		if c.final() && e == len(c.text) {
			return c.tokens(), c.size(), nil
		}
		start := s
		prevEnd = e
		s = e
		if r.Overlap > 0 {
			s = c.overlapStart(start, e)
		}
		s, prevEnd = c.slide(s, prevEnd)
	}
}

// cutter holds one document's state while it is cut. A document read
// from a Reader is held as a window, text, that starts at byte base of the
// document: it reaches as far ahead as the next chunk's choice may look
// (ahead), and what lies before the current chunk is dropped (slide).
// Offsets inside the cutter are offsets in text.
//
// Under the GPT-2 rule the marks fall at free cuts (Encoder.FreeCutAt) at
// least blockMin bytes apart, and the count is exact at each. Under a
// bundle (fine) the text is encoded a stretch between free cuts at a time
// and the marks fall at every token's end, placed as encodeWhole places
// them; the stretches' ends, where the count is exact, are kept apart in
// cuts.
type cutter struct {
	r    *Rationer
	text []byte
	base int       // the document's offset of text[0]
	rd   io.Reader // the rest of the document; nil once read to its end
	// marks are offsets in text, from at most the current chunk's start
	// on, and cums the document's tokens before each, less cumBase:
	// exact at every mark, and estimated in between by bytes. Once the
	// text is read and counted to its end, the last mark is len(text).
	marks   []uint32
	cums    []uint32
	cumBase int64
	// fine marks every token's end; cuts are then the ends of the
	// stretches counted so far and cutCums the tokens before each, less
	// cumBase (without fine the marks are the cuts). The last cut is where
	// the count has reached. pos is the end of the tokens counted so far,
	// as encodeWhole sums their bytes.
	fine    bool
	cuts    []uint32
	cutCums []uint32
	pos     int
	pend    []pending
	ids     []int
	// block is the fewest bytes between two cuts.
	block int
	// scanned is where the search for the next cut goes on, while the
	// window is read further: no place before it is a free cut.
	scanned int
	// slideAt is the least the window moves by, so that dropping the text
	// behind the current chunk copies each byte a few times at most.
	slideAt  int
	generic  bool
	genTotal int // the tokens of a generic document, encoded whole
	before   []byte
	after    []byte
	preCut   int // before[:preCut] counts on its own
	preTok   int
	postCut  int // after[postCut:] counts on its own
	postTok  int
	// frameTok is the tokens of the frame around an empty document,
	// overhead included.
	frameTok int
	buf      []byte
	// err is the first split-pattern timeout met while counting (the plan
	// then rests on counts that are not exact, and the document fails),
	// or the reader's error.
	err error
}

// count returns the tokens of t, keeping the first pattern timeout in c.err.
func (c *cutter) count(t []byte) int {
	n, err := c.r.Enc.CountChecked(t)
	if err != nil && c.err == nil {
		c.err = err
	}
	return n
}

// newCutter starts the cut of a document: text when rd is nil, else what
// rd yields.
func (r *Rationer) newCutter(name string, text []byte, rd io.Reader) *cutter {
	c := &cutter{r: r, text: text, rd: rd, generic: r.whole(), slideAt: slideMin, block: blockMin}
	c.fine = !c.generic && r.Enc.Vocab().FromBundle()
	if c.fine {
		c.block = fineBlock
	}
	c.before, c.after = r.Frame.Parts(name)
	c.preCut, c.postCut = 0, len(c.after)
	if !c.generic {
		// A cut of the frame holds in the framed chunk when every byte it
		// looks at is the frame's: before starts the request, and a cut of
		// after looks at most utf8.UTFMax bytes back.
		if k := c.lastCut(c.before, 0, len(c.before)); k > 0 {
			c.preCut = k
			c.preTok = c.count(c.before[:k])
		}
		if k := c.firstCut(c.after, utf8.UTFMax, len(c.after)); k > 0 {
			c.postCut = k
			c.postTok = c.count(c.after[k:])
		}
	}
	c.frameTok = c.count(r.Frame.Assemble(name, nil)) + r.Overhead
	if c.generic {
		c.encodeWhole()
	} else {
		c.marks = make([]uint32, 1, 64)
		c.cums = make([]uint32, 1, 64)
		if c.fine {
			c.cuts = make([]uint32, 1, 64)
			c.cutCums = make([]uint32, 1, 64)
		}
		if rd == nil {
			// The whole text is here: count it at once, and never move it.
			c.countTo(math.MaxInt, len(text))
			c.slideAt = math.MaxInt
		}
	}
	return c
}

// encodeWhole encodes the whole document at once and marks the end of
// every token: the counts between marks are estimates for the search only.
// A token's end is where its bytes, summed from the text's start, reach
// (the text's end at most): a normalizer that changes the text's length
// moves the later marks off the text's own offsets. The last mark is the
// text's end, with all the tokens before it. countStretch places the marks
// of a fine cutter the same way.
func (c *cutter) encodeWhole() {
	v := c.r.Enc.Vocab()
	ids, st := c.r.Enc.EncodeStats(nil, c.text)
	if st.Err != nil && c.err == nil {
		c.err = st.Err
	}
	c.marks = make([]uint32, 1, len(ids)+2)
	c.cums = make([]uint32, 1, len(ids)+2)
	pos := 0
	for i, id := range ids {
		t, _ := v.Token(id)
		pos += len(t)
		if pos > len(c.text) {
			pos = len(c.text)
		}
		if pos > int(c.marks[len(c.marks)-1]) {
			c.marks = append(c.marks, uint32(pos))
			c.cums = append(c.cums, uint32(i+1))
		}
	}
	c.markEnd(len(c.text), uint32(len(ids)))
	c.genTotal = len(ids)
}

// tokAt returns an estimate of the document's tokens before offset x:
// exact at a mark, by bytes between marks.
func (c *cutter) tokAt(x int) int {
	i := sort.Search(len(c.marks), func(i int) bool { return int(c.marks[i]) > x }) - 1
	if i < 0 {
		return 0
	}
	if i == len(c.marks)-1 {
		return int(c.cums[i])
	}
	m0, m1 := int(c.marks[i]), int(c.marks[i+1])
	k0, k1 := int(c.cums[i]), int(c.cums[i+1])
	return k0 + (x-m0)*(k1-k0)/(m1-m0)
}

// posAfter returns an estimate of the offset after the document's first k
// tokens: exact at a mark, by bytes between marks.
func (c *cutter) posAfter(k int) int {
	if k <= 0 {
		return 0
	}
	if k >= c.total() {
		return len(c.text)
	}
	i := sort.Search(len(c.cums), func(i int) bool { return int(c.cums[i]) >= k })
	// cums[i-1] < k <= cums[i]
	m0, m1 := int(c.marks[i-1]), int(c.marks[i])
	k0, k1 := int(c.cums[i-1]), int(c.cums[i])
	p := m0 + (k-k0)*(m1-m0)/(k1-k0)
	if p <= m0 {
		p = m0 + 1
	}
	return p
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
		if ks+limit >= c.total() {
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
	if hi >= len(t) {
		hi = len(t) - 1
	}
	if lo < 1 {
		lo = 1
	}
	if lo > hi {
		return 0, ""
	}
	// A break at p follows the line feed at p-1: look for line feeds in
	// t[lo-1 : hi], latest first.
	line := 0
	for end := hi; end >= lo; {
		i := bytes.LastIndexByte(t[lo-1:end], '\n')
		if i < 0 {
			break
		}
		p := lo - 1 + i + 1
		end = p - 1
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
	}
	if line > 0 {
		return line, CutLine
	}
	for p := hi; p >= lo; p-- {
		b := t[p-1]
		if (t[p] == ' ' || t[p] == '\t') && endsSentence(t[:p]) || b >= 0x80 && endsSentenceWide(t[:p]) {
			return p, CutSentence
		}
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
		if p >= minEnd && p <= maxE && (p < w || w == len(c.text) && c.final()) && charEdge(c.text, p) {
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
	// Split from a free cut: the pre-tokens after it are those of the
	// whole document, and so those from s.
	y := s
	if !c.generic {
		if k := c.lastCut(c.text, s+1, x0); k > 0 {
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
		// The first cut and the last inside the chunk whose bytes looked
		// at (FreeCutAt: t[i-2:i+2], and under the GPT-2 rule the
		// character before i) are all the chunk's, so that it holds in
		// the framed chunk too.
		xs, ks := c.exact()
		ia := sort.Search(len(xs), func(i int) bool { return int(xs[i]) >= s+utf8.UTFMax })
		ib := sort.Search(len(xs), func(i int) bool { return int(xs[i]) > e-2 }) - 1
		if ia < ib {
			a, b := int(xs[ia])-s, int(xs[ib])-s
			c.buf = append(append(c.buf[:0], c.before[c.preCut:]...), t[:a]...)
			head := c.preTok + c.count(c.buf)
			c.buf = append(append(c.buf[:0], t[b:]...), c.after[:c.postCut]...)
			tail := c.count(c.buf) + c.postTok
			return head + int(ks[ib]-ks[ia]) + tail + c.r.Overhead
		}
	}
	c.buf = append(append(append(c.buf[:0], c.before...), t...), c.after...)
	return c.count(c.buf) + c.r.Overhead
}

// cutAt reports whether t may be cut at i: a free cut (FreeCutAt), and
// under the GPT-2 rule one after a whole character, as the marks have
// always been placed (the encoder also cuts after a byte that is not
// UTF-8, before white space); the plan rests on where they fall.
func (c *cutter) cutAt(t []byte, i int) bool {
	if !c.r.Enc.FreeCutAt(t, i) {
		return false
	}
	if c.fine || t[i-1] < utf8.RuneSelf {
		return true
	}
	r, size := utf8.DecodeLastRune(t[:i])
	return r != utf8.RuneError || size > 1
}

// endCut reports whether t, the whole text, may be cut one byte before its
// end, which FreeCutAt never reports: under the GPT-2 rule a cut looks at
// no byte after it, so t with one byte more that is not white space
// tells. A bundle's cut needs the byte after it to be there.
func (c *cutter) endCut(t []byte) bool {
	i := len(t) - 1
	if c.fine || i < 1 {
		return false
	}
	var b [utf8.UTFMax + 2]byte
	k := copy(b[:utf8.UTFMax+1], t[max(i-utf8.UTFMax, 0):])
	b[k] = 'x'
	return c.cutAt(b[:k+1], k-1)
}

// firstCut returns the first free cut of t in [from, to), or 0.
func (c *cutter) firstCut(t []byte, from, to int) int {
	for i := max(from, 1); i < to && i+1 < len(t); i++ {
		if c.cutAt(t, i) {
			return i
		}
	}
	return 0
}

// lastCut returns the last free cut of t in [from, to), or 0.
func (c *cutter) lastCut(t []byte, from, to int) int {
	for i := min(to, len(t)-1) - 1; i >= max(from, 1); i-- {
		if c.cutAt(t, i) {
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
