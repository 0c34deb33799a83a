package report

import (
	"fmt"
	"sort"
	"strconv"
	"strings"

	"morsel/corpus"
)

// Skipped is an input or record a report did not count, and why.
type Skipped struct {
	Source string `json:"source"`
	Record int    `json:"record"`
	Reason string `json:"reason"`
	Detail string `json:"detail,omitempty"`
	Failed bool   `json:"failed"` // it could not be read (exit status 1), as opposed to left out on purpose
}

// ReasonFailed is the reason given for a document that was read but could
// not be processed (a read error in the middle of a stream, say).
const ReasonFailed = "failed"

// SkipOf returns the report entry for a skip from the walk.
func SkipOf(s *corpus.Skip) Skipped {
	return Skipped{Source: s.Source, Record: s.Record, Reason: s.Reason, Detail: s.Detail, Failed: s.Failed}
}

// FailedDoc returns the report entry for a document whose processing
// failed with err.
func FailedDoc(d *corpus.Document, err error) Skipped {
	return Skipped{Source: d.Source, Record: d.Record, Reason: ReasonFailed, Detail: err.Error(), Failed: true}
}

// Where returns "source" for a whole file and "source:record" for a record.
func Where(source string, record int) string {
	if record == 0 {
		return source
	}
	return source + ":" + strconv.Itoa(record)
}

// SkipGrid lists skipped inputs for the table, CSV and Markdown views.
func SkipGrid(skips []Skipped) *Grid {
	g := &Grid{Title: fmt.Sprintf("Not counted (%d)", len(skips)), Header: []string{"input", "reason", "detail"}}
	for _, s := range skips {
		why := s.Reason
		if s.Failed {
			why += " (failed)"
		}
		g.AddRow(Where(s.Source, s.Record), why, s.Detail)
	}
	return g
}

// AnyFailed reports whether any skip is a failure to read.
func AnyFailed(skips []Skipped) bool {
	for _, s := range skips {
		if s.Failed {
			return true
		}
	}
	return false
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

func ratio(a, b float64) float64 {
	if b == 0 {
		return 0
	}
	return a / b
}

// Spread is the distribution of a per-document figure.
type Spread struct {
	Min    int `json:"min"`
	Median int `json:"median"`
	P90    int `json:"p90"`
	P99    int `json:"p99"`
	Max    int `json:"max"`
}

// SpreadOf returns the spread of xs by the nearest-rank method (the p-th
// percentile is the smallest value with at least p% of values at or below
// it). It sorts a copy; an empty slice gives zeros.
func SpreadOf(xs []int) Spread {
	if len(xs) == 0 {
		return Spread{}
	}
	s := append([]int(nil), xs...)
	sort.Ints(s)
	rank := func(p float64) int {
		k := int(p/100*float64(len(s)) + 0.999999999)
		if k < 1 {
			k = 1
		}
		if k > len(s) {
			k = len(s)
		}
		return s[k-1]
	}
	return Spread{Min: s[0], Median: rank(50), P90: rank(90), P99: rank(99), Max: s[len(s)-1]}
}
