package report

import (
	"bytes"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
)

func TestQuoteHTML(t *testing.T) {
	dec := decimal.RequireFromString
	q := &Quote{Caution: Caution}
	q.Targets = []QuoteTotal{
		{Name: hostile[0], Currency: "EUR", Window: 100, Cost: dec("0.5"), InputTokens: 900, OutputTokens: 100, Requests: 3},
		{Name: "b", Currency: hostile[2], Window: 100, Cost: dec("2.25"), Overflow: 1},
		{Name: "c", Currency: "EUR", Window: 100, Cost: dec("0.125")},
	}
	costs := []string{"0.01", "1.5", "0.74"}
	for i, h := range []string{hostile[1], hostile[3], hostile[4]} {
		q.Documents = append(q.Documents, QuoteDoc{Source: "in/" + h, Record: i, Targets: []QuoteLine{
			{Target: hostile[0], Cost: dec("0.1")}, {Target: "b", Cost: dec(costs[i]), Overflow: i == 1, InputTokens: 10 * i}, {Target: "c", Cost: dec("0.01")}}})
	}
	q.Totals.Documents = len(q.Documents)
	q.Skipped = []Skipped{{Source: hostile[5], Reason: "binary"}}
	var b bytes.Buffer
	if err := WriteQuoteHTML(&b, q, 0); err != nil {
		t.Fatal(err)
	}
	// Two currencies: two target charts; then the costliest documents.
	doc := checkPage(t, b.Bytes(), []string{"glance", "targets", "costliest", "documents", "skipped"}, 3)
	all := textOf(doc)
	for _, s := range []string{hostile[0], hostile[2], "in/" + hostile[1], "in/" + hostile[3], hostile[5], Caution} {
		if !strings.Contains(all, s) {
			t.Errorf("%q not shown as text", s)
		}
	}
	if got := currencies(q); strings.Join(got, "|") != "EUR|"+hostile[2] {
		t.Errorf("currencies %q", got)
	}
	if k := dearest(q); k != 1 {
		t.Errorf("dearest target %d, want 1", k)
	}
	c := docCostChart(q, 1)
	want := []float64{1.5, 0.74, 0.01}
	for i, r := range c.Rows {
		if r.Value != want[i] {
			t.Errorf("row %d: cost %v, want %v", i, r.Value, want[i])
		}
	}
	if c.Rows[0].Class != "over" || c.Rows[1].Class != "" {
		t.Errorf("overflowing document not marked: %+v", c.Rows)
	}
	if n := len(targetChart(q, "EUR", 0).Rows); n != 2 {
		t.Errorf("EUR chart has %d targets, want 2", n)
	}
}
