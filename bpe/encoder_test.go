package bpe

import (
	"bytes"
	"math/rand"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"
	"testing/iotest"
)

func gpt2(t testing.TB, opt Options) *Encoder {
	t.Helper()
	e, err := NewEncoder(Default(), opt)
	if err != nil {
		t.Fatal(err)
	}
	return e
}

func eqInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// Check values from gpt2/SOURCE.md (confirmable by hand on the files) and,
// for the pangram, common practice (its nine GPT-2 ids are widely quoted;
// recalled from memory and confirmed against the reference library's
// golden file in TestGoldenIDs' corpus).
func TestKnownIDs(t *testing.T) {
	e := gpt2(t, Options{})
	cases := []struct {
		text string
		want []int
	}{
		{"hello", []int{31373}},
		{" is", []int{318}},
		{"Hello", []int{15496}},
		{"The quick brown fox jumps over the lazy dog", []int{464, 2068, 7586, 21831, 18045, 625, 262, 16931, 3290}},
		{"", nil},
	}
	for _, c := range cases {
		got := e.Encode([]byte(c.text))
		if !eqInts(got, c.want) {
			t.Errorf("%q: got %v want %v", c.text, got, c.want)
		}
		if n := e.Count([]byte(c.text)); n != len(c.want) {
			t.Errorf("%q: count %d want %d", c.text, n, len(c.want))
		}
	}
}

func TestSpecialModes(t *testing.T) {
	text := []byte("a<|endoftext|>b <|endoftext|>")
	plain := gpt2(t, Options{})
	ids, st := plain.EncodeStats(nil, text)
	if st.Specials != 2 {
		t.Fatalf("specials seen %d, want 2", st.Specials)
	}
	for _, id := range ids {
		if id == 50256 {
			t.Fatal("text mode produced the special id")
		}
	}
	// "<|endoftext|>" alone is 7 ordinary tokens (27 91 437 1659 5239 91 29,
	// as the reference library gives in the golden file).
	if n := plain.Count([]byte("<|endoftext|>")); n != 7 {
		t.Fatalf("text mode: %d tokens, want 7", n)
	}
	honor := gpt2(t, Options{Specials: SpecialsHonor})
	ids, st = honor.EncodeStats(nil, text)
	want := []int{64, 50256, 65, 220, 50256}
	if !eqInts(ids, want) || st.Specials != 2 || st.Tokens != 5 {
		t.Fatalf("honor: %v %+v; want %v", ids, st, want)
	}
	if got := honor.CountStats(text); got != st {
		t.Fatalf("honor count %+v != encode %+v", got, st)
	}
	if !bytes.Equal(honor.Decode(ids), text) {
		t.Fatal("honor round trip")
	}
}

// mergeLong (heap) and mergeShort (scan) must agree on every input.
func TestLongAndShortMergeAgree(t *testing.T) {
	v := Default()
	s := newState(v, 100)
	rng := rand.New(rand.NewSource(1))
	alphabets := []string{"a", "ab", "abc ", "the quick brown", "0123456789", "日本語", "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/"}
	for trial := 0; trial < 400; trial++ {
		alpha := []rune(alphabets[trial%len(alphabets)])
		n := 2 + rng.Intn(300)
		var b strings.Builder
		for i := 0; i < n; i++ {
			b.WriteRune(alpha[rng.Intn(len(alpha))])
		}
		p := []byte(b.String())
		long := append([]uint32(nil), s.mergeLong(p)...)
		short := append([]uint32(nil), s.mergeShort(p)...)
		if len(long) != len(short) {
			t.Fatalf("%q: heap %v scan %v", p, long, short)
		}
		for i := range long {
			if long[i] != short[i] {
				t.Fatalf("%q: heap %v scan %v", p, long, short)
			}
		}
	}
}

func corpusTexts(t testing.TB) map[string][]byte {
	files, _ := filepath.Glob("../testdata/golden/corpus/*")
	out := map[string][]byte{}
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		out[filepath.Base(f)] = data
	}
	if len(out) == 0 {
		t.Fatal("no corpus")
	}
	return out
}

