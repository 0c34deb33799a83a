package fragments

import (
	"os"
	"slices"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report/internal/reporttest"
	"morsel/report/measure"
	"morsel/report/walk"
)

// TestTokenInfo checks the token classes scanTokens reads words by.
func TestTokenInfo(t *testing.T) {
	for _, c := range []struct {
		tok    string
		class  uint16
		letter bool
	}{
		{"foo", tokAlnum, true}, {"2024", tokAlnum, false}, {" foo", tokGapAlnum, true}, {"(12", tokGapAlnum, false},
		{"\n\t\t12", tokOther, false}, {" (", tokGap, false}, {"\r\n", tokGap, false},
		{".", tokPunct, false}, {"),\n", tokPunct, false}, {".foo", tokOther, false}, {"_x", tokOther, false},
		{"x_", tokOther, false}, {"'s", tokOther, false}, {"_", tokOther, false}, {"x'", tokOther, false},
		{"é", tokOther, false}, {"\"", tokGap, false}, {"a.b", tokOther, false}, {"(x)", tokOther, false},
		{strings.Repeat("a", 1022), tokAlnum, true}, {strings.Repeat("a", 1023), tokOther, false},
	} {
		in := tokenInfo([]byte(c.tok))
		if in&infoClass != c.class || (in&infoLetter != 0) != c.letter {
			t.Errorf("%q: info %#x, want class %#x, letter %v", c.tok, in, c.class, c.letter)
		}
		if c.class != tokOther && int(in&infoLen) != len(c.tok) {
			t.Errorf("%q: length %d", c.tok, in&infoLen)
		}
		if len(c.tok) >= infoLen && in&infoLen != 0 {
			t.Errorf("a %d-byte token: length %d, want 0 (looked up)", len(c.tok), in&infoLen)
		}
		if gapFirst := isGap(c.tok[0]); (in&infoGapFirst != 0) != gapFirst {
			t.Errorf("%q: gap first %v", c.tok, !gapFirst)
		}
	}
}

// wordCounts returns the words of the texts by uniseg run whole, counted.
func wordCounts(texts ...string) map[string]int64 {
	out := map[string]int64{}
	for _, s := range texts {
		b := reporttest.UnisegBoundaries([]byte(s))
		for i := 1; i < len(b); i++ {
			if w := s[b[i-1]:b[i]]; measure.HasWordChar([]byte(w)) {
				out[w]++
			}
		}
	}
	return out
}

// wordPieces returns, for the words of text by uniseg run whole, their
// pieces summed over their occurrences, found the plain way: the tokens
// of Encode whose bytes overlap the word's.
func wordPieces(enc *bpe.Encoder, text string) map[string]int64 {
	var ends []int
	pos := 0
	for _, id := range enc.Encode([]byte(text)) {
		tok, _ := enc.Vocab().Token(id)
		pos += len(tok)
		ends = append(ends, pos)
	}
	out := map[string]int64{}
	b := reporttest.UnisegBoundaries([]byte(text))
	for i := 1; i < len(b); i++ {
		w := text[b[i-1]:b[i]]
		if !measure.HasWordChar([]byte(w)) {
			continue
		}
		start := 0
		for _, end := range ends {
			if end > b[i-1] && start < b[i] {
				out[w]++
			}
			start = end
		}
	}
	return out
}

// FuzzScanWords checks that the scan, with its inline fast paths, finds
// the words uniseg finds, each with the pieces wordPieces finds.
func FuzzScanWords(f *testing.F) {
	for _, s := range reporttest.SegmentSamples {
		f.Add(s)
	}
	enc := reporttest.Encoder(f)
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
		pieces := wordPieces(enc, s)
		for w, n := range want {
			if g := got[w]; g == nil || g.count != n || g.pieces != pieces[w] {
				t.Fatalf("%q: word %q: %+v, want count %d, pieces %d", s, w, g, n, pieces[w])
			}
		}
		var words, tokens int64
		var byScript [measure.NumScripts]ScriptTally
		for w, n := range want {
			words += n
			tokens += pieces[w]
			sc := measure.WordScript([]byte(w))
			byScript[sc].Words += n
			byScript[sc].Tokens += pieces[w]
		}
		if dw.All.Words != words || dw.All.Tokens != tokens {
			t.Fatalf("%q: fertility counts %d words in %d pieces, want %d in %d", s, dw.All.Words, dw.All.Tokens, words, tokens)
		}
		for sc := range byScript {
			if g, w := dw.ByScript[sc], byScript[sc]; g.Words != w.Words || g.Tokens != w.Tokens {
				t.Fatalf("%q: script %v: %d words in %d pieces, want %d in %d", s, measure.Script(sc), g.Words, g.Tokens, w.Words, w.Tokens)
			}
		}
	})
}

