package fragments

import (
	"encoding/binary"
	"slices"
	"sync"
)

// numParts is the number of word tables. A word belongs to one, chosen by
// its hash, and a worker flushing its batch locks them one by one, so the
// workers seldom wait for each other and every word is tallied once.
const numParts = 16

// partOf returns the partition of a word of hashWord h: bits of the mixed
// hash that neither the batch's index (the low ones) nor the word table's
// (the high 32) uses.
func partOf(h uint64) uint8 { return uint8(mixHash(h)>>24) & (numParts - 1) }

// wordTable holds the tallies of the words of one partition.
type wordTable struct {
	mu      sync.Mutex
	index   wordIndex     // word -> its tally
	chunks  [][]wordTally // the tallies, chunkSize a chunk: they never move, and growing copies nothing
	nwords  int32
	arena   []byte     // the words' bytes
	idArena []uint32   // the splits' ids
	more    []wordMore // the splits of words that split more than one way
	sink    uint64     // what touch read
}

// wordTally is one word's occurrences, in one cache line. It holds no
// pointers (the word and the splits' ids are offsets into its table's
// arenas), so the garbage collector never scans the millions of them a
// large corpus makes.
type wordTally struct {
	prefix        uint64 // the word's first eight bytes, packed: most words are found without reading the arena
	off, n        uint32 // the word is arena[off:off+n]
	count, pieces int64
	docs          int32
	more          int32    // 1 + the index of the word's further splits in more, or 0
	split         splitRef // the first split seen
	_             uint64   // pads the tally to 64 bytes
}

// wordMore holds the second to maxSplits-th splits of a word.
type wordMore struct{ splits [maxSplits - 1]splitRef }

// maxSplits is how many distinct splits of one word a table tells apart;
// the occurrences of any further split count in the word's totals only.
const maxSplits = 4

// splitRef is one way a word splits, seen count times: n ids, which are
// off itself when n is 1 and else idArena[off:off+n]. n is 0 in a split
// not yet used; every split has an id.
type splitRef struct {
	off, n uint32
	count  int64
}

// splitTally is a split with its ids, as the report reads it.
type splitTally struct {
	ids   []uint32
	count int64
}

// chunkBits sets the tallies of a chunk: 4096, 256 kB.
const (
	chunkBits = 12
	chunkSize = 1 << chunkBits
)

// at returns tally i of t.
func (t *wordTable) at(i int32) *wordTally { return &t.chunks[i>>chunkBits][i&(chunkSize-1)] }

func (t *wordTable) word(w *wordTally) []byte { return t.arena[w.off : w.off+w.n] }

// splitIDs returns the ids of split r, in a slice of their own when there
// is one.
func (t *wordTable) splitIDs(r splitRef) []uint32 {
	if r.n == 1 {
		return []uint32{r.off}
	}
	return t.idArena[r.off : r.off+r.n]
}

// splitIs reports whether split r is ids.
func (t *wordTable) splitIs(r splitRef, ids []uint32) bool {
	if int(r.n) != len(ids) {
		return false
	}
	if r.n == 1 {
		return r.off == ids[0]
	}
	return slices.Equal(t.idArena[r.off:r.off+r.n], ids)
}

