package bpe

import (
	"runtime"
	"strings"
	"sync/atomic"
)

// A long text under most SentencePiece models can be cut before it is
// normalized, and its stretches normalized and encoded apart, on several
// cores or as it streams in, with the ids of the whole. The cut is at an
// ASCII space between two ASCII bytes the normalizer keeps as they are;
// the space is dropped, because the right side's dummy prefix gives back
// the mark it becomes:
//   - no rule of the character map and no user-defined piece holds a
//     space, so none spans the cut, and the bytes next to it normalize
//     alone as they do in the whole text;
//   - the left side ends in a character that is no white space, so
//     dropping white space at its end and collapsing runs change nothing
//     there, and the right side starts with one, so nothing is dropped at
//     its start;
//   - the whole text's normalized form is cut before that mark (cutRule),
//     so the two sides merge apart there too.
// Models that strip no dummy prefix, put white space at the end of
// pieces, or keep unused pieces are encoded whole.

// inputCutOK reports whether the model's texts may be cut as above.
func (sp *spmModel) inputCutOK() bool {
	n := &sp.m.Normalizer
	if sp.cut != cutBeforeMarks || sp.unused || !n.AddDummyPrefix || sp.m.TreatWhitespaceAsSuffix ||
		sp.asciiKind[' '] != asciiSpace || sp.cmap.KeysHold(' ') {
		return false
	}
	for w := range sp.user.ids {
		if strings.IndexByte(w, ' ') >= 0 {
			return false
		}
	}
	return true
}

// inputCutAt reports whether text may be cut at j: text[j] is the space
// dropped between text[:j] and text[j+1:].
func (sp *spmModel) inputCutAt(text []byte, j int) bool {
	return j > 0 && j+1 < len(text) && text[j] == ' ' &&
		text[j-1] < 0x80 && sp.asciiKind[text[j-1]] == asciiCopy &&
		text[j+1] < 0x80 && sp.asciiKind[text[j+1]] == asciiCopy
}

// nextInputCut returns the first place at or after i where text may be
// cut, or len(text); a model that allows no cut has none.
func (sp *spmModel) nextInputCut(text []byte, i int) int {
	if !sp.inputCut {
		return len(text)
	}
	for j := max(i, 1); j+1 < len(text); j++ {
		if text[j] == ' ' && sp.inputCutAt(text, j) {
			return j
		}
	}
	return len(text)
}

// lastInputCut returns the last place in text at from or after where it
// may be cut, or -1.
func (sp *spmModel) lastInputCut(text []byte, from int) int {
	if !sp.inputCut {
		return -1
	}
	for j := len(text) - 2; j > 0 && j >= from; j-- {
		if text[j] == ' ' && sp.inputCutAt(text, j) {
			return j
		}
	}
	return -1
}

// cutsInput reports whether e may cut its texts before normalizing them:
// the model allows it, and no special string the encoder honours or
// counts can span a cut.
func (e *Encoder) cutsInput() bool {
	return e.v.spm != nil && e.v.spm.inputCut && !(e.mode == SpecialsHonor && len(e.specials) > 0) && !e.specialsHoldSpace()
}

// Texts shorter than spmParallelMin are encoded on one core; longer ones
// in stretches of about spmStretch bytes.
const (
	spmParallelMin = 4 << 20
	spmStretch     = 1 << 20
)

// stretches returns the ends of the stretches of text, each at least
// size bytes long but the last: cut places, then len(text).
func (sp *spmModel) stretches(text []byte, size int) []int {
	var ends []int
	for i := 0; i < len(text); {
		j := sp.nextInputCut(text, i+size)
		ends = append(ends, j)
		i = j + 1
	}
	return ends
}

// spmParallel encodes or counts text in stretches of about size bytes on
// up to workers goroutines: each stretch's result goes to do, with its
// index, from a worker state of its own.
func (e *Encoder) spmParallel(text []byte, size, workers int, do func(k int, s *state, stretch []byte)) int {
	ends := e.v.spm.stretches(text, size)
	e.inParallel(nil, len(ends), workers, func(k int, s *state) {
		start := 0
		if k > 0 {
			start = ends[k-1] + 1
		}
		do(k, s, text[start:ends[k]])
	})
	return len(ends)
}

// spmCountCut counts text in stretches on up to workers goroutines, as
// spmCount counts it whole.
func (e *Encoder) spmCountCut(text []byte, size, workers int) Stats {
	var tokens, specials atomic.Int64
	e.spmParallel(text, size, workers, func(_ int, s *state, stretch []byte) {
		var st Stats
		e.spmCount(s, stretch, &st)
		tokens.Add(int64(st.Tokens))
		specials.Add(int64(st.Specials))
	})
	return Stats{Tokens: int(tokens.Load()), Specials: int(specials.Load())}
}

// spmAppendCut appends the ids of text to dst, encoded in stretches on up
// to workers goroutines, as spmAppend encodes it whole.
func spmAppendCut[T int | uint32](e *Encoder, dst []T, text []byte, size, workers int, st *Stats) []T {
	parts := make([][]T, len(text)/size+1)
	var specials atomic.Int64
	n := e.spmParallel(text, size, workers, func(k int, s *state, stretch []byte) {
		var pst Stats
		parts[k] = spmAppend(e, s, []T(nil), stretch, &pst)
		specials.Add(int64(pst.Specials))
	})
	for _, p := range parts[:n] {
		dst = append(dst, p...)
	}
	st.Specials += int(specials.Load())
	return dst
}

// spmWorkers is how many goroutines encode one long text.
func spmWorkers() int { return runtime.GOMAXPROCS(0) }
