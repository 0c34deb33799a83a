package bpe

import (
	"strings"
	"testing"
)

func TestWordCount(t *testing.T) {
	e := gpt2(t, Options{})
	texts := []string{"the cat and the hat", " the end<|endoftext|>the", "", "\xff\xfe the"}
	c := countText(e, texts...)
	want := map[string]int64{}
	var total int64
	for _, s := range texts {
		e.Split([]byte(s), func(a, b int, _ bool) { want[s[a:b]]++; total++ })
	}
	if c.Len() != len(want) || c.Total() != total {
		t.Fatalf("%d words (%d in all), want %d (%d)", c.Len(), c.Total(), len(want), total)
	}
	c.Each(func(w string, n int64) {
		if want[w] != n {
			t.Errorf("%q counted %d times, want %d", w, n, want[w])
		}
	})

	// Counted in two halves and merged, the count is the same.
	a, b := countText(e, texts[:2]...), countText(e, texts[2:]...)
	a.Merge(b)
	if a.Len() != c.Len() || a.Total() != c.Total() {
		t.Fatalf("merged: %d words (%d), want %d (%d)", a.Len(), a.Total(), c.Len(), c.Total())
	}
	a.Each(func(w string, n int64) {
		if want[w] != n {
			t.Errorf("merged: %q counted %d times, want %d", w, n, want[w])
		}
	})
}

// A special token that the encoder honours is not a word; as text it is.
func TestWordCountSpecials(t *testing.T) {
	honor := gpt2(t, Options{Specials: SpecialsHonor})
	c := countText(honor, "a<|endoftext|>b")
	c.Each(func(w string, _ int64) {
		if strings.Contains(w, "endoftext") {
			t.Fatalf("the honoured special gave the word %q", w)
		}
	})
	if c.Total() != 2 {
		t.Fatalf("%d words, want 2 (a, b)", c.Total())
	}
	if c := countText(gpt2(t, Options{}), "a<|endoftext|>b"); c.Total() <= 2 {
		t.Fatalf("as text the special's pieces are words: %d words", c.Total())
	}
}
