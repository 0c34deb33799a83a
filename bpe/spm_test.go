package bpe

import (
	"bytes"
	"math/rand/v2"
	"slices"
	"strings"
	"sync"
	"testing"

	"morsel/bpe/charsmap"
	"morsel/bpe/spmodel"
)

var spmModels = []string{"nfkc-bytes.model", "identity.model", "digits.model", "userdef.model",
	"nodummy.model", "keepspace.model", "suffix.model", "unused.model", "ties.model"}

var (
	spmEncOnce sync.Once
	spmEncs    []*Encoder
)

// spmEncoders returns an encoder for every test model, made once.
func spmEncoders(t testing.TB) []*Encoder {
	spmEncOnce.Do(func() {
		for _, m := range spmModels {
			enc, err := NewEncoder(loadSPM(t, m), Options{})
			if err != nil {
				t.Fatal(err)
			}
			spmEncs = append(spmEncs, enc)
		}
	})
	return spmEncs
}

// steps encodes text by the reference's steps over the whole normalized
// text, with no cut and no cache.
func steps(enc *Encoder, text []byte) []int {
	sp := enc.v.spm
	var out []int
	for _, id := range sp.encodeSteps(nil, sp.normalize(nil, text, nil)) {
		out = append(out, int(id))
	}
	return out
}

// checkFastEqualsSteps holds the fast path (cut at marks, cached, merged
// by ranks) to the reference's steps on the whole text: this is what
// makes the cut exact.
func checkFastEqualsSteps(t *testing.T, enc *Encoder, name string, text []byte) {
	t.Helper()
	got, want := enc.Encode(text), steps(enc, text)
	if !slices.Equal(got, want) && !(len(got) == 0 && len(want) == 0) {
		t.Fatalf("%s: Encode(%q) = %v; the reference's steps give %v", name, text, got, want)
	}
	if n := enc.Count(text); n != len(want) {
		t.Fatalf("%s: Count(%q) = %d, want %d", name, text, n, len(want))
	}
}

func randomSPMText(r *rand.Rand, n int) []byte {
	alphabet := []string{"a", "e", "t", "th", "the", "in", "ing", " ", " ", "  ", "\t", "\n", "1", "23", ".", ",",
		"▁", "ﬁ", "日本", "語", "한", "é", "e\u0301", "Ａ", "<sep>", "[MASK]", "##", "morsel", "user defined", "\xff", "\x00", "🚀", "ஆ"}
	var b []byte
	for len(b) < n {
		b = append(b, alphabet[r.IntN(len(alphabet))]...)
	}
	return b
}

func TestSentencePieceFastEqualsSteps(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for k, enc := range spmEncoders(t) {
		for i := 0; i < 300; i++ {
			checkFastEqualsSteps(t, enc, spmModels[k], randomSPMText(r, r.IntN(200)))
		}
		// long stretches with no mark go through the heap merge
		checkFastEqualsSteps(t, enc, spmModels[k], bytes.Repeat([]byte("thethingsin"), 500))
		checkFastEqualsSteps(t, enc, spmModels[k], randomSPMText(r, 20000))
	}
}

// addSPMSeeds seeds a fuzz target with the golden file's inline texts.
func addSPMSeeds(f *testing.F) {
	g := loadSPMGolden(f)
	for _, c := range g.Models[0].Cases {
		if c.Source == "inline" {
			f.Add(spmCaseText(f, c.Source, c.Name, c.Text, c.Hex, c.SHA256))
		}
	}
}

func FuzzSentencePieceFastEqualsSteps(f *testing.F) {
	addSPMSeeds(f)
	encs := spmEncoders(f)
	f.Fuzz(func(t *testing.T, text []byte) {
		for k, enc := range encs {
			checkFastEqualsSteps(t, enc, spmModels[k], text)
		}
	})
}

// testModel builds a model from pieces written "text:score:type" (type
// n, u, c, d for user-defined, x for unused; the score's order is all
// that matters), with <unk> first.
func testModel(t *testing.T, suffix bool, pieces ...string) *Vocab {
	t.Helper()
	cm, _ := charsmap.Parse(nil)
	m := &spmodel.Model{
		Normalizer:              spmodel.Normalizer{Map: cm, AddDummyPrefix: true, RemoveExtraWhitespaces: true, EscapeWhitespaces: true},
		TreatWhitespaceAsSuffix: suffix,
		Pieces:                  []spmodel.Piece{{Text: "<unk>", Type: spmodel.Unknown}},
		StartPiece:              "<s>",
	}
	types := map[string]spmodel.Type{"n": spmodel.Normal, "c": spmodel.Control, "d": spmodel.UserDefined, "x": spmodel.Unused}
	for i, p := range pieces {
		f := strings.Split(p, ":")
		m.Pieces = append(m.Pieces, spmodel.Piece{Text: f[0], Score: -float32(i), Type: types[f[1]]})
	}
	return newSentencePieceVocab(m)
}

