package ration

import (
	"bytes"
	"errors"
	"math/rand"
	"slices"
	"strings"
	"sync/atomic"
	"testing"
	"unicode/utf8"

	"morsel/bpe"
	"morsel/report/internal/reporttest"
	"morsel/report/request"
)

// The plan under a bundle with free cuts, counted stretch by stretch and
// read in a window, is held to the whole-text path's (Generic: the
// document encoded whole, its marks at every token's end, every framed
// chunk counted whole), chunk for chunk.

var qwenEnc atomic.Pointer[bpe.Encoder]

// qwen3Encoder returns the qwen3 test bundle's encoder, loaded once.
func qwen3Encoder(t testing.TB) *bpe.Encoder {
	t.Helper()
	if enc := qwenEnc.Load(); enc != nil {
		return enc
	}
	enc := reporttest.BundleEncoder(t, "qwen3")
	if !enc.FreeCuts() {
		t.Fatal("the qwen3 bundle no longer has free cuts: the plans below would all be the whole-text path's")
	}
	qwenEnc.Store(enc)
	return enc
}

// wholePath returns r counting every chunk whole.
func wholePath(r *Rationer) *Rationer {
	w := *r
	w.Generic = true
	return &w
}

// bundleTexts returns the texts the bundle's plans are checked on.
func bundleTexts(t testing.TB) map[string][]byte {
	out := map[string][]byte{}
	for name, text := range reporttest.RealTexts(t) {
		if len(text) > 40000 {
			text = text[:40000]
		}
		out[name] = text
	}
	prose := "The keeper counts the boats at dawn. The tide turns late.\nA gull cries over the mole; nobody answers it.\n\n"
	out["crlf"] = []byte(strings.Repeat(strings.ReplaceAll(prose, "\n", "\r\n"), 40))
	out["cjk"] = []byte(strings.Repeat("港の灯台守は夜明けに船を数える。潮は遅く変わる。\n", 120))
	out["no cut places"] = []byte(strings.Repeat(`{"k":[1,2,3],"v":"x-y_z"}`, 400) + "\n" + strings.Repeat("q", 5000))
	out["long lines"] = []byte(strings.Repeat("word ", 3000) + "\n" + strings.Repeat("日本語", 2000) + " end of it all\n" + strings.Repeat(prose, 10))
	// NFC composes e + U+0301 into one character (the text shrinks) and
	// takes U+0958 apart into two (it grows): the marks then fall off the
	// text's own offsets, in the same way on both paths.
	out["decomposed"] = []byte(strings.Repeat("Cafe\u0301 au lait, re\u0301sume\u0301 of the de\u0301ja\u0300 vu. ", 200))
	out["lengthened"] = []byte(strings.Repeat("The \u0958\u0959\u095a word grows under NFC, and so does \u095b\u095c. ", 150) + strings.Repeat("\u0958", 600))
	return out
}

// bundleFrames are no frame, the demo's (with line breaks), one without
// line breaks, and one that joins the document's first and last words.
func bundleFrames(t testing.TB) []*request.Frame {
	var out []*request.Frame
	for _, f := range []string{"Summarize {{document}} in one line, please.", "Text:{{document}}end"} {
		fr, err := request.ParseFrame("f", []byte(f))
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, fr)
	}
	return append([]*request.Frame{nil, demoFrame(t)}, out...)
}

// samePlan fails t unless r's Cut of text gives ref's chunks, tokens and
// error.
func samePlan(t testing.TB, r, ref *Rationer, name string, text []byte) {
	t.Helper()
	want, wtok, werr := ref.Cut(name, 1, text, true)
	got, gtok, gerr := r.Cut(name, 1, text, true)
	if (werr == nil) != (gerr == nil) || werr != nil && werr.Error() != gerr.Error() {
		t.Fatalf("%s: whole-text path: %v; stretch by stretch: %v", name, werr, gerr)
	}
	if gtok != wtok {
		t.Fatalf("%s: %d document tokens, the whole-text path %d", name, gtok, wtok)
	}
	if !slices.Equal(got, want) {
		for i := range min(len(got), len(want)) {
			if got[i] != want[i] {
				t.Fatalf("%s: chunk %d: %+v, the whole-text path %+v", name, i, got[i], want[i])
			}
		}
		t.Fatalf("%s: %d chunks, the whole-text path %d", name, len(got), len(want))
	}
	if werr == nil {
		checkPlan(t, ref, name, text, want)
	}
}

