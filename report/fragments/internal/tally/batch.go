package tally

import (
	"math"
	"slices"
)

// Batch counts the words of a run of documents before they go to the
// Tables: documents repeat their words and each other's, and a small table
// that stays in the processor's cache costs less per occurrence than the
// large ones. It holds copies of the words and splits, since the
// documents' text is gone by the time it is flushed. Its entries are kept
// small for the same reason: a word keeps two splits here, and an
// occurrence split a third way waits in spill for the flush.
//
// A Batch is one worker's: its methods are not safe for concurrent use.
type Batch struct {
	index  []uint64 // open addressing, see slotTagShift
	words  []batchWord
	hashes []uint64 // hashWord of words[i]
	bytes  []byte   // the words
	ids    []uint32 // the splits
	spill  []batchSpill
	pieces uint64 // the pieces of every occurrence in the batch
	epoch  uint64 // flushes so far, plus one: what byToken entries are good for
	stamp  uint32 // the document's stamp, when the batch holds one document flushed in parts (see SetStamp)
	// byToken finds, by token id, the entry of the word that token is
	// alone, as tokenTag (see there).
	byToken []uint32
	// Flush's scratch space.
	part  []uint8 // the partition of each word
	order []int32 // the words by partition
	at    []int32 // each word's tally in its partition
}

// A byToken entry is the batch's tag above the split's number (0 or 1)
// above the word's entry plus one. Tags run from 1 to numTags, so that an
// entry of 0 is empty; Flush clears the look-up before a tag comes round
// again.
const (
	tokenEntryBits = 24
	tokenEntryMask = 1<<tokenEntryBits - 1
	tokenSplitBit  = tokenEntryBits
	tokenTagShift  = tokenSplitBit + 1
	numTags        = 1<<(32-tokenTagShift) - 1
)

// tokenTag returns the tag of byToken entries made in the batch of epoch.
func tokenTag(epoch uint64) uint32 { return uint32(epoch%numTags) + 1 }

// batchWords is how many distinct words a batch holds before it is due to
// be flushed.
const batchWords = 8192

// batchFull is the pieces a batch holds before it is due to be flushed,
// whatever its words; batchBytes bounds its words' bytes and ids the same
// way, half the reach of its 32-bit offsets (see the package doc).
const (
	batchFull  = 1 << 29
	batchBytes = 1 << 31
)

// batchWord is a word of a batch, in 64 bytes: one cache line. Its pieces
// are its splits' and its spills'.
type batchWord struct {
	prefix        uint64 // packPrefix of the word
	off, n        uint32 // the word is bytes[off:off+n]
	count         uint64
	docs, lastDoc int32
	splits        [2]batchSplit
}

// batchSplit is one split of a batch word, seen count times: n ids, which
// are a, or a and b, when n is 1 or 2, and else ids[a:a+n]. n is 0 in a
// split not yet used.
type batchSplit struct{ a, b, n, count uint32 }

// batchSpill is count occurrences of words[word] split as ids[off:off+n]:
// one occurrence split neither of the word's two ways in the batch, or the
// count a split carried when it reached the bound of its counter.
type batchSpill struct{ word, off, n, count uint32 }

// NewBatch returns an empty batch for a vocabulary of tokens tokens.
func NewBatch(tokens int) *Batch {
	return &Batch{epoch: 1, byToken: make([]uint32, tokens)}
}

// is reports whether sp is the split ids.
func (sp *batchSplit) is(b *Batch, ids []uint32) bool {
	if int(sp.n) != len(ids) {
		return false
	}
	switch sp.n {
	case 1:
		return ids[0] == sp.a
	case 2:
		return ids[0] == sp.a && ids[1] == sp.b
	}
	return slices.Equal(b.ids[sp.a:sp.a+sp.n], ids)
}

// idsOf returns the ids of sp, in buf when they are inline.
func (b *Batch) idsOf(sp *batchSplit, buf *[2]uint32) []uint32 {
	if sp.n > 2 {
		return b.ids[sp.a : sp.a+sp.n]
	}
	buf[0], buf[1] = sp.a, sp.b
	return buf[:sp.n]
}

// Add counts one occurrence of word, split into ids, in the document
// numbered doc. Its ids are copied; ids is not empty.
func (b *Batch) Add(word []byte, ids []uint32, doc int32) { b.add(word, ids, doc) }

