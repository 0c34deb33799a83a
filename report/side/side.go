// Package side weighs one document set under several vocabularies side by
// side: tokens per document and in total under each, tokens per word by
// script, the documents where the vocabularies differ most, and the words
// that one vocabulary keeps whole and another splits.
package side

import (
	"fmt"
	"sort"
	"strings"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/measure"
	"morsel/report/render"
)

// A word here is a word segment of the text by Unicode's word boundaries
// (UAX #29, measure.NextSegment) that holds a letter or a digit, as
// fragments reads words. Its pieces under a vocabulary are the tokens of the word
// alone, with the space before it when one comes before it in the text, as
// most pre-tokenizers attach a leading space to the word that follows.

// Vocab is one of the vocabularies compared.
type Vocab struct {
	Name string
	Enc  *bpe.Encoder
}

// Doc is one document's tokens under every vocabulary, in the order the
// vocabularies were given.
type Doc struct {
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string  `json:"source_bytes,omitempty"`
	Record      int     `json:"record"`
	Bytes       int64   `json:"bytes"`
	Words       int64   `json:"words"`
	Tokens      []int   `json:"tokens"`
	Spread      float64 `json:"spread"` // (most - fewest) / fewest tokens, over the vocabularies
}

// wordKey is a distinct word and whether a space came before it.
type wordKey struct {
	word   string
	spaced bool
}

// DocWords is what one document gives the comparison: its counts and its
// words, counted.
type DocWords struct {
	Doc   Doc
	words map[wordKey]int64
}

// Measure weighs one document's text under every vocabulary. Its error is
// that of a split pattern that ran past its time limit under one of them
// (bpe.Encoder.CountChecked), naming that vocabulary: the document is then
// not weighed at all, so every vocabulary's totals cover the same documents.
func Measure(vs []Vocab, source string, record int, text []byte) (*DocWords, error) {
	d := &DocWords{Doc: Doc{Source: source, SourceBytes: report.SourceBytes(source), Record: record, Bytes: int64(len(text)), Tokens: make([]int, len(vs))}, words: map[wordKey]int64{}}
	for i, v := range vs {
		n, err := v.Enc.CountChecked(text)
		if err != nil {
			return nil, fmt.Errorf("under %s: %w", v.Name, err)
		}
		d.Doc.Tokens[i] = n
	}
	d.Doc.Spread = spread(d.Doc.Tokens)
	for i := 0; i < len(text); {
		j := measure.NextSegment(text, i)
		if seg := text[i:j]; measure.HasWordChar(seg) {
			d.words[wordKey{string(seg), i > 0 && text[i-1] == ' '}]++
			d.Doc.Words++
		}
		i = j
	}
	return d, nil
}

func spread(tokens []int) float64 {
	if len(tokens) == 0 {
		return 0
	}
	lo, hi := tokens[0], tokens[0]
	for _, n := range tokens {
		lo, hi = min(lo, n), max(hi, n)
	}
	if lo == 0 {
		return 0
	}
	return float64(int64(1000*float64(hi-lo)/float64(lo)+0.5)) / 1000
}

// Total is the whole set under one vocabulary.
type Total struct {
	Vocabulary    string  `json:"vocabulary"`
	Tokens        int64   `json:"tokens"`
	BytesPerToken float64 `json:"bytes_per_token"`
	TokensPerWord float64 `json:"tokens_per_word"` // pieces per word, words as above
}

// ScriptRow is the tokens per word of one script's words under each
// vocabulary.
type ScriptRow struct {
	Script        string    `json:"script"`
	Words         int64     `json:"words"`
	TokensPerWord []float64 `json:"tokens_per_word"`
}

// WordRow is a word that one vocabulary keeps whole and another splits.
type WordRow struct {
	Word   string   `json:"word"`
	Spaced bool     `json:"after_space"` // counted with the space before it
	Count  int64    `json:"count"`
	Pieces []int    `json:"pieces"` // under each vocabulary
	Split  []string `json:"split"`  // the pieces as text, under each vocabulary
}

// Report is the side-by-side report.
type Report struct {
	Vocabularies []string         `json:"vocabularies"`
	Documents    []Doc            `json:"documents"`
	Totals       []Total          `json:"totals"`
	Bytes        int64            `json:"bytes"`
	Words        int64            `json:"words"`
	Scripts      []ScriptRow      `json:"scripts"`
	MostApart    []Doc            `json:"differ_most"`
	WholeSplit   []WordRow        `json:"whole_and_split"`
	Skipped      []report.Skipped `json:"skipped"`
}

