package bpe

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
	"testing/iotest"
)

// The cuts of a long text (streamcut.go, countstream.go) are held to the
// whole text: the stretches between them, encoded apart (all but the
// first as continuations), give the ids of the whole, id for id. The whole
// text's ids are those the golden tests hold to the reference library;
// here nothing but the cutting is under test, so the bundles include ones
// made from the real ones with other components (cutVariants), to reach
// every branch of the rule.

// cutVariant is a bundle made from a real one with its normalizer,
// pre-tokenizer or added tokens replaced (nil keeps the real one's), and
// the cuts its rule should allow: "newline", "space", both or none.
type cutVariant struct {
	name, base string
	norm, pre  any
	added      []map[string]any
	kinds      string
}

var cutVariants = []cutVariant{
	{name: "qwen3", base: "qwen3", kinds: "newline space"},
	{name: "metaspace-32k", base: "metaspace-32k", kinds: "newline space"},
	{name: "words", base: "words", kinds: ""},             // Strip
	{name: "precompiled", base: "precompiled", kinds: ""}, // Precompiled
	{name: "digit-groups", base: "qwen3", pre: seqPre(splitPre(DigitGroupsPattern), byteLevelPre(false, false)), kinds: "newline space"},
	{name: "cjk-sequence", base: "qwen3", pre: seqPre(splitPre(NumberGroupsPattern), splitPre(KanaHanPattern), splitPre(LettersMarksPattern), byteLevelPre(false, false)), kinds: "newline space"},
	{name: "nfkc-lower", base: "qwen3", norm: seqNorm(map[string]any{"type": "NFKC"}, map[string]any{"type": "Lowercase"}), kinds: "newline space"},
	{name: "gpt2-prefix", base: "qwen3", pre: byteLevelPre(true, true), kinds: "space"},
	{name: "punct-digits", base: "qwen3", pre: seqPre(map[string]any{"type": "Punctuation", "behavior": "MergedWithNext"}, map[string]any{"type": "Digits", "individual_digits": true}, byteLevelPre(false, true)), kinds: "newline space"},
	{name: "whitespace", base: "qwen3", pre: seqPre(map[string]any{"type": "Whitespace"}, byteLevelPre(false, false)), kinds: "newline space"},
	{name: "whitespace-split", base: "qwen3", pre: seqPre(map[string]any{"type": "WhitespaceSplit"}, byteLevelPre(false, false)), kinds: "newline space"},
	{name: "literal-split", base: "qwen3", pre: seqPre(map[string]any{"type": "Split", "pattern": map[string]any{"String": "e"}, "behavior": "MergedWithPrevious", "invert": false}, byteLevelPre(false, true)), kinds: "newline space"},
	{name: "literal-space", base: "qwen3", pre: seqPre(map[string]any{"type": "Split", "pattern": map[string]any{"String": " "}, "behavior": "Isolated", "invert": false}, byteLevelPre(false, true)), kinds: ""},
	{name: "regex-first", base: "qwen3", pre: seqPre(splitPre(`\d+`), byteLevelPre(false, true)), kinds: ""},
	{name: "no-regex", base: "qwen3", pre: byteLevelPre(false, false), kinds: ""},
	{name: "lstrip", base: "qwen3", added: []map[string]any{{"content": "zqx", "lstrip": true}}, kinds: "space"},
	{name: "rstrip", base: "qwen3", added: []map[string]any{{"content": "zqx", "rstrip": true, "single_word": true}}, kinds: "newline"},
	{name: "added-newline", base: "qwen3", added: []map[string]any{{"content": "q\nz"}}, kinds: "space"},
	{name: "meta-first", base: "metaspace-32k", norm: "null", pre: metaPre("first", true), kinds: "space"},
	{name: "meta-always", base: "metaspace-32k", norm: "null", pre: metaPre("always", true), kinds: "space"},
	{name: "meta-never-whole", base: "metaspace-32k", norm: "null", pre: metaPre("never", false), kinds: ""},
	{name: "meta-lower", base: "metaspace-32k", norm: seqNorm(map[string]any{"type": "Prepend", "prepend": "\u2581"}, map[string]any{"type": "Lowercase"}, map[string]any{"type": "NFD"}, map[string]any{"type": "Replace", "pattern": map[string]any{"String": " "}, "content": "\u2581"}), kinds: "newline space"},
	{name: "meta-added-marker", base: "metaspace-32k", added: []map[string]any{{"content": "x\u2581y"}}, kinds: "newline"},
	{name: "meta-replace-letter", base: "metaspace-32k", norm: seqNorm(map[string]any{"type": "Replace", "pattern": map[string]any{"String": "e"}, "content": "E"}), kinds: ""},
}

