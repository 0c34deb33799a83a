package survey

import (
	"math"
	"sort"

	"morsel/report"
)

// What a survey keeps of each document once its row is written: its token
// count in a table of counts, and a 16-byte key (hash, tokens, bytes) by
// which identical texts are found at the end. Names are rebuilt from runs
// of consecutive records of one source, so a JSON Lines file of a million
// records holds one name.

// denseTokens is the token count below which a count has its own slot in
// the table of counts; larger counts (documents of 64k tokens or more, so
// few) go to a map.
const denseTokens = 1 << 16

// tokenTally counts documents by their token count, exactly, in space that
// grows with the largest count rather than with the documents.
type tokenTally struct {
	dense []int       // dense[n]: documents of n tokens, n < denseTokens
	big   map[int]int // the rest
	n     int
}

func (t *tokenTally) add(tokens int) {
	t.n++
	if tokens >= 0 && tokens < denseTokens {
		if tokens >= len(t.dense) {
			grow := 2 * len(t.dense)
			if grow <= tokens {
				grow = tokens + 1
			}
			if grow > denseTokens {
				grow = denseTokens
			}
			t.dense = append(t.dense, make([]int, grow-len(t.dense))...)
		}
		t.dense[tokens]++
		return
	}
	if t.big == nil {
		t.big = map[int]int{}
	}
	t.big[tokens]++
}

// each calls fn with every token count held and its documents, in
// increasing order of count.
func (t *tokenTally) each(fn func(tokens, docs int)) {
	var neg, pos []int
	for n := range t.big {
		if n < 0 {
			neg = append(neg, n)
		} else {
			pos = append(pos, n)
		}
	}
	sort.Ints(neg)
	sort.Ints(pos)
	for _, n := range neg {
		fn(n, t.big[n])
	}
	for n, k := range t.dense {
		if k > 0 {
			fn(n, k)
		}
	}
	for _, n := range pos {
		fn(n, t.big[n])
	}
}

// spread gives the nearest-rank percentiles of the counts, as
// report.SpreadOf does on the list of them.
func (t *tokenTally) spread() report.Spread {
	if t.n == 0 {
		return report.Spread{}
	}
	rank := func(p float64) int {
		k := int(p/100*float64(t.n) + 0.999999999)
		return min(max(k, 1), t.n)
	}
	ranks := []int{1, rank(50), rank(90), rank(99), t.n}
	vals := make([]int, len(ranks))
	seen, r := 0, 0
	t.each(func(tokens, docs int) {
		seen += docs
		for r < len(ranks) && ranks[r] <= seen {
			vals[r] = tokens
			r++
		}
	})
	return report.Spread{Min: vals[0], Median: vals[1], P90: vals[2], P99: vals[3], Max: vals[4]}
}

// histogram bins the counts as Histogram does.
func (t *tokenTally) histogram() []Bin {
	if t.n == 0 {
		return []Bin{}
	}
	most := 0
	t.each(func(tokens, _ int) { most = max(most, tokens) })
	bins := []Bin{{From: 0, To: 64}}
	for last := bins[0].To; last <= most && last < math.MaxInt; last = bins[len(bins)-1].To {
		next := math.MaxInt // the last bin ends at the largest int rather than past it
		if last <= math.MaxInt/2 {
			next = 2 * last
		}
		bins = append(bins, Bin{From: last, To: next})
	}
	k := 0
	t.each(func(tokens, docs int) {
		for k+1 < len(bins) && tokens >= bins[k].To {
			k++
		}
		bins[k].Documents += docs
	})
	return bins
}

// docKey is what finds a document's identical copies.
type docKey struct {
	hash   uint64
	tokens uint32
	bytes  uint32 // saturated at maxKeyBytes; the exact size is then in docKeys.big
}

const (
	maxKeyBytes = 1<<32 - 1
	keyChunk    = 1 << 14 // keys per chunk: growth never copies the keys
)

// docKeys holds one key per document in walk order.
type docKeys struct {
	chunks [][]docKey
	big    map[int]int64 // exact bytes of the documents whose key saturated
	n      int
}

func (ks *docKeys) add(hash uint64, tokens int, bytes int64) {
	if ks.n%keyChunk == 0 {
		ks.chunks = append(ks.chunks, make([]docKey, 0, keyChunk))
	}
	k := docKey{hash: hash, tokens: uint32(min(max(tokens, 0), 1<<32-1)), bytes: uint32(min(max(bytes, 0), maxKeyBytes))}
	if bytes >= maxKeyBytes {
		if ks.big == nil {
			ks.big = map[int]int64{}
		}
		ks.big[ks.n] = bytes
	}
	c := &ks.chunks[len(ks.chunks)-1]
	*c = append(*c, k)
	ks.n++
}

// bytesOf returns the bytes of document i whose key is k.
func (ks *docKeys) bytesOf(i int, k docKey) int64 {
	if k.bytes == maxKeyBytes {
		return ks.big[i]
	}
	return int64(k.bytes)
}

// each calls fn with every document's place in the walk and key.
func (ks *docKeys) each(fn func(i int, k docKey)) {
	i := 0
	for _, c := range ks.chunks {
		for _, k := range c {
			fn(i, k)
			i++
		}
	}
}

// repeated returns the hashes that more than one non-empty document has.
// It counts the hashes in parts chosen by their top bits, so that the
// table it builds is a small share of the documents at a time.
func (ks *docKeys) repeated() map[uint64]int {
	parts := 1
	for parts < 256 && ks.n/parts > 1<<16 {
		parts *= 2
	}
	shift := uint(64)
	for p := parts; p > 1; p /= 2 {
		shift--
	}
	dup := map[uint64]int{}
	for p := 0; p < parts; p++ {
		seen := map[uint64]bool{}
		ks.each(func(_ int, k docKey) {
			if k.bytes == 0 || parts > 1 && int(k.hash>>shift) != p {
				return
			}
			if seen[k.hash] {
				dup[k.hash] = -1
			}
			seen[k.hash] = true
		})
	}
	return dup
}
