package learn

import (
	"fmt"
	"io"
	"strings"

	"morsel/report"
	"morsel/report/render"
)

// Write renders r in format f (table, csv, md or json); rows limits the
// per-document and new-token rows of the table and md views (0: all).
func Write(w io.Writer, f render.Format, r *Report, rows int) error {
	if f == render.JSON {
		return render.WriteJSON(w, r)
	}
	grids := []*render.Grid{summaryGrid(r)}
	if r.Cost != nil {
		grids = append(grids, costGrid(r.Cost))
	}
	limit := rows
	if f == render.CSV {
		limit = 0
	}
	grids = append(grids, tokensGrid(r, limit), docsGrid(r, limit))
	if len(r.Skipped) > 0 {
		grids = append(grids, render.SkipGrid(r.Skipped))
	}
	return render.WriteGrids(w, f, grids...)
}

func summaryGrid(r *Report) *render.Grid {
	g := &render.Grid{
		Title:  fmt.Sprintf("%s merges learned on top of %s (%s asked), from %s words (%s distinct)", render.Num(r.Merges), r.Base.Name, render.Num(r.Asked), render.Num(r.Words), render.Num(r.DistinctWords)),
		Header: []string{"documents", "count", "tokens before", "tokens after", "saved", "saved %"},
		Right:  []int{1, 2, 3, 4, 5},
	}
	if !r.Extended {
		g.Title = fmt.Sprintf("%s merges learned from bytes (%s asked; %s tokens in all), from %s words (%s distinct), against %s", render.Num(r.Merges), render.Num(r.Asked), render.Num(r.Learned.Size), render.Num(r.Words), render.Num(r.DistinctWords), r.Base.Name)
	}
	row := func(name string, t Totals) {
		g.AddRow(name, render.Num(t.Documents), render.Num(t.Base), render.Num(t.Learned), render.Num(t.Saved), fmt.Sprintf("%.1f%%", t.Share))
	}
	row(fmt.Sprintf("held out (%.0f%%), not learned from", 100*r.Holdout), r.HeldOutDocs)
	row("learned from", r.LearningDocs)
	row("all", r.All)
	g.Notes = append(g.Notes, "Every document re-encoded under both vocabularies: the saving is measured, not bounded.")
	if r.HeldOutDocs.Documents == 0 {
		g.Notes = append(g.Notes, "No document was held out: the saving is on the documents the merges were learned from.")
	}
	if len(r.Files) > 0 {
		g.Notes = append(g.Notes, "Written: "+strings.Join(r.Files, ", "))
	}
	return g
}

func costGrid(c *Cost) *render.Grid {
	g := &render.Grid{
		Title:  fmt.Sprintf("Input cost under target %s at %s %s per million tokens (your own figure)", c.Target, c.PriceIn, c.Currency),
		Header: []string{"documents", "before", "after", "saved"},
		Right:  []int{1, 2, 3},
	}
	money := func(d fmt.Stringer) string { return d.String() + " " + c.Currency }
	g.AddRow("held out", money(c.HeldBase), money(c.HeldNew), money(c.HeldSave))
	g.AddRow("all", money(c.Base), money(c.Learned), money(c.Saved))
	g.Notes = append(g.Notes, "The documents' tokens alone, without a frame or answers: an estimate at the price you gave.")
	return g
}

func tokensGrid(r *Report, rows int) *render.Grid {
	g := &render.Grid{
		Title:  "New tokens, in the order learned",
		Header: []string{"id", "token", "merge", "pair count", "occurrences", "words it serves"},
		Right:  []int{0, 3, 4},
	}
	for i, t := range r.Tokens {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("... and %s more new tokens (--rows 0 lists all)", render.Num(len(r.Tokens)-rows)))
			break
		}
		var ws []string
		for _, w := range t.Words {
			ws = append(ws, fmt.Sprintf("%s ×%s", render.Readable([]byte(w.Word)), render.Num(w.Count)))
		}
		g.AddRow(fmt.Sprint(t.ID), render.Readable([]byte(t.Text)), render.Readable([]byte(t.Left))+" + "+render.Readable([]byte(t.Right)), render.Num(t.Count), render.Num(t.Occurs), strings.Join(ws, ", "))
	}
	return g
}

func docsGrid(r *Report, rows int) *render.Grid {
	g := &render.Grid{
		Title:  "Documents",
		Header: []string{"document", "held out", "tokens before", "tokens after", "saved", "saved %"},
		Right:  []int{2, 3, 4, 5},
	}
	for i, d := range r.Documents {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--rows 0 lists all; --format csv or json gives every row)", render.Num(len(r.Documents)-rows)))
			break
		}
		held := ""
		if d.HeldOut {
			held = "yes"
		}
		g.AddRow(report.Where(d.Source, d.Record), held, render.Num(d.Base), render.Num(d.Learned), render.Num(d.Saved), fmt.Sprintf("%.1f%%", d.Share))
	}
	return g
}
