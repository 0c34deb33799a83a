// Command bigbundle writes a large byte-level tokenizer bundle for the
// load benchmark (scripts/bench-bundle.sh): the qwen3 bundle's components
// and vocabulary, grown to -tokens tokens by joining pairs of existing
// tokens, and its merges grown to -merges by adding, for existing tokens,
// the other ways to split them in two. The result is valid (every merge
// names tokens of the vocabulary and makes one) but its later merges are
// not learned from any text. It is never committed. With -digit-groups
// -tokens 0 -merges 0 it writes qwen3 with the digit-groups split pattern
// instead (the survey benchmark's third bundle).
//
//	go run ./scripts/bigbundle -from testdata/vocab/qwen3/tokenizer.json.gz -o /tmp/big/tokenizer.json
package main

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"unicode/utf8"
)

func main() {
	from := flag.String("from", "testdata/vocab/qwen3/tokenizer.json.gz", "bundle to grow (.json or .json.gz)")
	out := flag.String("o", "/tmp/morsel-big-bundle/tokenizer.json", "where to write the bundle")
	tokens := flag.Int("tokens", 250000, "tokens in the vocabulary")
	merges := flag.Int("merges", 500000, "merges")
	groups := flag.Bool("digit-groups", false, "replace the split pattern by the digit-groups one (numbers cut into groups of up to three digits)")
	flag.Parse()
	if err := run(*from, *out, *tokens, *merges, *groups); err != nil {
		fmt.Fprintln(os.Stderr, "bigbundle:", err)
		os.Exit(1)
	}
}

func run(from, out string, wantTokens, wantMerges int, groups bool) error {
	data, err := os.ReadFile(from)
	if err != nil {
		return err
	}
	if filepath.Ext(from) == ".gz" {
		zr, err := gzip.NewReader(bytes.NewReader(data))
		if err != nil {
			return err
		}
		if data, err = io.ReadAll(zr); err != nil {
			return err
		}
	}
	var b map[string]json.RawMessage
	if err := json.Unmarshal(data, &b); err != nil {
		return err
	}
	var model struct {
		Type         string         `json:"type"`
		Vocab        map[string]int `json:"vocab"`
		Merges       [][2]string    `json:"merges"`
		ByteFallback bool           `json:"byte_fallback"`
	}
	if err := json.Unmarshal(b["model"], &model); err != nil {
		return fmt.Errorf("model: %w (a bundle with [a, b] merges is needed)", err)
	}
	var added []struct {
		ID int `json:"id"`
	}
	json.Unmarshal(b["added_tokens"], &added)
	next := len(model.Vocab)
	for _, a := range added {
		next = max(next, a.ID+1)
	}
	// New ids go past the added tokens; the added tokens keep theirs.
	byID := make([]string, 0, wantTokens)
	for t, id := range model.Vocab {
		for len(byID) <= id {
			byID = append(byID, "")
		}
		byID[id] = t
	}
	seen := make(map[[2]string]bool, wantMerges)
	for _, m := range model.Merges {
		seen[m] = true
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for len(model.Vocab) < wantTokens && len(model.Merges) < wantMerges {
		a, c := byID[rng.IntN(len(byID))], byID[rng.IntN(len(byID))]
		if a == "" || c == "" || utf8.RuneCountInString(a)+utf8.RuneCountInString(c) > 32 {
			continue
		}
		t := a + c
		if _, ok := model.Vocab[t]; ok || seen[[2]string{a, c}] {
			continue
		}
		model.Vocab[t] = next
		byID = append(byID, t)
		next++
		model.Merges = append(model.Merges, [2]string{a, c})
		seen[[2]string{a, c}] = true
	}
	for t := range model.Vocab {
		if len(model.Merges) >= wantMerges {
			break
		}
		for k := 1; k < len(t); k++ {
			if !utf8.RuneStart(t[k]) {
				continue
			}
			p := [2]string{t[:k], t[k:]}
			if _, ok := model.Vocab[p[0]]; !ok || seen[p] {
				continue
			}
			if _, ok := model.Vocab[p[1]]; !ok {
				continue
			}
			seen[p] = true
			model.Merges = append(model.Merges, p)
			if len(model.Merges) >= wantMerges {
				break
			}
		}
	}
	if groups {
		pre := bytes.Replace(b["pre_tokenizer"], []byte(`\\p{N}|`), []byte(`\\p{N}{1,3}|`), 1)
		if bytes.Equal(pre, b["pre_tokenizer"]) {
			return fmt.Errorf("%s: no single-digit split pattern to replace", from)
		}
		b["pre_tokenizer"] = pre
	}
	var m map[string]json.RawMessage
	json.Unmarshal(b["model"], &m)
	m["vocab"], _ = json.Marshal(model.Vocab)
	m["merges"], _ = json.Marshal(model.Merges)
	b["model"], _ = json.Marshal(m)
	// Indented as the tokenizers library writes its files.
	enc, err := json.MarshalIndent(b, "", "  ")
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		return err
	}
	if err := os.WriteFile(out, enc, 0o644); err != nil {
		return err
	}
	fmt.Printf("bigbundle: %s: %d tokens, %d merges, %d bytes\n", out, len(model.Vocab), len(model.Merges), len(enc))
	return nil
}
