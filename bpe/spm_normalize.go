package bpe

import (
	"bytes"
	"unicode/utf8"
)

// normalizePrefix returns what the start of text becomes and how many of
// its bytes that takes, as the reference's normalizer does at each
// position: a user-defined piece is kept as it is, else the longest rule
// of the character map applies, else one character is kept and a byte
// that begins no valid character becomes U+FFFD.
func (sp *spmModel) normalizePrefix(text []byte) ([]byte, int) {
	if _, n := sp.user.match(text); n > 0 {
		return text[:n], n
	}
	if repl, n := sp.cmap.Match(text); n > 0 {
		return repl, n
	}
	r, n := utf8.DecodeRune(text)
	if r == utf8.RuneError && n == 1 {
		return replacementChar, 1
	}
	return text[:n], n
}

var replacementChar = []byte("\uFFFD")

// plain returns the length of the start of text that normalizes to itself
// with nothing to escape or drop: ASCII bytes the map copies, no space,
// no byte that may begin a user-defined piece.
func (sp *spmModel) plain(text []byte) int {
	k := sp.cmap.Plain(text)
	for i, c := range text[:k] {
		if c == ' ' || sp.user.first[c] != nil {
			return i
		}
	}
	return k
}

// normalize appends the model's normalization of text to dst: the rules of
// normalizePrefix, then, as the model's normalizer settings say, white
// space dropped at the ends and kept once inside runs, spaces written as
// the mark, and a mark added before the text (after it when white space
// is a suffix). When orig is not nil it gets, for every byte appended,
// the offset in text of the input it came from.
func (sp *spmModel) normalize(dst, text []byte, orig *[]int32) []byte {
	n := &sp.m.Normalizer
	if len(text) == 0 {
		return dst
	}
	consumed := 0
	if n.RemoveExtraWhitespaces {
		for len(text) > 0 {
			p, k := sp.normalizePrefix(text)
			if string(p) != " " {
				break
			}
			text = text[k:]
			consumed += k
		}
		if len(text) == 0 {
			return dst
		}
	}
	start := len(dst)
	emit := func(b []byte) {
		dst = append(dst, b...)
		if orig != nil {
			for range b {
				*orig = append(*orig, int32(consumed))
			}
		}
	}
	space := []byte(" ")
	if n.EscapeWhitespaces {
		space = []byte("\u2581")
	}
	dummy := n.AddDummyPrefix
	if dummy && !sp.m.TreatWhitespaceAsSuffix {
		emit(space)
	}
	prevSpace := n.RemoveExtraWhitespaces
	for len(text) > 0 {
		if k := sp.plain(text); k > 0 {
			emit(text[:k])
			prevSpace = false
			consumed += k
			text = text[k:]
			continue
		}
		p, k := sp.normalizePrefix(text)
		if prevSpace {
			for len(p) > 0 && p[0] == ' ' {
				p = p[1:]
			}
		}
		if len(p) > 0 {
			if n.EscapeWhitespaces && bytes.IndexByte(p, ' ') >= 0 {
				for i := range p {
					if p[i] == ' ' {
						emit(space)
					} else {
						emit(p[i : i+1])
					}
				}
			} else {
				emit(p)
			}
			prevSpace = p[len(p)-1] == ' '
		}
		consumed += k
		text = text[k:]
		if !n.RemoveExtraWhitespaces {
			prevSpace = false
		}
	}
	if n.RemoveExtraWhitespaces {
		for len(dst)-start >= len(space) && bytes.HasSuffix(dst[start:], space) {
			dst = dst[:len(dst)-len(space)]
			if orig != nil {
				*orig = (*orig)[:len(*orig)-len(space)]
			}
		}
	}
	if dummy && sp.m.TreatWhitespaceAsSuffix {
		emit(space)
	}
	return dst
}