func TestScanWordsSamples(t *testing.T) {
	enc := reporttest.Encoder(t)
	fr := NewFragmenter(enc, nil)
	for _, s := range reporttest.SegmentSamples {
		if _, err := fr.ScanText([]byte(s)); err != nil {
			t.Fatal(err)
		}
	}
	got := fr.mergeShards()
	want := wordCounts(reporttest.SegmentSamples...)
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
	enc := reporttest.Encoder(t)
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
	r := build().Finish(Options{MinPieces: 3, MinCount: 1}, nil)
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
	if d := slices.Collect(fe.Documents.All()); len(d) != 2 || d[0].Tokens != 11 || d[0].Words != 5 || d[0].WordTokens != 11 || d[1].Fertility != 3.5 {
		t.Errorf("documents %+v", d)
	}

	for _, c := range []struct {
		opt   Options
		words []string
	}{
		{Options{MinPieces: 4, MinCount: 1}, []string{"fluvantrazine"}},
		{Options{MinPieces: 3, MinCount: 2}, []string{"fluvantrazine"}},
		{Options{MinPieces: 3, MinCount: 1, Top: 1}, []string{"fluvantrazine"}},
		{Options{MinPieces: 1, MinCount: 1}, []string{"fluvantrazine", "Kelderwick", "the", "and"}},
		{Options{MinPieces: 5, MinCount: 1}, nil},
	} {
		r := build().Finish(c.opt, nil)
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
	enc := reporttest.Encoder(t)
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
	if sp := got["s"].splits[0]; len(sp.IDs) != 1 || string(mustToken(t, enc, sp.IDs[0])) != "'s" {
		t.Errorf("the piece of \"s\" is %v, want the token \"'s\"", sp.IDs)
	}
}

func mustToken(t *testing.T, enc *bpe.Encoder, id uint32) []byte {
	tok, ok := enc.Vocab().Token(int(id))
	if !ok {
		t.Fatalf("id %d", id)
	}
	return tok
}

// TestGlossaryTerms checks term matching on word boundaries and the pieces
// of each term alone and after a space. GPT-2 splits (bpe/gpt2): "oxymeridol"
// oxy|mer|id|ol, 4, and " oxymeridol" ␣oxy|mer|id|ol, 4; " storm" one token.
func TestGlossaryTerms(t *testing.T) {
	enc := reporttest.Encoder(t)
	terms := []Term{{"oxymeridol", 1}, {"RV Marrowgull", 2}, {"storm", 3}, {"QX-7731-Rb", 4}}
	fr := NewFragmenter(enc, terms)
	for i, s := range []string{
		// oxymeridol: 2 (not "oxymeridols", which is another word);
		// RV Marrowgull: 1 (not "RV Marrowgulls"); storm: 1 (not "stormy").
		"oxymeridol, oxymeridols and oxymeridol. RV Marrowgull met RV Marrowgulls in a stormy storm",
		// QX-7731-Rb: 2, the second before a Katakana word (a boundary).
		"QX-7731-Rb QX-7731-Rbx QX-7731-Rbセル",
	} {
		dw, err := fr.ScanText([]byte(s))
		if err != nil {
			t.Fatal(err)
		}
		fr.AddWords("doc", i+1, dw)
	}
	r := fr.Finish(Options{MinPieces: 3, MinCount: 1}, nil)
	want := []struct {
		occ, docs int
		flagged   bool
	}{{2, 1, true}, {1, 1, true}, {1, 1, false}, {2, 1, true}}
	for i, w := range want {
		tr := r.Terms[i]
		if tr.Occurrences != int64(w.occ) || tr.Documents != w.docs || tr.Flagged != w.flagged {
			t.Errorf("%s: %+v, want %+v", tr.Term, tr, w)
		}
	}
	ox := r.Terms[0]
	if ox.PiecesAlone != 4 || ox.PiecesAfterSpace != 4 || !slices.Equal(ox.SplitAfterSpace, []string{" oxy", "mer", "id", "ol"}) {
		t.Errorf("oxymeridol: %+v", ox)
	}
	// In context: the first occurrence starts the text (oxy|mer|id|ol), the
	// second follows a space (␣oxy|mer|id|ol): 8 pieces, excess 8-2 = 6.
	if ox.CorpusPieces != 4 || ox.Excess != 6 {
		t.Errorf("oxymeridol in context: %+v", ox)
	}
	if st := r.Terms[2]; st.PiecesAfterSpace != 1 || st.Excess != 0 {
		t.Errorf("storm: %+v", st)
	}
	if r.Totals.FlaggedTerm != 3 {
		t.Errorf("flagged %d", r.Totals.FlaggedTerm)
	}
}

// TestDemoPlantedTermsOnTop runs over the demo corpus, whose README lists
// the invented terms planted there: the words ranked first are all parts of
// those terms, and every planted term is flagged while the contrast words
// of terms.txt are not.
func TestDemoPlantedTermsOnTop(t *testing.T) {
	planted := map[string]bool{}
	for _, term := range []string{"QX-7731-Rb", "TH9-0044/K", "MRV-2210-Sx", "fluvantrazine", "oxymeridol", "cerulaphane",
		"Bathyphorus quillandri", "Pelagonyx harrowensis", "Thalassodrix venmorei", "Vennskarth Sound", "Kelderwick",
		"Tregallowmouth", "RV Marrowgull", "Saltmarrow Tidal Instruments"} {
		for _, w := range strings.FieldsFunc(term, func(r rune) bool { return r == ' ' || r == '-' || r == '/' }) {
			planted[w] = true
		}
	}
	gf, err := os.Open("../../testdata/demo/settings/terms.txt")
	if err != nil {
		t.Fatal(err)
	}
	terms, err := ParseGlossary("terms.txt", gf)
	gf.Close()
	if err != nil {
		t.Fatal(err)
	}
	fr := NewFragmenter(reporttest.Encoder(t), terms)
	err = walk.Walk([]string{"../../testdata/demo/docs"}, corpus.Options{}, 2, nil, fr.Scan,
		func(it corpus.Item, dw *DocWords, err error) error {
			if it.Doc != nil && err == nil {
				fr.AddWords(it.Doc.Source, it.Doc.Record, dw)
			}
			return err
		})
	if err != nil {
		t.Fatal(err)
	}
	r := fr.Finish(Options{MinPieces: 3, MinCount: 1, Top: 10}, nil)
	if len(r.Skipped) != 0 {
		t.Errorf("skipped %+v", r.Skipped)
	}
	const top = 8
	for i, w := range r.Words[:top] {
		if !planted[w.Word] {
			t.Errorf("rank %d: %q (excess %d) is not part of a planted term", i+1, w.Word, w.Excess)
		}
	}
	if r.Words[0].Word != "fluvantrazine" {
		t.Errorf("first %+v", r.Words[0])
	}
	for _, tr := range r.Terms {
		_, isPlanted := planted[strings.Fields(tr.Term)[0]]
		switch {
		case isPlanted && !tr.Flagged:
			t.Errorf("planted %q is not flagged: %+v", tr.Term, tr)
		case slices.Contains([]string{"buoy", "sensor", "storm", "harbour", "battery", "valve"}, tr.Term) && tr.Flagged:
			t.Errorf("contrast word %q is flagged: %+v", tr.Term, tr)
		}
		if isPlanted && tr.Occurrences < 10 {
			t.Errorf("planted %q occurs %d times; the README says 12 or more", tr.Term, tr.Occurrences)
		}
	}
}

// TestByTokenTags flushes the batch after every text, through as many
// batches as the one-token look-up has tags (127, tally's numTags): "the" is the fourth word of the first batch
// and the first word of the 128th, so an entry kept from 127 flushes back
// would count it in another word's entry.
func TestByTokenTags(t *testing.T) {
	fr := NewFragmenter(reporttest.Encoder(t), nil)
	for r := range 128 {
		text := "cat"
		switch r {
		case 0:
			text = "cat,dog,and,the"
		case 127:
			text = "the,cat"
		}
		if _, err := fr.ScanText([]byte(text)); err != nil {
			t.Fatal(err)
		}
		for _, sh := range fr.shards {
			sh.local.Flush(fr.words)
		}
	}
	got := fr.mergeShards()
	for w, n := range map[string]int64{"the": 2, "cat": 128, "and": 1, "dog": 1} {
		if g := got[w]; g == nil || g.count != n || g.docs != int(n) || g.pieces != n {
			t.Errorf("%q: %+v, want %d occurrences of one piece in as many documents", w, g, n)
		}
	}
	if len(got) != 4 {
		t.Errorf("%d words, want 4", len(got))
	}
}
