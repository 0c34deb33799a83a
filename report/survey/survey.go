package survey

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"sort"
	"strings"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/internal/screen"
	"morsel/report"
	"morsel/report/measure"
	"morsel/report/render"
)

// Weight is what one document weighs.
type Weight struct {
	Source        string  `json:"source"`
	Record        int     `json:"record"`
	Line          int     `json:"line,omitempty"` // a CSV or TSV row's first line
	Format        string  `json:"format"`
	Bytes         int64   `json:"bytes"`
	Chars         int64   `json:"characters"`
	Words         int64   `json:"words"`
	Tokens        int     `json:"tokens"`
	BytesPerToken float64 `json:"bytes_per_token"`
	TokensPerWord float64 `json:"tokens_per_word"`
	Specials      int     `json:"special_strings"`
	// Hash is the XXH64 hash of the text, by which identical documents
	// are found.
	Hash uint64 `json:"-"`
}

// Weigh counts one document's tokens, characters and words, streaming it
// when it comes as a Stream.
func Weigh(enc *bpe.Encoder, d *corpus.Document) (Weight, error) {
	w := Weight{Source: d.Source, Record: d.Record, Line: d.Line, Format: d.Format}
	var tc measure.TextCounter
	var st bpe.Stats
	if d.Stream != nil {
		defer d.Stream.Close()
		var err error
		st, _, err = enc.CountReader(measure.CountingReader(d.Stream, &tc))
		if err != nil {
			return w, err
		}
	} else {
		tc.Write(d.Text)
		st = enc.CountStats(d.Text)
		if st.Err != nil {
			return w, st.Err // a split pattern ran past its time limit: the count is not exact
		}
	}
	w.Hash = d.Hash // a stream's is known once it is read to its end
	w.Bytes, w.Chars, w.Words = tc.Bytes, tc.Chars, tc.Words
	w.Tokens, w.Specials = st.Tokens, st.Specials
	w.BytesPerToken = report.Round2(report.Per(float64(w.Bytes), float64(w.Tokens)))
	w.TokensPerWord = report.Round2(report.Per(float64(w.Tokens), float64(w.Words)))
	return w, nil
}

// Totals sums a survey.
type Totals struct {
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
	// Repeats counts documents whose text is the same as an earlier
	// one's, and RepeatTokens their tokens: what counting each text once
	// (--once) would save.
	Repeats      int   `json:"repeats"`
	RepeatTokens int64 `json:"repeat_tokens"`
}

// Identical is a group of documents with the same text (by content hash).
type Identical struct {
	Tokens    int      `json:"tokens"` // each
	Bytes     int64    `json:"bytes"`  // each
	Documents []string `json:"documents"`
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

// Report is the report of morsel survey.
type Report struct {
	Vocabulary bpe.Info         `json:"vocabulary"`
	Documents  []Weight         `json:"documents"`
	Skipped    []report.Skipped `json:"skipped"`
	Totals     Totals           `json:"totals"`
	Spread     report.Spread    `json:"spread"`
	Histogram  []Bin            `json:"histogram"`
	Formats    []FormatShare    `json:"formats"`
	Largest    []Weight         `json:"largest"`
	Identical  []Identical      `json:"identical"`
	Warnings   []string         `json:"warnings"`
}

// Surveyor folds walk results into a Report.
type Surveyor struct {
	s Report
}

// NewSurveyor starts a survey under the vocabulary described by info.
func NewSurveyor(info bpe.Info) *Surveyor {
	return &Surveyor{s: Report{Vocabulary: info, Documents: []Weight{}, Skipped: []report.Skipped{}, Warnings: []string{}}}
}

// Add takes one document's weight.
func (sv *Surveyor) Add(w Weight) { sv.s.Documents = append(sv.s.Documents, w) }

// LargestShown is how many of the largest documents a survey lists.
const LargestShown = 10

// Finish computes the totals, spread, histogram and breakdowns and returns
// the survey, with skipped as the inputs and records it did not count.
func (sv *Surveyor) Finish(skipped []report.Skipped) *Report {
	s := &sv.s
	s.Skipped = report.OrNone(skipped)
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
	s.Identical = identicalGroups(s.Documents)
	for _, g := range s.Identical {
		t.Repeats += len(g.Documents) - 1
		t.RepeatTokens += int64(len(g.Documents)-1) * int64(g.Tokens)
	}
	s.Spread = report.SpreadOf(tokens)
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
			render.Num(docs), render.Num(t.Specials), specialNames(s.Vocabulary)))
	}
	if t.Repeats > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("%s document(s) have the same text as another (%s tokens counted more than once); --once counts each text once",
			render.Num(t.Repeats), render.Num(t.RepeatTokens)))
	}
	if t.OverWindow > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("%s document(s) exceed the %s-token window on their own, before any prompt frame or answer; morsel fit gives the margins, morsel ration splits them",
			render.Num(t.OverWindow), render.Num(s.Vocabulary.Window)))
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

