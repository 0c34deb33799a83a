package corpus

import (
	"bytes"
	"fmt"
	"io"
	"reflect"
	"strings"
	"testing"
)

// placed is an item of a read with its place among all the items.
type placed struct {
	at   int
	item string
}

// readPlaced reads data as the input "big.jsonl" with opt and returns the
// items that share owns, each with its place, as text; it fails on an item
// passed over that share owns.
func readPlaced(t *testing.T, data []byte, opt Options, share Shard, stream bool) []placed {
	t.Helper()
	opt.Stdin = bytes.NewReader(data)
	opt.Format = FormatJSONL
	var out []placed
	at := 0
	read := func(fn func(Item) error) error { return Read(Input{Path: "-", Size: -1}, opt, fn) }
	if stream { // another name, which the shares go by
		read = func(fn func(Item) error) error {
			return ReadStream("exports/big.jsonl", -1, bytes.NewReader(data), opt, fn)
		}
	}
	err := read(func(it Item) error {
		here := at
		at++
		switch {
		case it.Doc == nil && it.Skip == nil:
			if opt.Shard.Whole() {
				t.Fatalf("item %d passed over in a whole read", here)
			}
			return nil
		case it.Doc != nil:
			d := it.Doc
			text := d.Text
			if d.Stream != nil {
				text, _ = io.ReadAll(d.Stream)
				d.Stream.Close()
			}
			if share.Owns(d.Source, d.Record) {
				out = append(out, placed{here, fmt.Sprintf("doc %d %s %q %x", d.Record, d.Format, text, d.Hash)})
			}
		default:
			s := it.Skip
			if share.Owns(s.Source, s.Record) {
				out = append(out, placed{here, fmt.Sprintf("skip %d %s %s", s.Record, s.Reason, s.Detail)})
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// sameShardRead checks that reading with Options.Shard gives each share
// the items, at the places, that a whole read gives it.
func sameShardRead(t *testing.T, data []byte, field string, n int) {
	t.Helper()
	for k := 1; k <= n; k++ {
		share := Shard{K: k, N: n}
		for _, stream := range []bool{false, true} {
			want := readPlaced(t, data, Options{Field: field, MaxRecord: 64}, share, stream)
			got := readPlaced(t, data, Options{Field: field, MaxRecord: 64, Shard: share}, share, stream)
			if !reflect.DeepEqual(got, want) {
				t.Fatalf("field %q, share %v, ReadStream %v: the items differ from a whole read's\n got %v\nwant %v", field, share, stream, got, want)
			}
		}
	}
}

// A share that passes over the records of other shares reads its own as a
// whole read does: documents, skips of every kind, records without the
// asked field (held, then one skip for the file or one a record), blank
// lines, a first record that makes the file text.
func TestShardedReadMatchesWholeRead(t *testing.T) {
	var mixed strings.Builder
	for i := 1; i <= 60; i++ {
		switch {
		case i%11 == 0:
			mixed.WriteString("{not json\n")
		case i%7 == 0:
			mixed.WriteString(`{"body": "no text field"}` + "\n")
		case i%13 == 0:
			mixed.WriteString("\n   \n")
		case i%17 == 0:
			fmt.Fprintf(&mixed, "{\"text\": %q}\n", strings.Repeat("long ", 20))
		case i%5 == 0:
			mixed.WriteString(`{"text": ""}` + "\n")
		default:
			fmt.Fprintf(&mixed, "{\"text\": \"record %d\", \"body\": \"b%d\"}\n", i, i)
		}
	}
	cases := map[string]string{
		"mixed":      mixed.String(),
		"all absent": strings.Repeat(`{"body": "x"}`+"\n", 9),
		"absent then some": strings.Repeat(`{"body": "x"}`+"\n", 5) + `{"text": "t", "body": "y"}` + "\n" +
			strings.Repeat(`{"text": "u"}`+"\n", 6),
		"text file": `{"title": "a"}` + "\n" + `{"text": "b"}` + "\n" + `{"text": "c"}` + "\n",
		"messages":  `{"text": [{"role": "user", "content": "hi"}]}` + "\n" + `{"text": "x"}` + "\n",
		"empty":     "\n\n",
	}
	for name, data := range cases {
		for _, field := range []string{"", "text", "body"} {
			for _, n := range []int{1, 2, 3, 7} {
				t.Run(fmt.Sprintf("%s/%q/%d", name, field, n), func(t *testing.T) {
					sameShardRead(t, []byte(data), field, n)
				})
			}
		}
	}
}

// FuzzShardedJSONL holds a sharded read of any JSON Lines input to the
// whole read.
func FuzzShardedJSONL(f *testing.F) {
	f.Add([]byte(`{"text": "a"}`+"\n"+`{"body": "b"}`+"\n"+`{"text": }`+"\n"), "", 3)
	f.Add([]byte(`{"body": "b"}`+"\n"+`{"body": "c"}`+"\n"+`{"text": "a", "body": "d"}`+"\n"), "body", 2)
	f.Fuzz(func(t *testing.T, data []byte, field string, n int) {
		if n < 1 || n > 9 {
			n = 1 + (n%9+9)%9
		}
		sameShardRead(t, data, field, n)
	})
}
