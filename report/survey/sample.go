package survey

import (
	"fmt"
	"io"
	"strings"
	"sync"
	"unicode/utf8"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report"
	"morsel/report/render"
)

// SampleLimit is how many bytes of the sample document the HTML report
// shows as pieces.
const SampleLimit = 4096

// SampleMinWords is the fewest words a document needs to be chosen as the
// sample by its tokens per word, so that a two-word record does not win.
const SampleMinWords = 20

// Sample is the start of one document with its tokens, for the HTML
// report's view of where the text breaks.
type Sample struct {
	Source string
	Record int
	// Text is the first SampleLimit bytes of the document or less, cut at
	// a character boundary.
	Text []byte
	// Cut says the document goes on past Text.
	Cut bool
	// Weight is what the whole document weighs.
	Weight Weight
	// Pieces are the tokens of Text, in order, covering it without gaps.
	Pieces []Piece
	// Why says how the sample was chosen.
	Why string
}

// Piece is one token of a sample: its id and its bytes Text[Start:End].
type Piece struct {
	ID         int
	Start, End int
}

// Sampler keeps the start of one document while a walk runs: the one the
// user named, or else the one with the most tokens per word. Its Weigh
// method stands in for Weigh as a walk's work function and is safe to call
// from many workers at once.
type Sampler struct {
	enc  *bpe.Encoder
	want string // source or source:record; "" picks by tokens per word

	mu    sync.Mutex
	best  *Sample
	score float64
}

// NewSampler returns a sampler that encodes with enc. want names the
// document to keep as Where prints it (source, or source:record); an empty
// want keeps the document with the most tokens per word among those with at
// least SampleMinWords words, or among all when none has that many.
func NewSampler(enc *bpe.Encoder, want string) *Sampler {
	return &Sampler{enc: enc, want: want}
}

// Weigh weighs d as Weigh does and keeps the start of its text when d is
// the best sample so far.
func (sp *Sampler) Weigh(d *corpus.Document) (Weight, error) {
	head := &headBuffer{}
	if d.Stream != nil {
		d.Stream = teeCloser{io.TeeReader(d.Stream, head), d.Stream}
	} else {
		head.b = d.Text[:min(len(d.Text), SampleLimit)] // copied only if kept
	}
	w, err := Weigh(sp.enc, d)
	if err == nil {
		sp.offer(w, head)
	}
	return w, err
}

func (sp *Sampler) offer(w Weight, head *headBuffer) {
	var score float64
	switch {
	case sp.want != "":
		if report.Where(w.Source, w.Record) != sp.want && w.Source != sp.want {
			return
		}
		score = 1
	default:
		score = report.Per(float64(w.Tokens), float64(w.WCWords))
		if w.WCWords < SampleMinWords {
			score -= 1e12 // below every document with enough words
		}
	}
	sp.mu.Lock()
	defer sp.mu.Unlock()
	// Ties go to the document earlier in the walk, whatever order the
	// workers finish in.
	if sp.best != nil && (score < sp.score || score == sp.score && !before(w, sp.best.Weight)) {
		return
	}
	text := append([]byte(nil), cutUTF8(head.b)...)
	sp.best = &Sample{Source: w.Source, Record: w.Record, Text: text, Cut: int64(len(text)) < w.Bytes, Weight: w}
	sp.score = score
}

// before reports whether a comes before b in walk order. Sources are walked
// in name order, records in file order.
func before(a, b Weight) bool {
	if a.Source != b.Source {
		return a.Source < b.Source
	}
	return a.Record < b.Record
}

// Sample returns the kept document with its pieces, or nil when none was
// kept (no document was weighed, or none matched the name).
func (sp *Sampler) Sample() (*Sample, error) {
	sp.mu.Lock()
	defer sp.mu.Unlock()
	s := sp.best
	if s == nil {
		return nil, nil
	}
	if s.Pieces == nil {
		p, err := PiecesOf(sp.enc, s.Text)
		if err != nil {
			return nil, fmt.Errorf("sample %s: %w", report.Where(s.Source, s.Record), err)
		}
		s.Pieces = p
		if sp.want != "" {
			s.Why = "named with --sample"
		} else {
			s.Why = fmt.Sprintf("the most tokens per wc -w word (%s) of the documents with at least %d words", render.Ratio(float64(s.Weight.Tokens), float64(s.Weight.WCWords)), SampleMinWords)
			if s.Weight.WCWords < SampleMinWords {
				s.Why = fmt.Sprintf("the most tokens per wc -w word (%s); no document has %d words", render.Ratio(float64(s.Weight.Tokens), float64(s.Weight.WCWords)), SampleMinWords)
			}
		}
	}
	return s, nil
}