// AddToken counts one occurrence of word, the token id alone, in the
// document numbered doc, as Add(word, []uint32{id}, doc) does. It finds
// the word by the token while the batch has seen it.
func (b *Batch) AddToken(word []byte, id uint32, doc int32) {
	tag := tokenTag(b.epoch)
	if e := b.byToken[id]; e>>tokenTagShift == tag {
		wi := e&tokenEntryMask - 1
		w := &b.words[wi]
		b.occur(w, 1, doc)
		// As count, by hand: the hot path makes no call.
		sp := &w.splits[e>>tokenSplitBit&1]
		if sp.count == math.MaxUint32 {
			b.carry(wi, sp)
		}
		sp.count++
		return
	}
	ids := [1]uint32{id}
	if wi, j := b.add(word, ids[:], doc); j >= 0 && wi+1 <= tokenEntryMask {
		b.byToken[id] = tag<<tokenTagShift | uint32(j)<<tokenSplitBit | (wi + 1)
	}
}

// add counts one occurrence of word, split into ids, in the document
// numbered doc. It returns the word's entry and the split it counted, or
// -1 when the split went to spill.
func (b *Batch) add(word []byte, ids []uint32, doc int32) (uint32, int) {
	h := hashWord(word)
	if len(b.index) == 0 {
		b.index = make([]uint64, 2*batchWords)
	}
	mask := len(b.index) - 1
	mh := mixHash(h)
	tag := mh >> slotTagShift << slotTagShift
	p := int(mh) & mask
	prefix := packPrefix(word)
	var w *batchWord
	var wi uint32
	for {
		x := b.index[p]
		if x == 0 {
			off := len(b.bytes)
			b.bytes = append(b.bytes, word...)
			wi = uint32(len(b.words))
			b.words = append(b.words, batchWord{prefix: prefix, off: uint32(off), n: uint32(len(word))})
			b.hashes = append(b.hashes, h)
			b.index[p] = tag | uint64(wi+1)
			w = &b.words[wi]
			if 2*len(b.words) > len(b.index) {
				b.grow()
			}
			break
		}
		if x&^slotEntryMask == tag {
			wi = uint32(x&slotEntryMask) - 1
			if c := &b.words[wi]; c.prefix == prefix && int(c.n) == len(word) && (len(word) <= 8 || string(b.bytes[c.off:c.off+c.n]) == string(word)) {
				w = c
				break
			}
		}
		p = (p + 1) & mask
	}
	b.occur(w, len(ids), doc)
	j := 0
	for ; j < len(w.splits) && w.splits[j].n != 0; j++ {
		if sp := &w.splits[j]; sp.is(b, ids) {
			// See count.
			if sp.count == math.MaxUint32 {
				b.carry(wi, sp)
			}
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
			sp.a = uint32(len(b.ids))
			b.ids = append(b.ids, ids...)
		}
		w.splits[j] = sp
		return wi, j
	}
	off := uint32(len(b.ids))
	b.ids = append(b.ids, ids...)
	b.spill = append(b.spill, batchSpill{word: wi, off: off, n: uint32(len(ids)), count: 1})
	return wi, -1
}

// occur counts an occurrence of w, of n pieces, in the document numbered
// doc; its split is the caller's to count.
func (b *Batch) occur(w *batchWord, n int, doc int32) {
	w.count++
	b.pieces += uint64(n)
	if w.lastDoc != doc {
		w.lastDoc = doc
		w.docs++
	}
}

// carry moves the count of sp, a split of words[wi], to spill: a split's
// count at the bound of its 32 bits is carried before it is counted
// again, so that it stays exact.
func (b *Batch) carry(wi uint32, sp *batchSplit) {
	off := sp.a
	if sp.n <= 2 {
		var buf [2]uint32
		off = uint32(len(b.ids))
		b.ids = append(b.ids, b.idsOf(sp, &buf)...)
	}
	b.spill = append(b.spill, batchSpill{word: wi, off: off, n: sp.n, count: sp.count})
	sp.count = 0
}

// SetStamp marks the batch as holding one document alone, flushed in parts
// as it is scanned, under stamp (not 0, and unique to the document among
// the batches flushed into the same tables while it lasts). A flush then
// counts the document for a word only if no earlier flush of the same
// stamp has: so a document of many millions of distinct words need not
// wait whole in the batch. Two documents flushed in parts must not
// interleave their flushes, since a word keeps the last stamp alone.
func (b *Batch) SetStamp(stamp uint32) { b.stamp = stamp }

// Bytes returns about how much memory the batch holds.
func (b *Batch) Bytes() int64 {
	return int64(cap(b.index))*8 + int64(cap(b.words))*64 + int64(cap(b.hashes))*8 + int64(cap(b.bytes)) +
		int64(cap(b.ids))*4 + int64(cap(b.spill))*16 + int64(cap(b.part)) + int64(cap(b.order)+cap(b.at))*4
}

