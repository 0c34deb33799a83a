package fragments

import (
	"container/heap"
	"encoding/binary"
	"fmt"
	"math"
	"slices"
	"sort"
	"sync"
	"unicode/utf8"

	"github.com/rivo/uniseg"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report"
	"morsel/report/measure"
	"morsel/report/render"
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
	parts  [numParts]wordTable

	docs     []DocFertility
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
	local batchTally // the words of the last documents scanned, not yet in a wordTable
	// byToken finds, by token id, the batch entry of the word that token
	// is alone: byTokenTag<<25 | split<<24 | entry+1, good while the tag
	// is the batch's.
	byToken []uint32
	doc     int32 // documents this shard has scanned
	ids     []uint32
	ends    []int
	spelled []byte // the text the tokens spell, when a bundle changed it
	pending []pendingTerm
	// flush's scratch space
	part  []uint8 // the partition of each batch word
	order []int32 // the batch words by partition
	at    []int32 // each batch word's tally in its partition
}

// numParts is the number of word tables. A word belongs to one, chosen by
// its hash, and a worker flushing its batch locks them one by one, so the
// workers seldom wait for each other and every word is tallied once.
const numParts = 16

// partOf returns the partition of a word of hashWord h: bits of the mixed
// hash that neither the batch's index (the low ones) nor the word table's
// (the high 32) uses.
func partOf(h uint64) uint8 { return uint8(mixHash(h)>>24) & (numParts - 1) }

// wordTable holds the tallies of the words of one partition.
type wordTable struct {
	mu      sync.Mutex
	index   wordIndex     // word -> its tally
	chunks  [][]wordTally // the tallies, chunkSize a chunk: they never move, and growing copies nothing
	nwords  int32
	arena   []byte     // the words' bytes
	idArena []uint32   // the splits' ids
	more    []wordMore // the splits of words that split more than one way
	sink    uint64     // what touch read
}

// wordTally is one word's occurrences, in one cache line. It holds no
// pointers (the word and the splits' ids are offsets into its table's
// arenas), so the garbage collector never scans the millions of them a
// large corpus makes.
type wordTally struct {
	prefix        uint64 // the word's first eight bytes, packed: most words are found without reading the arena
	off, n        uint32 // the word is arena[off:off+n]
	count, pieces int64
	docs          int32
	more          int32    // 1 + the index of the word's further splits in more, or 0
	split         splitRef // the first split seen
	_             uint64   // pads the tally to 64 bytes
}

// wordMore holds the second to maxSplits-th splits of a word.
type wordMore struct{ splits [maxSplits - 1]splitRef }

// maxSplits is how many distinct splits of one word a table tells apart;
// the occurrences of any further split count in the word's totals only.
const maxSplits = 4

// splitRef is one way a word splits, seen count times: n ids, which are
// off itself when n is 1 and else idArena[off:off+n]. n is 0 in a split
// not yet used; every split has an id.
type splitRef struct {
	off, n uint32
	count  int64
}

// splitTally is a split with its ids, as the report reads it.
type splitTally struct {
	ids   []uint32
	count int64
}

// chunkBits sets the tallies of a chunk: 4096, 256 kB.
const (
	chunkBits = 12
	chunkSize = 1 << chunkBits
)

// at returns tally i of t.
func (t *wordTable) at(i int32) *wordTally { return &t.chunks[i>>chunkBits][i&(chunkSize-1)] }

func (t *wordTable) word(w *wordTally) []byte { return t.arena[w.off : w.off+w.n] }

// splitIDs returns the ids of split r, in a slice of their own when there
// is one.
func (t *wordTable) splitIDs(r splitRef) []uint32 {
	if r.n == 1 {
		return []uint32{r.off}
	}
	return t.idArena[r.off : r.off+r.n]
}

// splitIs reports whether split r is ids.
func (t *wordTable) splitIs(r splitRef, ids []uint32) bool {
	if int(r.n) != len(ids) {
		return false
	}
	if r.n == 1 {
		return r.off == ids[0]
	}
	return slices.Equal(t.idArena[r.off:r.off+r.n], ids)
}

