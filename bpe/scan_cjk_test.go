package bpe

import (
	"encoding/json"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
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

// The chain's three stages run in one loop (runChain) when a text is
// counted or encoded; the stages one by one, as Split runs them, give
// the same ids.
func FuzzCJKChainOneLoop(f *testing.F) {
	v := sequenceBundle(f, false)
	enc, err := NewEncoder(v, Options{})
	if err != nil {
		f.Fatal(err)
	}
	first, ok := v.pipe.pre[0].(*scanStage)
	if !ok || !first.chain {
		f.Fatal("the chain's first stage is not marked to run in one loop")
	}
	pieces := []string{"a", "Zx", "7", "٣", "²", "Ⅻ", "一二", "中文", "かな", "カナ", "・", "゛", "\u3099", "ー", "〇",
		" ", "\n", "\r\n", "\t", ".", "'s", "!?", "é", "e\u0301", "한", "ж", "\xff", "\xe3\x81", "😀", "_", "$5"}
	r := rand.New(rand.NewPCG(3, 5))
	for range 50 {
		var b strings.Builder
		for range 60 {
			b.WriteString(pieces[r.IntN(len(pieces))])
		}
		f.Add(b.String())
	}
	f.Fuzz(func(t *testing.T, s string) {
		fused := enc.Encode([]byte(s))
		first.chain = false
		staged := enc.Encode([]byte(s))
		first.chain = true
		if !eqInts(fused, staged) {
			t.Fatalf("%q: ids %v in one loop, %v stage by stage", s, fused, staged)
		}
	})
}
