package bpe

import "math/bits"

// pairTable is a denser merge table for vocabularies whose symbol ids and
// ranks all fit in 16 bits: a pair and its merge in one word, half the
// size of a u64table at the same load, so that more of it stays in the
// processor's caches. Pairs of a few hot symbols (the ASCII characters of
// a SentencePiece model, which start most merges) are read from a dense
// square instead.
type pairTable struct {
	slots []uint64 // left<<48 | right<<32 | rank<<16 | merged id; emptyPair when free
	shift uint
	hot   *[1 << 16]uint8           // symbol id -> its row in dense, or noHot; nil for none
	dense [hotSyms * hotSyms]uint32 // rank<<16 | merged id of two hot symbols, or noDense
}

const (
	// emptyPair marks a free slot: no pair has both ids 0xffff.
	emptyPair = ^uint64(0)
	hotSyms   = 128
	noHot     = 0xff
	noDense   = ^uint32(0)
)

// newPairTable returns the compact form of merges, or nil when an id or a
// rank does not fit in 16 bits.
func newPairTable(merges *u64table) *pairTable {
	fits := true
	merges.each(func(k, v uint64) {
		if k>>32 >= 0xffff || uint32(k) >= 0xffff || v>>32 > 0xffff || uint32(v) > 0xffff {
			fits = false
		}
	})
	if !fits {
		return nil
	}
	size := 16
	for size < 2*merges.n {
		size *= 2
	}
	t := &pairTable{slots: make([]uint64, size), shift: uint(64 - bits.TrailingZeros(uint(size)))}
	for i := range t.slots {
		t.slots[i] = emptyPair
	}
	mask := uint64(size - 1)
	merges.each(func(k, v uint64) {
		key := (k>>32)<<16 | k&0xffff
		for i := t.home(key); ; i = (i + 1) & mask {
			if t.slots[i] == emptyPair {
				t.slots[i] = key<<32 | (v>>32)<<16 | v&0xffff
				return
			}
		}
	})
	return t
}

func (t *pairTable) home(key uint64) uint64 { return (key * 0x9E3779B97F4A7C15) >> t.shift }

// setHot gives the symbols syms (the first hotSyms of them) rows of the
// dense square.
func (t *pairTable) setHot(syms []uint32) {
	t.hot = new([1 << 16]uint8)
	for i := range t.hot {
		t.hot[i] = noHot
	}
	for i := range t.dense {
		t.dense[i] = noDense
	}
	var rows []uint32
	for _, s := range syms {
		if s < 0xffff && t.hot[s] == noHot && len(rows) < hotSyms {
			t.hot[s] = uint8(len(rows))
			rows = append(rows, s)
		}
	}
	for ha, a := range rows {
		for hb, b := range rows {
			if r, m := t.hashed(a, b); r != noRank {
				t.dense[ha*hotSyms+hb] = r<<16 | m
			}
		}
	}
}

// get returns the rank and merged id of the pair (a, b), or noRank.
func (t *pairTable) get(a, b uint32) (rank, merged uint32) {
	if a|b > 0xffff {
		return noRank, 0 // no pair holds such a symbol (noSym, say)
	}
	if t.hot != nil {
		if ha, hb := t.hot[uint16(a)], t.hot[uint16(b)]; ha != noHot && hb != noHot {
			e := t.dense[int(ha)*hotSyms+int(hb)]
			if e == noDense {
				return noRank, 0
			}
			return e >> 16, e & 0xffff
		}
	}
	return t.hashed(a, b)
}

// hashed is get from the hash table alone, for symbols of 16 bits.
func (t *pairTable) hashed(a, b uint32) (rank, merged uint32) {
	key := uint64(a)<<16 | uint64(b)
	mask := uint64(len(t.slots) - 1)
	for i := t.home(key); ; i = (i + 1) & mask {
		e := t.slots[i]
		if e>>32 == key {
			return uint32(e>>16) & 0xffff, uint32(e) & 0xffff
		}
		if e == emptyPair {
			return noRank, 0
		}
	}
}
