package bpe

import (
	"bytes"
	"runtime"
	"sync/atomic"
	"unicode/utf8"
)

// pipeline is what a bundle does to a text before and around the merges:
// added tokens, the normalizer, the pre-tokenizer stages, and the tokens
// the post-processor adds per sequence.
type pipeline struct {
	norm      normalizer
	contNorm  normalizer // norm less its Prepend steps, for a continuation's start (streamcut.go)
	pre       []stage
	byteLevel bool
	added     addedSet // matched in the raw text
	addedNorm addedSet // matched in the normalized text
	addedIDs  []uint32
	template  []int
	family    string
	metaspace string // the replacement character of a metaspace vocabulary, or ""
	// cuts: where a text with no pre-tokenizer may be cut (nil: nowhere).
	cuts *cutTable
	// written holds the bundle's components as its file wrote them, so
	// that a vocabulary learned on top of it can be written with them.
	written map[string][]byte
}

// sinkMode says what the model does with a pre-token.
const (
	sinkCount = iota
	sinkInts
	sinkU32
	sinkSpans
	sinkPieces
	sinkTokens
)

// sink runs the model on one pre-token.
func (s *state) sink(p []byte, al []int32) {
	switch s.mode {
	case sinkCount:
		s.n += s.count(p)
	case sinkInts:
		s.ints = appendPiece(s, s.ints, p)
	case sinkU32:
		s.u32 = appendPiece(s, s.u32, p)
	case sinkPieces:
		s.pieceFn(p)
	case sinkTokens:
		s.u32 = append(s.u32[:0], s.piece(p)...)
		off := 0
		for i, id := range s.u32 {
			n := min(s.unitLen(id, p[off:], i == 0, i == len(s.u32)-1), len(p)-off)
			s.tokenFn(int(id), int(al[off]), int(al[off+n]))
			off += n
		}
	case sinkSpans:
		// A piece that covers no original byte (a prepended marker alone)
		// joins the next one, so that the spans tile the text.
		if b := int(al[len(p)]); b > s.cur {
			s.spanFn(s.cur, b, false)
			s.cur = b
		}
	}
}

// run takes text through the pipeline of s.v, giving each added token to
// added and each pre-token to s.sink. honor says whether special tokens
// are honoured. In sinkSpans mode the spans tile the text.
func (s *state) run(text []byte, honor bool, added func(id uint32, start, end int)) {
	p := s.v.pipe
	s.stages = p.pre
	s.err = nil
	last := 0
	for last <= len(text) {
		a, b, k := p.added.next(text, last, honor)
		if k < 0 {
			a, b = len(text), len(text)
		}
		if a > last {
			s.segment(text[last:a], last, honor, added)
		}
		if k < 0 {
			break
		}
		added(p.added.toks[k].id, a, b)
		last = b
	}
}

// segment runs one stretch of text between added tokens, starting at
// offset base of the whole text.
func (s *state) segment(seg []byte, base int, honor bool, added func(id uint32, start, end int)) {
	p := s.v.pipe
	var al []int32
	if s.mode == sinkSpans || s.mode == sinkTokens {
		al = s.identity(base, len(seg))
	}
	t := seg
	// The start of a continuation (a stretch of a longer text, streamcut.go)
	// is no start of the text: it gets no Prepend and is no first piece.
	first := base == 0 && !s.cont
	norm := p.norm
	if base == 0 && s.cont {
		norm = p.contNorm
	}
	if norm != nil {
		t, al = norm.normalize(s, seg, al)
	}
	if len(p.addedNorm.toks) == 0 {
		s.pretokenize(t, al, first)
		return
	}
	last := 0
	for {
		a, b, k := p.addedNorm.next(t, last, honor)
		if k < 0 {
			a = len(t)
		}
		if a > last {
			var sub []int32
			if al != nil {
				sub = al[last : a+1]
			}
			s.pretokenize(t[last:a], sub, first && last == 0)
		}
		if k < 0 {
			return
		}
		if al != nil {
			added(p.addedNorm.toks[k].id, int(al[a]), int(al[b]))
		} else {
			added(p.addedNorm.toks[k].id, 0, 0)
		}
		last = b
	}
}

