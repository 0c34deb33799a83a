package fragments

import "morsel/report/fragments/internal/tally"

// wordSum is one word's tallies, as the tests read them.
type wordSum struct {
	count, pieces int64
	docs          int
	splits        []tally.Split
}

// mergeShards returns the tallies by word, every batch flushed, for the
// tests.
func (f *Fragmenter) mergeShards() map[string]*wordSum {
	out := map[string]*wordSum{}
	for w := range f.tables().All() {
		out[string(w.Bytes())] = &wordSum{count: w.Count(), pieces: w.Pieces(), docs: int(w.Docs()), splits: w.Splits()}
	}
	return out
}
