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
			dst = spmAppendPiece(s, dst, norm[i:j])
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
			st.Tokens += s.spmCountPiece(norm[i:j])
			i = j
		}
	})
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
