package survey

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"reflect"
	"sort"
	"testing"

	"morsel/bpe"
	"morsel/report"
)

// plainIdentical groups documents by hash with a map over every document:
// the computation the survey's compact keys must agree with.
func plainIdentical(docs []Weight) []Identical {
	first := map[uint64]int{}
	var groups []Identical
	for _, d := range docs {
		if d.Bytes == 0 {
			continue
		}
		k, seen := first[d.Hash]
		if !seen {
			first[d.Hash] = len(groups)
			groups = append(groups, Identical{Tokens: d.Tokens, Bytes: d.Bytes, Copies: 1, Documents: []string{report.Where(d.Source, d.Record)}})
			continue
		}
		groups[k].Copies++
		groups[k].Documents = append(groups[k].Documents, report.Where(d.Source, d.Record))
	}
	out := []Identical{}
	for _, g := range groups {
		if len(g.Documents) > 1 {
			out = append(out, g)
		}
	}
	sort.SliceStable(out, func(i, j int) bool {
		return int64(len(out[i].Documents)-1)*int64(out[i].Tokens) > int64(len(out[j].Documents)-1)*int64(out[j].Tokens)
	})
	if len(out) == 0 {
		return nil
	}
	return out
}

// listedIdentical cuts plainIdentical's groups to what a survey lists.
func listedIdentical(groups []Identical) []Identical {
	if len(groups) > IdenticalShown {
		groups = groups[:IdenticalShown]
	}
	for i := range groups {
		if len(groups[i].Documents) > CopiesListed {
			groups[i].Documents = groups[i].Documents[:CopiesListed]
		}
	}
	return groups
}

// randomDocs makes n documents in runs of records of a few sources, with
// gaps in the records, some empty texts, token counts past the dense table
// and texts that repeat.
func randomDocs(r *rand.Rand, n int) []Weight {
	docs := make([]Weight, 0, n)
	src, rec := "a.jsonl", 1
	for i := 0; i < n; i++ {
		switch r.IntN(50) {
		case 0:
			src, rec = fmt.Sprintf("f%d.txt", i), 0
		case 1:
			src, rec = fmt.Sprintf("r%d.jsonl", i), 1
		case 2:
			rec += 2 // a skipped record
		}
		text := r.Uint64N(uint64(n)) // a few texts repeat by chance
		if r.IntN(10) == 0 {
			text = r.Uint64N(5) // and some often
		}
		tokens := int(text % 300)
		if text%97 == 0 {
			tokens = denseTokens + int(text%3)
		}
		bytes := int64(text%1000) * 4
		if text%13 == 0 {
			bytes = 0
		}
		docs = append(docs, Weight{Source: src, Record: rec, Format: "jsonl", Bytes: bytes, Tokens: tokens, Hash: text * 0x9e3779b97f4a7c15})
		rec++
		if rec == 1 { // a whole file is one document; records of another source follow
			src = fmt.Sprintf("after%d.jsonl", i)
		}
	}
	return docs
}

