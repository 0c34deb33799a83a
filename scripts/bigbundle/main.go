// Command bigbundle writes a large byte-level tokenizer bundle for the
// load benchmark (scripts/bench-bundle.sh): the qwen3 bundle's components
// and vocabulary, grown to -tokens tokens by joining runs of existing
// tokens, and its merges grown to -merges by adding, for the new tokens and
// then the old, the other ways to split them in two. The result is valid (every merge
// names tokens of the vocabulary and makes one) but its later merges are
// not learned from any text. It is never committed. With -digit-groups
// -tokens 0 -merges 0 it writes qwen3 with the digit-groups split pattern
// instead (the survey benchmark's third bundle), and with -cjk-sequence
// qwen3 with a Sequence of three Splits that cuts numbers into groups of
// three and Han and kana runs apart before a rule over letters and marks
// (bpe.NumberGroupsPattern, KanaHanPattern, LettersMarksPattern).
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

	"morsel/bpe"
)

func main() {
	from := flag.String("from", "testdata/vocab/qwen3/tokenizer.json.gz", "bundle to grow (.json or .json.gz)")
	out := flag.String("o", "/tmp/morsel-big-bundle/tokenizer.json", "where to write the bundle")
	tokens := flag.Int("tokens", 250000, "tokens in the vocabulary")
	merges := flag.Int("merges", 500000, "merges")
	groups := flag.Bool("digit-groups", false, "replace the split pattern by the digit-groups one (numbers cut into groups of up to three digits)")
	sequence := flag.Bool("cjk-sequence", false, "replace the pre-tokenizer by a Sequence of three Splits that cut numbers, then Han and kana runs, then the rest")
	flag.Parse()
	if err := run(*from, *out, *tokens, *merges, *groups, *sequence); err != nil {
		fmt.Fprintln(os.Stderr, "bigbundle:", err)
		os.Exit(1)
	}
}

func run(from, out string, wantTokens, wantMerges int, groups, sequence bool) error {
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
	// splits returns the ways to cut t in two tokens of the vocabulary
	// that are not merges yet.
	splits := func(t string, out [][2]string) [][2]string {
		for k := 1; k < len(t); k++ {
			if !utf8.RuneStart(t[k]) {
				continue
			}
			p := [2]string{t[:k], t[k:]}
			if _, ok := model.Vocab[p[0]]; !ok || seen[p] {
				continue
			}
			if _, ok := model.Vocab[p[1]]; ok {
				out = append(out, p)
			}
		}
		return out
	}
	// A new token is x+y+z for two merges (x, y) and (y, z), so that it
	// splits at least two ways (xy|z and x|yz), the best of several such
	// tries by the ways it splits: the merges then outgrow the tokens
	// about two to one, as in the large vocabularies that ship.
	byLeft := map[string][]int{}
	for i, m := range model.Merges {
		byLeft[m[0]] = append(byLeft[m[0]], i)
	}
	var best, cand [][2]string
	for len(model.Vocab) < wantTokens && len(model.Merges) < wantMerges {
		best = best[:0]
		for try := 0; try < 16; try++ {
			xy := model.Merges[rng.IntN(len(model.Merges))]
			after := byLeft[xy[1]]
			if len(after) == 0 {
				continue
			}
			t := xy[0] + xy[1] + model.Merges[after[rng.IntN(len(after))]][1]
			if utf8.RuneCountInString(t) > 32 {
				continue
			}
			if _, ok := model.Vocab[t]; ok {
				continue
			}
			if cand = splits(t, cand[:0]); len(cand) > len(best) {
				best = append(best[:0], cand...)
			}
		}
		if len(best) == 0 {
			continue
		}
		t := best[0][0] + best[0][1]
		model.Vocab[t] = next
		byID = append(byID, t)
		next++
		// Every token still to come needs one merge of its own.
		room := wantMerges - len(model.Merges) - (wantTokens - len(model.Vocab))
		for _, p := range best[:max(1, min(len(best), room))] {
			model.Merges = append(model.Merges, p)
			seen[p] = true
		}
	}
	for t := range model.Vocab {
		if len(model.Merges) >= wantMerges {
			break
		}
		for _, p := range splits(t, cand[:0]) {
			seen[p] = true
			model.Merges = append(model.Merges, p)
			if len(model.Merges) >= wantMerges {
				break
			}
		}
	}
	if sequence {
		var pres []any
		for _, p := range []string{bpe.NumberGroupsPattern, bpe.KanaHanPattern, bpe.LettersMarksPattern} {
			pres = append(pres, map[string]any{"type": "Split", "pattern": map[string]string{"Regex": p}, "behavior": "Isolated", "invert": false})
		}
		pres = append(pres, map[string]any{"type": "ByteLevel", "add_prefix_space": false, "trim_offsets": true, "use_regex": false})
		b["pre_tokenizer"], _ = json.Marshal(map[string]any{"type": "Sequence", "pretokenizers": pres})
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