// Write renders s in format f. rows bounds the per-document rows of
// the table view (0 lists them all); the CSV view is the per-document
// table, complete.
func Write(w io.Writer, f render.Format, s *Report, rows int) error {
	if f == render.JSON {
		return writeSurveyJSON(w, s)
	}
	docs := surveyDocGrid(s, rows, f)
	if f == render.CSV {
		return docs.WriteCSV(w)
	}
	grids := []*render.Grid{docs, render.TotalsGrid(totals(s)), spreadGrid(s), formatGrid(s)}
	if len(s.Documents) > LargestShown {
		grids = append(grids, largestGrid(s))
	}
	if len(s.Identical) > 0 {
		grids = append(grids, identicalGrid(s))
	}
	if len(s.Skipped) > 0 {
		grids = append(grids, render.SkipGrids(render.ViewOf(w), s.Skipped)...)
	}
	if err := render.WriteGrids(w, f, grids...); err != nil {
		return err
	}
	if len(s.Warnings) > 0 {
		fmt.Fprintln(w)
		for _, warn := range s.Warnings {
			for _, line := range screen.Wrap("note: "+warn, render.ViewOf(w).Width) {
				fmt.Fprintln(w, line)
			}
		}
	}
	return nil
}

var weightHeader = []string{"document", "format", "bytes", "chars", "wc words", "tokens", "bytes/token", "tokens/wc word"}

func weightRow(d Weight) []string {
	return []string{report.Where(d.Source, d.Record), d.Format, render.Num(d.Bytes), render.Num(d.Chars), render.Num(d.Words), render.Num(d.Tokens),
		render.Ratio(float64(d.Bytes), float64(d.Tokens)), render.Ratio(float64(d.Tokens), float64(d.Words))}
}

func surveyDocGrid(s *Report, rows int, f render.Format) *render.Grid {
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Documents (%s) under %s", render.Num(len(s.Documents)), s.Vocabulary.Name), Header: weightHeader, Right: []int{2, 3, 4, 5, 6, 7}}
	if f == render.CSV {
		g.Header = []string{"source", "record", "format", "bytes", "characters", "words", "tokens", "bytes_per_token", "tokens_per_word", "special_strings"}
		for _, d := range s.Documents {
			g.AddRow(d.Source, fmt.Sprint(d.Record), d.Format, fmt.Sprint(d.Bytes), fmt.Sprint(d.Chars), fmt.Sprint(d.Words), fmt.Sprint(d.Tokens),
				render.Ratio(float64(d.Bytes), float64(d.Tokens)), render.Ratio(float64(d.Tokens), float64(d.Words)), fmt.Sprint(d.Specials))
		}
		return g
	}
	for i, d := range s.Documents {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--rows 0 lists all; --format csv or json gives every row)", render.Num(len(s.Documents)-rows)))
			break
		}
		g.AddRow(weightRow(d)...)
	}
	return g
}

// totals lists the survey's totals, for the totals grid and the page's
// cards alike.
func totals(s *Report) []render.Measure {
	t := s.Totals
	bytesPerToken := render.Ratio(float64(t.Bytes), float64(t.Tokens))
	ms := []render.Measure{
		{Label: "documents", Value: render.Num(t.Documents)},
		{Label: "tokens", Value: render.Num(t.Tokens)},
		{Label: "bytes", Value: render.Num(t.Bytes)},
		{Label: "characters", Value: render.Num(t.Chars), Only: render.InGrid},
		{Label: "words (wc -w)", Value: render.Num(t.Words)},
		{Label: "bytes per token", Value: bytesPerToken, Only: render.InGrid},
		{Label: "tokens per wc -w word", Value: render.Ratio(float64(t.Tokens), float64(t.Words))},
		{Label: "bytes per token", Value: bytesPerToken, Only: render.InCards},
		{Label: render.WindowLabel(s.Vocabulary.Window), Value: overWindowValue(s), Warn: t.OverWindow > 0, Only: render.InCards},
		{Label: "not counted", Value: fmt.Sprintf("%s (%s failed)", render.Num(t.Skipped), render.Num(t.Failed)),
			CardLabel: fmt.Sprintf("not counted, %s failed", render.Num(t.Failed)), CardValue: render.Num(t.Skipped), Warn: t.Failed > 0},
	}
	if s.Vocabulary.Window > 0 {
		ms = append(ms, render.Measure{Label: fmt.Sprintf("over the %s-token window", render.Num(s.Vocabulary.Window)), Value: render.Num(t.OverWindow), Only: render.InGrid})
	}
	return ms
}

