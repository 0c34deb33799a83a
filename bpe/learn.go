package bpe

import (
	"bytes"
	"errors"
	"fmt"
)

// Learning merges: byte-pair encoding as Sennrich, Haddow and Birch (2016)
// learn it, over bytes as GPT-2 does (Radford et al. 2019). Each distinct
// word starts as its segmentation under the base vocabulary (its bytes, for
// ByteVocab); the most frequent adjacent pair of symbols, weighted by word
// counts, becomes a new token, and its occurrences are merged in every word,
// left to right, until enough merges are learned.
//
// Pair counts are kept up to date as merges rewrite words, and a max-heap
// holds the candidates: a merge touches only the words that hold its pair,
// found through a per-pair list of words, and never recounts the rest.
// Counts of existing pairs only fall (a merge makes pairs only with the new
// token), so heap entries are checked when they reach the top and put back
// with their current count if they are stale.

// LearnedMerge is one merge that Learn added.
type LearnedMerge struct {
	Left, Right int   // the ids of the two tokens merged
	ID          int   // the id of the new token
	Count       int64 // occurrences of the pair in the learning words when it was chosen
	Saved       int64 // tokens the merge removed from the learning words (Count less overlaps such as "aaa")
}

// LearnOptions set up Learn.
type LearnOptions struct {
	Merges   int   // how many merges to learn
	MinCount int64 // the fewest occurrences a pair needs to be merged; 0 means 2
}

// Learned is a vocabulary that Learn made: the base vocabulary with the new
// merges after its own, and the new merges in the order learned.
type Learned struct {
	Vocab *Vocab
	Base  *Vocab
	New   []LearnedMerge
}

// ErrNoWords is returned by Learn when the word count is empty.
var ErrNoWords = errors.New("no words to learn from")

// ByteVocab returns the vocabulary of the 256 byte tokens and no merges:
// the base from which Learn learns a vocabulary afresh. The byte tokens
// have the ids that GPT-2 gives them (the printable bytes first, in byte
// order, then the others), so a learned vocabulary spells bytes as GPT-2's.
func ByteVocab() *Vocab {
	v := &Vocab{name: "bytes", tokens: make([][]byte, 0, 256), merges: newU64Table(0)}
	add := func(b int) {
		v.byteID[b] = uint32(len(v.tokens))
		v.tokens = append(v.tokens, []byte{byte(b)})
	}
	var moved []int
	for b := 0; b < 256; b++ {
		if byteToRune[b] == rune(b) {
			add(b)
		} else {
			moved = append(moved, b)
		}
	}
	for _, b := range moved {
		add(b)
	}
	return v
}

// Learn learns opt.Merges merges from words on top of the vocabulary of
// words' encoder. The new tokens take the ids after the base's, the base's
// merges keep their ranks and the new ones rank after them, so the new
// vocabulary encodes any word exactly as the base does wherever no new
// merge applies.
//
// Ties between pairs of equal count go to the pair whose left token's bytes
// sort first (bytes.Compare), then to the one whose right token's bytes
// sort first; the result does not depend on the order of the words. A pair
// whose two tokens together spell a token the vocabulary already has is
// never merged: each token has one merge, so the encoder, which applies
// merges by rank, segments the learning words exactly as the learner did.
// Learn stops early when no pair occurs opt.MinCount times. It fails when
// words is empty, opt.Merges is negative, or the base is not plain
// byte-level BPE. A bundle's normalizer, pre-tokenizer, added tokens and
// template carry over to the new vocabulary.
func Learn(words *WordCount, opt LearnOptions) (*Learned, error) {
	if opt.Merges < 0 {
		return nil, fmt.Errorf("learning %d merges: the number of merges cannot be negative", opt.Merges)
	}
	if words.Len() == 0 {
		return nil, ErrNoWords
	}
	if opt.MinCount <= 0 {
		opt.MinCount = 2
	}
	base := words.e.Vocab()
	if base.slow || (base.pipe != nil && !base.pipe.byteLevel) {
		return nil, fmt.Errorf("vocabulary %s: learning extends plain byte-level BPE only (no byte fallback, character-level symbols, subword prefix or suffix, or ignore_merges)", base.name)
	}
	l := newLearner(base, words)
	l.run(opt)
	return &Learned{Vocab: l.vocab(base), Base: base, New: l.learned}, nil
}

