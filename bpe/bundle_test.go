package bpe

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// miniBundle returns a small byte-level-free bundle: a character vocabulary
// of a, b, c, ab, abc with two merges, and the given extra top-level
// members (each `"key": value`).
func miniBundle(model string, extra ...string) string {
	if model == "" {
		model = `"type": "BPE", "vocab": {"a": 0, "b": 1, "c": 2, "ab": 3, "abc": 4, "<unk>": 5}, "merges": ["a b", "ab c"], "unk_token": "<unk>"`
	}
	parts := append([]string{`"model": {` + model + `}`}, extra...)
	return "{\n" + strings.Join(parts, ",\n") + "\n}\n"
}

func TestBundleErrors(t *testing.T) {
	cases := []struct {
		name, data, want string
	}{
		{"empty", "", "empty file"},
		{"truncated", miniBundle("")[:40], "cut short"},
		{"not JSON", "{model: 1}", "not valid JSON"},
		{"no model", `{"normalizer": null}`, `no "model"`},
		{"unigram", miniBundle(`"type": "Unigram", "vocab": []`), `model type "Unigram" is not implemented`},
		{"dropout", miniBundle(`"type": "BPE", "dropout": 0.1, "vocab": {"a": 0}, "merges": []`), "dropout 0.1"},
		{"dropout zero ok but missing token", miniBundle(`"type": "BPE", "dropout": 0, "vocab": {"a": 0}, "merges": ["a b"]`), `names "b", which is not in the vocabulary`},
		{"merge makes missing", miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 1}, "merges": [["a", "b"]]`), `makes "ab"`},
		{"merge shape", miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 1}, "merges": ["a b c"]`), "two tokens separated by one space"},
		{"duplicate id", miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 0}, "merges": []`), "id 0 is given to"},
		{"duplicate token", miniBundle(`"type": "BPE", "vocab": {"a": 0, "a": 1}, "merges": []`), `token "a" appears twice`},
		{"bad id", miniBundle(`"type": "BPE", "vocab": {"a": -1}, "merges": []`), "outside"},
		{"fractional id", miniBundle(`"type": "BPE", "vocab": {"a": 1.5}, "merges": []`), "whole number"},
		{"unknown normalizer", miniBundle("", `"normalizer": {"type": "BertNormalizer"}`), `normalizer type "BertNormalizer" is not implemented`},
		{"unknown in sequence", miniBundle("", `"normalizer": {"type": "Sequence", "normalizers": [{"type": "NFC"}, {"type": "Bogus"}]}`), `normalizer Sequence[1] Bogus`},
		{"unknown pre-tokenizer", miniBundle("", `"pre_tokenizer": {"type": "FixedLength", "length": 3}`), `pre-tokenizer type "FixedLength" is not implemented`},
		{"bad regex", miniBundle("", `"pre_tokenizer": {"type": "Split", "pattern": {"Regex": "(a"}, "behavior": "Isolated", "invert": false}`), "does not compile"},
		{"empty-matching regex", miniBundle("", `"pre_tokenizer": {"type": "Split", "pattern": {"Regex": "a*"}, "behavior": "Isolated", "invert": false}`), "matches the empty text"},
		{"bad behavior", miniBundle("", `"pre_tokenizer": {"type": "Split", "pattern": {"String": "a"}, "behavior": "Sideways", "invert": false}`), `behavior "Sideways"`},
		{"unknown post-processor", miniBundle("", `"post_processor": {"type": "Magic"}`), `post-processor type "Magic"`},
		{"template names nothing", miniBundle("", `"post_processor": {"type": "TemplateProcessing", "single": [{"SpecialToken": {"id": "<s>", "type_id": 0}}], "special_tokens": {}}`), `names "<s>"`},
		{"added token clash", miniBundle("", `"added_tokens": [{"id": 0, "content": "zz", "special": true}]`), `which the vocabulary gives to "a"`},
		{"unk missing", miniBundle(`"type": "BPE", "vocab": {"a": 0}, "merges": [], "unk_token": "<unk>"`), `unk_token "<unk>"`},
		{"byte-level lacks bytes", miniBundle("", `"pre_tokenizer": {"type": "ByteLevel"}`), "one-byte token"},
		{"merge pair of three", miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 1, "ab": 2}, "merges": [["a", "b", "a"]]`), "holds two tokens, not 3"},
		{"merge neither form", miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 1, "ab": 2}, "merges": [7]`), `expected a string "a b" or a pair`},
	}
	for _, c := range cases {
		_, err := ParseBundle("tok.json", []byte(c.data), "", nil)
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "tok.json") {
			t.Errorf("%s: error %v, want one naming tok.json and saying %q", c.name, err, c.want)
			continue
		}
		if !errors.Is(err, ErrSyntax) {
			t.Errorf("%s: error %v does not wrap ErrSyntax", c.name, err)
		}
	}
}

// Merges whose tokens are written with escapes are read as the tokens
// they spell, both halves of a pair kept apart though both are unescaped
// into buffers.
func TestBundleEscapedMerges(t *testing.T) {
	for _, merges := range []string{`[["\u0061\u0062", "\u0063"], ["\u0061", "\u0062"]]`, `["\u0061\u0062 \u0063", "a\u0020b"]`} {
		data := miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 1, "c": 2, "ab": 3, "abc": 4}, "merges": ` + merges)
		v, err := ParseBundle("tok.json", []byte(data), "", nil)
		if err != nil {
			t.Fatalf("%s: %v", merges, err)
		}
		enc, _ := NewEncoder(v, Options{})
		// "abc" is one token only through both merges: a b, then ab c.
		if got := enc.Encode([]byte("abc")); len(got) != 1 || got[0] != 4 {
			t.Errorf("%s: abc gives %v, want [4]", merges, got)
		}
		if v.nMerges != 2 {
			t.Errorf("%s: %d merges, want 2", merges, v.nMerges)
		}
	}
}

