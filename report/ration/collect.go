package ration

import (
	"errors"
	"fmt"
	"io"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report"
	"morsel/report/render"
)

// Doc is one document's chunk plan.
type Doc struct {
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string  `json:"source_bytes,omitempty"`
	Record      int     `json:"record"`
	Bytes       int     `json:"bytes"`
	Tokens      int     `json:"tokens"` // the document's own tokens
	Chunks      int     `json:"chunks"`
	Largest     int     `json:"largest"`  // tokens of its largest chunk's request
	Smallest    int     `json:"smallest"` // and of its smallest
	Plan        []Chunk `json:"-"`
	// Tally is what the report takes of the chunks of a document whose
	// plan is not kept (one read as a stream); nil when Plan is.
	Tally *Tally `json:"-"`
}

// Tally is what a report takes of a document's chunks: the requests'
// tokens summed, the kinds of cut, and how full each chunk is.
type Tally struct {
	Tokens int64 `json:"tokens"`
	// Cuts counts the chunks by the kind of cut, in the order of CutKinds.
	Cuts [6]int `json:"cuts"`
	// Fill counts the chunks but the last by percent of the budget
	// (0 to 100); Last is the last one's percent.
	Fill   [101]int `json:"fill"`
	Last   int      `json:"last"`
	Chunks int      `json:"chunks"`
}

// CutKinds are the kinds of cut, in the order of the report and of
// Tally.Cuts.
var CutKinds = [6]string{CutEnd, CutParagraph, CutLine, CutSentence, CutPreToken, CutInside}

// add takes one more chunk, of pct percent of the budget.
func (t *Tally) add(c Chunk, pct int) {
	if t.Chunks > 0 {
		t.Fill[t.Last]++
	}
	t.Chunks++
	t.Last = min(max(pct, 0), 100)
	t.Tokens += int64(c.Tokens)
	for k, name := range CutKinds {
		if c.Cut == name {
			t.Cuts[k]++
		}
	}
}

// fillPct returns a request's tokens as a whole percent of the budget.
func fillPct(tokens, budget int) int { return tokens * 100 / budget }

// FillBin counts the chunks whose request fills From% <= fill < To% of the
// budget (the last bin takes 100%).
type FillBin struct {
	From   int `json:"from"`
	To     int `json:"to"`
	Chunks int `json:"chunks"`
}

// Totals sums a ration report.
type Totals struct {
	Documents int   `json:"documents"`
	Split     int   `json:"split"` // documents cut into more than one chunk
	Chunks    int   `json:"chunks"`
	Tokens    int64 `json:"tokens"` // the chunks' request tokens, summed
	Skipped   int   `json:"skipped"`
	Failed    int   `json:"failed"`
	NoRoom    int   `json:"no_room"` // documents the budget could not hold a piece of
}

// Report is the report of morsel ration.
type Report struct {
	Vocabulary bpe.Info         `json:"vocabulary"`
	Target     string           `json:"target,omitempty"`
	Budget     int              `json:"budget"`
	Overlap    int              `json:"overlap"`
	Overhead   int              `json:"overhead"`
	Frame      string           `json:"frame"`
	Documents  []Doc            `json:"documents"`
	Skipped    []report.Skipped `json:"skipped"`
	Totals     Totals           `json:"totals"`
	Fill       []FillBin        `json:"fill"`
	FillSpread report.Spread    `json:"fill_spread"` // percent of the budget, over all chunks but each document's last
	Cuts       map[string]int   `json:"cuts"`        // chunks by the kind of cut that ends them
}

// fillEdges are the bin edges of the fill distribution, in percent.
var fillEdges = []int{0, 25, 50, 75, 90, 100}

// Collector folds walk results into a Report.
type Collector struct {
	r Report
	// fills counts the chunks but each document's last by percent of the
	// budget, for the fill spread.
	fills [101]int
}

// NewCollector starts a ration report for r.
func NewCollector(r *Rationer, target string) *Collector {
	rc := &Collector{r: Report{Vocabulary: r.Enc.Vocab().Info(), Target: target, Budget: r.Budget, Overlap: r.Overlap,
		Overhead: r.Overhead, Frame: r.Frame.Label(), Documents: []Doc{}, Skipped: []report.Skipped{}, Cuts: map[string]int{}}}
	for i := 0; i+1 < len(fillEdges); i++ {
		rc.r.Fill = append(rc.r.Fill, FillBin{From: fillEdges[i], To: fillEdges[i+1]})
	}
	return rc
}