// PiecesOf encodes text and returns its tokens with their byte spans
// (bpe.Encoder.Pieces). It fails when the spans do not cover text in
// order, which no vocabulary does.
func PiecesOf(enc *bpe.Encoder, text []byte) ([]Piece, error) {
	var out []Piece
	at := 0
	var bad error
	enc.Pieces(text, func(id, start, end int) {
		if bad == nil && (start != at || end < start || end > len(text)) {
			bad = fmt.Errorf("token %d spans bytes %d to %d, after byte %d", id, start, end, at)
		}
		out = append(out, Piece{ID: id, Start: start, End: end})
		at = max(at, end)
	})
	if bad != nil {
		return nil, bad
	}
	if at != len(text) {
		return nil, fmt.Errorf("tokens cover %d of %d bytes", at, len(text))
	}
	return out, nil
}

// headBuffer keeps the first SampleLimit bytes written to it.
type headBuffer struct{ b []byte }

func (h *headBuffer) Write(p []byte) (int, error) {
	if room := SampleLimit - len(h.b); room > 0 {
		h.b = append(h.b, p[:min(room, len(p))]...)
	}
	return len(p), nil
}

// cutUTF8 drops a character cut short at the end of b.
func cutUTF8(b []byte) []byte {
	for k := 1; k <= utf8.UTFMax && k <= len(b); k++ {
		c := b[len(b)-k]
		if c&0xC0 == 0x80 {
			continue
		}
		if c >= 0x80 && !utf8.FullRune(b[len(b)-k:]) {
			return b[:len(b)-k]
		}
		break
	}
	return b
}

type teeCloser struct {
	io.Reader
	io.Closer
}

// sampleViewOf cuts a sample into shaded runs. A run ends where a token
// ends on a character boundary, so the runs are whole UTF-8 text.
func sampleViewOf(s *Sample) *render.SampleView {
	if s == nil {
		return nil
	}
	v := &render.SampleView{Where: report.Where(s.Source, s.Record), Why: s.Why, Cut: s.Cut}
	text := s.Text
	start, first := 0, 0
	counts := map[string]int{}
	for i, p := range s.Pieces {
		if p.End < len(text) && !utf8.RuneStart(text[p.End]) {
			continue
		}
		group := s.Pieces[first : i+1]
		class := render.BytesClass((p.End - start) / len(group))
		u := render.UnitView{Class: "p " + class}
		counts[class] += len(group)
		if len(group) == 1 {
			u.Tip = fmt.Sprintf("token %d · %d byte(s)", p.ID, p.End-p.Start)
		} else {
			ids := make([]string, len(group))
			for k, g := range group {
				ids[k] = fmt.Sprint(g.ID)
			}
			u.Class += " multi"
			u.Tip = fmt.Sprintf("%d tokens (%s) · %d byte(s) between them", len(group), strings.Join(ids, ", "), p.End-start)
		}
		u.Parts = render.SplitLines(strings.ToValidUTF8(string(text[start:p.End]), "\uFFFD"))
		v.Units = append(v.Units, u)
		start, first = p.End, i+1
	}
	for _, b := range render.BytesClasses {
		v.Keys = append(v.Keys, render.ShadeKey{Class: b.Class, Label: b.Label, Share: render.Percent(float64(counts[b.Class]), float64(len(s.Pieces)))})
	}
	w := s.Weight
	shown := fmt.Sprintf("%s tokens in the %s byte(s) shown", render.Num(len(s.Pieces)), render.Num(len(text)))
	if s.Cut {
		shown += fmt.Sprintf(" (the first part of %s)", render.Num(w.Bytes))
	}
	v.Summary = fmt.Sprintf("The whole document: %s tokens, %s words (wc -w), %s tokens per wc -w word, %s bytes per token. Here: %s.",
		render.Num(w.Tokens), render.Num(w.WCWords), render.Ratio(float64(w.Tokens), float64(w.WCWords)), render.Ratio(float64(w.Bytes), float64(w.Tokens)), shown)
	return v
}

// Kept returns the weight and the start of the text of the document kept
// so far, or false when none was.
func (sp *Sampler) Kept() (Weight, []byte, bool) {
	sp.mu.Lock()
	defer sp.mu.Unlock()
	if sp.best == nil {
		return Weight{}, nil, false
	}
	return sp.best.Weight, sp.best.Text, true
}

// Offer offers a document weighed elsewhere, such as the one another
// shard's Sampler kept, with the start of its text: the sampler keeps it
// when Weigh would have. The choice does not depend on the order of the
// offers, so samplers of shards merge into the whole run's.
func (sp *Sampler) Offer(w Weight, head []byte) { sp.offer(w, &headBuffer{b: head}) }
