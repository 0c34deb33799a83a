package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
)

func TestQuoteJSON(t *testing.T) {
	out, serr, code := runMorsel(t, "quote", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--target", "harbor-large", "--ration", "--format", "json", "--quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	var q struct {
		Caution string `json:"caution"`
		Targets []struct {
			Name         string `json:"name"`
			InputTokens  int64  `json:"input_tokens"`
			OutputTokens int64  `json:"output_tokens"`
			Requests     int    `json:"requests"`
			Cost         string `json:"cost"`
			Currency     string `json:"currency"`
			Overflow     int    `json:"overflow"`
		} `json:"targets"`
	}
	if err := json.Unmarshal([]byte(out), &q); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(q.Caution, "estimate") || len(q.Targets) != 2 || q.Targets[0].Name != "harbor-small" || q.Targets[1].Name != "harbor-large" {
		t.Fatalf("%+v", q)
	}
	// harbor-small (invented prices in the demo file): 0.40 in and 1.60 out
	// per million, 200 answer tokens a request, so the cost is
	// (0.40 in + 1.60 out) / 1e6 and out = 200 x requests.
	s := q.Targets[0]
	want := decimal.NewFromInt(s.InputTokens).Mul(decimal.RequireFromString("0.40")).
		Add(decimal.NewFromInt(s.OutputTokens).Mul(decimal.RequireFromString("1.60"))).Div(decimal.NewFromInt(1_000_000))
	if got := decimal.RequireFromString(s.Cost); !got.Equal(want) || s.OutputTokens != int64(200*s.Requests) || s.Currency != "EUR" || s.Overflow != 0 {
		t.Fatalf("harbor-small %+v, want cost %s", s, want)
	}
	// --ration makes requests from every chunk: more requests than documents.
	if s.Requests <= q.Targets[1].Requests {
		t.Fatalf("harbor-small (1,024 window) has %d requests, harbor-large (4,096) %d", s.Requests, q.Targets[1].Requests)
	}

	noPrice := filepath.Join(t.TempDir(), "t.toml")
	os.WriteFile(noPrice, []byte("[target.free]\nwindow = 1024\n"), 0o644)
	_, serr, code = runMorsel(t, "quote", demoDir, "--targets", noPrice)
	if code != exitUsage || !strings.Contains(serr, noPrice+":1: target \"free\" has no price_in") {
		t.Fatalf("exit %d: %s", code, serr)
	}
	out, _, code = runMorsel(t, "quote", filepath.Join(demoSettings, "terms.txt"), "--targets", demoTargets)
	if code != exitOK || !strings.Contains(out, "caution:") || !strings.Contains(out, "harbor-medium") {
		t.Fatalf("table view: exit %d\n%s", code, out)
	}
}

// A document that cannot be priced does not make the bill quietly
// smaller: the report counts it and the exit status is 3.
func TestQuoteUnpricedIsCheckFailure(t *testing.T) {
	out, serr, code := run(t, "", "quote", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--window", "1", "--ration", "--format", "json", "--quiet")
	if code != exitCheck {
		t.Fatalf("exit %d, want %d: %s", code, exitCheck, serr)
	}
	var q struct {
		Totals struct{ Documents, Skipped, Unpriced int }
	}
	if err := json.Unmarshal([]byte(out), &q); err != nil {
		t.Fatal(err)
	}
	if q.Totals.Unpriced == 0 || q.Totals.Unpriced != q.Totals.Skipped || q.Totals.Documents != 0 {
		t.Fatalf("totals %+v: want every document unpriced", q.Totals)
	}
	table, _, code := run(t, "", "quote", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--window", "1", "--ration", "--quiet")
	if code != exitCheck || !strings.Contains(table, "could not be priced") {
		t.Fatalf("table: exit %d, no word of the unpriced documents:\n%s", code, table)
	}
	out, serr, code = run(t, "", "quote", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--ration", "--format", "json", "--quiet")
	if code != exitOK || !strings.Contains(out, `"unpriced": 0`) {
		t.Fatalf("a window that holds them: exit %d: %s", code, serr)
	}
}