func TestCutRule(t *testing.T) {
	for _, c := range []struct {
		name   string
		suffix bool
		pieces []string
		want   cutRule
	}{
		// marks lead pieces: cut before each mark that follows another character
		{"leading marks", false, []string{"▁:n", "a:n", "b:n", "▁a:n", "ab:n", "▁ab:n", "▁▁:n"}, cutBeforeMarks},
		// a piece with a mark after a letter spans such a place: no cut
		{"inner mark", false, []string{"▁:n", "a:n", "b:n", "a▁:n", "a▁b:n"}, cutNone},
		// a user-defined piece counts too
		{"inner mark, user-defined", false, []string{"▁:n", "a:n", "b:n", "x▁y:d"}, cutNone},
		{"trailing marks", true, []string{"▁:n", "a:n", "b:n", "a▁:n", "b▁:n", "▁▁:n"}, cutAfterMarks},
		{"mark before a letter, suffix model", true, []string{"▁:n", "a:n", "b:n", "▁a:n"}, cutNone},
		// no byte fallback and no piece for the mark: a run of unknowns
		// may cross the cut, so none
		{"unknown mark", false, []string{"a:n", "b:n"}, cutNone},
	} {
		v := testModel(t, c.suffix, c.pieces...)
		if v.spm.cut != c.want {
			t.Errorf("%s: cut rule %d, want %d", c.name, v.spm.cut, c.want)
		}
		enc, _ := NewEncoder(v, Options{})
		r := rand.New(rand.NewPCG(3, 4))
		for i := 0; i < 200; i++ {
			var b []byte
			for j := r.IntN(30); j > 0; j-- {
				b = append(b, "ab ▁xyz"[r.IntN(7)])
			}
			checkFastEqualsSteps(t, enc, c.name, b)
		}
	}
}

func TestSentencePieceEdgeCases(t *testing.T) {
	// Expected values worked out by hand from the reference's steps
	// (Debian sentencepiece 0.1.97, bpe_model.cc as it behaves on the
	// golden cases): merged by score, frozen user-defined pieces, runs of
	// unknowns as one, a control piece only from its own lone character.
	v := testModel(t, false, "▁:n", "a:n", "b:n", "c:n", "ab:n", "▁ab:n", "bc:n", "##:d", "¶:c")
	enc, _ := NewEncoder(v, Options{})
	id := func(text string) int { return int(v.spm.pieceID(text)) }
	for _, c := range []struct {
		in   string
		want []int
	}{
		{"ab", []int{id("▁ab")}},
		{"abc", []int{id("▁ab"), id("c")}},             // ▁ab outscores bc
		{"##ab", []int{id("▁"), id("##"), id("ab")}},   // ## never merges
		{"xyz a", []int{id("▁"), 0, id("▁"), id("a")}}, // xyz: one unknown
		{"¶", []int{id("▁"), id("¶")}},                 // the control piece's own text
		{"bca", []int{id("▁"), id("bc"), id("a")}},
	} {
		if got := enc.Encode([]byte(c.in)); !slices.Equal(got, c.want) {
			t.Errorf("Encode(%q) = %v, want %v", c.in, got, c.want)
		}
	}
}

func TestSentencePieceSplitTiles(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for k, enc := range spmEncoders(t) {
		for i := 0; i < 100; i++ {
			text := randomSPMText(r, r.IntN(120))
			at, n := 0, 0
			enc.Split(text, func(a, b int, special bool) {
				if a != at || b <= a {
					t.Fatalf("%s: span [%d,%d) after %d in %q", spmModels[k], a, b, at, text)
				}
				at = b
				n++
			})
			if at != len(text) {
				t.Fatalf("%s: spans end at %d of %d in %q", spmModels[k], at, len(text), text)
			}
			if st, _, err := enc.CountReader(bytes.NewReader(text)); err != nil || st.Tokens != enc.Count(text) {
				t.Fatalf("%s: CountReader %d, %v; Count %d", spmModels[k], st.Tokens, err, enc.Count(text))
			}
		}
	}
}

// Pieces cut where two ASCII characters merge apart (findApart) encode as
// the reference's steps encode the whole text: random printable ASCII,
// paths and punctuation, under every test model.
func TestSentencePiecePartsEqualSteps(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	words := []string{"/usr/share/doc/", "e.g.", "(see", "foo_bar", "--", "x86_64", "v1.2.3", "a,b;c", "https://", "\"q\"", "[1]"}
	for k, enc := range spmEncoders(t) {
		sp, cuts := enc.v.spm, 0
		for range 300 {
			var text []byte
			for len(text) < r.IntN(120) {
				if r.IntN(3) == 0 {
					text = append(text, words[r.IntN(len(words))]...)
				} else {
					text = append(text, byte(' '+r.IntN(95)))
				}
			}
			if sp.anyApart && sp.apartAt(text) < len(text) {
				cuts++
			}
			checkFastEqualsSteps(t, enc, spmModels[k], text)
		}
		if spmModels[k] == "nfkc-bytes.model" && cuts == 0 {
			t.Errorf("%s: no text was cut into parts", spmModels[k])
		}
	}
}
