package bpe

import (
	"bytes"
	"math/rand"
	"runtime"
	"slices"
	"testing"
)

// mergeAgrees fails t unless mergeLong and mergeShort (the plain scan,
// lowest rank first, leftmost on ties) give the same ids for p.
func mergeAgrees(t testing.TB, s *state, p []byte) {
	t.Helper()
	long := slices.Clone(s.mergeLong(p))
	short := s.mergeShort(p)
	if !slices.Equal(long, short) {
		t.Fatalf("%d bytes %.80q: tree %v scan %v", len(p), p, long, short)
	}
}

// Lengths around the tree's block size and its powers of two, and runs of
// one symbol, where the leftmost rule decides.
func TestMergeLongMatchesShort(t *testing.T) {
	s := newState(Default(), 100)
	rng := rand.New(rand.NewSource(3))
	alphabets := []string{"a", " ", "\n", "ab", "aab", "0123456789", "the quick brown fox ", "日本語", "\xff\xfe\x80a"}
	var lengths []int
	for _, k := range []int{1, 2, 3, 4, 33} {
		lengths = append(lengths, k<<blockBits-1, k<<blockBits, k<<blockBits+1)
	}
	for trial := 0; trial < 30; trial++ {
		lengths = append(lengths, 49+rng.Intn(2500))
	}
	for _, n := range lengths {
		for _, alpha := range alphabets {
			p := make([]byte, n)
			for i := range p {
				p[i] = alpha[rng.Intn(len(alpha))]
			}
			mergeAgrees(t, s, p)
		}
		mergeAgrees(t, s, bytes.Repeat([]byte("a"), n))
	}
}

// A merge list that is not learned can make a pair of a lower rank than the
// merge that made it ("b c" makes "bc b" and "a bc", ranked before it); that
// pair must go before the rest of the higher rank's run ("bcbc" is "bcb c").
func TestMergeLongLowerRankFirst(t *testing.T) {
	e := toyEncoder(t, [][2]string{{"bc", "b"}, {"a", "bc"}, {"b", "c"}, {"abc", "abc"}, {"c", "a"}, {"bc", "bc"}})
	s := newState(e.v, 100)
	rng := rand.New(rand.NewSource(5))
	for trial := 0; trial < 300; trial++ {
		p := make([]byte, 1+rng.Intn(700))
		for i := range p {
			p[i] = "abc"[rng.Intn(3)]
		}
		mergeAgrees(t, s, p)
	}
}

// FuzzMergeLong checks mergeLong against mergeShort on any bytes.
func FuzzMergeLong(f *testing.F) {
	f.Add([]byte("aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa"))
	f.Add([]byte("                                                                   x"))
	f.Add([]byte("internationalizationinternationalizationinternationalization"))
	s := newState(Default(), 100)
	f.Fuzz(func(t *testing.T, p []byte) {
		if len(p) == 0 || len(p) > 5000 {
			return
		}
		mergeAgrees(t, s, p)
	})
}

// benchMergeLong merges one pre-token of p with a fresh state each time and
// reports the bytes allocated per byte of p (an upper bound on the merge's
// peak memory).
func benchMergeLong(b *testing.B, p []byte) {
	v := Default()
	b.SetBytes(int64(len(p)))
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	for i := 0; i < b.N; i++ {
		if len(newState(v, 16).mergeLong(p)) == 0 {
			b.Fatal("no ids")
		}
	}
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/float64(len(p)), "B/byte")
}

func randomLetters(n int) []byte {
	rng := rand.New(rand.NewSource(11))
	p := make([]byte, n)
	for i := range p {
		p[i] = byte('a' + rng.Intn(26))
	}
	return p
}

func BenchmarkMergeLongOneLetter10MB(b *testing.B) { benchMergeLong(b, oneLetter(10<<20)) }
func BenchmarkMergeLongSpaces10MB(b *testing.B)    { benchMergeLong(b, bytes.Repeat([]byte(" "), 10<<20)) }
func BenchmarkMergeLongLetters10MB(b *testing.B)   { benchMergeLong(b, randomLetters(10<<20)) }
func BenchmarkMergeLongLetters1MB(b *testing.B)    { benchMergeLong(b, randomLetters(1<<20)) }

// The same for bundles whose pre-tokens start as characters looked up with
// a prefix (metaspace-32k) and as bytes of a larger vocabulary (qwen3).
func TestMergeLongMatchesShortBundles(t *testing.T) {
	rng := rand.New(rand.NewSource(9))
	alphabets := []string{"a", "ab", "▁the▁quick", "日本語", "äöü ß", "0123456789", "\x00\x01 z"}
	for _, name := range []string{"qwen3", "metaspace-32k"} {
		v, _ := loadTestBundle(t, name)
		s := newState(v, 100)
		for trial := 0; trial < 80; trial++ {
			alpha := []rune(alphabets[trial%len(alphabets)])
			n := 1 + rng.Intn(1500)
			var b bytes.Buffer
			for i := 0; i < n; i++ {
				b.WriteRune(alpha[rng.Intn(len(alpha))])
			}
			mergeAgrees(t, s, b.Bytes())
		}
	}
}

// The three ways mergeTree finds a cell's starting symbol: read back from
// the byte (every symbol one byte), from the byte after a longer first
// symbol (Metaspace's mark), and kept beside the cells (characters of
// several bytes), each against the plain scan.
func TestMergeLongStartingSymbols(t *testing.T) {
	v, _ := loadTestBundle(t, "metaspace-32k")
	s := newState(v, 100)
	rng := rand.New(rand.NewSource(13))
	for _, n := range []int{2, 3, 60, 1 << blockBits, 3000} {
		letters := make([]byte, n)
		for i := range letters {
			letters[i] = "abcde"[rng.Intn(5)]
		}
		mergeAgrees(t, s, letters)
		mergeAgrees(t, s, append([]byte("▁"), letters...))
		mergeAgrees(t, s, append(append([]byte("▁"), letters...), "é"...))
		mergeAgrees(t, s, append(append([]byte("é"), letters...), "▁z"...))
	}
}

// byteSyms finds the table when the bytes give the symbols, whatever the
// ends hold, and refuses one byte that stands for two symbols.
func TestByteSyms(t *testing.T) {
	s := newState(Default(), 1)
	tab := s.byteSyms([]byte("xabax"), []uint32{9, 1, 2, 1, 8})
	if tab == nil || tab['a'] != 1 || tab['b'] != 2 {
		t.Fatalf("byteSyms gave %v for consistent symbols", tab)
	}
	if tab := s.byteSyms([]byte("xabax"), []uint32{9, 1, 2, 3, 8}); tab != nil {
		t.Fatal("byteSyms gave a table for 'a' as two symbols")
	}
}
