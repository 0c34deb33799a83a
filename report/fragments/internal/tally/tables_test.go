package tally

import (
	"fmt"
	"slices"
	"testing"
	"unsafe"
)

// manyWords returns n distinct words of 2 to 22 bytes, some sharing their
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

// TestTableGrowsLikeAMap puts many more words in one table than its index
// first holds, so that wordIndex.insert grows it several times, and checks
// it against a plain map: every word keeps its entry, and the entry spells
// the word.
func TestTableGrowsLikeAMap(t *testing.T) {
	var tb table
	want := map[string]int32{}
	words := manyWords(200_000)
	for range 2 {
		for _, w := range words {
			i := tb.entry(w, hashWord(w))
			if prev, ok := want[string(w)]; ok && prev != i {
				t.Fatalf("%q: entry %d, first %d", w, i, prev)
			}
			want[string(w)] = i
		}
	}
	if int(tb.nwords) != len(want) || len(tb.index.slots) <= 1<<10 {
		t.Fatalf("%d entries for %d words, index of %d slots (it should have grown)", tb.nwords, len(want), len(tb.index.slots))
	}
	for w, i := range want {
		if got := string(tb.word(tb.at(i))); got != w {
			t.Fatalf("entry %d spells %q, want %q", i, got, w)
		}
	}
}

// packPrefix must give the first eight bytes of a word, little-endian,
// whatever the loads it takes to read them.
func TestPackPrefix(t *testing.T) {
	w := []byte("\x01\x82\x03\xf4\x05\x06\x07\x88\x09\x0a")
	for n := 0; n <= len(w); n++ {
		var want uint64
		for i, c := range w[:min(n, 8)] {
			want |= uint64(c) << (8 * i)
		}
		if got := packPrefix(w[:n]); got != want {
			t.Errorf("packPrefix of %d bytes = %#x, want %#x", n, got, want)
		}
	}
}

// TestRecordSizes holds a word's tally, and a batch's word, to one 64-byte
// cache line, the unit memory is read in.
func TestRecordSizes(t *testing.T) {
	if n := unsafe.Sizeof(wordTally{}); n != 64 {
		t.Errorf("a wordTally takes %d bytes, want 64", n)
	}
	if n := unsafe.Sizeof(batchWord{}); n != 64 {
		t.Errorf("a batchWord takes %d bytes, want 64", n)
	}
}

// TestTableSplits checks that a word's table keeps the MaxSplits splits of
// the smallest keys, of one id or more, each with its own count: [1 2 3]
// gives way to [5 6], of fewer ids, and is not taken back when it comes
// again.
func TestTableSplits(t *testing.T) {
	var ts Tables
	m := &ts.parts[0]
	i := m.entry([]byte("kelderwick"), hashWord([]byte("kelderwick")))
	w := m.at(i)
	for _, s := range []struct {
		ids []uint32
		n   int64
	}{{[]uint32{7}, 2}, {[]uint32{1, 2, 3}, 1}, {[]uint32{7}, 3}, {[]uint32{9}, 1}, {[]uint32{1, 2}, 4}, {[]uint32{5, 6}, 1}, {[]uint32{1, 2, 3}, 2}} {
		m.addSplit(w, s.ids, s.n)
	}
	checkSplits(t, Word{t: m, w: w}.Splits(), []Split{{[]uint32{7}, 5}, {[]uint32{9}, 1}, {[]uint32{1, 2}, 4}, {[]uint32{5, 6}, 1}})
	if again := m.entry([]byte("kelderwick"), hashWord([]byte("kelderwick"))); again != i {
		t.Error("the word's second look-up made a new tally")
	}
}

// checkSplits fails t unless got holds the splits of want, in order.
func checkSplits(t *testing.T, got, want []Split) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("splits %v, want %v", got, want)
	}
	for i := range want {
		if !slices.Equal(got[i].IDs, want[i].IDs) || got[i].Count != want[i].Count {
			t.Errorf("split %d: %v, want %v", i, got[i], want[i])
		}
	}
}
