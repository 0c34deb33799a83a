package screen

import (
	"bufio"
	"io"
	"strings"
)

// A Table is a header and rows of text cells laid out in columns for a
// terminal: one space before the first column, two between columns, a
// rule under the header, and no trailing spaces.
type Table struct {
	Header []string
	Rows   [][]string
	// Right marks the columns aligned right (numbers). A right-aligned
	// column is never cut, since a cut number reads as another number.
	Right []bool
	// Keep marks left-aligned columns that are never cut either (a bar
	// chart, say).
	Keep []bool
}

// minCut is the narrowest a cut column gets, so that a cut name still
// shows a few characters of its head and tail.
const minCut = 12

const (
	indent = 1 // columns before the first cell
	gap    = 2 // columns between cells
)

// Widths returns the width of each column when the table is fitted to
// width columns (0: no limit). Columns give up room, the widest first:
// a column that may be cut down to minCut (or less, if its cells are
// narrower), and every column down to its widest cell, its header then
// wrapping onto more lines, but never below the header's longest word. A
// table that still does not fit keeps those widths and runs past width.
func (t *Table) Widths(width int) []int {
	n := len(t.Header)
	for _, r := range t.Rows {
		n = max(n, len(r))
	}
	nat := make([]int, n)
	cells := make([]int, n)
	floor := make([]int, n)
	for _, r := range t.Rows {
		for i, c := range r {
			cells[i] = max(cells[i], Width(c))
		}
	}
	total := indent + gap*(n-1)
	for i := range nat {
		word := 0
		if i < len(t.Header) {
			nat[i] = Width(t.Header[i])
			for _, w := range strings.Fields(t.Header[i]) {
				word = max(word, Width(w))
			}
		}
		nat[i] = max(nat[i], cells[i])
		total += nat[i]
		floor[i] = max(cells[i], word)
		if t.cuttable(i) {
			floor[i] = max(min(cells[i], minCut), word)
		}
	}
	if width <= 0 {
		return nat
	}
	for total > width {
		widest := -1
		for i := range nat {
			if nat[i] > floor[i] && (widest < 0 || nat[i] > nat[widest]) {
				widest = i
			}
		}
		if widest < 0 {
			break
		}
		nat[widest]--
		total--
	}
	return nat
}

func (t *Table) cuttable(i int) bool {
	return !(i < len(t.Right) && t.Right[i]) && !(i < len(t.Keep) && t.Keep[i])
}

// Write renders the table fitted to width columns (0: as wide as its
// cells), cutting cells that do not fit in the middle.
func (t *Table) Write(w io.Writer, width int) error {
	widths := t.Widths(width)
	bw := bufio.NewWriter(w)
	line := func(cells []string) {
		var b strings.Builder
		b.WriteString(strings.Repeat(" ", indent))
		for i, wd := range widths {
			c := ""
			if i < len(cells) {
				c = cells[i]
			}
			if i > 0 {
				b.WriteString(strings.Repeat(" ", gap))
			}
			right := i < len(t.Right) && t.Right[i]
			b.WriteString(pad(CutMiddle(c, wd), wd, right))
		}
		bw.WriteString(strings.TrimRight(b.String(), " "))
		bw.WriteByte('\n')
	}
	// A header wider than its column wraps at spaces, bottom-aligned so
	// that its last line sits on the rule.
	heads := make([][]string, len(widths))
	rows := 1
	for i := range widths {
		h := ""
		if i < len(t.Header) {
			h = t.Header[i]
		}
		heads[i] = []string{h}
		if Width(h) > widths[i] {
			heads[i] = Wrap(h, widths[i])
		}
		rows = max(rows, len(heads[i]))
	}
	for k := 0; k < rows; k++ {
		cells := make([]string, len(widths))
		for i, h := range heads {
			if j := k - (rows - len(h)); j >= 0 {
				cells[i] = h[j]
			}
		}
		line(cells)
	}
	rule := indent
	for i, wd := range widths {
		rule += wd
		if i > 0 {
			rule += gap
		}
	}
	bw.WriteString(strings.Repeat("─", rule))
	bw.WriteByte('\n')
	for _, r := range t.Rows {
		line(r)
	}
	return bw.Flush()
}

// Wrap breaks text into lines of at most width columns at spaces (0: one
// line). A word longer than width stays whole on its own line.
func Wrap(text string, width int) []string {
	if width <= 0 || Width(text) <= width {
		return []string{text}
	}
	var lines []string
	var cur strings.Builder
	curW := 0
	for _, word := range strings.Fields(text) {
		ww := Width(word)
		if curW > 0 && curW+1+ww > width {
			lines = append(lines, cur.String())
			cur.Reset()
			curW = 0
		}
		if curW > 0 {
			cur.WriteByte(' ')
			curW++
		}
		cur.WriteString(word)
		curW += ww
	}
	if curW > 0 {
		lines = append(lines, cur.String())
	}
	return lines
}

// Width returns the table's width in columns when fitted to width (0: no
// limit).
func (t *Table) Width(width int) int {
	total := indent
	for i, w := range t.Widths(width) {
		total += w
		if i > 0 {
			total += gap
		}
	}
	return total
}
