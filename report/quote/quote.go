package quote

import (
	"fmt"
	"io"
	"math"

	"github.com/shopspring/decimal"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/ration"
	"morsel/report/render"
	"morsel/report/request"
)

// Caution is the line every quote carries.
const Caution = "The prices are your own figures from the targets file, not fetched from anywhere; the cost is an estimate from exact token counts and the answer sizes you expect."

// million is the unit prices are given per.
var million = decimal.NewFromInt(1_000_000)

// Pricer prices requests for one target.
type Pricer struct {
	Target   *request.Target
	Enc      *bpe.Encoder
	Frame    *request.Frame
	Window   int
	Answer   request.Answer
	Overhead int
	Ration   bool // ration documents whose request overflows the window
	Batch    bool // apply the target's batch discount
	Generic  bool // as Rationer.Generic
}

// Cost returns the cost of in input and out output tokens at the target's
// prices per million tokens, less the batch discount when Batch is set.
func (p *Pricer) Cost(in, out int64) decimal.Decimal {
	t := p.Target
	c := t.PriceIn.Mul(decimal.NewFromInt(in)).Add(t.PriceOut.Mul(decimal.NewFromInt(out))).Div(million)
	if p.Batch && !t.BatchDiscount.IsZero() {
		c = c.Mul(decimal.NewFromInt(1).Sub(t.BatchDiscount))
	}
	return c
}

// Line is one document's bill under one target.
type Line struct {
	Target       string          `json:"target"`
	InputTokens  int             `json:"input_tokens"`
	OutputTokens int             `json:"output_tokens"`
	Requests     int             `json:"requests"`
	Cost         decimal.Decimal `json:"cost"`
	Overflow     bool            `json:"overflow"` // a request is over the window (not rationed)
	Rationed     bool            `json:"rationed"`
}

// Doc is one document's bill under every target.
type Doc struct {
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string `json:"source_bytes,omitempty"`
	Record      int    `json:"record"`
	Targets     []Line `json:"targets"`
}

// Total is the whole bill under one target.
type Total struct {
	Name          string          `json:"name"`
	InputTokens   int64           `json:"input_tokens"`
	OutputTokens  int64           `json:"output_tokens"`
	Requests      int             `json:"requests"`
	Cost          decimal.Decimal `json:"cost"`
	Currency      string          `json:"currency"`
	Window        int             `json:"window"`
	Answer        string          `json:"answer"`
	PriceIn       decimal.Decimal `json:"price_in"`
	PriceOut      decimal.Decimal `json:"price_out"`
	BatchDiscount decimal.Decimal `json:"batch_discount"`
	Batch         bool            `json:"batch"` // the discount was applied
	Overflow      int             `json:"overflow"`
	Rationed      int             `json:"rationed"`
	Failed        int             `json:"failed"` // documents that could not be rationed
}

// Report is the report of morsel quote.
type Report struct {
	Caution   string           `json:"caution"`
	Targets   []Total          `json:"targets"`
	Documents []Doc            `json:"documents"`
	Skipped   []report.Skipped `json:"skipped"`
	Totals    struct {
		Documents int `json:"documents"`
		Skipped   int `json:"skipped"`
		Failed    int `json:"failed"`
		// Unpriced counts the documents left out of the bill because
		// they could not be priced (no-room: --ration cannot cut them
		// within a target's window); the bill is short of them.
		Unpriced int `json:"unpriced"`
	} `json:"totals"`
}

// Price prices text, the document source (record), under every pricer.
// The text is encoded once per distinct vocabulary (bpe.Interior), however
// many targets share it: each target's frame costs only the text's edges,
// and targets with the same frame share the count. A document that cannot
// be rationed under one target fails the whole document, naming the
// target.
func Price(ps []*Pricer, source string, record int, text []byte) (Doc, error) {
	d := Doc{Source: source, SourceBytes: report.SourceBytes(source), Record: record, Targets: make([]Line, len(ps))}
	name := report.Where(source, record)
	interiors := map[*bpe.Encoder]bpe.Interior{}
	type framed struct {
		enc           *bpe.Encoder
		before, after string
	}
	counted := map[framed]int{}
	for i, p := range ps {
		l := Line{Target: p.Target.Name}
		before, after := p.Frame.Parts(name)
		key := framed{p.Enc, string(before), string(after)}
		n, ok := counted[key]
		if !ok {
			in, ok := interiors[p.Enc]
			if !ok {
				in = p.Enc.Interior(text)
				interiors[p.Enc] = in
			}
			var err error
			if n, err = in.Count(before, after); err != nil {
				return d, fmt.Errorf("target %s: %w", p.Target.Name, err)
			}
			counted[key] = n
		}
		in := n + p.Overhead
		out := p.Answer.For(in)
		if in+out <= p.Window || !p.Ration {
			l.InputTokens, l.OutputTokens, l.Requests = in, out, 1
			l.Overflow = in+out > p.Window
		} else {
			r := &ration.Rationer{Enc: p.Enc, Frame: p.Frame, Budget: p.Answer.Budget(p.Window), Overhead: p.Overhead, Generic: p.Generic}
			chunks, _, err := r.Cut(source, record, text, false)
			if err != nil {
				return d, fmt.Errorf("target %s: %w", p.Target.Name, err)
			}
			l.Rationed = true
			for _, c := range chunks {
				l.InputTokens += c.Tokens
				l.OutputTokens += p.Answer.For(c.Tokens)
				l.Requests++
			}
		}
		l.Cost = p.Cost(int64(l.InputTokens), int64(l.OutputTokens))
		d.Targets[i] = l
	}
	return d, nil
}

