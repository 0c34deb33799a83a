package main

import (
	"encoding/json"
	"testing"
)

// Two --vocab give the side-by-side report, whose first vocabulary's
// figures are the plain survey's.
func TestSurveySideBySide(t *testing.T) {
	one, _, _ := run(t, "", "survey", "../../testdata/demo/docs", "--format", "json")
	var plain struct{ Totals struct{ Tokens int64 } }
	json.Unmarshal([]byte(one), &plain)
	dir := t.TempDir()
	if _, stderr, code := run(t, "", "learn", "../../testdata/demo/docs", "--extend", "../../bpe/gpt2", "--add", "60", "--out", dir, "--write", "bundle"); code != 0 {
		t.Fatal(stderr)
	}
	for _, cmd := range []string{"survey", "fit", "fragments"} {
		out, stderr, code := run(t, "", cmd, "../../testdata/demo/docs", "--vocab", "../../bpe/gpt2", "--vocab", dir, "--format", "json")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", cmd, code, stderr)
		}
		var r struct {
			Vocabularies []string
			Totals       []struct{ Tokens int64 }
			Documents    []struct{ Tokens []int }
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatal(err)
		}
		if len(r.Vocabularies) != 2 || len(r.Totals) != 2 || r.Totals[0].Tokens != plain.Totals.Tokens || r.Totals[1].Tokens == r.Totals[0].Tokens {
			t.Fatalf("%s: %+v", cmd, r.Totals)
		}
	}
	if _, _, code := run(t, "", "survey", "../../testdata/demo/docs", "--vocab", "a", "--vocab", "b", "--merges", "m"); code != 2 {
		t.Fatalf("--merges with two --vocab: exit %d, want 2", code)
	}
}
