package report

import (
	"fmt"
	"html/template"
	"io"
)

// ChartRows is the most rows a bar chart of the HTML report draws; the
// tables under it list the rest.
const ChartRows = 15

// WriteFragmentsHTML writes a fragments report as a self-contained HTML
// page: the words that waste the most tokens as bars, the words with their
// pieces shaded one by one, tokens per word by script and by document (at
// most docRows documents; 0 lists all) and the glossary terms.
func WriteFragmentsHTML(w io.Writer, r *Fragments, docRows int) error {
	t := r.Totals
	p := &page{
		Command: "fragments",
		Title:   "words the vocabulary breaks apart",
		Lead: fmt.Sprintf("%s words in %s documents; %s distinct words, %s of them split into %g or more pieces.",
			Num(t.Words), Num(t.Documents), Num(t.DistinctWords), Num(t.Qualifying), r.Options.MinPieces),
		Facts: vocabFacts(r.Vocabulary.Name, r.Vocabulary.Size, r.Vocabulary.Window),
	}
	p.Sections = append(p.Sections, section{
		ID: "glance", Heading: "At a glance",
		Cards: []fact{
			{Label: "documents", Value: Num(t.Documents)},
			{Label: "tokens", Value: Num(t.Tokens)},
			{Label: "words", Value: Num(t.Words)},
			{Label: "tokens per word, in words", Value: fmt.Sprintf("%.2f", r.Fertility.Fertility)},
			{Label: "words that are one token", Value: Percent(float64(r.Fertility.OneTokenShare), 1)},
			{Label: fmt.Sprintf("words of %g+ pieces", r.Options.MinPieces), Value: Num(t.Qualifying), Warn: t.Qualifying > 0},
			{Label: "excess tokens of the listed words", Value: Num(t.ListedExcess)},
			{Label: "saving, at most", Value: Percent(float64(t.ListedExcess), float64(t.Tokens))},
		},
		Notes: []string{"Excess is occurrences × (pieces − 1): the tokens a word takes beyond one each time it occurs. The saving is an upper bound: it assumes every listed word became one token wherever it stands."},
	})

	words := section{ID: "words", Heading: "Words ranked by excess tokens"}
	if len(r.Words) == 0 {
		words.Intro = fmt.Sprintf("No word splits into %g or more pieces at least %d time(s).", r.Options.MinPieces, r.Options.MinCount)
	} else {
		words.Intro = "Each word's pieces are its tokens where it stands in the text, the leading space (␣) included; shading alternates from one piece to the next. The split shown is the word's most common one."
		words.Charts = []template.HTML{excessChart(r).SVG()}
		wv := &wordsView{
			Title: fmt.Sprintf("%s of %s words shown", Num(t.Listed), Num(t.Qualifying)),
			Header: []cellView{{Text: "#", Num: true}, {Text: "word"}, {Text: "script"}, {Text: "count", Num: true},
				{Text: "pieces", Num: true}, {Text: "excess", Num: true}, {Text: "split"}, {Text: "documents", Num: true}},
		}
		for i, f := range r.Words {
			wv.Rows = append(wv.Rows, wordRow{
				Cells: []cellView{{Text: fmt.Sprint(i + 1), Num: true}, {Text: f.Word}, {Text: f.Script}, {Text: Num(f.Count), Num: true},
					{Text: fmt.Sprintf("%.2f", f.Pieces), Num: true}, {Text: Num(f.Excess), Num: true}},
				Pieces: fragmentPieces(f),
				After:  []cellView{{Text: Num(f.Documents), Num: true}},
			})
		}
		words.Words = wv
	}
	p.Sections = append(p.Sections, words)

	if len(r.Fertility.ByScript) > 0 {
		p.Sections = append(p.Sections, section{
			ID: "scripts", Heading: "Tokens per word by script",
			Intro:  "How many tokens a word takes on average, by the script it is written in. A vocabulary learnt mostly from one script spends more tokens on the others.",
			Charts: []template.HTML{scriptChart(r).SVG()},
			Tables: []tableView{tableOf(scriptGrid(r), -1), tableOf(docFertilityGrid(r, docRows), 0)},
		})
	}
	if len(r.Terms) > 0 {
		tv := &wordsView{
			Title: "Glossary terms, split alone (shown) and after a space",
			Header: []cellView{{Text: "term"}, {Text: "line", Num: true}, {Text: "alone", Num: true}, {Text: "split alone"},
				{Text: "after a space", Num: true}, {Text: "in the corpus", Num: true}, {Text: "flag"}},
		}
		for _, term := range r.Terms {
			flag := ""
			if term.Flagged {
				flag = fmt.Sprintf("%g+ pieces", r.Options.MinPieces)
			}
			tv.Rows = append(tv.Rows, wordRow{
				Cells:  []cellView{{Text: term.Term}, {Text: fmt.Sprint(term.Line), Num: true}, {Text: fmt.Sprint(term.PiecesAlone), Num: true}},
				Pieces: readablePieces(term.SplitAlone),
				After: []cellView{{Text: fmt.Sprint(term.PiecesAfterSpace), Num: true},
					{Text: fmt.Sprintf("%s× in %s doc(s)", Num(term.Occurrences), Num(term.Documents)), Num: true}, {Text: flag}},
			})
		}
		p.Sections = append(p.Sections, section{ID: "terms", Heading: "Glossary terms",
			Intro: fmt.Sprintf("%s of %s terms are flagged: they take %g or more pieces alone or after a space.", Num(t.FlaggedTerm), Num(len(r.Terms)), r.Options.MinPieces),
			Words: tv})
	}
	if len(r.Skipped) > 0 {
		p.Sections = append(p.Sections, skipSection(r.Skipped))
	}
	return writePage(w, p)
}

