package corpus

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

func newCSV(in io.Reader, comma rune) *csv.Reader {
	cr := csv.NewReader(in)
	cr.Comma = comma
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	cr.LazyQuotes = comma == '\t'
	return cr
}

// columnIndex returns the index of column in header: an exact match first,
// else a case-insensitive one, else -1.
func columnIndex(header []string, column string) int {
	for i, h := range header {
		if h == column {
			return i
		}
	}
	for i, h := range header {
		if strings.EqualFold(strings.TrimSpace(h), column) {
			return i
		}
	}
	return -1
}

// csv reads one document per data row from the column named by
// Options.Column. Rows are numbered from 1 after the header; Line is where
// each starts.
func (r *reader) csv(in *bufio.Reader, comma byte) error {
	format := FormatCSV
	if comma == '\t' {
		format = FormatTSV
	}
	var lead []byte
	if b, _ := in.Peek(3); bytes.Equal(b, bom) {
		in.Discard(3)
		lead = bom
	}
	rr := newRowReader(in, comma, r.opt.MaxRecord)
	rr.keepAll = true // the header's bytes, should the file be text
	_, err := rr.next()
	rr.keepAll = false
	if err == io.EOF {
		if r.src.err != nil {
			return r.readFailed(0, "header", r.src.err)
		}
		return r.skip(0, ReasonEmpty, "no header", false)
	}
	var re *rowError
	if errors.As(err, &re) {
		return r.skipAt(0, 1, re.reason, "header: "+re.Error(), true)
	}
	if err != nil {
		return r.readFailed(0, "header", err)
	}
	header := make([]string, rr.fields())
	for i := range header {
		header[i] = string(rr.field(i))
	}
	col := columnIndex(header, r.opt.Column)
	if col < 0 {
		if !r.columnAsked {
			// Not a table of texts: the whole file is one text document.
			raw := append(append([]byte(nil), lead...), rr.raw.bytes()...)
			note := fmt.Sprintf("read as one text document: the header has no column %q (it has %s)", r.opt.Column, joinNames(header))
			return r.text(io.MultiReader(bytes.NewReader(raw), rr.back.reader(), in), format, r.size, note)
		}
		return r.skip(0, ReasonNoField, fmt.Sprintf("line 1: no column %q in header (%s)", r.opt.Column, strings.Join(header, ", ")), true)
	}
	rows := 0
	for {
		line, err := rr.next()
		if err == io.EOF {
			break
		}
		rows++
		if errors.As(err, &re) {
			if e := r.skipAt(rows, re.line, re.reason, rowDetail(rows, re.line, re.msg), true); e != nil {
				return e
			}
			continue
		}
		if err != nil {
			return r.readFailed(rows, rowDetail(rows, line, "read"), err)
		}
		if rr.fields() != len(header) {
			if e := r.skipAt(rows, line, ReasonRagged, rowDetail(rows, line, fmt.Sprintf("%d fields, the header has %d", rr.fields(), len(header))), true); e != nil {
				return e
			}
			continue
		}
		field := rr.field(col)
		if len(field) == 0 {
			if e := r.skipAt(rows, line, ReasonEmpty, rowDetail(rows, line, fmt.Sprintf("column %q is empty", header[col])), false); e != nil {
				return e
			}
			continue
		}
		text := append([]byte(nil), field...)
		if e := r.doc(&Document{Record: rows, Line: line, Format: format, Text: text, Size: int64(len(text))}); e != nil {
			return e
		}
	}
	if r.src.err != nil {
		return r.readFailed(0, "after the last row", r.src.err)
	}
	if rows == 0 {
		return r.skip(0, ReasonEmpty, "no rows after the header", false)
	}
	return nil
}

// rowDetail names a row and the line where it starts.
func rowDetail(row, line int, msg string) string {
	return "row " + strconv.Itoa(row) + " (line " + strconv.Itoa(line) + "): " + msg
}

// sniffDelimited returns "tsv" or "csv" when the first line of head is a
// header of two or more fields naming column, and the rows after it parse
// with most of them (and at least one) as many fields as the header; ""
// otherwise. As a file named .csv is read, a ragged row does not make the
// input text; and when head fills the window, its last row may be cut
// (inside a quoted field that spans lines, say) and is not judged.
func sniffDelimited(head []byte, column string) string {
	full := len(head) >= sniffSize
	if full {
		if i := bytes.LastIndexByte(head, '\n'); i >= 0 {
			head = head[:i+1]
		}
	}
	for _, comma := range []rune{'\t', ','} {
		cr := newCSV(bytes.NewReader(head), comma)
		header, err := cr.Read()
		if err != nil || len(header) < 2 || columnIndex(header, column) < 0 {
			continue
		}
		n, ok := len(header), true
		rows, even := 0, 0
		for {
			row, err := cr.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				// Only the window's cut may fail: the last row.
				if _, next := cr.Read(); !full || next != io.EOF {
					ok = false
				}
				break
			}
			rows++
			if len(row) == n {
				even++
			}
		}
		if ok && even > 0 && 2*even >= rows {
			if comma == '\t' {
				return FormatTSV
			}
			return FormatCSV
		}
	}
	return ""
}
