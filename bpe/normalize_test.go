package bpe

import (
	"bytes"
	"testing"
)

// Replace of a one-byte string takes a loop of its own when no alignment
// is asked for; both paths give what the standard library's
// bytes.ReplaceAll gives, into a buffer left from a longer text too.
func TestReplaceOneByte(t *testing.T) {
	texts := []string{"", " ", "a", "  a  b ", "no space", "x\xff \xe2\x96 \u2581 é\t\n end  ", string(bytes.Repeat([]byte("ab  "), 300))}
	for _, repl := range []string{"", "_", "\u2581", "<sp>"} {
		n := &replaceString{old: []byte(" "), new: []byte(repl)}
		s := newState(Default(), 16)
		for _, tx := range append(texts, texts[0]) { // the empty text last, after the long one
			want := bytes.ReplaceAll([]byte(tx), []byte(" "), []byte(repl))
			got, al := n.normalize(s, []byte(tx), nil)
			if !bytes.Equal(got, want) || al != nil {
				t.Errorf("%q -> %q: got %q (alignment %v), want %q", tx, repl, got, al, want)
			}
			ident := make([]int32, len(tx)+1)
			for i := range ident {
				ident[i] = int32(i)
			}
			got, al = n.normalize(s, []byte(tx), ident)
			if !bytes.Equal(got, want) || len(al) != len(want)+1 {
				t.Errorf("%q -> %q, aligned: got %q with %d offsets, want %q", tx, repl, got, len(al), want)
			}
		}
	}
}

// Prepend then Replace of one byte, which a Sequence runs in one pass when
// no alignment is asked for, gives what the two give in turn (the prepended
// text replaced too).
func TestPrependReplaceOnePass(t *testing.T) {
	for _, pre := range []string{"\u2581", " ", "", "a b"} {
		p := &prepend{s: []byte(pre), k: 0}
		r := &replaceString{old: []byte(" "), new: []byte("\u2581"), k: 1}
		seq := &normSeq{list: []normalizer{p, r}}
		s := newState(Default(), 16)
		for _, tx := range []string{"", "x", " lead and trail ", "none", "\xff \xe2\x96\x81 é"} {
			want := []byte(tx)
			if tx != "" {
				want = bytes.ReplaceAll([]byte(pre+tx), []byte(" "), []byte("\u2581"))
			}
			got, al := seq.normalize(s, []byte(tx), nil)
			if !bytes.Equal(got, want) || al != nil {
				t.Errorf("prepend %q, %q: got %q (alignment %v), want %q", pre, tx, got, al, want)
			}
		}
	}
}
