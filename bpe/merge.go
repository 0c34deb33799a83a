package bpe

import (
	"encoding/binary"
	"math"
	"slices"
)

// state is one worker's scratch space: a word cache and the buffers of the
// merge loop. It is never shared between goroutines.
type state struct {
	v     *Vocab
	near  [nearSize]slot    // a direct-mapped copy of recently used short entries, small enough to stay in the core's cache
	short u64table          // pre-tokens of 2-7 bytes, packed into the key -> their ids (see idsValue)
	mid   u128table         // pre-tokens of 8-15 bytes, packed into two words -> the same
	cache map[string]uint64 // longer pre-tokens, up to cacheLongest bytes -> the same
	arena []uint32
	max   int

	syms  []uint32
	ranks []uint32
	mids  []uint32
	out   []uint32
	key   []byte // a symbol's spelling with its prefix or suffix

	// a bundle's pipeline (pipeline.go, normalize.go, pretok.go)
	stages     []stage
	mode       int
	n          int
	ints       []int
	u32        []uint32
	spanFn     func(start, end int, special bool)
	pieceFn    func(p []byte)
	cur        int
	err        error
	nbuf, pbuf [][]byte
	nal, pal   [][]int32
	mbuf       [][]int
	parts      [][]part
	ident      []int32
	ms         []int
	// for SentencePiece models (spm_encode.go)
	spmNorm    []byte
	spmIDs     []uint32
	spmCounted []uint32
	spmOut     []uint32
	// for long pre-tokens
	next, prev []int32
	heap       []uint64
	buckets    map[uint32][]int32
}

const (
	noRank = math.MaxUint32
	// cacheLongest is the longest pre-token, in bytes, that the cache keeps.
	cacheLongest = 64
	// shortest is the longest pre-token, in bytes, that the plain scan
	// merges; longer ones go through the heap.
	shortest = 48
)

func newState(v *Vocab, maxWords int) *state {
	return &state{v: v, short: newU64Table(maxWords), mid: newU128Table(maxWords), cache: make(map[string]uint64, 1024), max: maxWords}
}

// packShort packs a pre-token of 2 to 7 bytes, and its length, into one
// key: no hashing of strings for the commonest words.
func packShort(p []byte) uint64 {
	k := uint64(len(p)) << 56
	for i, b := range p {
		k |= uint64(b) << (8 * i)
	}
	return k
}

// nearSize is the number of slots in the direct-mapped front of the short
// cache: 4096 slots of 16 bytes, 64 KB.
const (
	nearBits = 12
	nearSize = 1 << nearBits
)

// packMid packs a pre-token of 8 to 15 bytes, and its length, into two
// words.
func packMid(p []byte) (uint64, uint64) {
	k1 := binary.LittleEndian.Uint64(p)
	k2 := uint64(len(p)) << 56
	for i, b := range p[8:] {
		k2 |= uint64(b) << (8 * i)
	}
	return k1, k2
}

// cached returns the cached location of p's ids.
func (s *state) cached(p []byte) (uint64, bool) {
	if len(p) < 8 {
		k := packShort(p)
		n := &s.near[(k*0x9E3779B97F4A7C15)>>(64-nearBits)]
		if n.k == k|occupied {
			return n.v, true
		}
		v, ok := s.short.get(k)
		if ok {
			n.k, n.v = k|occupied, v
		}
		return v, ok
	}
	if len(p) < 16 {
		return s.mid.get(packMid(p))
	}
	if len(p) <= cacheLongest {
		loc, ok := s.cache[string(p)]
		return loc, ok
	}
	return 0, false
}

// The word cache's values hold a pre-token's ids: the number of ids in the
// low 8 bits (a cached pre-token has at most cacheLongest), and then either
// one or two ids themselves, marked by inlineIDs, or the ids' offset in the
// arena. Most pre-tokens are one or two tokens, which are then read without
// going to the arena.
const (
	inlineIDs   = 1 << 8
	inlineShift = 9
	inlineBits  = 27 // the ids inline must be below 1<<inlineBits
	inlineMask  = 1<<inlineBits - 1
)

// idsValue returns the cache value of ids, and whether it holds them
// inline (else they must go into the arena at off).
func idsValue(ids []uint32, off int) (uint64, bool) {
	n := uint64(len(ids))
	switch {
	case n == 1 && ids[0] <= inlineMask:
		return uint64(ids[0])<<inlineShift | inlineIDs | n, true
	case n == 2 && ids[0] <= inlineMask && ids[1] <= inlineMask:
		return uint64(ids[1])<<(inlineShift+inlineBits) | uint64(ids[0])<<inlineShift | inlineIDs | n, true
	}
	return uint64(off)<<inlineShift | n, false
}

