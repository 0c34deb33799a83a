package main

import (
	"encoding/json"
	"path/filepath"
	"testing"

	"morsel/bpe"
)

// morsel learn writes a vocabulary that loads, and its report's figures
// are those of re-encoding with it.
func TestLearnCommand(t *testing.T) {
	out := t.TempDir()
	stdout, stderr, code := run(t, "", "learn", "../../testdata/demo/docs", "--extend", "../../bpe/gpt2", "--add", "120", "--holdout", "0.25",
		"--out", out, "--format", "json", "--targets", "../../testdata/demo/settings/morsel.toml", "--target", "harbor-small")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var r struct {
		Merges int                              `json:"merges_learned"`
		Held   struct{ Documents, Saved int64 } `json:"held_out"`
		Totals struct{ Documents, Saved int64 } `json:"totals"`
		Files  []string                         `json:"files"`
		Cost   *struct{ Saved string }          `json:"cost"`
		Tokens []struct{ ID int }               `json:"new_tokens"`
	}
	if err := json.Unmarshal([]byte(stdout), &r); err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	if r.Merges != 120 || len(r.Tokens) != 120 || r.Held.Documents == 0 || r.Totals.Saved <= 0 || r.Cost == nil || len(r.Files) != 3 {
		t.Fatalf("report %+v", r)
	}
	pair, err := bpe.LoadFiles(filepath.Join(out, "vocab.json"), filepath.Join(out, "merges.txt"))
	if err != nil {
		t.Fatal(err)
	}
	bundle, err := bpe.LoadFiles(filepath.Join(out, "tokenizer.json"), "")
	if err != nil {
		t.Fatal(err)
	}
	if pair.Size() != 50257+120 || bundle.Size() != pair.Size() {
		t.Fatalf("pair %d tokens, bundle %d", pair.Size(), bundle.Size())
	}
	// The written pair counts the demo as the report says.
	sv, _, code := run(t, "", "survey", "../../testdata/demo/docs", "--vocab", filepath.Join(out, "vocab.json"), "--merges", filepath.Join(out, "merges.txt"), "--format", "json")
	base, _, _ := run(t, "", "survey", "../../testdata/demo/docs", "--format", "json")
	var a, b struct{ Totals struct{ Tokens int64 } }
	json.Unmarshal([]byte(sv), &a)
	json.Unmarshal([]byte(base), &b)
	if code != 0 || b.Totals.Tokens-a.Totals.Tokens != r.Totals.Saved {
		t.Fatalf("survey saves %d tokens with the written pair; learn reported %d", b.Totals.Tokens-a.Totals.Tokens, r.Totals.Saved)
	}
}

func TestLearnUsage(t *testing.T) {
	for _, args := range [][]string{
		{"learn", "../../testdata/demo/docs", "--out", t.TempDir()},
		{"learn", "../../testdata/demo/docs", "--add", "5"},
		{"learn", "-", "--add", "5", "--out", t.TempDir()},
		{"learn", "../../testdata/demo/docs", "--add", "5", "--out", t.TempDir(), "--holdout", "1"},
		{"learn", "../../testdata/demo/docs", "--add", "5", "--out", t.TempDir(), "--write", "zip"},
	} {
		if _, stderr, code := run(t, "", args...); code != 2 || stderr == "" {
			t.Errorf("%v: exit %d, %s", args, code, stderr)
		}
	}
}
