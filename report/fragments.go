package report

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"sort"
	"strings"
	"sync"
	"unicode/utf8"
	"unsafe"

	"github.com/rivo/uniseg"

	"morsel/bpe"
	"morsel/corpus"
)

// How words get their pieces.
//
// Words are the segments of a document's text between Unicode word
// boundaries (UAX #29, as github.com/rivo/uniseg v0.4.7 implements it for
// Unicode 15.0.0) that hold a letter or a decimal digit; runs of spaces and
// punctuation are not words. The document is encoded once, whole, exactly
// as survey counts it, and every token is laid on the bytes it spells. A
// word's pieces are the tokens whose bytes overlap the word's bytes: the
// token that carries its leading space (" fluv") counts, a token of
// punctuation or space alone beside it (" (", ".") does not. A token that
// straddles a word boundary counts as a piece of every word it overlaps:
// in "3's" the token "'s" is a piece of the word "s", and a token that
// spells the end of one CJK character and the start of the next is a piece
// of both. The number "3.5" is one word (WB11, WB12) of three GPT-2 tokens,
// "3", "." and "5", since the GPT-2 rule splits digits from the point.

// Term is one entry of a glossary.
type Term struct {
	Text string // the term as written, trimmed of surrounding white space
	Line int    // its 1-based line in the glossary file
}

// MaxTermBytes is the longest glossary term accepted.
const MaxTermBytes = 200

// ParseGlossary reads a glossary: one term a line, several words allowed,
// lines whose first non-blank character is '#' are comments, blank lines
// are ignored. name is used in errors, which give the line: a term that is
// not UTF-8, holds a control character, is longer than MaxTermBytes, or is
// given twice.
func ParseGlossary(name string, r io.Reader) ([]Term, error) {
	var terms []Term
	seen := map[string]int{}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), 1<<20)
	line := 0
	for sc.Scan() {
		line++
		raw := sc.Bytes()
		if line == 1 {
			raw = trimBOMPrefix(raw)
		}
		if !utf8.Valid(raw) {
			return nil, fmt.Errorf("%s:%d: the line is not valid UTF-8", name, line)
		}
		t := strings.TrimSpace(string(raw))
		if t == "" || t[0] == '#' {
			continue
		}
		for _, r := range t {
			if r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0) {
				return nil, fmt.Errorf("%s:%d: term %q holds the control character U+%04X", name, line, t, r)
			}
		}
		if len(t) > MaxTermBytes {
			return nil, fmt.Errorf("%s:%d: term of %d bytes is longer than %d", name, line, len(t), MaxTermBytes)
		}
		if prev, ok := seen[t]; ok {
			return nil, fmt.Errorf("%s:%d: term %q is already on line %d", name, line, t, prev)
		}
		seen[t] = line
		terms = append(terms, Term{Text: t, Line: line})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s:%d: %w", name, line+1, err)
	}
	return terms, nil
}

func trimBOMPrefix(b []byte) []byte {
	if len(b) >= 3 && b[0] == 0xEF && b[1] == 0xBB && b[2] == 0xBF {
		return b[3:]
	}
	return b
}

// ScriptTally is the fertility of the words of one class, or of all.
type ScriptTally struct {
	Words    int64 `json:"words"`
	Tokens   int64 `json:"tokens"`    // pieces of those words, in context
	OneToken int64 `json:"one_token"` // words that are one token
}

func (t *ScriptTally) add(u ScriptTally) {
	t.Words += u.Words
	t.Tokens += u.Tokens
	t.OneToken += u.OneToken
}

// DocWords is what scanning one document found: its tallies and its
// distinct (word, split) pairs. Scan returns it; Fragmenter.Add folds it.
type DocWords struct {
	Tokens   int
	Bytes    int
	All      ScriptTally
	ByScript [numScripts]ScriptTally
	entries  []docEntry
	terms    []termTally // one per glossary term, or nil
}

// docEntry is one word with one split in one document. key is the word's
// bytes followed by the split's ids, 4 bytes each.
type docEntry struct {
	key     string
	wordLen int
	count   int
}

type termTally struct {
	count, pieces int
}

