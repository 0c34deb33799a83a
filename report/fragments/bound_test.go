package fragments

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"testing"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
)

// TestMemoryBoundFallsBackToSpaceSaving runs the demo text as many
// documents under no bound, a bound it never reaches, and a bound it
// passes: the first two give the same report; the third says its counts
// are approximate, and every word it lists has a count no lower than the
// exact one and at most the stated error above it.
func TestMemoryBoundFallsBackToSpaceSaving(t *testing.T) {
	text := windowText(t)
	enc := reporttest.Encoder(t)
	opt := Options{MinPieces: 1, MinCount: 1}
	run := func(bound int64) *Report {
		fr := NewFragmenter(enc, nil)
		fr.SetMemory(bound)
		for rec := 1; rec <= 16; rec++ {
			// Documents that differ, each with words of its own, so that
			// batches flush during the run and counters are taken over.
			from := (rec * 977) % len(text)
			part := append([]byte(nil), text[from:min(from+20000, len(text))]...)
			for i := 0; i < 3000; i++ {
				part = fmt.Appendf(part, " zq%dx%d", rec, i)
			}
			dw, err := fr.ScanText(part)
			if err != nil {
				t.Fatal(err)
			}
			fr.AddWords("demo.txt", rec, dw)
		}
		return fr.Finish(opt, nil)
	}
	exact, roomy, bounded := run(0), run(1<<30), run(256<<10)
	a, _ := json.Marshal(exact)
	b, _ := json.Marshal(roomy)
	if string(a) != string(b) {
		t.Fatal("a bound that was never reached changed the report")
	}
	if exact.Totals.Approximate {
		t.Fatal("the exact run says it is approximate")
	}
	tt := bounded.Totals
	if !tt.Approximate || tt.Counters == 0 || tt.CountError == 0 {
		t.Fatalf("past the bound: %+v, want approximate counts with their error", tt)
	}
	truth := map[string]int64{}
	for _, w := range exact.Words {
		truth[w.Word] = w.Count
	}
	if len(bounded.Words) == 0 {
		t.Fatal("the bounded run lists no word")
	}
	for _, w := range bounded.Words {
		tr, ok := truth[w.Word]
		if !ok || w.Count < tr || w.Count > tr+tt.CountError {
			t.Fatalf("%q: count %d, exact %d (listed %v), error bound %d", w.Word, w.Count, tr, ok, tt.CountError)
		}
	}
	if tt.Words != exact.Totals.Words || tt.Tokens != exact.Totals.Tokens {
		t.Fatalf("totals of words and tokens changed: %d, %d against %d, %d", tt.Words, tt.Tokens, exact.Totals.Words, exact.Totals.Tokens)
	}
}

// TestPartsPastTheBoundKeepDocumentsALowerBound flushes large documents
// in parts into the summary, past a small bound, and wants every listed
// word's documents no more than the exact run's: a word met in many parts
// of one document counts it once there too.
func TestPartsPastTheBoundKeepDocumentsALowerBound(t *testing.T) {
	defer func(w int, p int64) { scanWindow, partLimit = w, p }(scanWindow, partLimit)
	scanWindow, partLimit = 4<<10, 1
	text := windowText(t)
	for i := 0; i < 6000; i++ {
		text = fmt.Appendf(text, " qz%dv", i%900)
	}
	enc := reporttest.Encoder(t)
	run := func(bound int64) *Report {
		fr := NewFragmenter(enc, nil)
		fr.SetMemory(bound)
		for rec := 1; rec <= 3; rec++ {
			dw, err := fr.Scan(&corpus.Document{Source: "big.txt", Stream: io.NopCloser(bytes.NewReader(text))})
			if err != nil {
				t.Fatal(err)
			}
			fr.AddWords("big.txt", rec, dw)
		}
		return fr.Finish(Options{MinPieces: 1, MinCount: 1, Top: 0}, nil)
	}
	exact, bounded := run(0), run(64<<10)
	if exact.Totals.Approximate || !bounded.Totals.Approximate {
		t.Fatalf("approximate: exact run %v, bounded run %v", exact.Totals.Approximate, bounded.Totals.Approximate)
	}
	docs := map[string]int{}
	for _, w := range exact.Words {
		docs[w.Word] = w.Documents
	}
	for _, w := range bounded.Words {
		if w.Documents > docs[w.Word] || w.Documents > 3 {
			t.Fatalf("%q: %d documents, the exact run %d", w.Word, w.Documents, docs[w.Word])
		}
	}
}
