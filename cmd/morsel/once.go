package main

import (
	"morsel/corpus"
	"morsel/report"
)

// ReasonRepeat is the skip reason for a document left out by --once: its
// text is the same as an earlier document's.
const ReasonRepeat = "repeat"

// onceFilter leaves out, under --once, every document whose text (by its
// content hash) was seen before, so that each text is counted once.
type onceFilter struct {
	first map[uint64]string // hash -> the first document with that text
}

// repeat returns the skip for d when its text was seen before, else nil.
// It is called in walk order, so the first copy is the one counted.
func (o *onceFilter) repeat(d *corpus.Document) *report.Skipped {
	if o == nil || d == nil {
		return nil
	}
	if o.first == nil {
		o.first = map[uint64]string{}
	}
	where := report.Where(d.Source, d.Record)
	if first, ok := o.first[d.Hash]; ok {
		return &report.Skipped{Source: d.Source, Record: d.Record, Reason: ReasonRepeat, Detail: "the same text as " + first + " (--once)"}
	}
	o.first[d.Hash] = where
	return nil
}
