package survey

import (
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
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes     string  `json:"source_bytes,omitempty"`
	Record          int     `json:"record"`
	Line            int     `json:"line,omitempty"` // a CSV or TSV row's first line
	Format          string  `json:"format"`
	Bytes           int64   `json:"bytes"`
	Chars           int64   `json:"characters"`
	WCWords         int64   `json:"words"` // as wc -w counts them
	Tokens          int     `json:"tokens"`
	BytesPerToken   float64 `json:"bytes_per_token"`
	TokensPerWCWord float64 `json:"tokens_per_word"`
	Specials        int     `json:"special_strings"`
	// Hash is the XXH64 hash of the text, by which identical documents
	// are found.
	Hash uint64 `json:"-"`
}

// Weigh counts one document's tokens, characters and words, streaming it
// when it comes as a Stream.
func Weigh(enc *bpe.Encoder, d *corpus.Document) (Weight, error) {
	w := Weight{Source: d.Source, SourceBytes: report.SourceBytes(d.Source), Record: d.Record, Line: d.Line, Format: d.Format}
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
	w.Bytes, w.Chars, w.WCWords = tc.Bytes, tc.Chars, tc.WCWords
	w.Tokens, w.Specials = st.Tokens, st.Specials
	w.ratios()
	return w, nil
}

// ratios sets the ratios, which follow from the counts.
func (w *Weight) ratios() {
	w.BytesPerToken = report.Round2(report.Per(float64(w.Bytes), float64(w.Tokens)))
	w.TokensPerWCWord = report.Round2(report.Per(float64(w.Tokens), float64(w.WCWords)))
}

// Totals sums a survey.
type Totals struct {
	Documents int   `json:"documents"`
	Tokens    int64 `json:"tokens"`
	Bytes     int64 `json:"bytes"`
	Chars     int64 `json:"characters"`
	WCWords   int64 `json:"words"` // as wc -w counts them
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
	// RepeatGroups counts the groups of identical documents, listed or not.
	RepeatGroups int `json:"repeat_groups"`
}

// Identical is a group of documents with the same text (by content hash).
type Identical struct {
	Tokens int   `json:"tokens"` // each
	Bytes  int64 `json:"bytes"`  // each
	// Copies counts the group's documents; Documents names the first
	// CopiesListed of them in walk order.
	Copies    int      `json:"copies"`
	Documents []string `json:"documents"`
}

// IdenticalShown is how many groups of identical documents a survey
// lists, those with the most tokens counted more than once; the totals
// count every group. CopiesListed is how many of a group's documents it
// names. Both keep a corpus of repeated texts from costing memory per
// copy.
const (
	IdenticalShown = 1000
	CopiesListed   = 100
)

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

// Surveyor folds walk results into a Report. It keeps every document's
// row unless told to keep fewer (Keep); what the rest of the report needs
// of a document is a few bytes, so that a survey of millions of records
// stays small.
type Surveyor struct {
	s        Report
	keep     int // rows kept: -1 for all
	rows     func(Weight) error
	tokens   tokenTally
	keys     docKeys
	names    report.Names
	byFormat map[string]*FormatShare
	special  int // documents that hold special-token strings
}

// NewSurveyor starts a survey under the vocabulary described by info.
func NewSurveyor(info bpe.Info) *Surveyor {
	return &Surveyor{s: Report{Vocabulary: info, Documents: []Weight{}, Skipped: []report.Skipped{}, Warnings: []string{}},
		keep: -1, byFormat: map[string]*FormatShare{}}
}

// Keep bounds the rows the report keeps to the first n documents' (n < 0
// keeps all), and hands every row to rows (when not nil) as it comes, for
// a writer that streams them. The totals, spread and every other part
// still cover all the documents.
func (sv *Surveyor) Keep(n int, rows func(Weight) error) {
	sv.keep, sv.rows = n, rows
}

