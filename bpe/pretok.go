package bpe

import (
	"bytes"
	"encoding/json"
	"fmt"
	"unicode"
	"unicode/utf8"
)

// A stage is one pre-tokenizer of a bundle's chain. It cuts (and for a
// few, rewrites) the piece it is given and hands every result to the next
// stage with s.emit(k+1, ...). al, when not nil, maps each byte of p (and
// one past the end) to its offset in the original text; first says that p
// starts the text.
type stage interface {
	run(s *state, k int, p []byte, al []int32, first bool)
}

// emit hands piece p to stage k, or to the model after the last stage.
func (s *state) emit(k int, p []byte, al []int32, first bool) {
	if len(p) == 0 {
		return
	}
	if k < len(s.stages) {
		s.stages[k].run(s, k, p, al, first)
		return
	}
	s.sink(p, al)
}

// emitSub hands p[a:b] to stage k.
func (s *state) emitSub(k int, p []byte, al []int32, first bool, a, b int) {
	if a >= b {
		return
	}
	var sub []int32
	if al != nil {
		sub = al[a : b+1]
	}
	s.emit(k, p[a:b], sub, first && a == 0)
}

// Split behaviors: what becomes of a match (a delimiter) of a Split, and
// of the other pre-tokenizers that cut at characters.
type behavior int

const (
	isolated behavior = iota
	removed
	mergedWithPrevious
	mergedWithNext
	contiguous
)

func parseBehavior(s string) (behavior, bool) {
	switch s {
	case "Isolated":
		return isolated, true
	case "Removed":
		return removed, true
	case "MergedWithPrevious":
		return mergedWithPrevious, true
	case "MergedWithNext":
		return mergedWithNext, true
	case "Contiguous":
		return contiguous, true
	}
	return 0, false
}

// cutAt hands on the pieces of p that the matches ms (pairs of byte
// offsets, in order, not empty, not overlapping) make under behavior b.
// With invert the text between matches is the delimiter instead.
func (s *state) cutAt(k int, p []byte, al []int32, first bool, ms []int, b behavior, invert bool) {
	for len(s.parts) <= k {
		s.parts = append(s.parts, nil)
	}
	parts := s.parts[k][:0]
	last := 0
	for i := 0; i < len(ms); i += 2 {
		if ms[i] > last {
			parts = append(parts, part{last, ms[i], invert})
		}
		parts = append(parts, part{ms[i], ms[i+1], !invert})
		last = ms[i+1]
	}
	if last < len(p) {
		parts = append(parts, part{last, len(p), invert})
	}
	s.parts[k] = parts
	out := func(a, c int) { s.emitSub(k+1, p, al, first, a, c) }
	switch b {
	case isolated:
		for _, x := range parts {
			out(x.a, x.b)
		}
	case removed:
		for _, x := range parts {
			if !x.match {
				out(x.a, x.b)
			}
		}
	case mergedWithPrevious:
		// A match joins the piece before it; a match with no piece before
		// it (at the start, or after another match) stands alone.
		a := -1
		for i, x := range parts {
			switch {
			case !x.match:
				if a >= 0 {
					out(a, parts[i-1].b)
				}
				a = x.a
			case a >= 0 && !parts[i-1].match:
				out(a, x.b)
				a = -1
			default:
				if a >= 0 {
					out(a, parts[i-1].b)
				}
				out(x.a, x.b)
				a = -1
			}
		}
		if a >= 0 {
			out(a, parts[len(parts)-1].b)
		}
	case mergedWithNext:
		// A match starts the piece after it; a match followed by another
		// match (or at the end) stands alone.
		a := -1
		for _, x := range parts {
			switch {
			case x.match:
				if a >= 0 {
					out(a, x.a)
				}
				a = x.a
			case a >= 0:
				out(a, x.b)
				a = -1
			default:
				out(x.a, x.b)
			}
		}
		if a >= 0 {
			out(a, len(p))
		}
	case contiguous:
		// Adjacent matches are one piece.
		for i := 0; i < len(parts); {
			j := i + 1
			if parts[i].match {
				for j < len(parts) && parts[j].match {
					j++
				}
			}
			out(parts[i].a, parts[j-1].b)
			i = j
		}
	}
}

