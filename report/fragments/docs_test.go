package fragments

import (
	"bytes"
	"fmt"
	"slices"
	"sort"
	"testing"

	"morsel/report/internal/reporttest"
	"morsel/report/render"
)

// docsReport scans texts of many fertilities as documents of a few
// sources, some named with characters JSON escapes and one not UTF-8.
func docsReport(t *testing.T) *Report {
	t.Helper()
	fr := NewFragmenter(reporttest.Encoder(t), nil)
	sources := []string{"a.jsonl", "<b&c>.jsonl", "d\xffe.txt", `q"uote\.md`}
	texts := []string{"The keeper counts the boats.", "fluvantrazine Kelderwick", "", "3.5 don't Grüße", "   "}
	for i := range 300 {
		dw, err := fr.ScanText([]byte(texts[i%len(texts)] + fmt.Sprintf(" n%d", i%7)))
		if err != nil {
			t.Fatal(err)
		}
		src := sources[i/40%len(sources)]
		rec := i + 1
		if i%11 == 0 {
			rec = 0
		}
		fr.AddWords(src, rec, dw)
	}
	return fr.Finish(Options{MinPieces: 1, MinCount: 1, Top: 5}, nil)
}

// TestWriteJSONWritesWhatEncodingJSONWrites holds the JSON view, whose
// document rows are written one at a time, to encoding/json's form of the
// whole report (render.WriteJSON, through DocList.MarshalJSON).
func TestWriteJSONWritesWhatEncodingJSONWrites(t *testing.T) {
	for _, r := range []*Report{docsReport(t), NewFragmenter(reporttest.Encoder(t), nil).Finish(Options{MinPieces: 3, MinCount: 1}, nil)} {
		var want, got bytes.Buffer
		if err := render.WriteJSON(&want, r); err != nil {
			t.Fatal(err)
		}
		if err := Write(&got, render.JSON, r, 10); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got.Bytes(), want.Bytes()) {
			i := 0
			for i < min(got.Len(), want.Len()) && got.Bytes()[i] == want.Bytes()[i] {
				i++
			}
			t.Fatalf("the streamed JSON differs at byte %d:\n%s\nwant:\n%s", i, got.Bytes()[max(i-80, 0):min(i+80, got.Len())], want.Bytes()[max(i-80, 0):min(i+80, want.Len())])
		}
	}
}

// TestMostFertileIsTheSortedHead holds the bounded selection of the
// documents shown to a stable sort of all of them.
func TestMostFertileIsTheSortedHead(t *testing.T) {
	r := docsReport(t)
	all := slices.Collect(r.Fertility.Documents.All())
	sort.SliceStable(all, func(i, j int) bool { return all[i].Fertility > all[j].Fertility })
	for _, rows := range []int{0, 1, 3, 10, 299, 300, 1000} {
		got := r.Fertility.Documents.mostFertile(rows)
		want := all
		if rows > 0 && rows < len(all) {
			want = all[:rows]
		}
		if !slices.Equal(got, want) {
			t.Fatalf("%d rows: got %d documents, first %+v; want %d, first %+v", rows, len(got), got[0], len(want), want[0])
		}
	}
}
