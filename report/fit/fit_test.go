package fit

import (
	"bytes"
	"io"
	"testing"
	"testing/iotest"

	"github.com/shopspring/decimal"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
	"morsel/report/request"
)

func TestFitMargins(t *testing.T) {
	enc := reporttest.Encoder(t)
	doc := []byte("The buoy VS-4 broke from its mooring in the November storm.")
	n := enc.Count(doc)
	for _, tc := range []struct {
		name    string
		window  int
		answer  request.Answer
		over    int
		margin  int
		reserve int
	}{
		{"room", n + 110, request.Answer{Tokens: 100}, 0, 10, 100},
		{"exact", n + 100, request.Answer{Tokens: 100}, 0, 0, 100},
		{"over", n + 99, request.Answer{Tokens: 100}, 0, -1, 100},
		{"overhead", n + 100, request.Answer{Tokens: 90}, 20, -10, 90},
		// ratio 0.5 of n input tokens, rounded up
		{"ratio", 2 * n, request.Answer{Ratio: decimal.RequireFromString("0.5"), ByRatio: true}, 0, 2*n - n - (n+1)/2, (n + 1) / 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f := &Fitter{Enc: enc, Window: tc.window, Answer: tc.answer, Overhead: tc.over}
			d, err := f.FitText("a.txt", 0, doc)
			if err != nil {
				t.Fatal(err)
			}
			if d.Margin != tc.margin || d.Reserve != tc.reserve || d.Fits != (tc.margin >= 0) || d.InputTokens != n+tc.over {
				t.Fatalf("got %+v, want margin %d reserve %d", d, tc.margin, tc.reserve)
			}
		})
	}
}

// A document that comes as a Stream is counted as it is read; its verdict
// must be the one its whole text gets, framed or not.
func TestFitStreamAgreesWithText(t *testing.T) {
	enc := reporttest.Encoder(t)
	text := bytes.Repeat([]byte("The buoy VS-4 broke from its mooring in the November storm.\n"), 60000) // past one read
	frame, err := request.ParseFrame("frame.txt", []byte("Summarize {{source}}:\n{{document}}\nAnswer briefly."))
	if err != nil {
		t.Fatal(err)
	}
	for _, fr := range []*request.Frame{nil, frame} {
		f := &Fitter{Enc: enc, Frame: fr, Window: 1 << 20, Answer: request.Answer{Tokens: 100}, Overhead: 7}
		want, err := f.FitText("big.txt", 0, text)
		if err != nil {
			t.Fatal(err)
		}
		got, err := f.Fit(&corpus.Document{Source: "big.txt", Stream: io.NopCloser(iotest.HalfReader(bytes.NewReader(text)))})
		if err != nil {
			t.Fatal(err)
		}
		if got != want {
			t.Fatalf("frame %s: stream gives %+v, text %+v", fr.Label(), got, want)
		}
	}
}