// pairStat is what the learner knows of one adjacent pair.
type pairStat struct {
	count  int64
	words  []int32 // words that held the pair when it was counted; may repeat or be stale
	pushed int32   // the step whose new pairs list holds this pair, to list it once
}

type learner struct {
	tokens  [][]byte
	ids     map[string]int32
	syms    []uint32 // every word's symbols, word w at start[w] : start[w]+n[w]
	start   []int
	n       []int32
	freq    []int64
	pairs   map[uint64]int32 // pair key -> index in stats
	stats   []pairStat
	keys    []uint64 // stat index -> pair key
	heap    pairHeap
	visited []int32 // word -> the last step that rewrote it, plus one
	fresh   []int32 // stats of pairs that the current step made
	learned []LearnedMerge
}

func newLearner(base *Vocab, words *WordCount) *learner {
	l := &learner{
		tokens:  append([][]byte(nil), base.tokens...),
		ids:     make(map[string]int32, len(base.tokens)),
		start:   make([]int, words.Len()),
		n:       make([]int32, words.Len()),
		freq:    words.freq,
		pairs:   make(map[uint64]int32, 4*words.Len()),
		visited: make([]int32, words.Len()),
	}
	for id, t := range base.tokens {
		l.ids[string(t)] = int32(id)
	}
	l.heap.tokens = &l.tokens
	for w, word := range words.words {
		l.start[w] = len(l.syms)
		if len(word) == 1 {
			l.syms = append(l.syms, base.byteID[word[0]])
		} else {
			for _, id := range words.e.EncodePiece([]byte(word)) {
				l.syms = append(l.syms, uint32(id))
			}
		}
		l.n[w] = int32(len(l.syms) - l.start[w])
		s := l.syms[l.start[w]:]
		for i := 0; i+1 < len(s); i++ {
			l.add(s[i], s[i+1], l.freq[w], int32(w))
		}
	}
	l.heap.items = make([]heapItem, 0, len(l.stats))
	for i := range l.stats {
		l.heap.items = append(l.heap.items, heapItem{l.stats[i].count, l.keys[i]})
	}
	l.heap.init()
	return l
}

// add changes the count of pair (a, b) by delta for word w and returns the
// pair's stat index.
func (l *learner) add(a, b uint32, delta int64, w int32) int32 {
	k := pairKey(a, b)
	i, ok := l.pairs[k]
	if !ok {
		i = int32(len(l.stats))
		l.pairs[k] = i
		l.stats = append(l.stats, pairStat{pushed: -1})
		l.keys = append(l.keys, k)
	}
	st := &l.stats[i]
	st.count += delta
	if delta > 0 && (len(st.words) == 0 || st.words[len(st.words)-1] != w) {
		st.words = append(st.words, w)
	}
	return i
}

func (l *learner) run(opt LearnOptions) {
	for step := int32(0); len(l.learned) < opt.Merges && len(l.heap.items) > 0; {
		top := l.heap.pop()
		i := l.pairs[top.key]
		st := &l.stats[i]
		if st.count != top.count { // stale: the count has fallen since it was pushed
			if st.count >= opt.MinCount {
				l.heap.push(heapItem{st.count, top.key})
			}
			continue
		}
		if st.count < opt.MinCount {
			return // every other entry's count is at most its own, which is at most this
		}
		a, b := uint32(top.key>>32), uint32(top.key)
		joined := string(l.tokens[a]) + string(l.tokens[b])
		if _, have := l.ids[joined]; have {
			continue
		}
		c := uint32(len(l.tokens))
		l.tokens = append(l.tokens, []byte(joined))
		l.ids[joined] = int32(c)
		count := st.count
		saved := l.merge(a, b, c, i, step)
		l.learned = append(l.learned, LearnedMerge{Left: int(a), Right: int(b), ID: int(c), Count: count, Saved: saved})
		step++
	}
}

