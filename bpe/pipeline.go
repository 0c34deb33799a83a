package bpe

import (
	"bytes"
	"unicode/utf8"
)

// pipeline is what a bundle does to a text before and around the merges:
// added tokens, the normalizer, the pre-tokenizer stages, and the tokens
// the post-processor adds per sequence.
type pipeline struct {
	norm      normalizer
	pre       []stage
	byteLevel bool
	added     addedSet // matched in the raw text
	addedNorm addedSet // matched in the normalized text
	addedIDs  []uint32
	template  []int
	family    string
	metaspace string // the replacement character of a metaspace vocabulary, or ""
	// cutBefore: with no pre-tokenizer, a text may be cut before every
	// replacement character that follows another character, since no token
	// holds the replacement anywhere but in a leading run (checked at load).
	cutBefore bool
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
	if s.mode == sinkSpans {
		al = s.identity(base, len(seg))
	}
	t := seg
	if p.norm != nil {
		t, al = p.norm.normalize(s, seg, al)
	}
	if len(p.addedNorm.toks) == 0 {
		s.pretokenize(t, al, base == 0)
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
			s.pretokenize(t[last:a], sub, base == 0 && last == 0)
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

// pretokenize hands a normalized stretch to the stages, cutting it first
// where no merge can cross when the vocabulary allows.
func (s *state) pretokenize(t []byte, al []int32, first bool) {
	p := s.v.pipe
	if !p.cutBefore || len(p.pre) > 0 {
		s.emit(0, t, al, first)
		return
	}
	r := []byte(p.metaspace)
	start := 0
	for i := 1; i < len(t); {
		j := bytes.Index(t[i:], r)
		if j < 0 {
			break
		}
		at := i + j
		if !bytes.HasSuffix(t[:at], r) {
			s.emitSub(0, t, al, first, start, at)
			start = at
		}
		i = at + len(r)
	}
	s.emitSub(0, t, al, first, start, len(t))
}

// metaspaceCut reports whether a vocabulary with no pre-tokenizer may be
// cut before each replacement character that follows another character:
// true when every token that holds the replacement holds it only in a
// leading run, so that no merge (nor a fused unknown) can cross such a cut.
func metaspaceCut(v *Vocab, p *pipeline) bool {
	m := &v.model
	if p.metaspace == "" || len(p.pre) > 0 || m.ignoreMerges || m.prefix != "" || m.suffix != "" || !m.charLevel {
		return false
	}
	r := []byte(p.metaspace)
	if _, ok := v.ID(r); !ok {
		return false
	}
	for id := range v.tokens {
		sp := v.spell[id]
		if sp == nil || p.isAdded(id) {
			continue
		}
		rest := sp
		for bytes.HasPrefix(rest, r) {
			rest = rest[len(r):]
		}
		if bytes.Contains(rest, r) {
			return false
		}
	}
	return utf8.Valid(r)
}
