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
// data holds no DocumentMark, or more than one, or a NUL byte.
func ParseFrame(name string, data []byte) (*Frame, error) {
	if z := bytes.IndexByte(data, 0); z >= 0 {
		return nil, fmt.Errorf("%s:%d: a NUL byte; a frame is text (is this a binary file?)", name, textfile.Line(data, int64(z)))
	}
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
	if err := unknownMarks(name, data); err != nil {
		return nil, err
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
// across the frame's edges), plus overhead. The error is that of a split
// pattern that ran past its time limit (bpe.Encoder.CountChecked): the
// count is then not exact.
func InputTokens(enc *bpe.Encoder, f *Frame, source string, doc []byte, overhead int) (int, error) {
	if f != nil {
		doc = f.Assemble(source, doc)
	}
	n, err := enc.CountChecked(doc)
	return n + overhead, err
}

// unknownMarks returns an error naming the first {{name}} in data that is
// not a placeholder a frame knows, such as a misspelled {{sorce}}, which
// would otherwise be sent as literal text.
func unknownMarks(name string, data []byte) error {
	for at := 0; ; {
		i := bytes.Index(data[at:], []byte("{{"))
		if i < 0 {
			return nil
		}
		i += at
		j := bytes.Index(data[i:], []byte("}}"))
		if j < 0 {
			return nil
		}
		mark := data[i : i+j+2]
		inner := bytes.TrimSpace(mark[2 : len(mark)-2])
		if string(mark) != DocumentMark && string(mark) != SourceMark && isMarkName(inner) {
			return fmt.Errorf("%s:%d: unknown placeholder %s: a frame knows %s and %s", name, textfile.Line(data, int64(i)), mark, DocumentMark, SourceMark)
		}
		at = i + 2
	}
}

// isMarkName reports whether b looks like a placeholder's name: letters,
// digits, '_', '-' and '.', as template languages use; other text between
// braces is left alone.
func isMarkName(b []byte) bool {
	if len(b) == 0 || len(b) > 40 {
		return false
	}
	for _, c := range b {
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '_' || c == '-' || c == '.') {
			return false
		}
	}
	return true
}
