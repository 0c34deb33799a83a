package bpe

import (
	"encoding/binary"
	"math"
)

// state is one worker's scratch space: a word cache and the buffers of the
// merge loop. It is never shared between goroutines.
type state struct {
	v     *Vocab
	enc   *Encoder           // the encoder that lent the state: a long text is counted on every core with more of its states (pipeline.go)
	near  [nearSize]slot     // a direct-mapped copy of recently used short entries, small enough to stay in the core's cache
	nearM [nearMidSize]slot3 // the same for pre-tokens of 8-15 bytes
	short u64table           // pre-tokens of 2-7 bytes, packed into the key -> their ids (see idsValue)
	mid   u128table          // pre-tokens of 8-15 bytes, packed into two words -> the same
	cache map[string]uint64  // longer pre-tokens, up to cacheLongest bytes -> the same
	arena []uint32
	max   int

	syms  []uint32
	ranks []uint32
	mids  []uint32
	out   []uint32
	key   []byte // a symbol's spelling with its prefix or suffix

	// a bundle's pipeline (pipeline.go, normalize.go, pretok.go)
	stages     []stage
	cont       bool // the text is a continuation: a stretch of a longer one after its start (streamcut.go)
	mode       int
	n          int
	ints       []int
	u32        []uint32
	spanFn     func(start, end int, special bool)
	tokenFn    func(id, start, end int)
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
	spm        *spmCache   // the word cache of SentencePiece pieces (spm_cache.go)
	pairs      []uint64    // mergeShortPairs's pairs (spm_fast.go)
	cells      []uint32    // mergeLong's cells
	tree       []uint32    // its minTree's nodes
	base       []uint32    // its starting symbols, when p's bytes do not give them
	byteSym    [256]uint32 // the starting symbol of each byte, when they do
}

const (
	noRank = math.MaxUint32
	// cacheLongest is the longest pre-token, in bytes, that the cache
	// keeps (at most 255: the number of ids goes in a byte). Deep
	// indentation under a metaspace vocabulary makes pre-tokens of some 80
	// bytes that recur throughout a code base.
	cacheLongest = 128
	// arenaMost is how many ids the arena holds before the cache starts
	// afresh, whatever the number of words.
	arenaMost = 1 << 22
	// shortest is the longest pre-token, in bytes, that the plain scan
	// merges; longer ones go through the heap.
	shortest = 48
)

func newState(v *Vocab, maxWords int) *state {
	return &state{v: v, short: newU64Table(maxWords), mid: newU128Table(maxWords), cache: make(map[string]uint64, 1024), max: maxWords}
}

// packShort packs a pre-token of 2 to 7 bytes, and its length, into one
// key: no hashing of strings for the commonest words. When the slice's
// capacity allows (a pre-token cut from a longer text), the bytes are read
// as one word.
func packShort(p []byte) uint64 {
	k := uint64(len(p)) << 56
	if cap(p) >= 8 {
		return k | binary.LittleEndian.Uint64(p[:8])&(1<<(8*len(p))-1)
	}
	for i, b := range p {
		k |= uint64(b) << (8 * i)
	}
	return k
}

// nearSize is the number of slots in the direct-mapped front of the short
// cache: 4096 slots of 16 bytes, 64 KB; nearMidSize that of the mid cache,
// 1024 slots of 24 bytes.
const (
	nearBits    = 12
	nearSize    = 1 << nearBits
	nearMidBits = 10
	nearMidSize = 1 << nearMidBits
)

