package corpus

import (
	"bytes"
	"compress/gzip"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/klauspost/compress/zstd"
)

// collect returns every item of a Read or ReadStream, texts read in full.
func collect(t *testing.T, run func(fn func(Item) error) error) []Item {
	t.Helper()
	var out []Item
	err := run(func(it Item) error {
		if it.Doc != nil && it.Doc.Stream != nil {
			text, err := drain(it.Doc)
			if err != nil {
				t.Fatal(err)
			}
			it.Doc.Stream, it.Doc.Text = nil, text
		}
		out = append(out, it)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// drain reads a test document's stream to its end.
func drain(d *Document) ([]byte, error) {
	defer d.Stream.Close()
	var b bytes.Buffer
	_, err := b.ReadFrom(d.Stream)
	return b.Bytes(), err
}

// ReadStream gives what Read gives for the same bytes under the same name,
// plain and compressed, with streaming on and off.
func TestReadStreamMatchesRead(t *testing.T) {
	dir := t.TempDir()
	extra := map[string][]byte{
		"tickets.jsonl": []byte("{\"text\":\"one\"}\nnot json\n{\"text\":\"\"}\n{\"text\":\"four\"}\n"),
		"rows.csv":      []byte("id,text\n1,uno\n2\n3,tres\n"),
		"blob.png":      []byte("\x89PNG\r\n"),
		"empty.txt":     nil,
		"sniffed":       []byte("{\"text\":\"a\"}\n{\"text\":\"b\"}\n"),
		"big.txt":       bytes.Repeat([]byte("a long plain text "), 4000),
	}
	for name, b := range extra {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	ins, _ := List([]string{"../testdata/demo/docs", "../testdata/corpus", dir}, Options{Hidden: true})
	if len(ins) < 20 {
		t.Fatalf("only %d inputs listed", len(ins))
	}
	for _, in := range ins {
		for _, opt := range []Options{{}, {StreamAbove: 1000}} {
			want := collect(t, func(fn func(Item) error) error { return Read(in, opt, fn) })
			raw, err := os.ReadFile(in.Path)
			if err != nil {
				t.Fatal(err)
			}
			got := collect(t, func(fn func(Item) error) error {
				return ReadStream(in.Path, in.Size, bytes.NewReader(raw), opt, fn)
			})
			if !reflect.DeepEqual(got, want) {
				t.Errorf("%s: ReadStream gives\n%v\nRead gives\n%v", in.Path, itemLines(got), itemLines(want))
			}
			var gz bytes.Buffer
			zw := gzip.NewWriter(&gz)
			zw.Write(raw)
			zw.Close()
			var zs bytes.Buffer
			ze, _ := zstd.NewWriter(&zs)
			ze.Write(raw)
			ze.Close()
			for suffix, packed := range map[string][]byte{".gz": gz.Bytes(), ".zst": zs.Bytes()} {
				name := in.Path + suffix
				got := collect(t, func(fn func(Item) error) error {
					return ReadStream(name, int64(len(packed)), bytes.NewReader(packed), opt, fn)
				})
				for i := range want {
					if i < len(got) {
						rename(&got[i], in.Path)
					}
				}
				if !reflect.DeepEqual(got, want) {
					t.Errorf("%s: ReadStream gives\n%v\nRead of the plain file gives\n%v", name, itemLines(got), itemLines(want))
				}
			}
		}
	}
}

func rename(it *Item, name string) {
	if it.Doc != nil {
		it.Doc.Source = name
		it.Doc.Size = int64(len(it.Doc.Text))
	} else {
		it.Skip.Source = name
	}
}

func itemLines(items []Item) []string {
	var out []string
	for _, it := range items {
		if it.Doc != nil {
			d := *it.Doc
			out = append(out, d.Source+" "+d.Format+" "+string(d.Text[:min(len(d.Text), 40)]))
		} else {
			out = append(out, skipLine(*it.Skip))
		}
	}
	return out
}

func TestReadStreamCorrupt(t *testing.T) {
	items := collect(t, func(fn func(Item) error) error {
		return ReadStream("gs://b/x.jsonl.gz", 5, bytes.NewReader([]byte("hello")), Options{}, fn)
	})
	if len(items) != 1 || items[0].Skip == nil || items[0].Skip.Reason != ReasonCorrupt || items[0].Skip.Source != "gs://b/x.jsonl.gz" {
		t.Fatalf("got %v, want one corrupt skip", itemLines(items))
	}
}

// skipLine returns a skip as "source: reason: detail" (": detail" left out
// when there is none), for comparing with want lines.
func skipLine(s Skip) string {
	if s.Detail == "" {
		return s.Source + ": " + s.Reason
	}
	return s.Source + ": " + s.Reason + ": " + s.Detail
}
