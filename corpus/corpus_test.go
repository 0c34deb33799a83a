package corpus

import (
	"bytes"
	"compress/gzip"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/klauspost/compress/zstd"
)

// show renders items compactly: "src:rec format text" for a document and
// "src:rec !reason" (failed) or "src:rec ~reason" (deliberate) for a skip,
// with "@line" after the record for a CSV or TSV row. Paths are shown
// relative to base, streams are read in full.
func show(t *testing.T, base string, items []Item) []string {
	t.Helper()
	var out []string
	for _, it := range items {
		if (it.Doc == nil) == (it.Skip == nil) {
			t.Fatalf("item with both or neither of Doc and Skip: %+v", it)
		}
		if d := it.Doc; d != nil {
			text := d.Text
			if d.Stream != nil {
				b, err := io.ReadAll(d.Stream)
				if err != nil {
					t.Fatalf("reading stream of %s: %v", d.Source, err)
				}
				d.Stream.Close()
				text = b
			}
			out = append(out, fmt.Sprintf("%s:%s %s %q", rel(base, d.Source), at(d.Record, d.Line), d.Format, text))
			continue
		}
		s := it.Skip
		mark := "~"
		if s.Failed {
			mark = "!"
		}
		out = append(out, fmt.Sprintf("%s:%s %s%s", rel(base, s.Source), at(s.Record, s.Line), mark, s.Reason))
	}
	return out
}

func at(record, line int) string {
	if line == 0 {
		return strconv.Itoa(record)
	}
	return fmt.Sprintf("%d@%d", record, line)
}

func rel(base, p string) string {
	if base == "" {
		return p
	}
	if r, err := filepath.Rel(base, p); err == nil && !strings.HasPrefix(r, "..") {
		return filepath.ToSlash(r)
	}
	return p
}

// walkAll lists paths as List does, but with each skip in its place among
// the inputs, and reads each input as Read does, calling fn for every
// document and skip in order. It stops at the first error fn
// returns and returns it; unreadable inputs are reported as Skips, not as
// errors.
func walkAll(paths []string, opt Options, fn func(Item) error) error {
	for _, e := range list(paths, opt) {
		if e.skip != nil {
			if err := fn(Item{Skip: e.skip}); err != nil {
				return err
			}
			continue
		}
		if err := Read(*e.in, opt, fn); err != nil {
			return err
		}
	}
	return nil
}

func walk(t *testing.T, paths []string, opt Options) []Item {
	t.Helper()
	var items []Item
	if err := walkAll(paths, opt, func(it Item) error {
		items = append(items, it)
		return nil
	}); err != nil {
		t.Fatalf("walk: %v", err)
	}
	return items
}

func readBytes(t *testing.T, data []byte, opt Options) []Item {
	t.Helper()
	opt.Stdin = bytes.NewReader(data)
	var items []Item
	if err := Read(Input{Path: "-", Size: -1}, opt, func(it Item) error {
		items = append(items, it)
		return nil
	}); err != nil {
		t.Fatalf("Read: %v", err)
	}
	return items
}

