package tally

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestBatchGrowsLikeAMap puts more distinct words in one batch than its
// index first holds (one long document can), so that Batch.grow runs, and
// checks the batch against a plain map of counts.
func TestBatchGrowsLikeAMap(t *testing.T) {
	b := NewBatch(0)
	want := map[string]int{}
	first := map[string]uint32{}
	words := manyWords(3 * batchWords)
	for round := range 3 {
		for k, w := range words {
			if round == 2 && k%2 == 1 {
				continue
			}
			wi, _ := b.add(w, []uint32{uint32(k)}, 0)
			if f, ok := first[string(w)]; ok && f != wi {
				t.Fatalf("%q: entry %d, first %d", w, wi, f)
			}
			first[string(w)] = wi
			want[string(w)]++
		}
	}
	if len(b.words) != len(want) || len(b.index) <= 2*batchWords {
		t.Fatalf("%d entries for %d words, index of %d slots (it should have grown)", len(b.words), len(want), len(b.index))
	}
	for w, wi := range first {
		e := b.words[wi]
		if got := string(b.bytes[e.off : e.off+e.n]); got != w {
			t.Fatalf("entry %d spells %q, want %q", wi, got, w)
		}
		if int(e.count) != want[w] {
			t.Fatalf("%q: count %d, want %d", w, e.count, want[w])
		}
	}
}

// model is a word's tallies counted the plain way, with a map.
type model struct {
	count, pieces int64
	docs          map[[2]int]bool // (batch, document) pairs
	splits        []Split         // every one, in the order first seen
}

// kept returns the splits a word's tally keeps of splits, all of them
// counted: the MaxSplits of the smallest keys, by key.
func kept(splits []Split) []Split {
	out := slices.Clone(splits)
	slices.SortFunc(out, func(a, b Split) int { return CompareSplits(a.IDs, b.IDs) })
	return out[:min(len(out), MaxSplits)]
}

// TestBatchesLikeAMap adds random occurrences of random words, one way in
// three split into a single token and added by it, through two batches
// (two workers) that flush into one Tables between documents, and checks
// every word against a plain map: occurrences, pieces, documents, and the
// splits kept, the MaxSplits of the smallest keys with their exact counts
// whatever the number of workers.
func TestBatchesLikeAMap(t *testing.T) {
	for _, workers := range []int{1, 2} {
		rng := rand.New(rand.NewPCG(1, uint64(workers)))
		words := manyWords(3000)
		var ts Tables
		batches := []*Batch{NewBatch(len(words) + 100), NewBatch(len(words) + 100)}
		want := map[string]*model{}
		doc := [2]int32{}
		for range 4000 { // documents
			k := rng.IntN(workers)
			b := batches[k]
			doc[k]++
			for range 1 + rng.IntN(40) {
				// Mostly a few frequent words, so that batches repeat them.
				wi := int(rng.ExpFloat64() * 200)
				if wi >= len(words) {
					wi = rng.IntN(len(words))
				}
				word := words[wi]
				m := want[string(word)]
				if m == nil {
					m = &model{docs: map[[2]int]bool{}}
					want[string(word)] = m
				}
				var ids []uint32
				if rng.IntN(3) == 0 {
					// The word is one token: its own id, as in a vocabulary.
					ids = []uint32{uint32(100 + wi)}
					b.AddToken(word, ids[0], doc[k])
				} else {
					ids = []uint32{uint32(rng.IntN(4))}
					for range rng.IntN(4) {
						ids = append(ids, uint32(rng.IntN(3)))
					}
					b.Add(word, ids, doc[k])
				}
				m.count++
				m.pieces += int64(len(ids))
				m.docs[[2]int{k, int(doc[k])}] = true
				if i := slices.IndexFunc(m.splits, func(s Split) bool { return slices.Equal(s.IDs, ids) }); i >= 0 {
					m.splits[i].Count++
				} else {
					m.splits = append(m.splits, Split{IDs: ids, Count: 1})
				}
			}
			if b.Full() || rng.IntN(50) == 0 {
				b.Flush(&ts)
			}
		}
		for _, b := range batches {
			b.Flush(&ts)
		}
		if ts.Len() != len(want) {
			t.Fatalf("%d workers: %d words, want %d", workers, ts.Len(), len(want))
		}
		seen := 0
		for w := range ts.All() {
			seen++
			m := want[string(w.Bytes())]
			if m == nil {
				t.Fatalf("%q is not a word added", w.Bytes())
			}
			if w.Count() != m.count || w.Pieces() != m.pieces || w.Docs() != int64(len(m.docs)) {
				t.Fatalf("%d workers: %q: %d occurrences, %d pieces, %d documents; want %d, %d, %d", workers, w.Bytes(),
					w.Count(), w.Pieces(), w.Docs(), m.count, m.pieces, len(m.docs))
			}
			checkSplits(t, w.Splits(), kept(m.splits))
		}
		if seen != len(want) {
			t.Fatalf("All gave %d words, want %d", seen, len(want))
		}
	}
}

