package bpe

import (
	"fmt"
	"strings"
	"testing"
)

// A test-only BPE learner over a word-frequency dictionary, as described in
// Sennrich, Haddow and Birch (2016), "Neural Machine Translation of Rare
// Words with Subword Units", section 3.2 and Algorithm 1: count adjacent
// symbol pairs weighted by word frequency, merge the most frequent pair
// everywhere, repeat. Words are symbol sequences ending in an end-of-word
// symbol. ties lists the pair to take when several share the top count.
type toyWord struct {
	syms []string
	freq int
}

func pairCounts(words []toyWord) map[[2]string]int {
	c := map[[2]string]int{}
	for _, w := range words {
		for i := 0; i+1 < len(w.syms); i++ {
			c[[2]string{w.syms[i], w.syms[i+1]}] += w.freq
		}
	}
	return c
}

func applyToyMerge(words []toyWord, p [2]string) {
	for k, w := range words {
		var out []string
		for i := 0; i < len(w.syms); i++ {
			if i+1 < len(w.syms) && w.syms[i] == p[0] && w.syms[i+1] == p[1] {
				out = append(out, p[0]+p[1])
				i++
				continue
			}
			out = append(out, w.syms[i])
		}
		words[k].syms = out
	}
}

func toyDict(spec map[string]int, order []string) []toyWord {
	var ws []toyWord
	for _, w := range order {
		syms := strings.Split(w, "")
		ws = append(ws, toyWord{append(syms, "_"), spec[w]})
	}
	return ws
}

// topPairs returns the pairs that share the highest count.
func topPairs(c map[[2]string]int) (best int, pairs map[[2]string]bool) {
	pairs = map[[2]string]bool{}
	for p, n := range c {
		if n > best {
			best, pairs = n, map[[2]string]bool{}
		}
		if n == best {
			pairs[p] = true
		}
	}
	return best, pairs
}

// Figure 1 of the paper: from the dictionary {low, lowest, newer, wider}
// the paper lists the merges r· -> r·, l o -> lo, lo w -> low, e r· -> er·
// (· is the end-of-word symbol, written "_" here), and says that the
// unseen word "lower" is then segmented into "low er·".
func TestSennrichFigure1(t *testing.T) {
	words := toyDict(map[string]int{"low": 1, "lowest": 1, "newer": 1, "wider": 1}, []string{"low", "lowest", "newer", "wider"})
	paper := [][2]string{{"r", "_"}, {"l", "o"}, {"lo", "w"}, {"e", "r_"}}
	for step, p := range paper {
		_, top := topPairs(pairCounts(words))
		if !top[p] {
			t.Fatalf("step %d: the paper's merge %v is not among the most frequent pairs %v", step, p, top)
		}
		applyToyMerge(words, p)
	}
	e := toyEncoder(t, paper)
	got := toyPieces(e, "lower_")
	if got != "low er_" {
		t.Fatalf("lower segments as %q; the paper gives \"low er·\"", got)
	}
}

// learnToy runs Algorithm 1 for n merges. Ties go to the pair seen first
// when scanning the words in order, as the paper's Python code does with
// insertion-ordered dictionaries.
func learnToy(words []toyWord, n int) (merges [][2]string, counts []int) {
	for len(merges) < n {
		var order [][2]string
		c := map[[2]string]int{}
		for _, w := range words {
			for i := 0; i+1 < len(w.syms); i++ {
				p := [2]string{w.syms[i], w.syms[i+1]}
				if _, seen := c[p]; !seen {
					order = append(order, p)
				}
				c[p] += w.freq
			}
		}
		if len(order) == 0 {
			break
		}
		best := order[0]
		for _, p := range order {
			if c[p] > c[best] {
				best = p
			}
		}
		merges = append(merges, best)
		counts = append(counts, c[best])
		applyToyMerge(words, best)
	}
	return merges, counts
}

// Algorithm 1 of the paper runs ten merges on {'l o w </w>': 5,
// 'l o w e r </w>': 2, 'n e w e s t </w>': 6, 'w i d e s t </w>': 3}. The
// merges and their counts below follow from that dictionary by hand (e s
// occurs in newest x6 and widest x3: 9; l o in low x5 and lower x2: 7; ...),
// ties broken by first occurrence.
func TestSennrichAlgorithm1(t *testing.T) {
	order := []string{"low", "lower", "newest", "widest"}
	words := toyDict(map[string]int{"low": 5, "lower": 2, "newest": 6, "widest": 3}, order)
	merges, counts := learnToy(words, 10)
	want := []string{"e s", "es t", "est _", "l o", "lo w", "n e", "ne w", "new est_", "low _", "w i"}
	wantCounts := []int{9, 9, 9, 7, 7, 6, 6, 6, 5, 3}
	for i := range want {
		if got := merges[i][0] + " " + merges[i][1]; got != want[i] || counts[i] != wantCounts[i] {
			t.Fatalf("merge %d: %q (count %d); want %q (count %d)", i, got, counts[i], want[i], wantCounts[i])
		}
	}
	e := toyEncoder(t, merges)
	for word, want := range map[string]string{
		"lowest_": "low est_", "newest_": "newest_", "widest_": "wi d est_", "low_": "low_", "lower_": "low e r _",
	} {
		if got := toyPieces(e, word); got != want {
			t.Errorf("%s: %q want %q", word, got, want)
		}
	}
}

// toyEncoder builds a byte-level vocabulary from merges over ASCII symbols
// and loads it through Parse, as a user's files would be.
func toyEncoder(t *testing.T, merges [][2]string) *Encoder {
	t.Helper()
	var vj strings.Builder
	vj.WriteString("{")
	for b := 0; b < 256; b++ {
		fmt.Fprintf(&vj, "%s: %d, ", quoteJSON(string(byteToRune[b])), b)
	}
	var mt strings.Builder
	mt.WriteString("#version: 0.2\n")
	for i, m := range merges {
		fmt.Fprintf(&vj, "%s: %d", quoteJSON(m[0]+m[1]), 256+i)
		if i < len(merges)-1 {
			vj.WriteString(", ")
		}
		fmt.Fprintf(&mt, "%s %s\n", m[0], m[1])
	}
	vj.WriteString("}")
	v, err := Parse("toy.json", []byte(vj.String()), "toy.txt", []byte(mt.String()))
	if err != nil {
		t.Fatal(err)
	}
	e, err := NewEncoder(v, Options{SplitPattern: `\S+`})
	if err != nil {
		t.Fatal(err)
	}
	return e
}

func toyPieces(e *Encoder, word string) string {
	var parts []string
	for _, id := range e.Encode([]byte(word)) {
		tok, _ := e.Vocab().Token(id)
		parts = append(parts, string(tok))
	}
	return strings.Join(parts, " ")
}
