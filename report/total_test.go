package report

import (
	"errors"
	"math"
	"testing"
)

// Sum adds up to the int64 bounds and refuses a step past them, leaving
// the total as it was.
func TestSumOverflow(t *testing.T) {
	for _, tc := range []struct {
		total, n int64
		ok       bool
	}{
		{1, 2, true},
		{math.MaxInt64 - 5, 5, true},
		{math.MaxInt64 - 5, 6, false},
		{math.MaxInt64, math.MaxInt64, false},
		{math.MinInt64 + 1, -1, true},
		{math.MinInt64, -1, false},
		{math.MaxInt64, math.MinInt64, true},
	} {
		got, err := Sum(tc.total, tc.n, "tokens")
		if tc.ok && (err != nil || got != tc.total+tc.n) {
			t.Errorf("Sum(%d, %d) = %d, %v", tc.total, tc.n, got, err)
		}
		if !tc.ok && (!errors.Is(err, ErrTotalOverflow) || got != tc.total) {
			t.Errorf("Sum(%d, %d) = %d, %v; want the total kept and ErrTotalOverflow", tc.total, tc.n, got, err)
		}
	}
}
