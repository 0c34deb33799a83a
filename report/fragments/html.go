package fragments

import (
	"fmt"
	"html/template"
	"io"

	"morsel/report/render"
)

// WriteHTML writes a fragments report as a self-contained HTML
// page: the words that waste the most tokens as bars, the words with their
// pieces shaded one by one, tokens per word by script and by document (at
// most docRows documents; 0 lists all) and the glossary terms.
func WriteHTML(w io.Writer, r *Report, docRows int) error {
	t := r.Totals
	p := &render.Page{
		Command: "fragments",
		Title:   "words the vocabulary breaks apart",
		Lead: fmt.Sprintf("%s words in %s documents; %s distinct words, %s of them split into %g or more pieces.",
			render.Num(t.Words), render.Num(t.Documents), render.Num(t.DistinctWords), render.Num(t.Qualifying), r.Options.MinPieces),
		Facts: render.VocabFacts(r.Vocabulary.Name, r.Vocabulary.Size, r.Vocabulary.Window),
	}
	p.Notes = append(p.Notes, notes(t)...)
	p.Sections = append(p.Sections, render.Section{
		ID: "glance", Heading: "At a glance",
		Cards: render.Cards(totals(r)),
		Notes: []string{"Excess is occurrences × (pieces − 1): the tokens a word takes beyond one each time it occurs. The saving is an upper bound: it assumes every listed word became one token wherever it stands."},
	})

	words := render.Section{ID: "words", Heading: "Words ranked by excess tokens"}
	if len(r.Words) == 0 {
		words.Intro = fmt.Sprintf("No word splits into %g or more pieces at least %d time(s).", r.Options.MinPieces, r.Options.MinCount)
	} else {
		words.Intro = "Each word's pieces are its tokens where it stands in the text, the leading space (␣) included; shading alternates from one piece to the next. The split shown is the word's most common one."
		words.Charts = []template.HTML{excessChart(r).SVG()}
		words.Words = wordsView(fmt.Sprintf("%s of %s words shown", render.Num(t.Listed), render.Num(t.Qualifying)), r.Words)
	}
	p.Sections = append(p.Sections, words)
	if r.HasFallback {
		fb := render.Section{ID: "byte-fallback", Heading: "Words spelled only in byte-fallback tokens"}
		if len(r.Fallback) == 0 {
			fb.Intro = fmt.Sprintf("Every word seen at least %d time(s) has a token of the vocabulary in it.", r.Options.MinCount)
		} else {
			fb.Intro = "The vocabulary has no token for any character of these words: each is spelled a byte at a time, in tokens such as <E6>. Ranked by excess tokens."
			fb.Words = wordsView(fmt.Sprintf("%s of %s words shown", render.Num(t.FallbackListed), render.Num(t.FallbackWords)), r.Fallback)
		}
		p.Sections = append(p.Sections, fb)
	}

	if len(r.Fertility.ByScript) > 0 {
		p.Sections = append(p.Sections, render.Section{
			ID: "scripts", Heading: "Tokens per UAX #29 word by script",
			Intro:  "How many tokens a word takes on average, by the script it is written in. A vocabulary learnt mostly from one script spends more tokens on the others.",
			Charts: []template.HTML{scriptChart(r).SVG()},
			Tables: []render.TableView{render.TableOf(scriptGrid(r), -1), render.TableOf(docFertilityGrid(r, docRows), 0)},
		})
	}
	if len(r.Terms) > 0 {
		tv := &render.WordsView{
			Title: "Glossary terms, split alone (shown) and after a space",
			Header: []render.CellView{{Text: "term"}, {Text: "line", Num: true}, {Text: "alone", Num: true}, {Text: "split alone"},
				{Text: "after a space", Num: true}, {Text: "in the corpus", Num: true}, {Text: "flag"}},
		}
		for _, term := range r.Terms {
			flag := ""
			if term.Flagged {
				flag = fmt.Sprintf("%g+ pieces", r.Options.MinPieces)
			}
			tv.Rows = append(tv.Rows, render.WordRow{
				Cells:  []render.CellView{{Text: term.Term}, {Text: fmt.Sprint(term.Line), Num: true}, {Text: fmt.Sprint(term.PiecesAlone), Num: true}},
				Pieces: readablePieces(term.SplitAlone),
				After: []render.CellView{{Text: fmt.Sprint(term.PiecesAfterSpace), Num: true},
					{Text: fmt.Sprintf("%s× in %s doc(s)", render.Num(term.Occurrences), render.Num(term.Documents)), Num: true}, {Text: flag}},
			})
		}
		p.Sections = append(p.Sections, render.Section{ID: "terms", Heading: "Glossary terms",
			Intro: fmt.Sprintf("%s of %s terms are flagged: they take %g or more pieces alone or after a space.", render.Num(t.FlaggedTerm), render.Num(len(r.Terms)), r.Options.MinPieces),
			Words: tv})
	}
	if len(r.Skipped) > 0 {
		p.Sections = append(p.Sections, render.SkipSection(render.ViewOf(w), r.Skipped))
	}
	return render.WritePage(w, p)
}

