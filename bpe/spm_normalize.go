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
	i := 0
	for i+1 < len(text) && text[i] < utf8.RuneSelf && text[i+1] < utf8.RuneSelf && sp.asciiKind[text[i]] == asciiCopy {
		i++
	}
	return i
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

// The normalizer's tables decide most characters without the trie: an
// ASCII byte followed by another ASCII byte (or by nothing), and a
// character of the Basic Multilingual Plane that no longer key begins
// with. Anything else, and anything a user-defined piece may begin, takes
// normalizePrefix's way.
const (
	asciiSlow  = iota // ask normalizePrefix
	asciiCopy         // the byte is kept as it is and is no space
	asciiSpace        // the byte becomes one space
	asciiRepl         // the byte becomes asciiRepl's text, with no space in it
)

// Values of charRule besides 0 (ask normalizePrefix): ruleCopy keeps the
// character; else the rule's replacement is normPool[v>>8:][:v&0xff].
const ruleCopy = ^uint32(0)

// buildNormTables fills asciiKind and charRule from the character map and
// the user-defined pieces.
func (sp *spmModel) buildNormTables() {
	for c := range 128 {
		if sp.user.first[c] != nil {
			continue
		}
		repl, has, longer := sp.cmap.ASCII(byte(c))
		switch {
		case longer:
		case !has && c == ' ', has && string(repl) == " ":
			sp.asciiKind[c] = asciiSpace
		case !has:
			sp.asciiKind[c] = asciiCopy
		case len(repl) > 0 && len(repl) < 256 && bytes.IndexByte(repl, ' ') < 0:
			sp.asciiKind[c] = asciiRepl
			sp.asciiRepl[c] = repl
		}
	}
	sp.charRule = make([]uint32, 0x10000)
	var buf [4]byte
	for r := rune(0x80); r < 0x10000; r++ {
		if r >= 0xD800 && r < 0xE000 {
			continue // no UTF-8 character
		}
		s := buf[:utf8.EncodeRune(buf[:], r)]
		if sp.user.first[s[0]] != nil {
			continue
		}
		repl, n, alone := sp.cmap.Alone(s)
		switch {
		case !alone:
		case n == 0:
			sp.charRule[r] = ruleCopy
		case n == len(s) && len(repl) > 0 && len(repl) < 256 && bytes.IndexByte(repl, ' ') < 0 && len(sp.normPool) < 1<<23:
			sp.charRule[r] = uint32(len(sp.normPool))<<8 | uint32(len(repl))
			sp.normPool = append(sp.normPool, repl...)
		}
	}
}

// normalizeFast appends the model's normalization of text to dst, as
// normalize does with no offsets asked for, deciding most characters by
// the tables of buildNormTables.
func (sp *spmModel) normalizeFast(dst, text []byte) []byte {
	n := &sp.m.Normalizer
	remove := n.RemoveExtraWhitespaces
	if remove {
		for len(text) > 0 {
			p, k := sp.normalizePrefix(text)
			if string(p) != " " {
				break
			}
			text = text[k:]
		}
	}
	if len(text) == 0 {
		return dst
	}
	start := len(dst)
	space := []byte(" ")
	if n.EscapeWhitespaces {
		space = []byte("\u2581")
	}
	if n.AddDummyPrefix && !sp.m.TreatWhitespaceAsSuffix {
		dst = append(dst, space...)
	}
	prevSpace := remove
	for i := 0; i < len(text); {
		c := text[i]
		if c < utf8.RuneSelf {
			if i+1 == len(text) || text[i+1] < utf8.RuneSelf {
				switch sp.asciiKind[c] {
				case asciiCopy:
					j := i + 1
					for j < len(text) && text[j] < utf8.RuneSelf && sp.asciiKind[text[j]] == asciiCopy &&
						(j+1 == len(text) || text[j+1] < utf8.RuneSelf) {
						j++
					}
					dst = append(dst, text[i:j]...)
					prevSpace = false
					i = j
					continue
				case asciiSpace:
					if !prevSpace {
						dst = append(dst, space...)
					}
					prevSpace = remove
					i++
					continue
				case asciiRepl:
					dst = append(dst, sp.asciiRepl[c]...)
					prevSpace = false
					i++
					continue
				}
			}
		} else if c >= 0xC2 && c < 0xF0 {
			if r, size := utf8.DecodeRune(text[i:]); size > 1 {
				switch rule := sp.charRule[r]; rule {
				case 0:
				case ruleCopy:
					dst = append(dst, text[i:i+size]...)
					prevSpace = false
					i += size
					continue
				default:
					dst = append(dst, sp.normPool[rule>>8:][:rule&0xff]...)
					prevSpace = false
					i += size
					continue
				}
			}
		}
		p, k := sp.normalizePrefix(text[i:])
		if prevSpace {
			for len(p) > 0 && p[0] == ' ' {
				p = p[1:]
			}
		}
		if len(p) > 0 {
			if n.EscapeWhitespaces && bytes.IndexByte(p, ' ') >= 0 {
				for _, b := range p {
					if b == ' ' {
						dst = append(dst, space...)
					} else {
						dst = append(dst, b)
					}
				}
			} else {
				dst = append(dst, p...)
			}
			prevSpace = remove && p[len(p)-1] == ' '
		}
		i += k
	}
	if remove {
		for len(dst)-start >= len(space) && bytes.HasSuffix(dst[start:], space) {
			dst = dst[:len(dst)-len(space)]
		}
	}
	if n.AddDummyPrefix && sp.m.TreatWhitespaceAsSuffix {
		dst = append(dst, space...)
	}
	return dst
}
