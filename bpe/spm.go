package bpe

import (
	"cmp"
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"unicode/utf8"

	"morsel/bpe/charsmap"
	"morsel/bpe/spmodel"
)

// spmModel is a SentencePiece BPE model made ready for encoding as the
// reference encoder does: normalize the whole text, split it into
// characters (user-defined pieces first, whole), merge the adjacent pair
// whose result is the piece of highest score (the leftmost on ties) until
// none is left, split unused pieces back into their parts, and give a
// character with no piece its bytes' pieces or the unknown id.
type spmModel struct {
	m      *spmodel.Model
	cmap   *charsmap.Map
	mark   string            // the white-space mark: "▁", or " " when white space is not escaped
	pieces map[string]uint32 // the pieces merging may make or start from: normal, user-defined, unused
	// reserved are the other pieces (unknown, control, byte), which only
	// a single character can spell, and which win over pieces of the same
	// text, as the reference looks them up first.
	reserved map[string]uint32
	user     userMatcher
	unk      uint32
	unused   bool // the model has unused pieces: encode by the reference's own steps
	byteID   [256]uint32
	start    int // the start piece's id, or -1

	// The merge table, over symbol ids: a piece's id, or for a character
	// that a piece holds but is no piece itself, an id from len(pieces)
	// up, in chars. Every other character is noSym until it is emitted.
	ranks    u64table // pairKey(left, right) -> rank<<32 | merged id
	charSyms map[string]uint32
	chars    []string // symbol id - len(Pieces) -> its character
	asciiSym [128]uint32
	cut      cutRule

	// the normalizer's tables (spm_normalize.go)
	asciiKind [128]uint8
	asciiRepl [128][]byte
	charRule  []uint32 // by rune, below 0x10000
	normPool  []byte
	inputCut  bool // texts may be cut before normalization (spm_stream.go)

	// for the fast path (spm_fast.go)
	charID   map[string]uint32 // a character's symbol, when it has one
	lens     []int32           // a piece's length in bytes
	resolved []uint32          // the id a piece's text looks up
	apart    [128][2]uint64    // bit b of apart[a]: no piece holds the ASCII characters a, b side by side
	anyApart bool
}

// noSym is the symbol of a character no piece holds.
const noSym = ^uint32(0) - 1

// cutRule says where a normalized text may be cut without changing its
// encoding: no piece spans such a place, so the two sides merge apart.
type cutRule int8

const (
	cutNone        cutRule = iota
	cutBeforeMarks         // before a mark that follows another character
	cutAfterMarks          // after a mark that another character follows
)

// userMatcher finds the longest user-defined piece at the start of a text.
type userMatcher struct {
	first [256][]string // by first byte, longest first
	ids   map[string]uint32
}

func (u *userMatcher) match(s []byte) (id uint32, n int) {
	if len(u.ids) == 0 || len(s) == 0 {
		return 0, 0
	}
	for _, w := range u.first[s[0]] {
		if len(w) <= len(s) && string(s[:len(w)]) == w {
			return u.ids[w], len(w)
		}
	}
	return 0, 0
}

// LoadSentencePiece reads a SentencePiece BPE model file into a
// vocabulary. It fails, naming the file, as spmodel.Parse does.
func LoadSentencePiece(path string) (*Vocab, error) {
	data, err := readVocabFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading SentencePiece model: %w", err)
	}
	return parseSentencePiece(path, data)
}

// newSentencePieceVocab makes the vocabulary of a parsed model.
func newSentencePieceVocab(m *spmodel.Model) *Vocab {
	sp := newSPM(m)
	v := &Vocab{spm: sp, tokens: make([][]byte, len(m.Pieces)), spell: make([][]byte, len(m.Pieces))}
	sp.prepareFast(v)
	v.model.fallback = m.ByteFallback
	for id, p := range m.Pieces {
		v.tokens[id] = sp.raw(id)
		v.spell[id] = []byte(p.Text)
		if b, ok := spmodel.ByteOf(p.Text); ok && p.Type == spmodel.Byte {
			v.model.fallbackID[b] = uint32(id)
		}
		if p.Type == spmodel.Control || p.Type == spmodel.Unknown {
			v.specials = append(v.specials, Special{ID: id, Text: p.Text})
		}
	}
	for id := range v.tokens {
		if m.Pieces[id].Type == spmodel.Normal && utf8.RuneCountInString(m.Pieces[id].Text) > 1 {
			v.nMerges++
		}
	}
	return v
}

