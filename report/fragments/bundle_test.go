package fragments

import (
	"bytes"
	"slices"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/report/internal/reporttest"
	"morsel/report/render"
)

// Under a bundle whose normalizer puts a marker before the text
// (metaspace-32k prepends "▁"), the tokens spell one byte more than the
// text; the words are read from what they spell, and the words and their
// pieces come out as they read there.
func TestScanTextUnderMetaspaceBundle(t *testing.T) {
	enc := metaspaceEncoder(t)
	f := NewFragmenter(enc, nil)
	text := []byte("Hello quillandri hello")
	dw, err := f.ScanText(text)
	if err != nil {
		t.Fatal(err)
	}
	if dw.Tokens != enc.Count(text) || dw.All.Words != 3 {
		t.Fatalf("%d tokens (Count %d), %d words; want 3 words", dw.Tokens, enc.Count(text), dw.All.Words)
	}
}

// metaspaceEncoder returns an encoder for the metaspace-32k bundle, which
// has byte fallback.
func metaspaceEncoder(t *testing.T) *bpe.Encoder {
	t.Helper()
	return reporttest.BundleEncoder(t, "metaspace-32k")
}

// The words that the vocabulary spells only in byte-fallback tokens get a
// ranking of their own, in every format; the expected words are found
// apart from the tallies, from the pieces (bpe.Encoder.Pieces) that
// overlap each word where it stands in the text.
func TestByteFallbackRanking(t *testing.T) {
	enc := metaspaceEncoder(t)
	v := enc.Vocab()
	words := []string{"harbor", "\U00010348\U00010348", "\U00010330", "quillandri", "\U0001D518\U0001D52B", "x\U00010348"}
	text := strings.Join(append(words, words[1], words[1], words[2]), " ")
	fallbackOnly := map[string]bool{}
	for _, w := range words {
		fallbackOnly[w] = true
	}
	enc.Pieces([]byte(text), func(id, start, end int) {
		for at := 0; at < len(text); {
			k := strings.IndexByte(text[at:], ' ')
			if k < 0 {
				k = len(text) - at
			}
			if start < at+k && end > at && !v.IsByteFallback(id) {
				fallbackOnly[text[at:at+k]] = false
			}
			at += k + 1
		}
	})
	var want []string
	for w, only := range fallbackOnly {
		if only {
			want = append(want, w)
		}
	}
	if len(want) < 2 || fallbackOnly["harbor"] || fallbackOnly["x\U00010348"] {
		t.Fatalf("the probe words spelled only in fallback tokens are %q; the test needs at least two and none with a letter of the vocabulary", want)
	}
	f := NewFragmenter(enc, nil)
	dw, err := f.ScanText([]byte(text))
	if err != nil {
		t.Fatal(err)
	}
	f.AddWords("a.txt", 0, dw)
	r := f.Finish(Options{MinPieces: 2, MinCount: 1}, nil)
	var got []string
	for _, fr := range r.Fallback {
		got = append(got, fr.Word)
	}
	slices.Sort(got)
	slices.Sort(want)
	if !slices.Equal(got, want) || r.Totals.FallbackWords != len(want) || r.Totals.FallbackListed != len(want) {
		t.Fatalf("fallback ranking %q (totals %d, %d), want %q", got, r.Totals.FallbackWords, r.Totals.FallbackListed, want)
	}
	if r.Fallback[0].Word != words[1] {
		t.Errorf("first in the ranking %q, want %q (three occurrences, the most excess)", r.Fallback[0].Word, words[1])
	}
	for _, c := range []struct {
		f    render.Format
		want string
	}{
		{render.Table, "Words spelled only in byte-fallback tokens"},
		{render.Markdown, "Words spelled only in byte-fallback tokens"},
		{render.CSV, ",byte-fallback,"},
		{render.JSON, `"byte_fallback_words": [`},
	} {
		var b bytes.Buffer
		if err := Write(&b, c.f, r, 0); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), c.want) || !strings.Contains(b.String(), words[1]) {
			t.Errorf("%s: no %q or no %q in\n%s", c.f, c.want, words[1], b.String())
		}
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, r, 0); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), `id="byte-fallback"`) {
		t.Error("the page has no byte-fallback section")
	}
}