// TestSurveyorAgreesWithPlainComputation checks the spread against
// report.SpreadOf on the list of counts, the histogram against binning the
// list, the largest documents against a stable sort and the identical
// groups against a map over every document, on small and large walks (the
// large ones count hashes in parts).
func TestSurveyorAgreesWithPlainComputation(t *testing.T) {
	for _, n := range []int{0, 1, 9, 10, 11, 500, 150_000} {
		r := rand.New(rand.NewPCG(uint64(n), 1))
		docs := randomDocs(r, n)
		for _, keep := range []int{-1, 0, 7} {
			sv := NewSurveyor(bpe.Info{Window: 200})
			var streamed int
			sv.Keep(keep, func(Weight) error { streamed++; return nil })
			for _, d := range docs {
				if err := sv.Add(d); err != nil {
					t.Fatal(err)
				}
			}
			s := sv.Finish(nil)
			tokens := make([]int, len(docs))
			for i, d := range docs {
				tokens[i] = d.Tokens
			}
			if got, want := s.Spread, report.SpreadOf(tokens); got != want {
				t.Fatalf("n=%d: spread %+v, want %+v", n, got, want)
			}
			if got, want := s.Histogram, plainHistogram(tokens); !reflect.DeepEqual(got, want) {
				t.Fatalf("n=%d: histogram %v, want %v", n, got, want)
			}
			idx := make([]int, len(docs))
			for i := range idx {
				idx[i] = i
			}
			sort.SliceStable(idx, func(i, j int) bool { return docs[idx[i]].Tokens > docs[idx[j]].Tokens })
			var largest []Weight
			for k := 0; k < len(idx) && k < LargestShown; k++ {
				largest = append(largest, docs[idx[k]])
			}
			if !reflect.DeepEqual(s.Largest, largest) {
				t.Fatalf("n=%d: largest %v, want %v", n, s.Largest, largest)
			}
			all := plainIdentical(docs)
			if got, want := s.Identical, listedIdentical(all); !reflect.DeepEqual(got, want) {
				t.Fatalf("n=%d: %d identical groups, want %d", n, len(got), len(want))
			}
			repeats, repeatTokens := 0, int64(0)
			for _, g := range all {
				repeats += g.Copies - 1
				repeatTokens += int64(g.Copies-1) * int64(g.Tokens)
			}
			if s.Totals.RepeatGroups != len(all) || s.Totals.Repeats != repeats || s.Totals.RepeatTokens != repeatTokens {
				t.Fatalf("n=%d: repeat totals %d groups, %d repeats, %d tokens; want %d, %d, %d", n,
					s.Totals.RepeatGroups, s.Totals.Repeats, s.Totals.RepeatTokens, len(all), repeats, repeatTokens)
			}
			if n > 1000 && len(s.Identical) == 0 {
				t.Fatalf("n=%d: no repeats made; the test checks nothing", n)
			}
			most := 0
			for _, g := range all {
				most = max(most, g.Copies)
			}
			if n > 100_000 && (len(all) <= IdenticalShown || most <= CopiesListed) {
				t.Fatalf("n=%d: %d groups, the largest of %d copies: the caps on what is listed go unchecked", n, len(all), most)
			}
			wantRows := len(docs)
			if keep >= 0 {
				wantRows = min(keep, len(docs))
			}
			if len(s.Documents) != wantRows || streamed != len(docs) || s.Totals.Documents != len(docs) {
				t.Fatalf("n=%d keep=%d: %d rows kept, %d streamed, %d counted", n, keep, len(s.Documents), streamed, s.Totals.Documents)
			}
		}
	}
}

// plainHistogram bins the counts one by one.
func plainHistogram(tokens []int) []Bin {
	if len(tokens) == 0 {
		return []Bin{}
	}
	bins := []Bin{{From: 0, To: 64}}
	for _, n := range tokens {
		for bins[len(bins)-1].To <= n {
			last := bins[len(bins)-1].To
			bins = append(bins, Bin{From: last, To: 2 * last})
		}
	}
	for _, n := range tokens {
		for k := range bins {
			if n >= bins[k].From && n < bins[k].To {
				bins[k].Documents++
			}
		}
	}
	return bins
}

// TestDocKeysKeepHugeSizes checks that a size past 32 bits is kept whole.
func TestDocKeysKeepHugeSizes(t *testing.T) {
	var ks docKeys
	sizes := []int64{0, 5, maxKeyBytes - 1, maxKeyBytes, 1 << 40}
	for _, b := range sizes {
		ks.add(1, 1, b)
	}
	ks.each(func(i int, k docKey) {
		if got := ks.bytesOf(i, k); got != sizes[i] {
			t.Errorf("document %d: %d bytes, want %d", i, got, sizes[i])
		}
	})
}

// TestRowStreamWritesWhatMarshalIndentWrites checks the hand-written JSON
// row against encoding/json's on weights with every kind of field: names
// that need escaping or are not UTF-8, a CSV row's line, extreme ratios.
func TestRowStreamWritesWhatMarshalIndentWrites(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	sources := []string{"a.jsonl", "a.jsonl", "dir/<b>&c.txt", "bad\xff\xfe.txt", "tab\there\u2028\"q\"", ""}
	floats := []float64{0, 1, 4.6, 0.33, 1e-7, 1e21, 123456789.25, -2.5, 1e-6, 5e20}
	var rs RowStream // one for all rows, so that the kept quoted names are checked too
	for i := 0; i < 2000; i++ {
		d := Weight{Source: sources[r.IntN(len(sources))], Record: r.IntN(5), Format: []string{"jsonl", "csv", "te\"xt"}[r.IntN(3)],
			Bytes: r.Int64N(1 << 40), Chars: r.Int64N(1000), WCWords: r.Int64N(100), Tokens: r.IntN(1 << 30),
			BytesPerToken: floats[r.IntN(len(floats))], TokensPerWCWord: floats[r.IntN(len(floats))], Specials: r.IntN(3)}
		if r.IntN(2) == 0 {
			d.Line = r.IntN(100) + 1
		}
		d.SourceBytes = report.SourceBytes(d.Source)
		got, err := rs.appendRow(nil, d)
		if err != nil {
			t.Fatal(err)
		}
		want, err := json.MarshalIndent(d, "    ", "  ")
		if err != nil {
			t.Fatal(err)
		}
		if string(got) != string(want) {
			t.Fatalf("%+v:\n got %s\nwant %s", d, got, want)
		}
	}
}