// newSplit returns a split of ids seen n times.
func (t *wordTable) newSplit(ids []uint32, n int64) splitRef {
	if len(ids) == 1 {
		return splitRef{off: ids[0], n: 1, count: n}
	}
	off := len(t.idArena)
	t.idArena = append(roomFor(t.idArena, len(ids)), ids...)
	return splitRef{off: uint32(off), n: uint32(len(ids)), count: n}
}

type termAgg struct {
	count, pieces int64
	docs          int
}

type pendingTerm struct{ term, start, end int }

// NewFragmenter returns a fragmenter that encodes with enc and looks for
// the glossary terms (none when terms is nil).
func NewFragmenter(enc *bpe.Encoder, terms []Term) *Fragmenter {
	f := &Fragmenter{enc: enc, terms: terms, docs: []DocFertility{}, free: make(chan *shard, 256)}
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
	sh := &shard{}
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
// do not spell it back.
func (f *Fragmenter) Scan(d *corpus.Document) (*DocWords, error) {
	text, err := walk.Text(d)
	if err != nil {
		return nil, err
	}
	return f.ScanText(text)
}

// ScanText scans one text: it tallies its words and returns its fertility.
// It fails, having tallied nothing, when the encoder's tokens do not spell
// the text back.
func (f *Fragmenter) ScanText(text []byte) (*DocWords, error) {
	if len(text) > math.MaxInt32 {
		return nil, fmt.Errorf("a %d-byte document is more than fragments handles in one piece (2 GiB); split it first (morsel ration)", len(text))
	}
	sh := f.getShard()
	defer f.putShard(sh)
	dw := &DocWords{Bytes: len(text)}
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
			return nil, fmt.Errorf("the encoder gave id %d, which is not in the vocabulary", id)
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
			return nil, fmt.Errorf("the tokens spell %d bytes of a %d-byte text", pos, len(text))
		}
		sh.spelled, text = sp, sp
	}
	if f.terms != nil {
		dw.terms = make([]termTally, len(f.terms))
		sh.pending = sh.pending[:0]
	}
	dw.Tokens = len(ids)
	sh.doc++

	var fc fertility
	if f.terms != nil {
		kEnd := 0
		if len(ids) > 0 {
			kEnd = f.tokenLen(ids[0])
		}
		f.scanBytes(sh, dw, text, 0, len(text), 0, kEnd, &fc)
		f.termsAt(sh, dw, text, len(text), nil)
	} else {
		f.scanTokens(sh, text, &fc)
	}
	if sh.local.full() {
		f.flush(sh)
	}
	for i := range dw.ByScript {
		t := ScriptTally{Words: fc.words[i], Tokens: fc.pieces[i], OneToken: fc.one[i]}
		dw.ByScript[i] = t
		dw.All.add(t)
	}
	return dw, nil
}

// fertility counts a document's words and their pieces by script.
type fertility struct {
	words, pieces, one [measure.NumScripts]int64
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
		sh.local.add(text[s:e], hashWord(text[s:e]), ids[k:m+1], sh.doc)
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
	if len(sh.byToken) != len(info) {
		sh.byToken = make([]uint32, len(info))
	}
	if sh.local.epoch == 0 {
		sh.local.epoch = 1
	}
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
	d, ids := &sh.local, sh.ids
	if k-wk == 1 {
		// A word that is one token is found by the token.
		tag := byTokenTag(d.epoch)
		if e := sh.byToken[ids[wk]]; e>>25 == tag {
			d.again(e&(1<<24-1)-1, uint64(e>>24&1), sh.doc)
			return
		}
		if wi, j := d.add(text[ws:we], hashWord(text[ws:we]), ids[wk:k], sh.doc); j >= 0 && wi+1 < 1<<24 {
			sh.byToken[ids[wk]] = tag<<25 | uint32(j)<<24 | (wi + 1)
		}
		return
	}
	d.add(text[ws:we], hashWord(text[ws:we]), ids[wk:k], sh.doc)
}

// byTokenTag returns the tag of shard.byToken entries made in the batch
// of epoch: 1 to 127, which flush reuses after clearing the entries.
func byTokenTag(epoch uint64) uint32 { return uint32(epoch%127) + 1 }

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

