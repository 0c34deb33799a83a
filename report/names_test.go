package report

import (
	"fmt"
	"testing"
)

// TestNamesRebuildEveryDocument checks a document's name from the runs
// against the name it was added with, over records with gaps, whole files
// and sources that come back.
func TestNamesRebuildEveryDocument(t *testing.T) {
	type doc struct {
		source string
		record int
	}
	var docs []doc
	for f := 0; f < 40; f++ {
		switch f % 4 {
		case 0: // a whole file
			docs = append(docs, doc{fmt.Sprintf("f%d.txt", f), 0})
		case 1, 2: // records, one skipped now and then
			for r := 1; r <= 200; r++ {
				if r%37 != 0 {
					docs = append(docs, doc{fmt.Sprintf("r%d.jsonl", f), r})
				}
			}
		case 3: // the same source's records again, as a second path to it would give
			for r := 1; r <= 5; r++ {
				docs = append(docs, doc{"r1.jsonl", r})
			}
		}
	}
	var ns Names
	for _, d := range docs {
		ns.Add(d.source, d.record)
	}
	if len(ns.runs) >= len(docs)/10 {
		t.Fatalf("%d runs for %d documents: consecutive records are not sharing a run", len(ns.runs), len(docs))
	}
	for i, d := range docs {
		if got, want := ns.Of(i), Where(d.source, d.record); got != want {
			t.Fatalf("document %d is %q, want %q", i, got, want)
		}
	}
}