// wordsView lists ranked words with their pieces shaded.
func wordsView(title string, ws []Fragment) *render.WordsView {
	wv := &render.WordsView{
		Title: title,
		Header: []render.CellView{{Text: "#", Num: true}, {Text: "word"}, {Text: "script"}, {Text: "count", Num: true},
			{Text: "pieces", Num: true}, {Text: "excess", Num: true}, {Text: "split"}, {Text: "documents", Num: true}},
	}
	for i, f := range ws {
		wv.Rows = append(wv.Rows, render.WordRow{
			Cells: []render.CellView{{Text: fmt.Sprint(i + 1), Num: true}, {Text: render.ShownWord(f.Word)}, {Text: f.Script}, {Text: render.Num(f.Count), Num: true},
				{Text: fmt.Sprintf("%.2f", f.Pieces), Num: true}, {Text: render.Num(f.Excess), Num: true}},
			Pieces: render.ShownPieces(fragmentPieces(f)),
			After:  []render.CellView{{Text: render.Num(f.Documents), Num: true}},
		})
	}
	return wv
}

// fragmentPieces returns a word's pieces as a person can read them, a
// leading space as ␣, from its bytes when the report has them.
func fragmentPieces(f Fragment) []string {
	if len(f.SplitBytes) == len(f.Split) && len(f.SplitBytes) > 0 {
		out := make([]string, len(f.SplitBytes))
		for i, p := range f.SplitBytes {
			out[i] = render.Readable(p)
		}
		return out
	}
	return readablePieces(f.Split)
}

func readablePieces(split []string) []string {
	out := make([]string, len(split))
	for i, p := range split {
		out[i] = render.Readable([]byte(p))
	}
	return out
}

func excessChart(r *Report) *render.BarList {
	c := &render.BarList{YLabel: "word", ID: "excess-chart", Title: "Excess tokens of the most wasteful words", XLabel: "excess tokens (occurrences × (pieces − 1))"}
	for i, f := range r.Words {
		if i == render.ChartRows {
			break
		}
		c.Rows = append(c.Rows, render.BarRow{Label: render.ShownWord(f.Word), Value: float64(f.Excess), Text: render.Num(f.Excess),
			Tip: fmt.Sprintf("%s: %s occurrence(s) × %.2f pieces, %s excess tokens", render.ShownWord(f.Word), render.Num(f.Count), f.Pieces, render.Num(f.Excess))})
	}
	c.Desc = fmt.Sprintf("Bar chart of the %d words with the most excess tokens; the table below lists them with their pieces.", len(c.Rows))
	return c
}

func scriptChart(r *Report) *render.BarList {
	c := &render.BarList{YLabel: "script", ID: "script-chart", Title: "Tokens per UAX #29 word for each script", XLabel: "tokens per UAX #29 word", Decimals: true}
	for _, s := range r.Fertility.ByScript {
		c.Rows = append(c.Rows, render.BarRow{Label: s.Script, Value: s.Fertility, Text: fmt.Sprintf("%.2f", s.Fertility),
			Tip: fmt.Sprintf("%s: %s words, %s tokens, %.2f tokens per word", s.Script, render.Num(s.Words), render.Num(s.Tokens), s.Fertility)})
	}
	c.Marks = []render.ChartMark{{At: 1, Label: "one token a word", Class: "spread"}}
	c.Desc = fmt.Sprintf("Bar chart of tokens per UAX #29 word for %d scripts; a line marks one token a word.", len(c.Rows))
	return c
}
