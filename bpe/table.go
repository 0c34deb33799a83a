package bpe

import "math/bits"

// u64table is an open-addressing hash table from uint64 keys below 1<<63
// to uint64 values, sized once: the merge ranks and the short-word cache
// live in it, where Go's map costs more per probe than the rest of the
// work. Keys are stored with bit 63 set so that zero marks an empty slot.
type u64table struct {
	slots []slot
	shift uint
	n     int
	limit int // the capacity asked for
}

type slot struct{ k, v uint64 }

const occupied = 1 << 63

// newU64Table returns a table that holds up to capacity keys with probes
// kept short (at most half full).
func newU64Table(capacity int) u64table {
	size := 16
	for size < 2*capacity {
		size *= 2
	}
	return u64table{slots: make([]slot, size), shift: uint(64 - bits.TrailingZeros(uint(size))), limit: capacity}
}

func (t *u64table) home(k uint64) uint64 { return (k * 0x9E3779B97F4A7C15) >> t.shift }

// get returns the value of key k.
func (t *u64table) get(k uint64) (uint64, bool) {
	k |= occupied
	mask := uint64(len(t.slots) - 1)
	for i := t.home(k); ; i = (i + 1) & mask {
		s := &t.slots[i]
		if s.k == k {
			return s.v, true
		}
		if s.k == 0 {
			return 0, false
		}
	}
}

// put sets the value of key k. The caller puts no more keys than the
// capacity the table was made for (full reports when it holds that many).
func (t *u64table) put(k, v uint64) {
	k |= occupied
	mask := uint64(len(t.slots) - 1)
	for i := t.home(k); ; i = (i + 1) & mask {
		s := &t.slots[i]
		if s.k == k {
			s.v = v
			return
		}
		if s.k == 0 {
			s.k, s.v = k, v
			t.n++
			return
		}
	}
}

// full reports whether the table holds as many keys as it was sized for.
func (t *u64table) full() bool { return t.n >= t.limit }

// reset empties the table.
func (t *u64table) reset() {
	clear(t.slots)
	t.n = 0
}

// each calls fn with every key and value, in no particular order.
func (t *u64table) each(fn func(k, v uint64)) {
	for _, s := range t.slots {
		if s.k != 0 {
			fn(s.k&^occupied, s.v)
		}
	}
}

// u128table is u64table for keys of two words; k2 is never zero (it holds
// the key's length), which marks a slot as used.
type u128table struct {
	slots []slot3
	shift uint
	n     int
	limit int
}

type slot3 struct{ k1, k2, v uint64 }

func newU128Table(capacity int) u128table {
	size := 16
	for size < 2*capacity {
		size *= 2
	}
	return u128table{slots: make([]slot3, size), shift: uint(64 - bits.TrailingZeros(uint(size))), limit: capacity}
}

func (t *u128table) home(k1, k2 uint64) uint64 {
	return (k1*0x9E3779B97F4A7C15 ^ k2*0xC2B2AE3D27D4EB4F) >> t.shift
}

func (t *u128table) get(k1, k2 uint64) (uint64, bool) {
	mask := uint64(len(t.slots) - 1)
	for i := t.home(k1, k2); ; i = (i + 1) & mask {
		s := &t.slots[i]
		if s.k2 == k2 && s.k1 == k1 {
			return s.v, true
		}
		if s.k2 == 0 {
			return 0, false
		}
	}
}

func (t *u128table) put(k1, k2, v uint64) {
	mask := uint64(len(t.slots) - 1)
	for i := t.home(k1, k2); ; i = (i + 1) & mask {
		s := &t.slots[i]
		if s.k2 == k2 && s.k1 == k1 {
			s.v = v
			return
		}
		if s.k2 == 0 {
			s.k1, s.k2, s.v = k1, k2, v
			t.n++
			return
		}
	}
}

func (t *u128table) full() bool { return t.n >= t.limit }

func (t *u128table) reset() {
	clear(t.slots)
	t.n = 0
}