// Add takes one document's weight; the error is the row writer's, or a
// total's that would overflow (report.ErrTotalOverflow), which leaves the
// document out.
func (sv *Surveyor) Add(d Weight) error {
	t := &sv.s.Totals
	// The totals are checked; a format's share, the repeats and the
	// special strings are parts of them, and so within them.
	// The document's place is spelled out only for an overflow: building
	// it for every document was a fifth of a merge's time.
	sum := func(total, n int64, what string) (int64, error) {
		if s, err := report.Sum(total, n, ""); err == nil {
			return s, nil
		}
		return report.Sum(total, n, report.Where(d.Source, d.Record)+": "+what)
	}
	tokens, err := sum(t.Tokens, int64(d.Tokens), "tokens")
	if err != nil {
		return err
	}
	bytes, err := sum(t.Bytes, d.Bytes, "bytes")
	if err != nil {
		return err
	}
	chars, err := sum(t.Chars, d.Chars, "characters")
	if err != nil {
		return err
	}
	words, err := sum(t.WCWords, d.WCWords, "words")
	if err != nil {
		return err
	}
	if sv.keep < 0 || len(sv.s.Documents) < sv.keep {
		sv.s.Documents = append(sv.s.Documents, d)
	}
	t.Documents++
	t.Tokens, t.Bytes, t.Chars, t.WCWords = tokens, bytes, chars, words
	t.Specials += d.Specials
	if d.Specials > 0 {
		sv.special++
	}
	if win := sv.s.Vocabulary.Window; win > 0 && d.Tokens > win {
		t.OverWindow++
	}
	f := sv.byFormat[d.Format]
	if f == nil {
		f = &FormatShare{Format: d.Format}
		sv.byFormat[d.Format] = f
	}
	f.Documents++
	f.Tokens += int64(d.Tokens)
	f.Bytes += d.Bytes
	sv.tokens.add(d.Tokens)
	sv.keys.add(d.Hash, d.Tokens, d.Bytes)
	sv.names.Add(d.Source, d.Record)
	sv.addLargest(d)
	if sv.rows != nil {
		return sv.rows(d)
	}
	return nil
}

// addLargest keeps d among the largest documents when it is one: the most
// tokens first, the earlier of two equal ones first.
func (sv *Surveyor) addLargest(d Weight) {
	l := sv.s.Largest
	if len(l) == LargestShown && d.Tokens <= l[len(l)-1].Tokens {
		return
	}
	k := sort.Search(len(l), func(i int) bool { return l[i].Tokens < d.Tokens })
	if len(l) < LargestShown {
		l = append(l, Weight{})
	}
	copy(l[k+1:], l[k:])
	l[k] = d
	sv.s.Largest = l
}

// LargestShown is how many of the largest documents a survey lists.
const LargestShown = 10

// Finish computes the totals, spread, histogram and breakdowns and returns
// the survey, with skipped as the inputs and records it did not count.
func (sv *Surveyor) Finish(skipped []report.Skipped) *Report {
	s := &sv.s
	s.Skipped = report.OrNone(skipped)
	t := &s.Totals
	for _, k := range s.Skipped {
		t.Skipped++
		if k.Failed {
			t.Failed++
		}
	}
	s.Identical, t.RepeatGroups, t.Repeats, t.RepeatTokens = sv.identicalGroups()
	s.Spread = sv.tokens.spread()
	s.Histogram = sv.tokens.histogram()
	for _, f := range sv.byFormat {
		s.Formats = append(s.Formats, *f)
	}
	sort.Slice(s.Formats, func(i, j int) bool {
		a, b := s.Formats[i], s.Formats[j]
		return a.Tokens > b.Tokens || a.Tokens == b.Tokens && a.Format < b.Format
	})
	if t.Specials > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("%s document(s) hold %s special-token string(s) such as %s; they were counted as ordinary text (--specials honor counts each as its one special token)",
			render.Num(sv.special), render.Num(t.Specials), specialNames(s.Vocabulary)))
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
	var t tokenTally
	for _, n := range tokens {
		t.add(n)
	}
	return t.histogram()
}

// Rendering.

