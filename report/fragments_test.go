package report

import (
	"bufio"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/rivo/uniseg"

	"morsel/bpe"
)

func fragEncoder(t testing.TB) *bpe.Encoder {
	t.Helper()
	enc, err := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return enc
}

// boundaries returns the word-boundary offsets nextSegment finds in text,
// 0 and len(text) included.
func boundaries(text []byte) []int {
	out := []int{0}
	for s := 0; s < len(text); {
		s = nextSegment(text, s)
		out = append(out, s)
	}
	return out
}

// unisegBoundaries returns the boundaries uniseg finds running over the
// whole text with its state carried along.
func unisegBoundaries(text []byte) []int {
	out := []int{0}
	at, state := 0, -1
	for rest := text; len(rest) > 0; {
		var seg []byte
		seg, rest, state = uniseg.FirstWord(rest, state)
		at += len(seg)
		out = append(out, at)
	}
	return out
}

// TestWordBreakTest checks the word boundaries against every case of
// WordBreakTest.txt, Unicode 15.0.0 (testdata/unicode), the version
// github.com/rivo/uniseg v0.4.7 implements.
func TestWordBreakTest(t *testing.T) {
	f, err := os.Open("../testdata/unicode/WordBreakTest-15.0.0.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	cases := 0
	for line := 1; sc.Scan(); line++ {
		data, _, _ := strings.Cut(sc.Text(), "#")
		fields := strings.Fields(data)
		if len(fields) == 0 {
			continue
		}
		var text []byte
		want := []int{}
		for _, fl := range fields {
			switch fl {
			case "÷":
				want = append(want, len(text))
			case "×":
			default:
				cp, err := strconv.ParseUint(fl, 16, 32)
				if err != nil {
					t.Fatalf("line %d: %q", line, fl)
				}
				text = append(text, string(rune(cp))...)
			}
		}
		if got := boundaries(text); !slices.Equal(got, want) {
			t.Errorf("line %d: %q: boundaries %v, want %v", line, text, got, want)
		}
		cases++
	}
	if cases != 1823 {
		t.Fatalf("read %d cases, want the file's 1823", cases)
	}
}

// segmentSamples mix the characters whose word-break rules interact: the
// ASCII classes, and letters, marks, formats, spaces and symbols beyond.
var segmentSamples = []string{
	"a.b a..b 3.5 3,5 3;5 a:b a'b 3's don't U.S.A. e.g. x_y _x x_ __ 12_ab",
	"café naïve e\u0301t\u00e9 \u00a0a\u00a0 a\u200db a\u00adb a \u0301b  \u0301",
	"QX-7731-Rb TH9-0044/K (3.5) \"quoted\" 'single' a\r\nb\rc\nd\ve\ff",
	"Кряжево, прошивки; ελληνικά. שלום \"ש\"ש 数据 キリサキ ひらがな 한국어 मरम्मत",
	"🇦🇧🇨 👍🏽 a👍 1\u066b5 ٣٫٤ x\u2060y \u3000\u3000a",
	"", " ", "a", ".", "_", "\u0301", "a ", " a", "a.", ".a", "'s", "3'", "a.\u0301b",
}

// TestSegmentsMatchUniseg checks that starting uniseg afresh at each
// boundary, and deciding ASCII alone, finds what uniseg finds in one run.
func TestSegmentsMatchUniseg(t *testing.T) {
	for _, s := range segmentSamples {
		if got, want := boundaries([]byte(s)), unisegBoundaries([]byte(s)); !slices.Equal(got, want) {
			t.Errorf("%q: boundaries %v, uniseg %v", s, got, want)
		}
	}
}

func FuzzSegments(f *testing.F) {
	for _, s := range segmentSamples {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if got, want := boundaries([]byte(s)), unisegBoundaries([]byte(s)); !slices.Equal(got, want) {
			t.Fatalf("%q: boundaries %v, uniseg %v", s, got, want)
		}
	})
}

