package corpus

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
)

// rowReader reads CSV or TSV rows by the rules of encoding/csv (RFC 4180;
// with FieldsPerRecord -1, and LazyQuotes for TSV), with two differences
// that keep a bad row from taking the rest of the file with it: a row is
// bounded (max bytes), and a row that spans lines and fails, such as one
// whose quote never closes, is reported and reading goes on from the line
// after the one where it started, not from where the failure was found.
// The lines of a row are kept while it is read, to be read again in that
// case; and once a quoted field spans lines, its bytes are no longer kept
// as a field but only as those lines, until the row is known to close,
// when it is read again from them. So a bad row costs about max in memory,
// and a good one about twice its size.
type rowReader struct {
	src   *bufio.Reader
	comma byte
	lazy  bool
	max   int64
	// back holds lines given back after a failed row, read before src.
	back lines
	// line is the number of lines read so far; gap is added to it once
	// back is read, for lines that were skipped and not given back.
	line, gap int
	// raw keeps the bytes of the lines of the row being read; the first
	// rawStart bytes are its first line (and, with keepAll, the empty
	// lines before it).
	raw      lines
	rawStart int64
	// probing says a quoted field of the row spans lines, so its fields
	// are not kept until it is known to close; known says the row is
	// being read again from back, known to close.
	probing, known bool
	// buf holds the row's fields one after another; ends their ends.
	buf  []byte
	ends []int
	// keepAll keeps in raw every line read, empty ones and the first
	// included, until it is cleared.
	keepAll bool
	// lineBuf gathers a line longer than src's buffer.
	lineBuf []byte
}

// rowError is a row that could not be read; reading goes on after it.
type rowError struct {
	reason string // ReasonMalformed or ReasonTooLarge
	line   int    // the line where the row starts
	msg    string
}

func (e *rowError) Error() string { return lineDetail(e.line, e.msg) }

func newRowReader(src *bufio.Reader, comma byte, max int64) *rowReader {
	return &rowReader{src: src, comma: comma, lazy: comma == '\t', max: max}
}

// errLineTooLong marks a line longer than max, which readLine skips.
var errLineTooLong = errors.New("line too long")

// readLine returns the next line with "\r\n" turned into "\n" and a "\r"
// before the end of the input dropped, as encoding/csv does. keep says
// whether to add its raw bytes to r.raw. At the end it returns io.EOF with
// no bytes; a line longer than max is skipped to its end and reported as
// errLineTooLong.
func (r *rowReader) readLine(keep bool) ([]byte, error) {
	var line []byte
	var err error
	if r.back.n > 0 {
		// The last line given back may be the input's last, without a
		// line break: src is at its end, and the next call says so.
		line = r.back.next()
	} else {
		r.line += r.gap
		r.gap = 0
		line, err = r.src.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			r.lineBuf = append(r.lineBuf[:0], line...)
			for err == bufio.ErrBufferFull {
				line, err = r.src.ReadSlice('\n')
				if int64(len(r.lineBuf)) <= r.max {
					r.lineBuf = append(r.lineBuf, line...)
				}
			}
			line = r.lineBuf
		}
		if err != nil && err != io.EOF {
			return nil, err
		}
		if int64(len(line)) > r.max {
			r.lineBuf = nil
			r.line++
			return nil, errLineTooLong
		}
	}
	if len(line) == 0 {
		return nil, io.EOF
	}
	r.line++
	if keep && (!r.known || r.keepAll) {
		r.raw.add(line)
	}
	n := len(line)
	if line[n-1] != '\n' && line[n-1] == '\r' {
		// For backwards compatibility, encoding/csv drops a trailing
		// \r before the end of the input.
		line = line[:n-1]
	} else if n >= 2 && line[n-2] == '\r' && line[n-1] == '\n' {
		line[n-2] = '\n'
		line = line[:n-1]
	}
	return line, nil
}

func lengthNL(b []byte) int {
	if len(b) > 0 && b[len(b)-1] == '\n' {
		return 1
	}
	return 0
}

