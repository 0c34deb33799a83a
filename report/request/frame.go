package request

import (
	"bytes"
	"fmt"

	"morsel/bpe"
	"morsel/internal/textfile"
)

// The placeholders a frame may hold.
const (
	DocumentMark = "{{document}}" // where the document's text goes; exactly once
	SourceMark   = "{{source}}"   // the document's name (file, or file:record)
)

// Frame is the prompt text that wraps each document of a request, with the
// document's place marked by DocumentMark. A nil *Frame is no frame: the
// request is the document alone.
type Frame struct {
	Name   string // the file it came from, for reports
	before []byte
	after  []byte
}

// ParseFrame reads a frame from data; name is used in errors. It fails when
// data holds no DocumentMark, or more than one.
func ParseFrame(name string, data []byte) (*Frame, error) {
	i := bytes.Index(data, []byte(DocumentMark))
	if i < 0 {
		return nil, fmt.Errorf("%s: the frame has no %s placeholder, so the document would not be sent", name, DocumentMark)
	}
	rest := data[i+len(DocumentMark):]
	if j := bytes.Index(rest, []byte(DocumentMark)); j >= 0 {
		second := i + len(DocumentMark) + j
		return nil, fmt.Errorf("%s:%d: a second %s (the first is on line %d); a frame holds the document once",
			name, textfile.Line(data, int64(second)), DocumentMark, textfile.Line(data, int64(i)))
	}
	return &Frame{Name: name, before: data[:i], after: rest}, nil
}

// Parts returns the text before and after the document for the document
// named source, with SourceMark replaced by source. A nil frame gives two
// empty parts.
func (f *Frame) Parts(source string) (before, after []byte) {
	if f == nil {
		return nil, nil
	}
	src := []byte(source)
	return bytes.ReplaceAll(f.before, []byte(SourceMark), src), bytes.ReplaceAll(f.after, []byte(SourceMark), src)
}

// Assemble returns the request text for document doc named source: the
// frame with the document in its place.
func (f *Frame) Assemble(source string, doc []byte) []byte {
	before, after := f.Parts(source)
	out := make([]byte, 0, len(before)+len(doc)+len(after))
	out = append(out, before...)
	out = append(out, doc...)
	return append(out, after...)
}

// Label names the frame for reports: its file, or "none".
func (f *Frame) Label() string {
	if f == nil {
		return "none"
	}
	return f.Name
}

// InputTokens returns the input tokens of the request for doc: the tokens
// of the assembled text, counted on that text itself (BPE does not add up
// across the frame's edges), plus overhead.
func InputTokens(enc *bpe.Encoder, f *Frame, source string, doc []byte, overhead int) int {
	if f == nil {
		return enc.Count(doc) + overhead
	}
	return enc.Count(f.Assemble(source, doc)) + overhead
}
