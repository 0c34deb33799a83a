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

// A run is a sorted run of items: a slice of them, or a packed partial's.
type run struct {
	items []Item
	pk    *packed
}

func (r run) len() int {
	if r.pk != nil {
		return r.pk.n
	}
	return len(r.items)
}

// all returns the run's items as one slice.
func (r run) all() []Item {
	if r.pk != nil {
		return r.pk.items()
	}
	return r.items
}

// sortedRuns returns the items of ps as runs in the order of a single
// run: a shard's partial holds its items in that order already, and a
// partial out of order is sorted first.
func sortedRuns(ps []*Partial) []run {
	var runs []run
	for _, p := range ps {
		rs := append([]run(nil), p.runs...)
		rs = append(rs, run{items: p.Items})
		if p.packed != nil {
			rs = append(rs, run{pk: p.packed})
		}
		for _, r := range rs {
			if r.pk == nil && !sorted(r.items) {
				r.items = append([]Item(nil), r.items...)
				sort.SliceStable(r.items, func(i, j int) bool { return r.items[i].Key.Less(r.items[j].Key) })
			}
			if r.len() > 0 {
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
		n += r.len()
	}
	if p.packed != nil {
		n += p.packed.n
	}
	return n
}

// Each calls fn with every item, stopping at the first error: p.Items in
// their order, then a packed partial's items, and then, for a merged
// partial, the shards' items merged from their runs as they are asked for
// (one comparison per item and heap level; ties go to the earlier run),
// so that they are never copied. fn must not keep the *Item past its call.
func (p *Partial) Each(fn func(*Item) error) error {
	for i := range p.Items {
		if err := fn(&p.Items[i]); err != nil {
			return err
		}
	}
	if p.packed != nil {
		if err := eachMerged([]run{{pk: p.packed}}, fn); err != nil {
			return err
		}
	}
	return eachMerged(p.runs, fn)
}

// cursor walks one run: head is its next item, nil when it is done.
type cursor struct {
	items []Item
	pk    *packed
	b, i  int  // the next record of a packed run: block b, index i
	cur   Item // a packed run's head
	head  *Item
}

func (c *cursor) next() {
	if c.pk == nil {
		if len(c.items) == 0 {
			c.head = nil
			return
		}
		c.head = &c.items[0]
		c.items = c.items[1:]
		return
	}
	for c.b < len(c.pk.blocks) && c.i == len(c.pk.blocks[c.b]) {
		c.b, c.i = c.b+1, 0
	}
	if c.b == len(c.pk.blocks) {
		c.head = nil
		return
	}
	c.pk.item(&c.pk.blocks[c.b][c.i], &c.cur)
	c.i++
	c.head = &c.cur
}

// eachMerged calls fn with the items of the sorted runs in order.
func eachMerged(runs []run, fn func(*Item) error) error {
	// A packed cursor's head points into itself: cs is not to grow once
	// the heads are set.
	cs := make([]cursor, 0, len(runs))
	for _, r := range runs {
		if r.len() > 0 {
			cs = append(cs, cursor{items: r.items, pk: r.pk})
		}
	}
	for i := range cs {
		cs[i].next()
	}
	if len(cs) == 0 {
		return nil
	}
	if len(cs) == 1 {
		for c := &cs[0]; c.head != nil; c.next() {
			if err := fn(c.head); err != nil {
				return err
			}
		}
		return nil
	}
	// heap holds the cursors' indices, the one with the least head first.
	heap := make([]int, len(cs))
	less := func(a, b int) bool {
		x, y := &cs[heap[a]].head.Key, &cs[heap[b]].head.Key
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
		c := &cs[heap[0]]
		if err := fn(c.head); err != nil {
			return err
		}
		if c.next(); c.head == nil {
			heap[0] = heap[len(heap)-1]
			heap = heap[:len(heap)-1]
		}
		down(0)
	}
	return nil
}