func newSPM(m *spmodel.Model) *spmModel {
	sp := &spmModel{
		m: m, cmap: m.Normalizer.Map, mark: "\u2581",
		pieces: make(map[string]uint32, len(m.Pieces)), reserved: map[string]uint32{},
		user: userMatcher{ids: map[string]uint32{}}, unk: uint32(m.UnknownID), start: -1,
		charSyms: map[string]uint32{},
	}
	if !m.Normalizer.EscapeWhitespaces {
		sp.mark = " "
	}
	if id, ok := m.Start(); ok {
		sp.start = id
	}
	for id, p := range m.Pieces {
		switch p.Type {
		case spmodel.Normal, spmodel.UserDefined, spmodel.Unused:
			sp.pieces[p.Text] = uint32(id)
		default:
			sp.reserved[p.Text] = uint32(id)
		}
		switch p.Type {
		case spmodel.UserDefined:
			sp.user.ids[p.Text] = uint32(id)
			sp.user.first[p.Text[0]] = append(sp.user.first[p.Text[0]], p.Text)
		case spmodel.Unused:
			sp.unused = true
		case spmodel.Byte:
			b, _ := spmodel.ByteOf(p.Text)
			sp.byteID[b] = uint32(id)
		}
	}
	for i := range sp.user.first {
		slices.SortStableFunc(sp.user.first[i], func(a, b string) int { return cmp.Compare(len(b), len(a)) })
	}
	sp.buildRanks()
	sp.buildNormTables()
	sp.cut = sp.cutRule()
	return sp
}

// raw returns the bytes a piece stands for: the mark as a space, a byte
// piece as its byte, the unknown and control pieces as their names.
func (sp *spmModel) raw(id int) []byte {
	p := sp.m.Pieces[id]
	switch p.Type {
	case spmodel.Byte:
		b, _ := spmodel.ByteOf(p.Text)
		return []byte{b}
	case spmodel.Control:
		return []byte(p.Text) // as a byte-level vocabulary's special tokens
	case spmodel.Unknown:
		return []byte(p.Text) // shown by name, as control pieces are
	}
	return []byte(strings.ReplaceAll(p.Text, "\u2581", " "))
}

// symbol returns the merge symbol of a piece text or a single character,
// or noSym when no merge can use it. User-defined pieces are frozen: they
// never merge.
func (sp *spmModel) symbol(s string) uint32 {
	if id, ok := sp.pieces[s]; ok {
		if sp.m.Pieces[id].Type == spmodel.UserDefined {
			return noSym
		}
		return id
	}
	if id, ok := sp.charSyms[s]; ok {
		return id
	}
	return noSym
}

// buildRanks fills the merge table: every way of writing a mergeable piece
// as two symbols. Ranks follow scores, highest first; equal scores share a
// rank, so that the leftmost pair goes first among them as in the
// reference.
func (sp *spmModel) buildRanks() {
	ps := sp.m.Pieces
	var order []uint32
	for text, id := range sp.pieces {
		if ps[id].Type != spmodel.UserDefined && utf8.RuneCountInString(text) > 1 {
			order = append(order, id)
		}
	}
	slices.SortFunc(order, func(a, b uint32) int {
		return cmp.Or(cmp.Compare(ps[b].Score, ps[a].Score), cmp.Compare(a, b))
	})
	// Characters that pieces hold but that are no piece get symbols.
	next := uint32(len(ps))
	for _, id := range order {
		for _, r := range ps[id].Text {
			c := string(r)
			if _, ok := sp.pieces[c]; !ok {
				if _, ok := sp.charSyms[c]; !ok {
					sp.charSyms[c] = next
					sp.chars = append(sp.chars, c)
					next++
				}
			}
		}
	}
	for i := range sp.asciiSym {
		sp.asciiSym[i] = sp.symbol(string(rune(i)))
	}
	// Most ways of writing a piece as two parts are no pair of symbols:
	// the pairs are gathered first, so that the table is sized for them
	// and stays in the processor's caches (59,000 pairs of a 32,000-piece
	// model in 2 MB).
	var pairs [][2]uint64
	rank := uint32(0)
	for i, id := range order {
		if i > 0 && ps[id].Score != ps[order[i-1]].Score {
			rank++
		}
		text := ps[id].Text
		for k := range text {
			if k == 0 {
				continue
			}
			l, r := sp.symbol(text[:k]), sp.symbol(text[k:])
			if l != noSym && r != noSym {
				pairs = append(pairs, [2]uint64{pairKey(l, r), uint64(rank)<<32 | uint64(id)})
			}
		}
	}
	sp.ranks = newU64Table(len(pairs))
	for _, p := range pairs {
		sp.ranks.put(p[0], p[1])
	}
}

// cutRule finds where texts may be cut: before each mark that follows
// another character when no mergeable piece holds a mark after another
// character (marks lead pieces), or after each mark that another
// character follows when no piece holds a mark before another character
// (marks end pieces).
func (sp *spmModel) cutRule() cutRule {
	markInside, markBeforeOther := false, false
	for text, id := range sp.pieces {
		_ = id
		for i := strings.Index(text, sp.mark); i >= 0; {
			if i > 0 && !strings.HasSuffix(text[:i], sp.mark) {
				markInside = true
			}
			j := i + len(sp.mark)
			if j < len(text) && !strings.HasPrefix(text[j:], sp.mark) {
				markBeforeOther = true
			}
			k := strings.Index(text[j:], sp.mark)
			if k < 0 {
				break
			}
			i = j + k
		}
	}
	switch {
	case !sp.m.TreatWhitespaceAsSuffix && !markInside:
		return cutBeforeMarks
	case sp.m.TreatWhitespaceAsSuffix && !markBeforeOther:
		return cutAfterMarks
	}
	return cutNone
}

