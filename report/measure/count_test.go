package measure

import (
	"math/rand"
	"testing"
)

// slowCount is the byte-at-a-time definition TextCounter must match.
func slowCount(chunks [][]byte) (chars, words int64) {
	in := false
	for _, p := range chunks {
		for _, b := range p {
			if b&0xC0 != 0x80 {
				chars++
			}
			sp := b == ' ' || (b >= 9 && b <= 13)
			if sp {
				in = false
			} else if !in {
				in = true
				words++
			}
		}
	}
	return
}

func checkCounter(t *testing.T, chunks [][]byte) {
	t.Helper()
	var c TextCounter
	for _, p := range chunks {
		c.Write(p)
	}
	chars, words := slowCount(chunks)
	if c.Chars != chars || c.WCWords != words {
		t.Fatalf("%q: counter %d chars %d words; byte by byte %d, %d", chunks, c.Chars, c.WCWords, chars, words)
	}
}

func TestTextCounterMatchesByteByByte(t *testing.T) {
	alphabet := []byte("ab \t\n\r\v\f\x08\x0e\x1f\x20\x21\xa0\x89\x8d\xc3\xa9\xe3\x81\x82\x00\x7f\xff")
	rng := rand.New(rand.NewSource(3))
	for trial := 0; trial < 2000; trial++ {
		var chunks [][]byte
		for k := rng.Intn(4); k >= 0; k-- {
			p := make([]byte, rng.Intn(40))
			for i := range p {
				p[i] = alphabet[rng.Intn(len(alphabet))]
			}
			chunks = append(chunks, p)
		}
		checkCounter(t, chunks)
	}
	// wc -w counts 4 words here (common practice: words are runs between
	// white space).
	var c TextCounter
	c.Write([]byte("  two\twords\n\nand  more "))
	if c.WCWords != 4 || c.Chars != 23 {
		t.Fatalf("got %d words %d chars", c.WCWords, c.Chars)
	}
}

func FuzzTextCounter(f *testing.F) {
	f.Add([]byte("héllo wörld\t\x85\xa0 x"), 3)
	f.Fuzz(func(t *testing.T, data []byte, cut int) {
		if cut < 0 || cut > len(data) {
			cut = len(data) / 2
		}
		checkCounter(t, [][]byte{data[:cut], data[cut:]})
	})
}
