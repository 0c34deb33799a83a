package bpe

import (
	"morsel/internal/textfile"

	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
)

// A tokenizer bundle is the single JSON file (tokenizer.json) in which the
// general-purpose tokenizers library keeps a whole tokenizer: normalizer,
// pre-tokenizer, model, added tokens and post-processor. Only the BPE model
// is read; any component this package does not implement is an error that
// names it, never silently skipped.

// MaxVocabFile is the largest vocabulary file read, in bytes.
const MaxVocabFile = 1 << 30

// maxTokenID bounds the ids a bundle may use, so that a hostile id cannot
// make the loader allocate gigabytes.
const maxTokenID = 1 << 24

// readVocabFile reads a vocabulary file, refusing anything that is not a
// regular file or that is larger than MaxVocabFile.
func readVocabFile(path string) ([]byte, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if !st.Mode().IsRegular() {
		return nil, fmt.Errorf("%s: not a regular file", path)
	}
	if st.Size() > MaxVocabFile {
		return nil, fmt.Errorf("%s: %d bytes, larger than the %d-byte limit for a vocabulary file", path, st.Size(), MaxVocabFile)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	buf := make([]byte, 0, st.Size()+1)
	for {
		n, err := f.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if err != nil {
			break
		}
		if len(buf) == cap(buf) {
			if len(buf) > MaxVocabFile {
				return nil, fmt.Errorf("%s: larger than the %d-byte limit for a vocabulary file", path, MaxVocabFile)
			}
			buf = append(buf, 0)[:len(buf)]
		}
	}
	return buf, nil
}

// looksLikeBundle tells a bundle from a vocabulary map (token -> id) by the
// first member's value: a number in a map, anything else in a bundle.
func looksLikeBundle(data []byte) bool {
	j := &jscan{data: data}
	if j.peek() != '{' {
		return false
	}
	j.pos++
	if j.peek() != '"' {
		return false
	}
	if _, err := j.str(nil); err != nil || j.expect(':', "':'") != nil {
		return false
	}
	c := j.peek()
	return c != 0 && c != '-' && (c < '0' || c > '9')
}

// LoadBundle loads a tokenizer bundle from path, a tokenizer.json file or
// a folder that holds one; a tokenizer_config.json beside it supplies the
// window. It fails, naming the file and the component or entry, on
// malformed JSON, a model other than BPE, a component it does not
// implement, merges that name missing tokens and duplicate ids.
func LoadBundle(path string) (*Vocab, error) {
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		path = filepath.Join(path, "tokenizer.json")
	}
	data, err := readVocabFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading vocabulary: %w", err)
	}
	return loadBundleData(path, data)
}

// loadBundleData loads the bundle data read from path, with the
// tokenizer_config.json beside it when there is one.
func loadBundleData(path string, data []byte) (*Vocab, error) {
	var err error
	cfgPath := filepath.Join(filepath.Dir(path), "tokenizer_config.json")
	var cfg []byte
	if fileExists(cfgPath) {
		if cfg, err = readVocabFile(cfgPath); err != nil {
			return nil, fmt.Errorf("reading vocabulary: %w", err)
		}
	}
	v, err := loadBundleCached(path, data, cfgPath, cfg)
	if err != nil {
		return nil, err
	}
	v.name = filepath.Base(filepath.Dir(path))
	return v, nil
}

// ParseBundle builds a vocabulary from the contents of a tokenizer bundle
// and, when config is not empty, of its tokenizer_config.json; the names
// are used in errors.
func ParseBundle(name string, data []byte, configName string, config []byte) (*Vocab, error) {
	b, err := parseBundleJSON(name, data)
	if err != nil {
		return nil, err
	}
	return b.build(configName, config)
}

// bundleSpec is a bundle as read, before its components are built.
type bundleSpec struct {
	name  string
	comps map[string]json.RawMessage // the small members, by key
	model modelSpec
	vocab []vocabEntry
	// src reads the file; the merges array starts at src.data[mergesAt]
	// (0: there is none) and holds nMerges entries. The merges are read
	// straight into the vocabulary's table by buildMerges, never held as
	// a list: on a large bundle that list was the biggest part of a load.
	src      *jscan
	mergesAt int

	// digested: read from the cache, where the vocabulary's keys are raw
	// bytes already checked and the merges come resolved, by rank.
	digested bool
	triples  []mergeTriple
	nMerges  int
	raws     [][]byte // each vocabulary key's raw bytes, once built
	byteLvl  bool
}

