package fragments

import (
	"bytes"
	"compress/gzip"
	"io"
	"os"
	"testing"

	"morsel/bpe"
)

// Under a bundle whose normalizer puts a marker before the text
// (metaspace-32k prepends "▁"), the tokens spell one byte more than the
// text; the words are read from what they spell, and the words and their
// pieces come out as they read there.
func TestScanTextUnderMetaspaceBundle(t *testing.T) {
	gz, err := os.ReadFile("../../testdata/vocab/metaspace-32k/tokenizer.json.gz")
	if err != nil {
		t.Fatal(err)
	}
	zr, err := gzip.NewReader(bytes.NewReader(gz))
	if err != nil {
		t.Fatal(err)
	}
	data, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	v, err := bpe.ParseBundle("tokenizer.json", data, "", nil)
	if err != nil {
		t.Fatal(err)
	}
	enc, err := bpe.NewEncoder(v, bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	f := NewFragmenter(enc, nil)
	text := []byte("Hello quillandri hello")
	dw, err := f.ScanText(text)
	if err != nil {
		t.Fatal(err)
	}
	if dw.Tokens != enc.Count(text) || dw.All.Words != 3 {
		t.Fatalf("%d tokens (Count %d), %d words; want 3 words", dw.Tokens, enc.Count(text), dw.All.Words)
	}
}
