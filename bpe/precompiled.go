package bpe

import (
	"encoding/base64"
	"fmt"
	"unicode/utf8"

	"github.com/rivo/uniseg"

	"morsel/bpe/charsmap"
)

// precompiled is a bundle's Precompiled normalizer: SentencePiece's
// compiled character map, applied as the tokenizers library applies it,
// which differs from SentencePiece's own longest-match rule. The text goes
// grapheme cluster by cluster. A cluster of fewer than six bytes that
// starts with a key of the map is replaced whole by the replacement of the
// shortest such key; any other cluster goes character by character, each
// replaced the same way when a key starts it, else kept.
type precompiled struct {
	m     *charsmap.Map
	k     int
	ascii [utf8.RuneSelf][]byte // the replacement of each ASCII byte alone; nil when none
	has   [utf8.RuneSelf]bool
}

func compilePrecompiled(file, where, b64 string, k int) (normalizer, error) {
	blob, err := base64.StdEncoding.DecodeString(b64)
	if err != nil {
		return nil, &posError{file, 0, fmt.Sprintf("%s: precompiled_charsmap is not base64: %v", where, err)}
	}
	m, err := charsmap.Parse(blob)
	if err != nil {
		return nil, &posError{file, 0, fmt.Sprintf("%s: %v", where, err)}
	}
	n := &precompiled{m: m, k: k}
	for c := 0; c < utf8.RuneSelf; c++ {
		if repl, l := m.Match([]byte{byte(c)}); l == 1 {
			n.ascii[c], n.has[c] = repl, true
		}
	}
	return n, nil
}

// transform returns the replacement of the shortest key of the map that
// starts chunk.
func (n *precompiled) transform(chunk []byte) ([]byte, bool) {
	_, longest := n.m.Match(chunk)
	for k := 1; k <= longest; k++ {
		if repl, l := n.m.Match(chunk[:k]); l == k {
			return repl, true
		}
	}
	return nil, false
}

// simpleASCII reports whether t[i] is an ASCII byte that is a grapheme
// cluster of its own: followed by another ASCII byte (or nothing), and not
// the CR of a CR LF pair.
func simpleASCII(t []byte, i int) bool {
	c := t[i]
	if c >= utf8.RuneSelf {
		return false
	}
	if i+1 == len(t) {
		return true
	}
	d := t[i+1]
	return d < utf8.RuneSelf && !(c == '\r' && d == '\n')
}

func (n *precompiled) normalize(s *state, src []byte, al []int32) ([]byte, []int32) {
	i := 0
	for i < len(src) && simpleASCII(src, i) && !n.has[src[i]] {
		i++
	}
	if i == len(src) {
		return src, al
	}
	out, oal := s.normOut(n.k)
	out = append(out, src[:i]...)
	if al != nil {
		oal = append(oal, al[:i]...)
	}
	put := func(b []byte, at int) {
		m := len(out)
		out = append(out, b...)
		if al != nil {
			for ; m < len(out); m++ {
				oal = append(oal, al[at])
			}
		}
	}
	for i < len(src) {
		if simpleASCII(src, i) {
			if c := src[i]; n.has[c] {
				put(n.ascii[c], i)
			} else {
				put(src[i:i+1], i)
			}
			i++
			continue
		}
		g, _, _, _ := uniseg.FirstGraphemeCluster(src[i:], -1)
		if len(g) == 0 {
			g = src[i : i+1]
		}
		if len(g) < 6 {
			if repl, ok := n.transform(g); ok {
				put(repl, i)
				i += len(g)
				continue
			}
		}
		for j := 0; j < len(g); {
			_, w := utf8.DecodeRune(g[j:])
			if w < 1 {
				w = 1
			}
			if repl, ok := n.transform(g[j : j+w]); ok {
				put(repl, i+j)
			} else {
				put(g[j:j+w], i+j)
			}
			j += w
		}
		i += len(g)
	}
	if al != nil {
		oal = append(oal, al[len(src)])
	}
	return s.normKeep(n.k, out, oal, al != nil)
}
