package fit

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"sort"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report"
	"morsel/report/render"
	"morsel/report/request"
)

// Doc is one document's verdict in morsel fit.
type Doc struct {
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string `json:"source_bytes,omitempty"`
	Record      int    `json:"record"`
	Tokens      int    `json:"tokens"`       // the document's own tokens
	InputTokens int    `json:"input_tokens"` // the framed request's tokens, overhead included
	Reserve     int    `json:"reserve"`      // tokens kept for the answer
	Window      int    `json:"window"`
	Fits        bool   `json:"fits"`
	Margin      int    `json:"margin"` // window - input - reserve; negative on overflow
}

// Totals sums a fit report.
type Totals struct {
	Documents int `json:"documents"`
	Fit       int `json:"fit"`
	Overflow  int `json:"overflow"`
	Skipped   int `json:"skipped"`
	Failed    int `json:"failed"`
	// WorstMargin is the smallest margin met (0 with no documents).
	WorstMargin int `json:"worst_margin"`
}

// Report is the report of morsel fit.
type Report struct {
	Vocabulary bpe.Info         `json:"vocabulary"`
	Target     string           `json:"target,omitempty"`
	Window     int              `json:"window"`
	Frame      string           `json:"frame"`
	FrameTok   int              `json:"frame_tokens"` // the frame around an empty document, overhead included
	Overhead   int              `json:"overhead"`
	Documents  []Doc            `json:"documents"` // overflowing documents first, worst first; then the rest in input order
	Skipped    []report.Skipped `json:"skipped"`
	Totals     Totals           `json:"totals"`

	fits *fitRows // the documents that fit, after Documents, until expanded
}

// Fitter measures documents against a window.
type Fitter struct {
	Enc      *bpe.Encoder
	Frame    *request.Frame
	Window   int
	Answer   request.Answer // the tokens reserved for the answer
	Overhead int
}

// Fit returns the verdict for one document, reading its text; a Stream is
// counted as it is read, alone and framed in one pass, and never held.
func (f *Fitter) Fit(d *corpus.Document) (Doc, error) {
	if d.Stream == nil {
		return f.FitText(d.Source, d.Record, d.Text)
	}
	defer d.Stream.Close()
	var alone bpe.Stats
	var framed int
	var err error
	if f.Frame == nil {
		alone, _, err = f.Enc.CountReader(d.Stream)
		framed = alone.Tokens
	} else {
		before, after := f.Frame.Parts(report.Where(d.Source, d.Record))
		alone, framed, _, err = f.Enc.CountFramedReader(d.Stream, before, after)
	}
	if err == nil {
		err = alone.Err
	}
	if err != nil {
		return Doc{}, err
	}
	return f.verdict(d.Source, d.Record, alone.Tokens, framed+f.Overhead), nil
}

// FitText returns the verdict for text, the document source (record). It
// fails when a split pattern ran past its time limit on the text, as the
// verdict would then rest on a count that is not exact.
func (f *Fitter) FitText(source string, record int, text []byte) (Doc, error) {
	in, err := request.InputTokens(f.Enc, f.Frame, report.Where(source, record), text, f.Overhead)
	if err != nil {
		return Doc{}, err
	}
	tokens, err := f.Enc.CountChecked(text)
	if err != nil {
		return Doc{}, err
	}
	return f.verdict(source, record, tokens, in), nil
}

// verdict is the verdict on a document of tokens tokens whose framed
// request, overhead included, has in tokens.
func (f *Fitter) verdict(source string, record, tokens, in int) Doc {
	res := f.Answer.For(in)
	margin := f.Window - in - res
	return Doc{Source: source, SourceBytes: report.SourceBytes(source), Record: record, Tokens: tokens, InputTokens: in, Reserve: res,
		Window: f.Window, Fits: margin >= 0, Margin: margin}
}

// Collector folds walk results into a Report. A document that fits is
// kept as three numbers and its name's share of a run of names, so that a
// million records cost a few megabytes; one that overflows is kept whole,
// as the report lists those first, worst first.
type Collector struct {
	r     Report
	fits  fitRows
	first bool
}

// fitRows are the documents that fit, in input order.
type fitRows struct {
	rows   []fitRow
	names  report.Names
	window int
}

type fitRow struct{ tokens, input, reserve int }