// part is a match of a cut, or the text between two.
type part struct {
	a, b  int
	match bool
}

type preSpec struct {
	Type           string            `json:"type"`
	Pretokenizers  []json.RawMessage `json:"pretokenizers"`
	Pattern        *patternSpec      `json:"pattern"`
	Behavior       string            `json:"behavior"`
	Invert         bool              `json:"invert"`
	AddPrefixSpace *bool             `json:"add_prefix_space"`
	UseRegex       *bool             `json:"use_regex"`
	TrimOffsets    *bool             `json:"trim_offsets"`
	Replacement    *string           `json:"replacement"`
	PrependScheme  *string           `json:"prepend_scheme"`
	Split          *bool             `json:"split"`
	Individual     bool              `json:"individual_digits"`
}

// compilePreTokenizer builds the stages raw describes, flattening
// Sequences; byteLevel reports a ByteLevel stage, whose vocabulary is
// written in the byte alphabet.
func compilePreTokenizer(file string, raw json.RawMessage) (stages []stage, byteLevel bool, err error) {
	if raw == nil {
		return nil, false, nil
	}
	err = compilePre(file, "pre_tokenizer", raw, &stages, &byteLevel)
	markChains(stages)
	return stages, byteLevel, err
}

func compilePre(file, where string, raw json.RawMessage, out *[]stage, byteLevel *bool) error {
	if string(raw) == "null" {
		return nil
	}
	var sp preSpec
	if err := json.Unmarshal(raw, &sp); err != nil {
		return &posError{file, 0, fmt.Sprintf("%s: %v", where, err)}
	}
	where = fmt.Sprintf("%s %s", where, sp.Type)
	bad := func(format string, args ...any) error {
		return &posError{file, 0, where + ": " + fmt.Sprintf(format, args...)}
	}
	switch sp.Type {
	case "Sequence":
		for i, r := range sp.Pretokenizers {
			if err := compilePre(file, fmt.Sprintf("%s[%d]", where, i), r, out, byteLevel); err != nil {
				return err
			}
		}
		return nil
	case "ByteLevel":
		*byteLevel = true
		prefix := sp.AddPrefixSpace != nil && *sp.AddPrefixSpace
		regex := sp.UseRegex == nil || *sp.UseRegex
		if prefix {
			*out = append(*out, &prefixStage{s: []byte(" ")})
		}
		if regex {
			*out = append(*out, &scanStage{next: nextGPT2, name: "gpt2"})
		}
		return nil
	case "Split":
		b, ok := parseBehavior(sp.Behavior)
		if !ok {
			return bad("behavior %q is not one of Isolated, Removed, MergedWithPrevious, MergedWithNext, Contiguous", sp.Behavior)
		}
		if sp.Pattern == nil {
			return bad("no pattern")
		}
		switch {
		case sp.Pattern.String != nil:
			if *sp.Pattern.String == "" {
				return bad("an empty pattern")
			}
			*out = append(*out, &stringSplit{lit: []byte(*sp.Pattern.String), b: b, invert: sp.Invert})
		case sp.Pattern.Regex != nil:
			if next, name := knownScanner(*sp.Pattern.Regex); next != nil && b == isolated {
				// invert changes nothing under Isolated: both sides are pieces
				*out = append(*out, &scanStage{next: next, name: name})
				return nil
			}
			re, err := compileSplitRegex(*sp.Pattern.Regex)
			if err != nil {
				return bad("%v", err)
			}
			*out = append(*out, &regexSplit{re: re, b: b, invert: sp.Invert})
		default:
			return bad("the pattern is neither String nor Regex")
		}
		return nil
	case "Metaspace":
		m := &metaspaceStage{repl: []byte("\u2581"), scheme: prependAlways, split: true}
		if sp.Replacement != nil {
			if *sp.Replacement == "" {
				return bad("an empty replacement")
			}
			m.repl = []byte(*sp.Replacement)
		}
		if sp.Split != nil {
			m.split = *sp.Split
		}
		switch {
		case sp.PrependScheme != nil:
			switch *sp.PrependScheme {
			case "always":
			case "first":
				m.scheme = prependFirst
			case "never":
				m.scheme = prependNever
			default:
				return bad("prepend_scheme %q is not first, always or never", *sp.PrependScheme)
			}
		case sp.AddPrefixSpace != nil && !*sp.AddPrefixSpace:
			m.scheme = prependNever
		}
		*out = append(*out, m)
		return nil
	case "Whitespace":
		*out = append(*out, &scanStage{next: nextWordOrSymbols, name: "whitespace", drop: dropSpace})
		return nil
	case "WhitespaceSplit":
		*out = append(*out, &charSplit{is: unicode.IsSpace, b: removed, white: true})
		return nil
	case "Digits":
		b := contiguous
		if sp.Individual {
			b = isolated
		}
		*out = append(*out, &charSplit{is: unicode.IsNumber, b: b})
		return nil
	case "Punctuation":
		b := isolated
		if sp.Behavior != "" {
			var ok bool
			if b, ok = parseBehavior(sp.Behavior); !ok {
				return bad("behavior %q is not one of Isolated, Removed, MergedWithPrevious, MergedWithNext, Contiguous", sp.Behavior)
			}
		}
		*out = append(*out, &charSplit{is: isPunctuation, b: b})
		return nil
	case "":
		return bad("no \"type\"")
	}
	return &posError{file, 0, fmt.Sprintf("%s: pre-tokenizer type %q is not implemented", where, sp.Type)}
}

