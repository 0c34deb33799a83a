package tally

import (
	"cmp"
	"encoding/binary"
	"iter"
	"slices"
	"sync"
)

// numParts is the number of partitions of the tables. A word belongs to
// one, chosen by its hash, and a worker flushing its batch locks them one
// by one.
const numParts = 16

// MaxSplits is how many distinct splits of one word the tables tell
// apart: those of the smallest keys (see CompareSplits). The occurrences
// of any further split count in the word's totals only.
const MaxSplits = 4

// A slot of the batch's index and of a partition's index is the word's
// mixed hash's high 32 bits above the number of its entry plus one; an
// empty slot is 0.
const (
	slotTagShift  = 32
	slotEntryMask = 1<<slotTagShift - 1
)

// chunkBits sets the tallies of a chunk: 4096, 256 kB.
const (
	chunkBits = 12
	chunkSize = 1 << chunkBits
)

// Tables holds the tallies of every word flushed into it. The zero value
// is empty and ready to use; batches may flush into it at once.
type Tables struct {
	parts [numParts]table
}

// table holds the tallies of the words of one partition.
type table struct {
	mu      sync.Mutex
	index   wordIndex     // word -> its tally
	chunks  [][]wordTally // the tallies, chunkSize a chunk: they never move, and growing copies nothing
	nwords  int32
	arena   []byte     // the words' bytes
	idArena []uint32   // the splits' ids
	more    []wordMore // the splits of words that split more than one way
	sink    uint64     // what touch read
}

// wordTally is one word's occurrences, in one cache line and without
// pointers (see the package doc).
type wordTally struct {
	prefix        uint64 // the word's first eight bytes, packed: most words are found without reading the arena
	off, n        uint32 // the word is arena[off:off+n]
	count, pieces int64
	docs          int64
	more          int32    // 1 + the index of the word's further splits in more, or 0
	stamp         uint32   // the stamp of the last batch that counted a document for it (see Batch.SetStamp)
	split         splitRef // one of the splits kept, the first seen unless it gave way
}

// wordMore holds the splits of a word kept besides its tally's own.
type wordMore struct{ splits [MaxSplits - 1]splitRef }

// splitRef is one way a word splits, seen count times: n ids, which are
// off itself when n is 1 and else idArena[off:off+n]. n is 0 in a split
// not yet used; every split has an id.
type splitRef struct {
	off, n uint32
	count  int64
}

// Len returns the number of distinct words in ts.
func (ts *Tables) Len() int {
	n := 0
	for p := range ts.parts {
		n += int(ts.parts[p].nwords)
	}
	return n
}

// Bytes returns about how much memory ts holds.
func (ts *Tables) Bytes() int64 {
	var n int64
	for p := range ts.parts {
		t := &ts.parts[p]
		t.mu.Lock()
		n += int64(len(t.index.slots))*8 + int64(len(t.chunks))*chunkSize*64 + int64(cap(t.arena)) +
			int64(cap(t.idArena))*4 + int64(cap(t.more))*int64(MaxSplits-1)*16
		t.mu.Unlock()
	}
	return n
}

// All returns every word of ts, partition by partition and in the order
// each partition first saw them. It must not run while a batch flushes.
func (ts *Tables) All() iter.Seq[Word] {
	return func(yield func(Word) bool) {
		for p := range ts.parts {
			t := &ts.parts[p]
			for i := range t.nwords {
				if !yield(Word{t: t, w: t.at(i)}) {
					return
				}
			}
		}
	}
}

// Word is one word's tallies in a Tables or a Summary. It is valid until
// the next flush into them.
type Word struct {
	t *table
	w *wordTally
	e *summaryEntry // set for a word of a Summary
}

// Bytes returns the word; the caller must not change them.
func (w Word) Bytes() []byte {
	if w.e != nil {
		return []byte(w.e.word)
	}
	return w.t.word(w.w)
}

// Count returns the word's occurrences (in a Summary, at most Err more).
func (w Word) Count() int64 {
	if w.e != nil {
		return w.e.count
	}
	return w.w.count
}

// Err returns how far Count may be above the true count: 0 in Tables.
func (w Word) Err() int64 {
	if w.e != nil {
		return w.e.err
	}
	return 0
}

