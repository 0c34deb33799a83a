package bpe

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"

	"morsel/internal/textfile"
)

// Vocab is a byte-level BPE vocabulary: the raw bytes of every token, the
// ranked merges that build tokens from bytes, and the special tokens that no
// merge produces. A Vocab is read-only once loaded and safe to share.
type Vocab struct {
	name     string
	tokens   [][]byte    // id -> raw bytes
	byteID   [256]uint32 // byte value -> id of its one-byte token
	merges   u64table    // left<<32|right -> rank<<32|merged id
	pairs    *pairTable  // merges in compact form, when they fit (pairs.go)
	nMerges  int
	specials []Special
	window   int
	spm      *spmModel // a SentencePiece model (spm.go); nil for a pair

	// slow is !plainModel(), kept for the hot path: the zero value is
	// plain byte-level BPE.
	slow  bool
	model modelOpts
	pipe  *pipeline // a bundle's normalizer, pre-tokenizer and added tokens; nil for a pair
	spell [][]byte  // a character-level bundle's tokens as written, by id

	idOnce sync.Once
	ids    map[string]int // raw bytes -> id, built on first use
}

// Special is a token that stands for a control string such as
// "<|endoftext|>" and that no merge produces.
type Special struct {
	ID   int    `json:"id"`
	Text string `json:"text"`
}

// Info describes a vocabulary for reports.
type Info struct {
	Name     string    `json:"name"`
	Size     int       `json:"size"`
	Merges   int       `json:"merges"`
	Specials []Special `json:"specials"`
	Window   int       `json:"window"` // the model's context window in tokens; 0 when not known
}

// Info returns the vocabulary's size, merge count, specials and window.
func (v *Vocab) Info() Info {
	return Info{Name: v.name, Size: len(v.tokens), Merges: v.nMerges, Specials: v.specials, Window: v.window}
}

// Size returns the number of tokens.
func (v *Vocab) Size() int { return len(v.tokens) }

// Window returns the context window of the model that uses the vocabulary,
// or 0 when it is not known.
func (v *Vocab) Window() int { return v.window }

// SetWindow records the context window of the model that uses the vocabulary.
func (v *Vocab) SetWindow(n int) { v.window = n }

// Specials returns the special tokens in id order.
func (v *Vocab) Specials() []Special { return v.specials }

// Token returns the raw bytes of token id; ok is false for an id outside
// the vocabulary. The slice must not be modified.
func (v *Vocab) Token(id int) (raw []byte, ok bool) {
	if id < 0 || id >= len(v.tokens) {
		return nil, false
	}
	return v.tokens[id], true
}

// ID returns the id of the token whose raw bytes are raw.
func (v *Vocab) ID(raw []byte) (id int, ok bool) {
	v.idOnce.Do(func() {
		if v.ids != nil {
			return
		}
		v.ids = make(map[string]int, len(v.tokens))
		for id, t := range v.tokens {
			v.ids[string(t)] = id
		}
	})
	id, ok = v.ids[string(raw)]
	return id, ok
}

// Names of the files of a vocabulary pair, as models ship them.
var pairNames = [][2]string{{"vocab.json", "merges.txt"}, {"encoder.json", "vocab.bpe"}}

// LoadDir loads the vocabulary pair from a folder that holds vocab.json and
// merges.txt, or encoder.json and vocab.bpe. It fails when neither pair is
// there or when the files are malformed.
func LoadDir(dir string) (*Vocab, error) {
	for _, p := range pairNames {
		vp, mp := filepath.Join(dir, p[0]), filepath.Join(dir, p[1])
		if fileExists(vp) && fileExists(mp) {
			return LoadFiles(vp, mp)
		}
	}
	return nil, fmt.Errorf("%s: no vocabulary pair here (looked for vocab.json with merges.txt, and encoder.json with vocab.bpe)", dir)
}

func fileExists(p string) bool {
	st, err := os.Stat(p)
	return err == nil && !st.IsDir()
}

