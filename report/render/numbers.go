package render

import (
	"fmt"
	"strconv"
	"strings"

	"morsel/report"
)

// SkipGrid lists skipped inputs for the table, CSV and Markdown views.
func SkipGrid(skips []report.Skipped) *Grid {
	g := &Grid{Sources: true, Title: fmt.Sprintf("Not counted (%d)", len(skips)), Header: []string{"input", "reason", "detail"}}
	for _, s := range skips {
		why := s.Reason
		if s.Failed {
			why += " (failed)"
		}
		g.AddRow(report.Where(s.Source, s.Record), why, s.Detail)
	}
	return g
}

// Num formats an integer with thousands separators: 12,345.
func Num[T int | int64 | int32 | uint64](n T) string {
	s := strconv.FormatInt(int64(n), 10)
	neg := strings.HasPrefix(s, "-")
	if neg {
		s = s[1:]
	}
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// Ratio formats a/b with two decimals, or "-" when b is zero.
func Ratio(a, b float64) string {
	if b == 0 {
		return "-"
	}
	return strconv.FormatFloat(a/b, 'f', 2, 64)
}

// Percent formats a/b as a percentage with one decimal, or "-".
func Percent(a, b float64) string {
	if b == 0 {
		return "-"
	}
	return fmt.Sprintf("%.1f%%", 100*a/b)
}