// CutDocument cuts one document. A document held whole keeps its chunks
// in Plan, with their text when keepText. A document that comes as a
// Stream is read in a window (CutReader): its chunks go to sink, when it
// is not nil, as they are decided, with their text when keepText, and
// only their Tally is kept.
func (r *Rationer) CutDocument(d *corpus.Document, keepText bool, sink func(Chunk) error) (Doc, error) {
	rd := Doc{Source: d.Source, SourceBytes: report.SourceBytes(d.Source), Record: d.Record}
	note := func(c Chunk) {
		if rd.Chunks == 0 || c.Tokens > rd.Largest {
			rd.Largest = c.Tokens
		}
		if rd.Chunks == 0 || c.Tokens < rd.Smallest {
			rd.Smallest = c.Tokens
		}
		rd.Chunks++
	}
	if d.Stream == nil {
		chunks, tokens, err := r.Cut(d.Source, d.Record, d.Text, keepText)
		for _, c := range chunks {
			note(c)
		}
		rd.Bytes, rd.Tokens, rd.Plan = len(d.Text), tokens, chunks
		return rd, err
	}
	defer d.Stream.Close()
	rd.Tally = &Tally{}
	tokens, size, err := r.CutReader(d.Source, d.Record, d.Stream, keepText && sink != nil, func(c Chunk) error {
		note(c)
		rd.Tally.add(c, fillPct(c.Tokens, r.Budget))
		if sink != nil {
			return sink(c)
		}
		return nil
	})
	rd.Bytes, rd.Tokens = int(size), int(tokens)
	return rd, err
}

// FailedDoc returns the report entry for a document that work on it failed
// with err: a document the budget cannot hold a piece of is left out with
// the reason "no-room" (it was read; the budget is what failed).
func FailedDoc(d *corpus.Document, err error) report.Skipped {
	s := report.FailedDoc(d, err)
	if errors.Is(err, ErrNoRoom) {
		s.Reason = ReasonNoRoom
		s.Failed = false
	}
	return s
}

// ReasonNoRoom is the reason given for a document the budget cannot hold a
// piece of.
const ReasonNoRoom = "no-room"

// Add takes one document's plan. It fails, wrapping
// report.ErrTotalOverflow, when the request tokens summed would overflow,
// and then leaves the document out.
func (rc *Collector) Add(d Doc) error {
	t := &rc.r.Totals
	where := report.Where(d.Source, d.Record)
	tokens := t.Tokens
	var err error
	if d.Tally != nil {
		tokens, err = report.Sum(tokens, d.Tally.Tokens, where+": request tokens")
	}
	for _, c := range d.Plan {
		if err == nil {
			tokens, err = report.Sum(tokens, int64(c.Tokens), where+": request tokens")
		}
	}
	if err != nil {
		return err
	}
	chunks, err := report.Sum(int64(t.Chunks), int64(d.Chunks), where+": chunks")
	if err != nil {
		return err
	}
	t.Tokens, t.Chunks = tokens, int(chunks)
	t.Documents++
	if d.Chunks > 1 {
		t.Split++
	}
	if d.Tally != nil {
		rc.addTally(d.Tally)
	}
	for i, c := range d.Plan {
		rc.r.Cuts[c.Cut]++
		pct := fillPct(c.Tokens, rc.r.Budget)
		rc.r.Fill[rc.bin(pct)].Chunks++
		if i < len(d.Plan)-1 {
			rc.fills[min(max(pct, 0), 100)]++
		}
	}
	d.Plan, d.Tally = nil, nil
	rc.r.Documents = append(rc.r.Documents, d)
	return nil
}

// addTally takes the chunks of a document whose plan was not kept.
func (rc *Collector) addTally(tl *Tally) {
	if tl.Chunks == 0 {
		return
	}
	for k, n := range tl.Cuts {
		if n > 0 {
			rc.r.Cuts[CutKinds[k]] += n
		}
	}
	for pct, n := range tl.Fill {
		rc.r.Fill[rc.bin(pct)].Chunks += n
		rc.fills[pct] += n
	}
	rc.r.Fill[rc.bin(tl.Last)].Chunks++
}

// bin returns the fill bin of a chunk that fills pct percent of the budget.
func (rc *Collector) bin(pct int) int {
	k := 0
	for k+1 < len(rc.r.Fill) && pct >= rc.r.Fill[k].To {
		k++
	}
	return k
}