// LoadFiles loads a vocabulary from a JSON vocabulary file (token -> id) and
// a merges file, or from a tokenizer bundle (tokenizer.json, told from a
// vocabulary map by its content), which needs no merges file. If vocabPath
// is a folder, it must hold a tokenizer.json or a pair (see LoadDir), and
// mergesPath must be empty. A vocabulary or merges file must be a regular
// file of at most MaxVocabFile bytes.
func LoadFiles(vocabPath, mergesPath string) (*Vocab, error) {
	if st, err := os.Stat(vocabPath); err == nil && st.IsDir() {
		if mergesPath != "" {
			return nil, fmt.Errorf("%s is a folder; name a vocabulary file with --merges, or the folder alone", vocabPath)
		}
		if fileExists(filepath.Join(vocabPath, "tokenizer.json")) {
			return LoadBundle(vocabPath)
		}
		if m := filepath.Join(vocabPath, "tokenizer.model"); fileExists(m) && !hasPair(vocabPath) {
			return LoadSentencePiece(m) // spm.go
		}
		return LoadDir(vocabPath)
	}
	vj, err := readVocabFile(vocabPath)
	if err != nil {
		return nil, fmt.Errorf("reading vocabulary: %w", err)
	}
	if looksLikeSentencePiece(vocabPath, vj) {
		if mergesPath != "" {
			return nil, fmt.Errorf("%s is a SentencePiece model, which holds its merges; leave out --merges", vocabPath)
		}
		return parseSentencePiece(vocabPath, vj)
	}
	if looksLikeBundle(vj) {
		if mergesPath != "" {
			return nil, fmt.Errorf("%s is a tokenizer bundle, which holds its merges; leave out --merges", vocabPath)
		}
		return loadBundleData(vocabPath, vj)
	}
	if mergesPath == "" {
		return nil, fmt.Errorf("%s: a vocabulary file needs its merges file too (--merges)", vocabPath)
	}
	mt, err := readVocabFile(mergesPath)
	if err != nil {
		return nil, fmt.Errorf("reading merges: %w", err)
	}
	v, err := Parse(vocabPath, vj, mergesPath, mt)
	if err != nil {
		return nil, err
	}
	v.name = filepath.Base(filepath.Dir(vocabPath))
	return v, nil
}

// ErrSyntax is wrapped by every error that Parse returns for malformed input.
var ErrSyntax = errors.New("malformed vocabulary")

type posError struct {
	file string
	line int
	msg  string
}

func (e *posError) Error() string {
	if e.line > 0 {
		return fmt.Sprintf("%s:%d: %s", e.file, e.line, e.msg)
	}
	return fmt.Sprintf("%s: %s", e.file, e.msg)
}

func (e *posError) Unwrap() error { return ErrSyntax }

// Parse builds a vocabulary from the contents of a JSON vocabulary file and
// a merges file; the names are used in errors. It fails, naming file and
// line, on empty files, input that is not a JSON object of token -> id,
// duplicate tokens or ids, ids outside the vocabulary, a missing byte
// symbol, malformed or duplicate merges, and merges whose parts or result
// are not in the vocabulary.
func Parse(vocabName string, vocabJSON []byte, mergesName string, merges []byte) (*Vocab, error) {
	raws, err := parseVocabJSON(vocabName, vocabJSON)
	if err != nil {
		return nil, err
	}
	v := &Vocab{name: vocabName, tokens: raws, ids: make(map[string]int, len(raws))}
	for id, t := range raws {
		v.ids[string(t)] = id
	}
	v.idOnce.Do(func() {}) // ids is complete
	for b := 0; b < 256; b++ {
		id, ok := v.ids[string([]byte{byte(b)})]
		if !ok {
			return nil, &posError{vocabName, 0, fmt.Sprintf("the vocabulary lacks the one-byte token for byte 0x%02X (%q); byte-level BPE needs all 256", b, string(byteToRune[b]))}
		}
		v.byteID[b] = uint32(id)
	}
	if err := v.parseMerges(mergesName, merges); err != nil {
		return nil, err
	}
	v.findSpecials()
	return v, nil
}

