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
// The lines after the first are kept while a row is read, to be read again
// in that case, so a row costs at most about twice max in memory.
type rowReader struct {
	src   *bufio.Reader
	comma byte
	lazy  bool
	max   int64
	// back holds lines given back after a failed row, read before src.
	back []byte
	// line is the number of lines read so far; gap is added to it once
	// back is read, for lines that were skipped and not given back.
	line, gap int
	// raw keeps the bytes of the lines of the row being read after its
	// first; first is the length of its first line.
	raw      []byte
	rawStart int
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
	if len(r.back) > 0 {
		i := bytes.IndexByte(r.back, '\n')
		if i < 0 {
			// The last line given back was the input's last: src is at
			// its end, and the next call says so.
			line, r.back = r.back, nil
		} else {
			line, r.back = r.back[:i+1], r.back[i+1:]
		}
		if len(r.back) == 0 {
			r.back = nil // let what was given back go
		}
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
	if keep {
		r.raw = append(r.raw, line...)
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
	if !r.keepAll {
		r.raw = r.raw[:0]
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
			r.raw = r.raw[:0]
		}
	}
	start := r.line
	r.rawStart = len(r.raw)
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
			r.buf = append(r.buf, field...)
			r.ends = append(r.ends, len(r.buf))
			if i >= 0 {
				line = line[i+1:]
				continue
			}
			return start, nil
		}
		// A quoted field.
		line = line[1:]
		for {
			i := bytes.IndexByte(line, '"')
			if i >= 0 {
				r.buf = append(r.buf, line[:i]...)
				line = line[i+1:]
				switch {
				case len(line) > 0 && line[0] == '"':
					r.buf = append(r.buf, '"')
					line = line[1:]
				case len(line) > 0 && line[0] == comma:
					line = line[1:]
					r.ends = append(r.ends, len(r.buf))
					continue fields
				case lengthNL(line) == len(line):
					r.ends = append(r.ends, len(r.buf))
					return start, nil
				case r.lazy:
					r.buf = append(r.buf, '"')
				default:
					return start, r.fail(start, csv.ErrQuote.Error())
				}
				continue
			}
			if len(line) > 0 {
				// The field goes on to the next line.
				r.buf = append(r.buf, line...)
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
			return start, nil
		}
	}
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
	rest := r.raw[r.rawStart:]
	if len(r.back) == 0 {
		r.back = rest // raw's memory is back's now
	} else {
		// rest is read again before what was left of back.
		r.back = append(rest[:len(rest):len(rest)], r.back...)
	}
	// The row's memory goes now, not when the next long row replaces it.
	r.raw, r.buf = nil, nil
	given := bytes.Count(rest, []byte{'\n'})
	if len(rest) > 0 && rest[len(rest)-1] != '\n' {
		given++
	}
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
