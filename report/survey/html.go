package survey

import (
	"fmt"
	"html/template"
	"io"
	"math"

	"morsel/report"
	"morsel/report/render"
)

// WriteHTML writes the survey as a self-contained HTML page: key
// figures, a histogram of tokens per document with the window drawn in, the
// largest documents, the sample document split into its tokens (when
// sample is not nil), the breakdown by file type, the documents (at most
// rows of them; 0 lists all) and what was not counted.
func WriteHTML(w io.Writer, s *Report, sample *Sample, rows int) error {
	p := &render.Page{
		Command: "survey",
		Title:   "what the document set weighs",
		Lead:    fmt.Sprintf("%s documents, %s tokens in all.", render.Num(s.Totals.Documents), render.Num(s.Totals.Tokens)),
		Facts:   render.VocabFacts(s.Vocabulary.Name, s.Vocabulary.Size, s.Vocabulary.Window),
		Notes:   s.Warnings,
	}
	p.Sections = append(p.Sections, render.Section{ID: "glance", Heading: "At a glance", Cards: render.Cards(totals(s))})

	sp := s.Spread
	spread := render.Section{
		ID: "spread", Heading: "Tokens per document",
		Cards: []render.Fact{
			{Label: "smallest", Value: render.Num(sp.Min)},
			{Label: "median", Value: render.Num(sp.Median)},
			{Label: "90th percentile", Value: render.Num(sp.P90)},
			{Label: "99th percentile", Value: render.Num(sp.P99)},
			{Label: "largest", Value: render.Num(sp.Max)},
		},
	}
	if len(s.Histogram) == 0 {
		spread.Intro = "No document was counted, so there is nothing to chart."
	} else {
		spread.Intro = "Each column counts the documents whose token count falls in its range; the ranges double in width, so a window of a power of two falls on an edge. Percentiles by the nearest-rank method."
		spread.Charts = append(spread.Charts, histogramChart(s).SVG())
	}
	p.Sections = append(p.Sections, spread)

	if v := sampleViewOf(sample); v != nil {
		p.Sections = append(p.Sections, render.Section{ID: "sample", Heading: "Where the text breaks", Sample: v})
	}
	if len(s.Largest) > 0 {
		p.Sections = append(p.Sections, render.Section{
			ID: "largest", Heading: "Largest documents",
			Intro:  largestIntro(s),
			Charts: []template.HTML{largestChart(s).SVG()},
		})
	}
	if len(s.Formats) > 0 {
		p.Sections = append(p.Sections, render.Section{ID: "formats", Heading: "By file type", Tables: []render.TableView{render.TableOf(formatGrid(s), -1)}})
	}
	docs := surveyDocGrid(s, rows, render.Table)
	docs.Notes = nil
	if rows > 0 && len(s.Documents) > rows {
		docs.Notes = []string{fmt.Sprintf("%s more documents are not listed here; --rows 0 lists all of them, and --format csv or json gives every row.", render.Num(len(s.Documents)-rows))}
	}
	p.Sections = append(p.Sections, render.Section{ID: "documents", Heading: "Documents", Tables: []render.TableView{markOverWindow(render.TableOf(docs, 0), s)}})
	if len(s.Skipped) > 0 {
		p.Sections = append(p.Sections, render.SkipSection(render.ViewOf(w), s.Skipped))
	}
	return render.WritePage(w, p)
}

func overWindowValue(s *Report) string {
	if s.Vocabulary.Window <= 0 {
		return "-"
	}
	return render.Num(s.Totals.OverWindow)
}

