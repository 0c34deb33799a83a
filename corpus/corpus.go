// Package corpus walks inputs and turns them into documents.
//
// List resolves paths (files, directories walked recursively in sorted
// order, glob patterns) into Inputs. Read opens one Input, picks its format
// and emits its Documents and Skips in input order.
//
// # Formats
//
// The format is chosen by extension; a file with no extension or an unknown
// one, and standard input ("-"), is sniffed from its first 8 KiB. A ".gz" or
// ".zst"/".zstd" suffix is decompressed first and the inner extension decides
// (notes.jsonl.gz is JSON Lines); gzip and zstd magic numbers are also
// recognised on sniffed inputs. Document.Format names the inner format.
// Sniffing picks JSON Lines for text that starts with '{' and has a line
// that is a whole JSON object, JSON for text starting with '{' or '[' that
// tokenizes as JSON, HTML for text opening with a doctype or a common HTML
// tag, CSV or TSV when the first line is a header of two or more fields that
// names Options.Column and the next lines have as many fields, and text
// otherwise. Options.Format overrides both extension and sniffing.
//
//   - "text", "markdown", "code": one document per file, bytes kept as they
//     are (invalid UTF-8 included). Files larger than Options.StreamAbove are
//     handed over as Document.Stream instead of Document.Text.
//   - "html": one document per file holding the visible text. The contents of
//     script, style, template, noscript and title are dropped, entities are
//     decoded, runs of white space collapse to one space (except inside pre),
//     block elements (p, div, li, h1-h6, tr, br, ...) end a line and table
//     cells are separated by a space.
//   - "jsonl": one document per non-blank line; Record is the 1-based line.
//   - "json": a top-level array gives one document per element (Record is the
//     1-based element index); any other top-level value is one document with
//     Record 0. The array is decoded one element at a time.
//   - "csv", "tsv": one document per data row, taken from the column whose
//     header is Options.Column (exact match, else case-insensitive). Record is
//     the 1-based row (the first after the header is 1) and Line the 1-based
//     line where it starts, the header being line 1. Quoting follows RFC
//     4180; as encoding/csv does, a CRLF inside a quoted field becomes LF.
//     TSV uses the same rules with a tab separator and lenient quotes. A row
//     that spans lines and fails (a quote that is never closed, say) is
//     skipped and reading goes on from the line after the one where it
//     started.
//
// A JSON or JSON Lines file whose first record (or array element, or only
// value) is an object or array with nothing at Options.Field, or a CSV or
// TSV file whose header has no Options.Column, is read as one text document
// with a Document.Note saying so, when Options.Field or Options.Column is
// left empty. When it was given, such a CSV file is one "no-field" skip that
// lists the header, and JSON records without the field that are not
// followed by any other record are one "no-field" skip for the file, which
// says what the first of them holds.
//
// A leading UTF-8 byte order mark is ignored by the json, jsonl, csv and tsv
// readers and kept in text documents.
//
// # Picking the text of a JSON record
//
// Options.Field is a dotted path ("text", "meta.body", "turns.0.text"): each
// part names an object member, or a 0-based index when the value there is an
// array. A record that is itself a JSON string is its own text, whatever the
// path. The value found must be:
//
//   - a string: that is the text;
//   - an array of messages: each element is either a string (taken as is) or
//     an object whose "content" is a string; an object with a string "role"
//     becomes "role: content", one without becomes "content"; an object whose
//     content is null or missing is left out. The messages are joined with a
//     single "\n". Any other element makes the record "not-text".
//   - null or missing: Skip "no-field";
//   - a number, boolean or object: Skip "not-text".
//
// An empty text gives Skip "empty".
//
// # Memory
//
// JSON Lines is read line by line and CSV row by row; a JSON array element by
// element. Plain text up to Options.StreamAbove is held whole, larger files
// are streamed. A JSON Lines line, a CSV or TSV row or an HTML text run
// longer than Options.MaxRecord is skipped as "too-large" (a CSV row holds
// its lines twice while it is read, to read them again should it fail). A
// single JSON element is held whole while it is read.
package corpus

import (
	"io"
	"io/fs"
	"os"
	"strconv"
)

