package corpus

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/cespare/xxhash/v2"
)

// Identical texts get the same Hash however they are read: held, streamed
// through a decompressor, or as a record.
func TestDocumentHash(t *testing.T) {
	// XXH64 of the empty input with seed 0 is 0xef46db3751d8e999 (the
	// xxHash specification's test value, from memory; cespare/xxhash
	// v2.3.0 agrees).
	if got := xxhash.Sum64(nil); got != 0xef46db3751d8e999 {
		t.Fatalf("xxhash of nothing = %#x", got)
	}
	text := strings.Repeat("The keeper trims the wick at dusk. ", 100)
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"a.txt": text, "b.txt": text, "c.txt": text + ".",
		"d.jsonl": `{"text": "` + text + `"}` + "\n",
	})
	if err := os.WriteFile(filepath.Join(dir, "e.txt.gz"), gz(t, []byte(text)), 0o644); err != nil {
		t.Fatal(err)
	}
	want := xxhash.Sum64String(text)
	for _, above := range []int64{100, 1 << 20} { // streamed, held
		for _, name := range []string{"a.txt", "b.txt", "c.txt", "d.jsonl", "e.txt.gz"} {
			items := readFile(t, filepath.Join(dir, name), Options{StreamAbove: above})
			d := items[0].Doc
			if (d.Stream != nil) != (above == 100 && name != "d.jsonl") {
				t.Errorf("%s: streamed %v under StreamAbove %d", name, d.Stream != nil, above)
			}
			if d.Stream != nil {
				if d.Hash != 0 {
					t.Errorf("%s: hash %#x before the stream was read", name, d.Hash)
				}
				io.Copy(io.Discard, d.Stream)
				d.Stream.Close()
			}
			if same := d.Hash == want; same != (name != "c.txt") {
				t.Errorf("%s: hash %#x, text's %#x", name, d.Hash, want)
			}
		}
	}
}

// A document longer than MaxDocument is skipped as too-large, before it is
// read when its size is known, and by its stream failing when not.
func TestMaxDocument(t *testing.T) {
	dir := t.TempDir()
	big := strings.Repeat("lantern ", 100) // 800 bytes
	writeFiles(t, dir, map[string]string{
		"big.txt": big, "small.txt": "wick",
		"rows.jsonl": `{"text": "` + big + `"}` + "\n" + `{"text": "short"}` + "\n",
		"page.html":  "<p>" + big + "</p>",
	})
	if err := os.WriteFile(filepath.Join(dir, "big.txt.gz"), gz(t, []byte(big)), 0o644); err != nil {
		t.Fatal(err)
	}
	opt := Options{MaxDocument: 500, StreamAbove: 100}
	for name, want := range map[string][]string{
		"big.txt":    {`big.txt:0 !too-large`},
		"small.txt":  {`small.txt:0 text "wick"`},
		"rows.jsonl": {`rows.jsonl:1 !too-large`, `rows.jsonl:2 jsonl "short"`},
		"page.html":  {`page.html:0 !too-large`},
	} {
		check(t, show(t, dir, readFile(t, filepath.Join(dir, name), opt)), want)
	}
	items := readFile(t, filepath.Join(dir, "big.txt.gz"), opt)
	s := items[0].Doc.Stream
	_, err := io.ReadAll(s)
	s.Close()
	if !errors.Is(err, ErrDocumentTooLarge) {
		t.Errorf("stream of 800 bytes under a 500-byte bound: %v", err)
	}
	if len(items) != 1 {
		t.Errorf("%d items", len(items))
	}
}