// An error names the line of the entry at fault.
func TestBundleErrorLine(t *testing.T) {
	data := miniBundle(`"type": "BPE",
"vocab": {"a": 0, "b": 1, "ab": 2},
"merges": [
"a b",
"a q"
]`)
	_, err := ParseBundle("tok.json", []byte(data), "", nil)
	if err == nil || !strings.Contains(err.Error(), "tok.json:6:") || !strings.Contains(err.Error(), "model.merges[1]") {
		t.Fatalf("error %v, want it at tok.json:6 naming model.merges[1]", err)
	}
}

func TestConfigWindow(t *testing.T) {
	for _, c := range []struct {
		cfg  string
		want int
	}{
		{`{"model_max_length": 131072}`, 131072},
		{`{"model_max_length": 1000000000000000019884624838656}`, 0}, // the 1e30 placeholder
		{`{"model_max_length": 1e30}`, 0},
		{`{}`, 0},
	} {
		v, err := ParseBundle("tok.json", []byte(miniBundle("")), "tokenizer_config.json", []byte(c.cfg))
		if err != nil {
			t.Fatal(err)
		}
		if v.Window() != c.want {
			t.Errorf("%s: window %d, want %d", c.cfg, v.Window(), c.want)
		}
	}
	if _, err := ParseBundle("tok.json", []byte(miniBundle("")), "tokenizer_config.json", []byte(`{"model_max_length": "x"}`)); err == nil {
		t.Error("a model_max_length that is not a number is accepted")
	}
}

// A vocabulary file must be a regular file.
func TestLoadBundleNotRegular(t *testing.T) {
	t.Setenv("MORSEL_CACHE_DIR", t.TempDir())
	if _, err := os.Stat("/dev/zero"); err != nil {
		t.Skip("no /dev/zero")
	}
	_, err := LoadBundle("/dev/zero")
	if err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Fatalf("LoadBundle(/dev/zero): %v", err)
	}
	dir := t.TempDir()
	p := filepath.Join(dir, "tokenizer.json")
	if err := os.WriteFile(p, []byte(miniBundle("")), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := LoadBundle(dir); err != nil {
		t.Fatalf("LoadBundle(dir): %v", err)
	}
}

