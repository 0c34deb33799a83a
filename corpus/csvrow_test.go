package corpus

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strings"
	"testing"
)

// A quote that never closes costs its row only: the rows after the line
// where it opened are read, whether the quote runs to the end of the input
// or past the row bound.
func TestCSVUnterminatedQuote(t *testing.T) {
	tail := "2,two\n3,three\n"
	for _, c := range []struct {
		name, in string
		max      int64
		want     []string
		detail   string
	}{
		{"to the end", "id,text\n1,\"open\n" + tail, 0,
			[]string{`-:1@2 !malformed`, `-:2@3 csv "two"`, `-:3@4 csv "three"`},
			"row 1 (line 2): the quote opened on this line is not closed by the end of the input; reading goes on from the next line"},
		{"past the bound", "id,text\n1,\"open\n" + strings.Repeat("x,filler row\n", 20) + tail, 100,
			[]string{`-:1@2 !too-large`, `-:2@3 !ragged`},
			"row 1 (line 2): the quote opened on this line is not closed within 100 bytes; reading goes on from the next line"},
		{"closed badly on a later line", "id,text\n1,\"open\n2,a\"b\n" + tail, 0,
			[]string{`-:1@2 !malformed`, `-:2@3 !malformed`, `-:3@4 csv "two"`, `-:4@5 csv "three"`},
			"row 1 (line 2): extraneous or missing \" in quoted-field; reading goes on from the next line"},
		{"one long line", "id,text\n1," + strings.Repeat("y", 300) + "\n" + tail, 100,
			[]string{`-:1@2 !too-large`, `-:2@3 csv "two"`, `-:3@4 csv "three"`},
			"row 1 (line 2): a row longer than 100 bytes"},
		// A line too long to keep inside the open quote is not read
		// again, but still counted.
		{"long line inside the quote", "id,text\n1,\"open\nz,z\n" + strings.Repeat("y", 300) + "\n" + tail, 100,
			[]string{`-:1@2 !too-large`, `-:2@3 csv "z"`, `-:3@5 csv "two"`, `-:4@6 csv "three"`}, ""},
	} {
		t.Run(c.name, func(t *testing.T) {
			items := readBytes(t, []byte(c.in), Options{Format: FormatCSV, MaxRecord: c.max})
			got := show(t, "", items)
			if c.name == "past the bound" {
				// The filler rows are ragged (2 fields of 2 is fine,
				// here "x,filler row" has 2): keep the first two and
				// the last two.
				got = append(got[:2], got[len(got)-2:]...)
				c.want = append(c.want, `-:22@23 csv "two"`, `-:23@24 csv "three"`)
				c.want[1] = `-:2@3 csv "filler row"`
			}
			check(t, got, c.want)
			if d := items[0].Skip.Detail; c.detail != "" && d != c.detail {
				t.Errorf("detail %q, want %q", d, c.detail)
			}
		})
	}
}

// A CSV or TSV file whose header has no text column is one text document
// unless the column was asked for.
func TestCSVWithoutTheColumn(t *testing.T) {
	in := "\ufeffname,size\nwick,3\n\"rope, long\",12\n"
	items := readBytes(t, []byte(in), Options{Format: FormatCSV})
	check(t, show(t, "", items), []string{fmt.Sprintf(`-:0 csv %q`, in)})
	if n := items[0].Doc.Note; n != `read as one text document: the header has no column "text" (it has "name", "size")` {
		t.Errorf("note %q", n)
	}
	items = readBytes(t, []byte(in), Options{Format: FormatCSV, Column: "text"})
	check(t, show(t, "", items), []string{`-:0 !no-field`})
	if d := items[0].Skip.Detail; d != `line 1: no column "text" in header (name, size)` {
		t.Errorf("detail %q", d)
	}
	// A plain text named .tab is not a table.
	readme := "This folder holds the harbour's tide tables.\n\tSee the ledger.\n"
	check(t, show(t, "", readBytes(t, []byte(readme), Options{Format: FormatTSV})), []string{fmt.Sprintf(`-:0 tsv %q`, readme)})
}

// referenceRows reads data with encoding/csv, set as the package reads CSV
// and TSV, up to the first error: the rows, and the line each starts on.
func referenceRows(data []byte, comma rune) (rows [][]string, lines []int, failed bool) {
	cr := csv.NewReader(bytes.NewReader(data))
	cr.Comma = comma
	cr.FieldsPerRecord = -1
	cr.LazyQuotes = comma == '\t'
	for {
		row, err := cr.Read()
		if err == io.EOF {
			return rows, lines, false
		}
		if err != nil {
			return rows, lines, true
		}
		line, _ := cr.FieldPos(0)
		rows, lines = append(rows, row), append(lines, line)
	}
}