// wordCounts returns the words of the texts by uniseg run whole, counted.
func wordCounts(texts ...string) map[string]int64 {
	out := map[string]int64{}
	for _, s := range texts {
		b := unisegBoundaries([]byte(s))
		for i := 1; i < len(b); i++ {
			if w := s[b[i-1]:b[i]]; hasWordChar([]byte(w)) {
				out[w]++
			}
		}
	}
	return out
}

// FuzzScanWords checks that the scan, with its inline fast paths, finds
// the words uniseg finds, each with at least one piece.
func FuzzScanWords(f *testing.F) {
	for _, s := range segmentSamples {
		f.Add(s)
	}
	enc := fragEncoder(f)
	f.Fuzz(func(t *testing.T, s string) {
		fr := NewFragmenter(enc, nil)
		dw, err := fr.ScanText([]byte(s))
		if err != nil {
			t.Fatal(err)
		}
		got := fr.mergeShards()
		want := wordCounts(s)
		if len(got) != len(want) {
			t.Fatalf("%q: %d distinct words, want %d", s, len(got), len(want))
		}
		for w, n := range want {
			if g := got[w]; g == nil || g.count != n || g.pieces < n {
				t.Fatalf("%q: word %q: %+v, want count %d", s, w, g, n)
			}
		}
		var words int64
		for _, n := range want {
			words += n
		}
		if dw.All.Words != words {
			t.Fatalf("%q: fertility counts %d words, want %d", s, dw.All.Words, words)
		}
	})
}

func TestScanWordsSamples(t *testing.T) {
	enc := fragEncoder(t)
	fr := NewFragmenter(enc, nil)
	for _, s := range segmentSamples {
		if _, err := fr.ScanText([]byte(s)); err != nil {
			t.Fatal(err)
		}
	}
	got := fr.mergeShards()
	want := wordCounts(segmentSamples...)
	if len(got) != len(want) {
		t.Fatalf("%d distinct words, want %d", len(got), len(want))
	}
	for w, n := range want {
		if g := got[w]; g == nil || g.count != n {
			t.Errorf("word %q: %+v, want count %d", w, g, n)
		}
	}
}