// Fragmenter scans documents for words that split into many pieces and
// folds the results into a Fragments report. Scan is safe for concurrent
// use; Add and Finish are called from one goroutine.
type Fragmenter struct {
	enc     *bpe.Encoder
	terms   []Term
	byFirst map[string][]int // a term's first segment -> terms starting with it
	pool    sync.Pool

	words    map[string]*wordAgg
	docs     []DocFertility
	skipped  []Skipped
	totals   FragmentTotals
	all      ScriptTally
	byScript [numScripts]ScriptTally
	termAgg  []termAgg
	seq      int
}

type wordAgg struct {
	count, pieces int64
	docs          int
	lastDoc       int
	splits        [maxSplits]splitAgg
}

// maxSplits is how many distinct splits of one word are told apart; the
// occurrences of any further split only count in the sums.
const maxSplits = 4

type splitAgg struct {
	ids   string // 4 bytes an id
	count int64
}

type termAgg struct {
	count, pieces int64
	docs          int
}

// scratch is one worker's reusable memory.
type scratch struct {
	ids     []int
	ends    []int
	key     []byte
	index   map[string]int
	pending []pendingTerm
}

type pendingTerm struct{ term, start, end int }

// NewFragmenter returns a fragmenter that encodes with enc and looks for
// the glossary terms (none when terms is nil).
func NewFragmenter(enc *bpe.Encoder, terms []Term) *Fragmenter {
	f := &Fragmenter{enc: enc, terms: terms, words: map[string]*wordAgg{}, docs: []DocFertility{}, skipped: []Skipped{}}
	f.pool.New = func() any { return &scratch{index: map[string]int{}} }
	if len(terms) > 0 {
		f.byFirst = map[string][]int{}
		for i, t := range terms {
			seg, _, _ := uniseg.FirstWordInString(t.Text, -1)
			f.byFirst[seg] = append(f.byFirst[seg], i)
		}
		f.termAgg = make([]termAgg, len(terms))
	}
	return f
}

// Scan reads a document's text (closing its Stream when it has one) and
// returns its words. It fails when the text cannot be read or its tokens
// do not spell it back.
func (f *Fragmenter) Scan(d *corpus.Document) (*DocWords, error) {
	text, err := Text(d)
	if err != nil {
		return nil, err
	}
	return f.ScanText(text)
}

// ScanText returns the words of one text.
func (f *Fragmenter) ScanText(text []byte) (*DocWords, error) {
	sc := f.pool.Get().(*scratch)
	defer f.pool.Put(sc)
	dw := &DocWords{Bytes: len(text)}
	v := f.enc.Vocab()
	ids, _ := f.enc.EncodeStats(sc.ids[:0], text)
	sc.ids = ids
	ends := sc.ends[:0]
	pos := 0
	for _, id := range ids {
		tok, ok := v.Token(id)
		if !ok {
			return nil, fmt.Errorf("the encoder gave id %d, which is not in the vocabulary", id)
		}
		pos += len(tok)
		ends = append(ends, pos)
	}
	sc.ends = ends
	if pos != len(text) {
		return nil, fmt.Errorf("the tokens spell %d bytes of a %d-byte text", pos, len(text))
	}
	dw.Tokens = len(ids)
	if f.terms != nil {
		dw.terms = make([]termTally, len(f.terms))
		sc.pending = sc.pending[:0]
	}

	clear(sc.index)
	var arena []byte
	k := 0 // the first token that ends after the current segment starts
	rest, state, at := text, -1, 0
	for len(rest) > 0 {
		var seg []byte
		seg, rest, state = uniseg.FirstWord(rest, state)
		s, e := at, at+len(seg)
		at = e
		if f.terms != nil {
			f.termsAt(sc, dw, text, ends, s, seg)
		}
		if !hasWordChar(seg) {
			continue
		}
		for ends[k] <= s {
			k++
		}
		m := k
		for m+1 < len(ends) && ends[m] < e {
			m++
		}
		pieces := m - k + 1
		key := append(sc.key[:0], seg...)
		for _, id := range ids[k : m+1] {
			key = binary.LittleEndian.AppendUint32(key, uint32(id))
		}
		sc.key = key
		if i, ok := sc.index[string(key)]; ok {
			dw.entries[i].count++
		} else {
			start := len(arena)
			if cap(arena)-len(arena) < len(key) {
				// A fresh block: the strings already made keep the old one.
				arena = make([]byte, 0, max(4096, 2*len(key)))
				start = 0
			}
			arena = append(arena, key...)
			ks := unsafe.String(&arena[start], len(key))
			sc.index[ks] = len(dw.entries)
			dw.entries = append(dw.entries, docEntry{key: ks, wordLen: len(seg), count: 1})
		}
		tally := ScriptTally{Words: 1, Tokens: int64(pieces)}
		if pieces == 1 {
			tally.OneToken = 1
		}
		dw.All.add(tally)
		dw.ByScript[WordScript(seg)].add(tally)
	}
	if f.terms != nil {
		f.termsAt(sc, dw, text, ends, len(text), nil)
	}
	clear(sc.index)
	return dw, nil
}