// hashWord hashes a word eight bytes at a time.
func hashWord(w []byte) uint64 {
	h := uint64(len(w)) * 0x9E3779B97F4A7C15
	for len(w) >= 8 {
		h = (h ^ binary.LittleEndian.Uint64(w)) * 0xbf58476d1ce4e5b9
		h ^= h >> 31
		w = w[8:]
	}
	if len(w) > 0 {
		h = (h ^ packPrefix(w)) * 0xbf58476d1ce4e5b9
	}
	return h
}

// roomFor returns s with room for n more elements, doubling its capacity
// when it must grow: the word tables reach tens of megabytes, and
// append's gentler growth for large slices would copy them many times.
func roomFor[T any](s []T, n int) []T {
	if len(s)+n <= cap(s) {
		return s
	}
	bigger := make([]T, len(s), max(2*cap(s), len(s)+n, 1024))
	copy(bigger, s)
	return bigger
}

// mixHash spreads a hashWord value over all its bits: the tables use both
// the low ones and the high ones.
func mixHash(h uint64) uint64 {
	h ^= h >> 29
	h *= 0xbf58476d1ce4e5b9
	h ^= h >> 32
	return h
}

// entry returns the number of the tally of word, whose hashWord is h,
// making it when t has none.
func (t *wordTable) entry(word []byte, h uint64) int32 {
	h = mixHash(h)
	i, slot := t.index.find(h, word, t)
	if i < 0 {
		off := len(t.arena)
		t.arena = append(roomFor(t.arena, len(word)), word...)
		i = t.nwords
		t.index.insert(slot, h, i)
		if int(i)>>chunkBits == len(t.chunks) {
			t.chunks = append(t.chunks, make([]wordTally, chunkSize))
		}
		*t.at(i) = wordTally{off: uint32(off), n: uint32(len(word)), prefix: packPrefix(word)}
		t.nwords++
	}
	return i
}

// batchTally counts the words of a run of documents before they go to the
// word tables: documents repeat their words and each other's, and a small
// table that stays in the processor's cache costs less per occurrence than
// the large ones. It holds copies of the words and splits, since the
// documents' text is gone by the time it is flushed. Its entries are kept
// small for the same reason: a word keeps two splits here, and an
// occurrence split a third way waits in spill for the flush.
type batchTally struct {
	index  []uint64 // open addressing: the mixed hash's high 32 bits<<32 | entry index+1; 0 is empty
	words  []batchWord
	hashes []uint64 // hashWord of words[i]
	bytes  []byte   // the words
	ids    []uint32 // the splits
	spill  []batchSpill
	pieces uint64 // the pieces of every occurrence in the batch
	epoch  uint64 // flushes so far, plus one: what shard.byToken entries are good for
}

// batchWords is how many distinct words a batch holds before it is
// flushed to the word tables.
const batchWords = 8192

// batchFull is the pieces a batch holds before it is flushed whatever its
// words: the batch's counters are 32 bits, and one document adds fewer
// than 2^32 - batchFull pieces (it is under 2 GiB).
const batchFull = 1 << 29

// batchWord is a word of a batch, in 64 bytes: one cache line. Its pieces
// are its splits' and its spills'.
type batchWord struct {
	prefix        uint64 // packPrefix of the word
	off, n        uint32 // the word is bytes[off:off+n]
	count         uint32
	docs, lastDoc int32
	splits        [2]batchSplit
	_             uint32
}

// batchSplit is one split of a batch word, seen count times: n ids, which
// are a, or a and b, when n is 1 or 2, and else ids[a:a+n]. n is 0 in a
// split not yet used.
type batchSplit struct{ a, b, n, count uint32 }

// is reports whether sp is the split ids.
func (sp *batchSplit) is(d *batchTally, ids []uint32) bool {
	if int(sp.n) != len(ids) {
		return false
	}
	switch sp.n {
	case 1:
		return ids[0] == sp.a
	case 2:
		return ids[0] == sp.a && ids[1] == sp.b
	}
	return slices.Equal(d.ids[sp.a:sp.a+sp.n], ids)
}

// idsOf returns the ids of sp, in buf when they are inline.
func (d *batchTally) idsOf(sp *batchSplit, buf *[2]uint32) []uint32 {
	if sp.n > 2 {
		return d.ids[sp.a : sp.a+sp.n]
	}
	buf[0], buf[1] = sp.a, sp.b
	return buf[:sp.n]
}

