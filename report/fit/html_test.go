package fit

import (
	"bytes"
	"strings"
	"testing"

	"morsel/report"
	"morsel/report/internal/reporttest"
)

func TestFitHTML(t *testing.T) {
	r := &Report{Window: 100, Frame: "<b>frame</b>.txt", FrameTok: 12}
	r.Vocabulary.Name = "test<vocab>"
	for i, h := range reporttest.Hostile {
		r.Documents = append(r.Documents, Doc{Source: "in/" + h, Record: i, Tokens: 50 + 20*i, InputTokens: 62 + 20*i, Reserve: 10, Window: 100})
	}
	r.Skipped = []report.Skipped{{Source: reporttest.Hostile[1], Reason: "binary"}}
	for i := range r.Documents {
		d := &r.Documents[i]
		d.Margin = d.Window - d.InputTokens - d.Reserve
		d.Fits = d.Margin >= 0
	}
	fc := &Collector{r: Report{Vocabulary: r.Vocabulary, Window: r.Window, Frame: r.Frame, FrameTok: r.FrameTok}, first: true}
	for _, d := range r.Documents {
		fc.Add(d)
	}
	r = fc.Finish(r.Skipped)
	if r.Totals.Overflow == 0 || r.Totals.Fit == 0 {
		t.Fatalf("want both verdicts, got %+v", r.Totals)
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, r, 0); err != nil {
		t.Fatal(err)
	}
	doc := reporttest.CheckPage(t, b.Bytes(), []string{"glance", "overflow", "tightest", "documents", "skipped"}, 2)
	all := reporttest.TextOf(doc)
	for _, h := range reporttest.Hostile {
		if !strings.Contains(all, "in/"+h) {
			t.Errorf("document %q not shown as text", h)
		}
	}
	for _, s := range []string{"<b>frame</b>.txt", "test<vocab>"} {
		if !strings.Contains(all, s) {
			t.Errorf("%q not shown as text", s)
		}
	}
	// The worst overflow leads its chart, marked over.
	worst := r.Documents[0]
	c := overflowChart(r)
	if c.Rows[0].Value != float64(-worst.Margin) || c.Rows[0].Class != "over" || len(c.Rows) != r.Totals.Overflow {
		t.Errorf("overflow chart rows %+v, want %d rows led by %d", c.Rows, r.Totals.Overflow, -worst.Margin)
	}
	tc := tightestChart(r)
	for i := 1; i < len(tc.Rows); i++ {
		if tc.Rows[i].Value < tc.Rows[i-1].Value {
			t.Errorf("tightest fits out of order: %+v", tc.Rows)
		}
	}
}
