package bpe

import "unicode/utf8"

// The byte alphabet of byte-level BPE: each of the 256 byte values is spelled
// as one printable character, so that a vocabulary file can be plain text.
// Printable Latin-1 bytes stand for themselves; the other 68 bytes (controls,
// space, DEL, NBSP, soft hyphen and so on) are moved, in byte order, to the
// code points from U+0100 up. This is the mapping published with GPT-2.

var (
	byteToRune [256]rune
	runeToByte = map[rune]byte{}
)

func init() {
	next := rune(256)
	for b := 0; b < 256; b++ {
		printable := (b >= '!' && b <= '~') || (b >= 0xA1 && b <= 0xAC) || (b >= 0xAE && b <= 0xFF)
		if printable {
			byteToRune[b] = rune(b)
		} else {
			byteToRune[b] = next
			next++
		}
		runeToByte[byteToRune[b]] = byte(b)
	}
}

// SpellBytes returns raw bytes written in the byte alphabet, the way a
// byte-level vocabulary file writes its tokens.
func SpellBytes(raw []byte) string {
	out := make([]rune, len(raw))
	for i, b := range raw {
		out[i] = byteToRune[b]
	}
	return string(out)
}

// unspell turns a token as written in a vocabulary file back into raw bytes.
// A character outside the byte alphabet (as in some added tokens) stands for
// its own UTF-8 bytes; ok reports whether every character was in the alphabet.
func unspell(s string) (raw []byte, ok bool) {
	return appendUnspelled(make([]byte, 0, len(s)), []byte(s))
}

// appendUnspelled is unspell appending to dst.
func appendUnspelled(dst, s []byte) ([]byte, bool) {
	ok := true
	for len(s) > 0 {
		r, n := utf8.DecodeRune(s)
		s = s[n:]
		if b, in := runeToByte[r]; in {
			dst = append(dst, b)
			continue
		}
		ok = false
		dst = utf8.AppendRune(dst, r)
	}
	return dst, ok
}
