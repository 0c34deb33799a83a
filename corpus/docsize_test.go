package corpus

import (
	"bytes"
	"errors"
	"fmt"
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

// ReadStream keeps its decompressor open for a streamed document too.
func TestReadStreamCompressedStream(t *testing.T) {
	body := strings.Repeat("The keeper trims the wick at dusk. ", 4000)
	for _, c := range []struct {
		name string
		pack func(*testing.T, []byte) []byte
	}{{"gs://b/a.txt.zst", zst}, {"gs://b/a.txt.gz", gz}} {
		var items []Item
		err := ReadStream(c.name, -1, bytes.NewReader(c.pack(t, []byte(body))), Options{StreamAbove: 1 << 10},
			func(it Item) error { items = append(items, it); return nil })
		if err != nil {
			t.Fatal(err)
		}
		check(t, show(t, "", items), []string{fmt.Sprintf("%s:0 text %q", c.name, body)})
	}
}

// A bad gzip header is named once, and a cut gzip stream is truncated
// whether its text was held or streamed.
func TestGzipErrorsAlike(t *testing.T) {
	items := readBytes(t, []byte("\x1f\x8bnot gzip at all"), Options{})
	if d := items[0].Skip.Detail; strings.Count(d, "gzip:") != 1 {
		t.Errorf("detail %q names gzip other than once", d)
	}
	var stop bytes.Buffer
	for range 3000 {
		fmt.Fprintf(&stop, "%d the tide turned at the harbour wall\n", stop.Len())
	}
	packed := gz(t, stop.Bytes())
	cut := packed[:len(packed)/2]
	held := readBytes(t, cut, Options{})
	if s := held[0].Skip; s == nil || s.Reason != ReasonTruncated {
		t.Fatalf("held: %+v", held[0])
	}
	streamed := readBytes(t, cut, Options{StreamAbove: 100})
	_, err := io.ReadAll(streamed[0].Doc.Stream)
	streamed[0].Doc.Stream.Close()
	if ReasonOf(err) != ReasonTruncated {
		t.Errorf("streamed: %v gives %q", err, ReasonOf(err))
	}
}