// Collector folds documents into a Report.
type Collector struct {
	vs    []Vocab
	r     Report
	words map[wordKey]int64
	top   int
}

// NewCollector starts a comparison of vs; top bounds the lists of
// documents and words.
func NewCollector(vs []Vocab, top int) *Collector {
	c := &Collector{vs: vs, words: map[wordKey]int64{}, top: top}
	for _, v := range vs {
		c.r.Vocabularies = append(c.r.Vocabularies, v.Name)
	}
	c.r.Documents, c.r.Skipped = []Doc{}, []report.Skipped{}
	return c
}

// Add takes one document.
func (c *Collector) Add(d *DocWords) {
	c.r.Documents = append(c.r.Documents, d.Doc)
	c.r.Bytes += d.Doc.Bytes
	c.r.Words += d.Doc.Words
	for k, n := range d.words {
		c.words[k] += n
	}
}

// Skip records an input or record that was not counted.
func (c *Collector) Skip(s report.Skipped) { c.r.Skipped = append(c.r.Skipped, s) }

// Finish encodes every distinct word under every vocabulary and returns
// the report.
func (c *Collector) Finish() *Report {
	r := &c.r
	sums := make([]int64, len(c.vs))
	for _, d := range r.Documents {
		for i, n := range d.Tokens {
			sums[i] += int64(n)
		}
	}
	type script struct {
		words  int64
		pieces []int64
	}
	scripts := map[measure.Script]*script{}
	wordPieces := make([]int64, len(c.vs))
	var whole []WordRow
	for k, n := range c.words {
		text := []byte(k.word)
		if k.spaced {
			text = append([]byte{' '}, text...)
		}
		ps := make([]int, len(c.vs))
		for i, v := range c.vs {
			ps[i] = v.Enc.Count(text)
			wordPieces[i] += n * int64(ps[i])
		}
		sc := measure.WordScript([]byte(k.word))
		s := scripts[sc]
		if s == nil {
			s = &script{pieces: make([]int64, len(c.vs))}
			scripts[sc] = s
		}
		s.words += n
		for i := range ps {
			s.pieces[i] += n * int64(ps[i])
		}
		lo, hi := ps[0], ps[0]
		for _, p := range ps {
			lo, hi = min(lo, p), max(hi, p)
		}
		if lo == 1 && hi > 1 {
			whole = append(whole, WordRow{Word: k.word, Spaced: k.spaced, Count: n, Pieces: ps})
		}
	}
	for i, v := range c.vs {
		r.Totals = append(r.Totals, Total{Vocabulary: v.Name, Tokens: sums[i],
			BytesPerToken: round2(ratio(float64(r.Bytes), float64(sums[i]))),
			TokensPerWord: round2(ratio(float64(wordPieces[i]), float64(r.Words)))})
	}
	r.Scripts = []ScriptRow{}
	for sc := measure.Script(0); sc <= measure.OtherScript; sc++ {
		s := scripts[sc]
		if s == nil {
			continue
		}
		row := ScriptRow{Script: sc.String(), Words: s.words}
		for i := range c.vs {
			row.TokensPerWord = append(row.TokensPerWord, round2(ratio(float64(s.pieces[i]), float64(s.words))))
		}
		r.Scripts = append(r.Scripts, row)
	}
	apart := append([]Doc(nil), r.Documents...)
	sort.SliceStable(apart, func(i, j int) bool { return apart[i].Spread > apart[j].Spread })
	r.MostApart = apart[:min(c.top, len(apart))]
	sort.Slice(whole, func(i, j int) bool {
		if whole[i].Count != whole[j].Count {
			return whole[i].Count > whole[j].Count
		}
		return whole[i].Word < whole[j].Word
	})
	whole = whole[:min(c.top, len(whole))]
	for k := range whole {
		w := &whole[k]
		text := []byte(w.Word)
		if w.Spaced {
			text = append([]byte{' '}, text...)
		}
		for _, v := range c.vs {
			w.Split = append(w.Split, pieces(v.Enc, text))
		}
	}
	r.WholeSplit = whole
	if r.WholeSplit == nil {
		r.WholeSplit = []WordRow{}
	}
	return r
}

// pieces returns the tokens of text under e, each in its readable form,
// joined by "·".
func pieces(e *bpe.Encoder, text []byte) string {
	var out []string
	for _, id := range e.Encode(text) {
		t, _ := e.Vocab().Token(id)
		out = append(out, render.Readable(t))
	}
	return strings.Join(out, "·")
}

func ratio(a, b float64) float64 {
	if b == 0 {
		return 0
	}
	return a / b
}

func round2(x float64) float64 { return float64(int64(x*100+0.5)) / 100 }