// batchSpill is one occurrence of words[word] split as ids[off:off+n],
// neither of the word's two splits in the batch.
type batchSpill struct{ word, off, n uint32 }

// add counts one occurrence of word, whose hashWord is h, split into ids,
// in the document numbered doc. It returns the word's entry and the split
// it counted, or -1 when the split went to spill.
func (d *batchTally) add(word []byte, h uint64, ids []uint32, doc int32) (uint32, int) {
	if len(d.index) == 0 {
		d.index = make([]uint64, 2*batchWords)
	}
	mask := len(d.index) - 1
	mh := mixHash(h)
	tag := mh >> 32 << 32
	p := int(mh) & mask
	prefix := packPrefix(word)
	var w *batchWord
	var wi uint32
	for {
		x := d.index[p]
		if x == 0 {
			off := len(d.bytes)
			d.bytes = append(d.bytes, word...)
			wi = uint32(len(d.words))
			d.words = append(d.words, batchWord{prefix: prefix, off: uint32(off), n: uint32(len(word))})
			d.hashes = append(d.hashes, h)
			d.index[p] = tag | uint64(wi+1)
			w = &d.words[wi]
			if 2*len(d.words) > len(d.index) {
				d.grow()
			}
			break
		}
		if x&^0xffffffff == tag {
			wi = uint32(x) - 1
			if c := &d.words[wi]; c.prefix == prefix && int(c.n) == len(word) && (len(word) <= 8 || string(d.bytes[c.off:c.off+c.n]) == string(word)) {
				w = c
				break
			}
		}
		p = (p + 1) & mask
	}
	d.occur(w, len(ids), doc)
	j := 0
	for ; j < len(w.splits) && w.splits[j].n != 0; j++ {
		if sp := &w.splits[j]; sp.is(d, ids) {
			sp.count++
			return wi, j
		}
	}
	if j < len(w.splits) {
		sp := batchSplit{n: uint32(len(ids)), count: 1}
		switch len(ids) {
		case 2:
			sp.b = ids[1]
			fallthrough
		case 1:
			sp.a = ids[0]
		default:
			sp.a = uint32(len(d.ids))
			d.ids = append(d.ids, ids...)
		}
		w.splits[j] = sp
		return wi, j
	}
	off := uint32(len(d.ids))
	d.ids = append(d.ids, ids...)
	d.spill = append(d.spill, batchSpill{word: wi, off: off, n: uint32(len(ids))})
	return wi, -1
}

// again counts one more occurrence of words[wi] split as its split j, a
// single token, in the document numbered doc.
func (d *batchTally) again(wi uint32, j uint64, doc int32) {
	w := &d.words[wi]
	d.occur(w, 1, doc)
	w.splits[j].count++
}

// occur counts an occurrence of w, of n pieces, in the document numbered
// doc; its split is the caller's to count.
func (d *batchTally) occur(w *batchWord, n int, doc int32) {
	w.count++
	d.pieces += uint64(n)
	if w.lastDoc != doc {
		w.lastDoc = doc
		w.docs++
	}
}

// full reports whether the batch is due to be flushed.
func (d *batchTally) full() bool { return len(d.words) >= batchWords || d.pieces >= batchFull }

func (d *batchTally) grow() {
	d.index = make([]uint64, 2*len(d.index))
	mask := len(d.index) - 1
	for i, h := range d.hashes {
		mh := mixHash(h)
		p := int(mh) & mask
		for d.index[p] != 0 {
			p = (p + 1) & mask
		}
		d.index[p] = mh>>32<<32 | uint64(i+1)
	}
}