// Pieces returns the tokens its occurrences took, all splits together.
func (w Word) Pieces() int64 {
	if w.e != nil {
		return w.e.pieces
	}
	return w.w.pieces
}

// Docs returns the number of documents it occurs in (in a Summary, those
// since it took its counter).
func (w Word) Docs() int64 {
	if w.e != nil {
		return w.e.docs
	}
	return w.w.docs
}

// Split is one way a word was split into tokens, and how often.
type Split struct {
	IDs   []uint32
	Count int64
}

// Splits returns the word's splits kept, at most MaxSplits, by key (see
// CompareSplits): the same whatever the order they were counted in.
func (w Word) Splits() []Split {
	if w.e != nil {
		return w.e.splits
	}
	t := w.t
	out := []Split{{IDs: t.splitIDs(w.w.split), Count: w.w.split.count}}
	if w.w.more > 0 {
		for _, sp := range t.more[w.w.more-1].splits {
			if sp.n > 0 {
				out = append(out, Split{IDs: t.splitIDs(sp), Count: sp.count})
			}
		}
	}
	slices.SortFunc(out, func(a, b Split) int { return CompareSplits(a.IDs, b.IDs) })
	return out
}

// CompareSplits orders splits by key: the one of fewer ids first, then by
// their ids, lexicographically. A word keeps the MaxSplits splits of the
// smallest keys, an order that does not depend on when a split arrives.
func CompareSplits(a, b []uint32) int {
	if len(a) != len(b) {
		return cmp.Compare(len(a), len(b))
	}
	return slices.Compare(a, b)
}

// release lets the memory of t go; t is empty after.
func (t *table) release() {
	t.index, t.chunks, t.nwords, t.arena, t.idArena, t.more = wordIndex{}, nil, 0, nil, nil, nil
}

// at returns tally i of t.
func (t *table) at(i int32) *wordTally { return &t.chunks[i>>chunkBits][i&(chunkSize-1)] }

func (t *table) word(w *wordTally) []byte { return t.arena[w.off : w.off+w.n] }

// splitIDs returns the ids of split r, in a slice of their own when there
// is one.
func (t *table) splitIDs(r splitRef) []uint32 {
	if r.n == 1 {
		return []uint32{r.off}
	}
	return t.idArena[r.off : r.off+r.n]
}

// splitIs reports whether split r is ids.
func (t *table) splitIs(r splitRef, ids []uint32) bool {
	if int(r.n) != len(ids) {
		return false
	}
	if r.n == 1 {
		return r.off == ids[0]
	}
	return slices.Equal(t.idArena[r.off:r.off+r.n], ids)
}

// compareSplit returns CompareSplits of split r and ids.
func (t *table) compareSplit(r splitRef, ids []uint32) int {
	if r.n == 1 && len(ids) == 1 {
		return cmp.Compare(r.off, ids[0])
	}
	if int(r.n) != len(ids) {
		return cmp.Compare(int(r.n), len(ids))
	}
	return slices.Compare(t.idArena[r.off:r.off+r.n], ids)
}

// compareRefs returns CompareSplits of splits a and b.
func (t *table) compareRefs(a, b splitRef) int {
	if b.n == 1 {
		return t.compareSplit(a, []uint32{b.off})
	}
	return t.compareSplit(a, t.idArena[b.off:b.off+b.n])
}

// newSplit returns a split of ids seen n times.
func (t *table) newSplit(ids []uint32, n int64) splitRef {
	if len(ids) == 1 {
		return splitRef{off: ids[0], n: 1, count: n}
	}
	off := len(t.idArena)
	t.idArena = append(roomFor(t.idArena, len(ids)), ids...)
	return splitRef{off: uint32(off), n: uint32(len(ids)), count: n}
}

