// Package learn reports what merges learned from a corpus save: every
// document re-encoded under the base vocabulary and the learned one, with
// the documents held out of learning apart from those learned from.
package learn

import (
	"hash/fnv"
	"sort"
	"strconv"

	"github.com/shopspring/decimal"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/render"
)

// HeldOut reports whether the document source (record) is among the share
// of documents kept out of learning. The choice hangs on the document's
// name alone (an FNV-1a hash of it, scaled to [0, 1)), so it is the same in
// every run, whatever the order of the inputs or the number of workers.
func HeldOut(source string, record int, share float64) bool {
	if share <= 0 {
		return false
	}
	h := fnv.New64a()
	h.Write([]byte(source))
	h.Write([]byte{0})
	h.Write([]byte(strconv.Itoa(record)))
	return float64(h.Sum64()>>11)/(1<<53) < share
}

// Doc is one document under both vocabularies.
type Doc struct {
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string  `json:"source_bytes,omitempty"`
	Record      int     `json:"record"`
	HeldOut     bool    `json:"held_out"`
	Base        int     `json:"base_tokens"`
	Learned     int     `json:"learned_tokens"`
	Saved       int     `json:"saved"`
	Share       float64 `json:"saved_percent"`
}

// Measure returns the tokens of text under the base and the learned
// encoder.
func Measure(base, learned *bpe.Encoder, text []byte) (b, l int) {
	return base.Count(text), learned.Count(text)
}

// Totals sums a set of documents.
type Totals struct {
	Documents int     `json:"documents"`
	Base      int64   `json:"base_tokens"`
	Learned   int64   `json:"learned_tokens"`
	Saved     int64   `json:"saved"`
	Share     float64 `json:"saved_percent"`
}

func (t *Totals) add(d Doc) {
	t.Documents++
	t.Base += int64(d.Base)
	t.Learned += int64(d.Learned)
	t.Saved += int64(d.Saved)
	t.Share = percent(t.Saved, t.Base)
}

func percent(a, b int64) float64 {
	if b == 0 {
		return 0
	}
	return float64(int64(1000*float64(a)/float64(b)+0.5)) / 10
}

// Token is one learned token, with the words that hold it once every merge
// is learned.
type Token struct {
	ID     int    `json:"id"`
	Text   string `json:"token"` // the token's text, or its readable form when it is not whole UTF-8
	Left   string `json:"left"`
	Right  string `json:"right"`
	Count  int64  `json:"pair_count"` // occurrences of the pair in the learning words when it was learned
	Occurs int64  `json:"occurrences"`
	Words  []Word `json:"words"`
}

// Word is a learning word and how often it occurs.
type Word struct {
	Word  string `json:"word"`
	Count int64  `json:"count"`
}

// Cost is what the documents' input tokens cost under a target's input
// price with each vocabulary.
type Cost struct {
	Target   string          `json:"target"`
	Currency string          `json:"currency"`
	PriceIn  decimal.Decimal `json:"price_in"` // per million tokens
	Base     decimal.Decimal `json:"base_cost"`
	Learned  decimal.Decimal `json:"learned_cost"`
	Saved    decimal.Decimal `json:"saved"`
	HeldBase decimal.Decimal `json:"held_out_base_cost"`
	HeldNew  decimal.Decimal `json:"held_out_learned_cost"`
	HeldSave decimal.Decimal `json:"held_out_saved"`
}

// Report is the report of morsel learn.
type Report struct {
	Base          bpe.Info         `json:"base"`
	Learned       bpe.Info         `json:"learned"`
	Extended      bool             `json:"extended"` // learned on top of Base; else from bytes, compared with Base
	Asked         int              `json:"merges_asked"`
	Merges        int              `json:"merges_learned"`
	Holdout       float64          `json:"holdout"`
	Words         int64            `json:"learning_words"`
	DistinctWords int              `json:"distinct_learning_words"`
	LearningDocs  Totals           `json:"learning"`
	HeldOutDocs   Totals           `json:"held_out"`
	All           Totals           `json:"totals"`
	Documents     []Doc            `json:"documents"`
	Tokens        []Token          `json:"new_tokens"`
	Cost          *Cost            `json:"cost,omitempty"`
	Files         []string         `json:"files"`
	Skipped       []report.Skipped `json:"skipped"`
}