// flush adds the words of sh's batch to the word tables and empties the
// batch. A word's documents add up exactly: a document is scanned within
// one batch.
func (f *Fragmenter) flush(sh *shard) {
	d := &sh.local
	if len(d.words) == 0 {
		return
	}
	// Sort the batch's words by partition, counting.
	var start [numParts + 1]int32
	part := sh.part[:0]
	for _, h := range d.hashes {
		p := partOf(h)
		part = append(part, p)
		start[p+1]++
	}
	for p := 1; p <= numParts; p++ {
		start[p] += start[p-1]
	}
	order := roomFor(sh.order[:0], len(part))[:len(part)]
	at := roomFor(sh.at[:0], len(part))[:len(part)] // each batch word's tally in its table
	next := start
	for i, p := range part {
		order[next[p]] = int32(i)
		next[p]++
	}
	var hashes [flushGroup]uint64
	var buf [2]uint32
	for p := range numParts {
		group := order[start[p]:start[p+1]]
		if len(group) == 0 {
			continue
		}
		t := &f.parts[p]
		t.mu.Lock()
		for g := 0; g < len(group); g += flushGroup {
			ws := group[g:min(g+flushGroup, len(group))]
			for j, i := range ws {
				hashes[j] = d.hashes[i]
			}
			t.touch(hashes[:len(ws)])
			for _, i := range ws {
				lw := &d.words[i]
				wi := t.entry(d.bytes[lw.off:lw.off+lw.n], d.hashes[i])
				at[i] = wi
				w := t.at(wi)
				w.count += int64(lw.count)
				w.docs += lw.docs
				for j := range lw.splits {
					sp := &lw.splits[j]
					if sp.n == 0 {
						break
					}
					w.pieces += int64(sp.count) * int64(sp.n)
					t.addSplit(w, d.idsOf(sp, &buf), int64(sp.count))
				}
			}
		}
		t.mu.Unlock()
	}
	for _, sp := range d.spill {
		t := &f.parts[part[sp.word]]
		t.mu.Lock()
		w := t.at(at[sp.word])
		w.pieces += int64(sp.n)
		t.addSplit(w, d.ids[sp.off:sp.off+sp.n], 1)
		t.mu.Unlock()
	}
	sh.part, sh.order, sh.at = part, order, at
	if len(d.index) > 2*batchWords {
		d.index = make([]uint64, 2*batchWords)
	} else {
		clear(d.index)
	}
	d.words, d.hashes, d.bytes, d.ids, d.spill, d.pieces = d.words[:0], d.hashes[:0], d.bytes[:0], d.ids[:0], d.spill[:0], 0
	d.epoch++
	if byTokenTag(d.epoch) == 1 {
		clear(sh.byToken)
	}
}

// flushGroup is how many words flush looks up at once.
const flushGroup = 16

// touch reads the index slots, the tallies, the first splits' ids and the
// bytes of long words that the words of hashes will be looked up in, so
// that the cache misses overlap instead of coming one after the other.
func (t *wordTable) touch(hashes []uint64) {
	x := &t.index
	if len(x.slots) == 0 {
		return
	}
	var slots [flushGroup]uint64
	for j, h := range hashes {
		slots[j] = x.slots[x.home(mixHash(h))]
	}
	var sum uint64
	var offs, words [flushGroup]uint32
	for j, s := range slots[:len(hashes)] {
		if i := int(s & 0xffffffff); i > 0 {
			w := t.at(int32(i - 1))
			sum += w.prefix
			if w.split.n > 1 {
				offs[j] = w.split.off + 1
			}
			if w.n > 8 {
				words[j] = w.off + 8
			}
		}
	}
	for j, off := range offs[:len(hashes)] {
		if off > 0 && int(off) <= len(t.idArena) {
			sum += uint64(t.idArena[off-1])
		}
		if w := words[j]; w > 0 && int(w) < len(t.arena) {
			sum += uint64(t.arena[w])
		}
	}
	t.sink += sum
}

// addSplit counts n occurrences of w, a tally of t, split as ids.
func (t *wordTable) addSplit(w *wordTally, ids []uint32, n int64) {
	if t.countSplit(&w.split, ids, n) {
		return
	}
	if w.more == 0 {
		t.more = append(t.more, wordMore{})
		w.more = int32(len(t.more))
	}
	m := &t.more[w.more-1]
	for q := range m.splits {
		if t.countSplit(&m.splits[q], ids, n) {
			return
		}
	}
}

// countSplit counts n occurrences split as ids in sp, when sp is that
// split or is not yet used, and reports whether it did.
func (t *wordTable) countSplit(sp *splitRef, ids []uint32, n int64) bool {
	switch {
	case sp.n == 0:
		*sp = t.newSplit(ids, n)
	case t.splitIs(*sp, ids):
		sp.count += n
	default:
		return false
	}
	return true
}

