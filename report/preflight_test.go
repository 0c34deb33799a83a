package report

import (
	"errors"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
)

func TestParseFrame(t *testing.T) {
	for _, tc := range []struct {
		name, in, err string
		before, after string
	}{
		{"plain", "Summarise:\n{{document}}\nEnd.", "", "Summarise:\n", "\nEnd."},
		{"source", "File {{source}}\n{{document}}", "", "File a.txt\n", ""},
		{"none", "no placeholder here", "f.txt: the frame has no {{document}}", "", ""},
		{"twice", "one\n{{document}}\ntwo\n{{document}}", "f.txt:4: a second {{document}} (the first is on line 2)", "", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f, err := ParseFrame("f.txt", []byte(tc.in))
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("error %v, want %q", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			b, a := f.Parts("a.txt")
			if string(b) != tc.before || string(a) != tc.after {
				t.Fatalf("parts %q %q, want %q %q", b, a, tc.before, tc.after)
			}
		})
	}
}

// TestInputTokensOnAssembledText checks that a request is counted on the
// assembled text, not as the sum of its parts: "Note:" + " salt" framed
// together is "Note", ":", " salt", while the frame part "Note: " alone
// ends in a space token of its own.
func TestInputTokensOnAssembledText(t *testing.T) {
	enc := gpt2(t)
	f, _ := ParseFrame("f", []byte("Note: {{document}}"))
	doc := []byte("salt")
	got := InputTokens(enc, f, "x", doc, 5)
	if want := enc.Count([]byte("Note: salt")) + 5; got != want {
		t.Fatalf("input tokens %d, want %d", got, want)
	}
	sum := enc.Count([]byte("Note: ")) + enc.Count(doc) + 5
	if got == sum {
		t.Fatalf("the assembled count equals the parts' sum (%d); the case no longer tells them apart", sum)
	}
}

func TestFitMargins(t *testing.T) {
	enc := gpt2(t)
	doc := []byte("The buoy VS-4 broke from its mooring in the November storm.")
	n := enc.Count(doc)
	for _, tc := range []struct {
		name    string
		window  int
		answer  Answer
		over    int
		margin  int
		reserve int
	}{
		{"room", n + 110, Answer{Tokens: 100}, 0, 10, 100},
		{"exact", n + 100, Answer{Tokens: 100}, 0, 0, 100},
		{"over", n + 99, Answer{Tokens: 100}, 0, -1, 100},
		{"overhead", n + 100, Answer{Tokens: 90}, 20, -10, 90},
		// ratio 0.5 of n input tokens, rounded up
		{"ratio", 2 * n, Answer{Ratio: decimal.RequireFromString("0.5"), ByRatio: true}, 0, 2*n - n - (n+1)/2, (n + 1) / 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f := &Fitter{Enc: enc, Window: tc.window, Answer: tc.answer, Overhead: tc.over}
			d := f.FitText("a.txt", 0, doc)
			if d.Margin != tc.margin || d.Reserve != tc.reserve || d.Fits != (tc.margin >= 0) || d.InputTokens != n+tc.over {
				t.Fatalf("got %+v, want margin %d reserve %d", d, tc.margin, tc.reserve)
			}
		})
	}
}

func TestAnswerBudget(t *testing.T) {
	r := Answer{Ratio: decimal.RequireFromString("0.25"), ByRatio: true}
	// 4096 / 1.25 = 3276.8: n = 3276 gives 3276 + ceil(819) = 4095 <= 4096,
	// and n = 3277 gives 3277 + ceil(819.25) = 4097 > 4096.
	if got := r.Budget(4096); got != 3276 {
		t.Fatalf("budget %d, want 3276", got)
	}
	if got := (Answer{Tokens: 200}).Budget(1024); got != 824 {
		t.Fatalf("budget %d, want 824", got)
	}
}

const demoTargets = `# invented example targets
[target.small]
window = 1024
price_in = 0.40
price_out = 1.60
currency = "EUR"
answer_tokens = 200

[target.big]
window = 4_096
price_in = 2.50
price_out = 10.00
currency = "EUR"
answer_ratio = 0.25
batch_discount = 0.5
frame = "frame.txt"
`

func TestParseTargets(t *testing.T) {
	ts, err := ParseTargets("conf/morsel.toml", []byte(demoTargets))
	if err != nil {
		t.Fatal(err)
	}
	big, err := ts.Lookup("big")
	if err != nil {
		t.Fatal(err)
	}
	if big.Window != 4096 || big.Line != 9 || big.Frame != "conf/frame.txt" || !big.Answer.ByRatio ||
		big.PriceIn.String() != "2.5" || big.BatchDiscount.String() != "0.5" {
		t.Fatalf("big = %+v", big)
	}
	if _, err := ts.Lookup("medium"); err == nil || !strings.Contains(err.Error(), "small, big") {
		t.Fatalf("lookup of a missing target: %v", err)
	}
	// The prices are taken from the literal text: 0.1 + 0.2 is 0.3 exactly.
	ts, err = ParseTargets("m.toml", []byte("[target.a]\nprice_in = 0.1\nprice_out = 0.2\n"))
	if err != nil {
		t.Fatal(err)
	}
	a := ts.List[0]
	if !a.PriceIn.Add(a.PriceOut).Equal(decimal.RequireFromString("0.3")) {
		t.Fatalf("0.1 + 0.2 = %s", a.PriceIn.Add(a.PriceOut))
	}
}