// barWidth is the longest histogram bar, in characters.
const barWidth = 40

func spreadGrid(s *Report) *render.Grid {
	sp := s.Spread
	g := &render.Grid{Title: fmt.Sprintf("Tokens per document: min %s, median %s, p90 %s, p99 %s, max %s",
		render.Num(sp.Min), render.Num(sp.Median), render.Num(sp.P90), render.Num(sp.P99), render.Num(sp.Max)),
		Header: []string{"tokens", "documents", ""}, Right: []int{1}, Keep: []int{2}}
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
		label := fmt.Sprintf("%s - %s", render.Num(b.From), render.Num(b.To-1))
		if win := s.Vocabulary.Window; win > 0 && b.From == win {
			bar += "  ◂ past the window"
		}
		g.AddRow(label, render.Num(b.Documents), bar)
	}
	return g
}

func formatGrid(s *Report) *render.Grid {
	g := &render.Grid{Title: "By file type", Header: []string{"format", "documents", "tokens", "bytes", "share of tokens"}, Right: []int{1, 2, 3, 4}}
	for _, f := range s.Formats {
		g.AddRow(f.Format, render.Num(f.Documents), render.Num(f.Tokens), render.Num(f.Bytes), render.Percent(float64(f.Tokens), float64(s.Totals.Tokens)))
	}
	return g
}

func largestGrid(s *Report) *render.Grid {
	g := &render.Grid{Sources: true, Title: "Largest documents", Header: weightHeader, Right: []int{2, 3, 4, 5, 6, 7}}
	for _, d := range s.Largest {
		g.AddRow(weightRow(d)...)
	}
	return g
}

// writeSurveyJSON writes s as WriteJSON would, but one document at a time,
// so that a survey of a million documents is never held as one buffer.
func writeSurveyJSON(w io.Writer, s *Report) error {
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
		{"formats", s.Formats}, {"largest", s.Largest}, {"identical", s.Identical}, {"warnings", s.Warnings}}
	for i, r := range rest {
		if err := field(r.name, r.v, i == len(rest)-1); err != nil {
			return err
		}
	}
	bw.WriteString("}\n")
	return bw.Flush()
}

// identicalGroups returns the groups of documents that share a text, the
// most tokens repeated first, each group's documents in walk order.
func identicalGroups(docs []Weight) []Identical {
	first := map[uint64]int{}
	var groups []Identical
	for _, d := range docs {
		if d.Bytes == 0 {
			continue
		}
		k, seen := first[d.Hash]
		if !seen {
			first[d.Hash] = -1 - len(groups) // a group made only if a second comes
			groups = append(groups, Identical{Tokens: d.Tokens, Bytes: d.Bytes, Documents: []string{report.Where(d.Source, d.Record)}})
			continue
		}
		g := &groups[-1-k]
		g.Documents = append(g.Documents, report.Where(d.Source, d.Record))
	}
	out := []Identical{}
	for _, g := range groups {
		if len(g.Documents) > 1 {
			out = append(out, g)
		}
	}
	sort.SliceStable(out, func(i, j int) bool {
		return int64(len(out[i].Documents)-1)*int64(out[i].Tokens) > int64(len(out[j].Documents)-1)*int64(out[j].Tokens)
	})
	return out
}

// identicalGrid lists the groups of identical documents.
func identicalGrid(s *Report) *render.Grid {
	g := &render.Grid{Title: fmt.Sprintf("Identical documents (%s groups; %s repeats, %s tokens counted more than once)",
		render.Num(len(s.Identical)), render.Num(s.Totals.Repeats), render.Num(s.Totals.RepeatTokens)),
		Header: []string{"document", "copies", "tokens each"}, Right: []int{1, 2}, Sources: true}
	for _, id := range s.Identical {
		g.AddRow(id.Documents[0], render.Num(len(id.Documents)), render.Num(id.Tokens))
		for _, d := range id.Documents[1:] {
			g.AddRow(d, "same", "")
		}
	}
	return g
}

// Orders are the orders of --sort for the documents.
var Orders = []report.Order{report.ByTokens, report.ByBytes, report.ByName, report.ByOverflow}

// Sort puts the documents in order o; overflow is tokens past the window.
func (s *Report) Sort(o report.Order) {
	win := int64(s.Vocabulary.Window)
	report.SortDocs(s.Documents, o, func(d *Weight) report.DocKey {
		k := report.DocKey{Source: d.Source, Record: d.Record, Tokens: int64(d.Tokens), Bytes: d.Bytes}
		if win > 0 {
			k.Over = k.Tokens - win
		}
		return k
	})
}