// isPunctuation is ASCII punctuation or any character of Unicode class P.
func isPunctuation(r rune) bool {
	if r < utf8.RuneSelf {
		return r > ' ' && r < 0x7f && !('0' <= r && r <= '9') && !('a' <= r && r <= 'z') && !('A' <= r && r <= 'Z')
	}
	return unicode.IsPunct(r)
}

// scanStage cuts a piece with a hand scanner: next returns the end of the
// pre-token that starts at t[i]. With drop, pieces it matches are left
// out.
type scanStage struct {
	next func(t []byte, i int) int
	name string
	drop func(t []byte) bool
	// chain: this stage and the next two are the CJK chain's three
	// scanners (scan_cjk.go), which runChain runs in one loop.
	chain bool
}

func (st *scanStage) run(s *state, k int, p []byte, al []int32, first bool) {
	if st.chain && k+3 == len(s.stages) && al == nil {
		s.runChain(p)
		return
	}
	if k+1 == len(s.stages) && al == nil && st.drop == nil {
		// The common case: straight to the model.
		for i := 0; i < len(p); {
			j := st.next(p, i)
			s.sink(p[i:j], nil)
			i = j
		}
		return
	}
	for i := 0; i < len(p); {
		j := st.next(p, i)
		if st.drop == nil || !st.drop(p[i:j]) {
			s.emitSub(k+1, p, al, first, i, j)
		}
		i = j
	}
}

// stringSplit cuts at every occurrence of a literal.
type stringSplit struct {
	lit    []byte
	b      behavior
	invert bool
}

func (st *stringSplit) run(s *state, k int, p []byte, al []int32, first bool) {
	ms := s.matchBuf(k)
	for i := 0; ; {
		j := bytes.Index(p[i:], st.lit)
		if j < 0 {
			break
		}
		ms = append(ms, i+j, i+j+len(st.lit))
		i += j + len(st.lit)
	}
	s.mbuf[k] = ms
	s.cutAt(k, p, al, first, ms, st.b, st.invert)
}

// regexSplit cuts at the matches of a regular expression.
type regexSplit struct {
	re     *splitRegex
	b      behavior
	invert bool
}

