package bpe

import (
	"fmt"
	"sort"
)

// WordUse is a word that a learned token appears in, with how often the
// word occurs in the words counted.
type WordUse struct {
	Word  string
	Count int64
}

// TokenUse is one new token of a learned vocabulary and the words that
// keep it once every merge is learned: a token that later merges absorb
// into longer ones may serve no word by itself.
type TokenUse struct {
	ID     int
	Token  []byte    // the token's bytes
	Words  []WordUse // the most frequent words that hold it, most frequent first
	Occurs int64     // occurrences of the token in all the words
}

// Uses encodes every word of words with the learned vocabulary and returns,
// for each new token in id order, its occurrences and the top most frequent
// words that hold it (ties by word, in byte order). The split is the one
// words was counted with. It fails when the learned vocabulary cannot make
// an encoder for that split.
func (l *Learned) Uses(words *WordCount, top int) ([]TokenUse, error) {
	e, err := NewEncoder(l.Vocab, Options{SplitPattern: splitPattern(words.e)})
	if err != nil {
		return nil, fmt.Errorf("encoding with the learned vocabulary: %w", err)
	}
	first := l.Base.Size()
	out := make([]TokenUse, len(l.New))
	for i, m := range l.New {
		out[i] = TokenUse{ID: m.ID, Token: l.Vocab.tokens[m.ID]}
	}
	s := e.get()
	defer e.put(s)
	for w, word := range words.words {
		n := words.freq[w]
		ids := s.piece([]byte(word))
		for k, id := range ids {
			if int(id) < first {
				continue
			}
			u := &out[int(id)-first]
			u.Occurs += n
			if seenBefore(ids[:k], id) {
				continue
			}
			u.Words = append(u.Words, WordUse{word, n})
			if len(u.Words) >= 4*top+16 {
				u.Words = topUses(u.Words, top)
			}
		}
	}
	for i := range out {
		out[i].Words = topUses(out[i].Words, top)
	}
	return out, nil
}

func seenBefore(ids []uint32, id uint32) bool {
	for _, x := range ids {
		if x == id {
			return true
		}
	}
	return false
}

// topUses returns the top most frequent uses, ties by word.
func topUses(us []WordUse, top int) []WordUse {
	sort.Slice(us, func(i, j int) bool {
		if us[i].Count != us[j].Count {
			return us[i].Count > us[j].Count
		}
		return us[i].Word < us[j].Word
	})
	if len(us) > top {
		us = us[:top]
	}
	return us
}

// splitPattern returns the split pattern e was made with; "" is the GPT-2
// rule.
func splitPattern(e *Encoder) string {
	if e.re == nil {
		return ""
	}
	return e.re.re.src
}
