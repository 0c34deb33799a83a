package tally

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// occurrence is one occurrence of a word, split as ids.
type occurrence struct {
	word string
	ids  []uint32
}

// splitOccurrences returns a fixed multiset of occurrences: "kelderwick"
// split nine ways (of one to four ids, some of the same length, the
// rarest ones of the smallest keys), "brume" five ways, "ossa" three.
func splitOccurrences() []occurrence {
	var out []occurrence
	add := func(word string, n int, ids ...uint32) {
		for range n {
			out = append(out, occurrence{word, ids})
		}
	}
	add("kelderwick", 40, 9, 8, 7, 6)
	add("kelderwick", 30, 5, 5, 5)
	add("kelderwick", 20, 1, 2, 3)
	add("kelderwick", 25, 4, 4)
	add("kelderwick", 3, 1, 2)
	add("kelderwick", 1, 1, 3)
	add("kelderwick", 2, 700)
	add("kelderwick", 12, 2, 1)
	add("kelderwick", 6, 3, 0, 0, 1)
	add("brume", 9, 11, 12)
	add("brume", 4, 10)
	add("brume", 7, 13, 14, 15)
	add("brume", 2, 12, 11)
	add("brume", 5, 9, 9, 9, 9)
	add("ossa", 3, 5)
	add("ossa", 2, 6)
	add("ossa", 1, 5, 6)
	return out
}

// truthOf counts occ the plain way: every split of every word.
func truthOf(occ []occurrence) map[string][]Split {
	truth := map[string][]Split{}
	for _, o := range occ {
		sp := truth[o.word]
		if i := slices.IndexFunc(sp, func(s Split) bool { return slices.Equal(s.IDs, o.ids) }); i >= 0 {
			sp[i].Count++
		} else {
			truth[o.word] = append(sp, Split{IDs: o.ids, Count: 1})
		}
	}
	return truth
}

// splitsOf returns the splits kept of every word in words.
func splitsOf(words func(func(Word) bool)) map[string][]Split {
	out := map[string][]Split{}
	for w := range words {
		var sp []Split
		for _, s := range w.Splits() {
			sp = append(sp, Split{IDs: slices.Clone(s.IDs), Count: s.Count})
		}
		out[string(w.Bytes())] = sp
	}
	return out
}

// checkKept fails t unless got holds, for every word of truth, the
// MaxSplits splits of the smallest keys with their exact counts.
func checkKept(t *testing.T, what string, got, truth map[string][]Split) {
	t.Helper()
	if len(got) != len(truth) {
		t.Fatalf("%s: %d words, want %d", what, len(got), len(truth))
	}
	for word, all := range truth {
		want := kept(all)
		if fmt.Sprint(got[word]) != fmt.Sprint(want) {
			t.Fatalf("%s: %q keeps %v, want %v", what, word, got[word], want)
		}
	}
}

// feed adds occ, in its order, through workers batches that flush into
// the shards' tables, each worker's documents going to a shard in turn;
// a document is one to five occurrences and a batch flushes after a
// document one time in three. It returns the shards' tables and the
// occurrences each was given.
func feed(rng *rand.Rand, occ []occurrence, workers, shards int) ([]*Tables, [][]occurrence) {
	ts := make([]*Tables, shards)
	for i := range ts {
		ts[i] = new(Tables)
	}
	given := make([][]occurrence, shards)
	batches := make([]*Batch, workers)
	held := make([][]occurrence, workers) // what each batch holds
	for i := range batches {
		batches[i] = NewBatch(1000)
	}
	flush := func(k, shard int) {
		batches[k].Flush(ts[shard])
		given[shard] = append(given[shard], held[k]...)
		held[k] = nil
	}
	doc := int32(0)
	for len(occ) > 0 {
		doc++
		k := rng.IntN(workers)
		b := batches[k]
		n := min(len(occ), 1+rng.IntN(5))
		for _, o := range occ[:n] {
			if len(o.ids) == 1 && rng.IntN(2) == 0 {
				b.AddToken([]byte(o.word), o.ids[0], doc)
			} else {
				b.Add([]byte(o.word), o.ids, doc)
			}
		}
		held[k] = append(held[k], occ[:n]...)
		occ = occ[n:]
		if rng.IntN(3) == 0 {
			flush(k, int(doc)%shards)
		}
	}
	for k := range batches {
		flush(k, k%shards)
	}
	return ts, given
}