// histogramChart draws the survey's histogram, widened with empty columns
// until the window falls inside it, and the window as a line.
func histogramChart(s *Report) *render.ColumnChart {
	bins := append([]Bin(nil), s.Histogram...)
	win := s.Vocabulary.Window
	for win > 0 && bins[len(bins)-1].To <= win && len(bins) < 40 {
		last := bins[len(bins)-1].To
		bins = append(bins, Bin{From: last, To: 2 * last})
	}
	c := &render.ColumnChart{
		ID:     "hist",
		Title:  "Documents by size in tokens",
		XLabel: "tokens per document (each range twice as wide as the one before)",
		YLabel: "documents",
	}
	for _, b := range bins {
		col := render.Column{Value: float64(b.Documents), Tip: fmt.Sprintf("%s to %s tokens: %s document(s)", render.Num(b.From), render.Num(b.To-1), render.Num(b.Documents))}
		if win > 0 && b.From >= win {
			col.Class = "over"
		}
		c.Cols = append(c.Cols, col)
		c.Edges = append(c.Edges, render.TickLabel(float64(b.From)))
	}
	c.Edges = append(c.Edges, render.TickLabel(float64(bins[len(bins)-1].To)))
	c.Desc = fmt.Sprintf("Histogram of %s documents by token count, from %s to %s tokens.", render.Num(s.Totals.Documents), render.Num(s.Spread.Min), render.Num(s.Spread.Max))
	if at, ok := binPosition(bins, win); ok {
		c.Marks = append(c.Marks, render.ChartMark{At: at, Label: fmt.Sprintf("window: %s tokens", render.Num(win)), Class: "window"})
		c.Desc += fmt.Sprintf(" A line marks the %s-token window; %s document(s) lie past it, in the red columns.", render.Num(win), render.Num(s.Totals.OverWindow))
	}
	return c
}

// binPosition places n on the column axis of bins: the bin's index plus how
// far into it n lies, linearly in the first bin and by doubling in the
// others.
func binPosition(bins []Bin, n int) (float64, bool) {
	if n <= 0 {
		return 0, false
	}
	for i, b := range bins {
		if n >= b.From && n < b.To {
			if b.From == 0 {
				return float64(i) + float64(n)/float64(b.To), true
			}
			return float64(i) + math.Log2(float64(n)/float64(b.From))/math.Log2(float64(b.To)/float64(b.From)), true
		}
	}
	return 0, false
}

func largestIntro(s *Report) string {
	intro := fmt.Sprintf("The %s documents with the most tokens.", render.Num(len(s.Largest)))
	if s.Vocabulary.Window > 0 {
		intro += " Red bars run past the window on their own, before any prompt frame or reserved answer is added."
	}
	return intro
}

func largestChart(s *Report) *render.BarList {
	c := &render.BarList{Paths: true, YLabel: "document", ID: "largest-chart", Title: fmt.Sprintf("Tokens in each of the %d largest documents", len(s.Largest)), XLabel: "tokens"}
	win := s.Vocabulary.Window
	for _, d := range s.Largest {
		r := render.BarRow{Label: report.Where(d.Source, d.Record), Value: float64(d.Tokens), Text: render.Num(d.Tokens),
			Tip: fmt.Sprintf("%s: %s tokens, %s bytes, %s tokens per wc -w word", report.Where(d.Source, d.Record), render.Num(d.Tokens), render.Num(d.Bytes), render.Ratio(float64(d.Tokens), float64(d.WCWords)))}
		if win > 0 && d.Tokens > win {
			r.Class = "over"
		}
		c.Rows = append(c.Rows, r)
	}
	c.Desc = fmt.Sprintf("Bar chart of the %s largest documents by token count.", render.Num(len(s.Largest)))
	if win > 0 {
		c.Marks = []render.ChartMark{{At: float64(win), Label: "window " + render.Num(win), Class: "window"}}
		c.Desc += fmt.Sprintf(" A line marks the %s-token window.", render.Num(win))
	}
	return c
}

// markOverWindow adds a column to the documents table that marks, in
// words, each document whose tokens alone exceed the window.
func markOverWindow(t render.TableView, s *Report) render.TableView {
	win := s.Vocabulary.Window
	if win <= 0 {
		return t
	}
	t.Header = append(t.Header, render.CellView{Text: fmt.Sprintf("%s-token window", render.Num(win))})
	for i := range t.Rows {
		c := render.CellView{}
		if d := s.Documents[i]; d.Tokens > win {
			c = render.CellView{Text: "over by " + render.Num(d.Tokens-win), Warn: true}
		}
		t.Rows[i] = append(t.Rows[i], c)
	}
	return t
}
