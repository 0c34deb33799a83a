package fragments

// wordSum is one word's tallies, as the tests read them.
type wordSum struct {
	count, pieces int64
	docs          int
	splits        []splitTally
}

// mergeShards returns the tallies by word, every batch flushed, for the
// tests.
func (f *Fragmenter) mergeShards() map[string]*wordSum {
	out := map[string]*wordSum{}
	tables := f.tables()
	for ti := range tables {
		m := &tables[ti]
		for i := range m.nwords {
			w := m.at(i)
			out[string(m.word(w))] = &wordSum{count: w.count, pieces: w.pieces, docs: int(w.docs), splits: m.splitsOf(w)}
		}
	}
	return out
}
