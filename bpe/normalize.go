package bpe

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/unicode/norm"
)

// A normalizer rewrites a text before it is pre-tokenized. Each one has a
// slot in the worker state for its output, so that a normalizer that
// changes nothing returns its input and costs no copy.
//
// When al is not nil it holds, for every byte of src and one past the end,
// the offset in the original text that the byte came from; the normalizer
// then returns the same for its output. Only Encoder.Split asks for it.
type normalizer interface {
	normalize(s *state, src []byte, al []int32) ([]byte, []int32)
}

// normOut returns normalizer slot k's buffers, emptied.
func (s *state) normOut(k int) ([]byte, []int32) {
	for len(s.nbuf) <= k {
		s.nbuf = append(s.nbuf, nil)
		s.nal = append(s.nal, nil)
	}
	return s.nbuf[k][:0], s.nal[k][:0]
}

// normKeep keeps slot k's buffers for the next text and returns them, the
// alignment only when one was asked for (aligned): an empty one would read
// as asked for to the next normalizer.
func (s *state) normKeep(k int, b []byte, al []int32, aligned bool) ([]byte, []int32) {
	s.nbuf[k], s.nal[k] = b, al
	if !aligned {
		return b, nil
	}
	return b, al
}

type normSpec struct {
	Type        string            `json:"type"`
	Normalizers []json.RawMessage `json:"normalizers"`
	Pattern     *patternSpec      `json:"pattern"`
	Content     *string           `json:"content"`
	Prepend     *string           `json:"prepend"`
	StripLeft   *bool             `json:"strip_left"`
	StripRight  *bool             `json:"strip_right"`
	Charsmap    *string           `json:"precompiled_charsmap"`
}

// patternSpec is a Split's or a Replace's pattern: a literal string or a
// regular expression.
type patternSpec struct {
	String *string `json:"String"`
	Regex  *string `json:"Regex"`
}

// compileNormalizer builds the normalizer that raw describes (nil for none).
func compileNormalizer(file string, raw json.RawMessage) (normalizer, error) {
	if raw == nil {
		return nil, nil
	}
	slot := 0
	return compileNorm(file, "normalizer", raw, &slot)
}

func compileNorm(file, where string, raw json.RawMessage, slot *int) (normalizer, error) {
	if string(raw) == "null" {
		return nil, nil
	}
	var sp normSpec
	if err := json.Unmarshal(raw, &sp); err != nil {
		return nil, &posError{file, 0, fmt.Sprintf("%s: %v", where, err)}
	}
	where = fmt.Sprintf("%s %s", where, sp.Type)
	k := *slot
	*slot++
	switch sp.Type {
	case "NFC":
		return &nfx{norm.NFC, k}, nil
	case "NFD":
		return &nfx{norm.NFD, k}, nil
	case "NFKC":
		return &nfx{norm.NFKC, k}, nil
	case "NFKD":
		return &nfx{norm.NFKD, k}, nil
	case "Lowercase":
		return &lowercase{k}, nil
	case "Strip":
		return &strip{left: sp.StripLeft == nil || *sp.StripLeft, right: sp.StripRight == nil || *sp.StripRight}, nil
	case "Prepend":
		if sp.Prepend == nil {
			return nil, &posError{file, 0, where + ": no \"prepend\""}
		}
		return &prepend{[]byte(*sp.Prepend), k}, nil
	case "Replace":
		if sp.Pattern == nil || sp.Content == nil {
			return nil, &posError{file, 0, where + ": needs a pattern and a content"}
		}
		switch {
		case sp.Pattern.String != nil:
			if *sp.Pattern.String == "" {
				return nil, &posError{file, 0, where + ": an empty pattern"}
			}
			return &replaceString{[]byte(*sp.Pattern.String), []byte(*sp.Content), k}, nil
		case sp.Pattern.Regex != nil:
			re, err := compileSplitRegex(*sp.Pattern.Regex)
			if err != nil {
				return nil, &posError{file, 0, fmt.Sprintf("%s: %v", where, err)}
			}
			return &replaceRegex{re, []byte(*sp.Content), k}, nil
		}
		return nil, &posError{file, 0, where + ": the pattern is neither String nor Regex"}
	case "Precompiled":
		if sp.Charsmap == nil {
			return nil, &posError{file, 0, where + ": no precompiled_charsmap"}
		}
		return compilePrecompiled(file, where, *sp.Charsmap, k)
	case "Sequence":
		seq := &normSeq{}
		for i, r := range sp.Normalizers {
			n, err := compileNorm(file, fmt.Sprintf("%s[%d]", where, i), r, slot)
			if err != nil {
				return nil, err
			}
			if n != nil {
				seq.list = append(seq.list, n)
			}
		}
		if len(seq.list) == 0 {
			return nil, nil
		}
		if len(seq.list) == 1 {
			return seq.list[0], nil
		}
		return seq, nil
	case "":
		return nil, &posError{file, 0, where + "no \"type\""}
	}
	return nil, &posError{file, 0, fmt.Sprintf("%s: normalizer type %q is not implemented", where, sp.Type)}
}