// wordIndex is an open-addressing hash table from a word to its tally:
// cheaper than a map here, since the hash comes from the scan and the
// stored hash is compared before the bytes.
type wordIndex struct {
	slots []uint64 // hash<<32 | tally index+1; 0 is empty
	used  int
}

// home returns the first slot to try for a word of mixed hash h: slots
// are placed by its high 32 bits, the ones a slot keeps.
func (x *wordIndex) home(h uint64) int { return int(h>>32) & (len(x.slots) - 1) }

// find returns the tally index of word, or -1 and the slot to insert it at.
func (x *wordIndex) find(h uint64, word []byte, t *wordTable) (int32, int) {
	if len(x.slots) == 0 {
		x.slots = make([]uint64, 1<<10)
	}
	mask := len(x.slots) - 1
	hi := h >> 32
	prefix := packPrefix(word)
	for p := x.home(h); ; p = (p + 1) & mask {
		s := x.slots[p]
		if s == 0 {
			return -1, p
		}
		if s>>32 == hi {
			i := int32(s&0xffffffff) - 1
			if w := t.at(i); w.prefix == prefix && int(w.n) == len(word) && (len(word) <= 8 || string(t.word(w)) == string(word)) {
				return i, p
			}
		}
	}
}

// packPrefix packs the first eight bytes of word (fewer when it is
// shorter; the length tells them apart).
func packPrefix(word []byte) uint64 {
	n := len(word)
	switch {
	case n >= 8:
		return binary.LittleEndian.Uint64(word)
	case n >= 4:
		// Two loads that overlap where n < 8: the bytes they share are
		// the same, so or-ing them is exact.
		lo := uint64(binary.LittleEndian.Uint32(word))
		hi := uint64(binary.LittleEndian.Uint32(word[n-4:]))
		return lo | hi<<(8*(n-4))
	case n > 0:
		return uint64(word[0]) | uint64(word[n>>1])<<(8*(n>>1)) | uint64(word[n-1])<<(8*(n-1))
	}
	return 0
}

// insert puts tally index i for hash h at slot, growing the table when it
// is half full.
func (x *wordIndex) insert(slot int, h uint64, i int32) {
	x.slots[slot] = h>>32<<32 | uint64(i+1)
	x.used++
	if 2*x.used <= len(x.slots) {
		return
	}
	old := x.slots
	x.slots = make([]uint64, 2*len(old))
	mask := len(x.slots) - 1
	for _, s := range old {
		if s == 0 {
			continue
		}
		p := x.home(s) // the slot keeps the hash's high 32 bits
		for x.slots[p] != 0 {
			p = (p + 1) & mask
		}
		x.slots[p] = s
	}
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
	Source        string  `json:"source"`
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
	f.docs = append(f.docs, DocFertility{Source: source, Record: record, Tokens: dw.Tokens, Words: dw.All.Words,
		WordTokens: dw.All.Tokens, Fertility: report.Round2(report.Per(float64(dw.All.Tokens), float64(dw.All.Words))),
		OneTokenShare: round4(report.Per(float64(dw.All.OneToken), float64(dw.All.Words)))})
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
// then hold every word scanned. What they hold does not depend on which
// shard scanned which document (but for the splits kept of a word with
// more than maxSplits), so neither does the report.
func (f *Fragmenter) tables() []wordTable {
	f.mu.Lock()
	defer f.mu.Unlock()
	for _, sh := range f.shards {
		f.flush(sh)
	}
	return f.parts[:]
}

// splitsOf returns the splits of w, a tally of t.
func (t *wordTable) splitsOf(w *wordTally) []splitTally {
	out := []splitTally{{ids: t.splitIDs(w.split), count: w.split.count}}
	if w.more > 0 {
		for _, sp := range t.more[w.more-1].splits {
			if sp.n > 0 {
				out = append(out, splitTally{ids: t.splitIDs(sp), count: sp.count})
			}
		}
	}
	return out
}

// betterSplit reports whether a is the more common split, the one of fewer
// pieces on a tie, or the one with the smaller ids on a tie again.
func betterSplit(a, b splitTally) bool {
	if a.count != b.count {
		return a.count > b.count
	}
	if len(a.ids) != len(b.ids) {
		return len(a.ids) < len(b.ids)
	}
	return slices.Compare(a.ids, b.ids) < 0
}

func round4(x float64) float64 { return float64(int64(x*10000+0.5)) / 10000 }

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
}

