package bpe

import (
	"bytes"
	"math/rand/v2"
	"os"
	"slices"
	"testing"
)

// A small cache, whose sets and rings are written over again and again,
// gives every piece the ids its merge gives, short and long pieces alike,
// repeated or not.
func TestSPMCacheEvictsExactly(t *testing.T) {
	enc := spmEncoders(t)[0]
	sp := enc.v.spm
	var text []byte
	for _, f := range []string{"en-gpl3-start.txt", "go-strings-reader.go.txt"} {
		data, err := os.ReadFile(goldenDir + "/corpus/" + f)
		if err != nil {
			t.Fatal(err)
		}
		text = append(text, data...)
	}
	norm := sp.normalizeFast(nil, text)
	var pieces [][]byte
	for i := 0; i < len(norm); {
		j := sp.nextCut(norm, i)
		pieces = append(pieces, norm[i:j])
		i = j
	}
	// Long pieces of repeated words, so that the long entries and the
	// text ring see use.
	rng := rand.New(rand.NewPCG(3, 4))
	for range 300 {
		a, b := pieces[rng.IntN(len(pieces))], pieces[rng.IntN(len(pieces))]
		pieces = append(pieces, slices.Concat(a, bytes.TrimPrefix(b, []byte(sp.mark)), bytes.TrimPrefix(a, []byte(sp.mark))))
	}
	want := make([][]uint32, len(pieces))
	plain := newState(enc.v, 16)
	for k, p := range pieces {
		ids := plain.mergeShort(p)
		if len(p) > shortest {
			ids = plain.mergeLong(p)
		}
		want[k] = slices.Clone(plain.spmFinish(p, ids))
	}
	for _, size := range [][3]int{{4, spmLongest, spmLongest}, {64, 300, 1000}, {1 << 10, 1 << 12, 1 << 14}} {
		s := newState(enc.v, 16)
		s.spm = newSPMCacheRings(size[0], size[1], size[2])
		hits := 0
		for round := range 3 {
			for _, k := range rng.Perm(len(pieces)) {
				p := pieces[k]
				if _, ok := s.spm.get(p); ok && len(p) <= spmLongest {
					hits++
				}
				if n := s.spmCountPiece(p); n != len(want[k]) {
					t.Fatalf("cache %v, round %d: %q counts %d, merges to %d", size, round, p, n, len(want[k]))
				}
				if got := spmAppendPiece(s, []uint32(nil), p); !slices.Equal(got, want[k]) {
					t.Fatalf("cache %v, round %d: %q gives %v, merges to %v", size, round, p, got, want[k])
				}
			}
		}
		if hits == 0 {
			t.Errorf("cache %v: no piece found in the cache", size)
		}
	}
}

// mergeShortPairs merges as mergeShort does under every test model, on
// random pieces of letters, marks, digits and characters some models
// lack.
func TestMergeShortPairsEqualsMergeShort(t *testing.T) {
	alphabet := []string{"▁", "e", "t", "a", "o", "n", "s", "th", "in", "1", "0", ".", "é", "ß", "中", "\u00a0", "x"}
	rng := rand.New(rand.NewPCG(5, 6))
	for k, enc := range spmEncoders(t) {
		pt := enc.v.pairs
		if pt == nil {
			continue
		}
		s, plain := newState(enc.v, 16), newState(enc.v, 16)
		for range 3000 {
			var p []byte
			for range 1 + rng.IntN(30) {
				p = append(p, alphabet[rng.IntN(len(alphabet))]...)
			}
			want := slices.Clone(plain.mergeShort(p))
			if got := s.mergeShortPairs(p, pt); !slices.Equal(got, want) {
				t.Fatalf("%s: %q merges to %v, mergeShort gives %v", spmModels[k], p, got, want)
			}
		}
	}
}

// No two pieces of 1 to spmInline bytes share a key, and none is all
// zero (a free entry).
func TestSPMKeyDistinct(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	seen := map[[3]uint64]string{}
	alphabet := []byte{0, 1, 'a', 0xe2, 0x96, 0x81, 0xff}
	var pieces [][]byte
	for n := 1; n <= spmInline; n++ {
		for _, c := range alphabet {
			pieces = append(pieces, bytes.Repeat([]byte{c}, n)) // the same bytes at every length
		}
	}
	for range 200000 {
		p := make([]byte, 1+rng.IntN(spmInline))
		for i := range p {
			p[i] = alphabet[rng.IntN(len(alphabet))]
		}
		pieces = append(pieces, p)
	}
	for _, p := range pieces {
		k0, k1, k2 := spmKey(p)
		k := [3]uint64{k0, k1, k2}
		if k == [3]uint64{} {
			t.Fatalf("%q has the free entry's key", p)
		}
		if q, ok := seen[k]; ok && q != string(p) {
			t.Fatalf("%q and %q share the key %x", q, p, k)
		}
		seen[k] = string(p)
	}
}
