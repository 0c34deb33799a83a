package report

import "sort"

// nameRun is a run of documents that are consecutive records of one
// source: document first+i is record record+i of source.
type nameRun struct {
	first  int
	source string
	record int
}

// Names gives every document of a walk its name for a report, in a few
// bytes per source rather than a string per document: a JSON Lines file of
// a million records holds one name.
type Names struct {
	runs []nameRun
	n    int
}

// Add names the next document of the walk.
func (ns *Names) Add(source string, record int) {
	if l := len(ns.runs); l == 0 || ns.runs[l-1].source != source || ns.runs[l-1].record+(ns.n-ns.runs[l-1].first) != record {
		ns.runs = append(ns.runs, nameRun{first: ns.n, source: source, record: record})
	}
	ns.n++
}

// Of returns document i's name (counting from 0), as Where gives it.
func (ns *Names) Of(i int) string { return Where(ns.At(i)) }

// At returns document i's source and record.
func (ns *Names) At(i int) (string, int) {
	k := sort.Search(len(ns.runs), func(k int) bool { return ns.runs[k].first > i }) - 1
	r := ns.runs[k]
	return r.source, r.record + i - r.first
}