// Reasons a Skip gives. Failed tells whether the input or record could not
// be read (an error the caller should report) or was left out on purpose.
const (
	// ReasonBinary: NUL bytes, or more than 30% of bytes in invalid UTF-8
	// sequences, in the first 8 KiB (after decompression), or a well-known
	// binary extension such as .png or .pdf. Not failed.
	ReasonBinary = "binary"
	// ReasonEmpty: a file with no bytes, a JSON Lines, JSON or CSV file with
	// no records, an HTML file with no visible text, or a record whose text
	// is empty. Not failed.
	ReasonEmpty = "empty"
	// ReasonUnreadable: the path is missing, cannot be opened or read, a
	// symbolic link dangles, or a glob matches nothing. Failed; Detail holds
	// the OS error.
	ReasonUnreadable = "unreadable"
	// ReasonMalformed: a JSON Lines line, JSON document or CSV row that does
	// not parse. Failed; the rest of a JSON Lines or CSV file is still read.
	ReasonMalformed = "malformed"
	// ReasonNoField: a JSON record without Options.Field (or with null
	// there), a JSON file none of whose records has it, or a CSV header
	// without Options.Column. Failed.
	ReasonNoField = "no-field"
	// ReasonNotText: a JSON field holding a number, boolean, object or an
	// array that is not a list of messages. Failed.
	ReasonNotText = "not-text"
	// ReasonSymlinkLoop: a symbolic link to a directory that is already being
	// walked above it (not failed: its files are counted once), or a link
	// chain that loops and so cannot be opened at all (failed).
	ReasonSymlinkLoop = "symlink-loop"
	// ReasonNoMatch: an Options.Include pattern that matched no file
	// listed; Source is the pattern. Failed.
	ReasonNoMatch = "no-match"
	// ReasonDuplicate: a file or directory reached a second time through a
	// symbolic link or a repeated argument; counted once. Not failed.
	ReasonDuplicate = "duplicate"
	// ReasonSpecial: a device, socket or named pipe, or a file of a kernel
	// file system such as /proc or /sys, which may block or never end.
	// Such files are never opened for reading (standard input, "-", is
	// read). Not failed when met inside a directory walk; failed when named
	// as an argument or matched by a glob.
	ReasonSpecial = "special"
	// ReasonTruncated: a compressed stream or JSON document that ends early.
	// Records read before the cut are still emitted. Failed.
	ReasonTruncated = "truncated"
	// ReasonCorrupt: a compressed stream with a bad header or checksum.
	// Failed.
	ReasonCorrupt = "corrupt"
	// ReasonRagged: a CSV/TSV row whose field count differs from the
	// header's. Failed; the rest of the file is still read.
	ReasonRagged = "ragged"
	// ReasonOutput: a file the run itself is writing (Options.Written),
	// which it never reads. Not failed.
	ReasonOutput = "output"
	// ReasonTooLarge: a JSON Lines line, CSV or TSV row or HTML text run
	// longer than Options.MaxRecord, or a document whose text is longer
	// than Options.MaxDocument. Failed.
	ReasonTooLarge = "too-large"
	// ReasonSetting: a file the run reads as one of its settings (an
	// Options.Settings entry: targets, frame, glossary), met in the walk or
	// named. It is not a document of the collection. Not failed.
	ReasonSetting = "setting"
)

// Format names reported in Document.Format.
const (
	FormatText     = "text"
	FormatMarkdown = "markdown"
	FormatCode     = "code"
	FormatHTML     = "html"
	FormatJSONL    = "jsonl"
	FormatJSON     = "json"
	FormatCSV      = "csv"
	FormatTSV      = "tsv"
)

// Document is one unit of text to weigh.
type Document struct {
	// Source is the path as walked, "-" for standard input.
	Source string
	// Record is 0 for a whole file, the 1-based line for JSON Lines, the
	// 1-based row for CSV/TSV (the first row after the header is 1), or
	// the 1-based element index for a JSON array.
	Record int
	// Line is, for a CSV/TSV row, the 1-based line where the row starts
	// (the header is line 1; a quoted field may span lines); else 0.
	Line int
	// Format is one of the Format constants; compression is not named.
	Format string
	// Text is the text; nil when Stream is set.
	Text []byte
	// Stream is set instead of Text for plain text larger than
	// Options.StreamAbove. The consumer owns it: it must read it to the end
	// and close it. Read errors from it name the Source.
	Stream io.ReadCloser
	// Size is the number of bytes of text when known (the file size for
	// plain files), -1 if not known.
	Size int64
	// Hash is the XXH64 hash (seed 0) of the text, by which identical
	// documents can be grouped. It is set when Text is, and for a Stream
	// once the stream has been read to its end.
	Hash uint64
	// Note, when set, says that the input was read otherwise than its
	// format suggests: a JSON, JSON Lines or CSV file without the text
	// field or column, read as one text document, say. A report shows it
	// once for the file.
	Note string
}

