package render

import (
	"fmt"

	"morsel/internal/screen"
)

// WordShown is the most characters of a word that the table, CSV,
// Markdown and HTML views print; JSON keeps every word whole.
const WordShown = 40

// Pieces of a long split that the views print: the first ones and the
// last ones, around an ellipsis.
const (
	piecesHead = 8
	piecesTail = 3
)

// ShownWord returns word as the views print it: whole when it has at most
// WordShown characters, else its head and tail around "…" and its length.
func ShownWord(word string) string {
	s, cut := screen.Shorten(word, WordShown)
	if !cut {
		return word
	}
	return fmt.Sprintf("%s (%s characters)", s, Num(screen.Chars(word)))
}

// ShownPieces returns a split as the views print it: every piece when
// there are few, else the first and last ones around "…" and the count.
// Each piece is cut as ShownWord cuts a word.
func ShownPieces(pieces []string) []string {
	if len(pieces) <= piecesHead+piecesTail+1 {
		out := make([]string, len(pieces))
		for i, p := range pieces {
			out[i] = ShownWord(p)
		}
		return out
	}
	out := make([]string, 0, piecesHead+piecesTail+2)
	for _, p := range pieces[:piecesHead] {
		out = append(out, ShownWord(p))
	}
	out = append(out, screen.Ellipsis)
	for _, p := range pieces[len(pieces)-piecesTail:] {
		out = append(out, ShownWord(p))
	}
	return append(out, fmt.Sprintf("(%s pieces)", Num(len(pieces))))
}