// mergeTriple is a resolved merge: its rank, its pair and the token it
// makes.
type mergeTriple struct{ rank, a, b, merged uint32 }

type vocabEntry struct {
	key []byte
	id  int32
	at  int32 // offset of the entry in the file, for errors (0 from the cache)
}

type modelSpec struct {
	Type                    string   `json:"type"`
	Dropout                 *float64 `json:"dropout"`
	UnkToken                *string  `json:"unk_token"`
	ContinuingSubwordPrefix *string  `json:"continuing_subword_prefix"`
	EndOfWordSuffix         *string  `json:"end_of_word_suffix"`
	FuseUnk                 bool     `json:"fuse_unk"`
	ByteFallback            bool     `json:"byte_fallback"`
	IgnoreMerges            bool     `json:"ignore_merges"`
}

func parseBundleJSON(name string, data []byte) (*bundleSpec, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &posError{name, 0, "empty file"}
	}
	j := &jscan{name: name, data: data}
	b := &bundleSpec{name: name, comps: map[string]json.RawMessage{}}
	var modelSeen bool
	var vocabSpan, mergesSpan [2]int
	err := j.object(func(key string, at int) error {
		if key != "model" {
			s, e, err := j.skip()
			if err != nil {
				return err
			}
			b.comps[key] = data[s:e]
			return nil
		}
		modelSeen = true
		small := map[string]json.RawMessage{}
		err := j.object(func(mk string, at int) error {
			s, e, err := j.skip()
			if err != nil {
				return err
			}
			switch mk {
			case "vocab":
				vocabSpan = [2]int{s, e}
			case "merges":
				mergesSpan = [2]int{s, e}
				if b.nMerges, err = j.count(s); err != nil {
					return err
				}
			default:
				small[mk] = data[s:e]
			}
			return nil
		})
		if err != nil {
			return err
		}
		raw, _ := json.Marshal(small)
		if err := json.Unmarshal(raw, &b.model); err != nil {
			return &posError{name, textfile.Line(data, int64(at)), "model: " + err.Error()}
		}
		if _, ok := small["type"]; !ok {
			b.model.Type = "" // checked below
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if j.ws() {
		return nil, j.errAt(j.pos, "unexpected data after the bundle's object")
	}
	if !modelSeen {
		return nil, &posError{name, 0, "no \"model\" member: not a tokenizer bundle"}
	}
	if b.model.Type != "BPE" {
		if b.model.Type == "" {
			return nil, &posError{name, 0, "model: no \"type\" (only BPE is read)"}
		}
		return nil, &posError{name, 0, fmt.Sprintf("model type %q is not implemented (only BPE is)", b.model.Type)}
	}
	if d := b.model.Dropout; d != nil && *d != 0 {
		return nil, &posError{name, 0, fmt.Sprintf("model: dropout %g makes counts random; only null or 0 is accepted", *d)}
	}
	if vocabSpan[1] == 0 {
		return nil, &posError{name, 0, "model: no \"vocab\""}
	}
	if err := b.readVocab(j, vocabSpan[0]); err != nil {
		return nil, err
	}
	b.src, b.mergesAt = j, mergesSpan[0]
	return b, nil
}

func (b *bundleSpec) readVocab(j *jscan, at int) error {
	j.pos = at
	return j.objectBytes(func(key []byte, at int) error {
		key = j.own(key)
		n, nat, err := j.int()
		if err != nil {
			return j.errAt(nat, "model.vocab: token %q: the id must be a whole number", key)
		}
		if n < 0 || n >= maxTokenID {
			return j.errAt(at, "model.vocab: token %q has id %d, outside 0..%d", key, n, maxTokenID-1)
		}
		b.vocab = append(b.vocab, vocabEntry{key, int32(n), int32(at)})
		return nil
	})
}

// entryError is an error about vocabulary entry e.
func (b *bundleSpec) entryError(e vocabEntry, format string, args ...any) error {
	line := 0
	if b.src != nil {
		line = textfile.Line(b.src.data, int64(e.at))
	}
	return &posError{b.name, line, fmt.Sprintf(format, args...)}
}

// eachMerge calls fn with each merge of the file in order, its two tokens
// as written (valid until the next call) and its offset.
func (b *bundleSpec) eachMerge(fn func(rank int, x, y []byte, at int) error) error {
	if b.mergesAt == 0 {
		return nil
	}
	j := b.src
	j.pos = b.mergesAt
	var bx, by []byte
	return j.array(func(i, at int) error {
		switch j.peek() {
		case '"':
			s, err := j.str(bx)
			if err != nil {
				return err
			}
			j.keep(&bx, s)
			sp := bytes.IndexByte(s, ' ')
			if sp <= 0 || sp == len(s)-1 || bytes.IndexByte(s[sp+1:], ' ') >= 0 {
				return j.errAt(at, "model.merges[%d]: a merge is two tokens separated by one space, not %q", i, s)
			}
			return fn(i, s[:sp:sp], s[sp+1:], at)
		case '[':
			var x, y []byte
			n := 0
			err := j.array(func(k, _ int) error {
				buf := &bx
				if k > 0 {
					buf = &by
				}
				s, err := j.str(*buf)
				if err != nil {
					return err
				}
				j.keep(buf, s)
				x, y = y, s
				n++
				return nil
			})
			if err != nil {
				return err
			}
			if n != 2 {
				return j.errAt(at, "model.merges[%d]: a merge pair holds two tokens, not %d", i, n)
			}
			return fn(i, x, y, at)
		}
		return j.errAt(at, "model.merges[%d]: expected a string \"a b\" or a pair [a, b]", i)
	})
}

// addedSpec is one entry of a bundle's added_tokens.
type addedSpec struct {
	ID         *int    `json:"id"`
	Content    *string `json:"content"`
	SingleWord bool    `json:"single_word"`
	Lstrip     bool    `json:"lstrip"`
	Rstrip     bool    `json:"rstrip"`
	Normalized *bool   `json:"normalized"`
	Special    bool    `json:"special"`
}

// build makes the vocabulary and its pipeline.
func (b *bundleSpec) build(configName string, config []byte) (*Vocab, error) {
	name := b.name
	comp := func(key string) json.RawMessage {
		r := b.comps[key]
		if len(r) == 0 || string(r) == "null" {
			return nil
		}
		return r
	}
	pre, byteLevel, err := compilePreTokenizer(name, comp("pre_tokenizer"))
	if err != nil {
		return nil, err
	}
	b.byteLvl = byteLevel
	norm, err := compileNormalizer(name, comp("normalizer"))
	if err != nil {
		return nil, err
	}
	// appendRaw appends to dst the bytes a key stands for; raw returns
	// them, as key itself when they are the same.
	appendRaw := func(dst, key []byte) []byte {
		if byteLevel && !b.digested {
			dst, _ = appendUnspelled(dst, key)
			return dst
		}
		return append(dst, key...)
	}
	raw := func(key []byte) []byte {
		if byteLevel && !b.digested {
			return appendRaw(make([]byte, 0, len(key)), key)
		}
		return key
	}
	var added []addedSpec
	if r := comp("added_tokens"); r != nil {
		if err := json.Unmarshal(r, &added); err != nil {
			return nil, &posError{name, 0, "added_tokens: " + err.Error()}
		}
	}
	size := 0
	for _, e := range b.vocab {
		size = max(size, int(e.id)+1)
	}
	for i, a := range added {
		if a.ID == nil || a.Content == nil {
			return nil, &posError{name, 0, fmt.Sprintf("added_tokens[%d]: needs an id and a content", i)}
		}
		if *a.ID < 0 || *a.ID >= maxTokenID {
			return nil, &posError{name, 0, fmt.Sprintf("added_tokens[%d] %q: id %d outside 0..%d", i, *a.Content, *a.ID, maxTokenID-1)}
		}
		if *a.Content == "" {
			return nil, &posError{name, 0, fmt.Sprintf("added_tokens[%d]: empty content", i)}
		}
		size = max(size, *a.ID+1)
	}
	if len(b.vocab) == 0 {
		return nil, &posError{name, 0, "model.vocab: no tokens"}
	}
	v := &Vocab{name: name, tokens: make([][]byte, size)}
	// A plain byte-level model never looks a token up by its bytes while
	// encoding, so a bundle from the cache leaves that map to the first
	// Vocab.ID: the biggest cost of a load.
	lazyIDs := b.digested && byteLevel && !b.model.IgnoreMerges &&
		(b.model.ContinuingSubwordPrefix == nil || *b.model.ContinuingSubwordPrefix == "") &&
		(b.model.EndOfWordSuffix == nil || *b.model.EndOfWordSuffix == "")
	if !lazyIDs {
		v.ids = make(map[string]int, len(b.vocab))
		v.idOnce.Do(func() {})
	}
	spell := make([][]byte, size)
	if !b.digested {
		b.raws = make([][]byte, len(b.vocab))
	}
	for i, e := range b.vocab {
		if b.digested {
			spell[e.id] = e.key
			if !lazyIDs {
				v.ids[string(e.key)] = int(e.id)
			}
			v.tokens[e.id] = e.key
			continue
		}
		if spell[e.id] != nil {
			return nil, b.entryError(e, "model.vocab: id %d is given to %q and to %q", e.id, spell[e.id], e.key)
		}
		spell[e.id] = e.key
		r := raw(e.key)
		if other, dup := v.ids[string(r)]; dup {
			if bytes.Equal(spell[other], e.key) {
				return nil, b.entryError(e, "model.vocab: token %q appears twice", e.key)
			}
			return nil, b.entryError(e, "model.vocab: ids %d and %d spell the same bytes %q", other, e.id, r)
		}
		v.ids[string(r)] = int(e.id)
		v.tokens[e.id] = r
		b.raws[i] = r
	}
	lookup := v.ids
	if lazyIDs {
		lookup = v.someIDs(b.model.UnkToken, b.model.ByteFallback)
	}
	m := &v.model
	m.charLevel = !byteLevel
	m.unk = -1
	m.fuseUnk = b.model.FuseUnk
	m.ignoreMerges = b.model.IgnoreMerges
	if p := b.model.ContinuingSubwordPrefix; p != nil {
		m.prefix = string(raw([]byte(*p)))
	}
	if s := b.model.EndOfWordSuffix; s != nil {
		m.suffix = string(raw([]byte(*s)))
	}
	if u := b.model.UnkToken; u != nil {
		id, ok := lookup[string(raw([]byte(*u)))]
		if !ok {
			return nil, &posError{name, 0, fmt.Sprintf("model: unk_token %q is not in the vocabulary", *u)}
		}
		m.unk = int32(id)
	}
	for i := range m.fallbackID {
		m.fallbackID[i] = noToken
	}
	for c := range m.asciiID {
		if id, ok := lookup[string(rune(c))]; ok && m.charLevel && m.prefix == "" && m.suffix == "" {
			m.asciiID[c] = uint32(id) + 1
		}
	}
	if b.model.ByteFallback {
		m.fallback = true
		for c := 0; c < 256; c++ {
			if id, ok := lookup[fmt.Sprintf("<0x%02X>", c)]; ok {
				m.fallbackID[c] = uint32(id)
				v.tokens[id] = []byte{byte(c)}
			}
		}
	}
	if byteLevel {
		for c := 0; c < 256; c++ {
			id, ok := lookup[string([]byte{byte(c)})]
			if !ok {
				return nil, &posError{name, 0, fmt.Sprintf("model.vocab lacks the one-byte token for byte 0x%02X (%q); a byte-level vocabulary needs all 256", c, string(byteToRune[c]))}
			}
			v.byteID[c] = uint32(id)
		}
	}
	if err := b.buildMerges(v, appendRaw); err != nil {
		return nil, err
	}
	p := &pipeline{norm: norm, contNorm: withoutPrepend(norm), pre: pre, byteLevel: byteLevel, written: keepComponents(b.comps)}
	p.family = family(byteLevel, comp("pre_tokenizer"), comp("normalizer"))
	for _, st := range pre {
		if m, ok := st.(*metaspaceStage); ok {
			p.metaspace = string(m.repl)
		}
	}
	if p.metaspace == "" && p.family == "metaspace" {
		p.metaspace = "\u2581"
	}
	if err := p.addTokens(name, v, added, spell); err != nil {
		return nil, err
	}
	if p.template, err = compileTemplate(name, comp("post_processor"), v, spell); err != nil {
		return nil, err
	}
	if !byteLevel {
		v.spell = spell
		// A token spelled with the metaspace replacement stands for text
		// with a space there, and that is what reports show.
		if p.metaspace != "" {
			for id, t := range v.tokens {
				if m.fallback && len(t) == 1 && spell[id] != nil && len(spell[id]) == 6 {
					continue
				}
				if bytes.Contains(t, []byte(p.metaspace)) {
					v.tokens[id] = bytes.ReplaceAll(t, []byte(p.metaspace), []byte(" "))
				}
			}
		}
	}
	v.pipe = p
	v.slow = !v.plainModel()
	p.cuts = cutsFor(v, p) // after v.slow, which the model's first symbols follow
	if config != nil {
		w, err := configWindow(configName, config)
		if err != nil {
			return nil, err
		}
		v.window = w
	}
	v.findSpecialsBundle()
	return v, nil
}

func (b *bundleSpec) buildMerges(v *Vocab, raw func(dst, key []byte) []byte) error {
	if b.digested {
		v.merges = newU64Table(len(b.triples))
		for _, t := range b.triples {
			v.merges.put(pairKey(t.a, t.b), uint64(t.rank)<<32|uint64(t.merged))
		}
		v.nMerges = b.nMerges
		return nil
	}
	v.merges = newU64Table(b.nMerges)
	v.nMerges = b.nMerges
	prefix := []byte(v.model.prefix)
	var buf, ra, rb []byte
	return b.eachMerge(func(rank int, x, y []byte, at int) error {
		ra, rb = raw(ra[:0], x), raw(rb[:0], y)
		a, aok := v.ids[string(ra)]
		bb, bok := v.ids[string(rb)]
		switch {
		case !aok:
			return b.src.errAt(at, "model.merges[%d] %q %q names %q, which is not in the vocabulary", rank, x, y, x)
		case !bok:
			return b.src.errAt(at, "model.merges[%d] %q %q names %q, which is not in the vocabulary", rank, x, y, y)
		}
		buf = append(append(buf[:0], ra...), bytes.TrimPrefix(rb, prefix)...)
		merged, ok := v.ids[string(buf)]
		if !ok {
			return b.src.errAt(at, "model.merges[%d] %q %q makes %q, which is not in the vocabulary", rank, x, y, buf)
		}
		// A pair listed twice takes its later rank, as the reference
		// library's table does.
		v.merges.put(pairKey(uint32(a), uint32(bb)), uint64(rank)<<32|uint64(merged))
		return nil
	})
}

// someIDs returns the ids of the tokens that a load looks up by their
// bytes (one-byte tokens, byte-fallback tokens, the unk token), found in
// one pass over the vocabulary.
func (v *Vocab) someIDs(unk *string, fallback bool) map[string]int {
	want := map[string]bool{}
	longest := 1
	if unk != nil {
		want[*unk] = true
		longest = max(longest, len(*unk))
	}
	if fallback {
		for c := 0; c < 256; c++ {
			want[fmt.Sprintf("<0x%02X>", c)] = true
		}
		longest = max(longest, 6)
	}
	out := make(map[string]int, 256+len(want))
	for id, t := range v.tokens {
		switch {
		case t == nil || len(t) > longest:
		case len(t) == 1:
			out[string(t)] = id
		case want[string(t)]:
			out[string(t)] = id
		}
	}
	return out
}

// findSpecialsBundle lists a bundle's special added tokens.
func (v *Vocab) findSpecialsBundle() {
	v.specials = v.specials[:0]
	for _, a := range v.pipe.added.toks {
		if a.special {
			v.specials = append(v.specials, Special{ID: int(a.id), Text: string(a.content)})
		}
	}
	sort.Slice(v.specials, func(i, j int) bool { return v.specials[i].ID < v.specials[j].ID })
}

// placeholderWindow: a model_max_length at least this large is the
// "no limit" placeholder that configs carry (1e30 and the like).
const placeholderWindow = 1 << 40

func configWindow(name string, data []byte) (int, error) {
	var cfg struct {
		ModelMaxLength *json.Number `json:"model_max_length"`
	}
	d := json.NewDecoder(bytes.NewReader(data))
	d.UseNumber()
	if err := d.Decode(&cfg); err != nil {
		return 0, &posError{name, 0, "not valid JSON: " + err.Error()}
	}
	if cfg.ModelMaxLength == nil {
		return 0, nil
	}
	f, err := cfg.ModelMaxLength.Float64()
	if err != nil || math.IsNaN(f) || f < 0 {
		return 0, &posError{name, 0, fmt.Sprintf("model_max_length %s is not a token count", *cfg.ModelMaxLength)}
	}
	if f >= placeholderWindow {
		return 0, nil
	}
	return int(f), nil
}

// family names a bundle's kind in words, for reports.
func family(byteLevel bool, pre, norm json.RawMessage) string {
	switch {
	case byteLevel:
		return "byte-level"
	case strings.Contains(string(pre), `"Metaspace"`) || strings.Contains(string(norm), "\u2581") || strings.Contains(string(norm), `\u2581`):
		return "metaspace"
	}
	return "character-level"
}

// Family returns the kind of vocabulary in words: "byte-level" (GPT-2 and
// the like), "metaspace" (spaces spelled as U+2581), "character-level" or
// "sentencepiece-bpe" (a SentencePiece model file).
func (v *Vocab) Family() string {
	if v.spm != nil {
		return spmFamily
	}
	if v.pipe == nil {
		return "byte-level"
	}
	return v.pipe.family
}

// FromBundle reports whether v came from a tokenizer bundle, whose
// pipeline (normalizer, pre-tokenizer, added tokens) replaces the GPT-2
// split rule: the rule's context-free pre-token edges do not hold.
func (v *Vocab) FromBundle() bool { return v.pipe != nil }

// Template returns the ids that the bundle's post-processor adds to every
// single sequence (a start token, say), in order; nil when none. For a
// SentencePiece model it is its start piece, when it has one.
func (v *Vocab) Template() []int {
	if v.spm != nil {
		return v.spm.template()
	}
	if v.pipe == nil || v.pipe.template == nil {
		return []int{}
	}
	return v.pipe.template
}

// Added returns the bundle's added tokens (special or not) in id order;
// a SentencePiece model's user-defined pieces.
func (v *Vocab) Added() []Special {
	if v.spm != nil {
		return v.spm.added()
	}
	if v.pipe == nil {
		return nil
	}
	out := make([]Special, 0, len(v.pipe.added.toks))
	for _, a := range v.pipe.added.toks {
		out = append(out, Special{ID: int(a.id), Text: string(a.content)})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].ID < out[j].ID })
	return out
}

