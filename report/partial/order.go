package partial

import "sort"

// Sort puts the items in the order of a single run.
func (p *Partial) Sort() {
	sort.SliceStable(p.Items, func(i, j int) bool { return p.Items[i].Key.Less(p.Items[j].Key) })
}

// sorted reports whether items are in the order of a single run.
func sorted(items []Item) bool {
	for i := 1; i < len(items); i++ {
		if items[i].Key.Less(items[i-1].Key) {
			return false
		}
	}
	return true
}

// mergeItems returns the items of ps in the order of a single run. A
// shard's partial holds its items in that order already, so they are
// merged as sorted runs, one comparison per item and heap level; a
// partial out of order is sorted first. Ties go to the earlier partial.
func mergeItems(ps []*Partial) []Item {
	total := 0
	var runs [][]Item
	for _, p := range ps {
		if !sorted(p.Items) {
			p.Sort()
		}
		if len(p.Items) > 0 {
			runs = append(runs, p.Items)
		}
		total += len(p.Items)
	}
	out := make([]Item, 0, total)
	if len(runs) == 1 {
		return append(out, runs[0]...)
	}
	// heap holds the runs' indices, the run with the least head first.
	heap := make([]int, len(runs))
	less := func(a, b int) bool {
		x, y := &runs[heap[a]][0].Key, &runs[heap[b]][0].Key
		if x.Less(*y) {
			return true
		}
		return !y.Less(*x) && heap[a] < heap[b]
	}
	down := func(i int) {
		for {
			c := 2*i + 1
			if c >= len(heap) {
				return
			}
			if c+1 < len(heap) && less(c+1, c) {
				c++
			}
			if !less(c, i) {
				return
			}
			heap[i], heap[c] = heap[c], heap[i]
			i = c
		}
	}
	for i := range heap {
		heap[i] = i
	}
	for i := len(heap)/2 - 1; i >= 0; i-- {
		down(i)
	}
	for len(heap) > 0 {
		r := heap[0]
		out = append(out, runs[r][0])
		if runs[r] = runs[r][1:]; len(runs[r]) == 0 {
			heap[0] = heap[len(heap)-1]
			heap = heap[:len(heap)-1]
		}
		down(0)
	}
	return out
}
