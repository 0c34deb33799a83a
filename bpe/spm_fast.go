package bpe

import (
	"bytes"

	"morsel/bpe/spmodel"
)

// The fast path of SentencePiece encoding runs the engine's merge loop
// and word caches (merge.go) on the normalized text cut where no piece
// can span (cutRule): the symbols start as characters (initial), merge by
// the score-ordered table, and then become ids as the reference emits
// them (spmFinish).

// initial appends p's characters as symbols, a user-defined piece as one
// (it never merges), as the reference splits a text before merging.
func (sp *spmModel) initial(syms []uint32, p []byte) []uint32 {
	for i := 0; i < len(p); {
		c := p[i]
		if sp.user.first[c] != nil {
			if id, n := sp.user.match(p[i:]); n > 0 {
				syms = append(syms, id)
				i += n
				continue
			}
		}
		if c < 0x80 {
			syms = append(syms, sp.asciiSym[c])
			i++
			continue
		}
		n := min(utf8Len(c), len(p)-i)
		id, ok := sp.charID[string(p[i:i+n])]
		if !ok {
			id = noSym
		}
		syms = append(syms, id)
		i += n
	}
	return syms
}

// spmFinish turns the merged symbols of p into the ids the reference
// emits: a piece as the id its text looks up (a reserved piece of the same
// text first), a character with no piece as its bytes' pieces under byte
// fallback, else as the unknown id, once for a run of them.
func (s *state) spmFinish(p []byte, syms []uint32) []uint32 {
	sp := s.v.spm
	out := s.spmOut[:0]
	pos, prevUnk := 0, false
	for _, sym := range syms {
		var id uint32
		var n int
		if sym < uint32(len(sp.lens)) {
			id, n = sp.resolved[sym], int(sp.lens[sym])
		} else {
			if sym == noSym {
				n = min(utf8Len(p[pos]), len(p)-pos)
			} else {
				n = len(sp.chars[sym-uint32(len(sp.lens))])
			}
			id = sp.pieceID(string(p[pos : pos+n]))
		}
		unk := id == sp.unk
		switch {
		case unk && sp.m.ByteFallback:
			for _, b := range p[pos : pos+n] {
				out = append(out, sp.byteID[b])
			}
		case unk && prevUnk:
		default:
			out = append(out, id)
		}
		prevUnk = unk
		pos += n
	}
	s.spmOut = out
	return out
}

// prepareFast fills what the fast path needs beyond the merge table.
func (sp *spmModel) prepareFast(v *Vocab) {
	ps := sp.m.Pieces
	sp.lens = make([]int32, len(ps))
	sp.resolved = make([]uint32, len(ps))
	for id, p := range ps {
		sp.lens[id] = int32(len(p.Text))
		sp.resolved[id] = sp.pieceID(p.Text)
	}
	sp.charID = map[string]uint32{}
	for text, id := range sp.pieces {
		if ps[id].Type != spmodel.UserDefined && len([]rune(text)) == 1 {
			sp.charID[text] = id
		}
	}
	for c, id := range sp.charSyms {
		sp.charID[c] = id
	}
	v.merges = sp.ranks
	// The ASCII characters start most merges of most texts: their pairs
	// get the compact table's dense square.
	v.pairs = newPairTable(&v.merges)
	if v.pairs != nil {
		var hot []uint32
		for _, s := range sp.asciiSym {
			if s != noSym {
				hot = append(hot, s)
			}
		}
		v.pairs.setHot(hot)
	}
	// A one-byte pre-token is one character: its id is looked up, not
	// merged (merge.go's shortcut).
	for b := range 256 {
		v.byteID[b] = sp.unk
		if b < 0x80 {
			if ids := sp.encodeSteps(nil, []byte{byte(b)}); len(ids) == 1 {
				v.byteID[b] = ids[0]
			}
		}
	}
	// A run of unknown characters is one unknown id across a cut too; a
	// cut falls next to a mark, so cutting needs the mark to be a piece
	// when there is no byte fallback.
	if _, ok := sp.charID[sp.mark]; !ok && !sp.m.ByteFallback {
		sp.cut = cutNone
	}
	sp.inputCut = sp.inputCutOK()
	sp.findApart()
}