// Write renders s in format f. rows bounds the per-document rows of
// the table view (0 lists them all); the CSV view is the per-document
// table, complete.
func Write(w io.Writer, f render.Format, s *Report, rows int) error {
	if f == render.JSON || f == render.CSV {
		rs, err := NewRowStream(w, f, s.Vocabulary)
		if err != nil {
			return err
		}
		for _, d := range s.Documents {
			if err := rs.Row(d); err != nil {
				return err
			}
		}
		return rs.Finish(s)
	}
	docs := surveyDocGrid(s, rows, f)
	grids := []*render.Grid{docs, render.TotalsGrid(totals(s)), spreadGrid(s), formatGrid(s)}
	if s.Totals.Documents > LargestShown {
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
	return []string{report.Where(d.Source, d.Record), d.Format, render.Num(d.Bytes), render.Num(d.Chars), render.Num(d.WCWords), render.Num(d.Tokens),
		render.Ratio(float64(d.Bytes), float64(d.Tokens)), render.Ratio(float64(d.Tokens), float64(d.WCWords))}
}

func surveyDocGrid(s *Report, rows int, f render.Format) *render.Grid {
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Documents (%s) under %s", render.Num(s.Totals.Documents), s.Vocabulary.Name), Header: weightHeader, Right: []int{2, 3, 4, 5, 6, 7}}
	for i, d := range s.Documents {
		if rows > 0 && i == rows {
			break
		}
		g.AddRow(weightRow(d)...)
	}
	if rows > 0 && s.Totals.Documents > rows {
		g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--rows 0 lists all; --format csv or json gives every row)", render.Num(s.Totals.Documents-rows)))
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
		{Label: "words (wc -w)", Value: render.Num(t.WCWords)},
		{Label: "bytes per token", Value: bytesPerToken, Only: render.InGrid},
		{Label: "tokens per wc -w word", Value: render.Ratio(float64(t.Tokens), float64(t.WCWords))},
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

// identicalGroups returns the groups of documents that share a text, the
// most tokens repeated first (at most IdenticalShown of them, each naming
// at most CopiesListed documents in walk order), with the number of
// groups, of repeats and of tokens counted more than once over all of
// them.
func (sv *Surveyor) identicalGroups() (list []Identical, groups, repeats int, repeatTokens int64) {
	dup := sv.keys.repeated()
	if len(dup) == 0 {
		return nil, 0, 0, 0
	}
	var all []Identical
	sv.keys.each(func(i int, k docKey) {
		g, ok := dup[k.hash]
		if !ok || k.bytes == 0 {
			return
		}
		if g < 0 {
			dup[k.hash] = len(all)
			all = append(all, Identical{Tokens: int(k.tokens), Bytes: sv.keys.bytesOf(i, k), Copies: 1})
			return
		}
		all[g].Copies++
	})
	for _, g := range all {
		repeats += g.Copies - 1
		repeatTokens += int64(g.Copies-1) * int64(g.Tokens)
	}
	order := make([]int, len(all))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(i, j int) bool {
		a, b := all[order[i]], all[order[j]]
		return int64(a.Copies-1)*int64(a.Tokens) > int64(b.Copies-1)*int64(b.Tokens)
	})
	// Only the groups listed gather names: a second pass over the keys
	// finds their documents.
	listed := order[:min(len(order), IdenticalShown)]
	at := make(map[int]int, len(listed))
	for n, g := range listed {
		at[g] = n
	}
	list = make([]Identical, len(listed))
	for n, g := range listed {
		list[n] = all[g]
	}
	sv.keys.each(func(i int, k docKey) {
		g, ok := dup[k.hash]
		if !ok || k.bytes == 0 {
			return
		}
		if n, ok := at[g]; ok && len(list[n].Documents) < CopiesListed {
			list[n].Documents = append(list[n].Documents, sv.names.Of(i))
		}
	})
	return list, len(all), repeats, repeatTokens
}

// identicalGrid lists the groups of identical documents.
func identicalGrid(s *Report) *render.Grid {
	g := &render.Grid{Title: fmt.Sprintf("Identical documents (%s groups; %s repeats, %s tokens counted more than once)",
		render.Num(s.Totals.RepeatGroups), render.Num(s.Totals.Repeats), render.Num(s.Totals.RepeatTokens)),
		Header: []string{"document", "copies", "tokens each"}, Right: []int{1, 2}, Sources: true}
	for _, id := range s.Identical {
		g.AddRow(id.Documents[0], render.Num(id.Copies), render.Num(id.Tokens))
		for _, d := range id.Documents[1:] {
			g.AddRow(d, "same", "")
		}
		if more := id.Copies - len(id.Documents); more > 0 {
			g.AddRow(fmt.Sprintf("(%s more copies, not named)", render.Num(more)), "", "")
		}
	}
	if more := s.Totals.RepeatGroups - len(s.Identical); more > 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("%s more groups with fewer tokens repeated are counted in the totals but not listed", render.Num(more)))
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
