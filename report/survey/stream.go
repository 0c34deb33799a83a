package survey

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"strconv"

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
	buf  []byte

	source, format quotedString
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
		return rs.csv.Write(d.Source, fmt.Sprint(d.Record), d.Format, fmt.Sprint(d.Bytes), fmt.Sprint(d.Chars), fmt.Sprint(d.WCWords), fmt.Sprint(d.Tokens),
			render.Ratio(float64(d.Bytes), float64(d.Tokens)), render.Ratio(float64(d.Tokens), float64(d.WCWords)), fmt.Sprint(d.Specials))
	}
	var err error
	rs.buf, err = rs.appendRow(rs.buf[:0], d)
	if err != nil {
		return err
	}
	if rs.rows > 1 {
		rs.bw.WriteString(",")
	}
	rs.bw.WriteString("\n    ")
	_, err = rs.bw.Write(rs.buf)
	return err
}

// appendRow appends d as json.MarshalIndent(d, "    ", "  ") writes it,
// without reflection: the strings go through encoding/json (a source is
// the same for every record of a file, so its form is kept), the numbers
// through strconv as encoding/json formats them.
func (rs *RowStream) appendRow(b []byte, d Weight) ([]byte, error) {
	src, err := rs.quoted(&rs.source, d.Source)
	if err != nil {
		return b, err
	}
	format, err := rs.quoted(&rs.format, d.Format)
	if err != nil {
		return b, err
	}
	const in = "\n      "
	b = append(b, "{"+in+`"source": `...)
	b = append(b, src...)
	if d.SourceBytes != "" {
		// Rare (a name that is not UTF-8), so not kept.
		raw, err := json.Marshal(d.SourceBytes)
		if err != nil {
			return b, err
		}
		b = append(b, ","+in+`"source_bytes": `...)
		b = append(b, raw...)
	}
	b = append(b, ","+in+`"record": `...)
	b = strconv.AppendInt(b, int64(d.Record), 10)
	if d.Line != 0 {
		b = append(b, ","+in+`"line": `...)
		b = strconv.AppendInt(b, int64(d.Line), 10)
	}
	b = append(b, ","+in+`"format": `...)
	b = append(b, format...)
	for _, f := range [...]struct {
		name string
		n    int64
	}{{"bytes", d.Bytes}, {"characters", d.Chars}, {"words", d.WCWords}, {"tokens", int64(d.Tokens)}} {
		b = append(b, ","+in+`"`...)
		b = append(b, f.name...)
		b = append(b, `": `...)
		b = strconv.AppendInt(b, f.n, 10)
	}
	for _, f := range [...]struct {
		name string
		x    float64
	}{{"bytes_per_token", d.BytesPerToken}, {"tokens_per_word", d.TokensPerWCWord}} {
		b = append(b, ","+in+`"`...)
		b = append(b, f.name...)
		b = append(b, `": `...)
		if b, err = render.AppendJSONFloat(b, f.x); err != nil {
			return b, err
		}
	}
	b = append(b, ","+in+`"special_strings": `...)
	b = strconv.AppendInt(b, int64(d.Specials), 10)
	return append(b, "\n    }"...), nil
}

// quoted returns s as a JSON string, from the last one when it is the same.
func (rs *RowStream) quoted(last *quotedString, s string) ([]byte, error) {
	if last.json != nil && last.s == s {
		return last.json, nil
	}
	b, err := json.Marshal(s)
	if err != nil {
		return nil, err
	}
	*last = quotedString{s: s, json: b}
	return b, nil
}

// quotedString is a string and its JSON form.
type quotedString struct {
	s    string
	json []byte
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