func TestBundlePlanEqualsWhole(t *testing.T) {
	enc := qwen3Encoder(t)
	texts := bundleTexts(t)
	names := make([]string, 0, len(texts))
	for name := range texts {
		names = append(names, name)
	}
	slices.Sort(names)
	frames := bundleFrames(t)
	rng := rand.New(rand.NewSource(23))
	for i, name := range names {
		for j, budget := range []int{12, 40, 300, 2000} {
			for _, overlap := range []int{0, budget / 5} {
				fr := frames[(i+j)%len(frames)]
				r := &Rationer{Enc: enc, Frame: fr, Budget: budget, Overlap: overlap, Overhead: j % 2}
				if fr != nil {
					r.Budget += 40
				}
				samePlan(t, r, wholePath(r), name, texts[name])
				streamAgrees(t, r, wholePath(r), name, texts[name], rng, 1+rng.Intn(3000), []int{1, 64, 4096}[(i+j)%3])
			}
		}
	}
}

// TestBundleCountsPiecewise makes sure the plans above come from the
// stretch-by-stretch count: prose under qwen3 is cut in many stretches,
// and a framed chunk's count is assembled from its interior.
func TestBundleCountsPiecewise(t *testing.T) {
	enc := qwen3Encoder(t)
	text := bytes.Repeat([]byte("The keeper counts the boats at dawn.\nNobody answers the gull.\n\n"), 400)
	r := &Rationer{Enc: enc, Frame: demoFrame(t), Budget: 3000}
	c := r.newCutter("p", text, nil)
	if c.generic || !c.fine || len(c.cuts) < 20 {
		t.Fatalf("generic %v, fine %v, %d stretches: want the piecewise count", c.generic, c.fine, len(c.cuts))
	}
	if c.tokens() != int64(enc.Count(text)) {
		t.Fatalf("the stretches sum to %d tokens, the whole text has %d", c.tokens(), enc.Count(text))
	}
	for _, se := range [][2]int{{0, 5000}, {17, 12001}, {2, 2}, {3000, 3100}} {
		s, e := se[0], se[1]
		if s == e {
			e = len(text)
		}
		want := enc.Count(r.Frame.Assemble("p", text[s:e]))
		if got := c.framed(s, e); got != want {
			t.Errorf("framed [%d, %d): %d tokens, counted whole %d", s, e, got, want)
		}
	}
	// Without free cuts (metaspace-32k prepends a marker to every text)
	// the document is read and counted whole.
	meta := reporttest.BundleEncoder(t, "metaspace-32k")
	if meta.FreeCuts() || !(&Rationer{Enc: meta}).whole() {
		t.Fatal("metaspace-32k: want the whole-text path")
	}
}

// TestCutAtIsSafeCut holds the cutter's places to the rule the marks have
// always had under GPT-2 (refSafeCut): the encoder's free cuts after a
// whole character, and at a whole text's last byte. The encoder also cuts
// after a byte that is not UTF-8, before white space; the cutter leaves
// those out, so that the plans stay where they were.
func TestCutAtIsSafeCut(t *testing.T) {
	enc := reporttest.Encoder(t)
	c := (&Rationer{Enc: enc, Budget: 100}).newCutter("x", nil, nil)
	alpha := []byte{' ', '\t', '\n', '\r', '\v', '\f', 'a', '.', '7', 0x80, 0x85, 0xa0, 0xc2, 0xc3, 0xa9, 0xe3, 0x81, 0x82, 0xe2, 0x80, 0xef, 0xbb, 0xbf, 0x1c, 0x1f, 0x00}
	rng := rand.New(rand.NewSource(3))
	looser := 0
	for n := 0; n < 100000; n++ {
		b := make([]byte, 1+rng.Intn(9))
		for i := range b {
			b[i] = alpha[rng.Intn(len(alpha))]
		}
		for i := 1; i < len(b); i++ {
			want := refSafeCut(b, i)
			got := c.cutAt(b, i)
			if i == len(b)-1 {
				got = c.endCut(b)
			}
			if got != want {
				t.Fatalf("%q at %d: cutter %v, GPT-2 rule %v", b, i, got, want)
			}
			if i < len(b)-1 && enc.FreeCutAt(b, i) != want {
				if r, size := utf8.DecodeLastRune(b[:i]); want || r != utf8.RuneError || size > 1 {
					t.Fatalf("%q at %d: FreeCutAt %v, GPT-2 rule %v", b, i, !want, want)
				}
				looser++
			}
		}
	}
	if looser == 0 {
		t.Fatal("no place after a byte that is not UTF-8 was tried")
	}
}