func seqPre(list ...any) any { return map[string]any{"type": "Sequence", "pretokenizers": list} }
func seqNorm(list ...any) any {
	return map[string]any{"type": "Sequence", "normalizers": list}
}
func splitPre(re string) any {
	return map[string]any{"type": "Split", "pattern": map[string]any{"Regex": re}, "behavior": "Isolated", "invert": false}
}
func byteLevelPre(prefix, regex bool) any {
	return map[string]any{"type": "ByteLevel", "add_prefix_space": prefix, "trim_offsets": false, "use_regex": regex}
}
func metaPre(scheme string, split bool) any {
	return map[string]any{"type": "Metaspace", "replacement": "\u2581", "prepend_scheme": scheme, "split": split}
}

// loadCutVariant builds a variant's bundle.
func loadCutVariant(t testing.TB, cv cutVariant) *Vocab {
	t.Helper()
	path, ok := testBundles[cv.base]
	if !ok {
		path = filepath.Join("../testdata/bundles", cv.base+".json")
	}
	data, _ := readTestBundle(t, path)
	if cv.norm == nil && cv.pre == nil && cv.added == nil {
		v, err := ParseBundle(path, data, "", nil)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	var b map[string]json.RawMessage
	if err := json.Unmarshal(data, &b); err != nil {
		t.Fatal(err)
	}
	set := func(key string, val any) {
		if val == "null" {
			b[key] = json.RawMessage("null")
		} else if val != nil {
			b[key], _ = json.Marshal(val)
		}
	}
	set("normalizer", cv.norm)
	set("pre_tokenizer", cv.pre)
	if cv.added != nil {
		var added []map[string]any
		var model struct {
			Vocab map[string]int `json:"vocab"`
		}
		json.Unmarshal(b["added_tokens"], &added)
		json.Unmarshal(b["model"], &model)
		next := len(model.Vocab) + len(added)
		for _, a := range cv.added {
			tok := map[string]any{"id": next, "special": false, "lstrip": false, "rstrip": false, "single_word": false, "normalized": true}
			for k, val := range a {
				tok[k] = val
			}
			added = append(added, tok)
			next++
		}
		b["added_tokens"], _ = json.Marshal(added)
	}
	out, _ := json.Marshal(b)
	v, err := ParseBundle(cv.name+".json", out, "", nil)
	if err != nil {
		t.Fatalf("%s: %v", cv.name, err)
	}
	return v
}

var cutEncoders = struct {
	sync.Once
	encs map[string]*Encoder
}{}

// cutEncoder returns the encoder of a variant (loaded once for all tests).
func cutEncoder(t testing.TB, name string) *Encoder {
	t.Helper()
	cutEncoders.Do(func() {
		cutEncoders.encs = map[string]*Encoder{}
		for _, cv := range cutVariants {
			enc, err := NewEncoder(loadCutVariant(t, cv), Options{})
			if err != nil {
				t.Fatal(err)
			}
			cutEncoders.encs[cv.name] = enc
		}
		enc, _ := NewEncoder(Default(), Options{})
		cutEncoders.encs["gpt2"] = enc
	})
	return cutEncoders.encs[name]
}

// cutKinds says which kinds of cut the encoder's plan allows.
func cutKinds(e *Encoder) string {
	if e.plan == nil {
		return ""
	}
	var kinds []string
	for k, name := range []string{"newline", "space"} {
		sample, want := []byte("ab\ncd"), 3
		if k == cutSpace {
			sample, want = []byte("ab cd"), 2
		}
		if end, _ := e.plan.last(sample, 0); end == want {
			kinds = append(kinds, name)
		}
	}
	return strings.Join(kinds, " ")
}

// Each variant's rule allows the cuts the package comment of streamcut.go
// says it should: a rule that silently allowed none would make the other
// tests here prove nothing.
func TestStreamCutKinds(t *testing.T) {
	for _, cv := range cutVariants {
		if got := cutKinds(cutEncoder(t, cv.name)); got != cv.kinds {
			t.Errorf("%s: cuts %q, want %q", cv.name, got, cv.kinds)
		}
	}
	// Beside letters beyond ASCII: a space between Cyrillic words, a line
	// break after CJK punctuation before Han; under metaspace-32k (no
	// pre-tokenizer) only the first, by its cut table.
	for name, want := range map[string][]int{"qwen3": {10, 22, 32}, "cjk-sequence": {10, 22, 32}, "metaspace-32k": {10}, "words": nil} {
		e := cutEncoder(t, name)
		text := []byte("слово слово\n中文。\n中文")
		var got []int
		if e.plan != nil {
			got = cutsOf(e, text)
		}
		if !slices.Equal(got, want) {
			t.Errorf("%s: cuts %v in %q, want %v", name, got, text, want)
		}
	}
}

// encodePart returns the ids of a stretch, as a continuation when cont.
func encodePart(e *Encoder, text []byte, cont bool) []uint32 {
	if e.v.pipe == nil {
		return e.AppendIDs(nil, text)
	}
	s := e.get()
	defer e.put(s)
	s.mode, s.u32, s.cont = sinkU32, nil, cont
	var st Stats
	e.runBundle(s, text, &st, func(id uint32, _, _ int) { s.u32 = append(s.u32, id) })
	out := s.u32
	s.u32, s.cont = nil, false
	return out
}

// cutsOf returns every place where the plan cuts text. The plan finds the
// last cut in what it is given, so each place is asked about with the
// text cut a few bytes past it: enough for a character after it, and too
// little for a later cut to hide it (a truncated text only loses cuts).
func cutsOf(e *Encoder, text []byte) []int {
	var at []int
	for i := 1; i < len(text); i++ {
		for j := i + 2; j <= min(i+6, len(text)); j++ {
			if end, _ := e.plan.last(text[:j], i); end == i {
				at = append(at, i)
				break
			}
		}
	}
	return at
}

// checkStreamCut holds every way of cutting text to its whole ids.
func checkStreamCut(t *testing.T, name string, e *Encoder, text []byte) {
	whole := e.AppendIDs(nil, text)
	if e.plan == nil {
		return
	}
	cuts := cutsOf(e, text)
	for _, every := range []int{1, 2, 3} {
		var got []uint32
		start, k := 0, 0
		for n, c := range cuts {
			if n%every != every-1 {
				continue
			}
			got = append(got, encodePart(e, text[start:c], k > 0)...)
			start, k = c, k+1
		}
		got = append(got, encodePart(e, text[start:], k > 0)...)
		if !slices.Equal(got, whole) {
			t.Fatalf("%s: cut at every %d of the places %v of %q:\n%v\nwhole:\n%v", name, every, cuts, text, got, whole)
		}
	}
	before, after := []byte("Summarise the notes below.\n"), []byte("\nAnswer in one line.")
	wantFramed := len(e.AppendIDs(nil, join(before, text, after)))
	for _, size := range []int{1, 5, 64} {
		st, framed, n, err := e.countCut(iotest.HalfReader(bytes.NewReader(text)), size, 3, before, after, true)
		if err != nil || n != int64(len(text)) || st.Tokens != len(whole) || framed != wantFramed {
			t.Fatalf("%s: streamed %d bytes at a time: %d tokens, %d framed, %d bytes, %v; whole %d, framed %d",
				name, size, st.Tokens, framed, n, err, len(whole), wantFramed)
		}
	}
	if st := e.countLong(text, 3, 3, false); st.Tokens != len(whole) {
		t.Fatalf("%s: counted in stretches: %d tokens, whole %d", name, st.Tokens, len(whole))
	}
	if got, err := e.Interior(text).Count(before, after); err != nil || got != wantFramed {
		t.Fatalf("%s: framed from the interior: %d tokens, %v; joined %d", name, got, err, wantFramed)
	}
	if e.FreeCuts() {
		var free []int
		for i := range text {
			if e.FreeCutAt(text, i) {
				free = append(free, i)
			}
		}
		// FreeCutAt sees the ASCII bytes around a place only: on ASCII
		// text it finds the plan's cuts, elsewhere some of them.
		want := slices.DeleteFunc(cutsOf(e, text), func(i int) bool { return i+1 >= len(text) })
		for _, i := range free {
			if _, ok := slices.BinarySearch(want, i); !ok {
				t.Fatalf("%s: FreeCutAt cuts %q at %d, the plan does not (%v)", name, text, i, want)
			}
		}
		if isASCII(text) && len(free) != len(want) {
			t.Fatalf("%s: FreeCutAt finds %v in %q, the plan %v", name, free, text, want)
		}
	}
	if e.plan.free {
		var got []uint32
		var joined []byte
		e.windows(iotest.OneByteReader(bytes.NewReader(text)), 4, func(w []byte, _ bool) error {
			joined = append(joined, w...)
			got = append(got, e.AppendIDs(nil, w)...)
			return nil
		})
		if !bytes.Equal(joined, text) || !slices.Equal(got, whole) {
			t.Fatalf("%s: windows of %q tokenized as texts: %v, whole %v", name, text, got, whole)
		}
	}
}

// cutTexts are texts dense with cut places and with what could spoil
// them: white space runs, punctuation before line breaks, digits,
// contractions, marks, CJK, added tokens' strings.
var cutTexts = []string{
	"The valve V-12 failed.\nInspect it: zqx\nAnd log 1234567 readings.\n\n  Then rest.",
	"a b\nc  d\n\ne\t f\r\ng 'll\nI'M\nx,\ny.\nZ",
	"e\u0301 b\ncafe\u0301\nq\nz 中文 text\nかな\nzqx b zqx\nzqx",
	"  leading\n\n\nand trailing  \n",
	"x\n" + strings.Repeat("word ", 40) + "\n" + strings.Repeat("9", 20) + " end",
	"<|endoftext|> a\nb <s> c\n</s>d\u2581e \u2581f",
	"ax y\nbx yx\u2581y x y",
	"Слово за словом.\nЙод й\nλόγος Σ\n中文。\n日本語、\nかな が\n한국어 문장\nＡＢ！\nｘ",
}

func TestStreamCutEqualsWhole(t *testing.T) {
	texts := append([]string(nil), cutTexts...)
	files, _ := filepath.Glob(filepath.Join(goldenDir, "corpus", "*"))
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		texts = append(texts, string(b[:min(len(b), 3000)]))
	}
	r := rand.New(rand.NewPCG(7, 11))
	for range 20 {
		texts = append(texts, randomCutText(r, 200))
	}
	for _, name := range append([]string{"gpt2"}, variantNames()...) {
		e := cutEncoder(t, name)
		for _, text := range texts {
			checkStreamCut(t, name, e, []byte(text))
		}
	}
}