// fragmentPieces returns a word's pieces as a person can read them, a
// leading space as ␣, from its raw bytes when the report has them.
func fragmentPieces(f Fragment) []string {
	if len(f.raw) == len(f.Split) && len(f.raw) > 0 {
		out := make([]string, len(f.raw))
		for i, p := range f.raw {
			out[i] = Readable(p)
		}
		return out
	}
	return readablePieces(f.Split)
}

func readablePieces(split []string) []string {
	out := make([]string, len(split))
	for i, p := range split {
		out[i] = Readable([]byte(p))
	}
	return out
}

func excessChart(r *Fragments) *barList {
	c := &barList{YLabel: "word", ID: "excess-chart", Title: "Excess tokens of the most wasteful words", XLabel: "excess tokens (occurrences × (pieces − 1))"}
	for i, f := range r.Words {
		if i == ChartRows {
			break
		}
		c.Rows = append(c.Rows, barRow{Label: f.Word, Value: float64(f.Excess), Text: Num(f.Excess),
			Tip: fmt.Sprintf("%s: %s occurrence(s) × %.2f pieces, %s excess tokens", f.Word, Num(f.Count), f.Pieces, Num(f.Excess))})
	}
	c.Desc = fmt.Sprintf("Bar chart of the %d words with the most excess tokens; the table below lists them with their pieces.", len(c.Rows))
	return c
}

func scriptChart(r *Fragments) *barList {
	c := &barList{YLabel: "script", ID: "script-chart", Title: "Tokens per word, by script", XLabel: "tokens per word", Decimals: true}
	for _, s := range r.Fertility.ByScript {
		c.Rows = append(c.Rows, barRow{Label: s.Script, Value: s.Fertility, Text: fmt.Sprintf("%.2f", s.Fertility),
			Tip: fmt.Sprintf("%s: %s words, %s tokens, %.2f tokens per word", s.Script, Num(s.Words), Num(s.Tokens), s.Fertility)})
	}
	c.Marks = []chartMark{{At: 1, Label: "one token a word", Class: "spread"}}
	c.Desc = fmt.Sprintf("Bar chart of tokens per word for %d scripts; a line marks one token a word.", len(c.Rows))
	return c
}
