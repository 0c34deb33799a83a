package fragments

import (
	"fmt"

	"morsel/report/fragments/internal/tally"
	"morsel/report/render"
)

// summaryEntryBytes is about what one counter of a tally.Summary costs:
// the entry, its word, its splits and its map slot.
const summaryEntryBytes = 256

// SetMemory bounds the word tables to about bound bytes (0: no bound).
// Past it, the words move to a Space-Saving summary of bound/1024
// counters (a quarter of the bound), which keeps the most frequent words
// with counts that are upper bounds, off by at most the report's
// count_error; the report says so. Call it before the first Scan.
func (f *Fragmenter) SetMemory(bound int64) { f.bound = bound }

// flush moves a shard's batch into the word tables, or into the summary
// once the tables have outgrown the bound.
func (f *Fragmenter) flush(b *tally.Batch) {
	f.wmu.RLock()
	if f.summary != nil {
		b.FlushSummary(f.summary)
		f.wmu.RUnlock()
		return
	}
	b.Flush(f.words)
	over := f.bound > 0 && f.words.Bytes() > f.bound
	f.wmu.RUnlock()
	if !over {
		return
	}
	f.wmu.Lock()
	defer f.wmu.Unlock()
	if f.summary == nil {
		f.distinctSeen = f.words.Len()
		f.summary = tally.SummaryOf(f.words, int(max(f.bound/(4*summaryEntryBytes), 1024)))
		f.words = &tally.Tables{} // the old tables go to the collector
	}
}

// partBytes is how much memory a large document's own batch may hold
// before it is flushed in parts: partLimit, or a sixteenth of the --memory
// bound when that is less.
func (f *Fragmenter) partBytes() int64 {
	if f.bound > 0 {
		return min(partLimit, f.bound/16)
	}
	return partLimit
}

// partLimit is partBytes without a bound.
var partLimit int64 = 64 << 20 // a variable, so that a test can make parts of a small text

// inParts is a large document flushed in parts (see scanLarge). The first
// part takes Fragmenter.partMu, held until the document ends: a word keeps
// the stamp of one such document, so two of them must not interleave
// their flushes (see tally.Batch.SetStamp).
type inParts struct {
	stamp uint32
	words int64 // the words in the parts flushed
}

// flush flushes b, the document's batch, with the document's words so far.
func (p *inParts) flush(f *Fragmenter, b *tally.Batch, words int64) {
	if p.stamp == 0 {
		f.partMu.Lock()
		f.stamps++
		p.stamp = f.stamps
		b.SetStamp(p.stamp)
	}
	f.flush(b)
	p.words = words
}

// end lets another document be flushed in parts.
func (p *inParts) end(f *Fragmenter) {
	if p.stamp != 0 {
		f.partMu.Unlock()
	}
}

// wordSource returns every word tallied and the number of distinct words: all
// of them from the tables, or from the summary the counters' words, with
// at least as many distinct words as the tables held when they gave way.
func (f *Fragmenter) wordSource() (words func(yield func(tally.Word) bool), distinct int) {
	tables := f.tables()
	if f.summary == nil {
		return tables.All(), tables.Len()
	}
	return f.summary.All(), max(f.distinctSeen, f.summary.Len())
}

// approximateNote says how far the counts may be off, for the views.
func approximateNote(t Totals) string {
	return fmt.Sprintf("Counts are approximate: the word tables passed --memory, so the most frequent words were kept in %s counters (Space-Saving, Metwally et al. 2005). A count may be up to %d above the true count, never below it; pieces are estimated alike, documents are a lower bound, and distinct words are at least the figure given.",
		render.Num(t.Counters), t.CountError)
}

// failedNote says what the word counts hold of documents that failed part
// way, for the views.
func failedNote(t Totals) string {
	return fmt.Sprintf("The word counts hold %s words of documents that failed part way (under \"not counted\"): they were read in parts to keep to --memory, and the parts read before the failure stay counted.",
		render.Num(t.FailedWords))
}

// notes returns the views' notes on how far the word counts can be trusted.
func notes(t Totals) []string {
	var ns []string
	if t.Approximate {
		ns = append(ns, approximateNote(t))
	}
	if t.FailedWords > 0 {
		ns = append(ns, failedNote(t))
	}
	return ns
}
