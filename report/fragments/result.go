package fragments

import (
	"container/heap"
	"sort"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/fragments/internal/tally"
	"morsel/report/measure"
	"morsel/report/render"
)

// Options choose the words a report lists.
type Options struct {
	MinPieces float64 // words whose pieces per occurrence, on average, are at least this
	MinCount  int64   // words that occur at least this often
	Top       int     // at most this many words; 0 lists all that qualify
}

// Fragment is one word that the vocabulary splits.
type Fragment struct {
	Word      string   `json:"word"`
	Script    string   `json:"script"`
	Count     int64    `json:"count"`
	Documents int      `json:"documents"`
	Pieces    float64  `json:"pieces"` // per occurrence, on average over its occurrences
	Excess    int64    `json:"excess"` // count x (pieces - 1): the tokens beyond one per occurrence
	Split     []string `json:"split"`  // the most common split, piece by piece
	// SplitShare is the share of the occurrences that split as Split.
	SplitShare float64 `json:"split_share"`
	// SplitBytes holds the pieces of Split as their own bytes, which Split
	// gives as text (in readable form where a piece is not whole UTF-8).
	SplitBytes [][]byte `json:"-"`
}

// ScriptFertility is the fertility of one script class.
type ScriptFertility struct {
	Script string `json:"script"`
	ScriptTally
	Fertility     float64 `json:"fertility"`
	OneTokenShare float64 `json:"one_token_share"`
}

// Fertility is how many tokens words take, over the corpus, by script and
// by document.
type Fertility struct {
	Words         int64             `json:"words"`
	WordTokens    int64             `json:"word_tokens"` // the words' pieces, in context
	Fertility     float64           `json:"fertility"`   // word_tokens / words
	TokensPerWord float64           `json:"tokens_per_word"`
	OneTokenShare float64           `json:"one_token_share"`
	ByScript      []ScriptFertility `json:"by_script"`
	Documents     DocList           `json:"documents"`
}

// TermReport is how one glossary term fares.
type TermReport struct {
	Term             string   `json:"term"`
	Line             int      `json:"line"`
	PiecesAlone      int      `json:"pieces_alone"`
	SplitAlone       []string `json:"split_alone"`
	PiecesAfterSpace int      `json:"pieces_after_space"`
	SplitAfterSpace  []string `json:"split_after_space"`
	Occurrences      int64    `json:"occurrences"`
	Documents        int      `json:"documents"`
	// CorpusPieces is the pieces per occurrence in the corpus's own
	// context, on average; 0 when it does not occur.
	CorpusPieces float64 `json:"corpus_pieces"`
	Excess       int64   `json:"excess"`  // occurrences' pieces beyond one each
	Flagged      bool    `json:"flagged"` // alone or after a space, at or over the minimum pieces
	// AfterSpaceBytes holds the pieces of SplitAfterSpace as their own bytes.
	AfterSpaceBytes [][]byte `json:"-"`
}

// Totals sums a fragments report.
type Totals struct {
	Documents     int   `json:"documents"`
	Skipped       int   `json:"skipped"`
	Failed        int   `json:"failed"`
	Tokens        int64 `json:"tokens"`
	Bytes         int64 `json:"bytes"`
	Words         int64 `json:"words"`
	DistinctWords int   `json:"distinct_words"`
	Qualifying    int   `json:"qualifying_words"` // words that pass --min-pieces and --min-count
	Listed        int   `json:"listed_words"`
	ListedExcess  int64 `json:"listed_excess"`
	// Saving is ListedExcess as a share of Tokens: the most that adding
	// the listed words to the vocabulary could save. It is an upper bound:
	// a word's leading space and neighbouring merges may not fold into one
	// new token, and a token shared by two words is counted in both.
	Saving      float64 `json:"saving_upper_bound"`
	FlaggedTerm int     `json:"flagged_terms"`
	// FallbackWords counts the words that pass --min-count and that the
	// vocabulary spells in byte-fallback tokens alone, and FallbackListed
	// those of them listed.
	FallbackWords  int `json:"byte_fallback_words"`
	FallbackListed int `json:"listed_byte_fallback_words"`
	// Approximate says the word tables passed --memory and the words were
	// counted from there in Counters Space-Saving counters: a word's count
	// is then at most CountError above its true count, never below it.
	Approximate bool  `json:"approximate,omitempty"`
	Counters    int   `json:"counters,omitempty"`
	CountError  int64 `json:"count_error,omitempty"`
	// FailedWords counts the words of large documents that failed part
	// way (listed in Skipped) after some of their words had been flushed
	// into the word counts, where those stay: a document whose own words
	// outgrow a part of --memory is counted in parts as it is read.
	FailedWords int64 `json:"failed_document_words,omitempty"`
}