// newSplit returns a split of ids seen n times.
func (t *wordTable) newSplit(ids []uint32, n int64) splitRef {
	if len(ids) == 1 {
		return splitRef{off: ids[0], n: 1, count: n}
	}
	off := len(t.idArena)
	t.idArena = append(roomFor(t.idArena, len(ids)), ids...)
	return splitRef{off: uint32(off), n: uint32(len(ids)), count: n}
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

// roomFor returns s with room for n more elements, doubling its capacity
// when it must grow: the word tables reach tens of megabytes, and
// append's gentler growth for large slices would copy them many times.
func roomFor[T any](s []T, n int) []T {
	if len(s)+n <= cap(s) {
		return s
	}
	bigger := make([]T, len(s), max(2*cap(s), len(s)+n, 1024))
	copy(bigger, s)
	return bigger
}

// mixHash spreads a hashWord value over all its bits: the tables use both
// the low ones and the high ones.
func mixHash(h uint64) uint64 {
	h ^= h >> 29
	h *= 0xbf58476d1ce4e5b9
	h ^= h >> 32
	return h
}

// entry returns the number of the tally of word, whose hashWord is h,
// making it when t has none.
func (t *wordTable) entry(word []byte, h uint64) int32 {
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

// batchTally counts the words of a run of documents before they go to the
// word tables: documents repeat their words and each other's, and a small
// table that stays in the processor's cache costs less per occurrence than
// the large ones. It holds copies of the words and splits, since the
// documents' text is gone by the time it is flushed. Its entries are kept
// small for the same reason: a word keeps two splits here, and an
// occurrence split a third way waits in spill for the flush.
type batchTally struct {
	index  []uint64 // open addressing: the mixed hash's high 32 bits<<32 | entry index+1; 0 is empty
	words  []batchWord
	hashes []uint64 // hashWord of words[i]
	bytes  []byte   // the words
	ids    []uint32 // the splits
	spill  []batchSpill
	pieces uint64 // the pieces of every occurrence in the batch
	epoch  uint64 // flushes so far, plus one: what shard.byToken entries are good for
}

// batchWords is how many distinct words a batch holds before it is
// flushed to the word tables.
const batchWords = 8192

// batchFull is the pieces a batch holds before it is flushed whatever its
// words: the batch's counters are 32 bits, and one document adds fewer
// than 2^32 - batchFull pieces (it is under 2 GiB).
const batchFull = 1 << 29

// batchWord is a word of a batch, in 64 bytes: one cache line. Its pieces
// are its splits' and its spills'.
type batchWord struct {
	prefix        uint64 // packPrefix of the word
	off, n        uint32 // the word is bytes[off:off+n]
	count         uint32
	docs, lastDoc int32
	splits        [2]batchSplit
	_             uint32
}

// batchSplit is one split of a batch word, seen count times: n ids, which
// are a, or a and b, when n is 1 or 2, and else ids[a:a+n]. n is 0 in a
// split not yet used.
type batchSplit struct{ a, b, n, count uint32 }

// is reports whether sp is the split ids.
func (sp *batchSplit) is(d *batchTally, ids []uint32) bool {
	if int(sp.n) != len(ids) {
		return false
	}
	switch sp.n {
	case 1:
		return ids[0] == sp.a
	case 2:
		return ids[0] == sp.a && ids[1] == sp.b
	}
	return slices.Equal(d.ids[sp.a:sp.a+sp.n], ids)
}

// idsOf returns the ids of sp, in buf when they are inline.
func (d *batchTally) idsOf(sp *batchSplit, buf *[2]uint32) []uint32 {
	if sp.n > 2 {
		return d.ids[sp.a : sp.a+sp.n]
	}
	buf[0], buf[1] = sp.a, sp.b
	return buf[:sp.n]
}

// batchSpill is one occurrence of words[word] split as ids[off:off+n],
// neither of the word's two splits in the batch.
type batchSpill struct{ word, off, n uint32 }

// add counts one occurrence of word, whose hashWord is h, split into ids,
// in the document numbered doc. It returns the word's entry and the split
// it counted, or -1 when the split went to spill.
func (d *batchTally) add(word []byte, h uint64, ids []uint32, doc int32) (uint32, int) {
	if len(d.index) == 0 {
		d.index = make([]uint64, 2*batchWords)
	}
	mask := len(d.index) - 1
	mh := mixHash(h)
	tag := mh >> 32 << 32
	p := int(mh) & mask
	prefix := packPrefix(word)
	var w *batchWord
	var wi uint32
	for {
		x := d.index[p]
		if x == 0 {
			off := len(d.bytes)
			d.bytes = append(d.bytes, word...)
			wi = uint32(len(d.words))
			d.words = append(d.words, batchWord{prefix: prefix, off: uint32(off), n: uint32(len(word))})
			d.hashes = append(d.hashes, h)
			d.index[p] = tag | uint64(wi+1)
			w = &d.words[wi]
			if 2*len(d.words) > len(d.index) {
				d.grow()
			}
			break
		}
		if x&^0xffffffff == tag {
			wi = uint32(x) - 1
			if c := &d.words[wi]; c.prefix == prefix && int(c.n) == len(word) && (len(word) <= 8 || string(d.bytes[c.off:c.off+c.n]) == string(word)) {
				w = c
				break
			}
		}
		p = (p + 1) & mask
	}
	d.occur(w, len(ids), doc)
	j := 0
	for ; j < len(w.splits) && w.splits[j].n != 0; j++ {
		if sp := &w.splits[j]; sp.is(d, ids) {
			sp.count++
			return wi, j
		}
	}
	if j < len(w.splits) {
		sp := batchSplit{n: uint32(len(ids)), count: 1}
		switch len(ids) {
		case 2:
			sp.b = ids[1]
			fallthrough
		case 1:
			sp.a = ids[0]
		default:
			sp.a = uint32(len(d.ids))
			d.ids = append(d.ids, ids...)
		}
		w.splits[j] = sp
		return wi, j
	}
	off := uint32(len(d.ids))
	d.ids = append(d.ids, ids...)
	d.spill = append(d.spill, batchSpill{word: wi, off: off, n: uint32(len(ids))})
	return wi, -1
}

// again counts one more occurrence of words[wi] split as its split j, a
// single token, in the document numbered doc.
func (d *batchTally) again(wi uint32, j uint64, doc int32) {
	w := &d.words[wi]
	d.occur(w, 1, doc)
	w.splits[j].count++
}

// occur counts an occurrence of w, of n pieces, in the document numbered
// doc; its split is the caller's to count.
func (d *batchTally) occur(w *batchWord, n int, doc int32) {
	w.count++
	d.pieces += uint64(n)
	if w.lastDoc != doc {
		w.lastDoc = doc
		w.docs++
	}
}

// full reports whether the batch is due to be flushed.
func (d *batchTally) full() bool { return len(d.words) >= batchWords || d.pieces >= batchFull }

func (d *batchTally) grow() {
	d.index = make([]uint64, 2*len(d.index))
	mask := len(d.index) - 1
	for i, h := range d.hashes {
		mh := mixHash(h)
		p := int(mh) & mask
		for d.index[p] != 0 {
			p = (p + 1) & mask
		}
		d.index[p] = mh>>32<<32 | uint64(i+1)
	}
}

// flush adds the words of sh's batch to the word tables and empties the
// batch. A word's documents add up exactly: a document is scanned within
// one batch.
func (f *Fragmenter) flush(sh *shard) {
	d := &sh.local
	if len(d.words) == 0 {
		return
	}
	// Sort the batch's words by partition, counting.
	var start [numParts + 1]int32
	part := sh.part[:0]
	for _, h := range d.hashes {
		p := partOf(h)
		part = append(part, p)
		start[p+1]++
	}
	for p := 1; p <= numParts; p++ {
		start[p] += start[p-1]
	}
	order := roomFor(sh.order[:0], len(part))[:len(part)]
	at := roomFor(sh.at[:0], len(part))[:len(part)] // each batch word's tally in its table
	next := start
	for i, p := range part {
		order[next[p]] = int32(i)
		next[p]++
	}
	var hashes [flushGroup]uint64
	var buf [2]uint32
	for p := range numParts {
		group := order[start[p]:start[p+1]]
		if len(group) == 0 {
			continue
		}
		t := &f.parts[p]
		t.mu.Lock()
		for g := 0; g < len(group); g += flushGroup {
			ws := group[g:min(g+flushGroup, len(group))]
			for j, i := range ws {
				hashes[j] = d.hashes[i]
			}
			t.touch(hashes[:len(ws)])
			for _, i := range ws {
				lw := &d.words[i]
				wi := t.entry(d.bytes[lw.off:lw.off+lw.n], d.hashes[i])
				at[i] = wi
				w := t.at(wi)
				w.count += int64(lw.count)
				w.docs += lw.docs
				for j := range lw.splits {
					sp := &lw.splits[j]
					if sp.n == 0 {
						break
					}
					w.pieces += int64(sp.count) * int64(sp.n)
					t.addSplit(w, d.idsOf(sp, &buf), int64(sp.count))
				}
			}
		}
		t.mu.Unlock()
	}
	for _, sp := range d.spill {
		t := &f.parts[part[sp.word]]
		t.mu.Lock()
		w := t.at(at[sp.word])
		w.pieces += int64(sp.n)
		t.addSplit(w, d.ids[sp.off:sp.off+sp.n], 1)
		t.mu.Unlock()
	}
	sh.part, sh.order, sh.at = part, order, at
	if len(d.index) > 2*batchWords {
		d.index = make([]uint64, 2*batchWords)
	} else {
		clear(d.index)
	}
	d.words, d.hashes, d.bytes, d.ids, d.spill, d.pieces = d.words[:0], d.hashes[:0], d.bytes[:0], d.ids[:0], d.spill[:0], 0
	d.epoch++
	if byTokenTag(d.epoch) == 1 {
		clear(sh.byToken)
	}
}

// flushGroup is how many words flush looks up at once.
const flushGroup = 16

// touch reads the index slots, the tallies, the first splits' ids and the
// bytes of long words that the words of hashes will be looked up in, so
// that the cache misses overlap instead of coming one after the other.
func (t *wordTable) touch(hashes []uint64) {
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
		if i := int(s & 0xffffffff); i > 0 {
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

// addSplit counts n occurrences of w, a tally of t, split as ids.
func (t *wordTable) addSplit(w *wordTally, ids []uint32, n int64) {
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
}

// countSplit counts n occurrences split as ids in sp, when sp is that
// split or is not yet used, and reports whether it did.
func (t *wordTable) countSplit(sp *splitRef, ids []uint32, n int64) bool {
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
// cheaper than a map here, since the hash comes from the scan and the
// stored hash is compared before the bytes.
type wordIndex struct {
	slots []uint64 // hash<<32 | tally index+1; 0 is empty
	used  int
}

// home returns the first slot to try for a word of mixed hash h: slots
// are placed by its high 32 bits, the ones a slot keeps.
func (x *wordIndex) home(h uint64) int { return int(h>>32) & (len(x.slots) - 1) }

// find returns the tally index of word, or -1 and the slot to insert it at.
func (x *wordIndex) find(h uint64, word []byte, t *wordTable) (int32, int) {
	if len(x.slots) == 0 {
		x.slots = make([]uint64, 1<<10)
	}
	mask := len(x.slots) - 1
	hi := h >> 32
	prefix := packPrefix(word)
	for p := x.home(h); ; p = (p + 1) & mask {
		s := x.slots[p]
		if s == 0 {
			return -1, p
		}
		if s>>32 == hi {
			i := int32(s&0xffffffff) - 1
			if w := t.at(i); w.prefix == prefix && int(w.n) == len(word) && (len(word) <= 8 || string(t.word(w)) == string(word)) {
				return i, p
			}
		}
	}
}

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

// insert puts tally index i for hash h at slot, growing the table when it
// is half full.
func (x *wordIndex) insert(slot int, h uint64, i int32) {
	x.slots[slot] = h>>32<<32 | uint64(i+1)
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