// lineCounter gives the line of offsets that only grow, counting each
// newline once.
type lineCounter struct {
	data []byte
	off  int64
	line int
}

func (c *lineCounter) at(off int64) int {
	if off > int64(len(c.data)) {
		off = int64(len(c.data))
	}
	if off > c.off {
		c.line += bytes.Count(c.data[c.off:off], []byte{'\n'})
		c.off = off
	}
	return c.line + 1
}

// skipSeparators returns the offset of the first byte at or after off that
// is not white space, a comma or a colon: where the next JSON token starts.
func skipSeparators(data []byte, off int64) int64 {
	for off < int64(len(data)) {
		switch data[off] {
		case ' ', '\t', '\r', '\n', ',', ':':
			off++
			continue
		}
		break
	}
	return off
}

func parseVocabJSON(name string, data []byte) ([][]byte, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &posError{name, 0, "empty file"}
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	fail := func(msg string) error { return &posError{name, textfile.Line(data, dec.InputOffset()), msg} }
	syntax := func(err error) error {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			return &posError{name, textfile.Line(data, se.Offset), "not valid JSON: " + se.Error()}
		}
		if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
			return &posError{name, textfile.Line(data, int64(len(data))), "not valid JSON: the object is cut short"}
		}
		return fail("not valid JSON: " + err.Error())
	}
	tok, err := dec.Token()
	if err != nil {
		return nil, syntax(err)
	}
	if d, ok := tok.(json.Delim); !ok || d != '{' {
		return nil, fail("expected a JSON object mapping each token to its id")
	}
	type entry struct {
		raw  []byte
		id   int
		line int
	}
	var entries []entry
	seen := map[string]int{} // token as written -> line
	lines := lineCounter{data: data}
	for dec.More() {
		line := lines.at(skipSeparators(data, dec.InputOffset()))
		kt, err := dec.Token()
		if err != nil {
			return nil, syntax(err)
		}
		key, _ := kt.(string)
		vt, err := dec.Token()
		if err != nil {
			return nil, syntax(err)
		}
		num, ok := vt.(json.Number)
		if !ok {
			return nil, fail(fmt.Sprintf("token %q: the id must be a number, not %v", key, vt))
		}
		id64, err := num.Int64()
		if err != nil {
			return nil, fail(fmt.Sprintf("token %q: id %s is not a whole number", key, num))
		}
		if first, dup := seen[key]; dup {
			return nil, &posError{name, line, fmt.Sprintf("token %q appears twice (first on line %d)", key, first)}
		}
		seen[key] = line
		raw, _ := unspell(key)
		entries = append(entries, entry{raw, int(id64), line})
		if id64 < 0 || id64 > 1<<31 {
			return nil, &posError{name, line, fmt.Sprintf("token %q has id %d, outside the vocabulary", key, id64)}
		}
	}
	if _, err := dec.Token(); err != nil { // closing brace
		return nil, syntax(err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, fail("unexpected data after the vocabulary object")
	}
	if len(entries) == 0 {
		return nil, &posError{name, 1, "the vocabulary object has no tokens"}
	}
	tokens := make([][]byte, len(entries))
	lineOfID := make([]int, len(entries))
	for _, e := range entries {
		if e.id >= len(entries) {
			return nil, &posError{name, e.line, fmt.Sprintf("token %q has id %d, beyond the vocabulary of %d tokens (ids run from 0 to %d)", SpellBytes(e.raw), e.id, len(entries), len(entries)-1)}
		}
		if tokens[e.id] != nil {
			return nil, &posError{name, e.line, fmt.Sprintf("id %d is given twice (first on line %d)", e.id, lineOfID[e.id])}
		}
		tokens[e.id] = e.raw
		lineOfID[e.id] = e.line
	}
	// Two spellings that unspell to the same bytes would make the same token twice.
	byRaw := make(map[string]int, len(tokens))
	for id, t := range tokens {
		if other, dup := byRaw[string(t)]; dup {
			return nil, &posError{name, lineOfID[id], fmt.Sprintf("ids %d and %d spell the same bytes %q", other, id, t)}
		}
		byRaw[string(t)] = id
	}
	return tokens, nil
}