// packMid packs a pre-token of 8 to 15 bytes, and its length, into two
// words.
func packMid(p []byte) (uint64, uint64) {
	k1 := binary.LittleEndian.Uint64(p)
	k2 := uint64(len(p)) << 56
	if cap(p) >= 16 {
		return k1, k2 | binary.LittleEndian.Uint64(p[8:16])&(1<<(8*(len(p)-8))-1)
	}
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
		k1, k2 := packMid(p)
		// k2 holds the length: never 0, the empty slot's.
		n := &s.nearM[(k1*0x9E3779B97F4A7C15^k2)>>(64-nearMidBits)]
		if n.k2 == k2 && n.k1 == k1 {
			return n.v, true
		}
		v, ok := s.mid.get(k1, k2)
		if ok {
			n.k1, n.k2, n.v = k1, k2, v
		}
		return v, ok
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
		if s.short.full() || s.mid.full() || len(s.cache) >= s.max || len(s.arena) >= arenaMost {
			s.short.reset()
			s.mid.reset()
			s.near = [nearSize]slot{}
			s.nearM = [nearMidSize]slot3{}
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
	if p := s.v.pairs; p != nil {
		return p.get(a, b)
	}
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

// mergeLong applies the merges to a long pre-token in O(n log n) time,
// with the same result as mergeShort: the pair of lowest rank merges
// first, the leftmost on ties. Its memory is one word a starting symbol
// (cells), at most half a byte a symbol for the tree, and, only when the
// starting symbols cannot be read back from p, one more word a symbol: at
// most 4.5 bytes a byte of p when every symbol but the first is one byte
// and each byte starts as the same symbol wherever it stands (byte-level
// vocabularies, and character-level ones on ASCII text after a prefix
// such as Metaspace's), else at most 8.5.
//
// A token's cells are its starting symbols'. Its first cell holds the
// rank of the pair it starts with the next token (cellNoPair if none); a
// token of two or more symbols holds its id in its second cell and, from
// three, its length in its third and its last, so that both neighbours
// are found in O(1) without linked lists. The tag in a cell's top two bits
// says which it holds; a first cell's tag is zero, so the cell is the rank
// itself and every other kind of cell reads as higher than any rank. A
// tree of block minima (minTree) finds the lowest rank, leftmost. Once
// found, a rank's pairs are worked through left to right. A learned merge
// list never makes a pair of its own rank or a lower one by a merge; ranks
// shared by several tokens (equal SentencePiece scores) and lists that are
// not learned can, and such a merge stops the run: the search starts again
// from the top.
//
// A pre-token longer than maxLong (1 GiB), more than a cell can measure, is
// merged in pieces of maxLong bytes, as if it were several.
func (s *state) mergeLong(p []byte) []uint32 {
	if len(p) <= maxLong {
		return s.mergeTree(p)
	}
	var out []uint32
	for len(p) > 0 {
		k := min(len(p), maxLong)
		out = append(out, s.mergeTree(p[:k])...)
		p = p[k:]
	}
	s.out = out
	return out
}

// maxLong is the longest pre-token that mergeTree takes.
const maxLong = cellValue

// The cells of mergeTree: a tag in the top two bits, a value below.
const (
	cellValue  = 1<<30 - 1 // the value bits; also the largest length
	cellNoPair = cellValue // a first cell whose token has no merge with the next (or is the last)
	cellID     = 1 << 30   // a token's second cell: its id
	cellLen    = 2 << 30   // a token's third and last cells: its length
	cellDead   = 3 << 30   // any other cell
	cellTag    = 3 << 30
)

// compactOK reports whether every rank and merged id of v fits a cell's
// value; a vocabulary too large for that (none that loads within the
// vocabulary size cap can be) takes the plain scan.
func compactOK(v *Vocab) bool {
	return len(v.tokens) < cellNoPair && v.nMerges < cellNoPair
}

// mergeTree is mergeLong for a pre-token of at most maxLong bytes.
func (s *state) mergeTree(p []byte) []uint32 {
	if !compactOK(s.v) {
		return s.mergeShort(p)
	}
	buf := s.cells
	if cap(buf) < len(p) {
		buf = make([]uint32, 0, len(p))
	}
	syms := s.initial(buf[:0], p)
	n := len(syms)
	if n < 2 {
		s.out = append(s.out[:0], syms...)
		return s.out
	}
	// base(i) is cell i's starting symbol: read back from byte i+d of p
	// when the bytes give it (every symbol one byte but the first, the
	// same byte the same symbol away from the ends), else kept in syms
	// beside the cells.
	first, last := syms[0], syms[n-1]
	d := len(p) - n
	tab := s.byteSyms(p[d:], syms)
	var c []uint32
	if tab != nil {
		c = syms // the symbols are read back from p: their room becomes the cells
	} else {
		c = growU32(s.base, n)
		s.base = syms
	}
	base := func(i int) uint32 {
		switch {
		case tab == nil:
			return syms[i]
		case i == 0:
			return first
		case i == n-1:
			return last
		}
		return tab[p[i+d]]
	}
	for i := 0; i+1 < n; i++ {
		c[i] = s.cellRank(base(i), base(i+1))
	}
	c[n-1] = cellNoPair
	t := newMinTree(s.tree, c)
	// length returns the cells of the token that starts at i; sym its id.
	length := func(i int) int {
		if i+1 >= n || c[i+1]&cellTag != cellID {
			return 1
		}
		if i+2 < n && c[i+2]&cellTag == cellLen {
			return int(c[i+2] & cellValue)
		}
		return 2
	}
	sym := func(i int) uint32 {
		if i+1 < n && c[i+1]&cellTag == cellID {
			return c[i+1] & cellValue
		}
		return base(i)
	}
	// next and prev return the first cell of the token after or before the
	// one that starts at i, or -1.
	next := func(i int) int {
		if j := i + length(i); j < n {
			return j
		}
		return -1
	}
	prev := func(i int) int {
		if i == 0 {
			return -1
		}
		switch w := c[i-1]; w & cellTag {
		case cellID:
			return i - 2
		case cellLen:
			return i - int(w&cellValue)
		}
		return i - 1
	}
	r, pos := t.min()
	for r < cellNoPair {
		nx := next(pos)
		_, merged := s.rankOf(sym(pos), sym(nx))
		nn := next(nx)
		end := nn // the new token is cells pos to end
		if end < 0 {
			end = n
		}
		c[nx] = cellDead // nx is no longer a first cell
		c[pos+1] = cellID | merged
		if length := uint32(end - pos); length > 2 {
			c[pos+2], c[end-1] = cellLen|length, cellLen|length
		}
		lower := false
		r2 := uint32(cellNoPair)
		if nn >= 0 {
			r2 = s.cellRank(merged, sym(nn))
			lower = r2 <= r
		}
		t.set(pos, r2)
		if pv := prev(pos); pv >= 0 {
			r3 := s.cellRank(sym(pv), merged)
			t.set(pv, r3)
			lower = lower || r3 <= r
		}
		if lower {
			r, pos = t.min()
			continue
		}
		b := pos >> blockBits
		if pos = t.find(b, end, r); pos < 0 {
			r, pos = t.after(b, r)
		}
	}
	w := 0
	for i := 0; i >= 0; {
		id, j := sym(i), next(i)
		c[w] = id // w <= i: this overwrites only cells already passed
		w++
		i = j
	}
	if n <= keepLong {
		s.cells, s.tree = c, t.nodes
	} else {
		// Give a huge pre-token's room back once the caller is done with it.
		s.cells, s.tree, s.base = nil, nil, nil
	}
	return c[:w]
}

// byteSyms returns the table that gives syms[i] as a function of p[i],
// for every i but the first and the last, when there is one, else nil.
// p and syms have the same length.
func (s *state) byteSyms(p []byte, syms []uint32) *[256]uint32 {
	tab := &s.byteSym
	var set [256]bool
	for i := 1; i+1 < len(p); i++ {
		b := p[i]
		if !set[b] {
			tab[b], set[b] = syms[i], true
		} else if tab[b] != syms[i] {
			return nil
		}
	}
	return tab
}

// cellRank is rankOf's rank as a first cell holds it, cellNoPair for none.
func (s *state) cellRank(a, b uint32) uint32 {
	if r, _ := s.rankOf(a, b); r != noRank {
		return r
	}
	return cellNoPair
}

// keepLong is the longest pre-token whose buffers a state keeps for the
// next one.
const keepLong = 1 << 16

func growU32(b []uint32, n int) []uint32 {
	if cap(b) < n {
		return make([]uint32, n)
	}
	return b[:n]
}

// blockBits sets the leaves of minTree: blocks of 32 cells (two cache
// lines).
const blockBits = 5

// minTree is a binary tree over the ranks of mergeLong's cells: each leaf
// at most the lowest rank of its block (a rank that grew is not
// propagated; a search mends the leaf when it meets it), each node above
// exactly the lower of its children.
type minTree struct {
	nodes  []uint32 // nodes[1] is the root, nodes[leaves+b] block b's leaf
	leaves int
	cells  []uint32
	n      int // cells
}

func newMinTree(buf []uint32, cells []uint32) minTree {
	t := minTree{cells: cells, n: len(cells), leaves: 1}
	for t.leaves<<blockBits < t.n {
		t.leaves *= 2
	}
	t.nodes = growU32(buf, 2*t.leaves)
	for b := range t.leaves {
		t.nodes[t.leaves+b] = t.blockMin(b)
	}
	for k := t.leaves - 1; k >= 1; k-- {
		t.nodes[k] = min(t.nodes[2*k], t.nodes[2*k+1])
	}
	return t
}

// block returns block b's cells.
func (t *minTree) block(b int) []uint32 {
	lo := min(b<<blockBits, t.n)
	hi := min(lo+1<<blockBits, t.n)
	return t.cells[lo:hi]
}

// blockMin returns the lowest rank in block b.
func (t *minTree) blockMin(b int) uint32 {
	m := uint32(noRank)
	for _, w := range t.block(b) {
		m = min(m, w)
	}
	return m
}

// set sets the rank of cell i, lowering its leaf and their ancestors if
// needed.
func (t *minTree) set(i int, r uint32) {
	t.cells[i] = r
	for k := t.leaves + i>>blockBits; k >= 1 && t.nodes[k] > r; k >>= 1 {
		t.nodes[k] = r
	}
}

// find returns the first cell of block b from cell i on with rank r, or -1.
func (t *minTree) find(b, i int, r uint32) int {
	lo := b << blockBits
	c := t.block(b)
	for j := i - lo; j < len(c); j++ {
		if c[j] == r {
			return lo + j
		}
	}
	return -1
}

// mend sets block b's leaf to the block's lowest rank and updates its
// ancestors.
func (t *minTree) mend(b int) {
	k := t.leaves + b
	t.nodes[k] = t.blockMin(b)
	for k > 1 {
		k >>= 1
		m := min(t.nodes[2*k], t.nodes[2*k+1])
		if t.nodes[k] == m {
			return
		}
		t.nodes[k] = m
	}
}

// down returns the leftmost leaf under node k that holds k's rank.
func (t *minTree) down(k int) int {
	r := t.nodes[k]
	for k < t.leaves {
		k *= 2
		if t.nodes[k] != r {
			k++
		}
	}
	return k - t.leaves
}

// min returns the lowest rank and its leftmost cell, or noRank.
func (t *minTree) min() (uint32, int) {
	for {
		r := t.nodes[1]
		if r >= cellNoPair {
			return noRank, -1
		}
		b := t.down(1)
		if i := t.find(b, b<<blockBits, r); i >= 0 {
			return r, i
		}
		t.mend(b) // the leaf was below its block
	}
}

// after is find for the blocks after b, when b has no rank r left and no
// cell before it has r nor any cell a lower rank: it mends b and returns
// the next cell with rank r, or else what min returns.
func (t *minTree) after(b int, r uint32) (uint32, int) {
	for {
		t.mend(b)
		// Climb until a right sibling holds r, then go down it.
		k := t.leaves + b
		for k&1 == 1 || t.nodes[k+1] != r {
			if k >>= 1; k == 0 {
				return t.min()
			}
		}
		b = t.down(k + 1)
		if i := t.find(b, b<<blockBits, r); i >= 0 {
			return r, i
		}
		// the leaf was below its block
	}
}