type normSeq struct{ list []normalizer }

func (n *normSeq) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	if al == nil && len(n.list) == 2 && len(src) > 0 {
		// A metaspace vocabulary's pair, Prepend then Replace of one
		// byte: the text is copied once, not twice.
		p, ok1 := n.list[0].(*prepend)
		r, ok2 := n.list[1].(*replaceString)
		if ok1 && ok2 && len(r.old) == 1 {
			out, _ := s.normOut(r.k)
			out = replaceByte(out, p.s, r.old[0], r.new)
			return s.normKeep(r.k, replaceByte(out, src, r.old[0], r.new), nil, false)
		}
	}
	for _, x := range n.list {
		src, al = x.normalize(s, src, al)
	}
	return src, al
}

// nfx is a Unicode normalization form.
type nfx struct {
	form norm.Form
	k    int
}

func isASCII(b []byte) bool {
	for _, c := range b {
		if c >= utf8.RuneSelf {
			return false
		}
	}
	return true
}

func (n *nfx) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	if isASCII(src) || n.form.QuickSpan(src) == len(src) {
		return src, al
	}
	out, oal := s.normOut(n.k)
	if al == nil {
		out = n.form.Append(out, src...)
		return s.normKeep(n.k, out, nil, al != nil)
	}
	for i := 0; i < len(src); {
		j := i + n.form.NextBoundary(src[i:], true)
		if j <= i {
			j = len(src)
		}
		m := len(out)
		out = n.form.Append(out, src[i:j]...)
		for ; m < len(out); m++ {
			oal = append(oal, al[i])
		}
		i = j
	}
	oal = append(oal, al[len(src)])
	return s.normKeep(n.k, out, oal, al != nil)
}

// lowercase maps every character to its lower case, as Unicode's full
// mapping does: U+0130 becomes "i" and a combining dot.
type lowercase struct{ k int }

func (n *lowercase) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	change := false
	for i := 0; i < len(src); {
		c := src[i]
		if c < utf8.RuneSelf {
			if 'A' <= c && c <= 'Z' {
				change = true
				break
			}
			i++
			continue
		}
		r, w := utf8.DecodeRune(src[i:])
		if r == 0x130 || (r != utf8.RuneError && unicode.ToLower(r) != r) {
			change = true
			break
		}
		i += w
	}
	if !change {
		return src, al
	}
	out, oal := s.normOut(n.k)
	for i := 0; i < len(src); {
		r, w := utf8.DecodeRune(src[i:])
		m := len(out)
		switch {
		case r == utf8.RuneError && w <= 1:
			out = append(out, src[i])
		case r == 0x130:
			out = append(out, "i\u0307"...)
		default:
			out = utf8.AppendRune(out, unicode.ToLower(r))
		}
		if al != nil {
			for ; m < len(out); m++ {
				oal = append(oal, al[i])
			}
		}
		i += w
	}
	if al != nil {
		oal = append(oal, al[len(src)])
	}
	return s.normKeep(n.k, out, oal, al != nil)
}

