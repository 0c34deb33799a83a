package learn

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shopspring/decimal"

	"morsel/bpe"
	"morsel/report/render"
)

func TestHeldOutShare(t *testing.T) {
	held := 0
	const n = 20000
	for i := 0; i < n; i++ {
		name := fmt.Sprintf("docs/file-%d.txt", i)
		h := HeldOut(name, 0, 0.2)
		if h != HeldOut(name, 0, 0.2) {
			t.Fatal("the choice is not the same twice")
		}
		if HeldOut(name, 0, 0.1) && !h {
			t.Fatalf("%s is held out at 10%% but not at 20%%", name)
		}
		if h {
			held++
		}
	}
	if got := float64(held) / n; got < 0.18 || got > 0.22 {
		t.Fatalf("%.3f of the documents held out, want about 0.2", got)
	}
	if HeldOut("a", 0, 0) || !HeldOut("a", 0, 1) {
		t.Fatal("shares 0 and 1 must hold out none and all")
	}
}

// learnDemo learns merges from the demo corpus's learning documents and
// collects every document under both vocabularies, as morsel learn does.
func learnDemo(t *testing.T, holdout float64) *Report {
	t.Helper()
	base, err := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	paths, _ := filepath.Glob("../../testdata/demo/docs/*")
	texts := map[string][]byte{}
	words := bpe.NewWordCount(base)
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		texts[p] = data
		if !HeldOut(p, 0, holdout) {
			words.Add(data)
		}
	}
	l, err := bpe.Learn(words, bpe.LearnOptions{Merges: 150})
	if err != nil {
		t.Fatal(err)
	}
	learned, err := bpe.NewEncoder(l.Vocab, bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	c, err := NewCollector(l, words, 150, holdout, 3)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range paths {
		b, n := Measure(base, learned, texts[p])
		c.Add(p, 0, HeldOut(p, 0, holdout), b, n)
	}
	c.Price("harbor-small", "EUR", decimal.RequireFromString("2.50"))
	return c.Finish()
}

func TestReport(t *testing.T) {
	r := learnDemo(t, 0.3)
	if r.HeldOutDocs.Documents == 0 || r.LearningDocs.Documents == 0 {
		t.Fatalf("%d held out, %d learned from: the demo should give both", r.HeldOutDocs.Documents, r.LearningDocs.Documents)
	}
	var sum Totals
	for _, d := range r.Documents {
		if d.Saved != d.Base-d.Learned || d.Saved < 0 {
			t.Fatalf("%s: %+v", d.Source, d)
		}
		sum.add(d)
	}
	if sum != r.All || r.All.Documents != r.HeldOutDocs.Documents+r.LearningDocs.Documents || r.All.Saved != r.HeldOutDocs.Saved+r.LearningDocs.Saved {
		t.Fatalf("totals %+v, %+v + %+v; documents sum to %+v", r.All, r.HeldOutDocs, r.LearningDocs, sum)
	}
	// Merges learned from the learning documents save more there.
	if r.LearningDocs.Share <= r.HeldOutDocs.Share || r.LearningDocs.Saved == 0 {
		t.Fatalf("saved %.1f%% on the learning documents, %.1f%% held out", r.LearningDocs.Share, r.HeldOutDocs.Share)
	}
	if len(r.Tokens) != r.Merges || r.Merges != 150 {
		t.Fatalf("%d tokens for %d merges", len(r.Tokens), r.Merges)
	}
	want := decimal.RequireFromString("2.50").Mul(decimal.NewFromInt(r.All.Saved)).Div(decimal.NewFromInt(1_000_000))
	if !r.Cost.Saved.Equal(want) {
		t.Fatalf("cost saved %s, want %s", r.Cost.Saved, want)
	}
}

func TestWriteFormats(t *testing.T) {
	r := learnDemo(t, 0.3)
	for _, f := range []render.Format{render.Table, render.CSV, render.Markdown, render.JSON} {
		var b bytes.Buffer
		if err := Write(&b, f, r, 10); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), "held") {
			t.Fatalf("%s: no held-out line:\n%s", f, b.String())
		}
	}
	var b bytes.Buffer
	Write(&b, render.JSON, r, 10)
	var back Report
	if err := json.Unmarshal(b.Bytes(), &back); err != nil {
		t.Fatal(err)
	}
	if len(back.Documents) != len(r.Documents) || back.All != r.All {
		t.Fatal("the JSON view does not give the report back")
	}
}