func pairKey(a, b uint32) uint64 { return uint64(a)<<32 | uint64(b) }

func (v *Vocab) parseMerges(name string, data []byte) error {
	if len(bytes.TrimSpace(data)) == 0 {
		return &posError{name, 0, "empty file"}
	}
	v.merges = newU64Table(bytes.Count(data, []byte{'\n'}) + 1)
	firstLine := map[uint64]int{}
	rank := 0
	lineNo := 0
	for len(data) > 0 {
		lineNo++
		var line []byte
		if i := bytes.IndexByte(data, '\n'); i >= 0 {
			line, data = data[:i], data[i+1:]
		} else {
			line, data = data, nil
		}
		line = bytes.TrimSuffix(line, []byte{'\r'})
		if lineNo == 1 && bytes.HasPrefix(line, []byte("#version")) {
			continue
		}
		if len(bytes.TrimSpace(line)) == 0 {
			continue
		}
		parts := strings.Split(string(line), " ")
		if len(parts) != 2 || parts[0] == "" || parts[1] == "" {
			return &posError{name, lineNo, fmt.Sprintf("a merge is two tokens separated by one space, not %q", line)}
		}
		a, aok := v.ids[string(mustUnspell(parts[0]))]
		b, bok := v.ids[string(mustUnspell(parts[1]))]
		switch {
		case !aok:
			return &posError{name, lineNo, fmt.Sprintf("merge %q names %q, which is not in the vocabulary", line, parts[0])}
		case !bok:
			return &posError{name, lineNo, fmt.Sprintf("merge %q names %q, which is not in the vocabulary", line, parts[1])}
		}
		merged, ok := v.ids[string(mustUnspell(parts[0]+parts[1]))]
		if !ok {
			return &posError{name, lineNo, fmt.Sprintf("merge %q makes %q, which is not in the vocabulary", line, parts[0]+parts[1])}
		}
		key := pairKey(uint32(a), uint32(b))
		if first, dup := firstLine[key]; dup {
			return &posError{name, lineNo, fmt.Sprintf("merge %q appears twice (first on line %d)", line, first)}
		}
		firstLine[key] = lineNo
		v.merges.put(key, uint64(rank)<<32|uint64(merged))
		rank++
	}
	if rank == 0 {
		return &posError{name, 0, "no merges in the file"}
	}
	v.nMerges = rank
	return nil
}

func mustUnspell(s string) []byte {
	raw, _ := unspell(s)
	return raw
}

// findSpecials marks the tokens that are neither one byte nor the result of
// a merge: control tokens such as "<|endoftext|>".
func (v *Vocab) findSpecials() {
	made := make([]bool, len(v.tokens))
	for _, id := range v.byteID {
		made[id] = true
	}
	v.merges.each(func(_, rm uint64) { made[uint32(rm)] = true })
	v.specials = v.specials[:0]
	for id, ok := range made {
		if !ok && len(v.tokens[id]) > 0 {
			v.specials = append(v.specials, Special{ID: id, Text: string(v.tokens[id])})
		}
	}
	sort.Slice(v.specials, func(i, j int) bool { return v.specials[i].ID < v.specials[j].ID })
}

// Name returns the vocabulary's name: the embedded default's, or the folder
// its files came from.
func (v *Vocab) Name() string { return v.name }

// SetName sets the name reports show for the vocabulary.
func (v *Vocab) SetName(name string) { v.name = name }