func (st *regexSplit) run(s *state, k int, p []byte, al []int32, first bool) {
	ms, err := st.re.matches(p, s.matchBuf(k), s.err)
	s.err = err
	s.mbuf[k] = ms
	s.cutAt(k, p, al, first, ms, st.b, st.invert)
}

// charSplit cuts at every character for which is holds, each one a match.
type charSplit struct {
	is    func(rune) bool
	b     behavior
	white bool // WhitespaceSplit
}

func (st *charSplit) run(s *state, k int, p []byte, al []int32, first bool) {
	ms := s.matchBuf(k)
	for i := 0; i < len(p); {
		r, n := utf8.DecodeRune(p[i:])
		if st.is(r) && !(r == utf8.RuneError && n <= 1) {
			ms = append(ms, i, i+n)
		}
		i += n
	}
	s.mbuf[k] = ms
	s.cutAt(k, p, al, first, ms, st.b, false)
}

func (s *state) matchBuf(k int) []int {
	for len(s.mbuf) <= k {
		s.mbuf = append(s.mbuf, nil)
	}
	return s.mbuf[k][:0]
}

// prefixStage puts a string before every piece that does not start with
// it (ByteLevel's add_prefix_space).
type prefixStage struct{ s []byte }

func (st *prefixStage) run(s *state, k int, p []byte, al []int32, first bool) {
	if bytes.HasPrefix(p, st.s) {
		s.emit(k+1, p, al, first)
		return
	}
	buf, bal := s.rewrite(k, p, al, st.s, nil, nil)
	s.emit(k+1, buf, bal, first)
}

const (
	prependAlways = iota
	prependFirst
	prependNever
)

// metaspaceStage spells spaces as the replacement character, puts one
// before the piece as its scheme says, and with split cuts before every
// replacement character.
type metaspaceStage struct {
	repl   []byte
	scheme int
	split  bool
}

func (st *metaspaceStage) run(s *state, k int, p []byte, al []int32, first bool) {
	// A piece that starts with a space starts with the replacement once
	// the space is spelled so; it gets no second one.
	var pre []byte
	if p[0] != ' ' && !bytes.HasPrefix(p, st.repl) && (st.scheme == prependAlways || (st.scheme == prependFirst && first)) {
		pre = st.repl
	}
	buf, bal := p, al
	if pre != nil || bytes.IndexByte(p, ' ') >= 0 {
		buf, bal = s.rewrite(k, p, al, pre, []byte(" "), st.repl)
	}
	if !st.split {
		s.emit(k+1, buf, bal, first)
		return
	}
	ms := s.matchBuf(k)
	for i := 0; ; {
		j := bytes.Index(buf[i:], st.repl)
		if j < 0 {
			break
		}
		ms = append(ms, i+j, i+j+len(st.repl))
		i += j + len(st.repl)
	}
	s.mbuf[k] = ms
	s.cutAt(k, buf, bal, first, ms, mergedWithNext, false)
}

// rewrite writes pre, then p with every old replaced by new, into stage
// k's buffer, with the alignment when al is not nil.
func (s *state) rewrite(k int, p []byte, al []int32, pre, old, new []byte) ([]byte, []int32) {
	for len(s.pbuf) <= k {
		s.pbuf = append(s.pbuf, nil)
		s.pal = append(s.pal, nil)
	}
	buf, bal := append(s.pbuf[k][:0], pre...), s.pal[k][:0]
	if al != nil {
		for range pre {
			bal = append(bal, al[0])
		}
	}
	for i := 0; i < len(p); {
		if old != nil && bytes.HasPrefix(p[i:], old) {
			buf = append(buf, new...)
			if al != nil {
				for range new {
					bal = append(bal, al[i])
				}
			}
			i += len(old)
			continue
		}
		buf = append(buf, p[i])
		if al != nil {
			bal = append(bal, al[i])
		}
		i++
	}
	if al != nil {
		bal = append(bal, al[len(p)])
	} else {
		bal = nil
	}
	s.pbuf[k], s.pal[k] = buf, bal
	return buf, bal
}