// Full reports whether the batch is due to be flushed. The caller asks
// between documents.
func (b *Batch) Full() bool {
	return len(b.words) >= batchWords || b.pieces >= batchFull || len(b.bytes) >= batchBytes || len(b.ids) >= batchBytes
}

func (b *Batch) grow() {
	b.index = make([]uint64, 2*len(b.index))
	mask := len(b.index) - 1
	for i, h := range b.hashes {
		mh := mixHash(h)
		p := int(mh) & mask
		for b.index[p] != 0 {
			p = (p + 1) & mask
		}
		b.index[p] = mh>>slotTagShift<<slotTagShift | uint64(i+1)
	}
}

// Flush adds the words of b to ts and empties b. It is called between
// documents (see the package doc).
func (b *Batch) Flush(ts *Tables) {
	if len(b.words) == 0 {
		return
	}
	// Sort the batch's words by partition, counting.
	var start [numParts + 1]int32
	part := b.part[:0]
	for _, h := range b.hashes {
		p := partOf(h)
		part = append(part, p)
		start[p+1]++
	}
	for p := 1; p <= numParts; p++ {
		start[p] += start[p-1]
	}
	order := roomFor(b.order[:0], len(part))[:len(part)]
	at := roomFor(b.at[:0], len(part))[:len(part)] // each batch word's tally in its table
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
		t := &ts.parts[p]
		t.mu.Lock()
		for g := 0; g < len(group); g += flushGroup {
			ws := group[g:min(g+flushGroup, len(group))]
			for j, i := range ws {
				hashes[j] = b.hashes[i]
			}
			t.touch(hashes[:len(ws)])
			for _, i := range ws {
				lw := &b.words[i]
				wi := t.entry(b.bytes[lw.off:lw.off+lw.n], b.hashes[i])
				at[i] = wi
				w := t.at(wi)
				w.count += int64(lw.count)
				if b.stamp == 0 {
					w.docs += int64(lw.docs)
				} else if w.stamp != b.stamp {
					w.docs += int64(lw.docs)
					w.stamp = b.stamp
				}
				for j := range lw.splits {
					sp := &lw.splits[j]
					if sp.n == 0 {
						break
					}
					w.pieces += int64(sp.count) * int64(sp.n)
					t.addSplit(w, b.idsOf(sp, &buf), int64(sp.count))
				}
			}
		}
		t.mu.Unlock()
	}
	for _, sp := range b.spill {
		t := &ts.parts[part[sp.word]]
		t.mu.Lock()
		w := t.at(at[sp.word])
		w.pieces += int64(sp.n) * int64(sp.count)
		t.addSplit(w, b.ids[sp.off:sp.off+sp.n], int64(sp.count))
		t.mu.Unlock()
	}
	b.part, b.order, b.at = part, order, at
	b.reset()
}

// FlushSummary moves the batch's words into s and empties the batch, as
// Flush does into Tables.
func (b *Batch) FlushSummary(s *Summary) {
	var buf [2]uint32
	extra := map[uint32][]Split{} // the spills, by word
	for _, sp := range b.spill {
		extra[sp.word] = append(extra[sp.word], Split{IDs: b.ids[sp.off : sp.off+sp.n], Count: int64(sp.count)})
	}
	s.mu.Lock()
	for i := range b.words {
		lw := &b.words[i]
		var splits []Split
		var pieces int64
		for j := range lw.splits {
			sp := &lw.splits[j]
			if sp.n == 0 {
				break
			}
			pieces += int64(sp.count) * int64(sp.n)
			splits = append(splits, Split{IDs: slices.Clone(b.idsOf(sp, &buf)), Count: int64(sp.count)})
		}
		for _, sp := range extra[uint32(i)] {
			pieces += int64(len(sp.IDs)) * sp.Count
			splits = append(splits, sp)
		}
		s.add(b.bytes[lw.off:lw.off+lw.n], int64(lw.count), pieces, int64(lw.docs), splits, 0, b.stamp)
	}
	s.mu.Unlock()
	b.reset()
}

// reset empties the batch after a flush.
func (b *Batch) reset() {
	if len(b.index) > 2*batchWords {
		b.index = make([]uint64, 2*batchWords)
	} else {
		clear(b.index)
	}
	b.words, b.hashes, b.bytes, b.ids, b.spill, b.pieces = b.words[:0], b.hashes[:0], b.bytes[:0], b.ids[:0], b.spill[:0], 0
	b.epoch++
	if tokenTag(b.epoch) == 1 {
		clear(b.byToken)
	}
}