// findApart fills apart: two ASCII characters that are symbols and that
// no piece holds side by side can be merged apart, as no merge can join
// them and no user-defined piece spans them. The merges on each side go
// in the same order as in the whole, since none changes the other side's
// pairs.
func (sp *spmModel) findApart() {
	var joined [128][2]uint64
	for _, p := range sp.m.Pieces {
		for i := 0; i+1 < len(p.Text); i++ {
			if a, b := p.Text[i], p.Text[i+1]; a < 0x80 && b < 0x80 {
				joined[a][b>>6] |= 1 << (b & 63)
			}
		}
	}
	for a := range 128 {
		for b := range 128 {
			if sp.asciiSym[a] != noSym && sp.asciiSym[b] != noSym && joined[a][b>>6]>>(b&63)&1 == 0 {
				sp.apart[a][b>>6] |= 1 << (b & 63)
				sp.anyApart = true
			}
		}
	}
}

// apartAt returns the first place in p, from 1 on, where its two sides
// merge apart (see findApart), or len(p).
func (sp *spmModel) apartAt(p []byte) int {
	for k := 1; k < len(p); k++ {
		if a, b := p[k-1], p[k]; a < 0x80 && b < 0x80 && sp.apart[a][b>>6]>>(b&63)&1 != 0 {
			return k
		}
	}
	return len(p)
}

// nextCut returns the end of the stretch of norm that starts at i and
// merges apart from the rest.
func (sp *spmModel) nextCut(norm []byte, i int) int {
	mark := sp.mark
	switch sp.cut {
	case cutBeforeMarks:
		if mark == "\u2581" {
			// The commonest case, scanned by hand: a piece is a few
			// bytes long, shorter than bytes.Index takes to set up.
			for j := i + 1; j+2 < len(norm); j++ {
				if norm[j] == 0xe2 && norm[j+1] == 0x96 && norm[j+2] == 0x81 && !bytes.HasSuffix(norm[:j], []byte(mark)) {
					return j
				}
			}
			return len(norm)
		}
		for j := i + 1; j < len(norm); {
			k := bytes.Index(norm[j:], []byte(mark))
			if k < 0 {
				break
			}
			j += k
			if !bytes.HasSuffix(norm[:j], []byte(mark)) {
				return j
			}
			j += len(mark)
		}
	case cutAfterMarks:
		for j := i; j < len(norm); {
			k := bytes.Index(norm[j:], []byte(mark))
			if k < 0 {
				break
			}
			j += k + len(mark)
			if j < len(norm) && !bytes.HasPrefix(norm[j:], []byte(mark)) {
				return j
			}
		}
	}
	return len(norm)
}

// mergeShortPairs is mergeShort for a vocabulary with the compact merge
// table: the same merges (the lowest rank first, the leftmost on ties),
// with each pair's rank and merge in one word and the pairs shifted in
// place, which for a few dozen symbols costs less than copying three
// slices a merge.
func (s *state) mergeShortPairs(p []byte, pt *pairTable) []uint32 {
	syms := s.v.spm.initial(s.syms[:0], p)
	n := len(syms)
	if cap(s.pairs) < n {
		s.pairs = make([]uint64, n)
	}
	pairs := s.pairs[:max(n-1, 0)]
	for i := range pairs {
		r, m := pt.get(syms[i], syms[i+1])
		pairs[i] = uint64(r)<<32 | uint64(m)
	}
	for len(pairs) > 0 {
		best, at := uint64(noRank), -1
		for i, e := range pairs {
			if e>>32 < best {
				best, at = e>>32, i
			}
		}
		if at < 0 {
			break
		}
		syms[at] = uint32(pairs[at])
		copy(syms[at+1:], syms[at+2:])
		syms = syms[:len(syms)-1]
		copy(pairs[at:], pairs[at+1:])
		pairs = pairs[:len(pairs)-1]
		if at > 0 {
			r, m := pt.get(syms[at-1], syms[at])
			pairs[at-1] = uint64(r)<<32 | uint64(m)
		}
		if at < len(pairs) {
			r, m := pt.get(syms[at], syms[at+1])
			pairs[at] = uint64(r)<<32 | uint64(m)
		}
	}
	s.syms = syms
	return syms
}
