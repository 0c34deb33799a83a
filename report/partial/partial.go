// Package partial reads, writes and combines partial reports: what one
// shard of a walk found, kept whole so that partials merge into exactly the
// report a single run gives.
//
// A partial is a gzip-compressed JSON Lines file (docs/partial-format.md
// gives its schema): a header line that names the command, the shards it
// covers and what every partial of one run must agree on; one line for each
// walk item (a document's result, or a skip) with its place in the walk's
// order; the rows of the command's tables (the fragments word tallies); and
// an end line that counts the lines before it, so that a cut file is
// refused. Merging sorts the items back into the walk's order, and the
// command replays them into the aggregation a single run uses.
package partial

import (
	"bufio"
	"compress/gzip"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
)

// Magic names the format in the header; Version is the version this
// package writes and the only one it reads.
const (
	Magic   = "morsel-partial"
	Version = 1
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
	In  int    `json:"in"`  // the input's place in the listing; -1 for skips found while listing
	Seq int    `json:"seq"` // the item's place among the items of its input
	Src string `json:"src"` // the source, as walked
}

// Less reports whether a comes before b.
func (a Key) Less(b Key) bool {
	if a.In != b.In {
		return a.In < b.In
	}
	if c := comparePaths(a.Src, b.Src); c != 0 {
		return c < 0
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
	Reason string `json:"reason"`
	Detail string `json:"detail,omitempty"`
	Failed bool   `json:"failed,omitempty"`
}

// Item is one walk item: a document with its result (or the error its
// work gave), or a skip.
type Item struct {
	Key
	Record int `json:"rec"`
	// Line is a CSV or TSV row's first line.
	Line   int    `json:"line,omitempty"`
	Format string `json:"fmt,omitempty"`
	// Hash is the document's content hash (XXH64 of its text), by which
	// a merge finds repeated texts across shards.
	Hash uint64 `json:"hash,omitempty"`
	// Skip is set for an input or record that the walk did not read.
	Skip *Skip `json:"skip,omitempty"`
	// Err is set for a document whose work failed.
	Err string `json:"err,omitempty"`
	// Result is the command's result for the document, as JSON.
	Result json.RawMessage `json:"r,omitempty"`
}

// Partial is a whole partial in memory.
type Partial struct {
	Header Header
	Items  []Item
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
	"h":   "header: format, version, command, shards of of, inputs, agree, lines, args, paths",
	"i":   "item: in, seq, src (its place in the walk), rec, line, fmt, hash, skip {reason, detail, failed} or err or r (the command's result for the document)",
	"t":   "table row: t (table name), r (the row)",
	"end": "end: items, rows (by table), summary (the command's totals of this partial)",
}

// Line is one line of a partial.
type line struct {
	H   *Header         `json:"h,omitempty"`
	I   *Item           `json:"i,omitempty"`
	T   string          `json:"t,omitempty"`
	R   json.RawMessage `json:"r,omitempty"`
	End *end            `json:"end,omitempty"`
}

type end struct {
	Items   int             `json:"items"`
	Rows    map[string]int  `json:"rows"`
	Summary json.RawMessage `json:"summary,omitempty"`
}

// Write writes p to w.
func (p *Partial) Write(w io.Writer) error {
	pw, err := NewWriter(w, p.Header)
	if err != nil {
		return err
	}
	for i := range p.Items {
		if err := pw.Item(&p.Items[i]); err != nil {
			return err
		}
	}
	for _, name := range sortedNames(p.Tables) {
		for _, r := range p.Tables[name] {
			if err := pw.RawRow(name, r); err != nil {
				return err
			}
		}
	}
	return pw.Close(p.Summary)
}

func sortedNames(m map[string][]json.RawMessage) []string {
	var names []string
	for n := range m {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// A Writer writes a partial line by line, so that a shard's items need not
// all be held.
type Writer struct {
	zw    *gzip.Writer
	bw    *bufio.Writer
	enc   *json.Encoder
	items int
	rows  map[string]int
}

// NewWriter writes the header h to w and returns a Writer for the rest.
func NewWriter(w io.Writer, h Header) (*Writer, error) {
	h.Format, h.Version, h.Lines = Magic, Version, lineDocs
	zw, _ := gzip.NewWriterLevel(w, gzip.BestSpeed)
	bw := bufio.NewWriterSize(zw, 64<<10)
	pw := &Writer{zw: zw, bw: bw, enc: json.NewEncoder(bw), rows: map[string]int{}}
	pw.enc.SetEscapeHTML(false)
	return pw, pw.enc.Encode(line{H: &h})
}

// Item writes one item.
func (w *Writer) Item(it *Item) error {
	w.items++
	return w.enc.Encode(line{I: it})
}

// Row writes one row of the table name.
func (w *Writer) Row(name string, row any) error {
	b, err := json.Marshal(row)
	if err != nil {
		return fmt.Errorf("partial: table %s: %w", name, err)
	}
	return w.RawRow(name, b)
}

// RawRow writes one row, already JSON, of the table name.
func (w *Writer) RawRow(name string, row json.RawMessage) error {
	w.rows[name]++
	return w.enc.Encode(line{T: name, R: row})
}

// Close writes the end line with the command's summary (JSON, or nil) and
// flushes the stream. It does not close the underlying writer.
func (w *Writer) Close(summary json.RawMessage) error {
	if err := w.enc.Encode(line{End: &end{Items: w.items, Rows: w.rows, Summary: summary}}); err != nil {
		return err
	}
	if err := w.bw.Flush(); err != nil {
		return err
	}
	return w.zw.Close()
}

// Read reads a whole partial; name is used in errors ("name:line: ...").
func Read(r io.Reader, name string) (*Partial, error) {
	zr, err := gzip.NewReader(r)
	if err != nil {
		return nil, fmt.Errorf("%s: not a partial report (%v)", name, err)
	}
	defer zr.Close()
	sc := bufio.NewScanner(zr)
	sc.Buffer(make([]byte, 0, 64<<10), 1<<30)
	p := &Partial{Tables: map[string][]json.RawMessage{}}
	n := 0
	var fin *end
	for sc.Scan() {
		n++
		where := name + ":" + strconv.Itoa(n)
		if fin != nil {
			return nil, fmt.Errorf("%s: data after the end line", where)
		}
		var l line
		if err := json.Unmarshal(sc.Bytes(), &l); err != nil {
			return nil, fmt.Errorf("%s: %v", where, err)
		}
		switch {
		case n == 1:
			if l.H == nil {
				return nil, fmt.Errorf("%s: not a partial report: the first line is not a header", where)
			}
			if err := l.H.check(); err != nil {
				return nil, fmt.Errorf("%s: %w", where, err)
			}
			p.Header = *l.H
		case l.H != nil:
			return nil, fmt.Errorf("%s: a second header", where)
		case l.I != nil:
			if l.I.Skip == nil && l.I.Err == "" && l.I.Result == nil {
				return nil, fmt.Errorf("%s: an item with neither a result, an error nor a skip", where)
			}
			p.Items = append(p.Items, *l.I)
		case l.T != "":
			p.Tables[l.T] = append(p.Tables[l.T], l.R)
		case l.End != nil:
			fin = l.End
		default:
			return nil, fmt.Errorf("%s: a line of no known kind", where)
		}
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if n == 0 {
		return nil, fmt.Errorf("%s: empty partial report", name)
	}
	if fin == nil {
		return nil, fmt.Errorf("%s: cut short: no end line after line %d", name, n)
	}
	if fin.Items != len(p.Items) {
		return nil, fmt.Errorf("%s: the end line counts %d items, the file holds %d", name, fin.Items, len(p.Items))
	}
	for t, rows := range p.Tables {
		if fin.Rows[t] != len(rows) {
			return nil, fmt.Errorf("%s: the end line counts %d rows of table %s, the file holds %d", name, fin.Rows[t], t, len(rows))
		}
	}
	p.Summary = fin.Summary
	return p, nil
}

func (h *Header) check() error {
	if h.Format != Magic {
		return fmt.Errorf("not a partial report (format %q)", h.Format)
	}
	if h.Version != Version {
		return fmt.Errorf("partial report version %d; this build reads version %d", h.Version, Version)
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

// Sort puts the items in the order of a single run.
func (p *Partial) Sort() {
	sort.SliceStable(p.Items, func(i, j int) bool { return p.Items[i].Key.Less(p.Items[j].Key) })
}

// Merge merges the partials of shards of one run into one, items in the
// order of a single run. It fails, naming the partials by names, when two
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
		m.Combine(p)
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
	m.Sort()
	return m, nil
}
