// Package textfile holds what every parser of a text file in morsel needs:
// the line an offset falls on, and the byte-order mark a file may start with.
package textfile

import "bytes"

// BOM is the UTF-8 byte-order mark.
var BOM = []byte("\xef\xbb\xbf")

// TrimBOM returns b without a leading UTF-8 byte-order mark.
func TrimBOM(b []byte) []byte { return bytes.TrimPrefix(b, BOM) }

// Line returns the 1-based line of byte offset off in data; an offset
// outside data counts as its nearest end.
func Line(data []byte, off int64) int {
	off = min(max(off, 0), int64(len(data)))
	return bytes.Count(data[:off], []byte{'\n'}) + 1
}