// writeFiles creates the named files (slash paths) under dir.
func writeFiles(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for name, body := range files {
		p := filepath.Join(dir, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func check(t *testing.T, got, want []string) {
	t.Helper()
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got\n\t%s\nwant\n\t%s", strings.Join(got, "\n\t"), strings.Join(want, "\n\t"))
	}
}

func gz(t *testing.T, b []byte) []byte {
	t.Helper()
	var buf bytes.Buffer
	w := gzip.NewWriter(&buf)
	w.Write(b)
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func zst(t *testing.T, b []byte) []byte {
	t.Helper()
	w, err := zstd.NewWriter(nil)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	return w.EncodeAll(b, nil)
}

const rfcDir = "../testdata/corpus/rfc8259"

// The JSON texts are the examples of RFC 8259, section 13.
func TestJSONRFC8259Examples(t *testing.T) {
	object := filepath.Join(rfcDir, "object.json")
	array := filepath.Join(rfcDir, "array.json")
	tests := []struct {
		path, field string
		want        []string
	}{
		{object, "Image.Title", []string{`object.json:0 json "View from 15th Floor"`}},
		{object, "Image.Thumbnail.Url", []string{`object.json:0 json "http://www.example.com/image/481989943"`}},
		{object, "Image.Width", []string{`object.json:0 !not-text`}},
		{object, "Image.Animated", []string{`object.json:0 !not-text`}},
		{object, "Image.IDs", []string{`object.json:0 !not-text`}},
		{object, "Image.IDs.3", []string{`object.json:0 !not-text`}},
		{object, "Image.Thumbnail", []string{`object.json:0 !not-text`}},
		{object, "Image.Caption", []string{`object.json:0 !no-field`}},
		{object, "Image.Title.Text", []string{`object.json:0 !no-field`}},
		{array, "City", []string{`array.json:1 json "SAN FRANCISCO"`, `array.json:2 json "SUNNYVALE"`}},
		{array, "Address", []string{`array.json:1 ~empty`, `array.json:2 ~empty`}},
		{array, "Zip", []string{`array.json:1 json "94107"`, `array.json:2 json "94085"`}},
		{array, "Latitude", []string{`array.json:1 !not-text`, `array.json:2 !not-text`}},
	}
	for _, tt := range tests {
		t.Run(filepath.Base(tt.path)+"/"+tt.field, func(t *testing.T) {
			check(t, show(t, rfcDir, walk(t, []string{tt.path}, Options{Field: tt.field})), tt.want)
		})
	}
}

// The small JSON texts of RFC 8259, section 13 ("Hello world!", 42, true),
// read as whole JSON documents and as JSON Lines.
func TestJSONRFC8259Values(t *testing.T) {
	tests := []struct{ in, json, jsonl string }{
		{`"Hello world!"`, `-:0 json "Hello world!"`, `-:1 jsonl "Hello world!"`},
		{`42`, `-:0 !not-text`, `-:1 !not-text`},
		{`true`, `-:0 !not-text`, `-:1 !not-text`},
	}
	for _, tt := range tests {
		check(t, show(t, "", readBytes(t, []byte(tt.in), Options{Format: FormatJSON})), []string{tt.json})
		check(t, show(t, "", readBytes(t, []byte(tt.in), Options{Format: FormatJSONL})), []string{tt.jsonl})
	}
}

// The records of the RFC 8259 section 13 array example, one per line.
func TestJSONLRFC8259(t *testing.T) {
	in := `{"precision": "zip", "Latitude": 37.7668, "Longitude": -122.3959, "Address": "", "City": "SAN FRANCISCO", "State": "CA", "Zip": "94107", "Country": "US"}` + "\n" +
		"\n" +
		`{"precision": "zip", "Latitude": 37.371991, "Longitude": -122.026020, "Address": "", "City": "SUNNYVALE", "State": "CA", "Zip": "94085", "Country": "US"}` + "\r\n"
	check(t, show(t, "", readBytes(t, []byte(in), Options{Field: "City"})),
		[]string{`-:1 jsonl "SAN FRANCISCO"`, `-:3 jsonl "SUNNYVALE"`})
}

func TestJSONLRecords(t *testing.T) {
	in := strings.Join([]string{
		`{"text": "first"}`,
		`{"text": "second",}`,
		`{"body": "no text here"}`,
		`{"text": 7}`,
		`{"text": null}`,
		`{"text": ""}`,
		`  `,
		`{"text": "caf\u00e9 \ud83d\ude00"}`,
		`["not", "an object"]`,
		`{"text": "last"}`,
	}, "\n")
	check(t, show(t, "", readBytes(t, []byte(in), Options{Format: FormatJSONL})), []string{
		`-:1 jsonl "first"`,
		`-:2 !malformed`,
		`-:3 !no-field`,
		`-:4 !not-text`,
		`-:5 !no-field`,
		`-:6 ~empty`,
		`-:8 jsonl "café 😀"`,
		`-:9 !no-field`,
		`-:10 jsonl "last"`,
	})
	items := readBytes(t, []byte(in), Options{Format: FormatJSONL})
	s := items[1].Skip
	if s.Detail != `line 2: invalid character '}' looking for beginning of object key string` {
		t.Errorf("malformed detail = %q", s.Detail)
	}
}

func TestJSONLNestedField(t *testing.T) {
	in := `{"meta": {"body": "deep"}}` + "\n" + `{"meta": "flat"}` + "\n" + `{"turns": [{"text": "a"}, {"text": "b"}]}` + "\n"
	check(t, show(t, "", readBytes(t, []byte(in), Options{Field: "meta.body", Format: FormatJSONL})),
		[]string{`-:1 jsonl "deep"`, `-:2 !no-field`, `-:3 !no-field`})
	check(t, show(t, "", readBytes(t, []byte(in), Options{Field: "turns.1.text", Format: FormatJSONL})),
		[]string{`-:1 !no-field`, `-:2 !no-field`, `-:3 jsonl "b"`})
}

func TestJSONLMessages(t *testing.T) {
	tests := []struct{ line, want string }{
		{`{"text": [{"role": "user", "content": "Where is pier 4?"}, {"role": "assistant", "content": "North end."}]}`,
			`-:1 jsonl "user: Where is pier 4?\nassistant: North end."`},
		{`{"text": [{"content": "no role"}, "plain", {"role": "tool", "content": null}, {"role": 3, "content": "odd role"}]}`,
			`-:1 jsonl "no role\nplain\nodd role"`},
		{`{"text": [{"role": "user", "content": ["part"]}]}`, `-:1 !not-text`},
		{`{"text": [1, 2]}`, `-:1 !not-text`},
		{`{"text": []}`, `-:1 ~empty`},
		{`{"text": [{"role": "user", "content": ""}]}`, `-:1 jsonl "user: "`},
	}
	for _, tt := range tests {
		check(t, show(t, "", readBytes(t, []byte(tt.line), Options{Format: FormatJSONL})), []string{tt.want})
	}
}

func TestJSONArrayMalformed(t *testing.T) {
	tests := []struct {
		in   string
		want []string
	}{
		{`[{"text": "a"}, {"text": "b"} {"text": "c"}]`, []string{`-:1 json "a"`, `-:2 json "b"`, `-:3 !malformed`}},
		{`[{"text": "a"}, {"text": "b"`, []string{`-:1 json "a"`, `-:2 !truncated`}},
		{`[{"text": "a"}] [1]`, []string{`-:1 json "a"`, `-:0 !malformed`}},
		{`{"text": "a"} {"text": "b"}`, []string{`-:0 !malformed`}},
		{`[]`, []string{`-:0 ~empty`}},
		{"\ufeff[\"bom\"]", []string{`-:1 json "bom"`}},
	}
	for _, tt := range tests {
		check(t, show(t, "", readBytes(t, []byte(tt.in), Options{Format: FormatJSON})), tt.want)
	}
}

func TestSniff(t *testing.T) {
	tests := []struct{ in, want string }{
		{`{"text": "a"}` + "\n" + `{"text": "b"}`, FormatJSONL},
		{`{"text": "one object"}`, FormatJSONL},
		{`{"text": }` + "\n" + `{"text": "b"}` + "\n", FormatJSONL},
		{"{\n  \"text\": \"pretty\"\n}\n", FormatJSON},
		{"[\n  {\"text\": \"a\"}\n]", FormatJSON},
		{"[link](http://example.com) is markdown", FormatText},
		{"{not json at all}", FormatText},
		{"<!doctype html><p>hi</p>", FormatHTML},
		{"  <div>hi</div>", FormatHTML},
		{"<?xml version=\"1.0\"?><a/>", FormatText},
		{"id,text\n1,hello\n2,world\n", FormatCSV},
		{"id\ttext\n1\thello\n", FormatTSV},
		{"id,body\n1,hello\n", FormatText},
		{"Dear keeper, the lamp, the oil,\nand the wick, all arrived.\n", FormatText},
		{"plain words\n", FormatText},
		{"", FormatText},
	}
	for _, tt := range tests {
		if got := sniff([]byte(tt.in), "text"); got != tt.want {
			t.Errorf("sniff(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}

func TestBinaryReason(t *testing.T) {
	few := append([]byte(strings.Repeat("harbour ", 100)), 0xff, 0xfe)
	tests := []struct {
		in     []byte
		binary bool
	}{
		{[]byte("plain text"), false},
		{[]byte("nul\x00inside"), true},
		{few, false},
		{bytes.Repeat([]byte{0xff, 'a'}, 100), true},            // 50% invalid
		{bytes.Repeat([]byte{0xff, 'a', 'b', 'c'}, 100), false}, // 25% invalid
		{[]byte("cut at the end \xe2\x82"), false},
		{[]byte("héllo wörld"), false},
	}
	for _, tt := range tests {
		if got := binaryReason(tt.in) != ""; got != tt.binary {
			t.Errorf("binaryReason(%q) binary = %v, want %v", tt.in, got, tt.binary)
		}
	}
}

// TestBadInputsWalkOn puts every kind of bad input in one folder and checks
// each gets its reason while the walk carries on to the good files.
func TestBadInputsWalkOn(t *testing.T) {
	dir := t.TempDir()
	good := "id,text\n1,good row\n"
	var truncated []byte
	{
		full := gz(t, []byte(strings.Repeat(`{"text": "kept record"}`+"\n", 2000)))
		truncated = full[:len(full)/2]
	}
	writeFiles(t, dir, map[string]string{
		"a-binary.dat":         "\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR",
		"b-bad-utf8.txt":       "caf\xe9 au lait\n",
		"c-empty.txt":          "",
		"d-truncated.jsonl.gz": string(truncated),
		"e-malformed.jsonl":    `{"text": "ok"}` + "\n" + `{"text": }` + "\n" + `{"text": "after"}` + "\n",
		"f-ragged.csv":         "id,text\n1,x,y\n2,fine\n",
		"g-corrupt.gz":         "\x1f\x8bnot really gzip",
		"h-image.png":          "looks like text but the extension says image",
		"z-good.csv":           good,
	})
	if err := os.Symlink(filepath.Join(dir, "nowhere"), filepath.Join(dir, "i-dangling.txt")); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(dir, "j-loop-b"), filepath.Join(dir, "j-loop-a")); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(dir, "j-loop-a"), filepath.Join(dir, "j-loop-b")); err != nil {
		t.Fatal(err)
	}
	items := walk(t, []string{dir, filepath.Join(dir, "missing.txt")}, Options{})
	got := show(t, dir, items)
	// The truncated file yields some records, then a truncated skip.
	var kept int
	var rest []string
	for _, g := range got {
		if strings.HasPrefix(g, "d-truncated.jsonl.gz:") && strings.HasSuffix(g, `jsonl "kept record"`) {
			kept++
			continue
		}
		rest = append(rest, g)
	}
	if kept == 0 || kept >= 2000 {
		t.Errorf("truncated gzip kept %d records, want some but not all", kept)
	}
	want := []string{
		`a-binary.dat:0 ~binary`,
		`b-bad-utf8.txt:0 text "caf\xe9 au lait\n"`,
		`c-empty.txt:0 ~empty`,
		fmt.Sprintf(`d-truncated.jsonl.gz:%d !truncated`, kept+1),
		`e-malformed.jsonl:1 jsonl "ok"`,
		`e-malformed.jsonl:2 !malformed`,
		`e-malformed.jsonl:3 jsonl "after"`,
		`f-ragged.csv:1@2 !ragged`,
		`f-ragged.csv:2@3 csv "fine"`,
		`g-corrupt.gz:0 !corrupt`,
		`h-image.png:0 ~binary`,
		`i-dangling.txt:0 !unreadable`,
		`j-loop-a:0 !symlink-loop`,
		`j-loop-b:0 !symlink-loop`,
		`z-good.csv:1@2 csv "good row"`,
		`missing.txt:0 !unreadable`,
	}
	check(t, rest, want)
	for _, it := range items {
		if s := it.Skip; s != nil && s.Reason == ReasonUnreadable && !strings.Contains(s.Detail, "no such file") {
			t.Errorf("unreadable detail %q lacks the OS error", s.Detail)
		}
	}
}

func TestSymlinkDirLoop(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"top/a.txt": "alpha", "top/sub/b.txt": "beta", "other/c.txt": "gamma"})
	if err := os.Symlink("..", filepath.Join(dir, "top", "sub", "up")); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(dir, "other"), filepath.Join(dir, "top", "sub", "other-link")); err != nil {
		t.Fatal(err)
	}
	check(t, show(t, dir, walk(t, []string{filepath.Join(dir, "top"), filepath.Join(dir, "other")}, Options{})), []string{
		`top/a.txt:0 text "alpha"`,
		`top/sub/b.txt:0 text "beta"`,
		`top/sub/other-link/c.txt:0 text "gamma"`,
		`top/sub/up:0 ~symlink-loop`,
		`other:0 ~duplicate`,
	})
}

func TestWalkOrderAndFilters(t *testing.T) {
	base := "../testdata/corpus/walk"
	tests := []struct {
		name  string
		paths []string
		opt   Options
		want  []string
	}{
		{"sorted", []string{base}, Options{}, []string{
			`index.html:0 html "Dock rules\nNo running & no diving."`,
			`logs/day1.txt:0 text "Harbour log, day one.\nThe tide came in at noon.\n"`,
			`notes/a.jsonl:1 jsonl "Crate 7 holds lanterns."`,
			`notes/a.jsonl:2 jsonl "Crate 8 holds rope."`,
			`notes/b.md:0 markdown "# Field notes\n\nThe lighthouse keeper counts gulls.\n"`,
			`notes/c.csv:1@2 csv "Buoy painted red"`,
			`notes/c.csv:2@3 csv "Buoy painted \"green\""`,
			`tool.go:0 code "package main\n\nfunc main() {}\n"`,
		}},
		{"hidden", []string{base}, Options{Hidden: true, Include: []string{"*.txt"}}, []string{
			`.cache/scratch.txt:0 text "hidden scratch\n"`,
			`logs/day1.txt:0 text "Harbour log, day one.\nThe tide came in at noon.\n"`,
		}},
		{"include", []string{base}, Options{Include: []string{"*.md", "logs/**"}}, []string{
			`logs/day1.txt:0 text "Harbour log, day one.\nThe tide came in at noon.\n"`,
			`notes/b.md:0 markdown "# Field notes\n\nThe lighthouse keeper counts gulls.\n"`,
		}},
		{"exclude dir", []string{base}, Options{Exclude: []string{"notes", "*.html"}}, []string{
			`logs/day1.txt:0 text "Harbour log, day one.\nThe tide came in at noon.\n"`,
			`tool.go:0 code "package main\n\nfunc main() {}\n"`,
		}},
		{"glob", []string{base + "/notes/*.j*", base + "/**/*.txt"}, Options{}, []string{
			`notes/a.jsonl:1 jsonl "Crate 7 holds lanterns."`,
			`notes/a.jsonl:2 jsonl "Crate 8 holds rope."`,
			`logs/day1.txt:0 text "Harbour log, day one.\nThe tide came in at noon.\n"`,
		}},
		{"no match", []string{base + "/*.none"}, Options{}, []string{`*.none:0 !unreadable`}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			check(t, show(t, base, walk(t, tt.paths, tt.opt)), tt.want)
		})
	}
	ins, skips := List([]string{base, base + "/tool.go"}, Options{})
	if len(ins) != 6 || len(skips) != 1 || skips[0].Reason != ReasonDuplicate {
		t.Errorf("List = %v, %v; want 6 inputs and one duplicate", ins, skips)
	}
	for _, in := range ins {
		fi, err := os.Stat(in.Path)
		if err != nil || fi.Size() != in.Size {
			t.Errorf("input %s size %d, stat %v %v", in.Path, in.Size, fi, err)
		}
	}
}

func TestCompressedRoundTrip(t *testing.T) {
	files := map[string]string{
		"notes.jsonl": `{"text": "Crate 7 holds lanterns."}` + "\n" + `{"text": "Crate 8 holds rope."}` + "\n",
		"rows.csv":    "id,text\n1,\"two\nlines\"\n2,plain\n",
		"page.html":   "<p>Tide &amp; time</p>",
		"story.txt":   strings.Repeat("The keeper trims the wick. ", 500),
		"noextension": `{"text": "sniffed after decompression"}` + "\n",
	}
	plainDir, packDir := t.TempDir(), t.TempDir()
	writeFiles(t, plainDir, files)
	for name, body := range files {
		for _, c := range []struct {
			ext  string
			pack func(*testing.T, []byte) []byte
		}{{".gz", gz}, {".zst", zst}} {
			if err := os.WriteFile(filepath.Join(packDir, name+c.ext), c.pack(t, []byte(body)), 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
	want := map[string]string{}
	for _, line := range show(t, plainDir, walk(t, []string{plainDir}, Options{})) {
		name, rest, _ := strings.Cut(line, ":")
		want[name] += rest + "\n"
	}
	got := map[string]string{}
	for _, line := range show(t, packDir, walk(t, []string{packDir}, Options{})) {
		name, rest, _ := strings.Cut(line, ":")
		name = strings.TrimSuffix(strings.TrimSuffix(name, ".gz"), ".zst")
		got[name] += rest + "\n"
	}
	for name, w := range want {
		if got[name] != w+w {
			t.Errorf("%s: compressed gave\n%s\nwant twice\n%s", name, got[name], w)
		}
	}
	if !strings.Contains(want["noextension"], `jsonl "sniffed after decompression"`) {
		t.Errorf("noextension read as %q", want["noextension"])
	}
	// Standard input is sniffed for compression too.
	check(t, show(t, "", readBytes(t, zst(t, []byte(files["rows.csv"])), Options{})),
		[]string{`-:1@2 csv "two\nlines"`, `-:2@4 csv "plain"`})
	check(t, show(t, "", readBytes(t, gz(t, []byte(files["notes.jsonl"])), Options{})),
		[]string{`-:1 jsonl "Crate 7 holds lanterns."`, `-:2 jsonl "Crate 8 holds rope."`})
}

func TestTruncatedZstd(t *testing.T) {
	full := zst(t, []byte(strings.Repeat(`{"text": "kept record"}`+"\n", 5000)))
	items := readBytes(t, full[:len(full)-10], Options{})
	last := items[len(items)-1].Skip
	if last == nil || !last.Failed || (last.Reason != ReasonTruncated && last.Reason != ReasonCorrupt) {
		t.Errorf("truncated zstd ends with %+v, want a failed truncated or corrupt skip", items[len(items)-1])
	}
}

func TestStream(t *testing.T) {
	dir := t.TempDir()
	body := strings.Repeat("0123456789", 1000)
	writeFiles(t, dir, map[string]string{"big.txt": body, "small.txt": "tiny"})
	if err := os.WriteFile(filepath.Join(dir, "big.txt.gz"), gz(t, []byte(body)), 0o644); err != nil {
		t.Fatal(err)
	}
	opt := Options{StreamAbove: 100}
	var items []Item
	if err := walkAll([]string{dir}, opt, func(it Item) error { items = append(items, it); return nil }); err != nil {
		t.Fatal(err)
	}
	if len(items) != 3 {
		t.Fatalf("got %d items", len(items))
	}
	sizes := []int64{int64(len(body)), -1, 4}
	streamed := []bool{true, true, false}
	for i, it := range items {
		d := it.Doc
		if d.Size != sizes[i] || (d.Stream != nil) != streamed[i] || (d.Text == nil) != streamed[i] {
			t.Errorf("%s: size %d stream %v, want %d %v", d.Source, d.Size, d.Stream != nil, sizes[i], streamed[i])
		}
	}
	check(t, show(t, dir, items), []string{
		fmt.Sprintf(`big.txt:0 text %q`, body), fmt.Sprintf(`big.txt.gz:0 text %q`, body), `small.txt:0 text "tiny"`})
}

func TestSpecialAndStdin(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"a.txt": "alpha", ".hidden/h.txt": "named directly"})
	if err := syscall.Mkfifo(filepath.Join(dir, "pipe"), 0o644); err != nil {
		t.Skip("no named pipes here:", err)
	}
	opt := Options{Stdin: strings.NewReader(`{"text": "from stdin"}`)}
	check(t, show(t, dir, walk(t, []string{dir, "-", filepath.Join(dir, ".hidden")}, opt)), []string{
		`a.txt:0 text "alpha"`,
		`pipe:0 ~special`,
		`-:1 jsonl "from stdin"`,
		`.hidden/h.txt:0 text "named directly"`,
	})
}

func TestHugeLine(t *testing.T) {
	big := strings.Repeat("lantern ", 200000) // 1.6 MB, beyond any bufio buffer here
	in := `{"text": "` + big + `"}` + "\n" + `{"text": "next"}` + "\n"
	items := readBytes(t, []byte(in), Options{})
	if len(items) != 2 || items[0].Doc == nil || string(items[0].Doc.Text) != big {
		t.Fatalf("huge line not read whole: %d items", len(items))
	}
	check(t, show(t, "", readBytes(t, []byte(in), Options{MaxRecord: 1000})), []string{`-:1 !too-large`, `-:2 jsonl "next"`})
}

func TestFnErrorStops(t *testing.T) {
	stop := errors.New("stop here")
	n := 0
	err := walkAll([]string{"../testdata/corpus/walk"}, Options{}, func(Item) error {
		n++
		if n == 3 {
			return stop
		}
		return nil
	})
	if !errors.Is(err, stop) || n != 3 {
		t.Errorf("the walk returned %v after %d items, want the callback's error after 3", err, n)
	}
}

func TestMatchGlob(t *testing.T) {
	tests := []struct {
		pat, name string
		want      bool
	}{
		{"*.md", "a.md", true},
		{"*.md", "dir/a.md", false},
		{"**/*.md", "a.md", true},
		{"**/*.md", "x/y/a.md", true},
		{"docs/**", "docs/a/b.txt", true},
		{"docs/**", "other/a.txt", false},
		{"a/**/b", "a/b", true},
		{"a/**/b", "a/x/y/b", true},
		{"[", "[", false},
	}
	for _, tt := range tests {
		if got := matchGlob(tt.pat, tt.name); got != tt.want {
			t.Errorf("matchGlob(%q, %q) = %v, want %v", tt.pat, tt.name, got, tt.want)
		}
	}
}

// readFile reads one file as Read does, collecting its items.
func readFile(t *testing.T, path string, opt Options) []Item {
	t.Helper()
	fi, err := os.Stat(path)
	size := int64(-1)
	if err == nil {
		size = fi.Size()
	}
	var items []Item
	if err := Read(Input{Path: path, Size: size}, opt, func(it Item) error {
		items = append(items, it)
		return nil
	}); err != nil {
		t.Fatalf("Read: %v", err)
	}
	return items
}

// A compressed text above StreamAbove is read through its decompressor
// after Read has returned, so the decompressor must stay open until the
// stream is closed.
func TestCompressedStreamReadAfterReturn(t *testing.T) {
	body := strings.Repeat("The keeper trims the wick at dusk. ", 4000) // 140 KB
	dir := t.TempDir()
	for _, c := range []struct {
		name string
		pack func(*testing.T, []byte) []byte
	}{{"a.txt.zst", zst}, {"a.txt.gz", gz}} {
		p := filepath.Join(dir, c.name)
		packed := c.pack(t, []byte(body))
		if err := os.WriteFile(p, packed, 0o644); err != nil {
			t.Fatal(err)
		}
		opt := Options{StreamAbove: 1 << 10}
		check(t, show(t, dir, readFile(t, p, opt)), []string{fmt.Sprintf("%s:0 text %q", c.name, body)})
		opt.Stdin = bytes.NewReader(packed)
		check(t, show(t, dir, readBytes(t, packed, opt)), []string{fmt.Sprintf("-:0 text %q", body)})
	}
}

// listAndRead lists paths and reads every input as the report's walk does,
// failing the test if that takes more than a few seconds (a blocked open or
// read would otherwise hang it).
func listAndRead(t *testing.T, paths []string, opt Options) []Item {
	t.Helper()
	done := make(chan []Item, 1)
	go func() {
		ins, skips := List(paths, opt)
		var items []Item
		for i := range skips {
			items = append(items, Item{Skip: &skips[i]})
		}
		for _, in := range ins {
			Read(in, opt, func(it Item) error {
				if it.Doc != nil && it.Doc.Stream != nil {
					b, _ := io.ReadAll(it.Doc.Stream)
					it.Doc.Stream.Close()
					it.Doc.Text, it.Doc.Stream = b, nil
				}
				items = append(items, it)
				return nil
			})
		}
		done <- items
	}()
	select {
	case items := <-done:
		return items
	case <-time.After(10 * time.Second):
		t.Fatalf("reading %v did not finish", paths)
		return nil
	}
}

// A named pipe with no writer, named as an argument or matched by a glob,
// is skipped without being opened; so is a link to a kernel file that
// waits for data. Standard input is still read.
func TestSpecialFilesNeverBlock(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"a.txt": "alpha"})
	pipe := filepath.Join(dir, "pipe.txt")
	if err := syscall.Mkfifo(pipe, 0o644); err != nil {
		t.Skip("no named pipes here:", err)
	}
	opt := Options{Stdin: strings.NewReader("from stdin")}
	check(t, show(t, dir, listAndRead(t, []string{pipe, filepath.Join(dir, "*.txt"), "-"}, opt)), []string{
		`pipe.txt:0 !special`, // named
		`pipe.txt:0 !special`, // matched by the glob
		`a.txt:0 text "alpha"`,
		`-:0 text "from stdin"`,
	})
	// An input listed as a regular file that is a pipe by the time it is
	// read.
	check(t, show(t, dir, readFile(t, pipe, Options{})), []string{`pipe.txt:0 ~special`})

	if _, err := os.Stat("/proc/kmsg"); err == nil {
		kdir := t.TempDir()
		if err := os.Symlink("/proc/kmsg", filepath.Join(kdir, "kmsg.txt")); err != nil {
			t.Fatal(err)
		}
		if err := os.Symlink("/proc/self/status", filepath.Join(kdir, "status")); err != nil {
			t.Fatal(err)
		}
		check(t, show(t, kdir, listAndRead(t, []string{kdir}, Options{})), []string{
			`kmsg.txt:0 ~special`,
			`status:0 ~special`,
		})
		check(t, show(t, "", listAndRead(t, []string{"/proc/self/status"}, Options{})), []string{`/proc/self/status:0 !special`})
	}
}