// TestSplitsKeptWhateverTheOrder adds one multiset of occurrences in many
// orders, through one to four batches flushed at random points, into one
// Tables or into shards merged with AddWord, and into a Summary that has
// a counter for every word: every time, each word keeps the MaxSplits
// splits of the smallest keys with their exact counts, as a plain count
// of every split says.
func TestSplitsKeptWhateverTheOrder(t *testing.T) {
	base := splitOccurrences()
	truth := truthOf(base)
	for round := range 200 {
		rng := rand.New(rand.NewPCG(uint64(round), 15))
		occ := slices.Clone(base)
		rng.Shuffle(len(occ), func(i, j int) { occ[i], occ[j] = occ[j], occ[i] })
		workers, shards := 1+rng.IntN(4), 1+rng.IntN(3)
		what := fmt.Sprintf("round %d, %d workers, %d shards", round, workers, shards)
		parts, given := feed(rng, occ, workers, shards)
		for i, ts := range parts {
			// Each shard keeps the smallest keys of what it was given.
			checkKept(t, fmt.Sprintf("%s, shard %d", what, i), splitsOf(ts.All()), truthOf(given[i]))
		}
		merged := new(Tables)
		for _, i := range rng.Perm(shards) {
			for w := range parts[i].All() {
				merged.AddWord(w.Bytes(), w.Count(), w.Pieces(), w.Docs(), w.Splits())
			}
		}
		checkKept(t, what+", merged", splitsOf(merged.All()), truth)

		s := NewSummary(len(truth))
		b := NewBatch(1000)
		for i, o := range occ {
			b.Add([]byte(o.word), o.ids, int32(i))
			if rng.IntN(7) == 0 {
				b.FlushSummary(s)
			}
		}
		b.FlushSummary(s)
		checkKept(t, what+", summary", splitsOf(s.All()), truth)
	}
}

// FuzzSplitsKept reads occurrences from data, two bytes each: the word
// (one of three) and its split (one of twelve, of one to four ids; one
// of a single id is the word's own) in the
// first, the batch it goes to and whether that batch flushes after it in
// the second. Whatever the order, the tables and a merge of two of them
// keep each word's MaxSplits splits of the smallest keys, exactly.
func FuzzSplitsKept(f *testing.F) {
	f.Add([]byte("\x00\x01\x10\x02\x21\x83\x3b\x04\x4a\x85\x05\x06\x17\x07\x29\x08"))
	f.Add([]byte("\xbb\x00\xaa\x01\x99\x02\x88\x83\x77\x00\x66\x01\x55\x82"))
	splits := [12][]uint32{{4}, {1, 9}, {2, 2, 2}, {0}, {7, 1, 1, 1}, {1, 8}, {3, 3}, {2, 2, 1}, {9}, {0, 0, 0, 5}, {1, 1}, {6}}
	f.Fuzz(func(t *testing.T, data []byte) {
		var occ []occurrence
		var ts [2]Tables
		batches := [2]*Batch{NewBatch(64), NewBatch(64)}
		for i := 0; i+1 < len(data); i += 2 {
			word, ids := data[i]>>4%3, splits[int(data[i]&15)%len(splits)]
			if len(ids) == 1 {
				// A token alone spells one word, as in a vocabulary.
				ids = []uint32{ids[0] + 16*uint32(word)}
			}
			o := occurrence{fmt.Sprintf("word%d", word), ids}
			occ = append(occ, o)
			k := data[i+1] & 1
			if len(o.ids) == 1 && data[i+1]&2 != 0 {
				batches[k].AddToken([]byte(o.word), o.ids[0], int32(i))
			} else {
				batches[k].Add([]byte(o.word), o.ids, int32(i))
			}
			if data[i+1]&0x80 != 0 {
				batches[k].Flush(&ts[data[i+1]>>2&1])
			}
		}
		batches[0].Flush(&ts[0])
		batches[1].Flush(&ts[1])
		var merged Tables
		for i := range ts {
			for w := range ts[i].All() {
				merged.AddWord(w.Bytes(), w.Count(), w.Pieces(), w.Docs(), w.Splits())
			}
		}
		checkKept(t, "merged", splitsOf(merged.All()), truthOf(occ))
	})
}
