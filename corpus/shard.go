package corpus

import (
	"encoding/binary"
	"fmt"
	"math/bits"
	"path/filepath"
	"strconv"
	"strings"
)

// A Shard is one of N deterministic shares of a walk (K is 1-based). The
// share an item belongs to depends on its Source, as walked, and its Record
// alone, so N processes given the same arguments and each its own K see
// every document and skip exactly once between them, and the records of one
// big JSON Lines or CSV file spread over all N. The zero Shard, and any
// with N of 1, is the whole walk.
//
// The share of an item is ShardOf(source, record, N): the 64-bit FNV-1a
// hash (offset basis 14695981039346656037, prime 1099511628211) of the
// source's bytes, one zero byte, and the record as 8 bytes little-endian,
// reduced to 1..N by its high bits: 1 + floor(hash * N / 2^64). The high
// bits are taken because FNV-1a's low bits mix poorly: its lowest bit is
// the parity of the input bytes' lowest bits. The hash never changes
// between releases; a change would mix shards of two builds.
type Shard struct {
	K, N int
}

// ParseShard parses "K/N", 1 <= K <= N.
func ParseShard(s string) (Shard, error) {
	ks, ns, ok := strings.Cut(s, "/")
	k, err1 := strconv.Atoi(ks)
	n, err2 := strconv.Atoi(ns)
	if !ok || err1 != nil || err2 != nil {
		return Shard{}, fmt.Errorf("shard %q: want K/N, such as 3/8", s)
	}
	if n < 1 || k < 1 || k > n {
		return Shard{}, fmt.Errorf("shard %q: want 1 <= K <= N", s)
	}
	return Shard{K: k, N: n}, nil
}

// String returns "K/N", or "1/1" for the whole walk.
func (s Shard) String() string {
	if s.Whole() {
		return "1/1"
	}
	return strconv.Itoa(s.K) + "/" + strconv.Itoa(s.N)
}

// Whole reports whether s is the whole walk.
func (s Shard) Whole() bool { return s.N <= 1 }

// Owns reports whether the item at source and record belongs to s.
func (s Shard) Owns(source string, record int) bool {
	return s.Whole() || ShardOf(source, record, s.N) == s.K
}

// Wants reports whether reading in can yield an item of s. It is false
// only for an input that is one document a file (WholeFile) and whose
// source hashes to another share; such a file need not be opened at all.
func (s Shard) Wants(in Input, opt Options) bool {
	return s.Whole() || s.Owns(in.Path, 0) || !WholeFile(in.Path, opt)
}

// WholeFile reports whether the input at path, read with opt, yields items
// of record 0 alone: its format, by Options.Format or by extension (after
// a compression suffix), is one document a file (text, Markdown, code,
// HTML) or a binary type. Inputs whose format is sniffed, and standard
// input, may hold records.
func WholeFile(path string, opt Options) bool {
	if path == "-" {
		return false
	}
	format := opt.Format
	if format == "" {
		name := strings.ToLower(filepath.Base(path))
		for _, z := range []string{".gz", ".zst", ".zstd"} {
			if strings.HasSuffix(name, z) {
				name = strings.TrimSuffix(name, z)
				break
			}
		}
		format = formatByExt(filepath.Ext(name))
	}
	switch format {
	case FormatText, FormatMarkdown, FormatCode, FormatHTML, "binary":
		return true
	}
	return false
}

// FNV-1a, 64 bits (the published offset basis and prime).
const (
	fnvOffset64 = 14695981039346656037
	fnvPrime64  = 1099511628211
)

// ShardOf returns the share, 1..n, of the item at source and record when a
// walk is cut into n shares (n >= 1).
func ShardOf(source string, record int, n int) int {
	return shareOf(shardHash(source, record), n)
}

// shareOf maps a hash to a share, 1..n, in proportion to its value.
func shareOf(h uint64, n int) int {
	hi, _ := bits.Mul64(h, uint64(n))
	return int(hi) + 1
}

// shardHash is the FNV-1a hash of source, a zero byte and record.
func shardHash(source string, record int) uint64 {
	return recordHash(sourceHash(source), record)
}

// sourceHash is the FNV-1a state after source and its zero byte, which
// every record of the source continues.
func sourceHash(source string) uint64 {
	h := uint64(fnvOffset64)
	for i := 0; i < len(source); i++ {
		h ^= uint64(source[i])
		h *= fnvPrime64
	}
	h *= fnvPrime64 // the zero byte: h ^= 0 leaves h as it is
	return h
}

// recordHash continues the state h of a source with record's 8 bytes.
func recordHash(h uint64, record int) uint64 {
	var tail [8]byte
	binary.LittleEndian.PutUint64(tail[:], uint64(record))
	for _, c := range tail {
		h ^= uint64(c)
		h *= fnvPrime64
	}
	return h
}

// An Owner answers Shard.Owns for many items, most of them of the same
// source as the item before: the hash of the source's bytes is kept.
type Owner struct {
	share Shard
	src   string
	state uint64
}

// NewOwner returns an Owner for share.
func NewOwner(share Shard) *Owner {
	return &Owner{share: share, state: sourceHash("")}
}

// Owns reports whether the item at source and record belongs to the
// share, as Shard.Owns does.
func (o *Owner) Owns(source string, record int) bool {
	if o.share.Whole() {
		return true
	}
	if source != o.src {
		o.src, o.state = source, sourceHash(source)
	}
	return shareOf(recordHash(o.state, record), o.share.N) == o.share.K
}