// Every pre-token span that Split gives covers the text without gaps or
// overlaps, under both real bundles and every small one, on the golden
// corpus and on hostile bytes.
func TestBundleSplitTilesText(t *testing.T) {
	texts := [][]byte{[]byte(""), []byte(" "), []byte("ab\xff\xfe cd"), []byte("  x  \n\n y\u2581z"), []byte("<think>a</think><|endoftext|>")}
	for _, data := range corpusTexts(t) {
		texts = append(texts, data)
	}
	for _, name := range bundleGoldenNames(t) {
		v, _ := loadTestBundle(t, name)
		for _, mode := range []SpecialMode{SpecialsAsText, SpecialsHonor} {
			enc, err := NewEncoder(v, Options{Specials: mode})
			if err != nil {
				t.Fatal(err)
			}
			for _, text := range texts {
				var rebuilt []byte
				pos := 0
				enc.Split(text, func(a, b int, _ bool) {
					if a != pos || b <= a || b > len(text) {
						t.Fatalf("%s: span [%d,%d) after %d in a text of %d bytes", name, a, b, pos, len(text))
					}
					rebuilt = append(rebuilt, text[a:b]...)
					pos = b
				})
				if !bytes.Equal(rebuilt, text) {
					t.Fatalf("%s: the spans rebuild %d of %d bytes", name, len(rebuilt), len(text))
				}
			}
		}
	}
}