// valueLen returns the number of ids a cache value holds.
func valueLen(v uint64) int { return int(v & 0xff) }

// inlined returns the ids a cache value marked inlineIDs holds: the first,
// and the second when valueLen(v) is 2.
func inlined(v uint64) (id0, id1 uint32) {
	return uint32(v>>inlineShift) & inlineMask, uint32(v >> (inlineShift + inlineBits))
}

// arenaIDs returns the ids of a cache value not marked inlineIDs.
func (s *state) arenaIDs(v uint64) []uint32 {
	off := v >> inlineShift
	return s.arena[off : off+uint64(valueLen(v))]
}

// valueIDs returns the ids a cache value holds, in s.out when they are
// inline.
func (s *state) valueIDs(v uint64) []uint32 {
	if v&inlineIDs == 0 {
		return s.arenaIDs(v)
	}
	id0, id1 := inlined(v)
	s.out = append(s.out[:0], id0, id1)
	return s.out[:valueLen(v)]
}

// piece returns the ids of one pre-token. The slice is valid until the next
// call.
func (s *state) piece(p []byte) []uint32 {
	if len(p) == 1 && !s.v.slow {
		s.out = append(s.out[:0], s.v.byteID[p[0]])
		return s.out
	}
	if v, ok := s.cached(p); ok {
		return s.valueIDs(v)
	}
	var ids []uint32
	switch {
	case s.v.model.ignoreMerges && s.whole(p):
		// the pre-token is itself a token: s.out holds it
		ids = s.out
	case len(p) <= shortest:
		ids = s.mergeShort(p)
	default:
		ids = s.mergeLong(p)
	}
	if s.v.spm != nil {
		ids = s.spmFinish(p, ids)
	}
	if len(p) <= cacheLongest {
		if s.short.full() || s.mid.full() || len(s.cache) >= s.max {
			s.short.reset()
			s.mid.reset()
			s.near = [nearSize]slot{}
			clear(s.cache)
			s.arena = s.arena[:0]
		}
		loc, inline := idsValue(ids, len(s.arena))
		if !inline {
			s.arena = append(s.arena, ids...)
		}
		switch {
		case len(p) < 8:
			s.short.put(packShort(p), loc)
		case len(p) < 16:
			k1, k2 := packMid(p)
			s.mid.put(k1, k2, loc)
		default:
			s.cache[string(p)] = loc
		}
	}
	return ids
}

// appendPiece appends the ids of one pre-token to dst.
func appendPiece[T int | uint32](s *state, dst []T, p []byte) []T {
	if len(p) == 1 && !s.v.slow {
		return append(dst, T(s.v.byteID[p[0]]))
	}
	var ids []uint32
	if v, hit := s.cached(p); !hit {
		ids = s.piece(p)
	} else if v&inlineIDs == 0 {
		ids = s.arenaIDs(v)
	} else {
		// Read in place, not through s.out: the commonest case.
		id0, id1 := inlined(v)
		if dst = append(dst, T(id0)); valueLen(v) == 2 {
			dst = append(dst, T(id1))
		}
		return dst
	}
	for _, id := range ids {
		dst = append(dst, T(id))
	}
	return dst
}

// count returns the number of tokens of one pre-token.
func (s *state) count(p []byte) int {
	if len(p) == 1 && !s.v.slow {
		return 1
	}
	if v, ok := s.cached(p); ok {
		return valueLen(v)
	}
	return len(s.piece(p))
}

func (s *state) rankOf(a, b uint32) (rank, merged uint32) {
	if rm, ok := s.v.merges.get(pairKey(a, b)); ok {
		return uint32(rm >> 32), uint32(rm)
	}
	return noRank, 0
}

// mergeShort applies the merges to a short pre-token: repeatedly merge the
// adjacent pair of lowest rank, the leftmost on ties.
func (s *state) mergeShort(p []byte) []uint32 {
	syms := s.initial(s.syms[:0], p)
	ranks, mids := s.ranks[:0], s.mids[:0]
	for i := 0; i+1 < len(syms); i++ {
		r, m := s.rankOf(syms[i], syms[i+1])
		ranks = append(ranks, r)
		mids = append(mids, m)
	}
	for len(ranks) > 0 {
		best, at := uint32(noRank), -1
		for i, r := range ranks {
			if r < best {
				best, at = r, i
			}
		}
		if at < 0 {
			break
		}
		syms[at] = mids[at]
		syms = append(syms[:at+1], syms[at+2:]...)
		ranks = append(ranks[:at], ranks[at+1:]...)
		mids = append(mids[:at], mids[at+1:]...)
		if at > 0 {
			ranks[at-1], mids[at-1] = s.rankOf(syms[at-1], syms[at])
		}
		if at < len(ranks) {
			ranks[at], mids[at] = s.rankOf(syms[at], syms[at+1])
		}
	}
	s.syms, s.ranks, s.mids = syms, ranks, mids
	s.out = append(s.out[:0], syms...)
	return s.out
}

