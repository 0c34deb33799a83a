// Package screen lays text out for a terminal of a given width: display
// widths, cells cut in the middle, tables fitted to a width, wrapped notes
// and the one-line progress display.
package screen

import (
	"strings"

	"github.com/rivo/uniseg"
)

// Ellipsis marks where text was cut.
const Ellipsis = "…"

// Width returns the number of terminal columns s takes: wide East Asian
// characters count two, combining marks none.
func Width(s string) int { return uniseg.StringWidth(s) }

// clusters splits s into grapheme clusters with their widths.
func clusters(s string) (parts []string, widths []int) {
	state := -1
	for s != "" {
		var c string
		var w int
		c, s, w, state = uniseg.FirstGraphemeClusterInString(s, state)
		parts = append(parts, c)
		widths = append(widths, w)
	}
	return parts, widths
}

// CutMiddle returns s when it fits in width columns, else its head and tail
// around an ellipsis, taking at most width columns. The head gets the odd
// column, since the start of a name usually says more than its end.
func CutMiddle(s string, width int) string {
	if Width(s) <= width {
		return s
	}
	if width <= 0 {
		return ""
	}
	parts, widths := clusters(s)
	room := width - Width(Ellipsis)
	headRoom := (room + 1) / 2
	var head strings.Builder
	i, used := 0, 0
	for ; i < len(parts) && used+widths[i] <= headRoom; i++ {
		head.WriteString(parts[i])
		used += widths[i]
	}
	// The tail takes what the head left, so a wide character that did not
	// fit the head's half does not waste its column.
	tailRoom := room - used
	j, used := len(parts), 0
	for j > i && used+widths[j-1] <= tailRoom {
		j--
		used += widths[j]
	}
	return head.String() + Ellipsis + strings.Join(parts[j:], "")
}

// Shorten returns s unchanged, and false, when it has at most max
// characters (grapheme clusters); else its first and last characters
// around an ellipsis, max characters in all, and true. Unlike CutMiddle it
// counts characters, not columns, so a word is cut the same way in every
// format.
func Shorten(s string, max int) (string, bool) {
	if max < 3 {
		max = 3
	}
	if len(s) <= max || uniseg.GraphemeClusterCount(s) <= max {
		return s, false
	}
	parts, _ := clusters(s)
	head := (max - 1 + 1) / 2
	tail := max - 1 - head
	return strings.Join(parts[:head], "") + Ellipsis + strings.Join(parts[len(parts)-tail:], ""), true
}

// Chars returns the number of characters (grapheme clusters) in s.
func Chars(s string) int { return uniseg.GraphemeClusterCount(s) }

// pad returns s padded with spaces to width columns, on the left when
// right is true.
func pad(s string, width int, right bool) string {
	n := width - Width(s)
	if n <= 0 {
		return s
	}
	if right {
		return strings.Repeat(" ", n) + s
	}
	return s + strings.Repeat(" ", n)
}
