package quote

import (
	"math"
	"strings"
	"testing"

	"github.com/shopspring/decimal"

	"morsel/report/internal/reporttest"
	"morsel/report/ration"
	"morsel/report/request"
)

// TestQuoteWorkedExamples prices documents whose token counts the test
// takes from the encoder, with the arithmetic stated beside each case.
func TestQuoteWorkedExamples(t *testing.T) {
	enc := reporttest.Encoder(t)
	ts, err := request.ParseTargets("m.toml", []byte(reporttest.DemoTargets))
	if err != nil {
		t.Fatal(err)
	}
	small, _ := ts.Lookup("small")
	big, _ := ts.Lookup("big")
	doc := []byte("Replace the swivel on VS-4 before the spring cruise.")
	n := enc.Count(doc)
	ps := []*Pricer{
		{Target: small, Enc: enc, Window: small.Window, Answer: small.Answer},
		{Target: big, Enc: enc, Window: big.Window, Answer: big.Answer, Batch: true},
	}
	d, err := Price(ps, "a.txt", 0, doc)
	if err != nil {
		t.Fatal(err)
	}
	// small: n input tokens at 0.40 per million and 200 answer tokens at
	// 1.60 per million: (0.40 n + 320) / 1e6.
	wantSmall := decimal.NewFromInt(int64(n)).Mul(decimal.RequireFromString("0.40")).Add(decimal.NewFromInt(320)).Div(decimal.NewFromInt(1e6))
	if l := d.Targets[0]; l.InputTokens != n || l.OutputTokens != 200 || l.Requests != 1 || !l.Cost.Equal(wantSmall) {
		t.Fatalf("small: %+v, want cost %s", l, wantSmall)
	}
	// big: answer ceil(0.25 n); cost (2.50 n + 10 ceil(0.25 n)) / 1e6, halved
	// by the 0.5 batch discount.
	ans := (n + 3) / 4
	wantBig := decimal.NewFromInt(int64(n)).Mul(decimal.RequireFromString("2.5")).Add(decimal.NewFromInt(int64(10 * ans))).
		Div(decimal.NewFromInt(1e6)).Mul(decimal.RequireFromString("0.5"))
	if l := d.Targets[1]; l.OutputTokens != ans || !l.Cost.Equal(wantBig) {
		t.Fatalf("big: %+v, want answer %d cost %s", l, ans, wantBig)
	}
	// A fixed figure: 1,000,000 input and 250,000 answer tokens under
	// small cost 0.40 + 0.25 x 1.60 = 0.80 exactly.
	if got := ps[0].Cost(1_000_000, 250_000); got.String() != "0.8" {
		t.Fatalf("cost %s, want 0.8", got)
	}
	// 3 input tokens at 0.40 per million: 0.0000012, no float rounding.
	if got := ps[0].Cost(3, 0); got.String() != "0.0000012" {
		t.Fatalf("cost %s, want 0.0000012", got)
	}
}

// TestQuoteRation checks that with Ration a document over the window is
// cut and each chunk priced as a request with its own answer.
func TestQuoteRation(t *testing.T) {
	enc := reporttest.Encoder(t)
	tg := &request.Target{Name: "tiny", PriceIn: decimal.NewFromInt(1), PriceOut: decimal.NewFromInt(2), Answer: request.Answer{Tokens: 10}}
	doc := []byte(strings.Repeat("The tide came in over the pier. ", 40))
	n := enc.Count(doc)
	p := &Pricer{Target: tg, Enc: enc, Window: 60, Answer: tg.Answer, Ration: true}
	d, err := Price([]*Pricer{p}, "a", 0, doc)
	if err != nil {
		t.Fatal(err)
	}
	l := d.Targets[0]
	r := &ration.Rationer{Enc: enc, Budget: 50}
	chunks, _, _ := r.Cut("a", 0, doc, false)
	if !l.Rationed || l.Requests != len(chunks) || l.Requests < n/50 || l.OutputTokens != 10*len(chunks) {
		t.Fatalf("%+v; %d chunks, document %d tokens", l, len(chunks), n)
	}
	// cost = (input x 1 + output x 2) / 1e6
	want := decimal.NewFromInt(int64(l.InputTokens + 2*l.OutputTokens)).Div(decimal.NewFromInt(1e6))
	if !l.Cost.Equal(want) {
		t.Fatalf("cost %s, want %s", l.Cost, want)
	}
}

// Targets that share a vocabulary but not a frame get each their own
// frame's count, from one encoding of the document.
func TestPriceFramesShareOneEncoding(t *testing.T) {
	enc := reporttest.Encoder(t)
	ts, err := request.ParseTargets("m.toml", []byte(reporttest.DemoTargets))
	if err != nil {
		t.Fatal(err)
	}
	small, _ := ts.Lookup("small")
	var frames []*request.Frame
	for _, f := range []string{"Summarise {{source}}:\n{{document}}\nAnswer:", "{{document}}", "Q:{{document}}!"} {
		fr, err := request.ParseFrame("f.txt", []byte(f))
		if err != nil {
			t.Fatal(err)
		}
		frames = append(frames, fr)
	}
	frames = append(frames, nil)
	var ps []*Pricer
	for k, fr := range frames {
		ps = append(ps, &Pricer{Target: small, Enc: enc, Frame: fr, Window: 1 << 20, Answer: small.Answer, Overhead: k})
	}
	for _, doc := range []string{"Replace the swivel on VS-4 before the spring cruise.", "one", "", "  lead and trail  ", "\xff\xfe word \xc3"} {
		d, err := Price(ps, "a.txt", 0, []byte(doc))
		if err != nil {
			t.Fatal(err)
		}
		for k, p := range ps {
			if want, _ := request.InputTokens(enc, p.Frame, "a.txt", []byte(doc), p.Overhead); d.Targets[k].InputTokens != want {
				t.Fatalf("%q, frame %d: %d input tokens, want %d", doc, k, d.Targets[k].InputTokens, want)
			}
		}
	}
}

// A total that would pass int64 is an error, not a wrapped negative count.
func TestCollectorTotalsChecked(t *testing.T) {
	p := &Pricer{Target: &request.Target{Name: "a"}}
	qc := NewCollector([]*Pricer{p})
	big := Doc{Source: "big.txt", Targets: []Line{{InputTokens: math.MaxInt64 / 2, Requests: 1}}}
	qc.Add(big)
	qc.Add(big)
	if qc.Err() != nil {
		t.Fatalf("two halves: %v", qc.Err())
	}
	qc.Add(Doc{Source: "one-more.txt", Record: 3, Targets: []Line{{InputTokens: 2, Requests: 1}}})
	if err := qc.Err(); err == nil || !strings.Contains(err.Error(), "one-more.txt:3") {
		t.Fatalf("past int64: %v", err)
	}
	if q := qc.Finish(nil); q.Targets[0].InputTokens < 0 {
		t.Fatalf("total wrapped to %d", q.Targets[0].InputTokens)
	}
}