// chain describes the normalizer and the pre-tokenizer for Chain.
func (sp *spmModel) chain() (normalizer, preTokenizer string) {
	n := sp.m.Normalizer
	var parts []string
	if n.Map.Len() > 0 {
		parts = append(parts, fmt.Sprintf("SentencePiece %s character map (%d rules)", n.Name, n.Map.Len()))
	} else {
		parts = append(parts, "SentencePiece "+n.Name+" (no character map)")
	}
	if n.RemoveExtraWhitespaces {
		parts = append(parts, "extra white space removed")
	}
	if n.EscapeWhitespaces {
		parts = append(parts, "spaces as ▁")
	}
	if n.AddDummyPrefix {
		if sp.m.TreatWhitespaceAsSuffix {
			parts = append(parts, "a mark appended")
		} else {
			parts = append(parts, "a mark prepended")
		}
	}
	pre := "none: the whole text is one merge problem"
	switch sp.cut {
	case cutBeforeMarks:
		pre += ", cut before each mark (no piece spans one)"
	case cutAfterMarks:
		pre += ", cut after each mark (no piece spans one)"
	}
	if sp.m.ByteFallback {
		pre += "; characters with no piece as <0xNN> bytes"
	}
	return strings.Join(parts, ", "), pre
}

// spmFamily is Family's name for a SentencePiece model.
const spmFamily = "sentencepiece-bpe"

// template returns the ids a request starts with: the start piece.
func (sp *spmModel) template() []int {
	if sp.start < 0 {
		return []int{}
	}
	return []int{sp.start}
}

// added returns the user-defined pieces, in id order.
func (sp *spmModel) added() []Special {
	var out []Special
	for id, p := range sp.m.Pieces {
		if p.Type == spmodel.UserDefined {
			out = append(out, Special{ID: id, Text: p.Text})
		}
	}
	return out
}

// SentencePiece returns what a vocabulary read from a SentencePiece model
// file knows beyond a vocabulary's shared description; ok is false for
// any other vocabulary.
func (v *Vocab) SentencePiece() (info SentencePieceInfo, ok bool) {
	sp := v.spm
	if sp == nil {
		return SentencePieceInfo{}, false
	}
	n := sp.m.Normalizer
	info = SentencePieceInfo{
		Normalizer: n.Name, Rules: n.Map.Len(), AddDummyPrefix: n.AddDummyPrefix,
		RemoveExtraWhitespaces: n.RemoveExtraWhitespaces, EscapeWhitespaces: n.EscapeWhitespaces,
		WhitespaceSuffix: sp.m.TreatWhitespaceAsSuffix, StartID: sp.start, UnknownID: int(sp.unk),
		Fingerprint: sp.m.Fingerprint,
	}
	for _, p := range sp.m.Pieces {
		switch p.Type {
		case spmodel.Control:
			info.Control++
		case spmodel.UserDefined:
			info.UserDefined++
		case spmodel.Unused:
			info.Unused++
		case spmodel.Byte:
			info.Byte++
		}
	}
	return info, true
}

// SentencePieceInfo describes a SentencePiece model for reports.
type SentencePieceInfo struct {
	Normalizer             string `json:"normalizer"`       // the rule set's name
	Rules                  int    `json:"normalizer_rules"` // rules of its character map
	AddDummyPrefix         bool   `json:"add_dummy_prefix"`
	RemoveExtraWhitespaces bool   `json:"remove_extra_whitespaces"`
	EscapeWhitespaces      bool   `json:"escape_whitespaces"`
	WhitespaceSuffix       bool   `json:"whitespace_suffix"`
	StartID                int    `json:"start_id"` // -1 when the model has no start piece
	UnknownID              int    `json:"unknown_id"`
	Control                int    `json:"control_pieces"`
	UserDefined            int    `json:"user_defined_pieces"`
	Unused                 int    `json:"unused_pieces"`
	Byte                   int    `json:"byte_pieces"`
	Fingerprint            string `json:"fingerprint"` // "sha256:" and the model file's hash
}

// looksLikeSentencePiece tells a SentencePiece model file from a JSON
// vocabulary: by its name, or by its first byte, the key of a ModelProto's
// first piece (field 1, length-delimited), which no JSON text starts with.
func looksLikeSentencePiece(path string, data []byte) bool {
	return strings.HasSuffix(path, ".model") || len(data) > 0 && data[0] == 0x0a
}

// parseSentencePiece makes the vocabulary of the model file data read from
// path.
func parseSentencePiece(path string, data []byte) (*Vocab, error) {
	m, err := spmodel.Parse(path, data)
	if err != nil {
		return nil, err
	}
	v := newSentencePieceVocab(m)
	v.name = strings.TrimSuffix(filepath.Base(path), ".model")
	if v.name == "tokenizer" { // a model folder's file: the folder names it
		v.name = filepath.Base(filepath.Dir(path))
	}
	return v, nil
}

// hasPair reports whether dir holds a vocabulary pair.
func hasPair(dir string) bool {
	for _, p := range pairNames {
		if fileExists(filepath.Join(dir, p[0])) && fileExists(filepath.Join(dir, p[1])) {
			return true
		}
	}
	return false
}
