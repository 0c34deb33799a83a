package report

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"sort"
	"strings"

	"morsel/bpe"
	"morsel/corpus"
)

// Weight is what one document weighs.
type Weight struct {
	Source        string  `json:"source"`
	Record        int     `json:"record"`
	Format        string  `json:"format"`
	Bytes         int64   `json:"bytes"`
	Chars         int64   `json:"characters"`
	Words         int64   `json:"words"`
	Tokens        int     `json:"tokens"`
	BytesPerToken float64 `json:"bytes_per_token"`
	TokensPerWord float64 `json:"tokens_per_word"`
	Specials      int     `json:"special_strings"`
}

// Weigh counts one document's tokens, characters and words, streaming it
// when it comes as a Stream.
func Weigh(enc *bpe.Encoder, d *corpus.Document) (Weight, error) {
	w := Weight{Source: d.Source, Record: d.Record, Format: d.Format}
	var tc TextCounter
	var st bpe.Stats
	if d.Stream != nil {
		defer d.Stream.Close()
		var err error
		st, _, err = enc.CountReader(CountingReader(d.Stream, &tc))
		if err != nil {
			return w, err
		}
	} else {
		tc.Write(d.Text)
		st = enc.CountStats(d.Text)
	}
	w.Bytes, w.Chars, w.Words = tc.Bytes, tc.Chars, tc.Words
	w.Tokens, w.Specials = st.Tokens, st.Specials
	w.BytesPerToken = round2(ratio(float64(w.Bytes), float64(w.Tokens)))
	w.TokensPerWord = round2(ratio(float64(w.Tokens), float64(w.Words)))
	return w, nil
}

func round2(x float64) float64 { return float64(int64(x*100+0.5)) / 100 }

// SurveyTotals sums a survey.
type SurveyTotals struct {
	Documents int   `json:"documents"`
	Tokens    int64 `json:"tokens"`
	Bytes     int64 `json:"bytes"`
	Chars     int64 `json:"characters"`
	Words     int64 `json:"words"`
	Skipped   int   `json:"skipped"`
	Failed    int   `json:"failed"`
	Specials  int   `json:"special_strings"`
	// OverWindow counts documents whose tokens alone exceed the
	// vocabulary's window (0 when the window is not known).
	OverWindow int `json:"over_window"`
}

// FormatShare is one file type's part of a survey.
type FormatShare struct {
	Format    string `json:"format"`
	Documents int    `json:"documents"`
	Tokens    int64  `json:"tokens"`
	Bytes     int64  `json:"bytes"`
}

// Bin is one bar of the tokens-per-document histogram: documents with
// From <= tokens < To.
type Bin struct {
	From      int `json:"from"`
	To        int `json:"to"`
	Documents int `json:"documents"`
}

// Survey is the report of morsel survey.
type Survey struct {
	Vocabulary bpe.Info      `json:"vocabulary"`
	Documents  []Weight      `json:"documents"`
	Skipped    []Skipped     `json:"skipped"`
	Totals     SurveyTotals  `json:"totals"`
	Spread     Spread        `json:"spread"`
	Histogram  []Bin         `json:"histogram"`
	Formats    []FormatShare `json:"formats"`
	Largest    []Weight      `json:"largest"`
	Warnings   []string      `json:"warnings"`
}

// Surveyor folds walk results into a Survey.
type Surveyor struct {
	s Survey
}

// NewSurveyor starts a survey under the vocabulary described by info.
func NewSurveyor(info bpe.Info) *Surveyor {
	return &Surveyor{s: Survey{Vocabulary: info, Documents: []Weight{}, Skipped: []Skipped{}, Warnings: []string{}}}
}

// Add takes one walk item with its weight, or the error weighing it gave.
func (sv *Surveyor) Add(it corpus.Item, w Weight, err error) {
	switch {
	case it.Skip != nil:
		sv.s.Skipped = append(sv.s.Skipped, SkipOf(it.Skip))
	case err != nil:
		sv.s.Skipped = append(sv.s.Skipped, FailedDoc(it.Doc, err))
	default:
		sv.s.Documents = append(sv.s.Documents, w)
	}
}

// LargestShown is how many of the largest documents a survey lists.
const LargestShown = 10

