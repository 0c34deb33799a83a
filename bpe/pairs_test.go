package bpe

import (
	"math/rand/v2"
	"testing"
)

// The compact merge table answers as the table it was made from, for
// every pair it holds, through the dense square or the hash, and for
// pairs it does not hold.
func TestPairTableMatchesMerges(t *testing.T) {
	for _, model := range []string{"nfkc-bytes.model", "identity.model", "userdef.model", "ties.model"} {
		v := loadSPM(t, model)
		p := v.pairs
		if p == nil || p.hot == nil {
			t.Fatalf("%s: no compact merge table", model)
		}
		var syms []uint32
		dense := 0
		v.merges.each(func(k, rm uint64) {
			a, b := uint32(k>>32), uint32(k)
			syms = append(syms, a, b)
			if p.hot[a] != noHot && p.hot[b] != noHot {
				dense++
			}
			if r, m := p.get(a, b); r != uint32(rm>>32) || m != uint32(rm) {
				t.Errorf("%s: pair (%d, %d) gives rank %d, merge %d; the merges say %d, %d", model, a, b, r, m, rm>>32, uint32(rm))
			}
		})
		if dense == 0 {
			t.Errorf("%s: no pair of ASCII characters in the dense square", model)
		}
		rng := rand.New(rand.NewPCG(1, 2))
		for range 20000 {
			a, b := syms[rng.IntN(len(syms))], syms[rng.IntN(len(syms))]
			wr, wm := uint32(noRank), uint32(0)
			if rm, ok := v.merges.get(pairKey(a, b)); ok {
				wr, wm = uint32(rm>>32), uint32(rm)
			}
			if r, m := p.get(a, b); r != wr || m != wm {
				t.Fatalf("%s: pair (%d, %d) gives %d, %d; the merges say %d, %d", model, a, b, r, m, wr, wm)
			}
		}
		if r, _ := p.get(noSym, syms[0]); r != noRank {
			t.Errorf("%s: a pair with noSym has rank %d", model, r)
		}
		if r, _ := p.get(syms[0], noSym); r != noRank {
			t.Errorf("%s: a pair with noSym has rank %d", model, r)
		}
	}
}

// A table with an id past 16 bits has no compact form.
func TestPairTableTooWide(t *testing.T) {
	m := newU64Table(2)
	m.put(pairKey(1, 2), 0<<32|3)
	if newPairTable(&m) == nil {
		t.Fatal("no compact form for small ids")
	}
	m.put(pairKey(1, 70000), 1<<32|4)
	if newPairTable(&m) != nil {
		t.Fatal("a compact form for an id of 17 bits")
	}
}
