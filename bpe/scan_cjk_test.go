package bpe

import (
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// sequenceBundle returns the qwen3 bundle with its pre-tokenizer replaced
// by a Sequence of three Isolated Splits (NumberGroupsPattern,
// KanaHanPattern, LettersMarksPattern) and a ByteLevel without its own
// regex: the chain of bundles that cut CJK runs apart (the patterns as one
// such published bundle has them, from memory). With viaRegexp each
// pattern is wrapped in a group that changes nothing it matches, so that
// no hand scanner knows it and regexp2 runs it.
func sequenceBundle(t testing.TB, viaRegexp bool) *Vocab {
	t.Helper()
	data, _ := readTestBundle(t, testBundles["qwen3"])
	var b map[string]json.RawMessage
	if err := json.Unmarshal(data, &b); err != nil {
		t.Fatal(err)
	}
	var pres []any
	for _, p := range []string{NumberGroupsPattern, KanaHanPattern, LettersMarksPattern} {
		if viaRegexp {
			p = "(?:" + p + ")"
		}
		pres = append(pres, map[string]any{"type": "Split", "pattern": map[string]string{"Regex": p}, "behavior": "Isolated", "invert": false})
	}
	pres = append(pres, map[string]any{"type": "ByteLevel", "add_prefix_space": false, "trim_offsets": true, "use_regex": false})
	b["pre_tokenizer"], _ = json.Marshal(map[string]any{"type": "Sequence", "pretokenizers": pres})
	out, _ := json.Marshal(b)
	v, err := ParseBundle("sequence.json", out, "", nil)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// The three hand scanners in their chain give the ids that regexp2 running
// the same patterns gives, on the scanner cases and the golden corpus.
func TestSequenceScannersMatchRegexp(t *testing.T) {
	hand, slow := sequenceBundle(t, false), sequenceBundle(t, true)
	for i, st := range hand.pipe.pre[:3] {
		if _, ok := st.(*scanStage); !ok {
			t.Fatalf("stage %d is %T, want a hand scanner", i, st)
		}
		if _, ok := slow.pipe.pre[i].(*regexSplit); !ok {
			t.Fatalf("wrapped stage %d is %T, want regexp2", i, slow.pipe.pre[i])
		}
	}
	he, _ := NewEncoder(hand, Options{})
	se, _ := NewEncoder(slow, Options{})
	texts := slices.Clone(scannerCases)
	files, _ := filepath.Glob("../testdata/golden/corpus/*")
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		texts = append(texts, string(data))
	}
	for _, s := range texts {
		got, want := he.Encode([]byte(s)), se.Encode([]byte(s))
		if !slices.Equal(got, want) {
			t.Errorf("%.40q: hand scanners give %d ids, regexp2 %d", s, len(got), len(want))
		}
	}
}
