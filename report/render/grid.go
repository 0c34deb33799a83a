package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"morsel/internal/screen"
)

// Format is an output format.
type Format string

// The output formats. Not every command offers every one.
const (
	Table    Format = "table"
	JSON     Format = "json"
	CSV      Format = "csv"
	Markdown Format = "md"
	HTML     Format = "html"
)

// ParseFormat returns the format named s, if it is one of allowed.
func ParseFormat(s string, allowed ...Format) (Format, error) {
	names := make([]string, len(allowed))
	for i, f := range allowed {
		if string(f) == s {
			return f, nil
		}
		names[i] = string(f)
	}
	return "", fmt.Errorf("format %q: want one of %s", s, strings.Join(names, ", "))
}

// Grid is a titled table of text cells: the unit the table, CSV and
// Markdown renderers share. Right lists the columns that hold numbers.
type Grid struct {
	Title  string
	Header []string
	Rows   [][]string
	Right  []int
	Keep   []int    // left-aligned columns that the table view never cuts (bars)
	Notes  []string // lines printed under the table view
	// Sources says that the first column names documents, which the
	// table, Markdown and HTML views show relative to the view's Base.
	Sources bool
	// Narrow is the same table in another shape, which the table view
	// shows instead when this one does not fit the view's width.
	Narrow *Grid
}

// AddRow appends a row of cells.
func (g *Grid) AddRow(cells ...string) { g.Rows = append(g.Rows, cells) }

// WriteTable renders the grid for a terminal: a title line, a header rule,
// then the rows, with number columns aligned right, fitted to the width of
// the View that w carries (cells cut in the middle where they must be).
func (g *Grid) WriteTable(w io.Writer) error {
	v := ViewOf(w)
	t := g.screenTable(v)
	if g.Narrow != nil && v.Width > 0 && t.Width(0) > v.Width {
		return g.Narrow.WriteTable(w)
	}
	if g.Title != "" {
		for _, line := range screen.Wrap(Clean(g.Title), v.Width) {
			if _, err := fmt.Fprintf(w, "%s\n", line); err != nil {
				return err
			}
		}
	}
	if err := t.Write(w, v.Width); err != nil {
		return err
	}
	for _, n := range g.Notes {
		for _, line := range screen.Wrap(Clean(n), v.Width) {
			if _, err := fmt.Fprintln(w, line); err != nil {
				return err
			}
		}
	}
	return nil
}

// screenTable returns the grid's cells as the table view lays them out.
func (g *Grid) screenTable(v View) *screen.Table {
	t := &screen.Table{Header: cleanAll(g.Header), Rows: g.shownRows(v), Right: columnSet(g.Right, len(g.Header)), Keep: columnSet(g.Keep, len(g.Header))}
	return t
}

// shownRows returns the rows as the table and Markdown views show them:
// every cell Clean, sources relative to the view's Base.
func (g *Grid) shownRows(v View) [][]string {
	out := make([][]string, len(g.Rows))
	for i, r := range g.Rows {
		c := make([]string, len(r))
		for j, cell := range r {
			if j == 0 && g.Sources && v.Base != "" {
				cell = screen.Rel(cell, v.Base)
			}
			c[j] = Clean(cell)
		}
		out[i] = c
	}
	return out
}

// cleanAll returns the strings Clean.
func cleanAll(ss []string) []string {
	out := make([]string, len(ss))
	for i, s := range ss {
		out[i] = Clean(s)
	}
	return out
}

func columnSet(cols []int, n int) []bool {
	set := make([]bool, n)
	for _, c := range cols {
		if c >= 0 && c < n {
			set[c] = true
		}
	}
	return set
}

// WriteCSV writes the header and rows as RFC 4180 CSV.
func (g *Grid) WriteCSV(w io.Writer) error {
	rw, err := NewRowWriter(w, g.Header)
	if err != nil {
		return err
	}
	for _, r := range g.Rows {
		if err := rw.Write(r...); err != nil {
			return err
		}
	}
	return rw.Flush()
}

// A RowWriter writes CSV rows one at a time, as a Grid's WriteCSV writes
// them all, for a table too long to hold.
type RowWriter struct{ cw *csv.Writer }

// NewRowWriter starts a CSV table under header.
func NewRowWriter(w io.Writer, header []string) (*RowWriter, error) {
	rw := &RowWriter{cw: csv.NewWriter(w)}
	return rw, rw.Write(header...)
}

// Write writes one row, each cell as CSVCell gives it.
func (rw *RowWriter) Write(cells ...string) error {
	for i, c := range cells {
		cells[i] = CSVCell(c)
	}
	return rw.cw.Write(cells)
}

// Flush writes out what is buffered and returns the first write error.
func (rw *RowWriter) Flush() error {
	rw.cw.Flush()
	return rw.cw.Error()
}

// WriteMarkdown writes the grid as a Markdown (GFM) table under a heading.
func (g *Grid) WriteMarkdown(w io.Writer) error {
	var b strings.Builder
	if g.Title != "" {
		fmt.Fprintf(&b, "### %s\n\n", mdCell(g.Title))
	}
	right := map[int]bool{}
	for _, c := range g.Right {
		right[c] = true
	}
	b.WriteString("|")
	for _, h := range g.Header {
		fmt.Fprintf(&b, " %s |", mdCell(h))
	}
	b.WriteString("\n|")
	for i := range g.Header {
		if right[i] {
			b.WriteString(" ---: |")
		} else {
			b.WriteString(" --- |")
		}
	}
	b.WriteString("\n")
	for _, r := range g.shownRows(ViewOf(w)) {
		b.WriteString("|")
		for _, c := range r {
			fmt.Fprintf(&b, " %s |", mdCell(c))
		}
		b.WriteString("\n")
	}
	for _, n := range g.Notes {
		fmt.Fprintf(&b, "\n%s\n", mdCell(n))
	}
	b.WriteString("\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// mdCell returns s Clean, with what Markdown would read as markup escaped.
func mdCell(s string) string { return mdEscaper.Replace(Clean(s)) }

var mdEscaper = strings.NewReplacer("|", `\|`, "<", "&lt;", ">", "&gt;")

// WriteJSON writes v as indented JSON followed by a newline.
func WriteJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}

// AppendJSONFloat appends x as encoding/json writes it: the shortest
// decimal that reads back as x, without an exponent from 1e-6 to 1e21.
// The rare others go through encoding/json itself, which fails on NaN and
// the infinities, as JSON cannot hold them.
func AppendJSONFloat(b []byte, x float64) ([]byte, error) {
	if a := math.Abs(x); a != 0 && (a < 1e-6 || a >= 1e21) || math.IsNaN(x) || math.IsInf(x, 0) {
		j, err := json.Marshal(x)
		return append(b, j...), err
	}
	return strconv.AppendFloat(b, x, 'f', -1, 64), nil
}

// WriteGrids renders grids one after another in a text format (table, csv
// or md). CSV writes the first grid only, since one CSV file holds one
// table; the others are for the table and Markdown views.
func WriteGrids(w io.Writer, f Format, grids ...*Grid) error {
	for i, g := range grids {
		var err error
		switch f {
		case CSV:
			if i > 0 {
				return nil
			}
			err = g.WriteCSV(w)
		case Markdown:
			err = g.WriteMarkdown(w)
		default:
			if i > 0 {
				fmt.Fprintln(w)
			}
			err = g.WriteTable(w)
		}
		if err != nil {
			return err
		}
	}
	return nil
}