// merge replaces every occurrence of (a, b) by c in the words that hold the
// pair (stat i), updates the counts of the pairs around each occurrence,
// pushes the pairs with c that it made, and returns the tokens it removed.
func (l *learner) merge(a, b, c uint32, i int32, step int32) int64 {
	words := l.stats[i].words
	l.stats[i].words = nil
	l.fresh = l.fresh[:0]
	var saved int64
	for _, w := range words {
		if l.visited[w] == step+1 {
			continue
		}
		l.visited[w] = step + 1
		f := l.freq[w]
		s := l.syms[l.start[w] : l.start[w]+int(l.n[w])]
		j := 0
		for k := 0; k < len(s); {
			if k+1 < len(s) && s[k] == a && s[k+1] == b {
				if j > 0 {
					l.add(s[j-1], a, -f, w)
					l.note(l.add(s[j-1], c, f, w), step)
				}
				l.add(a, b, -f, w)
				if k+2 < len(s) {
					l.add(b, s[k+2], -f, w)
					l.note(l.add(c, s[k+2], f, w), step)
				}
				s[j] = c
				j++
				k += 2
				saved += f
				continue
			}
			s[j] = s[k]
			j++
			k++
		}
		l.n[w] = int32(j)
	}
	for _, p := range l.fresh {
		if st := &l.stats[p]; st.count > 0 {
			l.heap.push(heapItem{st.count, l.keys[p]})
		}
	}
	return saved
}

// note lists stat p among the pairs made in this step, once.
func (l *learner) note(p int32, step int32) {
	if l.stats[p].pushed != step {
		l.stats[p].pushed = step
		l.fresh = append(l.fresh, p)
	}
}

// vocab builds the vocabulary of the base's tokens and merges followed by
// the learned ones.
func (l *learner) vocab(base *Vocab) *Vocab {
	v := &Vocab{
		name:     base.name + "+" + fmt.Sprint(len(l.learned)),
		tokens:   l.tokens,
		byteID:   base.byteID,
		merges:   newU64Table(base.nMerges + len(l.learned)),
		nMerges:  base.nMerges + len(l.learned),
		specials: append([]Special(nil), base.specials...),
		window:   base.window,
		model:    base.model,
		pipe:     base.pipe,
	}
	base.merges.each(func(k, rm uint64) { v.merges.put(k, rm) })
	for r, m := range l.learned {
		v.merges.put(pairKey(uint32(m.Left), uint32(m.Right)), uint64(base.nMerges+r)<<32|uint64(m.ID))
	}
	return v
}

// Merges returns the merges of v in rank order, each as the ids of its
// left and right token and of the token it makes.
func (v *Vocab) Merges() [][3]int {
	out := make([][3]int, v.nMerges)
	v.merges.each(func(k, rm uint64) { out[rm>>32] = [3]int{int(k >> 32), int(uint32(k)), int(uint32(rm))} })
	return out
}

// heapItem is a candidate pair with its count when pushed.
type heapItem struct {
	count int64
	key   uint64
}

// pairHeap is a max-heap of candidate pairs by count, ties broken by the
// bytes of the left token, then of the right token, smallest first.
type pairHeap struct {
	items  []heapItem
	tokens *[][]byte
}

func (h *pairHeap) before(x, y heapItem) bool {
	if x.count != y.count {
		return x.count > y.count
	}
	t := *h.tokens
	if c := bytes.Compare(t[x.key>>32], t[y.key>>32]); c != 0 {
		return c < 0
	}
	return bytes.Compare(t[uint32(x.key)], t[uint32(y.key)]) < 0
}

func (h *pairHeap) init() {
	for i := len(h.items)/2 - 1; i >= 0; i-- {
		h.down(i)
	}
}

func (h *pairHeap) push(x heapItem) {
	h.items = append(h.items, x)
	i := len(h.items) - 1
	for i > 0 {
		p := (i - 1) / 2
		if !h.before(x, h.items[p]) {
			break
		}
		h.items[i] = h.items[p]
		i = p
	}
	h.items[i] = x
}

func (h *pairHeap) pop() heapItem {
	top := h.items[0]
	last := len(h.items) - 1
	h.items[0] = h.items[last]
	h.items = h.items[:last]
	if last > 0 {
		h.down(0)
	}
	return top
}

func (h *pairHeap) down(i int) {
	n := len(h.items)
	x := h.items[i]
	for {
		c := 2*i + 1
		if c >= n {
			break
		}
		if c+1 < n && h.before(h.items[c+1], h.items[c]) {
			c++
		}
		if !h.before(h.items[c], x) {
			break
		}
		h.items[i] = h.items[c]
		i = c
	}
	h.items[i] = x
}