// termsAt settles the glossary matches waiting for a word boundary at b,
// then starts those that begin with seg at b.
func (f *Fragmenter) termsAt(sc *scratch, dw *DocWords, text []byte, ends []int, b int, seg []byte) {
	keep := sc.pending[:0]
	for _, p := range sc.pending {
		switch {
		case p.end == b:
			dw.terms[p.term].count++
			dw.terms[p.term].pieces += overlapping(ends, p.start, p.end)
		case p.end > b:
			keep = append(keep, p)
		}
	}
	sc.pending = keep
	if seg == nil {
		return
	}
	for _, i := range f.byFirst[string(seg)] {
		t := f.terms[i].Text
		if len(text)-b >= len(t) && string(text[b:b+len(t)]) == t {
			sc.pending = append(sc.pending, pendingTerm{term: i, start: b, end: b + len(t)})
		}
	}
}

// overlapping returns the number of tokens, given by their end offsets,
// whose bytes overlap [s, e).
func overlapping(ends []int, s, e int) int {
	k := sort.SearchInts(ends, s+1)
	m := sort.SearchInts(ends, e) // the first token that ends at or after e
	if m >= len(ends) {
		m = len(ends) - 1
	}
	return m - k + 1
}

// DocFertility is the fertility of one document.
type DocFertility struct {
	Source        string  `json:"source"`
	Record        int     `json:"record"`
	Tokens        int     `json:"tokens"`
	Words         int64   `json:"words"`
	WordTokens    int64   `json:"word_tokens"`
	Fertility     float64 `json:"fertility"` // word_tokens / words
	OneTokenShare float64 `json:"one_token_share"`
}

// Add takes one walk item with its scan, or the error scanning it gave.
func (f *Fragmenter) Add(it corpus.Item, dw *DocWords, err error) {
	switch {
	case it.Skip != nil:
		f.skipped = append(f.skipped, SkipOf(it.Skip))
		return
	case err != nil:
		f.skipped = append(f.skipped, FailedDoc(it.Doc, err))
		return
	}
	f.AddWords(it.Doc.Source, it.Doc.Record, dw)
}

// AddWords folds the scan of the document at source and record.
func (f *Fragmenter) AddWords(source string, record int, dw *DocWords) {
	f.seq++
	f.totals.Documents++
	f.totals.Tokens += int64(dw.Tokens)
	f.totals.Bytes += int64(dw.Bytes)
	f.all.add(dw.All)
	for i := range dw.ByScript {
		f.byScript[i].add(dw.ByScript[i])
	}
	f.docs = append(f.docs, DocFertility{Source: source, Record: record, Tokens: dw.Tokens, Words: dw.All.Words,
		WordTokens: dw.All.Tokens, Fertility: round2(ratio(float64(dw.All.Tokens), float64(dw.All.Words))),
		OneTokenShare: round4(ratio(float64(dw.All.OneToken), float64(dw.All.Words)))})
	for _, en := range dw.entries {
		word := en.key[:en.wordLen]
		w := f.words[word]
		if w == nil {
			w = &wordAgg{}
			f.words[strings.Clone(word)] = w
		}
		if w.lastDoc != f.seq {
			w.lastDoc = f.seq
			w.docs++
		}
		n := int64(en.count)
		pieces := int64((len(en.key) - en.wordLen) / 4)
		w.count += n
		w.pieces += n * pieces
		ids := en.key[en.wordLen:]
		for i := range w.splits {
			sp := &w.splits[i]
			if sp.count == 0 {
				sp.ids = strings.Clone(ids)
			}
			if sp.ids == ids {
				sp.count += n
				break
			}
		}
	}
	for i, t := range dw.terms {
		if t.count > 0 {
			a := &f.termAgg[i]
			a.count += int64(t.count)
			a.pieces += int64(t.pieces)
			a.docs++
		}
	}
}