func variantNames() []string {
	var out []string
	for _, cv := range cutVariants {
		out = append(out, cv.name)
	}
	return out
}

// randomCutText strings together n pieces that meet at cut places and
// near them.
func randomCutText(r *rand.Rand, n int) string {
	pieces := []string{"a", "Bc", "x", "7", "42", ".", ",", "'s", "'LL", " ", "  ", "\n", "\n\n", "\r\n", "\t", " \n",
		"é", "e\u0301", "中", "か", "\u2581", "zqx", "q\nz", "<s>", "Ω", "ß", "İ", "\xff", "!?", "(", "1,000",
		"ж", "Й", "й", "λ", "Σ", "한", "が", "ガ", "。", "、", "Ａ", "！", "\u3000", "\u0301", "\u3099", "ﬁ", "क", "\u037a", "\u00a8"}
	var b strings.Builder
	for range n {
		b.WriteString(pieces[r.IntN(len(pieces))])
	}
	return b.String()
}

func FuzzStreamCutEqualsWhole(f *testing.F) {
	for _, s := range cutTexts {
		f.Add(s)
	}
	names := append([]string{"gpt2"}, variantNames()...)
	encs := make([]*Encoder, len(names))
	for i, name := range names { // loaded before fuzzing: an input that took seconds would read as a hang
		encs[i] = cutEncoder(f, name)
	}
	f.Fuzz(func(t *testing.T, s string) {
		for i, name := range names {
			checkStreamCut(t, name, encs[i], []byte(s))
		}
	})
}

// A stream that fails part way gives its error, with the bytes read
// before it, however it was being cut.
func TestCountCutReadError(t *testing.T) {
	text := []byte(strings.Repeat("The valve held.\nIt was checked again ", 2000))
	for _, name := range []string{"gpt2", "qwen3", "metaspace-32k", "words"} {
		e := cutEncoder(t, name)
		for _, size := range []int{64, 4096, 1 << 20} {
			r := io.MultiReader(bytes.NewReader(text), iotest.ErrReader(errors.New("disk gone")))
			st, framed, n, err := e.countCut(r, size, 2, []byte("a"), []byte("b"), true)
			if err == nil || err.Error() != "disk gone" || n != int64(len(text)) || framed != 0 {
				t.Fatalf("%s, %d-byte stretches: %d tokens, %d framed, %d bytes, %v; want the read error after %d bytes and no framed count",
					name, size, st.Tokens, framed, n, err, len(text))
			}
		}
	}
}