// TestTokenTagReuse flushes through as many batches as the one-token
// look-up has tags: "d" is the fourth word of the first batch and the
// first of the numTags+1-th, which has the first's tag again, so an entry
// kept from numTags flushes back would point at a word the batch does not
// hold.
func TestTokenTagReuse(t *testing.T) {
	b := NewBatch(10)
	var ts Tables
	want := map[string]int64{}
	add := func(word string, id uint32) {
		b.AddToken([]byte(word), id, int32(b.epoch))
		want[word]++
	}
	for i, w := range []string{"a", "b", "c", "d"} {
		add(w, uint32(i))
	}
	b.Flush(&ts)
	for range numTags - 1 {
		add("a", 0)
		b.Flush(&ts)
	}
	if tokenTag(b.epoch) != tokenTag(1) {
		t.Fatalf("epoch %d has tag %d, want the first batch's %d", b.epoch, tokenTag(b.epoch), tokenTag(1))
	}
	add("d", 3)
	add("a", 0)
	b.Flush(&ts)
	got := map[string]int64{}
	for w := range ts.All() {
		got[string(w.Bytes())] = w.Count()
		if w.Count() != w.Docs() || w.Pieces() != w.Count() {
			t.Errorf("%q: %d occurrences in %d documents, %d pieces; want one a document, one piece each", w.Bytes(), w.Count(), w.Docs(), w.Pieces())
		}
	}
	if !maps(got, want) {
		t.Errorf("counts %v, want %v", got, want)
	}
}

func maps(a, b map[string]int64) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if b[k] != v {
			return false
		}
	}
	return true
}

// TestBatchSpill counts a word split three ways in one batch, the third
// way past the batch's two inline splits, and checks what the flush makes
// of it: the counts and pieces are the sums of the occurrences added here.
func TestBatchSpill(t *testing.T) {
	b := NewBatch(0)
	for _, o := range []struct {
		ids []uint32
		doc int32
	}{{[]uint32{1, 2}, 1}, {[]uint32{3}, 1}, {[]uint32{4, 5, 6}, 2}, {[]uint32{1, 2}, 2}, {[]uint32{4, 5, 6}, 3}} {
		b.Add([]byte("kelderwick"), o.ids, o.doc)
	}
	if len(b.spill) != 2 {
		t.Fatalf("%d spilled, want the two occurrences split the third way", len(b.spill))
	}
	var ts Tables
	b.Flush(&ts)
	for w := range ts.All() {
		if w.Count() != 5 || w.Pieces() != 2+1+3+2+3 || w.Docs() != 3 {
			t.Fatalf("%d occurrences, %d pieces, %d documents; want 5, 11, 3", w.Count(), w.Pieces(), w.Docs())
		}
		checkSplits(t, w.Splits(), []Split{{[]uint32{3}, 1}, {[]uint32{1, 2}, 2}, {[]uint32{4, 5, 6}, 2}})
	}
}

// TestCounterBound takes a batch's split counters, 32 bits, to their bound
// (as 2^32 occurrences in one batch would; the test sets them there rather
// than make that many) and past it, by a word of two tokens and by a word
// found by its token: the counts carry to the spill list and stay exact,
// and the word's own count, 64 bits, goes past 2^32.
func TestCounterBound(t *testing.T) {
	const near = math.MaxUint32 - 1
	b := NewBatch(10)
	b.Add([]byte("QX-7731"), []uint32{1, 2}, 1)
	b.AddToken([]byte("buoy"), 7, 1)
	for i := range b.words {
		b.words[i].count = near
		b.words[i].splits[0].count = near
	}
	for range 3 {
		b.Add([]byte("QX-7731"), []uint32{1, 2}, 2)
		b.AddToken([]byte("buoy"), 7, 2)
	}
	if c := b.words[0].count; c != near+3 {
		t.Fatalf("batch word count %d, want %d", c, uint64(near)+3)
	}
	if len(b.spill) != 2 || b.spill[0].count != math.MaxUint32 {
		t.Fatalf("spill %+v: want each split's full count carried once", b.spill)
	}
	var ts Tables
	b.Flush(&ts)
	const total = int64(near) + 3
	got := map[string]Word{}
	for w := range ts.All() {
		got[string(w.Bytes())] = w
	}
	for word, n := range map[string]int64{"QX-7731": 2, "buoy": 1} {
		w, ok := got[word]
		if !ok {
			t.Fatalf("%q missing", word)
		}
		if w.Count() != total || w.Pieces() != n*total || w.Docs() != 2 {
			t.Errorf("%q: %d occurrences, %d pieces, %d documents; want %d, %d, 2", word, w.Count(), w.Pieces(), w.Docs(), total, n*total)
		}
		if sp := w.Splits(); len(sp) != 1 || sp[0].Count != total {
			t.Errorf("%q: splits %v, want one of %d", word, sp, total)
		}
	}
}
