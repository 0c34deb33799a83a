package survey

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"

	"morsel/bpe"
	"morsel/report/render"
)

// A RowStream writes a survey in JSON or CSV with each document's row
// written as it is counted, so that the rows of a million documents are
// never held: JSON's "documents" array comes before the parts that need
// every document, and CSV is the rows alone.
type RowStream struct {
	f    render.Format
	bw   *bufio.Writer
	csv  *render.RowWriter
	rows int
}

var csvHeader = []string{"source", "record", "format", "bytes", "characters", "words", "tokens", "bytes_per_token", "tokens_per_word", "special_strings"}

// NewRowStream starts a survey under the vocabulary info in format f (JSON
// or CSV) on w.
func NewRowStream(w io.Writer, f render.Format, info bpe.Info) (*RowStream, error) {
	rs := &RowStream{f: f, bw: bufio.NewWriterSize(w, 64<<10)}
	switch f {
	case render.CSV:
		var err error
		rs.csv, err = render.NewRowWriter(rs.bw, csvHeader)
		return rs, err
	case render.JSON:
		rs.bw.WriteString("{\n")
		if err := rs.field("vocabulary", info, false); err != nil {
			return nil, err
		}
		rs.bw.WriteString("  \"documents\": [")
		return rs, nil
	}
	return nil, fmt.Errorf("survey rows stream only as JSON or CSV, not %s", f)
}

// Row writes one document's row.
func (rs *RowStream) Row(d Weight) error {
	rs.rows++
	if rs.f == render.CSV {
		return rs.csv.Write(d.Source, fmt.Sprint(d.Record), d.Format, fmt.Sprint(d.Bytes), fmt.Sprint(d.Chars), fmt.Sprint(d.Words), fmt.Sprint(d.Tokens),
			render.Ratio(float64(d.Bytes), float64(d.Tokens)), render.Ratio(float64(d.Tokens), float64(d.Words)), fmt.Sprint(d.Specials))
	}
	b, err := json.MarshalIndent(d, "    ", "  ")
	if err != nil {
		return err
	}
	if rs.rows > 1 {
		rs.bw.WriteString(",")
	}
	rs.bw.WriteString("\n    ")
	_, err = rs.bw.Write(b)
	return err
}

// Finish writes the rest of the survey s, whose rows were all written,
// and flushes.
func (rs *RowStream) Finish(s *Report) error {
	if rs.f == render.CSV {
		if err := rs.csv.Flush(); err != nil {
			return err
		}
		return rs.bw.Flush()
	}
	if rs.rows > 0 {
		rs.bw.WriteString("\n  ")
	}
	rs.bw.WriteString("],\n")
	rest := []struct {
		name string
		v    any
	}{{"skipped", s.Skipped}, {"totals", s.Totals}, {"spread", s.Spread}, {"histogram", s.Histogram},
		{"formats", s.Formats}, {"largest", s.Largest}, {"identical", s.Identical}, {"warnings", s.Warnings}}
	for i, r := range rest {
		if err := rs.field(r.name, r.v, i == len(rest)-1); err != nil {
			return err
		}
	}
	rs.bw.WriteString("}\n")
	return rs.bw.Flush()
}

// field writes one member of the top-level object.
func (rs *RowStream) field(name string, v any, last bool) error {
	b, err := json.MarshalIndent(v, "  ", "  ")
	if err != nil {
		return err
	}
	fmt.Fprintf(rs.bw, "  %q: %s", name, b)
	if !last {
		rs.bw.WriteString(",")
	}
	rs.bw.WriteString("\n")
	return nil
}
