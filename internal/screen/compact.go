package screen

import "strconv"

// Compact returns n for a place with little room: whole below 100,000
// (with thousands separators), else with one decimal and k (thousand), M
// (million), G (billion) or T (trillion): 103,090,277 is "103.1 M". The
// exact figure belongs beside it, in a title or a table.
func Compact(n int64) string {
	if n < 100_000 && n > -100_000 {
		return group(n)
	}
	units := []string{"k", "M", "G", "T"}
	x, u := float64(n)/1000, 0
	// 999.95 would print as 1000.0 of the smaller unit.
	for (x >= 999.95 || x <= -999.95) && u < len(units)-1 {
		x /= 1000
		u++
	}
	return strconv.FormatFloat(x, 'f', 1, 64) + " " + units[u]
}
