package tally

import (
	"cmp"
	"iter"
	"slices"
	"sync"
)

// A Summary counts the most frequent words in a fixed number of counters,
// by the Space-Saving method (Metwally, Agrawal and El Abbadi, "Efficient
// computation of frequent and top-k elements in data streams", ICDT 2005),
// weighted: a batch's word comes with its count. A word already counted
// adds to its counter; a new one takes a free counter or, when none is
// free, the one with the smallest count c, starting from c plus its own
// count, with c as its possible over-count. So a word's count is never
// under its true count and at most Err over it; Err is at most the total
// count over the counters (N/k), and every word whose true count is above
// N/k has a counter. Pieces are estimated alike (the over-count's
// occurrences at the word's own pieces each); documents are those seen
// since the word took its counter, a lower bound.
type Summary struct {
	mu      sync.Mutex
	byWord  map[string]int32
	entries []summaryEntry
	heap    []int32 // entries by count, the smallest first
	total   int64   // every occurrence counted, kept or not
	k       int
}

type summaryEntry struct {
	word         string
	count, err   int64
	pieces, docs int64
	splits       []Split
	heapAt       int32
	stamp        uint32 // as a tally's: see Batch.SetStamp
}

// NewSummary returns a summary of k counters (at least 1).
func NewSummary(k int) *Summary {
	k = max(k, 1)
	return &Summary{byWord: make(map[string]int32, min(k, 1<<16)), k: k}
}

// Counters returns the number of counters.
func (s *Summary) Counters() int { return s.k }

// Total returns the occurrences counted, kept or not.
func (s *Summary) Total() int64 {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.total
}

// MaxErr returns the largest over-count of any counter: no count is more
// than that above the word's true count.
func (s *Summary) MaxErr() int64 {
	s.mu.Lock()
	defer s.mu.Unlock()
	var m int64
	for i := range s.entries {
		m = max(m, s.entries[i].err)
	}
	return m
}

// Add counts count occurrences of word, which took pieces tokens in all,
// in docs documents, split as splits.
func (s *Summary) Add(word []byte, count, pieces, docs int64, splits []Split) {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.add(word, count, pieces, docs, splits, 0, 0)
}

// add counts word as Add does; floor is the count it starts from when it
// takes a counter, and stamp the batch's (see Batch.SetStamp).
func (s *Summary) add(word []byte, count, pieces, docs int64, splits []Split, floor int64, stamp uint32) {
	s.total += count
	if i, ok := s.byWord[string(word)]; ok {
		e := &s.entries[i]
		e.count += count
		e.pieces += pieces
		if stamp == 0 {
			e.docs += docs
		} else if e.stamp != stamp {
			e.docs += docs
			e.stamp = stamp
		}
		e.addSplits(splits)
		s.fix(int(e.heapAt))
		return
	}
	if len(s.entries) < s.k {
		i := int32(len(s.entries))
		s.entries = append(s.entries, summaryEntry{heapAt: int32(len(s.heap))})
		s.heap = append(s.heap, i)
		s.fill(i, word, count+floor, pieces, docs, splits, floor, stamp)
		s.up(len(s.heap) - 1)
		return
	}
	i := s.heap[0] // the smallest count gives way
	old := &s.entries[i]
	c := old.count
	delete(s.byWord, old.word)
	s.fill(i, word, c+count, pieces, docs, splits, c, stamp)
	s.fix(0)
}

// fill puts word in counter i with count, over-counted by at most err.
func (s *Summary) fill(i int32, word []byte, count, pieces, docs int64, splits []Split, err int64, stamp uint32) {
	e := &s.entries[i]
	rate := 0.0
	if count-err > 0 {
		rate = float64(pieces) / float64(count-err)
	}
	*e = summaryEntry{word: string(word), count: count, err: err, docs: docs, heapAt: e.heapAt, stamp: stamp}
	e.pieces = pieces + int64(float64(err)*rate+0.5)
	e.addSplits(splits)
	s.byWord[e.word] = i
}

