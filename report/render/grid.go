package render

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"
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
	Notes  []string // lines printed under the table view
}

// AddRow appends a row of cells.
func (g *Grid) AddRow(cells ...string) { g.Rows = append(g.Rows, cells) }

// WriteTable renders the grid for a terminal: a title line, a header rule,
// then the rows, with number columns aligned right.
func (g *Grid) WriteTable(w io.Writer) error {
	if g.Title != "" {
		if _, err := fmt.Fprintf(w, "%s\n", g.Title); err != nil {
			return err
		}
	}
	align := make([]tw.Align, len(g.Header))
	for i := range align {
		align[i] = tw.AlignLeft
	}
	for _, c := range g.Right {
		if c < len(align) {
			align[c] = tw.AlignRight
		}
	}
	t := tablewriter.NewTable(w,
		tablewriter.WithRenderer(renderer.NewBlueprint(tw.Rendition{
			Borders: tw.BorderNone,
			Symbols: tw.NewSymbols(tw.StyleLight),
			Settings: tw.Settings{
				Separators: tw.Separators{BetweenColumns: tw.Off, ShowHeader: tw.On},
				Lines:      tw.Lines{ShowHeaderLine: tw.On},
			},
		})),
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithTrimSpace(tw.Off),
		tablewriter.WithHeaderAlignmentConfig(tw.CellAlignment{PerColumn: align}),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{PerColumn: align}),
		tablewriter.WithRowAutoWrap(tw.WrapNone),
	)
	t.Header(toAny(g.Header)...)
	for _, r := range g.Rows {
		if err := t.Append(toAny(r)...); err != nil {
			return err
		}
	}
	if err := t.Render(); err != nil {
		return err
	}
	for _, n := range g.Notes {
		if _, err := fmt.Fprintln(w, n); err != nil {
			return err
		}
	}
	return nil
}

func toAny(s []string) []any {
	out := make([]any, len(s))
	for i, v := range s {
		out[i] = v
	}
	return out
}

// WriteCSV writes the header and rows as RFC 4180 CSV.
func (g *Grid) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(g.Header); err != nil {
		return err
	}
	if err := cw.WriteAll(g.Rows); err != nil {
		return err
	}
	return cw.Error()
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
	for _, r := range g.Rows {
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

func mdCell(s string) string {
	r := strings.NewReplacer("|", `\|`, "\n", " ", "\r", " ", "<", "&lt;", ">", "&gt;")
	return r.Replace(s)
}

// WriteJSON writes v as indented JSON followed by a newline.
func WriteJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
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
