package fragments

import (
	"fmt"
	"io"
	"strings"

	"morsel/report"
	"morsel/report/render"
)

// readableRaw joins the readable forms of pieces with single spaces (a
// space inside a piece shows as "␣", so the joins are unambiguous).
func readableRaw(pieces [][]byte) string {
	return strings.Join(readableParts(pieces), " ")
}

// readableParts returns the readable form of each piece.
func readableParts(pieces [][]byte) []string {
	parts := make([]string, len(pieces))
	for i, p := range pieces {
		parts[i] = render.Readable(p)
	}
	return parts
}

// Write renders r in format f. docRows bounds the documents the
// table view lists by fertility (0 lists them all). The CSV view is the
// word table alone.
func Write(w io.Writer, f render.Format, r *Report, docRows int) error {
	if f == render.JSON {
		return writeJSON(w, r)
	}
	words := fragmentGrid(r, f)
	if f == render.CSV {
		addFallbackRows(words, r)
		addTermRows(words, r)
		return words.WriteCSV(w)
	}
	grids := []*render.Grid{words}
	if r.HasFallback {
		grids = append(grids, fallbackGrid(r))
	}
	grids = append(grids, savingGrid(r), scriptGrid(r), docFertilityGrid(r, docRows))
	if len(r.Terms) > 0 {
		grids = append(grids, termGrid(r))
	}
	if len(r.Skipped) > 0 {
		grids = append(grids, render.SkipGrids(render.ViewOf(w), r.Skipped)...)
	}
	return render.WriteGrids(w, f, grids...)
}

// addFallbackRows adds the words spelled only in byte-fallback tokens to
// the CSV word table, with kind "byte-fallback" and their rank in that
// ranking.
func addFallbackRows(g *render.Grid, r *Report) {
	for i, w := range r.Fallback {
		g.AddRow(fragmentRow(i, w, render.CSV, "byte-fallback")...)
	}
}

// addTermRows adds the glossary terms to the CSV word table, one row a
// term with kind "term": count is its occurrences, pieces and split are
// after a space, as the term stands in running text, and line is its line
// in the glossary.
func addTermRows(g *render.Grid, r *Report) {
	for _, t := range r.Terms {
		g.AddRow("", render.ShownWord(t.Term), "", fmt.Sprint(t.Occurrences), fmt.Sprint(t.Documents),
			fmt.Sprint(t.PiecesAfterSpace), fmt.Sprint(t.Excess), readableRaw(t.AfterSpaceBytes), "",
			"term", fmt.Sprint(t.PiecesAlone), fmt.Sprint(t.Flagged), fmt.Sprint(t.Line))
	}
}

func fragmentGrid(r *Report, f render.Format) *render.Grid {
	g := &render.Grid{Title: fmt.Sprintf("Words ranked by excess tokens (%s of %s shown) under %s",
		render.Num(r.Totals.Listed), render.Num(r.Totals.Qualifying), r.Vocabulary.Name),
		Header: []string{"#", "word", "script", "count", "documents", "pieces", "excess", "split"},
		Right:  []int{0, 3, 4, 5, 6}}
	if f == render.CSV {
		g.Header = []string{"rank", "word", "script", "count", "documents", "pieces", "excess", "split", "split_share", "kind", "pieces_alone", "flagged", "line"}
	}
	for i, w := range r.Words {
		g.AddRow(fragmentRow(i, w, f, "word")...)
	}
	if len(r.Words) == 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("no word splits into %g or more pieces at least %d time(s)", r.Options.MinPieces, r.Options.MinCount))
	}
	return g
}

// fragmentRow is the row of the word ranked i+1 in a word table; kind
// fills the CSV's kind column.
func fragmentRow(i int, w Fragment, f render.Format, kind string) []string {
	// Words and splits are cut for display; JSON keeps them whole.
	split := strings.Join(render.ShownPieces(readableParts(w.SplitBytes)), " ")
	word := render.ShownWord(w.Word)
	if f == render.CSV {
		return []string{fmt.Sprint(i + 1), word, w.Script, fmt.Sprint(w.Count), fmt.Sprint(w.Documents),
			fmt.Sprintf("%.2f", w.Pieces), fmt.Sprint(w.Excess), split, fmt.Sprintf("%.4f", w.SplitShare), kind, "", "", ""}
	}
	return []string{fmt.Sprint(i + 1), word, w.Script, render.Num(w.Count), render.Num(w.Documents),
		fmt.Sprintf("%.2f", w.Pieces), render.Num(w.Excess), split}
}

