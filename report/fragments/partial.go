package fragments

import (
	"encoding/json"
	"errors"

	"morsel/report/fragments/internal/tally"
)

// WordRow is one word's tallies, whole, as a partial report keeps them: a
// shard's rows added to a Fragmenter (AddWordRow) rank as a single run's
// would, not as a top-k of each shard's top-k.
type WordRow struct {
	Word   []byte      `json:"w"`
	Count  int64       `json:"c"`
	Pieces int64       `json:"p"`
	Docs   int64       `json:"d"`
	Splits []WordSplit `json:"s"`
}

// WordSplit is one way a word was split into tokens, and how often.
type WordSplit struct {
	IDs   []uint32 `json:"i"`
	Count int64    `json:"c"`
}

// WordRows calls yield with every word tallied so far, once every Scan
// has returned; it stops at yield's first error and returns it. It fails
// when the tables passed their bound, since the words are then counted
// approximately and no longer all kept.
func (f *Fragmenter) WordRows(yield func(WordRow) error) error {
	tables := f.tables()
	if f.summary != nil {
		return errors.New("the word tables passed the --memory bound, so the words are no longer all kept: a partial report needs them whole; give a larger --memory or more shards")
	}
	for w := range tables.All() {
		row := WordRow{Word: w.Bytes(), Count: w.Count(), Pieces: w.Pieces(), Docs: w.Docs()}
		for _, sp := range w.Splits() {
			row.Splits = append(row.Splits, WordSplit{IDs: sp.IDs, Count: sp.Count})
		}
		if err := yield(row); err != nil {
			return err
		}
	}
	return nil
}

// AddWordRow adds a word's tallies from another Fragmenter's WordRows (a
// shard's) to f. It is called from one goroutine, with no Scan running;
// the tables take every row whatever their bound, which applies to
// scanning.
func (f *Fragmenter) AddWordRow(r WordRow) {
	splits := make([]tally.Split, len(r.Splits))
	for i, sp := range r.Splits {
		splits[i] = tally.Split{IDs: sp.IDs, Count: sp.Count}
	}
	f.tables().AddWord(r.Word, r.Count, r.Pieces, r.Docs, splits)
}

// docWordsJSON is DocWords as a partial report keeps it, glossary terms
// included.
type docWordsJSON struct {
	Tokens   int           `json:"tokens"`
	Bytes    int           `json:"bytes"`
	All      ScriptTally   `json:"all"`
	ByScript []ScriptTally `json:"by_script"`
	Terms    [][2]int      `json:"terms,omitempty"` // count, pieces
}

// MarshalJSON writes dw whole, for a partial report.
func (dw *DocWords) MarshalJSON() ([]byte, error) {
	j := docWordsJSON{Tokens: dw.Tokens, Bytes: dw.Bytes, All: dw.All, ByScript: dw.ByScript[:]}
	for _, t := range dw.terms {
		j.Terms = append(j.Terms, [2]int{t.count, t.pieces})
	}
	return json.Marshal(j)
}

// UnmarshalJSON reads what MarshalJSON wrote.
func (dw *DocWords) UnmarshalJSON(b []byte) error {
	var j docWordsJSON
	if err := json.Unmarshal(b, &j); err != nil {
		return err
	}
	*dw = DocWords{Tokens: j.Tokens, Bytes: j.Bytes, All: j.All}
	copy(dw.ByScript[:], j.ByScript)
	for _, t := range j.Terms {
		dw.terms = append(dw.terms, termTally{count: t[0], pieces: t[1]})
	}
	return nil
}