// entry returns the number of the tally of word, whose hashWord is h,
// making it when t has none.
func (t *table) entry(word []byte, h uint64) int32 {
	h = mixHash(h)
	i, slot := t.index.find(h, word, t)
	if i < 0 {
		off := len(t.arena)
		t.arena = append(roomFor(t.arena, len(word)), word...)
		i = t.nwords
		t.index.insert(slot, h, i)
		if int(i)>>chunkBits == len(t.chunks) {
			t.chunks = append(t.chunks, make([]wordTally, chunkSize))
		}
		*t.at(i) = wordTally{off: uint32(off), n: uint32(len(word)), prefix: packPrefix(word)}
		t.nwords++
	}
	return i
}

// flushGroup is how many words a flush looks up at once.
const flushGroup = 16

// touch reads the index slots, the tallies, the first splits' ids and the
// bytes of long words that the words of hashes will be looked up in, so
// that the cache misses overlap instead of coming one after the other.
func (t *table) touch(hashes []uint64) {
	x := &t.index
	if len(x.slots) == 0 {
		return
	}
	var slots [flushGroup]uint64
	for j, h := range hashes {
		slots[j] = x.slots[x.home(mixHash(h))]
	}
	var sum uint64
	var offs, words [flushGroup]uint32
	for j, s := range slots[:len(hashes)] {
		if i := int(s & slotEntryMask); i > 0 {
			w := t.at(int32(i - 1))
			sum += w.prefix
			if w.split.n > 1 {
				offs[j] = w.split.off + 1
			}
			if w.n > 8 {
				words[j] = w.off + 8
			}
		}
	}
	for j, off := range offs[:len(hashes)] {
		if off > 0 && int(off) <= len(t.idArena) {
			sum += uint64(t.idArena[off-1])
		}
		if w := words[j]; w > 0 && int(w) < len(t.arena) {
			sum += uint64(t.arena[w])
		}
	}
	t.sink += sum
}

// addSplit counts n occurrences of w, a tally of t, split as ids. When w
// keeps MaxSplits other splits already, ids takes the place of the one of
// the largest key if its own key is smaller, and is not kept otherwise
// (see the package doc for why the counts kept are then exact).
func (t *table) addSplit(w *wordTally, ids []uint32, n int64) {
	if t.countSplit(&w.split, ids, n) {
		return
	}
	if w.more == 0 {
		t.more = append(t.more, wordMore{})
		w.more = int32(len(t.more))
	}
	m := &t.more[w.more-1]
	for q := range m.splits {
		if t.countSplit(&m.splits[q], ids, n) {
			return
		}
	}
	last := &w.split // every place is taken: find the largest key kept
	for q := range m.splits {
		if t.compareRefs(m.splits[q], *last) > 0 {
			last = &m.splits[q]
		}
	}
	if t.compareSplit(*last, ids) > 0 {
		t.replaceSplit(last, ids, n)
	}
}

// replaceSplit puts ids, seen n times, in the place of split sp, whose key
// is larger. A larger key has at least as many ids, so the new ones fit in
// the old ones' place in the id arena: replacing a split never grows it.
func (t *table) replaceSplit(sp *splitRef, ids []uint32, n int64) {
	if len(ids) == 1 {
		*sp = splitRef{off: ids[0], n: 1, count: n}
		return
	}
	copy(t.idArena[sp.off:sp.off+sp.n], ids)
	*sp = splitRef{off: sp.off, n: uint32(len(ids)), count: n}
}

// countSplit counts n occurrences split as ids in sp, when sp is that
// split or is not yet used, and reports whether it did.
func (t *table) countSplit(sp *splitRef, ids []uint32, n int64) bool {
	switch {
	case sp.n == 0:
		*sp = t.newSplit(ids, n)
	case t.splitIs(*sp, ids):
		sp.count += n
	default:
		return false
	}
	return true
}

// wordIndex is an open-addressing hash table from a word to its tally:
// cheaper than a map here, since the hash comes with the word and the
// stored hash is compared before the bytes.
type wordIndex struct {
	slots []uint64 // see slotTagShift
	used  int
}

// home returns the first slot to try for a word of mixed hash h: slots
// are placed by its high 32 bits, the ones a slot keeps.
func (x *wordIndex) home(h uint64) int { return int(h>>slotTagShift) & (len(x.slots) - 1) }

