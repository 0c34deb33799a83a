package quote

import (
	"fmt"
	"html/template"
	"io"
	"sort"
	"strings"

	"morsel/report"
	"morsel/report/render"
)

// WriteHTML writes a quote as a self-contained HTML page: the
// estimate per target as bars (one chart per currency, since amounts in two
// currencies do not share an axis), the costliest documents under the
// dearest target, the figures behind the estimate, and the documents (at
// most rows of them; 0 lists all).
func WriteHTML(w io.Writer, q *Report, rows int) error {
	p := &render.Page{
		Command: "quote",
		Title:   "what the run would cost",
		Lead:    fmt.Sprintf("An estimate for %s documents under %s target(s). %s", render.Num(q.Totals.Documents), render.Num(len(q.Targets)), q.Caution),
	}
	var cards []render.Fact
	for _, t := range q.Targets {
		cards = append(cards, render.Fact{Label: strings.TrimSpace(t.Name + ", " + t.Currency + " estimate"), Value: money(t.Cost, ""), Warn: t.Overflow > 0})
	}
	cards = append(cards, render.Fact{Label: "documents", Value: render.Num(q.Totals.Documents)},
		render.Fact{Label: fmt.Sprintf("not counted, %s failed", render.Num(q.Totals.Failed)), Value: render.Num(q.Totals.Skipped), Warn: q.Totals.Failed > 0})
	if q.Totals.Unpriced > 0 {
		cards = append(cards, render.Fact{Label: "not priced: the bill is short of them", Value: render.Num(q.Totals.Unpriced), Warn: true})
	}
	glance := render.Section{ID: "glance", Heading: "At a glance", Cards: cards}
	if n := q.Unpriced(); n != "" {
		glance.Notes = append(glance.Notes, "Not priced: "+n+".")
	}
	for _, t := range q.Targets {
		if t.Overflow > 0 {
			glance.Notes = append(glance.Notes, fmt.Sprintf("Under %s, %s document(s) overflow the window and are priced as one request each, which the model would refuse; --ration splits them.", t.Name, render.Num(t.Overflow)))
		}
	}
	p.Sections = append(p.Sections, glance)

	if len(q.Targets) > 0 {
		targets := render.Section{ID: "targets", Heading: "Estimate by target",
			Intro: "Input and answer tokens priced at the target's rates per million tokens, less the batch discount where it applies."}
		for i, cur := range currencies(q) {
			targets.Charts = append(targets.Charts, targetChart(q, cur, i).SVG())
		}
		targets.Tables = []render.TableView{render.TableOf(quoteTargetGrid(q), -1)}
		p.Sections = append(p.Sections, targets)
	}
	if k := dearest(q); k >= 0 && len(q.Documents) > 0 {
		t := q.Targets[k]
		p.Sections = append(p.Sections, render.Section{ID: "costliest", Heading: "Costliest documents",
			Intro:  fmt.Sprintf("The documents that cost the most under %s, the dearest target (at most %d drawn).", t.Name, render.ChartRows),
			Charts: []template.HTML{docCostChart(q, k).SVG()}})
	}
	p.Sections = append(p.Sections, render.Section{ID: "documents", Heading: "Documents", Tables: []render.TableView{render.TableOf(quoteDocGrid(q, rows), 0)}})
	if len(q.Skipped) > 0 {
		p.Sections = append(p.Sections, render.SkipSection(render.ViewOf(w), q.Skipped))
	}
	return render.WritePage(w, p)
}

// currencies returns the currencies of a quote's targets in first-seen
// order.
func currencies(q *Report) []string {
	var out []string
	seen := map[string]bool{}
	for _, t := range q.Targets {
		if !seen[t.Currency] {
			seen[t.Currency] = true
			out = append(out, t.Currency)
		}
	}
	return out
}

// dearest returns the index of the target with the highest cost, the first
// of equals; -1 with no targets. Costs in different currencies are
// compared as numbers, which only picks which target's documents to chart.
func dearest(q *Report) int {
	k := -1
	for i, t := range q.Targets {
		if k < 0 || t.Cost.GreaterThan(q.Targets[k].Cost) {
			k = i
		}
	}
	return k
}

func currencyLabel(cur string) string {
	if cur == "" {
		return "cost (no currency given)"
	}
	return "cost in " + cur
}