// identity returns the alignment of a stretch of n bytes at base: each
// byte its own offset. Offsets are relative to the start of the text.
func (s *state) identity(base, n int) []int32 {
	al := s.ident[:0]
	for i := 0; i <= n; i++ {
		al = append(al, int32(base+i))
	}
	s.ident = al
	return al
}

// pretokenize hands a normalized stretch to the stages. With no stages,
// the whole stretch would be one merge problem, so it is first cut where
// no merge can cross (see cuts), which keeps the word cache useful.
func (s *state) pretokenize(t []byte, al []int32, first bool) {
	p := s.v.pipe
	c := p.cuts
	if c == nil || len(p.pre) > 0 {
		s.emit(0, t, al, first)
		return
	}
	if s.mode == sinkCount {
		if len(t) >= cutParallelMin && s.enc != nil {
			s.n += s.countParallel(t, c, cutStretch)
		} else {
			s.n += s.countCuts(t, c)
		}
		return
	}
	for start := 0; start < len(t); {
		end := c.next(t, start)
		s.emitSub(0, t, al, first, start, end)
		start = end
	}
}

// countCuts returns the number of tokens of t cut as pretokenize cuts it:
// counting, the commonest use, takes the pieces straight to the word cache.
func (s *state) countCuts(t []byte, c *cutTable) int {
	n := 0
	for start := 0; start < len(t); {
		end := c.next(t, start)
		if end-start == 1 {
			n += int(c.one[t[start]])
		} else {
			n += s.count(t[start:end])
		}
		start = end
	}
	return n
}

// A stretch of text of cutParallelMin bytes or more is counted on every
// core, in pieces of about cutStretch bytes cut where the table allows.
const (
	cutParallelMin = 4 << 20
	cutStretch     = 1 << 20
)

// countParallel is countCuts on every core: pieces of t of about size
// bytes are counted apart, by s and by other states of its encoder, and
// their counts added. Cut places are found by the bytes around them alone,
// so a piece counts as it does inside the whole.
func (s *state) countParallel(t []byte, c *cutTable, size int) int {
	var ends []int
	for i := 0; i < len(t); {
		j := len(t)
		if i+size < len(t) {
			j = c.next(t, i+size)
		}
		ends = append(ends, j)
		i = j
	}
	var total atomic.Int64
	s.enc.inParallel(s, len(ends), runtime.GOMAXPROCS(0), func(k int, w *state) {
		a := 0
		if k > 0 {
			a = ends[k-1]
		}
		total.Add(int64(w.countCuts(t[a:ends[k]], c)))
	})
	return int(total.Load())
}

// cutTable says where a text with no pre-tokenizer may be cut without
// changing its ids: between two ASCII characters that are tokens of their
// own (or need none: see cutsFor) and that no token holds side by side,
// and, with beforeRepl, before a replacement character that follows
// another character, when every token holding the replacement holds it
// only in a leading run. A merge across such a cut would make a token
// holding the two characters there, and there is none; both characters
// having tokens, no unknown can be fused across it, and no merge involves
// the unk or byte-fallback tokens (checked), so the two sides merge as the
// whole.
type cutTable struct {
	// at is indexed by two bytes side by side, x<<8 | y: cutHere where the
	// text may be cut between them, cutRepl where it may if y starts a
	// replacement character that does not follow one, else 0. One look-up
	// a byte decides the common case.
	at         [1 << 16]uint8
	repl       []byte
	beforeRepl bool
	// one is the number of tokens of a piece of one byte.
	one [256]uint8
}

const (
	cutHere = 1 + iota
	cutRepl
)

// next returns the first place after start (start < len(t)) where t may be
// cut, or len(t).
func (c *cutTable) next(t []byte, start int) int {
	x := t[start]
	for i := start + 1; i < len(t); i++ {
		y := t[i]
		switch c.at[uint16(x)<<8|uint16(y)] {
		case cutHere:
			return i
		case cutRepl:
			if c.replAt(t, i) && (x != c.repl[len(c.repl)-1] || !bytes.HasSuffix(t[:i], c.repl)) {
				return i
			}
		}
		x = y
	}
	return len(t)
}

