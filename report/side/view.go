package side

import (
	"fmt"
	"io"

	"morsel/report"
	"morsel/report/render"
)

// Write renders r in format f (table, csv, md or json); rows limits the
// per-document rows of the table and md views (0: all).
func Write(w io.Writer, f render.Format, r *Report, rows int) error {
	if f == render.JSON {
		return render.WriteJSON(w, r)
	}
	if f == render.CSV {
		rows = 0
	}
	grids := []*render.Grid{totalsGrid(r), scriptsGrid(r), wholeGrid(r), docsGrid(r, "Where the vocabularies differ most", r.MostApart, 0), docsGrid(r, "Documents", r.Documents, rows)}
	if len(r.Skipped) > 0 {
		grids = append(grids, render.SkipGrid(r.Skipped))
	}
	return render.WriteGrids(w, f, grids...)
}

func totalsGrid(r *Report) *render.Grid {
	g := &render.Grid{Title: fmt.Sprintf("%s documents, %s bytes, %s words, under %d vocabularies", render.Num(len(r.Documents)), render.Num(r.Bytes), render.Num(r.Words), len(r.Vocabularies)),
		Header: []string{"vocabulary", "tokens", "bytes per token", "tokens per word", "vs first"}, Right: []int{1, 2, 3, 4}}
	for _, t := range r.Totals {
		g.AddRow(t.Vocabulary, render.Num(t.Tokens), fmt.Sprintf("%.2f", t.BytesPerToken), fmt.Sprintf("%.2f", t.TokensPerWord), render.Percent(float64(t.Tokens), float64(r.Totals[0].Tokens)))
	}
	g.Notes = append(g.Notes, "A word is a Unicode word segment (UAX #29) that holds a letter or digit; its tokens are those of the word alone, with the space before it when there is one.")
	return g
}

func scriptsGrid(r *Report) *render.Grid {
	g := &render.Grid{Title: "Tokens per word, by script", Header: append([]string{"script", "words"}, r.Vocabularies...)}
	for i := range r.Vocabularies {
		g.Right = append(g.Right, 2+i)
	}
	g.Right = append(g.Right, 1)
	for _, s := range r.Scripts {
		row := []string{s.Script, render.Num(s.Words)}
		for _, x := range s.TokensPerWord {
			row = append(row, fmt.Sprintf("%.2f", x))
		}
		g.AddRow(row...)
	}
	return g
}

func wholeGrid(r *Report) *render.Grid {
	g := &render.Grid{Title: "Words one vocabulary keeps whole and another splits", Header: append([]string{"word", "count"}, r.Vocabularies...), Right: []int{1}}
	for _, w := range r.WholeSplit {
		row := []string{render.Readable([]byte(w.Word)), render.Num(w.Count)}
		for i, p := range w.Pieces {
			row = append(row, fmt.Sprintf("%d: %s", p, w.Split[i]))
		}
		g.AddRow(row...)
	}
	return g
}

func docsGrid(r *Report, title string, docs []Doc, rows int) *render.Grid {
	g := &render.Grid{Title: title, Header: append(append([]string{"document"}, r.Vocabularies...), "spread"), Right: []int{}}
	for i := range r.Vocabularies {
		g.Right = append(g.Right, 1+i)
	}
	g.Right = append(g.Right, 1+len(r.Vocabularies))
	for i, d := range docs {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--rows 0 lists all; --format csv or json gives every row)", render.Num(len(docs)-rows)))
			break
		}
		row := []string{report.Where(d.Source, d.Record)}
		for _, n := range d.Tokens {
			row = append(row, render.Num(n))
		}
		g.AddRow(append(row, fmt.Sprintf("%.1f%%", 100*d.Spread))...)
	}
	return g
}