func targetChart(q *Report, cur string, n int) *render.BarList {
	c := &render.BarList{YLabel: "target", ID: fmt.Sprintf("target-chart-%d", n), Title: "Estimated cost by target", XLabel: currencyLabel(cur) + ", estimate", Decimals: true}
	if cur != "" {
		c.Title += " (" + cur + ")"
	}
	for _, t := range q.Targets {
		if t.Currency != cur {
			continue
		}
		c.Rows = append(c.Rows, render.BarRow{Label: t.Name, Value: t.Cost.InexactFloat64(), Text: money(t.Cost, ""),
			Tip: fmt.Sprintf("%s: %s input + %s answer tokens in %s request(s), %s", t.Name, render.Num(t.InputTokens), render.Num(t.OutputTokens), render.Num(t.Requests), money(t.Cost, t.Currency))})
	}
	c.Desc = fmt.Sprintf("Bar chart of the estimated cost of %d target(s) priced in %s.", len(c.Rows), orNone(cur))
	return c
}

func orNone(cur string) string {
	if cur == "" {
		return "no named currency"
	}
	return cur
}

func docCostChart(q *Report, k int) *render.BarList {
	t := q.Targets[k]
	idx := make([]int, len(q.Documents))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool {
		return q.Documents[idx[a]].Targets[k].Cost.GreaterThan(q.Documents[idx[b]].Targets[k].Cost)
	})
	c := &render.BarList{Paths: true, YLabel: "document", ID: "doc-cost-chart", Title: "Costliest documents under " + t.Name, XLabel: currencyLabel(t.Currency) + ", estimate", Decimals: true}
	for _, i := range idx {
		if len(c.Rows) == render.ChartRows {
			break
		}
		d := q.Documents[i]
		l := d.Targets[k]
		r := render.BarRow{Label: report.Where(d.Source, d.Record), Value: l.Cost.InexactFloat64(), Text: money(l.Cost, ""),
			Tip: fmt.Sprintf("%s: %s input + %s answer tokens in %s request(s), %s", report.Where(d.Source, d.Record), render.Num(l.InputTokens), render.Num(l.OutputTokens), render.Num(l.Requests), money(l.Cost, t.Currency))}
		if l.Overflow {
			r.Class = "over"
			r.Tip += "; over the window"
		}
		c.Rows = append(c.Rows, r)
	}
	c.Desc = fmt.Sprintf("Bar chart of the %d costliest documents under %s; red bars overflow its window.", len(c.Rows), t.Name)
	return c
}

func quoteTargetGrid(q *Report) *render.Grid {
	g := &render.Grid{Header: []string{"target", "input tokens", "answer tokens", "requests", "window", "price in / out per 1M", "batch discount", "rationed", "over the window", "estimate"},
		Right: []int{1, 2, 3, 4, 7, 8, 9}}
	for _, t := range q.Targets {
		batch := "-"
		switch {
		case t.Batch:
			batch = t.BatchDiscount.String() + " (applied)"
		case !t.BatchDiscount.IsZero():
			batch = t.BatchDiscount.String() + " (not applied)"
		}
		g.AddRow(t.Name, render.Num(t.InputTokens), render.Num(t.OutputTokens), render.Num(t.Requests), render.Num(t.Window),
			t.PriceIn.String()+" / "+t.PriceOut.String(), batch, render.Num(t.Rationed), render.Num(t.Overflow), money(t.Cost, t.Currency))
	}
	return g
}

func quoteDocGrid(q *Report, rows int) *render.Grid {
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Estimate per document (%s)", render.Num(len(q.Documents))), Header: []string{"document"}}
	for _, t := range q.Targets {
		g.Right = append(g.Right, len(g.Header), len(g.Header)+1)
		g.Header = append(g.Header, t.Name+" tokens in + out", t.Name+" estimate")
	}
	for i, d := range q.Documents {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("%s more documents are not listed here; --format csv or json gives every row.", render.Num(len(q.Documents)-rows)))
			break
		}
		cells := []string{report.Where(d.Source, d.Record)}
		for k, l := range d.Targets {
			tok := render.Num(l.InputTokens) + " + " + render.Num(l.OutputTokens)
			if l.Requests > 1 {
				tok += fmt.Sprintf(" (%s requests)", render.Num(l.Requests))
			}
			if l.Overflow {
				tok += " over the window"
			}
			cells = append(cells, tok, money(l.Cost, q.Targets[k].Currency))
		}
		g.AddRow(cells...)
	}
	return g
}
