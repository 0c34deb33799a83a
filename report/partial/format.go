package partial

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
)

// The kinds of frame, each the first byte of its frame.
const (
	kindHeader = 'h'
	kindItem   = 'i'
	kindRow    = 't'
	kindEnd    = 'e'
)

// maxFrame bounds one frame's payload, so that a damaged length cannot ask
// for gigabytes.
const maxFrame = 1 << 30

// The flags of an item frame.
const (
	flagSkip    = 1 << iota // a skip: reason and detail follow
	flagFailed              // the skip is of an input or record that could not be read
	flagErr                 // a document whose work failed: the message follows
	flagResult              // a document: its result is the rest of the frame
	flagSameSrc             // src is the previous item's in the file, and not written
	flagSameFmt             // fmt is the previous item's in the file, and not written
)

type end struct {
	Items   int             `json:"items"`
	Rows    map[string]int  `json:"rows"`
	Summary json.RawMessage `json:"summary,omitempty"`
}

// versionError refuses a partial of another version.
func versionError(v int) error {
	return fmt.Errorf("partial report version %d; this build reads version %d only: write the partials again with this build", v, Version)
}

// Write writes p to w, gzip-compressed when compress is set.
func (p *Partial) Write(w io.Writer, compress bool) error {
	pw, err := NewWriter(w, p.Header, compress)
	if err != nil {
		return err
	}
	if err := p.Each(pw.Item); err != nil {
		return err
	}
	names := make([]string, 0, len(p.Tables))
	for n := range p.Tables {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, name := range names {
		for _, r := range p.Tables[name] {
			if err := pw.RawRow(name, r); err != nil {
				return err
			}
		}
	}
	return pw.Close(p.Summary)
}

// A Writer writes a partial frame by frame, so that a shard's items need
// not all be held.
type Writer struct {
	zw               *gzip.Writer // nil when not compressing
	bw               *bufio.Writer
	buf              []byte // the frame being built
	lastSrc, lastFmt string
	items            int
	rows             map[string]int
}

// NewWriter writes the magic line and the header h to w and returns a
// Writer for the rest; compress gzips the whole.
func NewWriter(w io.Writer, h Header, compress bool) (*Writer, error) {
	h.Format, h.Version, h.Lines = Magic, Version, lineDocs
	pw := &Writer{rows: map[string]int{}}
	if compress {
		pw.zw, _ = gzip.NewWriterLevel(w, gzip.BestSpeed)
		w = pw.zw
	}
	pw.bw = bufio.NewWriterSize(w, 64<<10)
	pw.bw.WriteString(Magic + " " + strconv.Itoa(Version) + "\n")
	b, err := json.Marshal(h)
	if err != nil {
		return nil, fmt.Errorf("partial: header: %w", err)
	}
	return pw, pw.frame(kindHeader, b)
}

// frame writes one frame: its kind, its payload's length as a uvarint,
// the payload.
func (w *Writer) frame(kind byte, payload []byte) error {
	var head [1 + binary.MaxVarintLen64]byte
	head[0] = kind
	n := binary.PutUvarint(head[1:], uint64(len(payload)))
	w.bw.Write(head[:1+n])
	_, err := w.bw.Write(payload)
	return err
}

// Item writes one item.
func (w *Writer) Item(it *Item) error {
	w.items++
	var flags byte
	switch {
	case it.Skip != nil:
		flags = flagSkip
		if it.Skip.Failed {
			flags |= flagFailed
		}
	case it.Err != "":
		flags = flagErr
	default:
		flags = flagResult
	}
	if it.Src == w.lastSrc {
		flags |= flagSameSrc
	}
	if it.Format == w.lastFmt {
		flags |= flagSameFmt
	}
	b := append(w.buf[:0], flags)
	b = binary.AppendVarint(b, int64(it.In))
	b = binary.AppendVarint(b, int64(it.Seq))
	if flags&flagSameSrc == 0 {
		b = appendString(b, it.Src)
		w.lastSrc = it.Src
	}
	b = binary.AppendVarint(b, int64(it.Record))
	b = binary.AppendVarint(b, int64(it.Line))
	if flags&flagSameFmt == 0 {
		b = appendString(b, it.Format)
		w.lastFmt = it.Format
	}
	b = binary.LittleEndian.AppendUint64(b, it.Hash)
	switch {
	case flags&flagSkip != 0:
		b = appendString(appendString(b, it.Skip.Reason), it.Skip.Detail)
	case flags&flagErr != 0:
		b = appendString(b, it.Err)
	default:
		b = append(b, it.Result...)
	}
	w.buf = b
	return w.frame(kindItem, b)
}

func appendString(b []byte, s string) []byte {
	return append(binary.AppendUvarint(b, uint64(len(s))), s...)
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
	w.buf = append(appendString(w.buf[:0], name), row...)
	return w.frame(kindRow, w.buf)
}

// Close writes the end frame with the command's summary (JSON, or nil)
// and flushes the stream. It does not close the underlying writer.
func (w *Writer) Close(summary json.RawMessage) error {
	b, err := json.Marshal(end{Items: w.items, Rows: w.rows, Summary: summary})
	if err != nil {
		return fmt.Errorf("partial: summary: %w", err)
	}
	if err := w.frame(kindEnd, b); err != nil {
		return err
	}
	if err := w.bw.Flush(); err != nil {
		return err
	}
	if w.zw != nil {
		return w.zw.Close()
	}
	return nil
}

// Read reads a whole partial, gzip-compressed or not; name is used in
// errors ("name: frame 12: ...").
func Read(r io.Reader, name string) (*Partial, error) {
	return read(r, name, false)
}

// read reads a partial; compact holds its items packed.
func read(r io.Reader, name string, compact bool) (*Partial, error) {
	br := bufio.NewReaderSize(r, 64<<10)
	if head, _ := br.Peek(2); len(head) == 2 && head[0] == 0x1f && head[1] == 0x8b {
		zr, err := gzip.NewReader(br)
		if err != nil {
			return nil, fmt.Errorf("%s: not a partial report (%v)", name, err)
		}
		defer zr.Close()
		br = bufio.NewReaderSize(zr, 64<<10)
	}
	if err := readMagic(br); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	rd := reader{br: br, p: &Partial{Tables: map[string][]json.RawMessage{}}}
	if compact {
		// Index 0 is the empty string, the source and format an item
		// shares with none before it.
		rd.pk = &packed{strs: []string{""}}
	}
	for {
		kind, err := br.ReadByte()
		if err == io.EOF {
			break
		}
		rd.n++
		if err == nil {
			err = rd.frame(kind)
		}
		if err != nil {
			if errors.Is(err, io.ErrUnexpectedEOF) || err == io.EOF {
				err = errors.New("cut short inside the frame")
			}
			return nil, fmt.Errorf("%s: frame %d: %w", name, rd.n, err)
		}
	}
	p, fin := rd.p, rd.end
	switch {
	case rd.pk == nil:
		p.Items = rd.items()
	case rd.pk.sorted():
		p.packed = rd.pk
	default:
		p.Items = rd.pk.items()
	}
	switch {
	case rd.n == 0:
		return nil, fmt.Errorf("%s: not a partial report: no header", name)
	case fin == nil:
		return nil, fmt.Errorf("%s: cut short: no end frame after frame %d", name, rd.n)
	case fin.Items != p.Len():
		return nil, fmt.Errorf("%s: the end frame counts %d items, the file holds %d", name, fin.Items, p.Len())
	}
	for t, rows := range p.Tables {
		if fin.Rows[t] != len(rows) {
			return nil, fmt.Errorf("%s: the end frame counts %d rows of table %s, the file holds %d", name, fin.Rows[t], t, len(rows))
		}
	}
	p.Summary = fin.Summary
	return p, nil
}

// readMagic reads the magic line, "morsel-partial 2", and refuses other
// versions, including version 1's gzip-compressed JSON Lines.
func readMagic(br *bufio.Reader) error {
	line, err := br.ReadSlice('\n')
	if err != nil && len(line) == 0 {
		return errors.New("not a partial report (empty)")
	}
	if bytes.HasPrefix(line, []byte(`{"h":`)) {
		var v1 struct {
			H struct {
				Format  string `json:"format"`
				Version int    `json:"version"`
			} `json:"h"`
		}
		if json.Unmarshal(line, &v1) == nil && v1.H.Format == Magic {
			return versionError(v1.H.Version)
		}
	}
	rest, ok := bytes.CutPrefix(bytes.TrimSuffix(line, []byte("\n")), []byte(Magic+" "))
	if !ok || err != nil {
		return errors.New("not a partial report (no magic line)")
	}
	v, perr := strconv.Atoi(string(rest))
	if perr != nil {
		return fmt.Errorf("not a partial report (magic line %q)", line)
	}
	if v != Version {
		return versionError(v)
	}
	return nil
}

// reader reads the frames of one partial.
type reader struct {
	br  *bufio.Reader
	p   *Partial
	n   int    // frames read
	buf []byte // the frame being read
	// results holds the items' results and the tables' rows, many to an
	// allocation.
	results          []byte
	lastSrc, lastFmt string
	// pk, when set, receives the items packed; srcAt and fmtAt are the
	// last source's and format's indices in it.
	pk           *packed
	srcAt, fmtAt uint32
	end          *end
	// The items: full blocks, the block being filled, and their count.
	blocks [][]Item
	block  []Item
	nItems int
}

func (rd *reader) frame(kind byte) error {
	size, err := binary.ReadUvarint(rd.br)
	if err != nil {
		return err
	}
	if size > maxFrame {
		return fmt.Errorf("a frame of %d bytes, past the largest (%d)", size, maxFrame)
	}
	if cap(rd.buf) < int(size) {
		rd.buf = make([]byte, size)
	}
	b := rd.buf[:size]
	if _, err := io.ReadFull(rd.br, b); err != nil {
		return err
	}
	switch {
	case rd.end != nil:
		return errors.New("data after the end frame")
	case rd.n == 1 && kind != kindHeader:
		return errors.New("not a partial report: the first frame is not a header")
	case kind == kindHeader && rd.n > 1:
		return errors.New("a second header")
	case kind == kindHeader:
		h := &rd.p.Header
		if err := json.Unmarshal(b, h); err != nil {
			return fmt.Errorf("header: %v", err)
		}
		return h.check()
	case kind == kindItem:
		return rd.item(b)
	case kind == kindRow:
		d := decoder{b: b}
		name := d.string()
		if d.err != nil || name == "" {
			return errors.New("a table row without a table name")
		}
		row := d.b[d.i:]
		if !json.Valid(row) {
			return fmt.Errorf("table %s: a row that is not JSON", name)
		}
		rd.p.Tables[name] = append(rd.p.Tables[name], rd.keep(row))
		return nil
	case kind == kindEnd:
		rd.end = &end{}
		if err := json.Unmarshal(b, rd.end); err != nil {
			return fmt.Errorf("end: %v", err)
		}
		return nil
	}
	return fmt.Errorf("a frame of no known kind (%q)", kind)
}

func (rd *reader) item(b []byte) error {
	d := decoder{b: b}
	flags := d.byte()
	kinds := flags & (flagSkip | flagErr | flagResult)
	if kinds != flagSkip && kinds != flagErr && kinds != flagResult {
		return errors.New("an item that is not one of a result, an error or a skip")
	}
	var it Item
	it.In, it.Seq = d.int(), d.int()
	if flags&flagSameSrc == 0 {
		rd.lastSrc = d.string()
		if rd.pk != nil {
			rd.srcAt = rd.pk.str(rd.lastSrc)
		}
	}
	it.Src = rd.lastSrc
	it.Record, it.Line = d.int(), d.int()
	if flags&flagSameFmt == 0 {
		rd.lastFmt = d.string()
		if rd.pk != nil {
			rd.fmtAt = rd.pk.str(rd.lastFmt)
		}
	}
	it.Format = rd.lastFmt
	it.Hash = d.uint64()
	if rd.pk != nil {
		return rd.packItem(&d, kinds, flags, &it)
	}
	switch kinds {
	case flagSkip:
		it.Skip = &Skip{Reason: d.string(), Detail: d.string(), Failed: flags&flagFailed != 0}
		if d.err == nil && d.i != len(d.b) {
			d.err = errors.New("bytes after the skip")
		}
	case flagErr:
		it.Err = d.string()
		if d.err == nil && it.Err == "" {
			d.err = errors.New("an empty error")
		}
	default:
		if d.err == nil {
			it.Result = rd.keep(d.b[d.i:])
		}
	}
	if d.err != nil {
		return fmt.Errorf("item %d: %w", rd.nItems+1, d.err)
	}
	if len(rd.block) == cap(rd.block) {
		if rd.block != nil {
			rd.blocks = append(rd.blocks, rd.block)
		}
		rd.block = make([]Item, 0, itemBlock)
	}
	rd.block = append(rd.block, it)
	rd.nItems++
	return nil
}

// packItem reads the rest of an item into rd.pk.
func (rd *reader) packItem(d *decoder, kinds, flags byte, it *Item) error {
	pk := rd.pk
	r := rec{in: it.In, seq: it.Seq, record: it.Record, line: it.Line, hash: it.Hash, src: rd.srcAt, format: rd.fmtAt, kind: kinds}
	switch kinds {
	case flagSkip:
		pk.skips = append(pk.skips, Skip{Reason: d.string(), Detail: d.string(), Failed: flags&flagFailed != 0})
		r.aux = uint32(len(pk.skips) - 1)
		if d.err == nil && d.i != len(d.b) {
			d.err = errors.New("bytes after the skip")
		}
	case flagErr:
		e := d.string()
		if d.err == nil && e == "" {
			d.err = errors.New("an empty error")
		}
		r.aux = pk.str(e)
	default:
		if d.err == nil {
			r.aux, r.off, r.n = pk.keep(d.b[d.i:])
		}
	}
	if d.err != nil {
		return fmt.Errorf("item %d: %w", rd.nItems+1, d.err)
	}
	pk.add(r)
	rd.nItems++
	return nil
}

// itemBlock is how many items the reader holds in one allocation until
// it knows them all, so that a million items are not copied over and
// over as one slice grows.
const itemBlock = 4096

// items returns the items read, in one slice.
func (rd *reader) items() []Item {
	if len(rd.blocks) == 0 {
		return rd.block
	}
	all := make([]Item, 0, rd.nItems)
	for _, b := range rd.blocks {
		all = append(all, b...)
	}
	return append(all, rd.block...)
}

// keep copies b out of the frame buffer into a shared block.
func (rd *reader) keep(b []byte) []byte {
	const block = 256 << 10
	if len(b) > block/4 {
		return append([]byte(nil), b...)
	}
	if cap(rd.results)-len(rd.results) < len(b) {
		rd.results = make([]byte, 0, block)
	}
	at := len(rd.results)
	rd.results = append(rd.results, b...)
	return rd.results[at:len(rd.results):len(rd.results)]
}

// decoder reads the fields of a frame; the first error sticks.
type decoder struct {
	b   []byte
	i   int
	err error
}

var errShort = errors.New("cut short")

func (d *decoder) byte() byte {
	if d.err != nil || d.i >= len(d.b) {
		d.err = errShort
		return 0
	}
	d.i++
	return d.b[d.i-1]
}

func (d *decoder) int() int {
	if d.err != nil {
		return 0
	}
	v, n := binary.Varint(d.b[d.i:])
	if n <= 0 || int64(int(v)) != v {
		d.err = errors.New("a bad number")
		return 0
	}
	d.i += n
	return int(v)
}

func (d *decoder) uint64() uint64 {
	if d.err != nil || len(d.b)-d.i < 8 {
		d.err = errShort
		return 0
	}
	d.i += 8
	return binary.LittleEndian.Uint64(d.b[d.i-8:])
}

func (d *decoder) string() string {
	if d.err != nil {
		return ""
	}
	n, k := binary.Uvarint(d.b[d.i:])
	if k <= 0 || n > uint64(len(d.b)-d.i-k) {
		d.err = errShort
		return ""
	}
	d.i += k
	s := string(d.b[d.i : d.i+int(n)])
	d.i += int(n)
	return s
}
