package request

import (
	"errors"
	"strings"
	"testing"

	"github.com/shopspring/decimal"

	"morsel/report/internal/reporttest"
)

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

func TestParseTargets(t *testing.T) {
	ts, err := ParseTargets("conf/morsel.toml", []byte(reporttest.DemoTargets))
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
		{"huge ratio", "[target.a]\nanswer_ratio = 1e20\n", `m.toml:2: target "a": answer_ratio: 1e20: want a ratio from 0 to 1000`},
		{"huge price", "[target.a]\nprice_in = 1e400\n", `m.toml:2: target "a": price_in: 1e400: want a price from 0 to 1000000 per million tokens, with at most 12 decimal places`},
		{"price decimals", "[target.a]\nprice_out = 0.0000000000001\n", `m.toml:2: target "a": price_out: 0.0000000000001: want a price from 0 to 1000000`},
		{"window past 32 bits", "[target.a]\nwindow = 4294967296\n", `m.toml:2: target "a": window: 4294967296: want a whole number that fits 32 bits`},
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
	f.Add(reporttest.DemoTargets)
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

// Prices at the bounds, and written with spare zeros, are taken.
func TestTargetsBoundsAccepted(t *testing.T) {
	ts, err := ParseTargets("m.toml", []byte("[target.a]\nprice_in = 1000000\nprice_out = 0.400000000000000000\nanswer_ratio = 1000\n"))
	if err != nil {
		t.Fatal(err)
	}
	a := ts.List[0]
	if a.PriceOut.String() != "0.4" || a.Answer.For(MaxTokens) != 1000*MaxTokens {
		t.Fatalf("price_out %s, answer for the largest request %d", a.PriceOut, a.Answer.For(MaxTokens))
	}
}