func round4(x float64) float64 { return float64(int64(x*10000+0.5)) / 10000 }

// FragmentOptions choose the words a report lists.
type FragmentOptions struct {
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
	raw        [][]byte
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
	Documents     []DocFertility    `json:"documents"`
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
	spaced       []int
}

// FragmentTotals sums a fragments report.
type FragmentTotals struct {
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
}

// Fragments is the report of morsel fragments.
type Fragments struct {
	Vocabulary bpe.Info        `json:"vocabulary"`
	Options    FragmentOptions `json:"-"`
	Words      []Fragment      `json:"words"`
	Totals     FragmentTotals  `json:"totals"`
	Fertility  Fertility       `json:"fertility"`
	Terms      []TermReport    `json:"terms"`
	Skipped    []Skipped       `json:"skipped"`
	vocab      *bpe.Vocab
}

// Finish ranks the words by excess tokens (then by count, then by word)
// and returns the report.
func (f *Fragmenter) Finish(opt FragmentOptions) *Fragments {
	v := f.enc.Vocab()
	r := &Fragments{vocab: v, Vocabulary: v.Info(), Options: opt, Words: []Fragment{}, Terms: []TermReport{}, Skipped: f.skipped}
	t := f.totals
	t.Words = f.all.Words
	t.DistinctWords = len(f.words)
	for _, k := range f.skipped {
		t.Skipped++
		if k.Failed {
			t.Failed++
		}
	}
	for word, w := range f.words {
		pieces := ratio(float64(w.pieces), float64(w.count))
		if pieces < opt.MinPieces || w.count < opt.MinCount {
			continue
		}
		best := 0
		for i := range w.splits {
			if w.splits[i].count > w.splits[best].count {
				best = i
			}
		}
		fr := Fragment{Word: word, Script: WordScript([]byte(word)).String(), Count: w.count, Documents: w.docs,
			Pieces: round2(pieces), Excess: w.pieces - w.count,
			SplitShare: round4(ratio(float64(w.splits[best].count), float64(w.count)))}
		ids := w.splits[best].ids
		for i := 0; i+4 <= len(ids); i += 4 {
			tok, _ := v.Token(int(binary.LittleEndian.Uint32([]byte(ids[i : i+4]))))
			fr.raw = append(fr.raw, tok)
			fr.Split = append(fr.Split, pieceText(tok))
		}
		r.Words = append(r.Words, fr)
	}
	sort.Slice(r.Words, func(i, j int) bool {
		a, b := r.Words[i], r.Words[j]
		if a.Excess != b.Excess {
			return a.Excess > b.Excess
		}
		if a.Count != b.Count {
			return a.Count > b.Count
		}
		return a.Word < b.Word
	})
	t.Qualifying = len(r.Words)
	if opt.Top > 0 && len(r.Words) > opt.Top {
		r.Words = r.Words[:opt.Top]
	}
	t.Listed = len(r.Words)
	for _, w := range r.Words {
		t.ListedExcess += w.Excess
	}
	t.Saving = round4(ratio(float64(t.ListedExcess), float64(t.Tokens)))

	fe := &r.Fertility
	fe.Words, fe.WordTokens = f.all.Words, f.all.Tokens
	fe.Fertility = round2(ratio(float64(f.all.Tokens), float64(f.all.Words)))
	fe.TokensPerWord = round2(ratio(float64(t.Tokens), float64(f.all.Words)))
	fe.OneTokenShare = round4(ratio(float64(f.all.OneToken), float64(f.all.Words)))
	fe.ByScript = []ScriptFertility{}
	for s := Script(0); s < numScripts; s++ {
		st := f.byScript[s]
		if st.Words == 0 {
			continue
		}
		fe.ByScript = append(fe.ByScript, ScriptFertility{Script: s.String(), ScriptTally: st,
			Fertility:     round2(ratio(float64(st.Tokens), float64(st.Words))),
			OneTokenShare: round4(ratio(float64(st.OneToken), float64(st.Words)))})
	}
	fe.Documents = f.docs

	for i, term := range f.terms {
		alone := f.enc.Encode([]byte(term.Text))
		spaced := f.enc.Encode([]byte(" " + term.Text))
		a := f.termAgg[i]
		tr := TermReport{Term: term.Text, Line: term.Line, PiecesAlone: len(alone), SplitAlone: idsText(v, alone),
			PiecesAfterSpace: len(spaced), SplitAfterSpace: idsText(v, spaced),
			Occurrences: a.count, Documents: a.docs, Excess: a.pieces - a.count,
			CorpusPieces: round2(ratio(float64(a.pieces), float64(a.count))), spaced: spaced}
		tr.Flagged = float64(max(tr.PiecesAlone, tr.PiecesAfterSpace)) >= opt.MinPieces
		if tr.Flagged {
			t.FlaggedTerm++
		}
		r.Terms = append(r.Terms, tr)
	}
	r.Totals = t
	return r
}

