package bpe

import (
	"bytes"
	"encoding/binary"
	"hash/maphash"
)

// spmCache is the word cache of SentencePiece pieces: sets of two
// entries, the more recently used first, so that a piece seen once evicts
// one entry of its set and nothing else, where a table emptied when full
// loses every common piece with it. A piece of up to spmInline bytes is
// held in its entry; a longer one, up to spmLongest, by its hash there and
// its bytes in a ring. Ids beyond the two a value holds go to another
// ring. An entry whose bytes or ids a ring has since written over counts
// as missing.
type spmCache struct {
	sets  [][2]spmEntry
	shift uint
	long  [][2]spmLongEntry
	lsh   uint
	ids   spmRing[uint32]
	text  spmRing[byte]
	seed  maphash.Seed
}

// spmEntry is a short piece as three words (its length in the low byte,
// then its bytes; all zero for a free entry) and its cache value
// (idsValue's, with a position in the ids' ring for the offset).
type spmEntry struct{ k0, k1, k2, v uint64 }

// spmLongEntry is a long piece's hash, its length and the position of its
// bytes in the text ring (at: position<<8 | length), and its cache value.
type spmLongEntry struct{ h, at, v uint64 }

const (
	// spmShortest is the longest piece merged by the plain scan: up to 64
	// bytes it takes half the time of the heap on English text.
	spmShortest = 64
	spmInline   = 23
	spmLongest  = 255 // a value counts at most 255 ids
)

// spmRing is a ring buffer whose positions count from its start, so that
// a stretch written at a position is known to be intact or not.
type spmRing[T any] struct {
	buf    []T
	cursor uint64
}

// add writes s and returns its position; a stretch never wraps around.
func (r *spmRing[T]) add(s []T) uint64 {
	size := uint64(len(r.buf))
	at := r.cursor
	if off := at % size; off+uint64(len(s)) > size {
		at += size - off
	}
	copy(r.buf[at%size:], s)
	r.cursor = at + uint64(len(s))
	return at
}

// intact reports whether the stretch written at position at is still there.
func (r *spmRing[T]) intact(at uint64) bool { return r.cursor-at <= uint64(len(r.buf)) }

// at returns n items at position at.
func (r *spmRing[T]) at(at uint64, n int) []T {
	off := at % uint64(len(r.buf))
	return r.buf[off : off+uint64(n)]
}

// newSPMCache returns a cache of about words pieces, with rings of
// 1<<18 ids and 2 MB of long pieces.
func newSPMCache(words int) *spmCache { return newSPMCacheRings(words, 1<<18, 1<<21) }

// newSPMCacheRings is newSPMCache with rings of the sizes given, at least
// spmLongest each.
func newSPMCacheRings(words, ids, text int) *spmCache {
	sets, shift := 1, uint(64)
	for 2*sets < words {
		sets, shift = 2*sets, shift-1
	}
	long, lsh := max(sets/2, 1), shift+1
	return &spmCache{
		sets: make([][2]spmEntry, sets), shift: shift,
		long: make([][2]spmLongEntry, long), lsh: lsh,
		ids:  spmRing[uint32]{buf: make([]uint32, ids)},
		text: spmRing[byte]{buf: make([]byte, text)},
		seed: maphash.MakeSeed(),
	}
}

// spmKey returns the words of a piece of 1 to spmInline bytes, read
// without copying: its bytes, and its length where no byte needs the
// room (the low byte of k2 from 8 bytes on, which the last word's first
// byte, also in k0 or k1, gives up; the top byte of k0 below that), so
// that no two pieces share a key and no key is all zero.
func spmKey(p []byte) (k0, k1, k2 uint64) {
	n := len(p)
	switch {
	case n >= 16:
		return binary.LittleEndian.Uint64(p), binary.LittleEndian.Uint64(p[8:]), binary.LittleEndian.Uint64(p[n-8:])&^0xff | uint64(n)
	case n >= 8:
		return binary.LittleEndian.Uint64(p), binary.LittleEndian.Uint64(p[n-8:]), uint64(n)
	}
	k0 = uint64(n) << 56
	for i, b := range p {
		k0 |= uint64(b) << (8 * i)
	}
	return k0, 0, 0
}

// index returns the set of a hash in a table of 1<<(64-shift) sets.
func index(h uint64, shift uint) uint64 {
	if shift >= 64 {
		return 0
	}
	return h >> shift
}