// next reads the next row and returns the line it starts on. Its fields
// are then r.field(i) for i < r.fields(). It returns io.EOF at the end, a
// *rowError for a row that was skipped, and any other error when the input
// could not be read.
func (r *rowReader) next() (int, error) {
	r.probing = false
	if !r.keepAll {
		r.raw.reset()
	}
	// Skip empty lines.
	var line []byte
	var err error
	for {
		line, err = r.readLine(true)
		if err == errLineTooLong {
			return r.line, &rowError{ReasonTooLarge, r.line, fmt.Sprintf("a row longer than %d bytes", r.max)}
		}
		if err != nil {
			return r.line, err
		}
		if len(line) != lengthNL(line) {
			break
		}
		if !r.keepAll {
			r.raw.reset()
		}
	}
	start := r.line
	r.rawStart = r.raw.n
	r.buf, r.ends = r.buf[:0], r.ends[:0]
	size := int64(len(line))
	comma := r.comma
fields:
	for {
		if len(line) == 0 || line[0] != '"' {
			// An unquoted field.
			i := bytes.IndexByte(line, comma)
			field := line
			if i >= 0 {
				field = field[:i]
			} else {
				field = field[:len(field)-lengthNL(field)]
			}
			if !r.lazy && bytes.IndexByte(field, '"') >= 0 {
				return start, r.fail(start, csv.ErrBareQuote.Error())
			}
			r.put(field)
			r.ends = append(r.ends, len(r.buf))
			if i >= 0 {
				line = line[i+1:]
				continue
			}
			return r.closed(start)
		}
		// A quoted field.
		line = line[1:]
		for {
			i := bytes.IndexByte(line, '"')
			if i >= 0 {
				r.put(line[:i])
				line = line[i+1:]
				switch {
				case len(line) > 0 && line[0] == '"':
					r.put(quote)
					line = line[1:]
				case len(line) > 0 && line[0] == comma:
					line = line[1:]
					r.ends = append(r.ends, len(r.buf))
					continue fields
				case lengthNL(line) == len(line):
					r.ends = append(r.ends, len(r.buf))
					return r.closed(start)
				case r.lazy:
					r.put(quote)
				default:
					return start, r.fail(start, csv.ErrQuote.Error())
				}
				continue
			}
			if len(line) > 0 {
				// The field goes on to the next line: its bytes are kept
				// as lines alone until the row closes (see closed).
				r.put(line)
				r.probing = !r.known
				next, err := r.readLine(true)
				if err == errLineTooLong || (err == nil && size+int64(len(next)) > r.max) {
					return start, r.giveBack(start, ReasonTooLarge, fmt.Sprintf(
						"the quote opened on this line is not closed within %d bytes", r.max))
				}
				if err == io.EOF {
					line = nil
					continue
				}
				if err != nil {
					return start, err
				}
				size += int64(len(next))
				line = next
				continue
			}
			// The end of the input inside the quotes.
			if !r.lazy {
				return start, r.giveBack(start, ReasonMalformed,
					"the quote opened on this line is not closed by the end of the input")
			}
			r.ends = append(r.ends, len(r.buf))
			return r.closed(start)
		}
	}
}

var quote = []byte{'"'}

// put adds b to the row's fields, unless the row is probing.
func (r *rowReader) put(b []byte) {
	if !r.probing {
		r.buf = append(r.buf, b...)
	}
}

// closed ends a row that started on line start and closed. A row that was
// probing is given back whole and read again from its lines, now known to
// close, keeping its fields.
func (r *rowReader) closed(start int) (int, error) {
	if !r.probing {
		return start, nil
	}
	r.probing = false
	given := r.raw.lines()
	r.back.prepend(&r.raw)
	r.raw = lines{}
	r.line -= given
	r.known = true
	defer func() { r.known = false }()
	return r.next()
}

// fail reports a bad row: one that started on an earlier line than the
// failure is read again from its second line.
func (r *rowReader) fail(start int, msg string) error {
	if r.line > start {
		return r.giveBack(start, ReasonMalformed, msg)
	}
	return &rowError{ReasonMalformed, start, msg}
}