func (fr *fitRows) doc(i int) Doc {
	r := fr.rows[i]
	d := Doc{Tokens: r.tokens, InputTokens: r.input, Reserve: r.reserve, Window: fr.window, Fits: true, Margin: fr.window - r.input - r.reserve}
	d.Source, d.Record = fr.names.At(i)
	return d
}

// NewCollector starts a fit report.
func NewCollector(f *Fitter, target string) *Collector {
	name := "<empty>"
	frameTok, _ := request.InputTokens(f.Enc, f.Frame, name, nil, f.Overhead) // the frame alone: a pattern timeout there shows on every document
	return &Collector{r: Report{Vocabulary: f.Enc.Vocab().Info(), Target: target, Window: f.Window,
		Frame: f.Frame.Label(), FrameTok: frameTok, Overhead: f.Overhead,
		Documents: []Doc{}, Skipped: []report.Skipped{}}, first: true}
}

// Add takes one document's verdict.
func (fc *Collector) Add(d Doc) {
	t := &fc.r.Totals
	t.Documents++
	if fc.first || d.Margin < t.WorstMargin {
		t.WorstMargin = d.Margin
	}
	fc.first = false
	if !d.Fits {
		t.Overflow++
		fc.r.Documents = append(fc.r.Documents, d)
		return
	}
	// The window and margin of a fitting document are the report's window
	// and what is left of it, so they are not kept.
	t.Fit++
	fc.fits.rows = append(fc.fits.rows, fitRow{d.Tokens, d.InputTokens, d.Reserve})
	fc.fits.names.Add(d.Source, d.Record)
}

// Finish orders the documents and sums the totals, with skipped as the
// inputs and records not measured.
func (fc *Collector) Finish(skipped []report.Skipped) *Report {
	r := &fc.r
	r.Skipped = report.OrNone(skipped)
	sort.SliceStable(r.Documents, func(i, j int) bool {
		a, b := r.Documents[i], r.Documents[j]
		if a.Fits != b.Fits {
			return !a.Fits
		}
		return !a.Fits && a.Margin < b.Margin
	})
	fc.fits.window = r.Window
	r.fits = &fc.fits
	for _, s := range r.Skipped {
		t := &r.Totals
		t.Skipped++
		if s.Failed {
			t.Failed++
		}
	}
	return r
}

// Each calls fn with every document in the report's order.
func (r *Report) Each(fn func(Doc) error) error {
	for _, d := range r.Documents {
		if err := fn(d); err != nil {
			return err
		}
	}
	if r.fits == nil {
		return nil
	}
	for i := range r.fits.rows {
		if err := fn(r.fits.doc(i)); err != nil {
			return err
		}
	}
	return nil
}

// expand puts the documents kept compact into Documents, for the views
// and orders that need them all at once.
func (r *Report) expand() {
	if r.fits == nil {
		return
	}
	for i := range r.fits.rows {
		r.Documents = append(r.Documents, r.fits.doc(i))
	}
	r.fits = nil
}

// Write renders a fit report in format f; the table and Markdown views
// list the first rows documents (all when rows is 0), and say how many
// more there are.
func Write(w io.Writer, f render.Format, r *Report, rows int) error {
	if f == render.JSON {
		return writeJSON(w, r)
	}
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Fit in a %s-token window (frame %s, %s tokens with overhead)", render.Num(r.Window), r.Frame, render.Num(r.FrameTok)),
		Header: []string{"document", "tokens", "input", "reserve", "margin", "verdict"}, Right: []int{1, 2, 3, 4}}
	if f == render.CSV {
		g.Header = []string{"source", "record", "tokens", "input_tokens", "reserve", "window", "fits", "margin"}
		bw := bufio.NewWriterSize(w, 64<<10)
		rw, err := render.NewRowWriter(bw, g.Header)
		if err != nil {
			return err
		}
		err = r.Each(func(d Doc) error {
			return rw.Write(d.Source, fmt.Sprint(d.Record), fmt.Sprint(d.Tokens), fmt.Sprint(d.InputTokens), fmt.Sprint(d.Reserve),
				fmt.Sprint(d.Window), fmt.Sprint(d.Fits), fmt.Sprint(d.Margin))
		})
		if err == nil {
			err = rw.Flush()
		}
		if err == nil {
			err = bw.Flush()
		}
		return err
	}
	shown, more := 0, 0
	r.Each(func(d Doc) error {
		if rows > 0 && shown == rows {
			more++
			return nil
		}
		shown++
		verdict := "fits"
		if !d.Fits {
			verdict = fmt.Sprintf("OVER by %s", render.Num(-d.Margin))
		}
		g.AddRow(report.Where(d.Source, d.Record), render.Num(d.Tokens), render.Num(d.InputTokens), render.Num(d.Reserve), render.Num(d.Margin), verdict)
		return nil
	})
	if more > 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("%s more document(s) not listed; --rows 0 lists all, and csv and json always do", render.Num(more)))
	}
	grids := []*render.Grid{g, render.TotalsGrid(totals(r))}
	if len(r.Skipped) > 0 {
		grids = append(grids, render.SkipGrids(render.ViewOf(w), r.Skipped)...)
	}
	return render.WriteGrids(w, f, grids...)
}