// strip removes white space at either end.
type strip struct{ left, right bool }

func (n *strip) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	a, b := 0, len(src)
	if n.left {
		for a < b {
			r, w := utf8.DecodeRune(src[a:])
			if !unicode.IsSpace(r) {
				break
			}
			a += w
		}
	}
	if n.right {
		for b > a {
			r, w := utf8.DecodeLastRune(src[a:b])
			if !unicode.IsSpace(r) {
				break
			}
			b -= w
		}
	}
	if al != nil {
		al = al[a : b+1]
	}
	return src[a:b], al
}

// prepend puts a string before a text that is not empty.
type prepend struct {
	s []byte
	k int
}

func (n *prepend) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	if len(src) == 0 {
		return src, al
	}
	out, oal := s.normOut(n.k)
	out = append(append(out, n.s...), src...)
	if al != nil {
		for range n.s {
			oal = append(oal, al[0])
		}
		oal = append(oal, al...)
	}
	return s.normKeep(n.k, out, oal, al != nil)
}

// replaceString replaces every occurrence of a literal, left to right.
type replaceString struct {
	old, new []byte
	k        int
}

func (n *replaceString) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	i := bytes.Index(src, n.old)
	if i < 0 {
		return src, al
	}
	out, oal := s.normOut(n.k)
	if len(n.old) == 1 && al == nil {
		return s.normKeep(n.k, replaceByte(out, src, n.old[0], n.new), nil, false)
	}
	last := 0
	for i >= 0 {
		at := last + i
		out = append(out, src[last:at]...)
		out = append(out, n.new...)
		if al != nil {
			oal = append(oal, al[last:at]...)
			for range n.new {
				oal = append(oal, al[at])
			}
		}
		last = at + len(n.old)
		i = bytes.Index(src[last:], n.old)
	}
	out = append(out, src[last:]...)
	if al != nil {
		oal = append(oal, al[last:]...)
	}
	return s.normKeep(n.k, out, oal, al != nil)
}

// replaceByte appends src to out with every byte old replaced by new. A
// loop over the bytes into a buffer sized once costs less than a search
// for each occurrence when they are as close as spaces in text.
func replaceByte(out, src []byte, old byte, new []byte) []byte {
	size := len(out) + len(src) + bytes.Count(src, []byte{old})*(len(new)-1)
	out = slices.Grow(out, size-len(out))
	w := len(out)
	out = out[:size]
	if len(new) == 3 { // the metaspace replacement, U+2581
		a, b, c := new[0], new[1], new[2]
		for _, x := range src {
			if x == old {
				o := out[w : w+3]
				o[0], o[1], o[2] = a, b, c
				w += 3
				continue
			}
			out[w] = x
			w++
		}
		return out
	}
	for _, x := range src {
		if x == old {
			w += copy(out[w:], new)
			continue
		}
		out[w] = x
		w++
	}
	return out
}

// replaceRegex replaces every match of a regular expression with a
// literal.
type replaceRegex struct {
	re  *splitRegex
	new []byte
	k   int
}

func (n *replaceRegex) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	var ms []int
	ms, s.err = n.re.matches(src, s.ms[:0], s.err)
	s.ms = ms
	if len(ms) == 0 {
		return src, al
	}
	out, oal := s.normOut(n.k)
	last := 0
	for i := 0; i < len(ms); i += 2 {
		a, b := ms[i], ms[i+1]
		out = append(out, src[last:a]...)
		out = append(out, n.new...)
		if al != nil {
			oal = append(oal, al[last:a]...)
			for range n.new {
				oal = append(oal, al[a])
			}
		}
		last = b
	}
	out = append(out, src[last:]...)
	if al != nil {
		oal = append(oal, al[last:]...)
	}
	return s.normKeep(n.k, out, oal, al != nil)
}
