package report

import (
	"errors"
	"fmt"
	"math"
)

// ErrTotalOverflow is returned, wrapped, by Sum when a total would pass
// what an int64 holds.
var ErrTotalOverflow = errors.New("a total passes the largest count a report holds (2^63-1)")

// Sum returns total + n, or fails wrapping ErrTotalOverflow, naming what
// is summed, when the sum would pass math.MaxInt64 or math.MinInt64: a
// report's totals are exact or not given at all.
func Sum(total, n int64, what string) (int64, error) {
	if n > 0 && total > math.MaxInt64-n || n < 0 && total < math.MinInt64-n {
		return total, fmt.Errorf("%s: %w: %d + %d", what, ErrTotalOverflow, total, n)
	}
	return total + n, nil
}
