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
		s.spmNorm = sp.normalize(s.spmNorm[:0], seg, nil)
		s.spmIDs = sp.encodeSteps(s.spmIDs[:0], s.spmNorm)
		for _, id := range s.spmIDs {
			dst = append(dst, T(id))
		}
	})
	return dst
}

// spmCount counts the SentencePiece tokens of text into st.
func (e *Encoder) spmCount(s *state, text []byte, st *Stats) {
	s.spmCounted = spmAppend(e, s, s.spmCounted[:0], text, st)
	st.Tokens = len(s.spmCounted)
}
