package bpe

import (
	"bytes"
	"encoding/base64"
	"math/rand"
	"os"
	"testing"
	"testing/iotest"
)

func benchText(b *testing.B, files ...string) []byte {
	var all []byte
	for _, f := range files {
		data, err := os.ReadFile("../testdata/golden/corpus/" + f)
		if err != nil {
			b.Fatal(err)
		}
		all = append(all, data...)
	}
	return all
}

var (
	proseFiles = []string{"en-gpl3-start.txt", "en-apache2-start-crlf.txt"}
	codeFiles  = []string{"go-strings-reader.go.txt", "go-math-const.go.txt"}
	cjkFiles   = []string{"zh_CN-apt.po.txt", "ja-sed.po.txt", "ko-apt.po.txt"}
)

func benchCount(b *testing.B, text []byte, cold bool) {
	e := gpt2(b, Options{})
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if cold {
			b.StopTimer()
			e = gpt2(b, Options{})
			b.StartTimer()
		}
		e.Count(text)
	}
}

func benchEncode(b *testing.B, text []byte) {
	e := gpt2(b, Options{})
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	var dst []int
	for i := 0; i < b.N; i++ {
		dst, _ = e.EncodeStats(dst[:0], text)
	}
}

func BenchmarkCountProse(b *testing.B)  { benchCount(b, benchText(b, proseFiles...), false) }
func BenchmarkCountCode(b *testing.B)   { benchCount(b, benchText(b, codeFiles...), false) }
func BenchmarkCountCJK(b *testing.B)    { benchCount(b, benchText(b, cjkFiles...), false) }
func BenchmarkEncodeProse(b *testing.B) { benchEncode(b, benchText(b, proseFiles...)) }
func BenchmarkEncodeCode(b *testing.B)  { benchEncode(b, benchText(b, codeFiles...)) }
func BenchmarkEncodeCJK(b *testing.B)   { benchEncode(b, benchText(b, cjkFiles...)) }

func oneLetter(n int) []byte { return bytes.Repeat([]byte("a"), n) }

func randomBase64(n int) []byte {
	raw := make([]byte, n*3/4+3)
	rand.New(rand.NewSource(7)).Read(raw)
	return []byte(base64.StdEncoding.EncodeToString(raw))[:n]
}

// Pathological inputs: one pre-token of n bytes, and text that defeats the
// cache, each with a fresh encoder (cold caches). Each is run at 1 MB and
// 10 MB to show the growth is n log n.
func BenchmarkOneLetter1MB(b *testing.B)  { benchCount(b, oneLetter(1<<20), true) }
func BenchmarkOneLetter10MB(b *testing.B) { benchCount(b, oneLetter(10<<20), true) }
func BenchmarkBase64_1MB(b *testing.B)    { benchCount(b, randomBase64(1<<20), true) }
func BenchmarkBase64_10MB(b *testing.B)   { benchCount(b, randomBase64(10<<20), true) }

func BenchmarkLoadEmbedded(b *testing.B) {
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := DecodeCompact(gpt2Compact); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkLoadFiles(b *testing.B) {
	for i := 0; i < b.N; i++ {
		if _, err := LoadFiles("gpt2/vocab.json", "gpt2/merges.txt"); err != nil {
			b.Fatal(err)
		}
	}
}

// A stream that is one run of white space: CountReader finds no cut in it
// and reads on, which must cost a pass over the run, not one per read (the
// 1 MB and 10 MB runs show whether the growth is linear).
func BenchmarkCountReaderSpaces1MB(b *testing.B) {
	benchCountReader(b, bytes.Repeat([]byte(" "), 1<<20))
}
func BenchmarkCountReaderSpaces10MB(b *testing.B) {
	benchCountReader(b, bytes.Repeat([]byte(" "), 10<<20))
}

func benchCountReader(b *testing.B, text []byte) {
	e, err := NewEncoder(Default(), Options{})
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(text)))
	for b.Loop() {
		if _, _, err := e.CountReader(iotest.OneByteReader(bytes.NewReader(text))); err != nil {
			b.Fatal(err)
		}
	}
}