// Finish computes the totals, spread, histogram and breakdowns and returns
// the survey.
func (sv *Surveyor) Finish() *Survey {
	s := &sv.s
	t := &s.Totals
	byFormat := map[string]*FormatShare{}
	tokens := make([]int, len(s.Documents))
	for i, d := range s.Documents {
		tokens[i] = d.Tokens
		t.Documents++
		t.Tokens += int64(d.Tokens)
		t.Bytes += d.Bytes
		t.Chars += d.Chars
		t.Words += d.Words
		t.Specials += d.Specials
		if win := s.Vocabulary.Window; win > 0 && d.Tokens > win {
			t.OverWindow++
		}
		f := byFormat[d.Format]
		if f == nil {
			f = &FormatShare{Format: d.Format}
			byFormat[d.Format] = f
		}
		f.Documents++
		f.Tokens += int64(d.Tokens)
		f.Bytes += d.Bytes
	}
	for _, k := range s.Skipped {
		t.Skipped++
		if k.Failed {
			t.Failed++
		}
	}
	s.Spread = SpreadOf(tokens)
	s.Histogram = Histogram(tokens)
	for _, f := range byFormat {
		s.Formats = append(s.Formats, *f)
	}
	sort.Slice(s.Formats, func(i, j int) bool {
		a, b := s.Formats[i], s.Formats[j]
		return a.Tokens > b.Tokens || a.Tokens == b.Tokens && a.Format < b.Format
	})
	idx := make([]int, len(s.Documents))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return s.Documents[idx[i]].Tokens > s.Documents[idx[j]].Tokens })
	for k := 0; k < len(idx) && k < LargestShown; k++ {
		s.Largest = append(s.Largest, s.Documents[idx[k]])
	}
	if t.Specials > 0 {
		docs := 0
		for _, d := range s.Documents {
			if d.Specials > 0 {
				docs++
			}
		}
		s.Warnings = append(s.Warnings, fmt.Sprintf("%s document(s) hold %s special-token string(s) such as %s; they were counted as ordinary text (--specials honor counts each as its one special token)",
			Num(docs), Num(t.Specials), specialNames(s.Vocabulary)))
	}
	if t.OverWindow > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("%s document(s) exceed the %s-token window on their own, before any prompt frame or answer; morsel fit gives the margins, morsel ration splits them",
			Num(t.OverWindow), Num(s.Vocabulary.Window)))
	}
	return s
}

func specialNames(info bpe.Info) string {
	var names []string
	for i, sp := range info.Specials {
		if i == 3 {
			names = append(names, "...")
			break
		}
		names = append(names, sp.Text)
	}
	return strings.Join(names, ", ")
}

// Histogram bins token counts by powers of two: [0,64), [64,128),
// [128,256) and so on up to the bin that holds the largest count, so a
// context window of 2^k tokens falls on a bin edge.
func Histogram(tokens []int) []Bin {
	if len(tokens) == 0 {
		return []Bin{}
	}
	bins := []Bin{{From: 0, To: 64}}
	max := 0
	for _, n := range tokens {
		if n > max {
			max = n
		}
	}
	for bins[len(bins)-1].To <= max {
		last := bins[len(bins)-1].To
		bins = append(bins, Bin{From: last, To: 2 * last})
	}
	for _, n := range tokens {
		k := 0
		for n >= bins[k].To {
			k++
		}
		bins[k].Documents++
	}
	return bins
}

// Rendering.

// WriteSurvey renders s in format f. rows bounds the per-document rows of
// the table view (0 lists them all); the CSV view is the per-document
// table, complete.
func WriteSurvey(w io.Writer, f Format, s *Survey, rows int) error {
	if f == JSON {
		return writeSurveyJSON(w, s)
	}
	docs := surveyDocGrid(s, rows, f)
	if f == CSV {
		return docs.WriteCSV(w)
	}
	grids := []*Grid{docs, surveyTotalsGrid(s), spreadGrid(s), formatGrid(s)}
	if len(s.Documents) > LargestShown {
		grids = append(grids, largestGrid(s))
	}
	if len(s.Skipped) > 0 {
		grids = append(grids, SkipGrid(s.Skipped))
	}
	if err := WriteGrids(w, f, grids...); err != nil {
		return err
	}
	if len(s.Warnings) > 0 {
		fmt.Fprintln(w)
		for _, warn := range s.Warnings {
			fmt.Fprintf(w, "note: %s\n", warn)
		}
	}
	return nil
}

var weightHeader = []string{"document", "format", "bytes", "chars", "words", "tokens", "bytes/token", "tokens/word"}

func weightRow(d Weight) []string {
	return []string{Where(d.Source, d.Record), d.Format, Num(d.Bytes), Num(d.Chars), Num(d.Words), Num(d.Tokens),
		Ratio(float64(d.Bytes), float64(d.Tokens)), Ratio(float64(d.Tokens), float64(d.Words))}
}

func surveyDocGrid(s *Survey, rows int, f Format) *Grid {
	g := &Grid{Title: fmt.Sprintf("Documents (%s) under %s", Num(len(s.Documents)), s.Vocabulary.Name), Header: weightHeader, Right: []int{2, 3, 4, 5, 6, 7}}
	if f == CSV {
		g.Header = []string{"source", "record", "format", "bytes", "characters", "words", "tokens", "bytes_per_token", "tokens_per_word", "special_strings"}
		for _, d := range s.Documents {
			g.AddRow(d.Source, fmt.Sprint(d.Record), d.Format, fmt.Sprint(d.Bytes), fmt.Sprint(d.Chars), fmt.Sprint(d.Words), fmt.Sprint(d.Tokens),
				Ratio(float64(d.Bytes), float64(d.Tokens)), Ratio(float64(d.Tokens), float64(d.Words)), fmt.Sprint(d.Specials))
		}
		return g
	}
	for i, d := range s.Documents {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--rows 0 lists all; --format csv or json gives every row)", Num(len(s.Documents)-rows)))
			break
		}
		g.AddRow(weightRow(d)...)
	}
	return g
}