// ByteFallback reports whether characters with no token become <0xNN>
// byte tokens.
func (v *Vocab) ByteFallback() bool { return v.model.fallback }

// IsByteFallback reports whether id is one of the <0xNN> byte tokens of a
// vocabulary with byte fallback.
func (v *Vocab) IsByteFallback(id int) bool {
	if !v.model.fallback || id < 0 || id >= len(v.tokens) || len(v.tokens[id]) != 1 {
		return false
	}
	return v.model.fallbackID[v.tokens[id][0]] == uint32(id)
}

// Spelling returns token id as the vocabulary file writes it (in the byte
// alphabet for a byte-level vocabulary).
func (v *Vocab) Spelling(id int) (string, bool) {
	if id < 0 || id >= len(v.tokens) || v.tokens[id] == nil {
		return "", false
	}
	if v.spell != nil && v.spell[id] != nil {
		return string(v.spell[id]), true
	}
	if v.pipe != nil && v.pipe.isAdded(id) {
		return string(v.tokens[id]), true
	}
	return SpellBytes(v.tokens[id]), true
}

// Distinct returns the number of ids that name a token (a bundle's ids may
// leave holes).
func (v *Vocab) Distinct() int {
	n := 0
	for _, t := range v.tokens {
		if t != nil {
			n++
		}
	}
	return n
}
