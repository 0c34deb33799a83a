package fragments

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"sync"
	"sync/atomic"
	"unicode/utf8"

	"github.com/rivo/uniseg"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report/fragments/internal/tally"
	"morsel/report/measure"
	"morsel/report/walk"
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

// DocWords is what scanning one document found: its tokens and the
// fertility of its words. Its words themselves go into the fragmenter's
// tallies as the scan finds them.
type DocWords struct {
	Tokens   int
	Bytes    int
	All      ScriptTally
	ByScript [measure.NumScripts]ScriptTally
	terms    []termTally // one per glossary term, or nil
}

type termTally struct {
	count, pieces int
}

// Fragmenter scans documents for words that split into many pieces and
// folds the results into a Report report. Scan is safe for concurrent
// use; Add and Finish are called from one goroutine, Finish after every
// Scan has returned.
type Fragmenter struct {
	enc     *bpe.Encoder
	terms   []Term
	byFirst map[string][]int // a term's first segment -> terms starting with it
	info    []uint16         // every token's tokenInfo, its length among it

	mu     sync.Mutex
	shards []*shard    // every shard made, for Finish
	free   chan *shard // shards not in use

	wmu          sync.RWMutex   // flushes hold it shared; the move to the summary alone
	words        *tally.Tables  // the words, exactly, while they fit the bound
	summary      *tally.Summary // the words once the tables passed the bound
	bound        int64          // the tables' bound in bytes, 0 for none
	distinctSeen int            // distinct words when the tables gave way

	partMu      sync.Mutex   // held by the one large document being flushed in parts
	stamps      uint32       // the stamps given to such documents, under partMu
	failedWords atomic.Int64 // words of documents that failed after a part was flushed

	docs     DocList
	totals   Totals
	all      ScriptTally
	byScript [measure.NumScripts]ScriptTally
	termAgg  []termAgg
}

// shard is one worker's reusable memory, with the words of the last
// documents it scanned. A document is scanned by one shard, so the
// documents a word occurs in add up exactly when the shards flush their
// batches into the word tables.
type shard struct {
	local   *tally.Batch // the words of the last documents scanned, not yet in f.words
	doc     int32        // documents this shard has scanned
	ids     []uint32
	ends    []int
	spelled []byte // the text the tokens spell, when a bundle changed it
	pending []pendingTerm
}

type termAgg struct {
	count, pieces int64
	docs          int
}

type pendingTerm struct{ term, start, end int }