// FuzzRowReader checks rowReader against encoding/csv: the same rows, on
// the same lines, up to the first bad row (after which rowReader goes on
// from the line after the row's first, where encoding/csv goes on after
// the line it failed on).
func FuzzRowReader(f *testing.F) {
	for _, s := range []string{
		"a,b\n1,2\n", "a,\"b\r\nc\"\r\n\"\"\"\",x\n", "\"open\n1,2\n", "a\"b,c\n", "\n\n1,2\r", "x,\"y\"z\n",
		"\"a\"\"b\",c", "a\tb\n\"x\ty\"\t\"z\n",
	} {
		f.Add([]byte(s))
	}
	defer func(n int) { lineChunk = n }(lineChunk)
	lineChunk = 7 // rows of many chunks
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, comma := range []byte{',', '\t'} {
			want, wantLines, failed := referenceRows(data, rune(comma))
			rr := newRowReader(bufio.NewReaderSize(bytes.NewReader(data), 16), comma, 1<<20)
			diverged := false // after a bad row the two go on differently
			for i := 0; ; i++ {
				line, err := rr.next()
				if err == io.EOF {
					if !diverged && (i < len(want) || failed) {
						t.Fatalf("comma %q: %d rows, encoding/csv reads %d (failed %v)", comma, i, len(want), failed)
					}
					break
				}
				var re *rowError
				if diverged {
					if err != nil && !errors.As(err, &re) {
						t.Fatal(err)
					}
					continue
				}
				if errors.As(err, &re) {
					if i < len(want) {
						t.Fatalf("comma %q: row %d fails (%v), encoding/csv reads %q", comma, i+1, err, want[i])
					}
					if !failed {
						t.Fatalf("comma %q: row %d fails (%v), encoding/csv reads no more rows", comma, i+1, err)
					}
					diverged = true
					continue
				}
				if err != nil {
					t.Fatal(err)
				}
				if i >= len(want) {
					t.Fatalf("comma %q: row %d read, encoding/csv has %d", comma, i+1, len(want))
				}
				var got []string
				for k := range rr.fields() {
					got = append(got, string(rr.field(k)))
				}
				if fmt.Sprint(got) != fmt.Sprint(want[i]) || len(got) != len(want[i]) || line != wantLines[i] {
					t.Fatalf("comma %q: row %d %q on line %d, encoding/csv %q on line %d", comma, i+1, got, line, want[i], wantLines[i])
				}
			}
		}
	})
}

// TestLinesKeepLinesInOrder adds lines to a lines of small chunks, reads
// some back, moves others before them, and wants what a plain byte slice
// holds after the same steps.
func TestLinesKeepLinesInOrder(t *testing.T) {
	defer func(n int) { lineChunk = n }(lineChunk)
	lineChunk = 8
	var l, front lines
	var plain []byte
	in := []string{"a\n", "bb\n", "a line longer than a chunk\n", "\n", "ccc\n", "last"}
	for _, s := range in[:5] {
		l.add([]byte(s))
		plain = append(plain, s...)
	}
	if got := string(l.next()); got != "a\n" || l.lines() != 4 {
		t.Fatalf("next %q, then %d lines; want \"a\\n\", 4", got, l.lines())
	}
	plain = plain[2:]
	front.add([]byte("x\n"))
	front.add([]byte(in[5]))
	l.prepend(&front)
	plain = append([]byte("x\nlast"), plain...)
	if front.n != 0 || l.n != int64(len(plain)) || string(l.bytes()) != string(plain) {
		t.Fatalf("after prepend: %q (%d bytes), want %q", l.bytes(), l.n, plain)
	}
	// "last" has no line break (as the input's last line given back may
	// not): it is read alone, as its chunk ends there.
	var got []string
	for line := l.next(); line != nil; line = l.next() {
		got = append(got, string(line))
	}
	want := []string{"x\n", "last", "bb\n", "a line longer than a chunk\n", "\n", "ccc\n"}
	if fmt.Sprint(got) != fmt.Sprint(want) || l.n != 0 {
		t.Fatalf("lines %q, %d bytes left; want %q", got, l.n, want)
	}
}
