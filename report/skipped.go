package report

import (
	"encoding/base64"
	"strconv"
	"unicode/utf8"

	"morsel/corpus"
)

// Skipped is an input or record a report did not count, and why.
type Skipped struct {
	Source string `json:"source"`
	// SourceBytes is Source's bytes in base64 when they are not UTF-8, which a JSON string cannot keep.
	SourceBytes string `json:"source_bytes,omitempty"`
	Record      int    `json:"record"`
	// Line is, for a CSV or TSV row, the line where it starts.
	Line   int    `json:"line,omitempty"`
	Reason string `json:"reason"`
	Detail string `json:"detail,omitempty"`
	Failed bool   `json:"failed"` // it could not be read (exit status 1), as opposed to left out on purpose
}

// SourceBytes returns source's bytes in standard base64 (RFC 4648, padded)
// when source is not valid UTF-8, else "". JSON writes such a name with its
// bad bytes replaced by U+FFFD; the JSON views give this beside it, as
// "source_bytes", so that the file can still be found.
func SourceBytes(source string) string {
	if utf8.ValidString(source) {
		return ""
	}
	return base64.StdEncoding.EncodeToString([]byte(source))
}

// ReasonFailed is the reason given for a document that was read but could
// not be processed (a read error in the middle of a stream, say).
const ReasonFailed = "failed"

// SkipOf returns the report entry for a skip from the walk.
func SkipOf(s *corpus.Skip) Skipped {
	return Skipped{Source: s.Source, SourceBytes: SourceBytes(s.Source), Record: s.Record, Line: s.Line, Reason: s.Reason, Detail: s.Detail, Failed: s.Failed}
}

// FailedDoc returns the report entry for a document whose processing
// failed with err.
func FailedDoc(d *corpus.Document, err error) Skipped {
	// A read error in a streamed document (cut short, corrupt, too
	// large) is named as it is when the document is held.
	reason := corpus.ReasonOf(err)
	if reason == corpus.ReasonUnreadable {
		reason = ReasonFailed
	}
	return Skipped{Source: d.Source, SourceBytes: SourceBytes(d.Source), Record: d.Record, Line: d.Line, Reason: reason, Detail: err.Error(), Failed: true}
}

// Where returns "source" for a whole file and "source:record" for a record.
func Where(source string, record int) string {
	if record == 0 {
		return source
	}
	return source + ":" + strconv.Itoa(record)
}

// OrNone returns skips, or an empty list when it is nil, so that a report
// in JSON lists no skips as [] rather than null.
func OrNone(skips []Skipped) []Skipped {
	if skips == nil {
		return []Skipped{}
	}
	return skips
}
