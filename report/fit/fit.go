package fit

import (
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
	Source      string `json:"source"`
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
	return Doc{Source: source, Record: record, Tokens: tokens, InputTokens: in, Reserve: res,
		Window: f.Window, Fits: margin >= 0, Margin: margin}
}

// Collector folds walk results into a Report.
type Collector struct{ r Report }

// NewCollector starts a fit report.
func NewCollector(f *Fitter, target string) *Collector {
	name := "<empty>"
	frameTok, _ := request.InputTokens(f.Enc, f.Frame, name, nil, f.Overhead) // the frame alone: a pattern timeout there shows on every document
	return &Collector{r: Report{Vocabulary: f.Enc.Vocab().Info(), Target: target, Window: f.Window,
		Frame: f.Frame.Label(), FrameTok: frameTok, Overhead: f.Overhead,
		Documents: []Doc{}, Skipped: []report.Skipped{}}}
}

// Add takes one document's verdict.
func (fc *Collector) Add(d Doc) { fc.r.Documents = append(fc.r.Documents, d) }

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
	t := &r.Totals
	for i, d := range r.Documents {
		t.Documents++
		if d.Fits {
			t.Fit++
		} else {
			t.Overflow++
		}
		if i == 0 || d.Margin < t.WorstMargin {
			t.WorstMargin = d.Margin
		}
	}
	for _, s := range r.Skipped {
		t.Skipped++
		if s.Failed {
			t.Failed++
		}
	}
	return r
}

// Write renders a fit report in format f.
func Write(w io.Writer, f render.Format, r *Report) error {
	if f == render.JSON {
		return render.WriteJSON(w, r)
	}
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Fit in a %s-token window (frame %s, %s tokens with overhead)", render.Num(r.Window), r.Frame, render.Num(r.FrameTok)),
		Header: []string{"document", "tokens", "input", "reserve", "margin", "verdict"}, Right: []int{1, 2, 3, 4}}
	if f == render.CSV {
		g.Header = []string{"source", "record", "tokens", "input_tokens", "reserve", "window", "fits", "margin"}
		for _, d := range r.Documents {
			g.AddRow(d.Source, fmt.Sprint(d.Record), fmt.Sprint(d.Tokens), fmt.Sprint(d.InputTokens), fmt.Sprint(d.Reserve),
				fmt.Sprint(d.Window), fmt.Sprint(d.Fits), fmt.Sprint(d.Margin))
		}
		return g.WriteCSV(w)
	}
	for _, d := range r.Documents {
		verdict := "fits"
		if !d.Fits {
			verdict = fmt.Sprintf("OVER by %s", render.Num(-d.Margin))
		}
		g.AddRow(report.Where(d.Source, d.Record), render.Num(d.Tokens), render.Num(d.InputTokens), render.Num(d.Reserve), render.Num(d.Margin), verdict)
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
	report.SortDocs(r.Documents, o, func(d *Doc) report.DocKey {
		return report.DocKey{Source: d.Source, Record: d.Record, Tokens: int64(d.Tokens), Over: int64(-d.Margin)}
	})
}
