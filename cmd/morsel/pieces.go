package main

import (
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/internal/textfile"
	"morsel/report/render"
)

func newPieces(sh *shared) *cobra.Command {
	var file string
	c := &cobra.Command{
		Use:   "pieces [TEXT...]",
		Short: "Show how one text splits into tokens: ids, pieces, bytes",
		Long: `pieces encodes one text and lists its tokens: index, id, the piece as readable text
(␣ for a space, ␉ ␊ ␍ for tab, line feed and carriage return, <E3 81> for bytes that are
not a whole UTF-8 character) and its length in bytes, then the totals.

The text is the arguments joined by single spaces, or the file named by --file, or
standard input when neither is given or either is - (as in every command).`,
		Example: `  morsel pieces "Bathyphorus quillandri"
  morsel pieces --file note.txt --format json
  echo "QX-7731-Rb" | morsel pieces`,
		RunE: func(c *cobra.Command, args []string) error {
			f, err := sh.outFormat("pieces", render.Table, render.JSON, render.CSV, render.Markdown)
			if err != nil {
				return err
			}
			if file != "" && len(args) > 0 {
				return usagef("pieces", "give the text as arguments or with --file, not both")
			}
			if len(args) == 1 && args[0] == "-" {
				args = nil // "-" is standard input, as in every command
			}
			if file == "-" {
				file = ""
			}
			var text []byte
			switch {
			case file != "":
				text, err = textfile.ReadSmall(file, corpus.DefaultMaxDocument)
				switch {
				case errors.Is(err, textfile.ErrNotRegular), errors.Is(err, textfile.ErrTooLarge):
					return usagef("pieces", "--file %v", err)
				case err != nil:
					return &inputError{fmt.Errorf("--file: %w", err)}
				}
			case len(args) > 0:
				text = []byte(strings.Join(args, " "))
			default:
				text, err = io.ReadAll(io.LimitReader(sh.stdin, corpus.DefaultMaxDocument+1))
				if err != nil {
					return &inputError{fmt.Errorf("reading standard input: %w", err)}
				}
				if len(text) > corpus.DefaultMaxDocument {
					return &inputError{fmt.Errorf("standard input: more than the %d bytes pieces takes", corpus.DefaultMaxDocument)}
				}
			}
			enc, err := sh.encoder()
			if err != nil {
				return err
			}
			ids, st := enc.EncodeStats(nil, text)
			if st.Specials > 0 && enc.Vocab() != nil && sh.specials != "honor" {
				sh.note("the text holds %d special-token string(s), encoded as ordinary text; --specials honor maps each to its id", st.Specials)
			}
			return writePieces(sh.stdout, f, enc.Vocab(), ids, len(text))
		},
	}
	c.Flags().StringVarP(&file, "file", "f", "", "read the text from this file")
	return c
}

// piecesJSON is the contract of morsel pieces --format json.
type piecesJSON struct {
	Tokens int      `json:"tokens"`
	IDs    []int    `json:"ids"`
	Pieces []string `json:"pieces"` // each piece's text; a piece that is not whole UTF-8 in its readable form
	Hex    []string `json:"hex"`    // each piece's bytes in hex, exact whatever they are
	Bytes  int      `json:"bytes"`
}

func writePieces(w io.Writer, f render.Format, v *bpe.Vocab, ids []int, nbytes int) error {
	if f == render.JSON {
		out := piecesJSON{Tokens: len(ids), IDs: ids, Pieces: []string{}, Hex: []string{}, Bytes: nbytes}
		if out.IDs == nil {
			out.IDs = []int{}
		}
		for _, id := range ids {
			raw, _ := v.Token(id)
			out.Pieces = append(out.Pieces, render.PieceText(raw))
			out.Hex = append(out.Hex, hex.EncodeToString(raw))
		}
		return render.WriteJSON(w, out)
	}
	g := &render.Grid{Header: []string{"#", "id", "piece", "bytes"}, Right: []int{0, 1, 3}}
	for i, id := range ids {
		raw, _ := v.Token(id)
		g.AddRow(fmt.Sprint(i), fmt.Sprint(id), render.Readable(raw), fmt.Sprint(len(raw)))
	}
	sum := &render.Grid{Header: []string{"tokens", "bytes", "bytes per token"}, Right: []int{0, 1, 2}}
	sum.AddRow(render.Num(len(ids)), render.Num(nbytes), render.Ratio(float64(nbytes), float64(len(ids))))
	info := v.Info()
	about := fmt.Sprintf("vocabulary %s: %s tokens, %s merges, %d special", info.Name, render.Num(info.Size), render.Num(info.Merges), len(info.Specials))
	if info.Window > 0 {
		about += fmt.Sprintf(", %s-token window", render.Num(info.Window))
	}
	sum.Notes = append(sum.Notes, about)
	if f == render.CSV {
		return g.WriteCSV(w)
	}
	return render.WriteGrids(w, f, g, sum)
}
