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
// Options.Column.
func (r *reader) csv(in *bufio.Reader, comma rune) error {
	format := FormatCSV
	if comma == '\t' {
		format = FormatTSV
	}
	if b, _ := in.Peek(3); bytes.Equal(b, bom) {
		in.Discard(3)
	}
	cr := newCSV(in, comma)
	header, err := cr.Read()
	if err == io.EOF {
		if r.src.err != nil {
			return r.readFailed(0, "header", r.src.err)
		}
		return r.skip(0, ReasonEmpty, "no header", false)
	}
	if err != nil {
		return r.csvFailed(1, err)
	}
	header = append([]string(nil), header...)
	col := columnIndex(header, r.opt.Column)
	if col < 0 {
		return r.skip(0, ReasonNoField, fmt.Sprintf("line 1: no column %q in header (%s)", r.opt.Column, strings.Join(header, ", ")), true)
	}
	rows := 0
	for {
		before := cr.InputOffset()
		row, err := cr.Read()
		if err == io.EOF {
			break
		}
		rows++
		if err != nil {
			var pe *csv.ParseError
			if !errors.As(err, &pe) || r.src.err != nil {
				return r.csvFailed(0, err)
			}
			if e := r.skip(pe.StartLine, ReasonMalformed, lineDetail(pe.StartLine, pe.Err.Error()), true); e != nil {
				return e
			}
			if cr.InputOffset() == before {
				break
			}
			continue
		}
		line, _ := cr.FieldPos(0)
		if len(row) != len(header) {
			if e := r.skip(line, ReasonRagged, lineDetail(line, fmt.Sprintf("%d fields, the header has %d", len(row), len(header))), true); e != nil {
				return e
			}
			continue
		}
		if row[col] == "" {
			if e := r.skip(line, ReasonEmpty, lineDetail(line, fmt.Sprintf("column %q is empty", header[col])), false); e != nil {
				return e
			}
			continue
		}
		text := []byte(row[col])
		if e := r.doc(&Document{Record: line, Format: format, Text: text, Size: int64(len(text))}); e != nil {
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

func (r *reader) csvFailed(line int, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) && r.src.err == nil {
		return r.skip(pe.StartLine, ReasonMalformed, lineDetail(pe.StartLine, pe.Err.Error()), true)
	}
	if r.src.err != nil {
		err = r.src.err
	}
	if line == 0 {
		return r.readFailed(0, "", err)
	}
	return r.readFailed(line, "line "+strconv.Itoa(line), err)
}

// sniffDelimited returns "tsv" or "csv" when the first line of head is a
// header of two or more fields naming column and every following complete
// line has as many fields; "" otherwise.
func sniffDelimited(head []byte, column string) string {
	if len(head) >= sniffSize {
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
		rows := 0
		for {
			row, err := cr.Read()
			if err == io.EOF {
				break
			}
			if err != nil || len(row) != n {
				ok = false
				break
			}
			rows++
		}
		if ok && rows > 0 {
			if comma == '\t' {
				return FormatTSV
			}
			return FormatCSV
		}
	}
	return ""
}
