package report

import "sort"

func Per(a, b float64) float64 {
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

func Round2(x float64) float64 { return float64(int64(x*100+0.5)) / 100 }
