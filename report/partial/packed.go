package partial

import "io"

// packed holds the items of a partial read for a merge in records without
// pointers, so that the garbage collector does not scan a million of them
// on every cycle, and in blocks that are never copied as they grow.
type packed struct {
	blocks [][]rec
	n      int
	// strs holds the sources, formats and error messages that records
	// name by index; skips the skips.
	strs  []string
	skips []Skip
	// data holds the results, many to a block.
	data [][]byte
}

// rec is one packed item.
type rec struct {
	in, seq, record, line int
	hash                  uint64
	src, format           uint32 // indices into strs
	// aux is an index into strs (an error), into skips (a skip) or into
	// data (a result, at off, n bytes long).
	aux, off, n uint32
	kind        byte // flagSkip, flagErr or flagResult
}

// recBlock is how many records one block holds.
const recBlock = 8192

// dataBlock is the size of a results block.
const dataBlock = 256 << 10

func (pk *packed) add(r rec) {
	if len(pk.blocks) == 0 || len(pk.blocks[len(pk.blocks)-1]) == recBlock {
		pk.blocks = append(pk.blocks, make([]rec, 0, recBlock))
	}
	last := &pk.blocks[len(pk.blocks)-1]
	*last = append(*last, r)
	pk.n++
}

func (pk *packed) str(s string) uint32 {
	pk.strs = append(pk.strs, s)
	return uint32(len(pk.strs) - 1)
}

// keep copies a result into the data blocks and returns where it went.
func (pk *packed) keep(b []byte) (blk, off, n uint32) {
	if len(b) > dataBlock/4 {
		pk.data = append(pk.data, append([]byte(nil), b...))
		return uint32(len(pk.data) - 1), 0, uint32(len(b))
	}
	if len(pk.data) == 0 || cap(pk.data[len(pk.data)-1])-len(pk.data[len(pk.data)-1]) < len(b) {
		pk.data = append(pk.data, make([]byte, 0, dataBlock))
	}
	last := &pk.data[len(pk.data)-1]
	off = uint32(len(*last))
	*last = append(*last, b...)
	return uint32(len(pk.data) - 1), off, uint32(len(b))
}

// item fills it with the record r.
func (pk *packed) item(r *rec, it *Item) {
	*it = Item{Key: Key{In: r.in, Seq: r.seq, Src: pk.strs[r.src]}, Record: r.record, Line: r.line, Format: pk.strs[r.format], Hash: r.hash}
	switch r.kind {
	case flagSkip:
		it.Skip = &pk.skips[r.aux]
	case flagErr:
		it.Err = pk.strs[r.aux]
	default:
		d := pk.data[r.aux]
		it.Result = d[r.off : r.off+r.n : r.off+r.n]
	}
}

// less reports whether record a comes before record b in a single run,
// as Key.Less orders their keys.
func (pk *packed) less(a, b *rec) bool {
	return Key{In: a.in, Seq: a.seq, Src: pk.strs[a.src]}.Less(Key{In: b.in, Seq: b.seq, Src: pk.strs[b.src]})
}

// sorted reports whether the records are in the order of a single run.
func (pk *packed) sorted() bool {
	var prev *rec
	for _, b := range pk.blocks {
		for i := range b {
			if prev != nil && pk.less(&b[i], prev) {
				return false
			}
			prev = &b[i]
		}
	}
	return true
}

// items returns the records as items.
func (pk *packed) items() []Item {
	all := make([]Item, pk.n)
	k := 0
	for _, b := range pk.blocks {
		for i := range b {
			pk.item(&b[i], &all[k])
			k++
		}
	}
	return all
}

// ReadForMerge reads a whole partial as Read does, but holds its items
// compactly for Merge: they are seen through Each and Len only, and
// p.Items stays nil. A merge of a million items needs about half the
// memory this way, and far less of the collector's time.
func ReadForMerge(r io.Reader, name string) (*Partial, error) {
	return read(r, name, true)
}