func surveyTotalsGrid(s *Survey) *Grid {
	t := s.Totals
	g := &Grid{Title: "Totals", Header: []string{"measure", "value"}, Right: []int{1}}
	g.AddRow("documents", Num(t.Documents))
	g.AddRow("tokens", Num(t.Tokens))
	g.AddRow("bytes", Num(t.Bytes))
	g.AddRow("characters", Num(t.Chars))
	g.AddRow("words", Num(t.Words))
	g.AddRow("bytes per token", Ratio(float64(t.Bytes), float64(t.Tokens)))
	g.AddRow("tokens per word", Ratio(float64(t.Tokens), float64(t.Words)))
	g.AddRow("not counted", fmt.Sprintf("%s (%s failed)", Num(t.Skipped), Num(t.Failed)))
	if s.Vocabulary.Window > 0 {
		g.AddRow(fmt.Sprintf("over the %s-token window", Num(s.Vocabulary.Window)), Num(t.OverWindow))
	}
	return g
}

// barWidth is the longest histogram bar, in characters.
const barWidth = 40

func spreadGrid(s *Survey) *Grid {
	sp := s.Spread
	g := &Grid{Title: fmt.Sprintf("Tokens per document: min %s, median %s, p90 %s, p99 %s, max %s",
		Num(sp.Min), Num(sp.Median), Num(sp.P90), Num(sp.P99), Num(sp.Max)),
		Header: []string{"tokens", "documents", ""}, Right: []int{1}}
	most := 0
	for _, b := range s.Histogram {
		if b.Documents > most {
			most = b.Documents
		}
	}
	for _, b := range s.Histogram {
		bar := ""
		if most > 0 {
			n := (b.Documents*barWidth + most - 1) / most
			bar = strings.Repeat("▪", n)
		}
		label := fmt.Sprintf("%s - %s", Num(b.From), Num(b.To-1))
		if win := s.Vocabulary.Window; win > 0 && b.From == win {
			bar += "  ◂ past the window"
		}
		g.AddRow(label, Num(b.Documents), bar)
	}
	return g
}

func formatGrid(s *Survey) *Grid {
	g := &Grid{Title: "By file type", Header: []string{"format", "documents", "tokens", "bytes", "share of tokens"}, Right: []int{1, 2, 3, 4}}
	for _, f := range s.Formats {
		g.AddRow(f.Format, Num(f.Documents), Num(f.Tokens), Num(f.Bytes), Percent(float64(f.Tokens), float64(s.Totals.Tokens)))
	}
	return g
}

func largestGrid(s *Survey) *Grid {
	g := &Grid{Title: "Largest documents", Header: weightHeader, Right: []int{2, 3, 4, 5, 6, 7}}
	for _, d := range s.Largest {
		g.AddRow(weightRow(d)...)
	}
	return g
}

// Percent formats a/b as a percentage with one decimal, or "-".
func Percent(a, b float64) string {
	if b == 0 {
		return "-"
	}
	return fmt.Sprintf("%.1f%%", 100*a/b)
}

// writeSurveyJSON writes s as WriteJSON would, but one document at a time,
// so that a survey of a million documents is never held as one buffer.
func writeSurveyJSON(w io.Writer, s *Survey) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	field := func(name string, v any, last bool) error {
		b, err := json.MarshalIndent(v, "  ", "  ")
		if err != nil {
			return err
		}
		fmt.Fprintf(bw, "  %q: %s", name, b)
		if !last {
			bw.WriteString(",")
		}
		bw.WriteString("\n")
		return nil
	}
	bw.WriteString("{\n")
	if err := field("vocabulary", s.Vocabulary, false); err != nil {
		return err
	}
	bw.WriteString("  \"documents\": [")
	for i, d := range s.Documents {
		b, err := json.MarshalIndent(d, "    ", "  ")
		if err != nil {
			return err
		}
		if i > 0 {
			bw.WriteString(",")
		}
		bw.WriteString("\n    ")
		bw.Write(b)
	}
	if len(s.Documents) > 0 {
		bw.WriteString("\n  ")
	}
	bw.WriteString("],\n")
	rest := []struct {
		name string
		v    any
	}{{"skipped", s.Skipped}, {"totals", s.Totals}, {"spread", s.Spread}, {"histogram", s.Histogram},
		{"formats", s.Formats}, {"largest", s.Largest}, {"warnings", s.Warnings}}
	for i, r := range rest {
		if err := field(r.name, r.v, i == len(rest)-1); err != nil {
			return err
		}
	}
	bw.WriteString("}\n")
	return bw.Flush()
}
