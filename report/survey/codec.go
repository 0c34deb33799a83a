package survey

import (
	"encoding/binary"
	"errors"

	"morsel/corpus"
	"morsel/report"
)

// AppendWeight appends w's counts to b, as a partial report keeps a
// survey row: bytes, characters, words, tokens and special strings, five
// uvarints. The rest of the row (source, record, line, format, hash) is
// the item's, and the ratios follow from the counts.
func AppendWeight(b []byte, w Weight) []byte {
	for _, v := range [...]int64{w.Bytes, w.Chars, w.WCWords, int64(w.Tokens), int64(w.Specials)} {
		b = binary.AppendUvarint(b, uint64(v))
	}
	return b
}

// DecodeWeight reads a row that AppendWeight wrote for the document d
// (which gives its source, record, line, format and hash).
func DecodeWeight(d *corpus.Document, b []byte) (Weight, error) {
	w := Weight{Source: d.Source, SourceBytes: report.SourceBytes(d.Source), Record: d.Record, Line: d.Line, Format: d.Format, Hash: d.Hash}
	var v [5]int64
	for i := range v {
		x, n := binary.Uvarint(b)
		if n <= 0 || x > 1<<62 {
			return w, errors.New("a survey row that does not read")
		}
		v[i], b = int64(x), b[n:]
	}
	if len(b) != 0 {
		return w, errors.New("bytes after a survey row")
	}
	w.Bytes, w.Chars, w.WCWords, w.Tokens, w.Specials = v[0], v[1], v[2], int(v[3]), int(v[4])
	w.ratios()
	return w, nil
}
