package bpe

import "unicode/utf8"

// modelOpts are the settings of a bundle's BPE model beyond the vocabulary
// and the merges. The zero value is plain byte-level BPE, as GPT-2 uses.
type modelOpts struct {
	// charLevel: a pre-token starts as one symbol per UTF-8 character,
	// looked up by its bytes, rather than one per byte.
	charLevel bool
	// unk is the id given to a character with no token (and no byte
	// fallback), or -1 when such a character is dropped.
	unk     int32
	fuseUnk bool // a run of unknown characters is one unk token
	// fallback: a character with no token becomes its bytes' <0xNN> tokens.
	fallback   bool
	fallbackID [256]uint32 // the <0xNN> token of each byte, noToken when there is none
	// asciiID is one more than the token of each ASCII character alone,
	// or 0 (the zero value) when there is none or when a prefix or suffix
	// makes the key differ: the commonest first symbols, found without
	// hashing.
	asciiID [utf8.RuneSelf]uint32
	// ignoreMerges: a pre-token that is itself a token is that token.
	ignoreMerges bool
	// prefix goes before every symbol but a pre-token's first; suffix after
	// its last (both as raw bytes).
	prefix, suffix string
}

// plainModel reports whether v's pre-tokens start as one symbol per byte
// with no lookups: the fast path, and the only one GPT-2 needs.
func (v *Vocab) plainModel() bool {
	m := &v.model
	return !m.charLevel && !m.ignoreMerges && m.prefix == "" && m.suffix == ""
}

// initial appends the starting symbols of pre-token p to syms.
func (s *state) initial(syms []uint32, p []byte) []uint32 {
	v := s.v
	if v.spm != nil {
		return v.spm.initial(syms, p) // spm_fast.go
	}
	if !v.slow {
		for _, b := range p {
			syms = append(syms, v.byteID[b])
		}
		return syms
	}
	m := &v.model
	lastUnk := false
	for i := 0; i < len(p); {
		if c := p[i]; c < utf8.RuneSelf && m.asciiID[c] != 0 {
			syms = append(syms, m.asciiID[c]-1)
			lastUnk = false
			i++
			continue
		}
		n := 1
		if m.charLevel {
			if _, n = utf8.DecodeRune(p[i:]); n < 1 {
				n = 1
			}
		}
		unit := p[i : i+n]
		var id int
		var ok bool
		if (i == 0 || m.prefix == "") && (i+n < len(p) || m.suffix == "") {
			id, ok = v.ids[string(unit)]
		} else {
			k := s.key[:0]
			if i > 0 {
				k = append(k, m.prefix...)
			}
			k = append(k, unit...)
			if i+n == len(p) {
				k = append(k, m.suffix...)
			}
			s.key = k
			id, ok = v.ids[string(k)]
		}
		i += n
		switch {
		case ok:
			syms = append(syms, uint32(id))
			lastUnk = false
		case m.fallback && m.fallbackAll(unit):
			for _, b := range unit {
				syms = append(syms, m.fallbackID[b])
			}
			lastUnk = false
		case m.unk >= 0:
			if !(m.fuseUnk && lastUnk) {
				syms = append(syms, uint32(m.unk))
			}
			lastUnk = true
		}
	}
	return syms
}

// whole reports whether pre-token p is itself a token, and if so leaves
// its id alone in s.out.
func (s *state) whole(p []byte) bool {
	id, ok := s.v.ids[string(p)]
	if ok {
		s.out = append(s.out[:0], uint32(id))
	}
	return ok
}

// noToken marks a byte with no <0xNN> token.
const noToken = ^uint32(0)

// fallbackAll reports whether every byte of unit has its <0xNN> token.
func (m *modelOpts) fallbackAll(unit []byte) bool {
	for _, b := range unit {
		if m.fallbackID[b] == noToken {
			return false
		}
	}
	return true
}