// Collector folds walk results into a Report.
type Collector struct {
	ps  []*Pricer
	q   Report
	err error // a total past int64, once met
}

// NewCollector starts a quote under the pricers.
func NewCollector(ps []*Pricer) *Collector {
	qc := &Collector{ps: ps, q: Report{Caution: Caution, Documents: []Doc{}, Skipped: []report.Skipped{}}}
	for _, p := range ps {
		t := p.Target
		qc.q.Targets = append(qc.q.Targets, Total{Name: t.Name, Currency: t.Currency, Window: p.Window, Answer: p.Answer.String(),
			PriceIn: t.PriceIn, PriceOut: t.PriceOut, BatchDiscount: t.BatchDiscount, Batch: p.Batch && !t.BatchDiscount.IsZero()})
	}
	return qc
}

// Add takes one document's bill.
func (qc *Collector) Add(d Doc) {
	qc.q.Documents = append(qc.q.Documents, d)
	for i, l := range d.Targets {
		t := &qc.q.Targets[i]
		if !addTokens(&t.InputTokens, l.InputTokens) || !addTokens(&t.OutputTokens, l.OutputTokens) {
			if qc.err == nil {
				qc.err = fmt.Errorf("target %s: the total tokens pass %d at %s, past what can be summed", t.Name, int64(math.MaxInt64), report.Where(d.Source, d.Record))
			}
		}
		t.Requests += l.Requests
		if l.Overflow {
			t.Overflow++
		}
		if l.Rationed {
			t.Rationed++
		}
	}
}

// addTokens adds n to *total unless the sum would pass math.MaxInt64, and
// reports whether it did.
func addTokens(total *int64, n int) bool {
	if n > 0 && *total > math.MaxInt64-int64(n) {
		return false
	}
	*total += int64(n)
	return true
}

// Err returns the error that made a total unsound (a sum past int64), or
// nil: a bill with such a total must not be trusted.
func (qc *Collector) Err() error { return qc.err }

// Finish prices the totals and returns the quote. A target's total cost is
// priced on its summed tokens, which equals the sum of the per-document
// costs since both are exact.
func (qc *Collector) Finish(skipped []report.Skipped) *Report {
	q := &qc.q
	q.Skipped = report.OrNone(skipped)
	for i := range q.Targets {
		q.Targets[i].Cost = qc.ps[i].Cost(q.Targets[i].InputTokens, q.Targets[i].OutputTokens)
	}
	q.Totals.Documents = len(q.Documents)
	for _, s := range q.Skipped {
		q.Totals.Skipped++
		if s.Failed {
			q.Totals.Failed++
		}
		if s.Reason == ration.ReasonNoRoom {
			q.Totals.Unpriced++
		}
	}
	return q
}

// Unpriced says, when documents could not be priced, how many and that
// the bill leaves them out; else it returns "".
func (q *Report) Unpriced() string {
	if q.Totals.Unpriced == 0 {
		return ""
	}
	return fmt.Sprintf("%s document(s) could not be priced (no-room: a window cannot hold the frame, the answer and one piece of them), so the bill leaves them out and is short of their cost", render.Num(q.Totals.Unpriced))
}

// money formats a cost for the table view: rounded to six decimals.
func money(d decimal.Decimal, currency string) string {
	s := d.StringFixed(6)
	if currency != "" {
		s += " " + currency
	}
	return s
}

