package tally

import (
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
	s.add(word, count, pieces, docs, splits, 0)
}

func (s *Summary) add(word []byte, count, pieces, docs int64, splits []Split, floor int64) {
	s.total += count
	if i, ok := s.byWord[string(word)]; ok {
		e := &s.entries[i]
		e.count += count
		e.pieces += pieces
		e.docs += docs
		e.addSplits(splits)
		s.fix(int(e.heapAt))
		return
	}
	if len(s.entries) < s.k {
		i := int32(len(s.entries))
		s.entries = append(s.entries, summaryEntry{heapAt: int32(len(s.heap))})
		s.heap = append(s.heap, i)
		s.fill(i, word, count+floor, pieces, docs, splits, floor)
		s.up(len(s.heap) - 1)
		return
	}
	i := s.heap[0] // the smallest count gives way
	old := &s.entries[i]
	c := old.count
	delete(s.byWord, old.word)
	s.fill(i, word, c+count, pieces, docs, splits, c)
	s.fix(0)
}

// fill puts word in counter i with count, over-counted by at most err.
func (s *Summary) fill(i int32, word []byte, count, pieces, docs int64, splits []Split, err int64) {
	e := &s.entries[i]
	rate := 0.0
	if count-err > 0 {
		rate = float64(pieces) / float64(count-err)
	}
	*e = summaryEntry{word: string(word), count: count, err: err, docs: docs, heapAt: e.heapAt}
	e.pieces = pieces + int64(float64(err)*rate+0.5)
	e.addSplits(splits)
	s.byWord[e.word] = i
}

func (e *summaryEntry) addSplits(splits []Split) {
	for _, sp := range splits {
		if k := slices.IndexFunc(e.splits, func(x Split) bool { return slices.Equal(x.IDs, sp.IDs) }); k >= 0 {
			e.splits[k].Count += sp.Count
		} else if len(e.splits) < MaxSplits {
			e.splits = append(e.splits, Split{IDs: slices.Clone(sp.IDs), Count: sp.Count})
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
// true count before, so every count stays an upper bound.
func SummaryOf(ts *Tables, k int) *Summary {
	s := NewSummary(k)
	type ref struct {
		count int64
		w     Word
	}
	keep := make([]ref, 0, min(k, ts.Len()))
	var dropped int64
	for w := range ts.All() {
		keep = append(keep, ref{w.Count(), w})
		if len(keep) > 4*k { // trim now and then, so that this list stays near k
			slices.SortStableFunc(keep, func(a, b ref) int { return int(min(max(b.count-a.count, -1), 1)) })
			for _, r := range keep[k:] {
				dropped += r.count
			}
			keep = keep[:k]
		}
	}
	slices.SortStableFunc(keep, func(a, b ref) int { return int(min(max(b.count-a.count, -1), 1)) })
	if len(keep) > k {
		for _, r := range keep[k:] {
			dropped += r.count
		}
		keep = keep[:k]
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	for _, r := range keep {
		s.add(r.w.Bytes(), r.w.Count(), r.w.Pieces(), r.w.Docs(), r.w.Splits(), 0)
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

// Len returns the words the summary holds.
func (s *Summary) Len() int { return len(s.entries) }
