package render

import (
	"fmt"
	"strconv"
	"strings"

	"morsel/report"
)

// SkipGrid lists every skipped input with its reason and detail.
func SkipGrid(skips []report.Skipped) *Grid {
	return skipList(fmt.Sprintf("Not counted (%s)", Num(len(skips))), skips)
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
