package report

import "io"

// TextCounter counts characters and words in text fed to it in pieces of
// any size. Characters are UTF-8 characters (every byte that is not a
// continuation byte); words are runs of bytes between ASCII white space,
// as wc -w counts them in the C locale.
type TextCounter struct {
	Bytes, Chars, Words int64
	inWord              bool
}

var asciiSpace = [256]bool{' ': true, '\t': true, '\n': true, '\r': true, '\v': true, '\f': true}

// Write counts p; it never fails.
func (c *TextCounter) Write(p []byte) (int, error) {
	chars, words := int64(0), int64(0)
	in := c.inWord
	for _, b := range p {
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
	c.Words += words
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