// Report is the report of morsel fragments.
type Report struct {
	Vocabulary bpe.Info   `json:"vocabulary"`
	Options    Options    `json:"-"`
	Words      []Fragment `json:"words"`
	// Fallback ranks, as Words are ranked, the words whose every split is
	// byte-fallback tokens only: characters the vocabulary has no token
	// for, spelled a byte at a time. It is empty under a vocabulary
	// without byte fallback.
	Fallback []Fragment `json:"byte_fallback_words"`
	// HasFallback says the vocabulary has byte fallback, so that the
	// views show the Fallback ranking, empty or not.
	HasFallback bool             `json:"-"`
	Totals      Totals           `json:"totals"`
	Fertility   Fertility        `json:"fertility"`
	Terms       []TermReport     `json:"terms"`
	Skipped     []report.Skipped `json:"skipped"`
}

// Finish ranks the words by excess tokens (then by count, then by word)
// and returns the report.
func (f *Fragmenter) Finish(opt Options, skipped []report.Skipped) *Report {
	v := f.enc.Vocab()
	r := &Report{Vocabulary: v.Info(), Options: opt, Words: []Fragment{}, Fallback: []Fragment{}, HasFallback: v.ByteFallback(), Terms: []TermReport{}, Skipped: report.OrNone(skipped)}
	t := f.totals
	t.Words = f.all.Words
	for _, k := range r.Skipped {
		t.Skipped++
		if k.Failed {
			t.Failed++
		}
	}
	t.FailedWords = f.failedWords.Load()
	words, distinct := f.wordSource()
	if f.summary != nil {
		t.Approximate, t.Counters, t.CountError = true, f.summary.Counters(), f.summary.MaxErr()
	}
	// Rank light records first; only the words listed become Report.
	// With --top N, a bounded heap keeps the N best without sorting all.
	top := &rankHeap{limit: opt.Top}
	fallback := &rankHeap{limit: opt.Top}
	t.DistinctWords = distinct
	for w := range words {
		if w.Count() < opt.MinCount {
			continue
		}
		if report.Per(float64(w.Pieces()), float64(w.Count())) >= opt.MinPieces {
			t.Qualifying++
			top.offer(w)
		}
		if r.HasFallback && fallbackOnly(v, w.Splits()) {
			t.FallbackWords++
			fallback.offer(w)
		}
	}
	r.Words = fragmentsOf(v, top.ws)
	r.Fallback = fragmentsOf(v, fallback.ws)
	t.Listed, t.FallbackListed = len(r.Words), len(r.Fallback)
	for _, w := range r.Words {
		t.ListedExcess += w.Excess
	}
	t.Saving = round4(report.Per(float64(t.ListedExcess), float64(t.Tokens)))

	fe := &r.Fertility
	fe.Words, fe.WordTokens = f.all.Words, f.all.Tokens
	fe.Fertility = report.Round2(report.Per(float64(f.all.Tokens), float64(f.all.Words)))
	fe.TokensPerWord = report.Round2(report.Per(float64(t.Tokens), float64(f.all.Words)))
	fe.OneTokenShare = round4(report.Per(float64(f.all.OneToken), float64(f.all.Words)))
	fe.ByScript = []ScriptFertility{}
	for s := measure.Script(0); s < measure.NumScripts; s++ {
		st := f.byScript[s]
		if st.Words == 0 {
			continue
		}
		fe.ByScript = append(fe.ByScript, ScriptFertility{Script: s.String(), ScriptTally: st,
			Fertility:     report.Round2(report.Per(float64(st.Tokens), float64(st.Words))),
			OneTokenShare: round4(report.Per(float64(st.OneToken), float64(st.Words)))})
	}
	fe.Documents = f.docs

	for i, term := range f.terms {
		alone := f.enc.Encode([]byte(term.Text))
		spaced := f.enc.Encode([]byte(" " + term.Text))
		a := f.termAgg[i]
		tr := TermReport{Term: term.Text, Line: term.Line, PiecesAlone: len(alone), SplitAlone: idsText(v, alone),
			PiecesAfterSpace: len(spaced), SplitAfterSpace: idsText(v, spaced),
			Occurrences: a.count, Documents: a.docs, Excess: a.pieces - a.count,
			CorpusPieces: report.Round2(report.Per(float64(a.pieces), float64(a.count))), AfterSpaceBytes: idsBytes(v, spaced)}
		tr.Flagged = float64(max(tr.PiecesAlone, tr.PiecesAfterSpace)) >= opt.MinPieces
		if tr.Flagged {
			t.FlaggedTerm++
		}
		r.Terms = append(r.Terms, tr)
	}
	r.Totals = t
	return r
}

