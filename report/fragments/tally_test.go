package fragments

import (
	"fmt"
	"testing"
)

// manyWords returns n distinct words of 3 to 20 bytes, some sharing their
// first eight bytes, so that the packed prefixes collide too.
func manyWords(n int) [][]byte {
	out := make([][]byte, n)
	for i := range out {
		switch i % 3 {
		case 0:
			out[i] = []byte(fmt.Sprintf("w%d", i))
		case 1:
			out[i] = []byte(fmt.Sprintf("prefixed%d", i))
		default:
			out[i] = []byte(fmt.Sprintf("a-rather-long-%d-word", i))
		}
	}
	return out
}

// TestWordTableGrowsLikeAMap puts many more words in one word table than
// its index first holds, so that wordIndex.insert grows it several times,
// and checks it against a plain map: every word keeps its entry, and the
// entry spells the word.
func TestWordTableGrowsLikeAMap(t *testing.T) {
	var tb wordTable
	want := map[string]int32{}
	words := manyWords(200_000)
	for round := 0; round < 2; round++ {
		for _, w := range words {
			i := tb.entry(w, hashWord(w))
			if prev, ok := want[string(w)]; ok && prev != i {
				t.Fatalf("%q: entry %d, first %d", w, i, prev)
			}
			want[string(w)] = i
		}
	}
	if int(tb.nwords) != len(want) {
		t.Fatalf("%d entries for %d words", tb.nwords, len(want))
	}
	for w, i := range want {
		if got := string(tb.word(tb.at(i))); got != w {
			t.Fatalf("entry %d spells %q, want %q", i, got, w)
		}
	}
}

// TestBatchGrowsLikeAMap puts more distinct words in one batch than its
// index first holds (one long document can), so that batchTally.grow runs,
// and checks the batch against a plain map of counts.
func TestBatchGrowsLikeAMap(t *testing.T) {
	var d batchTally
	d.epoch = 1
	want := map[string]int{}
	first := map[string]uint32{}
	words := manyWords(3 * batchWords)
	for round := 0; round < 3; round++ {
		for k, w := range words {
			if round == 2 && k%2 == 1 {
				continue
			}
			wi, _ := d.add(w, hashWord(w), []uint32{uint32(k)}, 0)
			if f, ok := first[string(w)]; ok && f != wi {
				t.Fatalf("%q: entry %d, first %d", w, wi, f)
			}
			first[string(w)] = wi
			want[string(w)]++
		}
	}
	if len(d.words) != len(want) || len(d.index) <= 2*batchWords {
		t.Fatalf("%d entries for %d words, index of %d slots (it should have grown)", len(d.words), len(want), len(d.index))
	}
	for w, wi := range first {
		e := d.words[wi]
		if got := string(d.bytes[e.off : e.off+e.n]); got != w {
			t.Fatalf("entry %d spells %q, want %q", wi, got, w)
		}
		if int(e.count) != want[w] {
			t.Fatalf("%q: count %d, want %d", w, e.count, want[w])
		}
	}
}
