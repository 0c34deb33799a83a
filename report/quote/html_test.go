package quote

import (
	"bytes"
	"strings"
	"testing"

	"github.com/shopspring/decimal"

	"morsel/report"
	"morsel/report/internal/reporttest"
)

func TestQuoteHTML(t *testing.T) {
	dec := decimal.RequireFromString
	q := &Report{Caution: Caution}
	q.Targets = []Total{
		{Name: reporttest.Hostile[0], Currency: "EUR", Window: 100, Cost: dec("0.5"), InputTokens: 900, OutputTokens: 100, Requests: 3},
		{Name: "b", Currency: reporttest.Hostile[2], Window: 100, Cost: dec("2.25"), Overflow: 1},
		{Name: "c", Currency: "EUR", Window: 100, Cost: dec("0.125")},
	}
	costs := []string{"0.01", "1.5", "0.74"}
	for i, h := range []string{reporttest.Hostile[1], reporttest.Hostile[3], reporttest.Hostile[4]} {
		q.Documents = append(q.Documents, Doc{Source: "in/" + h, Record: i, Targets: []Line{
			{Target: reporttest.Hostile[0], Cost: dec("0.1")}, {Target: "b", Cost: dec(costs[i]), Overflow: i == 1, InputTokens: 10 * i}, {Target: "c", Cost: dec("0.01")}}})
	}
	q.Totals.Documents = len(q.Documents)
	q.Skipped = []report.Skipped{{Source: reporttest.Hostile[5], Reason: "unreadable", Failed: true}} // a failure, so the page lists it
	var b bytes.Buffer
	if err := WriteHTML(&b, q, 0); err != nil {
		t.Fatal(err)
	}
	// Two currencies: two target charts; then the costliest documents.
	doc := reporttest.CheckPage(t, b.Bytes(), []string{"glance", "targets", "costliest", "documents", "skipped"}, 3)
	all := reporttest.TextOf(doc)
	for _, s := range []string{reporttest.Hostile[0], reporttest.Hostile[2], "in/" + reporttest.Hostile[1], "in/" + reporttest.Hostile[3], reporttest.Hostile[5], Caution} {
		if !strings.Contains(all, s) {
			t.Errorf("%q not shown as text", s)
		}
	}
	if got := currencies(q); strings.Join(got, "|") != "EUR|"+reporttest.Hostile[2] {
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
