// Package partial reads, writes and combines partial reports: what one
// shard of a walk found, kept whole so that partials merge into exactly the
// report a single run gives.
//
// A partial (docs/partial-format.md gives its schema) is a magic line and
// then frames: a header (JSON) that names the command, the shards it
// covers and what every partial of one run must agree on; one binary
// frame for each walk item (a document's result, or a skip) with its place
// in the walk's order; the rows of the command's tables (the fragments
// word tallies, JSON); and an end frame that counts the frames before it,
// so that a cut file is refused. The whole may be gzip-compressed. Merging
// sorts the items back into the walk's order, and the command replays
// them into the aggregation a single run uses.
package partial

import (
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// Magic names the format in the header; Version is the version this
// package writes and the only one it reads.
const (
	Magic   = "morsel-partial"
	Version = 2
)

// Header describes a partial.
type Header struct {
	Format  string `json:"format"`  // Magic
	Version int    `json:"version"` // Version
	Command string `json:"command"` // survey, fit, ration, quote, fragments
	// Shards are the 1-based shares of the walk that the partial holds,
	// ascending, out of Of.
	Shards []int `json:"shards"`
	Of     int   `json:"of"`
	// Inputs fingerprints what was walked: the arguments, in order, and
	// the options that choose documents and their text.
	Inputs string `json:"inputs"`
	// Agree holds what every partial of one run must share (the
	// vocabulary's fingerprint, the frame, the targets, the command's
	// options), by name.
	Agree map[string]string `json:"agree"`
	// Lines says what each kind of line holds, for a reader without the
	// schema at hand.
	Lines map[string]string `json:"lines"`
	// Args are the command's flags as given (less those that only cut
	// the walk or say where the partial goes), and Paths its arguments,
	// so that a merge renders the report the single run would.
	Args  []string `json:"args,omitempty"`
	Paths []string `json:"paths,omitempty"`
}

// Key places a walk item in the order of a single run: by In, then by
// Source with "/" before any other byte (the order a walk of folders in
// name order gives), then by Seq.
type Key struct {
	In  int    // the input's place in the listing; -1 for skips found while listing
	Seq int    // the item's place among the items of its input
	Src string // the source, as walked
}

// Less reports whether a comes before b.
func (a Key) Less(b Key) bool {
	if a.In != b.In {
		return a.In < b.In
	}
	if a.Src != b.Src {
		return comparePaths(a.Src, b.Src) < 0
	}
	return a.Seq < b.Seq
}

// comparePaths compares two paths byte by byte, with '/' below every other
// byte, so that a folder's files sort before its neighbours "a-b" or "a.b".
func comparePaths(a, b string) int {
	for i := 0; i < len(a) && i < len(b); i++ {
		x, y := a[i], b[i]
		if x == y {
			continue
		}
		if x == '/' {
			return -1
		}
		if y == '/' {
			return 1
		}
		if x < y {
			return -1
		}
		return 1
	}
	return len(a) - len(b)
}

// Skip is why an item was not counted.
type Skip struct {
	Reason string
	Detail string
	Failed bool
}

// Item is one walk item: a document with its result (or the error its
// work gave), or a skip.
type Item struct {
	Key
	Record int
	// Line is a CSV or TSV row's first line.
	Line   int
	Format string
	// Hash is the document's content hash (XXH64 of its text), by which
	// a merge finds repeated texts across shards.
	Hash uint64
	// Skip is set for an input or record that the walk did not read.
	Skip *Skip
	// Err is set for a document whose work failed.
	Err string
	// Result is the command's result for the document, in the command's
	// encoding (survey's is binary, the others' JSON; see
	// docs/partial-format.md).
	Result []byte
}

// Partial is a whole partial in memory.
type Partial struct {
	Header Header
	// Items are the items, in the order of a single run once sorted;
	// Merge leaves them nil and holds the shards' items as runs (Each
	// and Len see both).
	Items []Item
	runs  []run
	// packed holds the items of a partial from ReadForMerge, in order.
	packed *packed
	// Tables are the command's tables, by name, as rows of JSON; the
	// command merges rows of the same key.
	Tables map[string][]json.RawMessage
	// Summary is the command's own totals of these items, for readers
	// that want them without the rows.
	Summary json.RawMessage
}

// New returns an empty partial of command over shard k of n (0 and 0 for
// no shards yet, as a combiner starts).
func New(command string, k, n int, inputs string, agree map[string]string) *Partial {
	h := Header{Format: Magic, Version: Version, Command: command, Of: n, Inputs: inputs, Agree: agree, Lines: lineDocs}
	if k > 0 {
		h.Shards = []int{k}
	}
	if h.Agree == nil {
		h.Agree = map[string]string{}
	}
	return &Partial{Header: h, Tables: map[string][]json.RawMessage{}}
}

// lineDocs is the header's Lines.
var lineDocs = map[string]string{
	"h": "header (JSON): format, version, command, shards of of, inputs, agree, lines, args, paths",
	"i": "item (binary, docs/partial-format.md): flags, in, seq, src, rec, line, fmt, hash, then skip {reason, detail} or err or r (the command's result for the document)",
	"t": "table row: the table's name, then the row (JSON)",
	"e": "end (JSON): items, rows (by table), summary (the command's totals of this partial)",
}

func (h *Header) check() error {
	if h.Format != Magic {
		return fmt.Errorf("not a partial report (format %q)", h.Format)
	}
	if h.Version != Version {
		return versionError(h.Version)
	}
	if h.Of < 1 || len(h.Shards) == 0 {
		return errors.New("the header names no shard")
	}
	for i, k := range h.Shards {
		if k < 1 || k > h.Of || i > 0 && k <= h.Shards[i-1] {
			return fmt.Errorf("bad shard list %v of %d", h.Shards, h.Of)
		}
	}
	return nil
}

// Combine adds q's items and table rows to p, for pieces of one run (a
// combiner's accumulators, or shards). It fails, changing nothing, when
// the two are not of one run, saying how they differ. The items stay in
// no particular order until Sort.
func (p *Partial) Combine(q *Partial) error {
	if err := agree(&p.Header, &q.Header); err != nil {
		return err
	}
	p.Items = append(p.Items, q.Items...)
	for _, r := range q.runs {
		p.Items = append(p.Items, r.all()...)
	}
	if q.packed != nil {
		p.Items = append(p.Items, q.packed.items()...)
	}
	for t, rows := range q.Tables {
		p.Tables[t] = append(p.Tables[t], rows...)
	}
	return nil
}

// agree says how two headers differ in what a merge needs them to share.
func agree(a, b *Header) error {
	if a.Command != b.Command {
		return fmt.Errorf("one is a %s report, the other a %s report", a.Command, b.Command)
	}
	if a.Inputs != b.Inputs {
		return errors.New("they walked different inputs (other arguments, or other --field, --column, --include, --exclude, --hidden or --as)")
	}
	if a.Of != b.Of {
		return fmt.Errorf("one is cut into %d shards, the other into %d", a.Of, b.Of)
	}
	for _, k := range sortedKeys(a.Agree, b.Agree) {
		if x, y := a.Agree[k], b.Agree[k]; x != y {
			return fmt.Errorf("they differ in %s: %s and %s", k, orNone(x), orNone(y))
		}
	}
	return nil
}

func orNone(s string) string {
	if s == "" {
		return "(none)"
	}
	return s
}

func sortedKeys(a, b map[string]string) []string {
	seen := map[string]bool{}
	var keys []string
	for _, m := range []map[string]string{a, b} {
		for k := range m {
			if !seen[k] {
				seen[k] = true
				keys = append(keys, k)
			}
		}
	}
	sort.Strings(keys)
	return keys
}

// Merge merges the partials of shards of one run into one, whose Each
// gives the items in the order of a single run. The merged partial holds
// the items of ps, which are not to be changed after. It fails, naming the partials by names, when two
// are not of one run, when a shard is held twice, or, with whole, when
// the shards do not cover the run.
func Merge(ps []*Partial, names []string, whole bool) (*Partial, error) {
	if len(ps) == 0 {
		return nil, errors.New("no partial reports to merge")
	}
	first := ps[0].Header
	m := &Partial{Header: first, Tables: map[string][]json.RawMessage{}}
	m.Header.Shards = nil
	m.Header.Agree = first.Agree
	owner := map[int]string{}
	for i, p := range ps {
		if err := agree(&first, &p.Header); err != nil {
			return nil, fmt.Errorf("%s and %s do not merge: %w", names[0], names[i], err)
		}
		for _, k := range p.Header.Shards {
			if o, dup := owner[k]; dup {
				return nil, fmt.Errorf("%s and %s both hold shard %d/%d", o, names[i], k, first.Of)
			}
			owner[k] = names[i]
			m.Header.Shards = append(m.Header.Shards, k)
		}
		for t, rows := range p.Tables {
			m.Tables[t] = append(m.Tables[t], rows...)
		}
	}
	sort.Ints(m.Header.Shards)
	if whole && len(m.Header.Shards) != first.Of {
		var missing []string
		for k := 1; k <= first.Of; k++ {
			if _, ok := owner[k]; !ok {
				missing = append(missing, strconv.Itoa(k))
			}
		}
		return nil, fmt.Errorf("shard %s of %d missing: the merged report would not be the whole run", strings.Join(missing, ", "), first.Of)
	}
	m.runs = sortedRuns(ps)
	return m, nil
}