// get returns the cache value of p, of at most spmLongest bytes.
func (c *spmCache) get(p []byte) (uint64, bool) {
	if len(p) > spmInline {
		return c.getLong(p)
	}
	k0, k1, k2 := spmKey(p)
	s := &c.sets[index(k0*0x9E3779B97F4A7C15^k1*0xC2B2AE3D27D4EB4F^k2*0x165667B19E3779F9, c.shift)]
	if e := &s[0]; e.k0 == k0 && e.k1 == k1 && e.k2 == k2 {
		return e.v, c.intact(e.v)
	}
	if e := &s[1]; e.k0 == k0 && e.k1 == k1 && e.k2 == k2 {
		s[0], s[1] = s[1], s[0]
		return s[0].v, c.intact(s[0].v)
	}
	return 0, false
}

func (c *spmCache) getLong(p []byte) (uint64, bool) {
	h := maphash.Bytes(c.seed, p)
	s := &c.long[index(h, c.lsh)]
	for w := range s {
		e := &s[w]
		if e.h != h || e.at&0xff != uint64(len(p)) || !c.text.intact(e.at>>8) || !bytes.Equal(c.text.at(e.at>>8, len(p)), p) {
			continue
		}
		if w == 1 {
			s[0], s[1] = s[1], s[0]
		}
		return s[0].v, c.intact(s[0].v)
	}
	return 0, false
}

// intact reports whether the ids of value v are all there: inline, or in
// the ring.
func (c *spmCache) intact(v uint64) bool { return v&inlineIDs != 0 || c.ids.intact(v>>inlineShift) }

// arenaIDs returns the ids of an intact value not marked inlineIDs.
func (c *spmCache) arenaIDs(v uint64) []uint32 { return c.ids.at(v>>inlineShift, valueLen(v)) }

// put caches the ids of p, of at most spmLongest bytes, as its set's
// first entry.
func (c *spmCache) put(p []byte, ids []uint32) {
	v, inline := idsValue(ids, 0)
	if !inline {
		v, _ = idsValue(ids, int(c.ids.add(ids)))
	}
	if len(p) > spmInline {
		h := maphash.Bytes(c.seed, p)
		s := &c.long[index(h, c.lsh)]
		s[1], s[0] = s[0], spmLongEntry{h, c.text.add(p)<<8 | uint64(len(p)), v}
		return
	}
	k0, k1, k2 := spmKey(p)
	s := &c.sets[index(k0*0x9E3779B97F4A7C15^k1*0xC2B2AE3D27D4EB4F^k2*0x165667B19E3779F9, c.shift)]
	s[1], s[0] = s[0], spmEntry{k0, k1, k2, v}
}

// spmPiece returns the ids of one piece of a cut normalized text, from
// the cache when it holds them. The slice is valid until the next call.
func (s *state) spmPiece(p []byte) []uint32 {
	c := s.spm
	if c == nil {
		c = newSPMCache(s.max)
		s.spm = c
	}
	if len(p) <= spmLongest {
		if v, ok := c.get(p); ok {
			if v&inlineIDs == 0 {
				return c.arenaIDs(v)
			}
			return s.valueIDs(v)
		}
	}
	var ids []uint32
	if pt := s.v.pairs; pt != nil && len(p) <= spmShortest {
		ids = s.mergeShortPairs(p, pt)
	} else if len(p) <= spmShortest {
		ids = s.mergeShort(p)
	} else {
		ids = s.mergeLong(p)
	}
	ids = s.spmFinish(p, ids)
	if len(p) <= spmLongest {
		c.put(p, ids)
	}
	return ids
}

// spmCountPiece returns the number of tokens of one piece.
func (s *state) spmCountPiece(p []byte) int {
	if len(p) == 1 {
		return 1
	}
	if len(p) <= spmLongest && s.spm != nil {
		if v, ok := s.spm.get(p); ok {
			return valueLen(v)
		}
	}
	return len(s.spmPiece(p))
}

// spmAppendPiece appends the ids of one piece to dst.
func spmAppendPiece[T int | uint32](s *state, dst []T, p []byte) []T {
	if len(p) == 1 {
		return append(dst, T(s.v.byteID[p[0]]))
	}
	for _, id := range s.spmPiece(p) {
		dst = append(dst, T(id))
	}
	return dst
}