// Skip is an input or record that was not counted, and why.
type Skip struct {
	Source string
	// Record is 0 for a whole input, else as in Document.Record.
	Record int
	// Line is as in Document.Line.
	Line int
	// Reason is one of the Reason constants.
	Reason string
	// Detail is human text, e.g. "line 12: invalid character '}' ...".
	Detail string
	// Failed is true when the input or record could not be read, false for
	// deliberate skips such as binary or empty.
	Failed bool
}

// Item is one result of Read: exactly one of Doc and Skip is set, but for
// a record that Read passed over unread because it belongs to another
// share of Options.Shard: that Item has neither, and only keeps the
// record's place in the order of the items.
type Item struct {
	Doc  *Document
	Skip *Skip
}

// Options controls List and Read. The zero value is ready to use.
type Options struct {
	// Field is the JSON/JSON Lines field holding the text, a dotted path
	// for nesting; default "text". Left empty, a file without it is read as
	// text (see the package comment).
	Field string
	// Column is the CSV/TSV column holding the text; default "text". Left
	// empty, a file without it is read as text.
	Column string
	// Include keeps only files matching one of these globs; Exclude drops
	// files and prunes directories matching one of them. A pattern matches
	// the base name, the path as walked, or the path below the walked
	// directory; "**" matches any number of path parts.
	Include []string
	Exclude []string
	// Hidden walks files and directories whose name starts with "." too.
	// Hidden paths named directly are always read.
	Hidden bool
	// StreamAbove is the plain-text size above which a Document carries a
	// Stream instead of Text; default 32 MiB, negative means never.
	StreamAbove int64
	// MaxRecord bounds a JSON Lines line, a CSV or TSV row or an HTML text
	// run; default 256 MiB.
	MaxRecord int64
	// MaxDocument bounds the text of one document: a longer one is
	// skipped as "too-large" (a Stream fails with ErrDocumentTooLarge
	// once past it); default 256 MiB.
	MaxDocument int64
	// Format forces one format (a Format constant) instead of choosing by
	// extension or content.
	Format string
	// Stdin is read for the path "-"; default os.Stdin.
	Stdin io.Reader
	// Settings are the files the run reads as settings. A listed file that
	// is the same file (os.SameFile: same device and inode, whatever the
	// path or link it is reached by) is left out as ReasonSetting.
	Settings []Setting
	// Written are the files the run writes (matched by device and inode),
	// which it must never read: one met in a walk, or named, is left out
	// as "output".
	Written []fs.FileInfo
	// Shard, when not the whole walk, lets Read pass over the records of
	// a JSON Lines file that belong to other shares without decoding
	// them (see Item); the items of Shard are read as without it.
	Shard Shard
}

// Setting is a file a run reads as a setting rather than a document.
type Setting struct {
	Path string
	// What names its role, as in "frame" or "targets file".
	What string
}

// DefaultStreamAbove is the default Options.StreamAbove.
const DefaultStreamAbove = 32 << 20

// DefaultMaxRecord is the default Options.MaxRecord.
const DefaultMaxRecord = 256 << 20

// DefaultMaxDocument is the default Options.MaxDocument.
const DefaultMaxDocument = 256 << 20

func (o Options) withDefaults() Options {
	if o.Field == "" {
		o.Field = "text"
	}
	if o.Column == "" {
		o.Column = "text"
	}
	if o.StreamAbove == 0 {
		o.StreamAbove = DefaultStreamAbove
	}
	if o.MaxRecord <= 0 {
		o.MaxRecord = DefaultMaxRecord
	}
	if o.MaxDocument <= 0 {
		o.MaxDocument = DefaultMaxDocument
	}
	if o.Stdin == nil {
		o.Stdin = os.Stdin
	}
	return o
}

// Input is one file found by List. Size is -1 when not known.
type Input struct {
	Path string
	Size int64
	// Named is true when the path was an argument or matched a glob,
	// rather than met in a directory walk: a file of a kernel file system
	// that is named is a failure to read, one met in a walk a deliberate
	// skip.
	Named bool
}

func lineDetail(line int, msg string) string {
	return "line " + strconv.Itoa(line) + ": " + msg
}