// NewFragmenter returns a fragmenter that encodes with enc and looks for
// the glossary terms (none when terms is nil).
func NewFragmenter(enc *bpe.Encoder, terms []Term) *Fragmenter {
	f := &Fragmenter{enc: enc, terms: terms, free: make(chan *shard, 256), words: &tally.Tables{}}
	f.info = tokenTables(enc.Vocab())
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

// tables holds each vocabulary's tokenInfo table, made once (the fuzz
// tests make a fragmenter for every input they try) and kept with the
// vocabulary for the life of the process: a run uses one.
var tables sync.Map // *bpe.Vocab -> []uint16

// tokenTables returns the tokenInfo of every token of v. The slice is
// shared; nothing writes it.
func tokenTables(v *bpe.Vocab) []uint16 {
	if t, ok := tables.Load(v); ok {
		return t.([]uint16)
	}
	info := make([]uint16, v.Size())
	for id := range info {
		tok, _ := v.Token(id)
		info[id] = tokenInfo(tok)
	}
	t, _ := tables.LoadOrStore(v, info)
	return t.([]uint16)
}

func (f *Fragmenter) getShard() *shard {
	select {
	case sh := <-f.free:
		return sh
	default:
	}
	sh := &shard{local: tally.NewBatch(len(f.info))}
	f.mu.Lock()
	f.shards = append(f.shards, sh)
	f.mu.Unlock()
	return sh
}

func (f *Fragmenter) putShard(sh *shard) {
	select {
	case f.free <- sh:
	default: // kept in f.shards all the same
	}
}

// Scan reads a document's text (closing its Stream when it has one) and
// returns its words. It fails when the text cannot be read or its tokens
// do not spell it back. A Stream is scanned in windows of scanWindow bytes
// or so, cut where neither a token nor a word can cross (see
// bpe.Encoder.Windows), so that a document of gigabytes is never held
// whole; with a glossary, whose terms cross white space, it is read whole.
func (f *Fragmenter) Scan(d *corpus.Document) (*DocWords, error) {
	if d.Stream == nil || f.terms != nil {
		text, err := walk.Text(d)
		if err != nil {
			return nil, err
		}
		return f.ScanText(text)
	}
	defer d.Stream.Close()
	return f.scanLarge(d.Stream)
}

// scanLarge scans one large document from r in windows, into a batch of
// its own. The batch is flushed when the document has been read to its
// end, so that one that fails part way (a read error, past
// --max-document) has tallied nothing; but a document whose own words
// outgrow partBytes is flushed in parts as it is read, so that its
// distinct words never wait whole in memory, and if it then fails, the
// words of its flushed parts stay counted and the report says how many.
func (f *Fragmenter) scanLarge(r io.Reader) (*DocWords, error) {
	sh := f.getShard()
	defer f.putShard(sh)
	kept := sh.local
	sh.local = tally.NewBatch(len(f.info))
	defer func() { sh.local = kept }()
	dw := &DocWords{}
	var fc fertility
	var parts inParts
	defer parts.end(f)
	sh.doc++ // one document for the batch, whatever its windows
	_, err := f.enc.Windows(r, scanWindow, func(w []byte, _ bool) error {
		if len(w) > math.MaxInt32 {
			return fmt.Errorf("a %d-byte stretch without white space is more than fragments handles in one piece (2 GiB)", len(w))
		}
		if err := f.scanWindow(sh, dw, w, &fc); err != nil {
			return err
		}
		if sh.local.Bytes() > f.partBytes() {
			parts.flush(f, sh.local, fc.total())
		}
		return nil
	})
	if err != nil {
		f.failedWords.Add(parts.words)
		return nil, err
	}
	f.flush(sh.local)
	f.finishDoc(sh, dw, &fc)
	return dw, nil
}

// scanWindow is how much of a large document Scan tokenizes at a time:
// small enough that a window's new words, which its batch holds until the
// window ends, add little to partBytes.
var scanWindow = 1 << 20 // a variable, so that a test can cut a small text into many windows

// largeText is the size above which ScanText reads a text in windows, as
// it does a Stream, into a batch of its own.
const largeText = 8 << 20

// ScanText scans one text: it tallies its words and returns its fertility.
// It fails, having tallied nothing, when the encoder's tokens do not spell
// the text back.
func (f *Fragmenter) ScanText(text []byte) (*DocWords, error) {
	if len(text) > math.MaxInt32 {
		return nil, fmt.Errorf("a %d-byte document is more than fragments handles in one piece (2 GiB); split it first (morsel ration)", len(text))
	}
	if len(text) > largeText && f.terms == nil {
		return f.scanLarge(bytes.NewReader(text))
	}
	sh := f.getShard()
	defer f.putShard(sh)
	dw := &DocWords{}
	var fc fertility
	sh.doc++
	if err := f.scanWindow(sh, dw, text, &fc); err != nil {
		return nil, err
	}
	f.finishDoc(sh, dw, &fc)
	return dw, nil
}

// scanWindow tallies the words of text, the whole of a document or one of
// its windows, under the shard's current document number, and adds its
// bytes, tokens and fertility to dw and fc.
func (f *Fragmenter) scanWindow(sh *shard, dw *DocWords, text []byte, fc *fertility) error {
	dw.Bytes += len(text)
	if cap(sh.ids) < len(text)/2 {
		sh.ids = make([]uint32, 0, len(text)/2+64) // most texts are fewer tokens than that: no growing
	}
	ids := f.enc.AppendIDs(sh.ids[:0], text)
	sh.ids = ids
	// Glossary matches are settled by the tokens' end offsets, which only
	// they need.
	pos, ends := 0, sh.ends[:0]
	for _, id := range ids {
		if uint(id) >= uint(len(f.info)) {
			return fmt.Errorf("the encoder gave id %d, which is not in the vocabulary", id)
		}
		pos += f.tokenLen(id)
		if f.terms != nil {
			ends = append(ends, pos)
		}
	}
	sh.ends = ends
	if pos != len(text) {
		// A tokenizer bundle's normalizer or pre-tokenizer changed the text
		// (a marker put before it, a normalization form): the words are
		// read from the text the tokens spell, which is what they split.
		sp := sh.spelled[:0]
		for _, id := range ids {
			t, _ := f.enc.Vocab().Token(int(id))
			sp = append(sp, t...)
		}
		if len(sp) != pos {
			return fmt.Errorf("the tokens spell %d bytes of a %d-byte text", pos, len(text))
		}
		sh.spelled, text = sp, sp
	}
	if f.terms != nil {
		dw.terms = make([]termTally, len(f.terms))
		sh.pending = sh.pending[:0]
	}
	dw.Tokens += len(ids)
	if f.terms != nil {
		kEnd := 0
		if len(ids) > 0 {
			kEnd = f.tokenLen(ids[0])
		}
		f.scanBytes(sh, dw, text, 0, len(text), 0, kEnd, fc)
		f.termsAt(sh, dw, text, len(text), nil)
	} else {
		f.scanTokens(sh, text, fc)
	}
	return nil
}

// finishDoc ends a document's scan: the batch is flushed when full (only
// between documents), and the fertility goes to dw.
func (f *Fragmenter) finishDoc(sh *shard, dw *DocWords, fc *fertility) {
	if sh.local.Full() {
		f.flush(sh.local)
	}
	for i := range dw.ByScript {
		t := ScriptTally{Words: fc.words[i], Tokens: fc.pieces[i], OneToken: fc.one[i]}
		dw.ByScript[i] = t
		dw.All.add(t)
	}
}

// fertility counts a document's words and their pieces by script.
type fertility struct {
	words, pieces, one [measure.NumScripts]int64
}

// total returns the words counted.
func (fc *fertility) total() int64 {
	var n int64
	for _, w := range fc.words {
		n += w
	}
	return n
}

func (fc *fertility) add(sc measure.Script, n int) {
	fc.words[sc]++
	fc.pieces[sc] += int64(n)
	if n == 1 {
		fc.one[sc]++
	}
}

// scanBytes tallies the words of text[lo:hi] segment by segment, by the
// rules of UAX #29. Its tokens start at sh.ids[k], which ends at kEnd. lo
// is a word boundary, and hi is one too or the end of the text.
func (f *Fragmenter) scanBytes(sh *shard, dw *DocWords, text []byte, lo, hi, k, kEnd int, fc *fertility) {
	ids := sh.ids
	// k is the first token that ends after the current segment starts, at
	// kEnd.
	for s := lo; s < hi; {
		var e int
		var sc measure.Script
		if c := text[s]; c < utf8.RuneSelf && measure.ASCIIWordBreak[c] == measure.WBAlnum {
			// The common case, a word of ASCII letters and digits.
			var top byte
			e = s
			for ; e < len(text); e++ {
				d := text[e]
				if d >= utf8.RuneSelf || measure.ASCIIWordBreak[d] != measure.WBAlnum {
					break
				}
				top = max(top, d)
			}
			if !measure.AlnumRunEnds(text, e) {
				e = measure.NextSegment(text, s)
				sc = measure.WordScript(text[s:e])
			} else if top > '9' {
				sc = measure.Latin
			} else {
				sc = measure.Digits
			}
			if f.terms != nil {
				f.termsAt(sh, dw, text, s, text[s:e])
			}
		} else if c < utf8.RuneSelf && measure.ASCIIGap[c] && f.terms == nil && (s+1 == len(text) || text[s+1] < utf8.RuneSelf) {
			// A run of ASCII characters that are not letters, digits or
			// '_' holds no word while the text stays ASCII: each is a
			// segment of its own, or joins its like (spaces, CR LF). The
			// last one before other text is left to nextSegment, since an
			// Extend or Format character may join it.
			e = s + 1
			for e < len(text) && text[e] < utf8.RuneSelf && measure.ASCIIGap[text[e]] {
				e++
			}
			if e < len(text) && text[e] >= utf8.RuneSelf {
				e--
			}
			s = e
			continue
		} else {
			e = measure.NextSegment(text, s)
			seg := text[s:e]
			if f.terms != nil {
				f.termsAt(sh, dw, text, s, seg)
			}
			if !measure.HasWordChar(seg) {
				s = e
				continue
			}
			sc = measure.WordScript(seg)
		}
		for kEnd <= s {
			k++
			kEnd += f.tokenLen(ids[k])
		}
		m, mEnd := k, kEnd
		for mEnd < e {
			m++
			mEnd += f.tokenLen(ids[m])
		}
		fc.add(sc, m+1-k)
		sh.local.Add(text[s:e], ids[k:m+1], sh.doc)
		s = e
	}
}

// scanTokens tallies the words of sh's text token by token where it can:
// a word of ASCII letters and digits is a run of tokens of them (the
// first may start with one gap character, such as GPT-2's leading space),
// perhaps joined by a MidX token between two letters or two digits, and
// its pieces are those tokens. What else the text holds (non-ASCII, '_', the MidX characters of
// WB6, WB7, WB11 and WB12) goes to scanBytes, in regions cut where no word
// can cross: before a gap character (ASCII punctuation, space or control,
// MidX aside) that follows an ASCII one. No rule of UAX #29 joins such a
// character to a word: WB4 needs an Extend or Format character after it,
// WB7b and WB7c a Hebrew letter before '"'.
func (f *Fragmenter) scanTokens(sh *shard, text []byte, fc *fertility) {
	ids, info := sh.ids, f.info
	pos := 0
	ws, wk, wkEnd := -1, 0, 0 // the word being read starts at ws, in token wk, which ends at wkEnd
	letter := false           // it has a letter
	for k := 0; k < len(ids); {
		in := info[ids[k]]
		n := int(in & infoLen)
		switch in & infoClass {
		case tokAlnum:
			if ws < 0 {
				ws, wk, wkEnd, letter = pos, k, pos+n, false
			}
			letter = letter || in&infoLetter != 0
			pos += n
			k++
			continue
		case tokGapAlnum:
			if ws >= 0 {
				sh.word(text, ws, pos, wk, k, letter, fc)
			}
			ws, wk, wkEnd, letter = pos+1, k, pos+n, in&infoLetter != 0
			pos += n
			k++
			continue
		case tokPunct:
			// A MidX joins only between two letters (WB6, WB7: ": . '")
			// or two digits (WB11, WB12: ", ; . '"), so only a MidX alone,
			// after a word, can join what follows; else it is a gap.
			if ws >= 0 && n == 1 && pos+1 < len(text) {
				if d := text[pos+1]; d < utf8.RuneSelf && measure.ASCIIWordBreak[d] == measure.WBAlnum {
					c, letters := text[pos], text[pos-1] > '9'
					if letters == (d > '9') && (c == '.' || c == '\'' || (c == ':') == letters) {
						pos++
						k++
						continue
					}
				} else if d >= utf8.RuneSelf {
					break // an Extend or Format character may join it (WB4)
				}
			}
			fallthrough
		case tokGap:
			if ws >= 0 {
				sh.word(text, ws, pos, wk, k, letter, fc)
				ws = -1
			}
			pos += n
			k++
			continue
		}
		// A token scanBytes must read: the region starts here, or where
		// the word being read does unless this token can end it.
		end := pos + f.tokenLen(ids[k])
		rs, rk, rkEnd := pos, k, end
		if ws >= 0 {
			if in&infoGapFirst != 0 {
				sh.word(text, ws, pos, wk, k, letter, fc)
			} else {
				rs, rk, rkEnd = ws, wk, wkEnd
			}
			ws = -1
		}
		pos = end
		for k++; k < len(ids); k++ {
			in := info[ids[k]]
			if in&infoGapFirst != 0 && info[ids[k-1]]&infoLastASCII != 0 {
				break
			}
			pos += f.tokenLen(ids[k])
		}
		f.scanBytes(sh, nil, text, rs, pos, rk, rkEnd, fc)
	}
	if ws >= 0 {
		sh.word(text, ws, pos, wk, len(ids), letter, fc)
	}
}

// word tallies the word text[ws:we], a word scanTokens read, of the
// tokens sh.ids[wk:k]; letter tells it holds a letter.
func (sh *shard) word(text []byte, ws, we, wk, k int, letter bool, fc *fertility) {
	sc := measure.Digits
	if letter {
		sc = measure.Latin
	}
	fc.add(sc, k-wk)
	if k-wk == 1 {
		// A word that is one token is found by the token.
		sh.local.AddToken(text[ws:we], sh.ids[wk], sh.doc)
		return
	}
	sh.local.Add(text[ws:we], sh.ids[wk:k], sh.doc)
}

// Token classes, for scanTokens: bits of Fragmenter.info, which holds 16
// bits a token, so that the table of them (100 kB for GPT-2) stays in the
// processor's cache beside the encoder's.
const (
	tokOther    = iota << 10
	tokAlnum    // ASCII letters and digits only
	tokGapAlnum // a gap character, then ASCII letters and digits
	tokGap      // gap characters only
	tokPunct    // gap characters and MidX characters, at least one of these
)

const (
	infoLen       = 1<<10 - 1 // the token's length in bytes, or 0 for one this long or longer (a tokOther)
	infoClass     = 7 << 10
	infoLetter    = 1 << 13 // its letters and digits hold a letter
	infoGapFirst  = 1 << 14 // it starts with a gap character
	infoLastASCII = 1 << 15 // its last byte is ASCII
)

// isGap reports whether c is a gap character: ASCII, and neither a letter,
// a digit, '_' nor a MidX.
func isGap(c byte) bool {
	if c >= utf8.RuneSelf {
		return false
	}
	switch measure.ASCIIWordBreak[c] {
	case measure.WBOther, measure.WBSpace, measure.WBCR, measure.WBNewline:
		return true
	}
	return false
}

// tokenInfo returns the Fragmenter.info of a token of bytes tok.
func tokenInfo(tok []byte) uint16 {
	var in uint16
	if len(tok) == 0 {
		return in
	}
	if isGap(tok[0]) {
		in |= infoGapFirst
	}
	if tok[len(tok)-1] < utf8.RuneSelf {
		in |= infoLastASCII
	}
	if len(tok) >= infoLen {
		return in
	}
	in |= uint16(len(tok))
	isMid := func(c byte) bool { return c < utf8.RuneSelf && measure.ASCIIWordBreak[c] == measure.WBMid }
	g, mid := 0, false
	for g < len(tok) && (isGap(tok[g]) || isMid(tok[g])) {
		mid = mid || isMid(tok[g])
		g++
	}
	switch {
	case g == len(tok) && mid:
		return in | tokPunct
	case g == len(tok):
		return in | tokGap
	case mid:
		return in
	}
	letter := false
	for _, c := range tok[g:] {
		if c >= utf8.RuneSelf || measure.ASCIIWordBreak[c] != measure.WBAlnum {
			return in
		}
		letter = letter || c > '9'
	}
	if letter {
		in |= infoLetter
	}
	switch g {
	case 0:
		return in | tokAlnum
	case 1:
		return in | tokGapAlnum
	}
	return in
}

// tokenLen returns the length in bytes of token id, which is in the
// vocabulary.
func (f *Fragmenter) tokenLen(id uint32) int {
	if n := int(f.info[id] & infoLen); n != 0 {
		return n
	}
	tok, _ := f.enc.Vocab().Token(int(id))
	return len(tok)
}

// termsAt settles the glossary matches waiting for a word boundary at b,
// then starts those that begin with seg at b.
func (f *Fragmenter) termsAt(sc *shard, dw *DocWords, text []byte, b int, seg []byte) {
	ends := sc.ends
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
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes   string  `json:"source_bytes,omitempty"`
	Record        int     `json:"record"`
	Tokens        int     `json:"tokens"`
	Words         int64   `json:"words"`
	WordTokens    int64   `json:"word_tokens"`
	Fertility     float64 `json:"fertility"` // word_tokens / words
	OneTokenShare float64 `json:"one_token_share"`
}

// AddWords folds the scan of the document at source and record.
func (f *Fragmenter) AddWords(source string, record int, dw *DocWords) {
	f.totals.Documents++
	f.totals.Tokens += int64(dw.Tokens)
	f.totals.Bytes += int64(dw.Bytes)
	f.all.add(dw.All)
	for i := range dw.ByScript {
		f.byScript[i].add(dw.ByScript[i])
	}
	f.docs.add(source, record, dw.Tokens, dw.All)
	for i, t := range dw.terms {
		if t.count > 0 {
			a := &f.termAgg[i]
			a.count += int64(t.count)
			a.pieces += int64(t.pieces)
			a.docs++
		}
	}
}

// tables flushes every shard's batch and returns the word tables, which
// then hold every word scanned. What they hold, the splits kept of a word
// with more than tally.MaxSplits included (see the tally package's
// invariants), does not depend on which shard scanned which document, so
// neither does the report.
func (f *Fragmenter) tables() *tally.Tables {
	f.mu.Lock()
	defer f.mu.Unlock()
	for _, sh := range f.shards {
		f.flush(sh.local)
	}
	return f.words
}

// betterSplit reports whether a is the more common split, the one of fewer
// pieces on a tie, or the one with the smaller ids on a tie again.
func betterSplit(a, b tally.Split) bool {
	if a.Count != b.Count {
		return a.Count > b.Count
	}
	if len(a.IDs) != len(b.IDs) {
		return len(a.IDs) < len(b.IDs)
	}
	return slices.Compare(a.IDs, b.IDs) < 0
}

func round4(x float64) float64 { return float64(int64(x*10000+0.5)) / 10000 }