// pieceText is a piece as JSON gives it: its text when it is whole UTF-8,
// else its readable form, as morsel pieces does.
func pieceText(tok []byte) string {
	if utf8.Valid(tok) {
		return string(tok)
	}
	return Readable(tok)
}

func idsText(v *bpe.Vocab, ids []int) []string {
	out := make([]string, len(ids))
	for i, id := range ids {
		tok, _ := v.Token(id)
		out[i] = pieceText(tok)
	}
	return out
}

// readableRaw joins the readable forms of pieces with single spaces (a
// space inside a piece shows as "␣", so the joins are unambiguous).
func readableRaw(pieces [][]byte) string {
	parts := make([]string, len(pieces))
	for i, p := range pieces {
		parts[i] = Readable(p)
	}
	return strings.Join(parts, " ")
}

func idsReadable(v *bpe.Vocab, ids []int) string {
	raw := make([][]byte, len(ids))
	for i, id := range ids {
		raw[i], _ = v.Token(id)
	}
	return readableRaw(raw)
}

// Rendering.

// WriteFragments renders r in format f. docRows bounds the documents the
// table view lists by fertility (0 lists them all). The CSV view is the
// word table alone.
func WriteFragments(w io.Writer, f Format, r *Fragments, docRows int) error {
	if f == JSON {
		return WriteJSON(w, r)
	}
	words := fragmentGrid(r, f)
	if f == CSV {
		return words.WriteCSV(w)
	}
	grids := []*Grid{words, savingGrid(r), scriptGrid(r), docFertilityGrid(r, docRows)}
	if len(r.Terms) > 0 {
		grids = append(grids, termGrid(r))
	}
	if len(r.Skipped) > 0 {
		grids = append(grids, SkipGrid(r.Skipped))
	}
	return WriteGrids(w, f, grids...)
}

func fragmentGrid(r *Fragments, f Format) *Grid {
	g := &Grid{Title: fmt.Sprintf("Words ranked by excess tokens (%s of %s shown) under %s",
		Num(r.Totals.Listed), Num(r.Totals.Qualifying), r.Vocabulary.Name),
		Header: []string{"#", "word", "script", "count", "documents", "pieces", "excess", "split"},
		Right:  []int{0, 3, 4, 5, 6}}
	if f == CSV {
		g.Header = []string{"rank", "word", "script", "count", "documents", "pieces", "excess", "split", "split_share"}
	}
	for i, w := range r.Words {
		split := readableRaw(w.raw)
		row := []string{fmt.Sprint(i + 1), w.Word, w.Script, Num(w.Count), Num(w.Documents),
			fmt.Sprintf("%.2f", w.Pieces), Num(w.Excess), split}
		if f == CSV {
			row = []string{fmt.Sprint(i + 1), w.Word, w.Script, fmt.Sprint(w.Count), fmt.Sprint(w.Documents),
				fmt.Sprintf("%.2f", w.Pieces), fmt.Sprint(w.Excess), split, fmt.Sprintf("%.4f", w.SplitShare)}
		}
		g.AddRow(row...)
	}
	if len(r.Words) == 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("no word splits into %g or more pieces at least %d time(s)", r.Options.MinPieces, r.Options.MinCount))
	}
	return g
}

