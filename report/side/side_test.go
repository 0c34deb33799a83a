package side

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/report/render"
)

// demo compares GPT-2 with GPT-2 extended by merges learned on the demo
// corpus itself, so that the second keeps whole words the first splits.
func demo(t *testing.T) *Report {
	t.Helper()
	g, err := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	paths, _ := filepath.Glob("../../testdata/demo/docs/*")
	words := bpe.NewWordCount(g)
	var texts [][]byte
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		texts = append(texts, data)
		words.Add(data)
	}
	l, err := bpe.Learn(words, bpe.LearnOptions{Merges: 300})
	if err != nil {
		t.Fatal(err)
	}
	x, err := bpe.NewEncoder(l.Vocab, bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	vs := []Vocab{{"gpt2", g}, {"gpt2+300", x}}
	c := NewCollector(vs, 10)
	for i, text := range texts {
		dw, err := Measure(vs, paths[i], 0, text)
		if err != nil {
			t.Fatal(err)
		}
		c.Add(dw)
	}
	return c.Finish()
}

func TestSideBySide(t *testing.T) {
	r := demo(t)
	if len(r.Totals) != 2 || len(r.Documents) == 0 {
		t.Fatalf("%d totals, %d documents", len(r.Totals), len(r.Documents))
	}
	var sums [2]int64
	for _, d := range r.Documents {
		sums[0] += int64(d.Tokens[0])
		sums[1] += int64(d.Tokens[1])
		if d.Tokens[1] > d.Tokens[0] {
			t.Fatalf("%s: %d tokens extended, %d under GPT-2", d.Source, d.Tokens[1], d.Tokens[0])
		}
	}
	if sums[0] != r.Totals[0].Tokens || sums[1] != r.Totals[1].Tokens || sums[1] >= sums[0] {
		t.Fatalf("totals %+v, documents sum to %v", r.Totals, sums)
	}
	if len(r.WholeSplit) == 0 {
		t.Fatal("no word kept whole by one and split by the other")
	}
	for _, w := range r.WholeSplit {
		if w.Pieces[1] != 1 || w.Pieces[0] < 2 || strings.Count(w.Split[0], "·") != w.Pieces[0]-1 {
			t.Fatalf("%+v", w)
		}
	}
	for i := 1; i < len(r.MostApart); i++ {
		if r.MostApart[i].Spread > r.MostApart[i-1].Spread {
			t.Fatal("the documents that differ most are not in order")
		}
	}
	if len(r.Scripts) == 0 || r.Scripts[0].Script != "Latin" {
		t.Fatalf("scripts %+v", r.Scripts)
	}
	for _, f := range []render.Format{render.Table, render.CSV, render.Markdown, render.JSON} {
		var b bytes.Buffer
		if err := Write(&b, f, r, 5); err != nil || !strings.Contains(b.String(), "gpt2+300") {
			t.Fatalf("%s: %v\n%s", f, err, b.String())
		}
	}
}