// Finish sums the report and returns it.
func (rc *Collector) Finish(skipped []report.Skipped) *Report {
	rc.r.Skipped = report.OrNone(skipped)
	for _, s := range rc.r.Skipped {
		rc.r.Totals.Skipped++
		if s.Failed {
			rc.r.Totals.Failed++
		}
		if s.Reason == ReasonNoRoom {
			rc.r.Totals.NoRoom++
		}
	}
	rc.r.FillSpread = spreadOfCounts(rc.fills[:])
	return &rc.r
}

// spreadOfCounts is report.SpreadOf of the values that counts counts (the
// value v, counts[v] times).
func spreadOfCounts(counts []int) report.Spread {
	n := 0
	for _, k := range counts {
		n += k
	}
	if n == 0 {
		return report.Spread{}
	}
	// at returns the k-th smallest value, from 1.
	at := func(k int) int {
		for v, c := range counts {
			if k <= c {
				return v
			}
			k -= c
		}
		return len(counts) - 1
	}
	rank := func(p float64) int {
		return at(min(max(int(p/100*float64(n)+0.999999999), 1), n))
	}
	return report.Spread{Min: at(1), Median: rank(50), P90: rank(90), P99: rank(99), Max: at(n)}
}

// Write renders a ration report in format f.
func Write(w io.Writer, f render.Format, r *Report) error {
	if f == render.JSON {
		return render.WriteJSON(w, r)
	}
	g := &render.Grid{Sources: true, Title: fmt.Sprintf("Chunk plan: budget %s tokens a request (frame %s, overlap %s)", render.Num(r.Budget), r.Frame, render.Num(r.Overlap)),
		Header: []string{"document", "bytes", "tokens", "chunks", "largest", "smallest"}, Right: []int{1, 2, 3, 4, 5}}
	if f == render.CSV {
		g.Header = []string{"source", "record", "bytes", "tokens", "chunks", "largest", "smallest"}
		for _, d := range r.Documents {
			g.AddRow(d.Source, fmt.Sprint(d.Record), fmt.Sprint(d.Bytes), fmt.Sprint(d.Tokens), fmt.Sprint(d.Chunks), fmt.Sprint(d.Largest), fmt.Sprint(d.Smallest))
		}
		return g.WriteCSV(w)
	}
	for _, d := range r.Documents {
		g.AddRow(report.Where(d.Source, d.Record), render.Num(d.Bytes), render.Num(d.Tokens), render.Num(d.Chunks), render.Num(d.Largest), render.Num(d.Smallest))
	}
	t := r.Totals
	sum := &render.Grid{Title: "Totals", Header: []string{"measure", "value"}, Right: []int{1}}
	sum.AddRow("documents", render.Num(t.Documents))
	sum.AddRow("cut into several chunks", render.Num(t.Split))
	sum.AddRow("chunks (requests)", render.Num(t.Chunks))
	sum.AddRow("request tokens", render.Num(t.Tokens))
	sum.AddRow("not cut", fmt.Sprintf("%s (%s failed, %s with no room)", render.Num(t.Skipped), render.Num(t.Failed), render.Num(t.NoRoom)))
	fs := r.FillSpread
	fill := &render.Grid{Title: fmt.Sprintf("How full the chunks are (share of the budget); all but each document's last: min %d%%, median %d%%, max %d%%", fs.Min, fs.Median, fs.Max),
		Header: []string{"fill", "chunks"}, Right: []int{1}}
	for i, b := range r.Fill {
		label := fmt.Sprintf("%d%% - %d%%", b.From, b.To)
		if i == len(r.Fill)-1 {
			label += " (incl.)"
		}
		fill.AddRow(label, render.Num(b.Chunks))
	}
	cuts := &render.Grid{Title: "Where chunks end", Header: []string{"cut", "chunks"}, Right: []int{1}}
	for _, k := range CutKinds {
		if n := r.Cuts[k]; n > 0 {
			cuts.AddRow(k, render.Num(n))
		}
	}
	grids := []*render.Grid{g, sum, fill, cuts}
	if len(r.Skipped) > 0 {
		grids = append(grids, render.SkipGrids(render.ViewOf(w), r.Skipped)...)
	}
	return render.WriteGrids(w, f, grids...)
}

// Orders are the orders of --sort for the documents; overflow puts the
// documents cut into the most chunks first.
var Orders = []report.Order{report.ByTokens, report.ByBytes, report.ByName, report.ByOverflow}

// Sort puts the documents in order o.
func (r *Report) Sort(o report.Order) {
	report.SortDocs(r.Documents, o, func(d *Doc) report.DocKey {
		return report.DocKey{Source: d.Source, Record: d.Record, Tokens: int64(d.Tokens), Bytes: int64(d.Bytes), Over: int64(d.Chunks)}
	})
}
