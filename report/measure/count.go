package measure

import (
	"encoding/binary"
	"io"
	"math/bits"
)

// boolMask returns the top bit of the first byte when b is true: the
// "previous byte was a space" carried into the next eight.
func boolMask(b bool) uint64 {
	if b {
		return 0x80
	}
	return 0
}

// TextCounter counts characters and words in text fed to it in pieces of
// any size. Characters are UTF-8 characters (every byte that is not a
// continuation byte); words are runs of bytes between ASCII white space,
// as wc -w counts them in the C locale.
type TextCounter struct {
	Bytes, Chars, WCWords int64
	inWord                bool
}

var asciiSpace = [256]bool{' ': true, '\t': true, '\n': true, '\r': true, '\v': true, '\f': true}

// Masks for counting eight bytes at a time.
const (
	hi7  = 0x8080808080808080 // the top bit of every byte
	lo7  = 0x7f7f7f7f7f7f7f7f
	ones = 0x0101010101010101
)

// Write counts p; it never fails. Eight bytes at a time: a byte is a
// continuation byte when its top two bits are 10, and white space when it
// is 0x20 or in 0x09-0x0D; a word starts at a non-space byte after a space.
func (c *TextCounter) Write(p []byte) (int, error) {
	chars, words := int64(0), int64(0)
	in := c.inWord
	n := len(p) &^ 7
	for i := 0; i < n; i += 8 {
		x := binary.LittleEndian.Uint64(p[i:])
		cont := x &^ (x << 1) & hi7
		chars += int64(8 - bits.OnesCount64(cont))
		low := x & lo7
		isSP := ^((low ^ 0x20*ones) + lo7) & hi7           // low 7 bits are 0x20
		ge9 := (low + (0x80-0x09)*ones) & hi7              // low 7 bits >= 0x09
		gt13 := (low + (0x7f-0x0d)*ones) & hi7             // low 7 bits > 0x0D
		space := (isSP | ge9&^gt13) &^ x                   // and the top bit clear
		start := ^space & hi7 & (space<<8 | boolMask(!in)) // non-space after space
		words += int64(bits.OnesCount64(start))
		in = space>>63 == 0
	}
	for _, b := range p[n:] {
		if b&0xC0 != 0x80 {
			chars++
		}
		if asciiSpace[b] {
			in = false
		} else if !in {
			in = true
			words++
		}
	}
	c.inWord = in
	c.Bytes += int64(len(p))
	c.Chars += chars
	c.WCWords += words
	return len(p), nil
}

type teeCounter struct {
	r io.Reader
	c *TextCounter
}

func (t teeCounter) Read(p []byte) (int, error) {
	n, err := t.r.Read(p)
	t.c.Write(p[:n])
	return n, err
}

// CountingReader returns a reader that reads r and counts what passes
// through into c.
func CountingReader(r io.Reader, c *TextCounter) io.Reader { return teeCounter{r, c} }