// refSafeCut is the rule the marks were placed by before the encoder knew
// its free cuts: a character other than white space (a byte that is not
// UTF-8 is none) followed by an ASCII white-space byte.
func refSafeCut(t []byte, i int) bool {
	if i <= 0 || i >= len(t) || !bytes.ContainsRune([]byte(" \t\n\r\v\f"), rune(t[i])) {
		return false
	}
	r, size := utf8.DecodeLastRune(t[:i])
	if r == utf8.RuneError && size <= 1 {
		return false
	}
	return !strings.ContainsRune(" \t\n\r\v\f\u0085\u00a0\u1680\u2000\u2001\u2002\u2003\u2004\u2005\u2006\u2007\u2008\u2009\u200a\u2028\u2029\u202f\u205f\u3000", r)
}

// FuzzRationBundle holds the plan under qwen3, whole and in a window, to
// the whole-text path's on any text.
func FuzzRationBundle(f *testing.F) {
	f.Add([]byte("one two.\n\nthree\xff 日本語。 four"), uint16(12), uint16(0), uint8(3))
	f.Add([]byte(strings.Repeat("Cafe\u0301 and \u0958 tea.\r\n", 60)), uint16(30), uint16(5), uint8(1))
	f.Add([]byte(strings.Repeat("a", 300)+" "+strings.Repeat("日本語。", 30)+"\nWord word"), uint16(25), uint16(3), uint8(200))
	f.Add(bytes.Repeat([]byte("ab cd\nef "), 100), uint16(9), uint16(2), uint8(6))
	enc := qwen3Encoder(f)
	frames := bundleFrames(f)
	f.Fuzz(func(t *testing.T, text []byte, budget, overlap uint16, read uint8) {
		if len(text) > 4000 {
			return
		}
		r := &Rationer{Enc: enc, Budget: 4 + int(budget)%800, Frame: frames[int(read)%len(frames)]}
		if r.Frame != nil {
			r.Budget += 40
		}
		if r.Overlap = int(overlap) % 400; 2*r.Overlap >= r.Budget {
			r.Overlap = 0
		}
		samePlan(t, r, wholePath(r), "fuzz", text)
		streamAgrees(t, r, wholePath(r), "fuzz", text, rand.New(rand.NewSource(int64(len(text)))), 1+int(read), 1+int(read)%3*50)
	})
}

// TestRandomTextBundle runs random texts through both paths.
func TestRandomTextBundle(t *testing.T) {
	enc := qwen3Encoder(t)
	frames := bundleFrames(t)
	rng := rand.New(rand.NewSource(29))
	for i := 0; i < 150; i++ {
		text := randomText(rng, 50+rng.Intn(8000))
		r := &Rationer{Enc: enc, Frame: frames[i%len(frames)], Budget: 10 + rng.Intn(400)}
		if r.Frame != nil {
			r.Budget += 40
		}
		if i%3 == 2 {
			r.Overlap = rng.Intn(r.Budget / 4)
		}
		samePlan(t, r, wholePath(r), "random", text)
		streamAgrees(t, r, wholePath(r), "random", text, rng, 1+rng.Intn(500), []int{1, 64, 4096}[i%3])
	}
	if _, _, err := (&Rationer{Enc: enc, Frame: frames[1], Budget: 3}).Cut("x", 0, []byte("hello"), false); !errors.Is(err, ErrNoRoom) {
		t.Fatalf("a budget under the frame: %v", err)
	}
}