// totals lists the report's totals, for the totals grid and the page's
// cards alike.
func totals(r *Report) []render.Measure {
	t := r.Totals
	return []render.Measure{
		{Label: "documents", Value: render.Num(t.Documents)},
		{Label: "fit", Value: render.Num(t.Fit)},
		{Label: "overflow", Value: render.Num(t.Overflow), Warn: t.Overflow > 0},
		{Label: "smallest margin", CardLabel: "smallest margin, tokens", Value: render.Num(t.WorstMargin), Warn: t.WorstMargin < 0},
		{Label: "window, tokens", Value: render.Num(r.Window), Only: render.InCards},
		{Label: "not counted", Value: fmt.Sprintf("%s (%s failed)", render.Num(t.Skipped), render.Num(t.Failed)),
			CardLabel: fmt.Sprintf("not counted (%s failed)", render.Num(t.Failed)), CardValue: render.Num(t.Skipped), Warn: t.Failed > 0},
	}
}

// Orders are the orders of --sort for the documents (fit has no bytes).
var Orders = []report.Order{report.ByTokens, report.ByName, report.ByOverflow}

// Sort puts the documents in order o; without one they stay overflowing
// first, worst first.
func (r *Report) Sort(o report.Order) {
	if o != report.InputOrder {
		r.expand()
	}
	report.SortDocs(r.Documents, o, func(d *Doc) report.DocKey {
		return report.DocKey{Source: d.Source, Record: d.Record, Tokens: int64(d.Tokens), Over: int64(-d.Margin)}
	})
}

// writeJSON writes r as render.WriteJSON would, a document at a time.
func writeJSON(w io.Writer, r *Report) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	enc := func(v any, prefix string) error {
		var b bytes.Buffer
		e := json.NewEncoder(&b)
		e.SetIndent(prefix, "  ")
		e.SetEscapeHTML(false)
		if err := e.Encode(v); err != nil {
			return err
		}
		bw.Write(bytes.TrimSuffix(b.Bytes(), []byte("\n")))
		return nil
	}
	field := func(name string, v any, last bool) error {
		fmt.Fprintf(bw, "  %q: ", name)
		if err := enc(v, "  "); err != nil {
			return err
		}
		if !last {
			bw.WriteString(",")
		}
		bw.WriteString("\n")
		return nil
	}
	bw.WriteString("{\n")
	head := []struct {
		name string
		v    any
		omit bool
	}{{"vocabulary", r.Vocabulary, false}, {"target", r.Target, r.Target == ""}, {"window", r.Window, false}, {"frame", r.Frame, false},
		{"frame_tokens", r.FrameTok, false}, {"overhead", r.Overhead, false}}
	for _, h := range head {
		if h.omit {
			continue
		}
		if err := field(h.name, h.v, false); err != nil {
			return err
		}
	}
	bw.WriteString(`  "documents": [`)
	n := 0
	err := r.Each(func(d Doc) error {
		if n > 0 {
			bw.WriteString(",")
		}
		n++
		bw.WriteString("\n    ")
		return enc(d, "    ")
	})
	if err != nil {
		return err
	}
	if n > 0 {
		bw.WriteString("\n  ")
	}
	bw.WriteString("],\n")
	if err := field("skipped", r.Skipped, false); err != nil {
		return err
	}
	if err := field("totals", r.Totals, true); err != nil {
		return err
	}
	bw.WriteString("}\n")
	return bw.Flush()
}