// Write renders a quote in format f. The JSON costs are exact decimal
// strings; the table rounds them to six decimals.
func Write(w io.Writer, f render.Format, q *Report) error {
	if f == render.JSON {
		return render.WriteJSON(w, q)
	}
	if f == render.CSV {
		g := &render.Grid{Header: []string{"source", "record", "target", "input_tokens", "output_tokens", "requests", "cost", "currency", "overflow", "rationed"}}
		for _, d := range q.Documents {
			for i, l := range d.Targets {
				g.AddRow(d.Source, fmt.Sprint(d.Record), l.Target, fmt.Sprint(l.InputTokens), fmt.Sprint(l.OutputTokens),
					fmt.Sprint(l.Requests), l.Cost.String(), q.Targets[i].Currency, fmt.Sprint(l.Overflow), fmt.Sprint(l.Rationed))
			}
		}
		return g.WriteCSV(w)
	}
	sum := &render.Grid{Title: "Estimate by target", Header: []string{"measure"}}
	for i, t := range q.Targets {
		sum.Header = append(sum.Header, t.Name)
		sum.Right = append(sum.Right, i+1)
	}
	row := func(label string, cell func(t Total) string) {
		cells := []string{label}
		for _, t := range q.Targets {
			cells = append(cells, cell(t))
		}
		sum.AddRow(cells...)
	}
	row("input tokens", func(t Total) string { return render.Num(t.InputTokens) })
	row("answer tokens", func(t Total) string { return render.Num(t.OutputTokens) })
	row("answer per request", func(t Total) string { return t.Answer })
	row("requests", func(t Total) string { return render.Num(t.Requests) })
	row("window", func(t Total) string { return render.Num(t.Window) })
	row("price in / out per 1M", func(t Total) string { return t.PriceIn.String() + " / " + t.PriceOut.String() })
	row("batch discount", func(t Total) string {
		switch {
		case t.BatchDiscount.IsZero():
			return "-"
		case t.Batch:
			return t.BatchDiscount.String() + " (applied)"
		}
		return t.BatchDiscount.String() + " (not applied)"
	})
	row("rationed documents", func(t Total) string { return render.Num(t.Rationed) })
	row("over the window", func(t Total) string { return render.Num(t.Overflow) })
	row("cost", func(t Total) string { return money(t.Cost, t.Currency) })
	if n := q.Unpriced(); n != "" {
		sum.Notes = append(sum.Notes, "not priced: "+n)
	}
	sum.Notes = append(sum.Notes, "caution: "+q.Caution)
	for _, t := range q.Targets {
		if t.Overflow > 0 {
			sum.Notes = append(sum.Notes, fmt.Sprintf("note: under %s, %s document(s) overflow the window and are priced as one request each, which would be refused; --ration splits them", t.Name, render.Num(t.Overflow)))
		}
	}

	docs := &render.Grid{Sources: true, Title: fmt.Sprintf("Per document (%s)", render.Num(len(q.Documents))), Header: []string{"document"}}
	for _, t := range q.Targets {
		n := len(docs.Header)
		docs.Header = append(docs.Header, t.Name+" in", "out", "req", "cost")
		docs.Right = append(docs.Right, n, n+1, n+2, n+3)
	}
	for _, d := range q.Documents {
		cells := []string{report.Where(d.Source, d.Record)}
		for i, l := range d.Targets {
			req := render.Num(l.Requests)
			if l.Overflow {
				req += " (over)"
			}
			cells = append(cells, render.Num(l.InputTokens), render.Num(l.OutputTokens), req, money(l.Cost, q.Targets[i].Currency))
		}
		docs.AddRow(cells...)
	}
	if len(q.Targets) > 1 {
		docs.Narrow = quoteLongGrid(q)
	}
	grids := []*render.Grid{docs, sum}
	if len(q.Skipped) > 0 {
		grids = append(grids, render.SkipGrids(render.ViewOf(w), q.Skipped)...)
	}
	return render.WriteGrids(w, f, grids...)
}

// quoteLongGrid is the per-document table with one row per document and
// target, for a terminal too narrow for a column group per target.
func quoteLongGrid(q *Report) *render.Grid {
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Per document (%s), one row a target", render.Num(len(q.Documents))),
		Header: []string{"document", "target", "input", "answer", "requests", "cost"}, Right: []int{2, 3, 4, 5}}
	for _, d := range q.Documents {
		for i, l := range d.Targets {
			doc := ""
			if i == 0 {
				doc = report.Where(d.Source, d.Record)
			}
			req := render.Num(l.Requests)
			if l.Overflow {
				req += " (over)"
			}
			g.AddRow(doc, q.Targets[i].Name, render.Num(l.InputTokens), render.Num(l.OutputTokens), req, money(l.Cost, q.Targets[i].Currency))
		}
	}
	return g
}

// Orders are the orders of --sort for the documents: tokens are the first
// target's input tokens, overflow the number of targets whose window the
// document's request overflows.
var Orders = []report.Order{report.ByTokens, report.ByName, report.ByOverflow}

// Sort puts the documents in order o.
func (q *Report) Sort(o report.Order) {
	report.SortDocs(q.Documents, o, func(d *Doc) report.DocKey {
		k := report.DocKey{Source: d.Source, Record: d.Record}
		for i, l := range d.Targets {
			if i == 0 {
				k.Tokens = int64(l.InputTokens)
			}
			if l.Overflow {
				k.Over++
			}
		}
		return k
	})
}