// find returns the tally index of word, or -1 and the slot to insert it at.
func (x *wordIndex) find(h uint64, word []byte, t *table) (int32, int) {
	if len(x.slots) == 0 {
		x.slots = make([]uint64, 1<<10)
	}
	mask := len(x.slots) - 1
	hi := h >> slotTagShift
	prefix := packPrefix(word)
	for p := x.home(h); ; p = (p + 1) & mask {
		s := x.slots[p]
		if s == 0 {
			return -1, p
		}
		if s>>slotTagShift == hi {
			i := int32(s&slotEntryMask) - 1
			if w := t.at(i); w.prefix == prefix && int(w.n) == len(word) && (len(word) <= 8 || string(t.word(w)) == string(word)) {
				return i, p
			}
		}
	}
}

// insert puts tally index i for hash h at slot, growing the table when it
// is half full.
func (x *wordIndex) insert(slot int, h uint64, i int32) {
	x.slots[slot] = h>>slotTagShift<<slotTagShift | uint64(i+1)
	x.used++
	if 2*x.used <= len(x.slots) {
		return
	}
	old := x.slots
	x.slots = make([]uint64, 2*len(old))
	mask := len(x.slots) - 1
	for _, s := range old {
		if s == 0 {
			continue
		}
		p := x.home(s) // the slot keeps the hash's high 32 bits
		for x.slots[p] != 0 {
			p = (p + 1) & mask
		}
		x.slots[p] = s
	}
}

// hashWord hashes a word eight bytes at a time.
func hashWord(w []byte) uint64 {
	h := uint64(len(w)) * 0x9E3779B97F4A7C15
	for len(w) >= 8 {
		h = (h ^ binary.LittleEndian.Uint64(w)) * 0xbf58476d1ce4e5b9
		h ^= h >> 31
		w = w[8:]
	}
	if len(w) > 0 {
		h = (h ^ packPrefix(w)) * 0xbf58476d1ce4e5b9
	}
	return h
}

// mixHash spreads a hashWord value over all its bits: the indexes use
// both the low ones and the high ones.
func mixHash(h uint64) uint64 {
	h ^= h >> 29
	h *= 0xbf58476d1ce4e5b9
	h ^= h >> 32
	return h
}

// partOf returns the partition of a word of hashWord h: bits of the mixed
// hash that neither the batch's index (the low ones) nor the tables' (the
// high 32) uses.
func partOf(h uint64) uint8 { return uint8(mixHash(h)>>24) & (numParts - 1) }

// packPrefix packs the first eight bytes of word (fewer when it is
// shorter; the length tells them apart).
func packPrefix(word []byte) uint64 {
	n := len(word)
	switch {
	case n >= 8:
		return binary.LittleEndian.Uint64(word)
	case n >= 4:
		// Two loads that overlap where n < 8: the bytes they share are
		// the same, so or-ing them is exact.
		lo := uint64(binary.LittleEndian.Uint32(word))
		hi := uint64(binary.LittleEndian.Uint32(word[n-4:]))
		return lo | hi<<(8*(n-4))
	case n > 0:
		return uint64(word[0]) | uint64(word[n>>1])<<(8*(n>>1)) | uint64(word[n-1])<<(8*(n-1))
	}
	return 0
}

// roomFor returns s with room for n more elements, doubling its capacity
// when it must grow: the tables reach tens of megabytes, and append's
// gentler growth for large slices would copy them many times.
func roomFor[T any](s []T, n int) []T {
	if len(s)+n <= cap(s) {
		return s
	}
	bigger := make([]T, len(s), max(2*cap(s), len(s)+n, 1024))
	copy(bigger, s)
	return bigger
}

// AddWord adds one word's tallies, as another Tables holds them (a shard's,
// read back from a partial report), to ts: its occurrences, pieces and
// documents, and its splits, kept by the same rule as a flush's. It must
// not be called while batches flush into ts.
func (ts *Tables) AddWord(word []byte, count, pieces, docs int64, splits []Split) {
	h := hashWord(word)
	t := &ts.parts[partOf(h)]
	w := t.at(t.entry(word, h))
	w.count += count
	w.pieces += pieces
	w.docs += docs
	for _, sp := range splits {
		t.addSplit(w, sp.IDs, sp.Count)
	}
}