// Cutting a metaspace text where the cut table allows (before each
// replacement character that follows another character, between ASCII
// characters no token holds side by side) gives the ids of the whole text
// as one merge problem, and counting the cut text (its own path) their
// number.
func TestMetaspaceCutKeepsIDs(t *testing.T) {
	v, _ := loadTestBundle(t, "metaspace-32k")
	if c := v.pipe.cuts; c == nil || !c.beforeRepl {
		t.Fatal("metaspace-32k: the load check refused the cuts")
	}
	enc, err := NewEncoder(v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	texts := corpusTexts(t)
	texts["spaces"] = []byte("a  b   c\u2581\u2581d \u2581 e\u2581")
	for name, text := range texts {
		cut := enc.Encode(text)
		c := v.pipe.cuts
		v.pipe.cuts = nil
		whole := enc.Encode(text)
		v.pipe.cuts = c
		if !eqInts(cut, whole) {
			t.Errorf("%s: %d ids cut, %d whole", name, len(cut), len(whole))
		}
		if n := enc.Count(text); n != len(whole) {
			t.Errorf("%s: counted %d, %d ids whole", name, n, len(whole))
		}
	}
}

// A long metaspace text counted in pieces on several goroutines counts as
// it does on one, whatever the size of the pieces.
func TestMetaspaceCountParallel(t *testing.T) {
	v, _ := loadTestBundle(t, "metaspace-32k")
	enc, err := NewEncoder(v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	c := v.pipe.cuts
	s := enc.get()
	defer enc.put(s)
	for name, text := range corpusTexts(t) {
		norm, _ := v.pipe.norm.normalize(s, text, nil)
		norm = bytes.Clone(norm)
		want := s.countCuts(norm, c)
		for _, size := range []int{1, 7, 100, 4096} {
			if got := s.countParallel(norm, c, size); got != want {
				t.Errorf("%s, pieces of %d bytes: %d tokens, %d on one goroutine", name, size, got, want)
			}
		}
	}
	long := bytes.Repeat([]byte("func main() {\n\tfmt.Println(\"héllo, 世界\")\n}\n"), cutParallelMin/40)
	if got, want := enc.Count(long), len(enc.Encode(long)); got != want {
		t.Errorf("a text of %d bytes: counted %d, %d ids", len(long), got, want)
	}
}

// A vocabulary with a token that holds the replacement character after
// another character cannot be cut there.
func TestMetaspaceCutRefused(t *testing.T) {
	data := miniBundle(`"type": "BPE", "vocab": {"▁": 0, "a": 1, "a▁": 2}, "merges": ["a ▁"]`,
		`"normalizer": {"type": "Replace", "pattern": {"String": " "}, "content": "▁"}`)
	v, err := ParseBundle("tok.json", []byte(data), "", nil)
	if err != nil {
		t.Fatal(err)
	}
	if c := v.pipe.cuts; c == nil || c.beforeRepl {
		t.Fatal("a vocabulary holding \"a▁\" allows a cut before ▁")
	}
	enc, _ := NewEncoder(v, Options{})
	if got := enc.Encode([]byte("a a")); !eqInts(got, []int{2, 1}) {
		t.Errorf("ids %v, want [2 1] (a▁ then a)", got)
	}
}

// A regular expression that runs past the time limit is reported, not
// waited for.
func TestBundleRegexTimeout(t *testing.T) {
	if testing.Short() {
		t.Skip("waits for the match timeout")
	}
	data := miniBundle("", `"pre_tokenizer": {"type": "Split", "pattern": {"Regex": "(a+)+$"}, "behavior": "Isolated", "invert": false}`)
	v, err := ParseBundle("tok.json", []byte(data), "", nil)
	if err != nil {
		t.Fatal(err)
	}
	enc, _ := NewEncoder(v, Options{})
	st := enc.CountStats([]byte(strings.Repeat("a", 40) + "b"))
	if !errors.Is(st.Err, ErrPatternTimeout) {
		t.Fatalf("Err = %v, want ErrPatternTimeout", st.Err)
	}
	if _, _, err := enc.CountReader(strings.NewReader(strings.Repeat("a", 40) + "b")); !errors.Is(err, ErrPatternTimeout) {
		t.Fatalf("CountReader error %v, want ErrPatternTimeout", err)
	}
}

func FuzzParseBundle(f *testing.F) {
	f.Add([]byte(miniBundle("")))
	f.Add([]byte(miniBundle("", `"normalizer": {"type": "Sequence", "normalizers": [{"type": "NFKC"}, {"type": "Lowercase"}]}`, `"pre_tokenizer": {"type": "Metaspace", "replacement": "▁", "prepend_scheme": "first", "split": true}`)))
	f.Add([]byte(miniBundle("", `"added_tokens": [{"id": 6, "content": "<s>", "special": true, "lstrip": true}]`, `"post_processor": {"type": "TemplateProcessing", "single": [{"SpecialToken": {"id": "<s>"}}], "special_tokens": {"<s>": {"ids": [6]}}}`)))
	f.Fuzz(func(t *testing.T, data []byte) {
		v, err := ParseBundle("tok.json", data, "", nil)
		if err != nil {
			if !strings.Contains(err.Error(), "tok.json") {
				t.Fatalf("error %q does not name the file", err)
			}
			return
		}
		enc, err := NewEncoder(v, Options{Specials: SpecialsHonor})
		if err != nil {
			return
		}
		text := []byte("abc ab\xffc <s> a")
		if n := enc.Count(text); n != len(enc.Encode(text)) {
			t.Fatalf("Count %d, Encode %d", n, len(enc.Encode(text)))
		}
	})
}

// LoadFiles takes a bundle by its content, as a file or in a folder, and
// refuses a merges file beside one.
func TestLoadFilesBundle(t *testing.T) {
	t.Setenv("MORSEL_CACHE_DIR", "off")
	dir := t.TempDir()
	p := filepath.Join(dir, "tokenizer.json")
	if err := os.WriteFile(p, []byte(miniBundle("")), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, path := range []string{p, dir} {
		v, err := LoadFiles(path, "")
		if err != nil || v.Family() != "character-level" {
			t.Fatalf("LoadFiles(%s): %v", path, err)
		}
	}
	if _, err := LoadFiles(p, p); err == nil || !strings.Contains(err.Error(), "leave out --merges") {
		t.Fatalf("a bundle with --merges: %v", err)
	}
	if !looksLikeBundle([]byte(` {"version": "1.0"}`)) || looksLikeBundle([]byte(`{"a": 0}`)) || looksLikeBundle([]byte(`[]`)) {
		t.Fatal("looksLikeBundle")
	}
}

func FuzzMetaspaceCutKeepsIDs(f *testing.F) {
	v, _ := loadTestBundle(f, "metaspace-32k")
	enc, err := NewEncoder(v, Options{})
	if err != nil {
		f.Fatal(err)
	}
	for _, s := range []string{"func main() {\n\tfmt.Println(x)\n}", "a  b\u2581\u2581c", "x=1;y=[2,3]", "\xff\xfe ab"} {
		f.Add(s)
	}
	c := v.pipe.cuts
	f.Fuzz(func(t *testing.T, s string) {
		cut := enc.Encode([]byte(s))
		v.pipe.cuts = nil
		whole := enc.Encode([]byte(s))
		v.pipe.cuts = c
		if !eqInts(cut, whole) {
			t.Fatalf("%q: ids %v cut, %v whole", s, cut, whole)
		}
		if n := enc.Count([]byte(s)); n != len(whole) {
			t.Fatalf("%q: counted %d, %d ids whole", s, n, len(whole))
		}
	})
}

// A --split-pattern that matches the empty text is refused; one whose
// empty matches come only in context cuts nothing there, so the pieces
// still rebuild the text; one that backtracks past the limit is reported.
func TestSplitPatternHostile(t *testing.T) {
	for _, p := range []string{"a*", "(?:)", "x?"} {
		if _, err := NewEncoder(Default(), Options{SplitPattern: p}); err == nil || !strings.Contains(err.Error(), "empty text") {
			t.Errorf("pattern %q: %v, want a refusal", p, err)
		}
	}
	enc, err := NewEncoder(Default(), Options{SplitPattern: `(?=b)|\w+`})
	if err != nil {
		t.Fatal(err)
	}
	text := []byte("ab cb\xff b")
	var rebuilt []byte
	enc.Split(text, func(a, b int, _ bool) { rebuilt = append(rebuilt, text[a:b]...) })
	if !bytes.Equal(rebuilt, text) {
		t.Fatalf("pieces rebuild %q of %q", rebuilt, text)
	}
	if n := enc.Count(text); n > len(text) {
		t.Fatalf("%d tokens for %d bytes", n, len(text))
	}
	if testing.Short() {
		return
	}
	slow, err := NewEncoder(Default(), Options{SplitPattern: `(a+)+$`})
	if err != nil {
		t.Fatal(err)
	}
	if st := slow.CountStats([]byte(strings.Repeat("a", 40) + "b")); !errors.Is(st.Err, ErrPatternTimeout) {
		t.Fatalf("Err = %v, want ErrPatternTimeout", st.Err)
	}
}

// Pieces gives the ids of Encode, with spans of the original text that
// follow each other and cover it, under every test bundle.
func TestBundlePieces(t *testing.T) {
	texts := corpusTexts(t)
	texts["hostile"] = []byte("  x\xff\xfe  \u2581 é 🧬 <think>a</think>")
	for _, name := range bundleGoldenNames(t) {
		v, _ := loadTestBundle(t, name)
		enc, _ := NewEncoder(v, Options{})
		for tn, text := range texts {
			var ids []int
			at := 0
			enc.Pieces(text, func(id, a, b int) {
				if a != at || b < a || b > len(text) {
					t.Fatalf("%s, %s: token %d spans [%d,%d) after %d", name, tn, id, a, b, at)
				}
				ids = append(ids, id)
				at = b
			})
			if at != len(text) || !eqInts(ids, enc.Encode(text)) {
				t.Fatalf("%s, %s: spans end at %d of %d; ids equal Encode: %v", name, tn, at, len(text), eqInts(ids, enc.Encode(text)))
			}
		}
	}
	v, _ := loadTestBundle(t, "metaspace-32k")
	enc, _ := NewEncoder(v, Options{})
	var got []string
	text := []byte("a 🧬")
	enc.Pieces(text, func(id, a, b int) { got = append(got, string(text[a:b])) })
	if strings.Join(got, "|") != "a| |\xf0|\x9f|\xa7|\xac" {
		t.Errorf("pieces %q", got)
	}
}

// Under every test bundle, in both special modes, Split's spans and
// Pieces' spans tile any text, and Pieces gives Encode's ids.
func FuzzBundleSpans(f *testing.F) {
	var encs []*Encoder
	for _, name := range []string{"metaspace-32k", "words", "precompiled"} {
		v, _ := loadTestBundle(f, name)
		for _, m := range []SpecialMode{SpecialsAsText, SpecialsHonor} {
			e, _ := NewEncoder(v, Options{Specials: m})
			encs = append(encs, e)
		}
	}
	for _, s := range []string{"  Hello, World 123 [MASK]  x", "\u2581\u2581a \xff <s></s>", "Ａ́ é\r\n\t🧬"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		text := []byte(s)
		for _, e := range encs {
			at := 0
			e.Split(text, func(a, b int, _ bool) {
				if a != at || b <= a {
					t.Fatalf("Split: span [%d,%d) after %d", a, b, at)
				}
				at = b
			})
			if at != len(text) {
				t.Fatalf("Split spans end at %d of %d", at, len(text))
			}
			var ids []int
			at = 0
			e.Pieces(text, func(id, a, b int) {
				if a != at || b < a {
					t.Fatalf("Pieces: span [%d,%d) after %d", a, b, at)
				}
				ids = append(ids, id)
				at = b
			})
			if (len(ids) > 0 && at != len(text)) || !eqInts(ids, e.Encode(text)) {
				t.Fatalf("Pieces end at %d of %d, or its ids differ from Encode's", at, len(text))
			}
		}
	})
}
