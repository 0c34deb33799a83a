package bpe

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
)

// WritePair writes v, a vocabulary with no bundle pipeline, as a
// vocabulary pair that LoadFiles reads back unchanged: a JSON object of every token, spelled in the byte alphabet, to
// its id, in id order, one a line, to vocabJSON; and the merges in rank
// order, one "left right" a line after a version line, to merges. It
// fails for a vocabulary learned on a bundle, and returns the first write
// error.
func WritePair(vocabJSON, merges io.Writer, v *Vocab) error {
	if v.pipe != nil {
		return fmt.Errorf("vocabulary %s: a pair cannot hold a bundle's normalizer, pre-tokenizer and added tokens; write a bundle", v.name)
	}
	if err := writeVocabJSON(vocabJSON, v, "", false); err != nil {
		return fmt.Errorf("writing the vocabulary: %w", err)
	}
	w := bufio.NewWriter(merges)
	w.WriteString("#version: 0.2\n")
	for _, m := range v.Merges() {
		w.WriteString(SpellBytes(v.tokens[m[0]]))
		w.WriteByte(' ')
		w.WriteString(SpellBytes(v.tokens[m[1]]))
		w.WriteByte('\n')
	}
	if err := w.Flush(); err != nil {
		return fmt.Errorf("writing the merges: %w", err)
	}
	return nil
}

// writeVocabJSON writes the token -> id object, each line indented by
// indent. In a bundle (bundle true) a special token is written as its text,
// as the bundle's added tokens name it; in a pair every token is spelled,
// so that its bytes come back exactly.
func writeVocabJSON(out io.Writer, v *Vocab, indent string, bundle bool) error {
	special := make(map[int]bool, len(v.specials))
	for _, s := range v.specials {
		special[s.ID] = true
	}
	added := map[uint32]bool{}
	if v.pipe != nil {
		for _, id := range v.pipe.addedIDs {
			added[id] = true
		}
	}
	w := bufio.NewWriter(out)
	w.WriteString("{")
	first := true
	for id, t := range v.tokens {
		if added[uint32(id)] || (v.pipe != nil && t == nil) {
			continue // the bundle's added tokens go in its own list
		}
		if !first {
			w.WriteByte(',')
		}
		first = false
		w.WriteString("\n" + indent + "  ")
		key := SpellBytes(t)
		if bundle && special[id] {
			key = string(t)
		}
		w.Write(jsonString(key))
		fmt.Fprintf(w, ": %d", id)
	}
	w.WriteString("\n" + indent + "}")
	return w.Flush()
}

// jsonString returns s as a JSON string, with <, > and & as themselves.
func jsonString(s string) []byte {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	enc.Encode(s) // a string always encodes
	return bytes.TrimSuffix(b.Bytes(), []byte{'\n'})
}

// WriteBundle writes v as a single-file tokenizer bundle (tokenizer.json):
// a byte-level BPE model with v's tokens and ranked merges, its special
// tokens as added tokens, and the pre-tokenizer that splits by pattern (""
// is the GPT-2 rule, which the bundle states as its byte-level
// pre-tokenizer's own pattern). A vocabulary learned on a bundle is
// written with that bundle's normalizer, pre-tokenizer, added tokens,
// post-processor and decoder as they were, and pattern is not used. It
// returns the first write error.
func WriteBundle(out io.Writer, v *Vocab, pattern string) error {
	type added struct {
		ID         int    `json:"id"`
		Content    string `json:"content"`
		SingleWord bool   `json:"single_word"`
		LStrip     bool   `json:"lstrip"`
		RStrip     bool   `json:"rstrip"`
		Normalized bool   `json:"normalized"`
		Special    bool   `json:"special"`
	}
	adds := []added{}
	for _, s := range v.specials {
		adds = append(adds, added{ID: s.ID, Content: s.Text, Special: true})
	}
	byteLevel := func(useRegex bool) map[string]any {
		return map[string]any{"type": "ByteLevel", "add_prefix_space": false, "trim_offsets": false, "use_regex": useRegex}
	}
	var pre any = byteLevel(true)
	if pattern != "" {
		pre = map[string]any{"type": "Sequence", "pretokenizers": []any{
			map[string]any{"type": "Split", "pattern": map[string]string{"Regex": pattern}, "behavior": "Isolated", "invert": false},
			byteLevel(false),
		}}
	}
	head := func(w *bufio.Writer, key string, val any) {
		b, _ := json.Marshal(val) // plain maps and structs always marshal
		fmt.Fprintf(w, "  %q: %s,\n", key, b)
	}
	comps := map[string]any{"added_tokens": adds, "normalizer": nil, "pre_tokenizer": pre, "post_processor": nil, "decoder": byteLevel(true)}
	if v.pipe != nil {
		for k := range comps {
			if raw, ok := v.pipe.written[k]; ok {
				comps[k] = json.RawMessage(raw)
			}
		}
	}
	w := bufio.NewWriter(out)
	w.WriteString("{\n")
	head(w, "version", "1.0")
	head(w, "truncation", nil)
	head(w, "padding", nil)
	for _, k := range []string{"added_tokens", "normalizer", "pre_tokenizer", "post_processor", "decoder"} {
		head(w, k, comps[k])
	}
	w.WriteString(`  "model": {
    "type": "BPE",
    "dropout": null,
    "unk_token": null,
    "continuing_subword_prefix": null,
    "end_of_word_suffix": null,
    "fuse_unk": false,
    "byte_fallback": false,
    "ignore_merges": false,
    "vocab": `)
	if err := w.Flush(); err != nil {
		return fmt.Errorf("writing the bundle: %w", err)
	}
	if err := writeVocabJSON(out, v, "    ", true); err != nil {
		return fmt.Errorf("writing the bundle: %w", err)
	}
	w.WriteString(",\n    \"merges\": [")
	for r, m := range v.Merges() {
		if r > 0 {
			w.WriteByte(',')
		}
		w.WriteString("\n      [")
		w.Write(jsonString(SpellBytes(v.tokens[m[0]])))
		w.WriteString(", ")
		w.Write(jsonString(SpellBytes(v.tokens[m[1]])))
		w.WriteByte(']')
	}
	w.WriteString("\n    ]\n  }\n}\n")
	if err := w.Flush(); err != nil {
		return fmt.Errorf("writing the bundle: %w", err)
	}
	return nil
}

// keepComponents copies the components of a bundle that a writer needs
// again, apart from the file's bytes that they point into.
func keepComponents(comps map[string]json.RawMessage) map[string][]byte {
	out := map[string][]byte{}
	for _, k := range []string{"added_tokens", "normalizer", "pre_tokenizer", "post_processor", "decoder"} {
		if r, ok := comps[k]; ok {
			out[k] = bytes.Clone(r)
		}
	}
	return out
}

// PairWritable reports whether WritePair can write v: whether it has no
// bundle pipeline that a pair cannot hold.
func (v *Vocab) PairWritable() bool { return v.pipe == nil }
