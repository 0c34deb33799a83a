package bpe

// spmAppend appends the SentencePiece ids of text to dst. Special-token
// strings are cut out and honoured as the encoder's mode says; each piece
// of text between them is normalized and encoded alone.
func spmAppend[T int | uint32](e *Encoder, s *state, dst []T, text []byte, st *Stats) []T {
	sp := e.v.spm
	e.segments(text, st, func(seg []byte, special int) {
		if special >= 0 {
			dst = append(dst, T(e.specIDs[special]))
			return
		}
		s.spmNorm = sp.normalizeFast(s.spmNorm[:0], seg)
		norm := s.spmNorm
		if sp.unused {
			s.spmIDs = sp.encodeSteps(s.spmIDs[:0], norm)
			for _, id := range s.spmIDs {
				dst = append(dst, T(id))
			}
			return
		}
		for i := 0; i < len(norm); {
			j := sp.nextCut(norm, i)
			for p := norm[i:j]; len(p) > 0; {
				k := sp.partEnd(p)
				dst = spmAppendPiece(s, dst, p[:k])
				p = p[k:]
			}
			i = j
		}
	})
	return dst
}

// spmCount counts the SentencePiece tokens of text into st.
func (e *Encoder) spmCount(s *state, text []byte, st *Stats) {
	sp := e.v.spm
	if sp.unused {
		s.spmCounted = spmAppend(e, s, s.spmCounted[:0], text, st)
		st.Tokens = len(s.spmCounted)
		return
	}
	e.segments(text, st, func(seg []byte, special int) {
		if special >= 0 {
			st.Tokens++
			return
		}
		s.spmNorm = sp.normalizeFast(s.spmNorm[:0], seg)
		norm := s.spmNorm
		for i := 0; i < len(norm); {
			j := sp.nextCut(norm, i)
			for p := norm[i:j]; len(p) > 0; {
				k := sp.partEnd(p)
				st.Tokens += s.spmCountPiece(p[:k])
				p = p[k:]
			}
			i = j
		}
	})
}

// partEnd returns the end of the first part of a piece that merges apart
// from the rest: the piece is cut wherever two ASCII characters merge
// apart (findApart), so that a piece seen once, such as a path or a word
// with its punctuation, is mostly parts the word cache holds.
func (sp *spmModel) partEnd(p []byte) int {
	if !sp.anyApart {
		return len(p)
	}
	return sp.apartAt(p)
}

// spmSplit calls fn with the spans of text that merge apart: the stretches
// of the normalized text between cuts, mapped back to the bytes of text
// they came from, so that they tile it.
func (e *Encoder) spmSplit(text []byte, st *Stats, fn func(start, end int, special bool)) {
	sp := e.v.spm
	base := 0
	var orig []int32
	e.segments(text, st, func(seg []byte, special int) {
		defer func() { base += len(seg) }()
		if special >= 0 {
			fn(base, base+len(seg), true)
			return
		}
		orig = orig[:0]
		norm := sp.normalize(nil, seg, &orig)
		last := 0
		if !sp.unused {
			for i := 0; i < len(norm); {
				j := sp.nextCut(norm, i)
				if j < len(norm) {
					if at := int(orig[j]); at > last {
						fn(base+last, base+at, false)
						last = at
					}
				}
				i = j
			}
		}
		if last < len(seg) {
			fn(base+last, base+len(seg), false)
		}
	})
}