// fragmentsOf returns the words of list, in rank order, as the report
// gives them.
func fragmentsOf(v *bpe.Vocab, list []tally.Word) []Fragment {
	sort.Slice(list, func(i, j int) bool { return before(list[i], list[j]) })
	out := []Fragment{}
	for _, w := range list {
		word := w.Bytes()
		splits := w.Splits()
		best := splits[0]
		for _, sp := range splits[1:] {
			if betterSplit(sp, best) {
				best = sp
			}
		}
		fr := Fragment{Word: string(word), Script: measure.WordScript(word).String(), Count: w.Count(), Documents: int(w.Docs()),
			Pieces: report.Round2(report.Per(float64(w.Pieces()), float64(w.Count()))), Excess: w.Pieces() - w.Count(),
			SplitShare: round4(report.Per(float64(best.Count), float64(w.Count())))}
		for _, id := range best.IDs {
			tok, _ := v.Token(int(id))
			fr.SplitBytes = append(fr.SplitBytes, tok)
			fr.Split = append(fr.Split, render.PieceText(tok))
		}
		out = append(out, fr)
	}
	return out
}

// fallbackOnly reports whether every split kept of a word is byte-fallback
// tokens alone.
func fallbackOnly(v *bpe.Vocab, splits []tally.Split) bool {
	for _, sp := range splits {
		for _, id := range sp.IDs {
			if !v.IsByteFallback(int(id)) {
				return false
			}
		}
	}
	return true
}

// before reports whether wa ranks before wb: more excess tokens, then more
// occurrences, then the word's bytes.
func before(wa, wb tally.Word) bool {
	if ea, eb := wa.Pieces()-wa.Count(), wb.Pieces()-wb.Count(); ea != eb {
		return ea > eb
	}
	if wa.Count() != wb.Count() {
		return wa.Count() > wb.Count()
	}
	return string(wa.Bytes()) < string(wb.Bytes())
}

// rankHeap keeps the limit best words offered (all of them when limit is
// 0): a heap whose root is the worst one kept.
type rankHeap struct {
	ws    []tally.Word
	limit int
}

func (h *rankHeap) Len() int           { return len(h.ws) }
func (h *rankHeap) Less(i, j int) bool { return before(h.ws[j], h.ws[i]) }
func (h *rankHeap) Swap(i, j int)      { h.ws[i], h.ws[j] = h.ws[j], h.ws[i] }
func (h *rankHeap) Push(x any)         { h.ws = append(h.ws, x.(tally.Word)) }
func (h *rankHeap) Pop() any {
	w := h.ws[len(h.ws)-1]
	h.ws = h.ws[:len(h.ws)-1]
	return w
}

func (h *rankHeap) offer(w tally.Word) {
	switch {
	case h.limit <= 0:
		h.ws = append(h.ws, w)
	case len(h.ws) < h.limit:
		heap.Push(h, w)
	case before(w, h.ws[0]):
		h.ws[0] = w
		heap.Fix(h, 0)
	}
}

func idsText(v *bpe.Vocab, ids []int) []string {
	out := make([]string, len(ids))
	for i, id := range ids {
		tok, _ := v.Token(id)
		out[i] = render.PieceText(tok)
	}
	return out
}

// idsBytes returns the tokens of ids as bytes.
func idsBytes(v *bpe.Vocab, ids []int) [][]byte {
	out := make([][]byte, len(ids))
	for i, id := range ids {
		out[i], _ = v.Token(id)
	}
	return out
}