func TestTargetsErrors(t *testing.T) {
	for _, tc := range []struct{ name, in, want string }{
		{"unknown field", "[target.a]\nwindow = 10\ncolour = \"red\"\n", `m.toml:3: target "a": unknown field "colour"`},
		{"bad type", "[target.a]\n\nwindow = \"big\"\n", `m.toml:3: target "a": window: want a whole number, got a string`},
		{"bad price", "[target.a]\nprice_in = \"cheap\"\n", `m.toml:2: target "a": price_in: "cheap": want a decimal number`},
		{"negative", "[target.a]\nprice_out = -1.0\n", `m.toml:2: target "a": price_out: -1: want 0 or more`},
		{"zero window", "[target.a]\nwindow = 0\n", `m.toml:2: target "a": window: 0: want a positive`},
		{"discount", "[target.a]\nbatch_discount = 1.5\n", `m.toml:2: target "a": batch_discount: 1.5: want a share below 1`},
		{"both answers", "\n[target.a]\nanswer_tokens = 3\nanswer_ratio = 0.2\n", `m.toml:2: target "a": give answer_tokens or answer_ratio, not both`},
		{"twice", "[target.a]\nwindow = 1\nwindow = 2\n", `m.toml:3: target "a": window given twice`},
		{"dup target", "[target.a]\n[target.a]\n", `m.toml:2: target "a" is defined twice (first on line 1)`},
		{"other table", "[models.a]\n", `m.toml:1: table [models.a]: want [target.NAME]`},
		{"outside", "window = 3\n", `m.toml:1: window: a field outside any [target.NAME] table`},
		{"syntax", "[target.a]\nwindow = = 3\n", `m.toml:2: `},
		{"merges alone", "[target.a]\nmerges = \"m.txt\"\n", `m.toml:1: target "a": merges needs vocab`},
		{"empty", "# nothing\n", `m.toml:1: no [target.NAME] table`},
		{"inf", "[target.a]\nprice_in = inf\n", `m.toml:2: target "a": price_in: "inf"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ParseTargets("m.toml", []byte(tc.in))
			var te *TargetsError
			if err == nil || !errors.As(err, &te) || !strings.HasPrefix(err.Error(), tc.want) {
				t.Fatalf("error %v, want it to start with %q", err, tc.want)
			}
		})
	}
}

func FuzzParseTargets(f *testing.F) {
	f.Add(demoTargets)
	f.Add("[target.a]\nwindow = 0x10\nprice_in = 1e-3\n")
	f.Add("[target.\"a b\"]\nvocab = 'v'\nmerges = '''m'''\n")
	f.Fuzz(func(t *testing.T, s string) {
		ts, err := ParseTargets("f.toml", []byte(s))
		if err != nil {
			if !strings.HasPrefix(err.Error(), "f.toml:") {
				t.Fatalf("error without file and line: %v", err)
			}
			return
		}
		for _, tg := range ts.List {
			if tg.Window < 0 || tg.PriceIn.IsNegative() || tg.PriceOut.IsNegative() {
				t.Fatalf("accepted a bad value: %+v", tg)
			}
		}
	})
}

func FuzzParseFrame(f *testing.F) {
	f.Add("a {{document}} b {{source}}")
	f.Add("{{document}}{{document}}")
	f.Add("{{source}}{{document}}{{source}}")
	f.Fuzz(func(t *testing.T, s string) {
		fr, err := ParseFrame("f", []byte(s))
		if strings.Count(s, DocumentMark) != 1 {
			if err == nil {
				t.Fatalf("accepted %d placeholders", strings.Count(s, DocumentMark))
			}
			return
		}
		if err != nil {
			t.Fatal(err)
		}
		halves := strings.SplitN(s, DocumentMark, 2)
		want := strings.ReplaceAll(halves[0], SourceMark, "SRC") + "DOC" + strings.ReplaceAll(halves[1], SourceMark, "SRC")
		if got := string(fr.Assemble("SRC", []byte("DOC"))); got != want {
			t.Fatalf("assembled %q, want %q", got, want)
		}
	})
}

// TestQuoteWorkedExamples prices documents whose token counts the test
// takes from the encoder, with the arithmetic stated beside each case.
func TestQuoteWorkedExamples(t *testing.T) {
	enc := gpt2(t)
	ts, err := ParseTargets("m.toml", []byte(demoTargets))
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
	d, err := QuoteText(ps, "a.txt", 0, doc)
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
	enc := gpt2(t)
	tg := &Target{Name: "tiny", PriceIn: decimal.NewFromInt(1), PriceOut: decimal.NewFromInt(2), Answer: Answer{Tokens: 10}}
	doc := []byte(strings.Repeat("The tide came in over the pier. ", 40))
	n := enc.Count(doc)
	p := &Pricer{Target: tg, Enc: enc, Window: 60, Answer: tg.Answer, Ration: true}
	d, err := QuoteText([]*Pricer{p}, "a", 0, doc)
	if err != nil {
		t.Fatal(err)
	}
	l := d.Targets[0]
	r := &Rationer{Enc: enc, Budget: 50}
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