// addSplits counts splits in e by the tables' rule: e keeps, by key (see
// CompareSplits), the MaxSplits splits of the smallest keys it has seen
// since the word took its counter.
func (e *summaryEntry) addSplits(splits []Split) {
	for _, sp := range splits {
		k, found := slices.BinarySearchFunc(e.splits, sp.IDs, func(x Split, ids []uint32) int { return CompareSplits(x.IDs, ids) })
		switch {
		case found:
			e.splits[k].Count += sp.Count
		case k == MaxSplits:
			// Its key is larger than every one kept.
		default:
			if len(e.splits) == MaxSplits {
				e.splits = e.splits[:MaxSplits-1] // the largest key gives way
			}
			e.splits = slices.Insert(e.splits, k, Split{IDs: slices.Clone(sp.IDs), Count: sp.Count})
		}
	}
}

func (s *Summary) less(a, b int) bool {
	return s.entries[s.heap[a]].count < s.entries[s.heap[b]].count
}

func (s *Summary) swap(a, b int) {
	s.heap[a], s.heap[b] = s.heap[b], s.heap[a]
	s.entries[s.heap[a]].heapAt = int32(a)
	s.entries[s.heap[b]].heapAt = int32(b)
}

func (s *Summary) up(j int) {
	for j > 0 {
		p := (j - 1) / 2
		if !s.less(j, p) {
			return
		}
		s.swap(j, p)
		j = p
	}
}

// fix restores the heap after the count at heap position j grew.
func (s *Summary) fix(j int) {
	n := len(s.heap)
	for {
		l, m := 2*j+1, j
		if l < n && s.less(l, m) {
			m = l
		}
		if r := l + 1; r < n && s.less(r, m) {
			m = r
		}
		if m == j {
			return
		}
		s.swap(j, m)
		j = m
	}
}

// SummaryOf moves the words of ts into a summary of k counters: the k most
// frequent exactly, the rest dropped. A dropped word counted again later
// is over-counted by at most the smallest count kept, which bounds its
// true count before, so every count stays an upper bound. It empties ts
// as it goes, a partition at a time, so that the summary grows as the
// tables shrink; ts must not be used after.
func SummaryOf(ts *Tables, k int) *Summary {
	s := NewSummary(k)
	type ref struct {
		count int64
		part  int32
		i     int32
	}
	keep := make([]ref, 0, min(2*k, ts.Len())+1)
	var dropped int64
	trim := func() {
		slices.SortStableFunc(keep, func(a, b ref) int { return cmp.Compare(b.count, a.count) })
		for _, r := range keep[k:] {
			dropped += r.count
		}
		keep = keep[:k]
	}
	for p := range ts.parts {
		t := &ts.parts[p]
		for i := range t.nwords {
			keep = append(keep, ref{t.at(i).count, int32(p), i})
			if len(keep) > 2*k { // trim now and then, so that this list stays near k
				trim()
			}
		}
	}
	if len(keep) > k {
		trim()
	}
	// Partition by partition, in the order each saw its words.
	slices.SortFunc(keep, func(a, b ref) int { return cmp.Or(cmp.Compare(a.part, b.part), cmp.Compare(a.i, b.i)) })
	s.mu.Lock()
	defer s.mu.Unlock()
	next := 0
	for p := range ts.parts {
		t := &ts.parts[p]
		for ; next < len(keep) && keep[next].part == int32(p); next++ {
			w := Word{t: t, w: t.at(keep[next].i)}
			s.add(w.Bytes(), w.Count(), w.Pieces(), w.Docs(), w.Splits(), 0, w.stamp())
		}
		t.release()
	}
	s.total += dropped
	return s
}

// All returns the words counted, in no set order.
func (s *Summary) All() iter.Seq[Word] {
	return func(yield func(Word) bool) {
		for i := range s.entries {
			if !yield(Word{e: &s.entries[i]}) {
				return
			}
		}
	}
}

// stamp returns the stamp of the last batch that counted a document for w.
func (w Word) stamp() uint32 {
	if w.e != nil {
		return w.e.stamp
	}
	return w.w.stamp
}

// Len returns the words the summary holds.
func (s *Summary) Len() int { return len(s.entries) }