func savingGrid(r *Fragments) *Grid {
	t := r.Totals
	g := &Grid{Title: "Totals", Header: []string{"measure", "value"}, Right: []int{1}}
	g.AddRow("documents", Num(t.Documents))
	g.AddRow("tokens", Num(t.Tokens))
	g.AddRow("words", Num(t.Words))
	g.AddRow("distinct words", Num(t.DistinctWords))
	g.AddRow(fmt.Sprintf("words with %g+ pieces, %d+ times", r.Options.MinPieces, r.Options.MinCount), Num(t.Qualifying))
	g.AddRow("excess tokens of the listed words", Num(t.ListedExcess))
	g.AddRow("saving, at most", Percent(float64(t.ListedExcess), float64(t.Tokens)))
	if len(r.Terms) > 0 {
		g.AddRow("glossary terms flagged", fmt.Sprintf("%s of %s", Num(t.FlaggedTerm), Num(len(r.Terms))))
	}
	g.AddRow("not counted", fmt.Sprintf("%s (%s failed)", Num(t.Skipped), Num(t.Failed)))
	g.Notes = append(g.Notes, "The saving is an upper bound: it assumes each listed word became one token in every context.")
	return g
}

func scriptGrid(r *Fragments) *Grid {
	fe := r.Fertility
	g := &Grid{Title: fmt.Sprintf("Tokens per word by script (all words: %s, one-token words %s)",
		Ratio(float64(fe.WordTokens), float64(fe.Words)), Percent(float64(fe.OneTokenShare), 1)),
		Header: []string{"script", "words", "tokens", "tokens/word", "one-token words"}, Right: []int{1, 2, 3, 4}}
	for _, s := range fe.ByScript {
		g.AddRow(s.Script, Num(s.Words), Num(s.Tokens), Ratio(float64(s.Tokens), float64(s.Words)), Percent(float64(s.OneToken), float64(s.Words)))
	}
	return g
}

func docFertilityGrid(r *Fragments, rows int) *Grid {
	docs := append([]DocFertility(nil), r.Fertility.Documents...)
	sort.SliceStable(docs, func(i, j int) bool { return docs[i].Fertility > docs[j].Fertility })
	g := &Grid{Title: "Documents by tokens per word", Header: []string{"document", "words", "tokens", "tokens/word", "one-token words"}, Right: []int{1, 2, 3, 4}}
	for i, d := range docs {
		if rows > 0 && i == rows {
			g.Notes = append(g.Notes, fmt.Sprintf("... and %s more documents (--doc-rows 0 lists all; --format json gives every one)", Num(len(docs)-rows)))
			break
		}
		g.AddRow(Where(d.Source, d.Record), Num(d.Words), Num(d.WordTokens), Ratio(float64(d.WordTokens), float64(d.Words)), Percent(d.OneTokenShare, 1))
	}
	return g
}

func termGrid(r *Fragments) *Grid {
	g := &Grid{Title: fmt.Sprintf("Glossary terms (%s flagged at %g+ pieces)", Num(r.Totals.FlaggedTerm), r.Options.MinPieces),
		Header: []string{"term", "alone", "after a space", "split after a space", "occurrences", "documents", "excess", ""},
		Right:  []int{1, 2, 4, 5, 6}}
	for _, t := range r.Terms {
		flag := ""
		if t.Flagged {
			flag = "◂ splits"
		}
		g.AddRow(t.Term, Num(t.PiecesAlone), Num(t.PiecesAfterSpace), idsReadable(r.vocab, t.spaced),
			Num(t.Occurrences), Num(t.Documents), Num(t.Excess), flag)
	}
	return g
}
