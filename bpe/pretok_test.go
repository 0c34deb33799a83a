package bpe

import (
	"strings"
	"testing"
)

// charBundle is a character-level bundle whose vocabulary holds every
// ASCII printable character (so no text needs an unk), with the given
// pre-tokenizer, added tokens and model extras.
func charBundle(pre, added, model string) string {
	var vocab []string
	for c := ' '; c <= '~'; c++ {
		vocab = append(vocab, quoteJSON(string(c))+": "+itoa(len(vocab)))
	}
	vocab = append(vocab, `"<unk>": `+itoa(len(vocab)), `"ab": `+itoa(len(vocab)+1))
	if model != "" {
		model = ", " + model
	}
	m := `"type": "BPE", "unk_token": "<unk>", "vocab": {` + strings.Join(vocab, ", ") + `}, "merges": ["a b"]` + model
	var extra []string
	if pre != "" {
		extra = append(extra, `"pre_tokenizer": `+pre)
	}
	if added != "" {
		extra = append(extra, `"added_tokens": `+added)
	}
	return miniBundle(m, extra...)
}

func pieces(t *testing.T, data, text string, mode SpecialMode) []string {
	t.Helper()
	v, err := ParseBundle("tok.json", []byte(data), "", nil)
	if err != nil {
		t.Fatal(err)
	}
	enc, err := NewEncoder(v, Options{Specials: mode})
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	enc.Split([]byte(text), func(a, b int, _ bool) { out = append(out, text[a:b]) })
	return out
}

// The five behaviors of Split on the example that the tokenizers
// library's documentation gives for them ("the-final--countdown" cut at
// "-", from memory of that documentation). The reference library of the
// goldens implements only Isolated (and Removed for regular expressions),
// so these expected values are written out by hand. Removed text is no
// piece of its own: in Encoder.Split's spans, which must tile the text, it
// joins the piece after it; the ids show it dropped.
func TestSplitBehaviors(t *testing.T) {
	for _, c := range []struct {
		behavior string
		invert   bool
		want     string
	}{
		{"Isolated", false, "the|-|final|-|-|countdown"},
		{"MergedWithPrevious", false, "the-|final-|-|countdown"},
		{"MergedWithNext", false, "the|-final|-|-countdown"},
		{"Contiguous", false, "the|-|final|--|countdown"},
		{"Removed", false, "the|-final|--countdown"},
		// With invert the text between the dashes is the delimiter.
		{"Isolated", true, "the|-|final|-|-|countdown"},
		{"MergedWithPrevious", true, "the|-final|-|-countdown"},
		{"MergedWithNext", true, "the-|final-|-|countdown"},
	} {
		for _, pat := range []string{`{"String": "-"}`, `{"Regex": "-"}`} {
			pre := `{"type": "Split", "pattern": ` + pat + `, "behavior": "` + c.behavior + `", "invert": ` + map[bool]string{true: "true", false: "false"}[c.invert] + `}`
			got := strings.Join(pieces(t, charBundle(pre, "", ""), "the-final--countdown", SpecialsAsText), "|")
			if got != c.want {
				t.Errorf("%s invert=%v %s: %s, want %s", c.behavior, c.invert, pat, got, c.want)
			}
		}
	}
	// Removed drops the dashes from the ids.
	v, _ := ParseBundle("tok.json", []byte(charBundle(`{"type": "Split", "pattern": {"String": "-"}, "behavior": "Removed", "invert": false}`, "", "")), "", nil)
	enc, _ := NewEncoder(v, Options{})
	if n := enc.Count([]byte("a-b--c")); n != 3 {
		t.Errorf("Removed: %d tokens for a-b--c, want 3", n)
	}
}

// Whitespace, WhitespaceSplit, Digits and Punctuation, as the tokenizers
// library defines them (from memory of its source): Whitespace keeps the
// runs of `\w+|[^\w\s]+`; WhitespaceSplit drops white space; Digits keeps
// runs of digits together unless individual_digits; Punctuation isolates
// each punctuation character. Dropped white space joins the next span.
func TestCharPreTokenizers(t *testing.T) {
	for _, c := range []struct{ pre, text, want string }{
		{`{"type": "Whitespace"}`, "Hey friend!!  how_are you?", "Hey| friend|!!|  how_are| you|?"},
		{`{"type": "WhitespaceSplit"}`, "Hey friend!  x", "Hey| friend!|  x"},
		{`{"type": "Digits", "individual_digits": false}`, "a1234b56", "a|1234|b|56"},
		{`{"type": "Digits", "individual_digits": true}`, "a123b", "a|1|2|3|b"},
		{`{"type": "Punctuation"}`, "hi...there!", "hi|.|.|.|there|!"},
		{`{"type": "Punctuation", "behavior": "Contiguous"}`, "hi...there!", "hi|...|there|!"},
		{`{"type": "Sequence", "pretokenizers": [{"type": "WhitespaceSplit"}, {"type": "Punctuation"}]}`, "a, b.", "a|,| b|."},
	} {
		if got := strings.Join(pieces(t, charBundle(c.pre, "", ""), c.text, SpecialsAsText), "|"); got != c.want {
			t.Errorf("%s on %q: %s, want %s", c.pre, c.text, got, c.want)
		}
	}
}