// fallbackGrid ranks the words the vocabulary spells only in byte-fallback
// tokens.
func fallbackGrid(r *Report) *render.Grid {
	g := &render.Grid{Title: fmt.Sprintf("Words spelled only in byte-fallback tokens (%s of %s shown)",
		render.Num(r.Totals.FallbackListed), render.Num(r.Totals.FallbackWords)),
		Header: []string{"#", "word", "script", "count", "documents", "pieces", "excess", "split"},
		Right:  []int{0, 3, 4, 5, 6}}
	for i, w := range r.Fallback {
		g.AddRow(fragmentRow(i, w, render.Table, "")...)
	}
	if len(r.Fallback) == 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("every word seen at least %d time(s) has a token of the vocabulary in it", r.Options.MinCount))
	}
	return g
}

// totals lists the report's totals, for the totals grid and the page's
// cards alike.
func totals(r *Report) []render.Measure {
	t := r.Totals
	ms := []render.Measure{
		{Label: "documents", Value: render.Num(t.Documents)},
		{Label: "tokens", Value: render.Num(t.Tokens)},
		{Label: "words", Value: render.Num(t.Words)},
		{Label: "distinct words", Value: render.Num(t.DistinctWords), Only: render.InGrid},
		{Label: "tokens per UAX #29 word", Value: fmt.Sprintf("%.2f", r.Fertility.Fertility), Only: render.InCards},
		{Label: "words that are one token", Value: render.Percent(float64(r.Fertility.OneTokenShare), 1), Only: render.InCards},
		{Label: fmt.Sprintf("words with %g+ pieces, %d+ times", r.Options.MinPieces, r.Options.MinCount), Value: render.Num(t.Qualifying),
			CardLabel: fmt.Sprintf("words of %g+ pieces", r.Options.MinPieces), Warn: t.Qualifying > 0},
		{Label: "excess tokens of the listed words", Value: render.Num(t.ListedExcess)},
		{Label: "saving, at most", Value: render.Percent(float64(t.ListedExcess), float64(t.Tokens))},
	}
	if len(r.Terms) > 0 {
		ms = append(ms, render.Measure{Label: "glossary terms flagged", Value: fmt.Sprintf("%s of %s", render.Num(t.FlaggedTerm), render.Num(len(r.Terms))), Only: render.InGrid})
	}
	return append(ms, render.Measure{Label: "not counted", Value: fmt.Sprintf("%s (%s failed)", render.Num(t.Skipped), render.Num(t.Failed)), Only: render.InGrid})
}

func savingGrid(r *Report) *render.Grid {
	g := render.TotalsGrid(totals(r))
	g.Notes = append(g.Notes, "The saving is an upper bound: it assumes each listed word became one token in every context.")
	g.Notes = append(g.Notes, notes(r.Totals)...)
	return g
}

func scriptGrid(r *Report) *render.Grid {
	fe := r.Fertility
	g := &render.Grid{Title: fmt.Sprintf("Tokens per UAX #29 word by script (all words: %s, one-token words %s)",
		render.Ratio(float64(fe.WordTokens), float64(fe.Words)), render.Percent(float64(fe.OneTokenShare), 1)),
		Header: []string{"script", "words", "tokens", "tokens/word", "one-token words"}, Right: []int{1, 2, 3, 4}}
	for _, s := range fe.ByScript {
		g.AddRow(s.Script, render.Num(s.Words), render.Num(s.Tokens), render.Ratio(float64(s.Tokens), float64(s.Words)), render.Percent(float64(s.OneToken), float64(s.Words)))
	}
	return g
}

func docFertilityGrid(r *Report, rows int) *render.Grid {
	docs := r.Fertility.Documents.mostFertile(rows)
	g := &render.Grid{Sources: true, Title: "Documents by tokens per UAX #29 word", Header: []string{"document", "words", "tokens", "tokens/word", "one-token words"}, Right: []int{1, 2, 3, 4}}
	for _, d := range docs {
		g.AddRow(report.Where(d.Source, d.Record), render.Num(d.Words), render.Num(d.WordTokens), render.Ratio(float64(d.WordTokens), float64(d.Words)), render.Percent(d.OneTokenShare, 1))
	}
	if n := r.Fertility.Documents.Len(); len(docs) < n {
		g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--doc-rows 0 lists all; --format json gives every one)", render.Num(n-len(docs))))
	}
	return g
}

func termGrid(r *Report) *render.Grid {
	g := &render.Grid{Title: fmt.Sprintf("Glossary terms (%s flagged at %g+ pieces)", render.Num(r.Totals.FlaggedTerm), r.Options.MinPieces),
		Header: []string{"term", "alone", "after a space", "split after a space", "count", "documents", "excess", ""},
		Right:  []int{1, 2, 4, 5, 6}}
	for _, t := range r.Terms {
		flag := ""
		if t.Flagged {
			flag = "◂ splits"
		}
		g.AddRow(t.Term, render.Num(t.PiecesAlone), render.Num(t.PiecesAfterSpace), readableRaw(t.AfterSpaceBytes),
			render.Num(t.Occurrences), render.Num(t.Documents), render.Num(t.Excess), flag)
	}
	return g
}
