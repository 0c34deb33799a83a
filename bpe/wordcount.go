package bpe

// WordCount counts the distinct pre-tokens (words) of the texts added to
// it, split as its encoder splits them: the input that Learn needs. The
// zero value is not usable; call NewWordCount. A WordCount is not safe for
// concurrent use; give each worker its own and Merge them.
type WordCount struct {
	e     *Encoder
	index map[string]int32 // word -> position in words and freq
	words []string         // in order of first appearance
	freq  []int64
	total int64
}

// NewWordCount returns an empty count of the words that e splits texts into.
// Learn segments each word as e's vocabulary does and learns merges on top
// of that vocabulary.
func NewWordCount(e *Encoder) *WordCount {
	return &WordCount{e: e, index: map[string]int32{}}
}

// Encoder returns the encoder whose split and vocabulary the count follows.
func (c *WordCount) Encoder() *Encoder { return c.e }

// Add counts the pre-tokens of text. Special-token strings are split as
// the encoder's special mode says; a special token the encoder honours is
// not a word and is left out. Under a bundle, the words are the pre-tokens
// of the normalized text, and its added tokens are left out.
func (c *WordCount) Add(text []byte) {
	if c.e.v.pipe != nil {
		s := c.e.get()
		defer c.e.put(s)
		s.mode, s.pieceFn = sinkPieces, func(p []byte) { c.add(p, 1) }
		var st Stats
		c.e.runBundle(s, text, &st, func(uint32, int, int) {})
		s.pieceFn = nil
		return
	}
	c.e.Split(text, func(start, end int, special bool) {
		if !special {
			c.add(text[start:end], 1)
		}
	})
}

// add counts n occurrences of word.
func (c *WordCount) add(word []byte, n int64) {
	if len(word) == 0 || n <= 0 {
		return
	}
	c.total += n
	if i, ok := c.index[string(word)]; ok {
		c.freq[i] += n
		return
	}
	c.index[string(word)] = int32(len(c.words))
	c.words = append(c.words, string(word))
	c.freq = append(c.freq, n)
}

// Merge adds the counts of o, which must split with the same encoder, to c.
func (c *WordCount) Merge(o *WordCount) {
	for i, w := range o.words {
		n := o.freq[i]
		c.total += n
		if j, ok := c.index[w]; ok {
			c.freq[j] += n
			continue
		}
		c.index[w] = int32(len(c.words))
		c.words = append(c.words, w)
		c.freq = append(c.freq, n)
	}
}

// Len returns the number of distinct words.
func (c *WordCount) Len() int { return len(c.words) }

// Total returns the number of words counted, with repeats.
func (c *WordCount) Total() int64 { return c.total }

// Each calls fn with every distinct word and its count, in order of first
// appearance.
func (c *WordCount) Each(fn func(word string, n int64)) {
	for i, w := range c.words {
		fn(w, c.freq[i])
	}
}
