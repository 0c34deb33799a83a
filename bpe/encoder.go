package bpe

import (
	"bytes"
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"unicode/utf8"
)

// SpecialMode says what the encoder does with special-token strings such as
// "<|endoftext|>" found in a text.
type SpecialMode int

const (
	// SpecialsAsText treats them as ordinary text (the default): a
	// document's text is never taken for a control token.
	SpecialsAsText SpecialMode = iota
	// SpecialsHonor maps each such string to its special token's id.
	SpecialsHonor
)

// ParseSpecialMode reads "text" or "honor".
func ParseSpecialMode(s string) (SpecialMode, error) {
	switch s {
	case "text", "":
		return SpecialsAsText, nil
	case "honor":
		return SpecialsHonor, nil
	}
	return 0, fmt.Errorf("special-token mode %q: want text or honor", s)
}

// Options set up an Encoder. The zero value encodes with the GPT-2 split
// rule, special strings as text, and the default cache size.
type Options struct {
	Specials     SpecialMode
	SplitPattern string // a regular expression for pre-tokenization; "" is the GPT-2 rule
	CacheWords   int    // words each worker's cache holds before it starts afresh; 0 is 1<<16
}

// Stats is what encoding a text found.
type Stats struct {
	Tokens   int // tokens the text encodes to
	Specials int // special-token strings the text holds (honoured or not)
	// Err is set when a bundle's regular expression ran past MatchTimeout
	// (it wraps ErrPatternTimeout): the counts are then not exact.
	Err error
}

// Encoder turns text into token ids under one vocabulary. It is safe for
// concurrent use: each call borrows a worker state with its own word cache.
type Encoder struct {
	v        *Vocab
	mode     SpecialMode
	re       *regexSplitter
	specials [][]byte
	specIDs  []uint32
	maxWords int
	free     chan *state
	plan     *cutPlan // where a long text may be cut (countstream.go); nil: nowhere
}

// NewEncoder returns an encoder for v. It fails on a split pattern that does
// not compile.
func NewEncoder(v *Vocab, opt Options) (*Encoder, error) {
	e := &Encoder{v: v, mode: opt.Specials, maxWords: opt.CacheWords}
	if e.maxWords <= 0 {
		e.maxWords = 1 << 16
	}
	if opt.SplitPattern != "" {
		re, err := newRegexSplitter(opt.SplitPattern)
		if err != nil {
			return nil, err
		}
		e.re = re
	}
	for _, s := range v.specials {
		e.specials = append(e.specials, []byte(s.Text))
		e.specIDs = append(e.specIDs, uint32(s.ID))
	}
	e.free = make(chan *state, 2*runtime.GOMAXPROCS(0)+2)
	e.plan = planFor(e)
	return e, nil
}

// Vocab returns the encoder's vocabulary.
func (e *Encoder) Vocab() *Vocab { return e.v }

func (e *Encoder) get() *state {
	select {
	case s := <-e.free:
		return s
	default:
		s := newState(e.v, e.maxWords)
		s.enc = e
		return s
	}
}

// inParallel calls do(k, w) for every k in [0, n) on up to workers
// goroutines, each with a state of its own: own, when not nil, in the
// calling goroutine (its word cache is warm), and states of e in the
// others.
func (e *Encoder) inParallel(own *state, n, workers int, do func(k int, w *state)) {
	var next atomic.Int64
	work := func(w *state) {
		for k := int(next.Add(1)) - 1; k < n; k = int(next.Add(1)) - 1 {
			do(k, w)
		}
	}
	others := min(workers, n)
	if own != nil {
		others--
	}
	var wg sync.WaitGroup
	for range others {
		wg.Go(func() {
			w := e.get()
			defer e.put(w)
			work(w)
		})
	}
	if own != nil {
		work(own)
	}
	wg.Wait()
}

func (e *Encoder) put(s *state) {
	select {
	case e.free <- s:
	default:
	}
}

// Encode returns the token ids of text.
func (e *Encoder) Encode(text []byte) []int {
	ids, _ := e.EncodeStats(nil, text)
	return ids
}

// EncodeStats appends the token ids of text to dst and returns them with
// what the text held.
func (e *Encoder) EncodeStats(dst []int, text []byte) ([]int, Stats) {
	return encodeTo(e, dst, text)
}

// AppendIDs appends the token ids of text to dst, as EncodeStats gives
// them, in 32 bits each: for callers that keep many ids.
func (e *Encoder) AppendIDs(dst []uint32, text []byte) []uint32 {
	dst, _ = encodeTo(e, dst, text)
	return dst
}