var allBytes = func() (b [256]byte) {
	for i := range b {
		b[i] = byte(i)
	}
	return b
}()

// replAt reports whether t holds the replacement at i, whose first byte
// is known to match.
func (c *cutTable) replAt(t []byte, i int) bool {
	if r := c.repl; len(r) == 3 { // U+2581 and every other character of three bytes
		return i+2 < len(t) && t[i+1] == r[1] && t[i+2] == r[2]
	}
	return bytes.HasPrefix(t[i:], c.repl)
}

// cutsFor returns the cut table of a vocabulary, or nil when it allows no
// cuts.
func cutsFor(v *Vocab, p *pipeline) *cutTable {
	m := &v.model
	if len(p.pre) > 0 || m.ignoreMerges || m.prefix != "" || m.suffix != "" || !m.charLevel {
		return nil
	}
	special := func(id uint32) bool {
		return int32(id) == m.unk || (m.fallback && len(v.tokens[id]) == 1 && m.fallbackID[v.tokens[id][0]] == id)
	}
	ok := true
	v.merges.each(func(k, rm uint64) {
		if special(uint32(k>>32)) || special(uint32(k)) {
			ok = false
		}
	})
	if !ok {
		return nil
	}
	c := &cutTable{beforeRepl: p.metaspace != "", repl: []byte(p.metaspace)}
	// With no unk token to fuse (a character with no token is dropped or
	// spelled in byte tokens), a character need not be a token to be cut
	// beside.
	var known [utf8.RuneSelf]bool
	var pair [utf8.RuneSelf][utf8.RuneSelf]bool
	if m.unk < 0 || (m.fallback && m.fallbackAll(allBytes[:])) {
		for i := range known {
			known[i] = true
		}
	}
	r := c.repl
	if c.beforeRepl {
		if _, ok := v.ID(r); !ok {
			c.beforeRepl = false
		}
	}
	for id, sp := range v.spell {
		if sp == nil || p.isAdded(id) {
			continue
		}
		if len(sp) == 1 && sp[0] < utf8.RuneSelf {
			known[sp[0]] = true
		}
		for i := 1; i < len(sp); i++ {
			if sp[i-1] < utf8.RuneSelf && sp[i] < utf8.RuneSelf {
				pair[sp[i-1]][sp[i]] = true
			}
		}
		if c.beforeRepl {
			rest := sp
			for bytes.HasPrefix(rest, r) {
				rest = rest[len(r):]
			}
			if bytes.Contains(rest, r) {
				c.beforeRepl = false
			}
		}
	}
	for x := range utf8.RuneSelf {
		for y := range utf8.RuneSelf {
			if known[x] && known[y] && !pair[x][y] {
				c.at[x<<8|y] = cutHere
			}
		}
	}
	if c.beforeRepl && r[0] >= utf8.RuneSelf { // an ASCII byte follows the rule above alone
		for x := range 256 {
			c.at[x<<8|int(r[0])] = cutRepl
		}
	}
	// A piece of one byte is one symbol and merges with nothing.
	st := newState(v, 1)
	for b := range c.one {
		c.one[b] = uint8(len(st.initial(nil, []byte{byte(b)})))
	}
	return c
}

// unitLen returns how many bytes of the pre-token, from rest, token id
// stands for.
func (s *state) unitLen(id uint32, rest []byte, first, last bool) int {
	v := s.v
	m := &v.model
	switch {
	case !m.charLevel:
		return len(v.tokens[id])
	case m.fallback && v.IsByteFallback(int(id)):
		return 1
	case int32(id) == m.unk:
		_, n := utf8.DecodeRune(rest)
		return max(n, 1)
	}
	sp := v.spell[id]
	if !first {
		sp = bytes.TrimPrefix(sp, []byte(m.prefix))
	}
	if last {
		sp = bytes.TrimSuffix(sp, []byte(m.suffix))
	}
	return len(sp)
}
