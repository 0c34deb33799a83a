package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func vocabJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	out, errs, code := run(t, "", append([]string{"vocab", "--format", "json"}, args...)...)
	if code != 0 {
		t.Fatalf("vocab %v: exit %d: %s", args, code, errs)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"family", "tokens", "merges", "specials", "added", "window", "byte_fallback", "fingerprint"} {
		if _, ok := m[k]; !ok {
			t.Fatalf("vocab %v: no %q in the JSON", args, k)
		}
	}
	return m
}

// The fingerprint is the same however a vocabulary is named, and differs
// between vocabularies; the JSON has the contract's fields.
func TestVocabFingerprint(t *testing.T) {
	t.Setenv("MORSEL_CACHE_DIR", t.TempDir())
	embedded := vocabJSON(t)
	folder := vocabJSON(t, "--vocab", "../../bpe/gpt2")
	file := vocabJSON(t, "--vocab", "../../bpe/gpt2/vocab.json", "--merges", "../../bpe/gpt2/merges.txt")
	if embedded["fingerprint"] != folder["fingerprint"] || folder["fingerprint"] != file["fingerprint"] {
		t.Fatalf("fingerprints differ: %v %v %v", embedded["fingerprint"], folder["fingerprint"], file["fingerprint"])
	}
	if embedded["family"] != "byte-level" || embedded["tokens"] != 50257.0 || embedded["window"] != 1024.0 {
		t.Fatalf("GPT-2: %v", embedded)
	}
	data, err := os.ReadFile("../../testdata/bundles/words.json")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	p := filepath.Join(dir, "tokenizer.json")
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	b1, b2 := vocabJSON(t, "--vocab", p), vocabJSON(t, "--vocab", dir)
	if b1["fingerprint"] != b2["fingerprint"] || b1["fingerprint"] == embedded["fingerprint"] {
		t.Fatalf("bundle fingerprints %v %v, GPT-2 %v", b1["fingerprint"], b2["fingerprint"], embedded["fingerprint"])
	}
	if b1["window"] != nil || b1["family"] != "character-level" {
		t.Fatalf("words bundle: window %v, family %v", b1["window"], b1["family"])
	}
	if !strings.HasPrefix(b1["fingerprint"].(string), "sha256:") {
		t.Fatalf("fingerprint %v", b1["fingerprint"])
	}
	out, _, code := run(t, "", "vocab", "--vocab", dir)
	if code != 0 || !strings.Contains(out, "fingerprint") || !strings.Contains(out, "not known (set --window)") {
		t.Fatalf("table: exit %d\n%s", code, out)
	}
	if _, _, code := run(t, "", "vocab", "--vocab", p, "--merges", p); code != 1 {
		t.Fatalf("a bundle with --merges: exit %d, want 1", code)
	}
}

// A template's tokens count in every request of fit, and the run says so.
func TestTemplateTokensInRequests(t *testing.T) {
	t.Setenv("MORSEL_CACHE_DIR", "off")
	data, err := os.ReadFile("../../testdata/bundles/words.json")
	if err != nil {
		t.Fatal(err)
	}
	var b map[string]any
	if err := json.Unmarshal(data, &b); err != nil {
		t.Fatal(err)
	}
	plain := filepath.Join(t.TempDir(), "tokenizer.json")
	withT := filepath.Join(t.TempDir(), "tokenizer.json")
	if err := os.WriteFile(plain, data, 0o644); err != nil {
		t.Fatal(err)
	}
	b["post_processor"] = map[string]any{"type": "TemplateProcessing",
		"single":         []any{map[string]any{"SpecialToken": map[string]any{"id": "<unk>", "type_id": 0}}, map[string]any{"Sequence": map[string]any{"id": "A", "type_id": 0}}},
		"special_tokens": map[string]any{"<unk>": map[string]any{"id": "<unk>", "ids": []int{0}, "tokens": []string{"<unk>"}}}}
	tj, _ := json.Marshal(b)
	if err := os.WriteFile(withT, tj, 0o644); err != nil {
		t.Fatal(err)
	}
	input := func(vocab string) (float64, string) {
		out, errs, code := run(t, "", "fit", "--vocab", vocab, "--window", "100000", "--format", "json", "../../testdata/golden/corpus/en-gpl3-start.txt")
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		var r struct {
			Documents []struct {
				InputTokens float64 `json:"input_tokens"`
			} `json:"documents"`
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil || len(r.Documents) != 1 {
			t.Fatalf("%v: %s", err, out)
		}
		return r.Documents[0].InputTokens, errs
	}
	a, _ := input(plain)
	c, note := input(withT)
	if c != a+1 || !strings.Contains(note, "adds 1 token(s) to every request") {
		t.Fatalf("input tokens %v without the template, %v with; stderr %q", a, c, note)
	}
}

// A document on which the split pattern runs past its time limit is
// skipped with the reason, in every command that counts documents; the
// others are counted.
func TestPatternTimeoutSkips(t *testing.T) {
	if testing.Short() {
		t.Skip("waits for the match timeout")
	}
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "bad.txt"), []byte(strings.Repeat("a", 40)+"b"), 0o644)
	os.WriteFile(filepath.Join(dir, "ok.txt"), []byte("hello world"), 0o644)
	for _, c := range []struct {
		args    []string
		counted string // how the JSON shows that ok.txt was counted
	}{
		{[]string{"survey"}, `"documents": 1`},
		{[]string{"fit", "--window", "1000"}, `"documents": 1`},
		{[]string{"ration", "--budget", "1000"}, `"documents": 1`},
		{[]string{"quote", "--targets", demoTargets, "--target", "harbor-small"}, `"documents": 1`},
		// Two vocabularies: the side-by-side report lists its documents,
		// and skips the bad one under both.
		{[]string{"survey", "--vocab", "../../bpe/gpt2", "--vocab", "../../bpe/gpt2"}, "ok.txt"},
	} {
		args := append(c.args, "--split-pattern", "(a+)+$", "--format", "json", "--quiet", dir)
		out, _, code := run(t, "", args...)
		if code != 1 || !strings.Contains(out, "time limit") || !strings.Contains(out, c.counted) || !strings.Contains(out, "bad.txt") {
			t.Errorf("%s: exit %d\n%s", args[0], code, out)
		}
	}
}