// CountReader cuts a stream into pieces; the count must be that of the
// whole text whatever the read sizes.
func TestCountReaderMatchesCount(t *testing.T) {
	e := gpt2(t, Options{})
	var all []byte
	names := []string{}
	texts := corpusTexts(t)
	for n := range texts {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		all = append(all, texts[n]...)
	}
	for len(all) < 3*streamChunk {
		all = append(all, all...)
	}
	all = append(all, bytes.Repeat([]byte("x"), streamChunk+17)...)      // a long pre-token across chunks
	all = append(all, bytes.Repeat([]byte(" \u3000\t"), streamChunk)...) // a long run of white space, ASCII and not
	all = append(all, "x"...)
	all = append(all, "  tail \xe3\x81"...)
	want := e.CountStats(all)
	for _, r := range []func() *bytes.Reader{func() *bytes.Reader { return bytes.NewReader(all) }} {
		got, n, err := e.CountReader(r())
		if err != nil || got != want || n != int64(len(all)) {
			t.Fatalf("CountReader %+v %d %v; want %+v %d", got, n, err, want, len(all))
		}
		got, _, err = e.CountReader(iotest.HalfReader(r()))
		if err != nil || got != want {
			t.Fatalf("CountReader (half reads) %+v %v; want %+v", got, err, want)
		}
	}
	// The same text framed: the parts join words and white space at both
	// edges, so a count that forgot an edge would differ.
	for _, fr := range [][2]string{{"", ""}, {"Summarize:", "done"}, {"x  ", "  y"}, {"\n\n", "<|endoftext|>"}} {
		before, after := []byte(fr[0]), []byte(fr[1])
		for _, text := range [][]byte{all, all[:10], nil, bytes.Repeat([]byte("x"), streamChunk+5)} {
			wantFramed, wantAlone := e.Count(join(before, text, after)), e.CountStats(text)
			alone, framed, n, err := e.CountFramedReader(iotest.HalfReader(bytes.NewReader(text)), before, after)
			if err != nil || alone != wantAlone || framed != wantFramed || n != int64(len(text)) {
				t.Fatalf("CountFramedReader(%q, %q) on %d bytes: %+v %d %d %v; want %+v %d", before, after, len(text), alone, framed, n, err, wantAlone, wantFramed)
			}
		}
	}
}

// CountFramedReader falls back to reading the whole text where no cut is
// known safe; its counts must still be those of the joined text.
func TestCountFramedReaderUnderSplitPattern(t *testing.T) {
	e := gpt2(t, Options{SplitPattern: `\w+|\s+|[^\w\s]+`})
	text := []byte("alpha beta, gamma\n  delta")
	alone, framed, _, err := e.CountFramedReader(bytes.NewReader(text), []byte("Q: "), []byte(" :A"))
	if err != nil || alone != e.CountStats(text) || framed != e.Count(join([]byte("Q: "), text, []byte(" :A"))) {
		t.Fatalf("got %+v %d %v", alone, framed, err)
	}
}

// safeCutFrom, told where no cut is, must find what safeCut finds.
func TestSafeCutFrom(t *testing.T) {
	r := rand.New(rand.NewSource(3))
	parts := []string{" ", "  ", "\t", "\n", "a", "7", ".", "\u3000", "é", "\xff", "\xe3\x81"}
	for n := 0; n < 3000; n++ {
		var b []byte
		for k := r.Intn(12); k > 0; k-- {
			b = append(b, parts[r.Intn(len(parts))]...)
		}
		want := safeCut(b)
		for from := 0; from <= len(b); from++ {
			if safeCut(b[:from]) != 0 {
				continue // from is a promise only when b[:from] holds no cut
			}
			if got := safeCutFrom(b, from); got != want {
				t.Fatalf("safeCutFrom(%q, %d) = %d, want %d", b, from, got, want)
			}
		}
	}
}

