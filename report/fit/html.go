package fit

import (
	"fmt"
	"html/template"
	"io"
	"sort"

	"morsel/report"
	"morsel/report/render"
)

// WriteHTML writes a fit report as a self-contained HTML page: the
// counts, the overflowing documents with their overflow as bars, the
// tightest fits with the room they leave, and every document's verdict (at
// most rows of them; 0 lists all).
func WriteHTML(w io.Writer, r *Report, rows int) error {
	r.expand()
	t := r.Totals
	p := &render.Page{
		Command: "fit",
		Title:   "what fits the window",
		Lead: fmt.Sprintf("%s of %s documents fit a %s-token window once the frame and the reserved answer are added; %s overflow.",
			render.Num(t.Fit), render.Num(t.Documents), render.Num(r.Window), render.Num(t.Overflow)),
		Facts: append(render.VocabFacts(r.Vocabulary.Name, r.Vocabulary.Size, r.Window),
			render.Fact{Label: "frame", Value: fmt.Sprintf("%s (%s tokens with overhead)", r.Frame, render.Num(r.FrameTok))}),
	}
	if r.Target != "" {
		p.Facts = append([]render.Fact{{Label: "target", Value: r.Target}}, p.Facts...)
	}
	p.Sections = append(p.Sections, render.Section{
		ID: "glance", Heading: "At a glance",
		Cards: render.Cards(totals(r)),
		Notes: []string{"Margin = window − framed input − reserved answer. A negative margin is an overflow: morsel ration splits such documents into chunks that fit."},
	})
	if t.Overflow > 0 {
		p.Sections = append(p.Sections, render.Section{ID: "overflow", Heading: "Overflowing documents",
			Intro:  fmt.Sprintf("How far each overflowing document runs past the window, worst first (at most %d drawn; the table lists them all).", render.ChartRows),
			Charts: []template.HTML{overflowChart(r).SVG()}})
	}
	if t.Fit > 0 {
		p.Sections = append(p.Sections, render.Section{ID: "tightest", Heading: "Tightest fits",
			Intro:  "The documents that fit with the least room to spare: a longer frame or a larger reserved answer would tip these over first.",
			Charts: []template.HTML{tightestChart(r).SVG()}})
	}
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Every document against the %s-token window", render.Num(r.Window)),
		Header: []string{"document", "tokens", "input", "reserve", "margin", "verdict"}, Right: []int{1, 2, 3, 4}}
	for i, d := range r.Documents {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("%s more documents are not listed here; --format csv or json gives every row.", render.Num(len(r.Documents)-rows)))
			break
		}
		verdict := "fits"
		if !d.Fits {
			verdict = fmt.Sprintf("over by %s", render.Num(-d.Margin))
		}
		g.AddRow(report.Where(d.Source, d.Record), render.Num(d.Tokens), render.Num(d.InputTokens), render.Num(d.Reserve), render.Num(d.Margin), verdict)
	}
	p.Sections = append(p.Sections, render.Section{ID: "documents", Heading: "Documents", Tables: []render.TableView{render.TableOf(g, 0)}})
	if len(r.Skipped) > 0 {
		p.Sections = append(p.Sections, render.SkipSection(render.ViewOf(w), r.Skipped))
	}
	return render.WritePage(w, p)
}

func fitTip(d Doc) string {
	return fmt.Sprintf("%s: %s document tokens, %s framed input + %s reserved = %s against a %s window, margin %s",
		report.Where(d.Source, d.Record), render.Num(d.Tokens), render.Num(d.InputTokens), render.Num(d.Reserve), render.Num(d.InputTokens+d.Reserve), render.Num(d.Window), render.Num(d.Margin))
}

func overflowChart(r *Report) *render.BarList {
	c := &render.BarList{Paths: true, YLabel: "document", ID: "overflow-chart", Title: "Tokens past the window", XLabel: "tokens over (framed input + reserved answer − window)"}
	for _, d := range r.Documents {
		if d.Fits || len(c.Rows) == render.ChartRows {
			break // overflowing documents come first, worst first
		}
		c.Rows = append(c.Rows, render.BarRow{Label: report.Where(d.Source, d.Record), Value: float64(-d.Margin), Text: "+" + render.Num(-d.Margin), Tip: fitTip(d), Class: "over"})
	}
	c.Desc = fmt.Sprintf("Bar chart of the %d documents that overflow the %s-token window most, by the tokens they run over.", len(c.Rows), render.Num(r.Window))
	return c
}

func tightestChart(r *Report) *render.BarList {
	var fits []Doc
	for _, d := range r.Documents {
		if d.Fits {
			fits = append(fits, d)
		}
	}
	// The fitting documents are in input order; take the smallest margins.
	sort.SliceStable(fits, func(i, j int) bool { return fits[i].Margin < fits[j].Margin })
	c := &render.BarList{Paths: true, YLabel: "document", ID: "tightest-chart", Title: "Room left in the window", XLabel: "tokens to spare (window − framed input − reserved answer)"}
	for i, d := range fits {
		if i == render.ChartRows/2 {
			break
		}
		c.Rows = append(c.Rows, render.BarRow{Label: report.Where(d.Source, d.Record), Value: float64(d.Margin), Text: render.Num(d.Margin), Tip: fitTip(d)})
	}
	c.Desc = fmt.Sprintf("Bar chart of the %d documents that fit with the smallest margins.", len(c.Rows))
	return c
}
