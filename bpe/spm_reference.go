package bpe

import (
	"container/heap"

	"morsel/bpe/spmodel"
)

// encodeSteps appends the ids of a normalized text to dst by the
// reference encoder's own steps, on strings: a heap of candidate pairs,
// each checked when it is reached, and the split of every unused piece
// into the two parts it was last seen made from. The encoder uses it for
// models with unused pieces, whose splits depend on the whole text; the
// tests hold the fast path to it.
func (sp *spmModel) encodeSteps(dst []uint32, norm []byte) []uint32 {
	type symbol struct {
		start, end int
		prev, next int
		frozen     bool
	}
	var syms []symbol
	for pos := 0; pos < len(norm); {
		_, n := sp.user.match(norm[pos:])
		frozen := n > 0
		if !frozen {
			n = min(len(norm)-pos, max(1, utf8Len(norm[pos])))
		}
		syms = append(syms, symbol{start: pos, end: pos + n, prev: len(syms) - 1, next: len(syms) + 1, frozen: frozen})
		pos += n
	}
	if len(syms) == 0 {
		return dst
	}
	syms[len(syms)-1].next = -1
	text := func(i int) string { return string(norm[syms[i].start:syms[i].end]) }
	agenda := &spmAgenda{}
	split := map[string][2]string{}
	add := func(l, r int) {
		if l < 0 || r < 0 || syms[l].frozen || syms[r].frozen {
			return
		}
		piece := string(norm[syms[l].start:syms[r].end])
		id, ok := sp.pieces[piece]
		if !ok {
			return
		}
		heap.Push(agenda, spmPair{left: l, right: r, score: sp.m.Pieces[id].Score, size: len(piece)})
		if sp.m.Pieces[id].Type == spmodel.Unused {
			split[piece] = [2]string{text(l), text(r)}
		}
	}
	for i := 1; i < len(syms); i++ {
		add(i-1, i)
	}
	for agenda.Len() > 0 {
		top := heap.Pop(agenda).(spmPair)
		l, r := &syms[top.left], &syms[top.right]
		if l.end == l.start || r.end == r.start || (l.end-l.start)+(r.end-r.start) != top.size {
			continue
		}
		l.end = r.end
		l.next = r.next
		if r.next >= 0 {
			syms[r.next].prev = top.left
		}
		r.start = r.end
		add(l.prev, top.left)
		add(top.left, l.next)
	}
	prevUnk := false
	var emit func(w string)
	emit = func(w string) {
		id := sp.pieceID(w)
		if sp.m.Pieces[id].Type == spmodel.Unused {
			if parts, ok := split[w]; ok {
				emit(parts[0])
				emit(parts[1])
				return
			}
		}
		t := sp.m.Pieces[id].Type
		isUnk := t == spmodel.Unknown
		switch {
		case t == spmodel.Control:
			dst = append(dst, id)
		case isUnk && sp.m.ByteFallback:
			for i := 0; i < len(w); i++ {
				dst = append(dst, sp.byteID[w[i]])
			}
		case isUnk && prevUnk:
			// a run of unknown symbols is one unknown piece
		default:
			dst = append(dst, id)
		}
		prevUnk = isUnk
	}
	for i := 0; i >= 0; i = syms[i].next {
		emit(text(i))
	}
	return dst
}

// pieceID looks a symbol up as the reference does: the reserved pieces
// first, then the mergeable ones, else the unknown piece.
func (sp *spmModel) pieceID(w string) uint32 {
	if id, ok := sp.reserved[w]; ok {
		return id
	}
	if id, ok := sp.pieces[w]; ok {
		return id
	}
	return sp.unk
}

// utf8Len returns the length of the UTF-8 sequence that lead byte b
// begins, by its high four bits alone, as the reference reckons it.
func utf8Len(b byte) int { return int(utf8Lens[b>>4]) }

var utf8Lens = [16]uint8{1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 2, 2, 3, 4}

// spmPair is a candidate merge of the reference encoder.
type spmPair struct {
	left, right int
	score       float32
	size        int
}

// spmAgenda pops the highest score first, the leftmost among equals.
type spmAgenda []spmPair

func (h spmAgenda) Len() int { return len(h) }
func (h spmAgenda) Less(i, j int) bool {
	return h[i].score > h[j].score || (h[i].score == h[j].score && h[i].left < h[j].left)
}
func (h spmAgenda) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *spmAgenda) Push(x any)   { *h = append(*h, x.(spmPair)) }
func (h *spmAgenda) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}