// Added tokens: lstrip and rstrip take the white space beside the token
// into it; single_word matches only where no letter or number touches the
// token; a special token is text unless specials are honoured, a
// non-special one is matched in any text. (The tokenizers library's rules,
// from memory of its source; the reference library of the goldens ignores
// single_word.)
func TestAddedTokenRules(t *testing.T) {
	added := `[{"id": 97, "content": "[M]", "special": false, "lstrip": true, "rstrip": true},
		{"id": 98, "content": "<w>", "special": false, "single_word": true},
		{"id": 99, "content": "<s>", "special": true}]`
	data := charBundle(`{"type": "WhitespaceSplit"}`, added, "")
	for _, c := range []struct {
		text string
		mode SpecialMode
		want string
	}{
		{"a  [M]  b", SpecialsAsText, "a|  [M]  |b"},
		{"x<w> y", SpecialsAsText, "x<w>| y"},
		{"x <w> y", SpecialsAsText, "x| |<w>| y"},
		{"<s>a", SpecialsAsText, "<s>a"},
		{"<s>a", SpecialsHonor, "<s>|a"},
	} {
		if got := strings.Join(pieces(t, data, c.text, c.mode), "|"); got != c.want {
			t.Errorf("%q: %s, want %s", c.text, got, c.want)
		}
	}
}

// Model settings, by hand: fuse_unk makes a run of unknown characters in
// one pre-token one unk (not across pre-tokens); ignore_merges gives a
// pre-token that is a token as itself; continuing_subword_prefix spells
// every symbol but the first with the prefix.
func TestModelSettings(t *testing.T) {
	enc := func(data string) *Encoder {
		v, err := ParseBundle("tok.json", []byte(data), "", nil)
		if err != nil {
			t.Fatal(err)
		}
		e, _ := NewEncoder(v, Options{})
		return e
	}
	unk := 95 // "<unk>" in charBundle
	if got := enc(charBundle(`{"type": "WhitespaceSplit"}`, "", `"fuse_unk": true`)).Encode([]byte("aéé é")); !eqInts(got, []int{65, unk, unk}) {
		t.Errorf("fuse_unk: %v, want [65 %d %d]", got, unk, unk)
	}
	if got := enc(charBundle("", "", `"fuse_unk": false`)).Encode([]byte("éé")); !eqInts(got, []int{unk, unk}) {
		t.Errorf("no fuse_unk: %v", got)
	}
	// "abc": merges a b -> ab; with ignore_merges a token "abc" would win.
	data := miniBundle(`"type": "BPE", "ignore_merges": true, "vocab": {"a": 0, "b": 1, "c": 2, "bc": 3, "abc": 4}, "merges": ["b c"]`)
	if got := enc(data).Encode([]byte("abc")); !eqInts(got, []int{4}) {
		t.Errorf("ignore_merges: %v, want [4]", got)
	}
	data = miniBundle(`"type": "BPE", "ignore_merges": false, "vocab": {"a": 0, "b": 1, "c": 2, "bc": 3, "abc": 4}, "merges": ["b c"]`)
	if got := enc(data).Encode([]byte("abc")); !eqInts(got, []int{0, 3}) {
		t.Errorf("without ignore_merges: %v, want [0 3]", got)
	}
	data = miniBundle(`"type": "BPE", "continuing_subword_prefix": "##", "vocab": {"a": 0, "##b": 1, "##c": 2, "ab": 3, "abc": 4}, "merges": ["a ##b", "ab ##c"]`)
	if got := enc(data).Encode([]byte("abc")); !eqInts(got, []int{4}) {
		t.Errorf("continuing_subword_prefix: %v, want [4]", got)
	}
}

// Metaspace's prepend schemes and split, by hand from the tokenizers
// library's definition (from memory): always puts the replacement before
// a piece that lacks one, never does not, and split cuts before each
// replacement. The vocabulary has "▁ab▁ab", which only an uncut text can
// reach.
func TestMetaspaceSchemes(t *testing.T) {
	for _, c := range []struct {
		scheme string
		split  bool
		want   []int
	}{
		{"always", true, []int{4, 4}},
		{"first", true, []int{4, 4}},
		{"never", true, []int{6, 4}},
		{"always", false, []int{5}},
	} {
		data := miniBundle(`"type": "BPE", "vocab": {"a": 0, "b": 1, "▁": 2, "▁a": 3, "▁ab": 4, "▁ab▁ab": 5, "ab": 6}, "merges": ["▁ a", "▁a b", "▁ab ▁ab", "a b"]`,
			`"pre_tokenizer": {"type": "Metaspace", "replacement": "▁", "prepend_scheme": "`+c.scheme+`", "split": `+map[bool]string{true: "true", false: "false"}[c.split]+`}`)
		v, err := ParseBundle("tok.json", []byte(data), "", nil)
		if err != nil {
			t.Fatal(err)
		}
		e, _ := NewEncoder(v, Options{})
		if got := e.Encode([]byte("ab ab")); !eqInts(got, c.want) {
			t.Errorf("%s split=%v: %v, want %v", c.scheme, c.split, got, c.want)
		}
	}
}