func encodeTo[T int | uint32](e *Encoder, dst []T, text []byte) ([]T, Stats) {
	if len(text) >= spmParallelMin && e.cutsInput() {
		var st Stats
		start := len(dst)
		dst = spmAppendCut(e, dst, text, spmStretch, spmWorkers(), &st)
		st.Tokens = len(dst) - start
		return dst, st
	}
	s := e.get()
	defer e.put(s)
	var st Stats
	start := len(dst)
	if e.v.spm != nil {
		dst = spmAppend(e, s, dst, text, &st)
		st.Tokens = len(dst) - start
		return dst, st
	}
	if e.v.pipe != nil {
		switch d := any(dst).(type) {
		case []int:
			s.mode, s.ints = sinkInts, d
			e.runBundle(s, text, &st, func(id uint32, _, _ int) { s.ints = append(s.ints, int(id)) })
			dst, s.ints = any(s.ints).([]T), nil
		case []uint32:
			s.mode, s.u32 = sinkU32, d
			e.runBundle(s, text, &st, func(id uint32, _, _ int) { s.u32 = append(s.u32, id) })
			dst, s.u32 = any(s.u32).([]T), nil
		}
		st.Tokens = len(dst) - start
		return dst, st
	}
	e.segments(text, &st, func(seg []byte, special int) {
		if special >= 0 {
			dst = append(dst, T(e.specIDs[special]))
			return
		}
		if e.re != nil {
			keepErr(&st, e.re.spans(seg, func(a, b int) { dst = appendPiece(s, dst, seg[a:b]) }))
			return
		}
		for i := 0; i < len(seg); {
			j := nextGPT2(seg, i)
			dst = appendPiece(s, dst, seg[i:j])
			i = j
		}
	})
	st.Tokens = len(dst) - start
	return dst, st
}

// Count returns the number of tokens text encodes to, without building the
// ids.
func (e *Encoder) Count(text []byte) int { return e.CountStats(text).Tokens }

// CountChecked is Count with the error of a split pattern that ran past
// its time limit (Stats.Err): a caller that reports counts as exact skips
// the text on that error.
func (e *Encoder) CountChecked(text []byte) (int, error) {
	st := e.CountStats(text)
	return st.Tokens, st.Err
}

// CountStats returns the token count of text and the special-token strings
// it holds.
func (e *Encoder) CountStats(text []byte) Stats {
	if len(text) >= spmParallelMin && e.cutsInput() {
		return e.spmCountCut(text, spmStretch, spmWorkers())
	}
	if len(text) >= longText && e.plan != nil {
		return e.countLong(text, streamChunk, runtime.GOMAXPROCS(0), false)
	}
	s := e.get()
	defer e.put(s)
	var st Stats
	e.countPart(s, text, false, &st)
	return st
}

// A text of longText bytes or more is counted on every core where the
// encoder may cut it (countLong).
const longText = 4 << 20

// Split calls fn with the span of every pre-token of text, in order, and
// with special true for a special token that SpecialsHonor maps to its id.
// The spans cover text without gaps; BPE never merges across them.
func (e *Encoder) Split(text []byte, fn func(start, end int, special bool)) {
	var st Stats
	if e.v.spm != nil {
		e.spmSplit(text, &st, fn)
		return
	}
	if e.v.pipe != nil {
		s := e.get()
		defer e.put(s)
		s.mode, s.spanFn, s.cur = sinkSpans, fn, 0
		e.runBundle(s, text, &st, func(_ uint32, a, b int) {
			if a > s.cur {
				fn(s.cur, a, false)
			}
			if b > a {
				fn(a, b, true)
			}
			s.cur = max(s.cur, b)
		})
		if s.cur < len(text) {
			fn(s.cur, len(text), false)
		}
		s.spanFn = nil
		return
	}
	base := 0
	e.segments(text, &st, func(seg []byte, special int) {
		if special >= 0 {
			fn(base, base+len(seg), true)
		} else {
			e.spans(seg, func(a, b int) { fn(base+a, base+b, false) })
		}
		base += len(seg)
	})
}

// EncodePiece returns the ids of one pre-token, as Split gives them, in a
// slice of its own.
func (e *Encoder) EncodePiece(piece []byte) []int {
	s := e.get()
	defer e.put(s)
	ids := s.piece(piece)
	out := make([]int, len(ids))
	for i, id := range ids {
		out[i] = int(id)
	}
	return out
}

