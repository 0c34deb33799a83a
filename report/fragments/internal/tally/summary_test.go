package tally

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// zipfWords returns n occurrences of words drawn with Zipf-like
// frequencies (word r about 1/r as often as the first) from vocab words.
func zipfWords(r *rand.Rand, n, vocab int) [][]byte {
	z := rand.NewZipf(r, 1.1, 1, uint64(vocab-1))
	out := make([][]byte, n)
	for i := range out {
		out[i] = fmt.Appendf(nil, "w%d", z.Uint64())
	}
	return out
}

// checkSpaceSaving holds a summary to the guarantees of Space-Saving
// (Metwally et al. 2005, Lemmas 3.3 and 3.4 and Theorem 3.5, weighted):
// no count below the true count or more than its Err above it; no Err
// above N/k; every word more frequent than N/k kept; and N counted.
func checkSpaceSaving(t *testing.T, s *Summary, truth map[string]int64) {
	t.Helper()
	var n int64
	for _, c := range truth {
		n += c
	}
	if s.Total() != n {
		t.Fatalf("total %d, want %d", s.Total(), n)
	}
	bound := n / int64(s.Counters())
	kept := map[string]bool{}
	for w := range s.All() {
		word := string(w.Bytes())
		kept[word] = true
		tr := truth[word]
		if w.Count() < tr || w.Count()-w.Err() > tr {
			t.Fatalf("%s: count %d (over-count at most %d), true %d", word, w.Count(), w.Err(), tr)
		}
		if w.Err() > bound {
			t.Fatalf("%s: over-count %d past N/k = %d", word, w.Err(), bound)
		}
	}
	if s.MaxErr() > bound {
		t.Fatalf("MaxErr %d past N/k = %d", s.MaxErr(), bound)
	}
	for word, c := range truth {
		if c > bound && !kept[word] {
			t.Fatalf("%s: %d occurrences (N/k = %d) and not kept", word, c, bound)
		}
	}
}

// TestSummaryKeepsSpaceSavingBounds feeds words one by one and in
// weighted lumps (as batches flush them) into summaries of a few sizes.
func TestSummaryKeepsSpaceSavingBounds(t *testing.T) {
	for _, k := range []int{1, 7, 64, 500} {
		r := rand.New(rand.NewPCG(uint64(k), 9))
		s := NewSummary(k)
		truth := map[string]int64{}
		for _, w := range zipfWords(r, 20000, 3000) {
			n := int64(1 + r.IntN(3))
			truth[string(w)] += n
			s.Add(w, n, 2*n, 1, []Split{{IDs: []uint32{1, 2}, Count: n}})
		}
		checkSpaceSaving(t, s, truth)
		if k == 500 && s.MaxErr() == 0 {
			t.Fatal("no counter was ever taken over: the test does not reach the fallback")
		}
	}
}

// TestSummaryOfTablesThenBatches tallies words exactly in Tables, moves
// them into a summary smaller than the words, then flushes more batches
// into the summary: the bounds hold over the whole stream, and a word's
// pieces are those of its occurrences (two each here) plus the estimate.
func TestSummaryOfTablesThenBatches(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 2))
	truth := map[string]int64{}
	var ts Tables
	b := NewBatch(0)
	words := zipfWords(r, 60000, 5000)
	for i, w := range words[:30000] {
		b.Add(w, []uint32{7, uint32(i % 3)}, int32(i/100))
		truth[string(w)]++
		if i%1000 == 999 {
			b.Flush(&ts)
		}
	}
	b.Flush(&ts)
	s := SummaryOf(&ts, 300)
	for i, w := range words[30000:] {
		b.Add(w, []uint32{7, uint32(i % 3)}, int32(i/100))
		truth[string(w)]++
		if i%1000 == 999 {
			b.FlushSummary(s)
		}
	}
	b.FlushSummary(s)
	checkSpaceSaving(t, s, truth)
	for w := range s.All() {
		if w.Err() == 0 && w.Pieces() != 2*w.Count() {
			t.Fatalf("%s: %d pieces for %d exact occurrences of two tokens", w.Bytes(), w.Pieces(), w.Count())
		}
		var split int64
		for _, sp := range w.Splits() {
			split += sp.Count
		}
		if split > w.Count() {
			t.Fatalf("%s: splits count %d, more than its %d occurrences", w.Bytes(), split, w.Count())
		}
	}
}
