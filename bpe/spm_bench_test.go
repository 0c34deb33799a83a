package bpe

import (
	"bytes"
	"os"
	"testing"
)

// spmBenchText returns about n bytes of the golden corpus's English and
// code texts, repeated.
func spmBenchText(b *testing.B, n int) []byte {
	var all []byte
	for _, f := range []string{"en-gpl3-start.txt", "go-strings-reader.go.txt", "en-apache2-start-crlf.txt"} {
		t, err := os.ReadFile(goldenDir + "/corpus/" + f)
		if err != nil {
			b.Fatal(err)
		}
		all = append(all, t...)
	}
	return bytes.Repeat(all, n/len(all)+1)[:n]
}

func BenchmarkSentencePiece(b *testing.B) {
	enc, err := NewEncoder(loadSPM(b, "nfkc-bytes.model"), Options{})
	if err != nil {
		b.Fatal(err)
	}
	text := spmBenchText(b, 1<<20)
	// The same text with no white space at all, which is cut where two
	// ASCII characters merge apart; and one letter a megabyte long, one
	// merge problem through the heap merge.
	line := bytes.Map(func(r rune) rune {
		if r == ' ' || r == '\n' || r == '\t' || r == '\r' {
			return -1
		}
		return r
	}, text)
	for _, c := range []struct {
		name string
		text []byte
	}{{"count-prose", text}, {"count-1MB-line", line}, {"count-1MB-one-letter", oneLetter(1 << 20)}} {
		b.Run(c.name, func(b *testing.B) {
			b.SetBytes(int64(len(c.text)))
			for b.Loop() {
				enc.Count(c.text)
			}
		})
	}
}