// TestFragmentsByHand checks the ranking and the excess arithmetic on two
// small documents. The GPT-2 splits (bpe/gpt2 vocabulary and merges, as
// morsel pieces shows them) are: "the", " the", " and" one token each;
// " fluvantrazine" ␣flu|vant|raz|ine, 4; " Kelderwick" ␣Ke|lder|wick, 3.
//
//	doc 1 "the fluvantrazine and the fluvantrazine": 1+4+1+1+4 = 11 tokens
//	doc 2 " Kelderwick fluvantrazine":                3+4       =  7 tokens
//
// fluvantrazine: 3 occurrences in 2 documents, 4 pieces, excess 3 x (4-1) = 9.
// Kelderwick:    1 occurrence, 3 pieces, excess 1 x (3-1) = 2.
// the: 2 x 1 piece, and: 1 x 1 piece, excess 0.
// Listed at --min-pieces 3: fluvantrazine, then Kelderwick; excess 9+2 = 11
// of 18 tokens, a saving of at most 11/18 = 0.6111.
// Fertility: 7 words, 18 word pieces, 3 of the 7 words one token.
func TestFragmentsByHand(t *testing.T) {
	enc := fragEncoder(t)
	build := func() *Fragmenter {
		fr := NewFragmenter(enc, nil)
		for i, s := range []string{"the fluvantrazine and the fluvantrazine", " Kelderwick fluvantrazine"} {
			dw, err := fr.ScanText([]byte(s))
			if err != nil {
				t.Fatal(err)
			}
			fr.AddWords("doc", i+1, dw)
		}
		return fr
	}
	r := build().Finish(FragmentOptions{MinPieces: 3, MinCount: 1})
	if len(r.Words) != 2 {
		t.Fatalf("words %+v", r.Words)
	}
	fl, ke := r.Words[0], r.Words[1]
	if fl.Word != "fluvantrazine" || fl.Count != 3 || fl.Documents != 2 || fl.Pieces != 4 || fl.Excess != 9 ||
		!slices.Equal(fl.Split, []string{" flu", "vant", "raz", "ine"}) || fl.SplitShare != 1 {
		t.Errorf("first %+v", fl)
	}
	if ke.Word != "Kelderwick" || ke.Count != 1 || ke.Documents != 1 || ke.Pieces != 3 || ke.Excess != 2 ||
		!slices.Equal(ke.Split, []string{" Ke", "lder", "wick"}) {
		t.Errorf("second %+v", ke)
	}
	tt := r.Totals
	if tt.Documents != 2 || tt.Tokens != 18 || tt.Words != 7 || tt.DistinctWords != 4 || tt.Qualifying != 2 ||
		tt.ListedExcess != 11 || tt.Saving != 0.6111 {
		t.Errorf("totals %+v", tt)
	}
	fe := r.Fertility
	if fe.Words != 7 || fe.WordTokens != 18 || fe.OneTokenShare != 0.4286 || len(fe.ByScript) != 1 ||
		fe.ByScript[0].Script != "Latin" || fe.ByScript[0].OneToken != 3 {
		t.Errorf("fertility %+v", fe)
	}
	if d := fe.Documents; len(d) != 2 || d[0].Tokens != 11 || d[0].Words != 5 || d[0].WordTokens != 11 || d[1].Fertility != 3.5 {
		t.Errorf("documents %+v", d)
	}

	for _, c := range []struct {
		opt   FragmentOptions
		words []string
	}{
		{FragmentOptions{MinPieces: 4, MinCount: 1}, []string{"fluvantrazine"}},
		{FragmentOptions{MinPieces: 3, MinCount: 2}, []string{"fluvantrazine"}},
		{FragmentOptions{MinPieces: 3, MinCount: 1, Top: 1}, []string{"fluvantrazine"}},
		{FragmentOptions{MinPieces: 1, MinCount: 1}, []string{"fluvantrazine", "Kelderwick", "the", "and"}},
		{FragmentOptions{MinPieces: 5, MinCount: 1}, nil},
	} {
		r := build().Finish(c.opt)
		var got []string
		for _, w := range r.Words {
			got = append(got, w.Word)
		}
		if !slices.Equal(got, c.words) {
			t.Errorf("%+v: %v, want %v", c.opt, got, c.words)
		}
	}
}

// TestStraddlingTokens pins the in-context rule for tokens at word
// boundaries. GPT-2 pre-tokenization (its published split pattern) cuts
// "3.5" into "3", ".", "5" and "3's" into "3", "'s"; UAX #29 (WB11, WB12)
// makes "3.5" one word and "3's" the words "3" and "s".
func TestStraddlingTokens(t *testing.T) {
	enc := fragEncoder(t)
	fr := NewFragmenter(enc, nil)
	if _, err := fr.ScanText([]byte("(3.5) 3's")); err != nil {
		t.Fatal(err)
	}
	got := fr.mergeShards()
	for w, pieces := range map[string]int64{"3.5": 3, "3": 1, "s": 1} {
		if g := got[w]; g == nil || g.pieces != pieces {
			t.Errorf("%q: %+v, want %d pieces", w, g, pieces)
		}
	}
	if len(got) != 3 {
		t.Errorf("words %v", got)
	}
	if sp := got["s"].splits[0]; len(sp.ids) != 1 || string(mustToken(t, enc, sp.ids[0])) != "'s" {
		t.Errorf("the piece of \"s\" is %v, want the token \"'s\"", sp.ids)
	}
}

func mustToken(t *testing.T, enc *bpe.Encoder, id uint32) []byte {
	tok, ok := enc.Vocab().Token(int(id))
	if !ok {
		t.Fatalf("id %d", id)
	}
	return tok
}