// giveBack reports the row that started on line start and makes its lines
// after the first the next ones read.
func (r *rowReader) giveBack(start int, reason, msg string) error {
	r.probing = false
	r.raw.drop(r.rawStart)
	given := r.raw.lines()
	// The rest is read again before what was left of back, and the
	// row's memory goes now, not when the next long row replaces it.
	r.back.prepend(&r.raw)
	r.raw, r.buf = lines{}, nil
	// Lines read but not given back (one skipped as too long) are
	// counted again once back is read.
	r.gap += r.line - start - given
	r.line = start
	return &rowError{reason, start, msg + "; reading goes on from the next line"}
}

func (r *rowReader) fields() int { return len(r.ends) }

// field returns field i of the last row; it is valid until the next call
// of next.
func (r *rowReader) field(i int) []byte {
	from := 0
	if i > 0 {
		from = r.ends[i-1]
	}
	return r.buf[from:r.ends[i]]
}

// lines holds lines of input in chunks that never move once made, so that
// a row of many lines costs its bytes and not the copies of a growing
// slice; read back with next, each chunk goes once its lines are read. A
// line is never split between chunks.
type lines struct {
	chunks [][]byte
	n      int64 // the bytes held
}

// lineChunk is the size of a chunk, unless a line is longer.
var lineChunk = 1 << 20 // a variable, so that a test can make many chunks of a small input

// add keeps a copy of line.
func (l *lines) add(line []byte) {
	k := len(l.chunks)
	if k == 0 || cap(l.chunks[k-1])-len(l.chunks[k-1]) < len(line) {
		l.chunks = append(l.chunks, make([]byte, 0, max(lineChunk, len(line))))
		k++
	}
	l.chunks[k-1] = append(l.chunks[k-1], line...)
	l.n += int64(len(line))
}

// reset empties l, keeping one chunk for the next row's lines.
func (l *lines) reset() {
	if len(l.chunks) == 0 {
		return
	}
	first := l.chunks[0][:0]
	clear(l.chunks)
	l.chunks = append(l.chunks[:0], first)
	l.n = 0
}

// next removes and returns the first line, with its line break if it has
// one; nil when l is empty. It is valid until l is added to.
func (l *lines) next() []byte {
	for len(l.chunks) > 0 && len(l.chunks[0]) == 0 {
		l.chunks[0] = nil // let the chunk go
		l.chunks = l.chunks[1:]
	}
	if len(l.chunks) == 0 {
		return nil
	}
	c := l.chunks[0]
	line := c
	if i := bytes.IndexByte(c, '\n'); i >= 0 {
		line = c[:i+1]
	}
	l.chunks[0] = c[len(line):]
	l.n -= int64(len(line))
	return line
}

// drop removes the first n bytes, which end a line.
func (l *lines) drop(n int64) {
	for n > 0 {
		n -= int64(len(l.next()))
	}
}

// lines returns the number of lines held, the last counted whether or not
// it ends in a line break.
func (l *lines) lines() int {
	n := 0
	for _, c := range l.chunks {
		n += bytes.Count(c, []byte{'\n'})
	}
	if k := len(l.chunks); k > 0 && len(l.chunks[k-1]) > 0 && l.chunks[k-1][len(l.chunks[k-1])-1] != '\n' {
		n++
	}
	return n
}

// prepend moves the lines of front before those of l, and empties front.
func (l *lines) prepend(front *lines) {
	if front.n == 0 {
		return
	}
	var chunks [][]byte
	for _, c := range front.chunks {
		if len(c) > 0 {
			chunks = append(chunks, c)
		}
	}
	for _, c := range l.chunks {
		if len(c) > 0 {
			chunks = append(chunks, c)
		}
	}
	l.chunks, l.n = chunks, l.n+front.n
	*front = lines{}
}

// bytes returns a copy of every byte held, in order.
func (l *lines) bytes() []byte {
	b := make([]byte, 0, l.n)
	for _, c := range l.chunks {
		b = append(b, c...)
	}
	return b
}

// reader returns a reader of the bytes held; l must not change while it
// is read.
func (l *lines) reader() io.Reader {
	rs := make([]io.Reader, 0, len(l.chunks))
	for _, c := range l.chunks {
		rs = append(rs, bytes.NewReader(c))
	}
	return io.MultiReader(rs...)
}