// segments cuts text at the special-token strings: in SpecialsHonor mode fn
// gets each one with its index in e.specials, and the text between with -1;
// otherwise fn gets the whole text and the strings are only counted.
func (e *Encoder) segments(text []byte, st *Stats, fn func(seg []byte, special int)) {
	if len(e.specials) == 0 {
		fn(text, -1)
		return
	}
	if e.mode != SpecialsHonor {
		for _, sp := range e.specials {
			st.Specials += bytes.Count(text, sp)
		}
		fn(text, -1)
		return
	}
	for len(text) > 0 {
		at, which := -1, -1
		for k, sp := range e.specials {
			if i := bytes.Index(text, sp); i >= 0 && (at < 0 || i < at || (i == at && len(sp) > len(e.specials[which]))) {
				at, which = i, k
			}
		}
		if at < 0 {
			fn(text, -1)
			return
		}
		if at > 0 {
			fn(text[:at], -1)
		}
		st.Specials++
		fn(text[at:at+len(e.specials[which])], which)
		text = text[at+len(e.specials[which]):]
	}
}

func (e *Encoder) spans(seg []byte, fn func(a, b int)) {
	if e.re != nil {
		e.re.spans(seg, fn) // a timeout leaves the rest as one span, still tiling the text
		return
	}
	for i := 0; i < len(seg); {
		j := nextGPT2(seg, i)
		fn(i, j)
		i = j
	}
}

// Decode returns the bytes that ids stand for. Ids outside the vocabulary
// are left out; use Vocab.Token to check ids one by one.
func (e *Encoder) Decode(ids []int) []byte {
	n := 0
	for _, id := range ids {
		if t, ok := e.v.Token(id); ok {
			n += len(t)
		}
	}
	out := make([]byte, 0, n)
	for _, id := range ids {
		if t, ok := e.v.Token(id); ok {
			out = append(out, t...)
		}
	}
	return out
}

// safeCut returns the last offset in t where a non-space character is
// followed by an ASCII white-space byte, or 0. Every GPT-2 pre-token ends
// there or earlier, so counting the two sides apart gives the count of the
// whole. An ASCII byte is always a character boundary, however invalid the
// bytes before it.
func safeCut(t []byte) int { return safeCutFrom(t, 0) }

// safeCutFrom is safeCut for a t whose offsets below from are known to
// hold no cut.
func safeCutFrom(t []byte, from int) int {
	for i := len(t) - 1; i > 0 && i >= from; i-- {
		if b := t[i]; b >= utf8.RuneSelf || asciiClass[b] != clsSpace {
			continue
		}
		if p := t[i-1]; p < utf8.RuneSelf { // the common case, without decoding
			if asciiClass[p] != clsSpace {
				return i
			}
			continue
		}
		r, _ := utf8.DecodeLastRune(t[:i])
		if r == utf8.RuneError || runeClass(r) != clsSpace {
			return i
		}
	}
	return 0
}

func (e *Encoder) specialsHoldSpace() bool {
	for _, sp := range e.specials {
		for i := range sp {
			if c, _ := classAt(sp, i); c == clsSpace {
				return true
			}
		}
	}
	return false
}

// runBundle takes text through the bundle's pipeline in s.mode, giving
// added tokens to added, and counts the special-token strings.
func (e *Encoder) runBundle(s *state, text []byte, st *Stats, added func(id uint32, start, end int)) {
	s.run(text, e.mode == SpecialsHonor, added)
	st.Err = s.err
	s.err = nil
	for _, sp := range e.specials {
		st.Specials += bytes.Count(text, sp)
	}
}

// keepErr records err in st unless st holds one already.
func keepErr(st *Stats, err error) {
	if err != nil && st.Err == nil {
		st.Err = err
	}
}

// Pieces calls fn with every token of text, in order, and the span of text
// it stands for; the spans follow each other and cover the text (unless
// it has no token: a pipeline may drop a text of white space). Under a
// bundle whose pipeline changes the text, a span is that of the original
// bytes the token came from (with any text the pipeline dropped after
// it): a token for something the pipeline added (a marker put before the
// text) has an empty span.
func (e *Encoder) Pieces(text []byte, fn func(id, start, end int)) {
	if e.v.pipe == nil {
		at := 0
		for _, id := range e.Encode(text) {
			t, _ := e.v.Token(id)
			end := min(at+len(t), len(text))
			fn(id, at, end)
			at = end
		}
		return
	}
	// Each token's span runs to where the next one's starts, so that text
	// a pipeline dropped (white space a pre-tokenizer removes) joins the
	// token before it and the spans cover the text.
	pid, ps, have := 0, 0, false
	next := func(id, a, _ int) {
		if have {
			a = max(a, ps)
			fn(pid, ps, a)
			ps = a
		}
		pid, have = id, true
	}
	s := e.get()
	defer e.put(s)
	var st Stats
	s.mode, s.tokenFn = sinkTokens, next
	e.runBundle(s, text, &st, func(id uint32, a, b int) { next(int(id), a, b) })
	s.tokenFn = nil
	if have {
		fn(pid, ps, len(text))
	}
}