// Collector folds the documents of the second pass into a Report.
type Collector struct {
	r Report
}

// NewCollector starts the report of a vocabulary learned from words.
func NewCollector(l *bpe.Learned, words *bpe.WordCount, asked int, holdout float64, top int) (*Collector, error) {
	c := &Collector{r: Report{
		Base: l.Base.Info(), Learned: l.Vocab.Info(), Extended: l.Base.Info().Merges > 0, Asked: asked, Merges: len(l.New), Holdout: holdout,
		Words: words.Total(), DistinctWords: words.Len(), Documents: []Doc{}, Tokens: []Token{}, Files: []string{}, Skipped: []report.Skipped{},
	}}
	uses, err := l.Uses(words, top)
	if err != nil {
		return nil, err
	}
	for i, u := range uses {
		m := l.New[i]
		left, _ := l.Vocab.Token(m.Left)
		right, _ := l.Vocab.Token(m.Right)
		t := Token{ID: u.ID, Text: render.PieceText(u.Token), Left: render.PieceText(left), Right: render.PieceText(right), Count: m.Count, Occurs: u.Occurs, Words: []Word{}}
		for _, w := range u.Words {
			t.Words = append(t.Words, Word{w.Word, w.Count})
		}
		c.r.Tokens = append(c.r.Tokens, t)
	}
	return c, nil
}

// Add takes one document's counts.
func (c *Collector) Add(source string, record int, held bool, base, learned int) {
	d := Doc{Source: source, SourceBytes: report.SourceBytes(source), Record: record, HeldOut: held, Base: base, Learned: learned, Saved: base - learned}
	d.Share = percent(int64(d.Saved), int64(base))
	c.r.Documents = append(c.r.Documents, d)
	if held {
		c.r.HeldOutDocs.add(d)
	} else {
		c.r.LearningDocs.add(d)
	}
	c.r.All.add(d)
}

// Skip records an input or record that was not counted.
func (c *Collector) Skip(s report.Skipped) { c.r.Skipped = append(c.r.Skipped, s) }

// Wrote records a file written.
func (c *Collector) Wrote(path string) { c.r.Files = append(c.r.Files, path) }

// Price sets the cost of the documents under a target's input price per
// million tokens.
func (c *Collector) Price(target, currency string, priceIn decimal.Decimal) {
	cost := func(n int64) decimal.Decimal {
		return priceIn.Mul(decimal.NewFromInt(n)).Div(decimal.NewFromInt(1_000_000))
	}
	a, h := c.r.All, c.r.HeldOutDocs
	c.r.Cost = &Cost{Target: target, Currency: currency, PriceIn: priceIn,
		Base: cost(a.Base), Learned: cost(a.Learned), Saved: cost(a.Base).Sub(cost(a.Learned)),
		HeldBase: cost(h.Base), HeldNew: cost(h.Learned), HeldSave: cost(h.Base).Sub(cost(h.Learned))}
}

// Finish returns the report.
func (c *Collector) Finish() *Report { return &c.r }

// MostSaved returns up to n documents of r with the largest share saved,
// ties by tokens saved, then by input order.
func (r *Report) MostSaved(n int) []Doc {
	ds := append([]Doc(nil), r.Documents...)
	sort.SliceStable(ds, func(i, j int) bool {
		if ds[i].Share != ds[j].Share {
			return ds[i].Share > ds[j].Share
		}
		return ds[i].Saved > ds[j].Saved
	})
	if len(ds) > n {
		ds = ds[:n]
	}
	return ds
}
