package report

import (
	"fmt"
	"io"
	"sort"

	"morsel/bpe"
	"morsel/corpus"
)

// FitDoc is one document's verdict in morsel fit.
type FitDoc struct {
	Source      string `json:"source"`
	Record      int    `json:"record"`
	Tokens      int    `json:"tokens"`       // the document's own tokens
	InputTokens int    `json:"input_tokens"` // the framed request's tokens, overhead included
	Reserve     int    `json:"reserve"`      // tokens kept for the answer
	Window      int    `json:"window"`
	Fits        bool   `json:"fits"`
	Margin      int    `json:"margin"` // window - input - reserve; negative on overflow
}

// FitTotals sums a fit report.
type FitTotals struct {
	Documents int `json:"documents"`
	Fit       int `json:"fit"`
	Overflow  int `json:"overflow"`
	Skipped   int `json:"skipped"`
	Failed    int `json:"failed"`
	// WorstMargin is the smallest margin met (0 with no documents).
	WorstMargin int `json:"worst_margin"`
}

// FitReport is the report of morsel fit.
type FitReport struct {
	Vocabulary bpe.Info  `json:"vocabulary"`
	Target     string    `json:"target,omitempty"`
	Window     int       `json:"window"`
	Frame      string    `json:"frame"`
	FrameTok   int       `json:"frame_tokens"` // the frame around an empty document, overhead included
	Overhead   int       `json:"overhead"`
	Documents  []FitDoc  `json:"documents"` // overflowing documents first, worst first; then the rest in input order
	Skipped    []Skipped `json:"skipped"`
	Totals     FitTotals `json:"totals"`
}

// Fitter measures documents against a window.
type Fitter struct {
	Enc      *bpe.Encoder
	Frame    *Frame
	Window   int
	Answer   Answer // the tokens reserved for the answer
	Overhead int
}

// Fit returns the verdict for one document, reading its text.
func (f *Fitter) Fit(d *corpus.Document) (FitDoc, error) {
	text, err := Text(d)
	if err != nil {
		return FitDoc{}, err
	}
	return f.FitText(d.Source, d.Record, text), nil
}

// FitText returns the verdict for text, the document source (record).
func (f *Fitter) FitText(source string, record int, text []byte) FitDoc {
	in := InputTokens(f.Enc, f.Frame, Where(source, record), text, f.Overhead)
	res := f.Answer.For(in)
	margin := f.Window - in - res
	return FitDoc{Source: source, Record: record, Tokens: f.Enc.Count(text), InputTokens: in, Reserve: res,
		Window: f.Window, Fits: margin >= 0, Margin: margin}
}

// FitCollector folds walk results into a FitReport.
type FitCollector struct{ r FitReport }

// NewFitCollector starts a fit report.
func NewFitCollector(f *Fitter, target string) *FitCollector {
	name := "<empty>"
	return &FitCollector{r: FitReport{Vocabulary: f.Enc.Vocab().Info(), Target: target, Window: f.Window,
		Frame: f.Frame.Label(), FrameTok: InputTokens(f.Enc, f.Frame, name, nil, f.Overhead), Overhead: f.Overhead,
		Documents: []FitDoc{}, Skipped: []Skipped{}}}
}

// Add takes one walk item with its verdict, or the error it gave.
func (fc *FitCollector) Add(it corpus.Item, d FitDoc, err error) {
	switch {
	case it.Skip != nil:
		fc.r.Skipped = append(fc.r.Skipped, SkipOf(it.Skip))
	case err != nil:
		fc.r.Skipped = append(fc.r.Skipped, FailedDoc(it.Doc, err))
	default:
		fc.r.Documents = append(fc.r.Documents, d)
	}
}

// Finish orders the documents and sums the totals.
func (fc *FitCollector) Finish() *FitReport {
	r := &fc.r
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

// WriteFit renders a fit report in format f.
func WriteFit(w io.Writer, f Format, r *FitReport) error {
	if f == JSON {
		return WriteJSON(w, r)
	}
	g := &Grid{Title: fmt.Sprintf("Fit in a %s-token window (frame %s, %s tokens with overhead)", Num(r.Window), r.Frame, Num(r.FrameTok)),
		Header: []string{"document", "tokens", "input", "reserve", "margin", "verdict"}, Right: []int{1, 2, 3, 4}}
	if f == CSV {
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
			verdict = fmt.Sprintf("OVER by %s", Num(-d.Margin))
		}
		g.AddRow(Where(d.Source, d.Record), Num(d.Tokens), Num(d.InputTokens), Num(d.Reserve), Num(d.Margin), verdict)
	}
	t := r.Totals
	sum := &Grid{Title: "Totals", Header: []string{"measure", "value"}, Right: []int{1}}
	sum.AddRow("documents", Num(t.Documents))
	sum.AddRow("fit", Num(t.Fit))
	sum.AddRow("overflow", Num(t.Overflow))
	sum.AddRow("smallest margin", Num(t.WorstMargin))
	sum.AddRow("not counted", fmt.Sprintf("%s (%s failed)", Num(t.Skipped), Num(t.Failed)))
	grids := []*Grid{g, sum}
	if len(r.Skipped) > 0 {
		grids = append(grids, SkipGrid(r.Skipped))
	}
	return WriteGrids(w, f, grids...)
}