// mergeLong applies the merges to a long pre-token in O(n log n). The
// symbols form a linked list; the mergeable pairs wait in one bucket per
// rank, and a min-heap holds the ranks that have a bucket. The lowest rank's
// bucket is worked through leftmost first, as a heap of single pairs would
// order it, but a long run of one pair costs a sort instead of a heap
// operation per pair. A learned merge list never makes a pair of its own
// rank or a lower one by a merge; ranks shared by several tokens (equal
// SentencePiece scores) and lists that are not learned can: then the
// bucket, with the new pair, is put back, and the lowest rank's leftmost
// pair goes first again. Entries made stale by a merge are dropped when
// reached.
func (s *state) mergeLong(p []byte) []uint32 {
	if cap(s.syms) < len(p) {
		s.syms = make([]uint32, 0, len(p))
		s.out = make([]uint32, 0, len(p))
	}
	syms := s.initial(s.syms[:0], p)
	n := len(syms)
	if n < 2 {
		s.syms = syms
		s.out = append(s.out[:0], syms...)
		return s.out
	}
	next, prev := grow32(s.next, n), grow32(s.prev, n)
	for i := 0; i < n; i++ {
		next[i], prev[i] = int32(i+1), int32(i-1)
	}
	next[n-1] = -1
	if s.buckets == nil {
		s.buckets = map[uint32][]int32{}
	}
	buckets := s.buckets
	ranks := s.heap[:0]
	add := func(r uint32, pos int32) {
		b, ok := buckets[r]
		if !ok || len(b) == 0 {
			ranks = heapPush(ranks, uint64(r))
		}
		buckets[r] = append(b, pos)
	}
	for i := 0; i+1 < n; i++ {
		if r, _ := s.rankOf(syms[i], syms[i+1]); r != noRank {
			add(r, int32(i))
		}
	}
	const dead = math.MaxUint32
	for len(ranks) > 0 {
		r := uint32(ranks[0])
		ranks = heapPop(ranks)
		bucket := buckets[r]
		slices.Sort(bucket)
		k := 0
		for k < len(bucket) {
			pos := bucket[k]
			k++
			if syms[pos] == dead {
				continue
			}
			nx := next[pos]
			if nx < 0 {
				continue
			}
			cr, merged := s.rankOf(syms[pos], syms[nx])
			if cr != r {
				continue // stale
			}
			syms[pos] = merged
			syms[nx] = dead
			nn := next[nx]
			next[pos] = nn
			lower := false
			if nn >= 0 {
				prev[nn] = pos
				if r2, _ := s.rankOf(merged, syms[nn]); r2 != noRank {
					add(r2, pos)
					lower = lower || r2 <= r
				}
			}
			if pv := prev[pos]; pv >= 0 {
				if r2, _ := s.rankOf(syms[pv], merged); r2 != noRank {
					add(r2, pv)
					lower = lower || r2 <= r
				}
			}
			if lower {
				break
			}
		}
		cur := buckets[r] // bucket and the pairs of rank r that merges made
		rest := append(cur[:0], cur[k:]...)
		buckets[r] = rest // an empty bucket keeps its room for the next word
		if len(rest) > 0 {
			ranks = heapPush(ranks, uint64(r))
		}
	}
	if len(buckets) > 4096 {
		clear(buckets)
	}
	out := s.out[:0]
	for i := int32(0); i >= 0; i = next[i] {
		out = append(out, syms[i])
	}
	s.syms, s.next, s.prev, s.heap, s.out = syms, next, prev, ranks, out
	return out
}

func grow32(b []int32, n int) []int32 {
	if cap(b) < n {
		return make([]int32, n)
	}
	return b[:n]
}

// A binary min-heap of uint64 keys.

func siftDown(h []uint64, i int) {
	n := len(h)
	x := h[i]
	for {
		c := 2*i + 1
		if c >= n {
			break
		}
		if c+1 < n && h[c+1] < h[c] {
			c++
		}
		if h[c] >= x {
			break
		}
		h[i] = h[c]
		i = c
	}
	h[i] = x
}

func heapPop(h []uint64) []uint64 {
	last := len(h) - 1
	h[0] = h[last]
	h = h[:last]
	if last > 0 {
		siftDown(h, 0)
	}
	return h
}

func heapPush(h []uint64, x uint64) []uint64 {
	h = append(h, x)
	i := len(h) - 1
	for i > 0 {
		parent := (i - 1) / 2
		if h[parent] <= x {
			break
		}
		h[i] = h[parent]
		i = parent
	}
	h[i] = x
	return h
}