// Report is the report of morsel fragments.
type Report struct {
	Vocabulary bpe.Info         `json:"vocabulary"`
	Options    Options          `json:"-"`
	Words      []Fragment       `json:"words"`
	Totals     Totals           `json:"totals"`
	Fertility  Fertility        `json:"fertility"`
	Terms      []TermReport     `json:"terms"`
	Skipped    []report.Skipped `json:"skipped"`
}

// Finish ranks the words by excess tokens (then by count, then by word)
// and returns the report.
func (f *Fragmenter) Finish(opt Options, skipped []report.Skipped) *Report {
	v := f.enc.Vocab()
	r := &Report{Vocabulary: v.Info(), Options: opt, Words: []Fragment{}, Terms: []TermReport{}, Skipped: report.OrNone(skipped)}
	t := f.totals
	t.Words = f.all.Words
	for _, k := range r.Skipped {
		t.Skipped++
		if k.Failed {
			t.Failed++
		}
	}
	tables := f.tables()
	// Rank light records first; only the words listed become Report.
	// With --top N, a bounded heap keeps the N best without sorting all.
	top := &rankHeap{limit: opt.Top}
	for ti := range tables {
		m := &tables[ti]
		t.DistinctWords += int(m.nwords)
		for i := range m.nwords {
			w := m.at(i)
			if report.Per(float64(w.pieces), float64(w.count)) >= opt.MinPieces && w.count >= opt.MinCount {
				t.Qualifying++
				top.offer(ranked{m, w})
			}
		}
	}
	list := top.ws
	sort.Slice(list, func(i, j int) bool { return list[i].before(list[j]) })
	for _, rw := range list {
		m, w := rw.t, rw.w
		word := m.word(w)
		splits := m.splitsOf(w)
		best := splits[0]
		for _, sp := range splits[1:] {
			if betterSplit(sp, best) {
				best = sp
			}
		}
		fr := Fragment{Word: string(word), Script: measure.WordScript(word).String(), Count: w.count, Documents: int(w.docs),
			Pieces: report.Round2(report.Per(float64(w.pieces), float64(w.count))), Excess: w.pieces - w.count,
			SplitShare: round4(report.Per(float64(best.count), float64(w.count)))}
		for _, id := range best.ids {
			tok, _ := v.Token(int(id))
			fr.SplitBytes = append(fr.SplitBytes, tok)
			fr.Split = append(fr.Split, render.PieceText(tok))
		}
		r.Words = append(r.Words, fr)
	}
	t.Listed = len(r.Words)
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

// ranked is a word tally and the table it is in.
type ranked struct {
	t *wordTable
	w *wordTally
}

// before reports whether a ranks before b: more excess tokens, then more
// occurrences, then the word's bytes.
func (a ranked) before(b ranked) bool {
	if ea, eb := a.w.pieces-a.w.count, b.w.pieces-b.w.count; ea != eb {
		return ea > eb
	}
	if a.w.count != b.w.count {
		return a.w.count > b.w.count
	}
	return string(a.t.word(a.w)) < string(b.t.word(b.w))
}

// rankHeap keeps the limit best words offered (all of them when limit is
// 0): a heap whose root is the worst one kept.
type rankHeap struct {
	ws    []ranked
	limit int
}

func (h *rankHeap) Len() int           { return len(h.ws) }
func (h *rankHeap) Less(i, j int) bool { return h.ws[j].before(h.ws[i]) }
func (h *rankHeap) Swap(i, j int)      { h.ws[i], h.ws[j] = h.ws[j], h.ws[i] }
func (h *rankHeap) Push(x any)         { h.ws = append(h.ws, x.(ranked)) }
func (h *rankHeap) Pop() any {
	w := h.ws[len(h.ws)-1]
	h.ws = h.ws[:len(h.ws)-1]
	return w
}

func (h *rankHeap) offer(w ranked) {
	switch {
	case h.limit <= 0:
		h.ws = append(h.ws, w)
	case len(h.ws) < h.limit:
		heap.Push(h, w)
	case w.before(h.ws[0]):
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