func TestSplitCoversText(t *testing.T) {
	for _, opt := range []Options{{}, {Specials: SpecialsHonor}, {SplitPattern: `\w+|\s+`}} {
		e := gpt2(t, opt)
		text := []byte("Hello, world!<|endoftext|> 42\n\n  x ß")
		var sum int
		prev := 0
		e.Split(text, func(a, b int, special bool) {
			if a != prev || b <= a {
				t.Fatalf("%+v: span %d-%d after %d", opt, a, b, prev)
			}
			prev = b
			sum += len(e.EncodePiece(text[a:b]))
			if special {
				sum -= len(e.EncodePiece(text[a:b])) - 1
			}
		})
		if prev != len(text) {
			t.Fatalf("%+v: spans end at %d of %d", opt, prev, len(text))
		}
		if n := e.Count(text); n != sum {
			t.Fatalf("%+v: count %d, sum over pieces %d", opt, n, sum)
		}
	}
}

func TestSplitPatternErrors(t *testing.T) {
	if _, err := NewEncoder(Default(), Options{SplitPattern: "(unclosed"}); err == nil || !strings.Contains(err.Error(), "(unclosed") {
		t.Fatalf("got %v", err)
	}
}

// A regexp2 split pattern equal to the GPT-2 rule encodes as the scanner does.
func TestRegexPatternEncodesAsScanner(t *testing.T) {
	a, b := gpt2(t, Options{}), gpt2(t, Options{SplitPattern: GPT2Pattern})
	for name, text := range corpusTexts(t) {
		if !eqInts(a.Encode(text), b.Encode(text)) {
			t.Fatalf("%s: pattern and scanner differ", name)
		}
	}
}

func TestCacheBoundedAndConsistent(t *testing.T) {
	e := gpt2(t, Options{CacheWords: 50})
	fresh := gpt2(t, Options{})
	for name, text := range corpusTexts(t) {
		for round := 0; round < 2; round++ {
			if !eqInts(e.Encode(text), fresh.Encode(text)) {
				t.Fatalf("%s: small-cache encoder differs", name)
			}
		}
	}
	s := e.get()
	if len(s.cache) > 50 || s.short.n > 50 || s.mid.n > 50 {
		t.Fatalf("cache holds %d + %d + %d words, bound 50 each", len(s.cache), s.short.n, s.mid.n)
	}
}

func FuzzRoundTrip(f *testing.F) {
	f.Add([]byte("hello world"))
	f.Add([]byte("\xff\xfe\x00 <|endoftext|>\r\n日本"))
	f.Add(bytes.Repeat([]byte("ab"), 40))
	plain := gpt2(f, Options{})
	honor := gpt2(f, Options{Specials: SpecialsHonor})
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, e := range []*Encoder{plain, honor} {
			ids, st := e.EncodeStats(nil, data)
			if !bytes.Equal(e.Decode(ids), data) {
				t.Fatalf("round trip of %q", data)
			}
			if c := e.CountStats(data); c != st {
				t.Fatalf("count %+v, encode %+v", c, st)
			}
		}
	})
}

// A cache value holds one or two ids itself when they fit, else their
// place in the arena; either way valueIDs gives the ids back.
func TestCacheValueIDs(t *testing.T) {
	s := &state{arena: []uint32{9, 8, 7, 6, 5}}
	for _, ids := range [][]uint32{{0}, {50256}, {inlineMask}, {inlineMask + 1}, {3, 4}, {inlineMask, 1}, {1, inlineMask + 1}, {1, 2, 3}} {
		off := len(s.arena)
		v, inline := idsValue(ids, off)
		if want := len(ids) <= 2 && !slices.ContainsFunc(ids, func(id uint32) bool { return id > inlineMask }); inline != want {
			t.Errorf("idsValue(%v): inline = %v, want %v", ids, inline, want)
		}
		if !inline {
			s.arena = append(s.arena, ids...)
		}
		if got := s.valueIDs(v); !slices.Equal(got, ids) {
			t.Errorf("valueIDs(idsValue(%v)) = %v", ids, got)
		}
	}
}
