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

// sortedRuns returns the items of ps as runs in the order of a single
// run: a shard's partial holds its items in that order already, and a
// partial out of order is sorted first.
func sortedRuns(ps []*Partial) [][]Item {
	var runs [][]Item
	for _, p := range ps {
		for _, r := range append(append([][]Item(nil), p.runs...), p.Items) {
			if !sorted(r) {
				r = append([]Item(nil), r...)
				sort.SliceStable(r, func(i, j int) bool { return r[i].Key.Less(r[j].Key) })
			}
			if len(r) > 0 {
				runs = append(runs, r)
			}
		}
	}
	return runs
}

// Len returns the number of items.
func (p *Partial) Len() int {
	n := len(p.Items)
	for _, r := range p.runs {
		n += len(r)
	}
	return n
}

// Each calls fn with every item, stopping at the first error: p.Items in
// their order, and then, for a merged partial, the shards' items merged
// from their runs as they are asked for (one comparison per item and
// heap level; ties go to the earlier run), so that they are never copied.
func (p *Partial) Each(fn func(*Item) error) error {
	for i := range p.Items {
		if err := fn(&p.Items[i]); err != nil {
			return err
		}
	}
	return eachMerged(append([][]Item(nil), p.runs...), fn)
}

// eachMerged calls fn with the items of the sorted runs in order; it uses
// runs up.
func eachMerged(runs [][]Item, fn func(*Item) error) error {
	if len(runs) == 1 {
		for i := range runs[0] {
			if err := fn(&runs[0][i]); err != nil {
				return err
			}
		}
		return nil
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
		if err := fn(&runs[r][0]); err != nil {
			return err
		}
		if runs[r] = runs[r][1:]; len(runs[r]) == 0 {
			heap[0] = heap[len(heap)-1]
			heap = heap[:len(heap)-1]
		}
		down(0)
	}
	return nil
}
