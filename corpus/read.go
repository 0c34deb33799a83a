package corpus

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"
	"syscall"
	"unicode/utf8"

	"github.com/cespare/xxhash/v2"
	"github.com/klauspost/compress/zstd"
)

// sniffSize is how much of an input is looked at to tell binary from text
// and to guess a format.
const sniffSize = 8 << 10

// Read reads one input and calls fn for each of its documents and skips, in
// input order. Problems with the input become Skips; Read returns only the
// first error fn returns, which stops it.
func Read(in Input, opt Options, fn func(Item) error) error {
	return newReader(in, opt, fn).run()
}

func newReader(in Input, opt Options, fn func(Item) error) *reader {
	return &reader{in: in, opt: opt.withDefaults(), fn: fn, fieldAsked: opt.Field != "", columnAsked: opt.Column != "", source: in.Path}
}

type reader struct {
	in  Input
	opt Options
	fn  func(Item) error
	// src records errors from below the decompressor and parser, so that a
	// cut stream is told apart from bad syntax.
	src *errReader
	// closers close the decompressor and then the file. A Stream takes
	// them over (owned), since it keeps reading through them after Read
	// returns.
	closers multiCloser
	owned   bool
	// size is the number of bytes of text the input holds when known (an
	// uncompressed file's size), else -1.
	size int64
	// fieldAsked and columnAsked tell whether Options named the field or
	// column, rather than leaving the default.
	fieldAsked, columnAsked bool
	// source is the items' Source, by which Options.Shard chooses them:
	// the input's path, or the name ReadStream gives them back.
	source string
	// stdinCloser, when set, is closed as the file would be once "-" is
	// read (ReadStream's decompressor).
	stdinCloser io.Closer
}

func (r *reader) doc(d *Document) error {
	d.Source = r.in.Path
	if d.Stream == nil {
		if int64(len(d.Text)) > r.opt.MaxDocument {
			return r.skipAt(d.Record, d.Line, ReasonTooLarge, tooLargeDetail(r.opt.MaxDocument), true)
		}
		d.Hash = xxhash.Sum64(d.Text)
	}
	return r.fn(Item{Doc: d})
}

// ErrDocumentTooLarge is the error a Document.Stream returns, wrapped, once
// its text has run past Options.MaxDocument.
var ErrDocumentTooLarge = errors.New("document too large")

func tooLargeDetail(max int64) string {
	return fmt.Sprintf("the text is longer than %d bytes, the largest document read (MaxDocument)", max)
}

func (r *reader) skip(record int, reason, detail string, failed bool) error {
	return r.fn(Item{Skip: &Skip{Source: r.in.Path, Record: record, Reason: reason, Detail: detail, Failed: failed}})
}

// skipAt is skip for a CSV or TSV row, which also gives the line where the
// row starts.
func (r *reader) skipAt(record, line int, reason, detail string, failed bool) error {
	return r.fn(Item{Skip: &Skip{Source: r.in.Path, Record: record, Line: line, Reason: reason, Detail: detail, Failed: failed}})
}

// readFailed reports an error from reading the input itself.
func (r *reader) readFailed(record int, where string, err error) error {
	msg := err.Error()
	// Errors of compress/gzip and zstd name their package already.
	if where != "" && !strings.HasPrefix(msg, where+":") {
		msg = where + ": " + msg
	}
	return r.skip(record, ReasonOf(err), msg, true)
}

// ReasonOf returns the Reason for an error met reading an input, as Read
// gives it in a Skip: ReasonTruncated for a stream that ends early,
// ReasonCorrupt for a bad compressed header or checksum, ReasonTooLarge
// for ErrDocumentTooLarge, ReasonSymlinkLoop, else ReasonUnreadable. A
// consumer of Document.Stream uses it so that a read error gives the same
// reason whether the document was held or streamed.
func ReasonOf(err error) string {
	switch {
	case errors.Is(err, io.ErrUnexpectedEOF):
		return ReasonTruncated
	case errors.Is(err, ErrDocumentTooLarge):
		return ReasonTooLarge
	case errors.Is(err, gzip.ErrHeader), errors.Is(err, gzip.ErrChecksum), isZstdErr(err):
		return ReasonCorrupt
	case errors.Is(err, syscall.ELOOP):
		return ReasonSymlinkLoop
	}
	return ReasonUnreadable
}

func isZstdErr(err error) bool {
	return strings.HasPrefix(err.Error(), "zstd") || errors.Is(err, zstd.ErrMagicMismatch) ||
		errors.Is(err, zstd.ErrCRCMismatch) || errors.Is(err, zstd.ErrReservedBlockType) ||
		errors.Is(err, zstd.ErrBlockTooSmall) || errors.Is(err, zstd.ErrUnknownDictionary)
}

// errReader remembers the first error other than io.EOF that its reader
// returns.
type errReader struct {
	r   io.Reader
	err error
}

func (e *errReader) Read(p []byte) (int, error) {
	n, err := e.r.Read(p)
	if err != nil && err != io.EOF && e.err == nil {
		e.err = err
	}
	return n, err
}

type compression int

const (
	compNone compression = iota
	compGzip
	compZstd
)

func (r *reader) run() error {
	var f io.ReadCloser
	if r.in.Path == "-" {
		f = io.NopCloser(r.opt.Stdin)
		if r.stdinCloser != nil {
			f = struct {
				io.Reader
				io.Closer
			}{r.opt.Stdin, r.stdinCloser}
		}
	} else {
		file, err := openRegular(r.in.Path)
		if err != nil {
			if errors.Is(err, errSpecial) {
				return r.skip(0, ReasonSpecial, err.Error(), r.in.Named)
			}
			return r.readFailed(0, "", err)
		}
		f = file
	}
	r.closers = multiCloser{f}
	defer func() {
		if !r.owned {
			r.closers.Close()
		}
	}()

	name := strings.ToLower(filepath.Base(r.in.Path))
	comp := compNone
	switch {
	case strings.HasSuffix(name, ".gz"):
		comp, name = compGzip, strings.TrimSuffix(name, ".gz")
	case strings.HasSuffix(name, ".zst"):
		comp, name = compZstd, strings.TrimSuffix(name, ".zst")
	case strings.HasSuffix(name, ".zstd"):
		comp, name = compZstd, strings.TrimSuffix(name, ".zstd")
	}
	format := r.opt.Format
	if format == "" && r.in.Path != "-" {
		format = formatByExt(filepath.Ext(name))
	}
	if format == "binary" {
		return r.skip(0, ReasonBinary, "binary file type "+filepath.Ext(name), false)
	}

	raw := &errReader{r: f}
	// A small file needs no 64 KB buffer: most files of a source tree are
	// a few kilobytes, and zeroing a large buffer for each costs more than
	// reading it.
	bufSize := 64 << 10
	if r.in.Size >= 0 && r.in.Size+1 < int64(bufSize) {
		bufSize = max(int(r.in.Size)+1, sniffSize)
	}
	br := bufio.NewReaderSize(raw, bufSize)
	if comp == compNone && format == "" {
		magic, _ := br.Peek(4)
		switch {
		case bytes.HasPrefix(magic, []byte{0x1f, 0x8b}):
			comp = compGzip
		case bytes.HasPrefix(magic, []byte{0x28, 0xb5, 0x2f, 0xfd}):
			comp = compZstd
		}
	}
	var body io.Reader = br
	switch comp {
	case compGzip:
		if _, err := br.Peek(1); err == io.EOF {
			return r.skip(0, ReasonEmpty, "no bytes", false)
		}
		zr, err := gzip.NewReader(br)
		if err != nil {
			return r.readFailed(0, "gzip", err)
		}
		r.closers = append(multiCloser{zr}, r.closers...)
		body = zr
	case compZstd:
		if _, err := br.Peek(1); err == io.EOF {
			return r.skip(0, ReasonEmpty, "no bytes", false)
		}
		zr, err := zstd.NewReader(br, zstd.WithDecoderConcurrency(1), zstd.WithDecoderLowmem(true),
			zstd.WithDecoderMaxMemory(1<<30))
		if err != nil {
			return r.readFailed(0, "zstd", err)
		}
		r.closers = append(multiCloser{zstdCloser{zr}}, r.closers...)
		body = zr
	}
	if comp != compNone {
		r.src = &errReader{r: body}
		body = bufio.NewReaderSize(r.src, 64<<10)
	} else {
		r.src = raw
	}
	in := body.(*bufio.Reader)

	head, err := in.Peek(sniffSize)
	if len(head) == 0 {
		if err == io.EOF || err == nil {
			return r.skip(0, ReasonEmpty, "no bytes", false)
		}
		return r.readFailed(0, "", err)
	}
	if why := binaryReason(head); why != "" {
		return r.skip(0, ReasonBinary, why, false)
	}
	if format == "" {
		format = sniff(head, r.opt.Column)
	}

	switch format {
	case FormatJSONL:
		return r.jsonl(in)
	case FormatJSON:
		return r.json(in)
	case FormatCSV:
		return r.csv(in, ',')
	case FormatTSV:
		return r.csv(in, '\t')
	case FormatHTML:
		return r.html(in)
	case FormatText, FormatMarkdown, FormatCode:
	default:
		return r.skip(0, ReasonUnreadable, fmt.Sprintf("unknown format %q", format), true)
	}

	// size is the file size when the bytes on disk are the text.
	size := int64(-1)
	if comp == compNone && r.in.Size > 0 {
		size = r.in.Size
	}
	r.size = size
	return r.text(in, format, size, "")
}

// text emits what src holds as one document of the given format, held
// whole up to Options.StreamAbove and streamed beyond it. size is the
// number of bytes src holds when known (an uncompressed file's size), else
// -1. note becomes the Document's Note.
func (r *reader) text(src io.Reader, format string, size int64, note string) error {
	if size > r.opt.MaxDocument {
		return r.skip(0, ReasonTooLarge, tooLargeDetail(r.opt.MaxDocument), true)
	}
	limit := r.opt.StreamAbove
	var text []byte
	if limit < 0 || size < 0 || size <= limit {
		// Hold up to the limit; stream only what turns out larger.
		held := src
		if limit >= 0 {
			held = io.LimitReader(src, limit+1)
		}
		var err error
		text, err = readSized(held, size)
		if err == nil && (limit < 0 || int64(len(text)) <= limit) {
			err = r.src.err
		}
		if err != nil {
			return r.readFailed(0, "", err)
		}
		if limit < 0 || int64(len(text)) <= limit {
			return r.doc(&Document{Record: 0, Format: format, Text: text, Size: int64(len(text)), Note: note})
		}
	}
	r.owned = true
	d := &Document{Record: 0, Format: format, Size: size, Note: note}
	d.Stream = &stream{r: io.MultiReader(bytes.NewReader(text), src), c: r.closers, src: r.in.Path,
		doc: d, hash: xxhash.New(), max: r.opt.MaxDocument}
	return r.doc(d)
}

// stream is a Document.Stream: it reads the rest of an input and closes
// the file, naming the source in any read error.
type stream struct {
	r   io.Reader
	c   io.Closer
	src string
	// doc gets its Hash from hash once the stream is read to its end.
	doc  *Document
	hash *xxhash.Digest
	// n counts the bytes read; past max the stream fails.
	n, max int64
}

func (s *stream) Read(p []byte) (int, error) {
	n, err := s.r.Read(p)
	s.hash.Write(p[:n])
	if s.n += int64(n); s.n > s.max {
		return n, fmt.Errorf("%s: %w: %s", s.src, ErrDocumentTooLarge, tooLargeDetail(s.max))
	}
	if err == io.EOF {
		s.doc.Hash = s.hash.Sum64()
	} else if err != nil {
		err = fmt.Errorf("%s: %w", s.src, err)
	}
	return n, err
}

func (s *stream) Close() error { return s.c.Close() }

// multiCloser closes each of its closers in order and returns the first
// error.
type multiCloser []io.Closer

func (m multiCloser) Close() error {
	var first error
	for _, c := range m {
		if err := c.Close(); err != nil && first == nil {
			first = err
		}
	}
	return first
}

// zstdCloser gives a zstd decoder the io.Closer interface.
type zstdCloser struct{ d *zstd.Decoder }

func (z zstdCloser) Close() error { z.d.Close(); return nil }

// binaryReason returns why head looks binary, or "" when it looks like
// text: a NUL byte, or more than 30% of its bytes in invalid UTF-8
// sequences. An incomplete sequence at the very end is not counted, since
// the window may cut a character.
func binaryReason(head []byte) string {
	if i := bytes.IndexByte(head, 0); i >= 0 {
		return fmt.Sprintf("NUL byte at offset %d", i)
	}
	bad := 0
	for i := 0; i < len(head); {
		c := head[i]
		if c < utf8.RuneSelf {
			i++
			continue
		}
		rn, n := utf8.DecodeRune(head[i:])
		if rn == utf8.RuneError && n == 1 {
			if !utf8.FullRune(head[i:]) {
				break
			}
			bad++
		}
		i += n
	}
	if bad*10 > len(head)*3 {
		return fmt.Sprintf("%d of the first %d bytes are not UTF-8", bad, len(head))
	}
	return ""
}

var extFormats = map[string]string{}

func init() {
	for format, exts := range map[string]string{
		FormatText:     ".txt .text .rst .tex .adoc .asciidoc .org .log .srt .vtt .wiki",
		FormatMarkdown: ".md .markdown .mdx .mkd",
		FormatHTML:     ".html .htm .xhtml",
		FormatJSONL:    ".jsonl .ndjson .jsonlines",
		FormatJSON:     ".json",
		FormatCSV:      ".csv",
		FormatTSV:      ".tsv .tab",
		FormatCode: ".go .py .js .mjs .cjs .ts .tsx .jsx .c .h .cc .cpp .cxx .hpp .hh .java .kt .kts " +
			".scala .rs .rb .php .cs .fs .swift .m .mm .sh .bash .zsh .fish .ps1 .pl .pm .lua .r .jl " +
			".dart .ex .exs .erl .hrl .hs .ml .mli .clj .lisp .el .scm .sql .css .scss .sass .less " +
			".vue .svelte .proto .graphql .yaml .yml .toml .ini .cfg .conf .xml .xsd .svg .mk .cmake " +
			".gradle .tf .nix .zig .nim .v .sv .vhd .asm .s .bat",
		"binary": ".png .jpg .jpeg .gif .webp .bmp .ico .tif .tiff .pdf .zip .tar .tgz .7z .rar .xz " +
			".bz2 .exe .dll .so .dylib .o .a .class .jar .pyc .wasm .woff .woff2 .ttf .otf .mp3 " +
			".mp4 .wav .ogg .flac .mov .avi .mkv .sqlite .db .bin .parquet",
	} {
		for _, e := range strings.Fields(exts) {
			extFormats[e] = format
		}
	}
}

// formatByExt returns the format for a lower-case extension, "binary" for a
// known binary type, or "" when the content must decide.
func formatByExt(ext string) string {
	return extFormats[ext]
}

var bom = []byte("\xef\xbb\xbf")

// sniff guesses the format of text from its first bytes: JSON Lines when
// it starts with '{' and its first non-blank line, or a later complete line,
// is a whole JSON object (or the first line runs past the window), JSON when it starts with
// '{' or '[' and the window tokenizes as JSON, HTML for a document that
// opens with a doctype or a common HTML tag, CSV or TSV when the first line
// is a header naming column and the following complete lines have as many
// fields, text otherwise.
func sniff(head []byte, column string) string {
	h := bytes.TrimPrefix(head, bom)
	t := bytes.TrimLeft(h, " \t\r\n")
	if len(t) == 0 {
		return FormatText
	}
	switch t[0] {
	case '{', '[':
		first := t
		i := bytes.IndexByte(t, '\n')
		if i >= 0 {
			first = t[:i]
		}
		first = bytes.TrimRight(first, " \t\r")
		if t[0] == '{' && (json.Valid(first) || objectLine(t)) {
			return FormatJSONL
		}
		if t[0] == '{' && i < 0 && len(head) >= sniffSize && jsonPrefixOK(t) {
			// The first line does not end inside the window: a long
			// record, read line by line.
			return FormatJSONL
		}
		if jsonPrefixOK(t) {
			return FormatJSON
		}
	case '<':
		if looksHTML(t) {
			return FormatHTML
		}
		return FormatText
	}
	if f := sniffDelimited(h, column); f != "" {
		return f
	}
	return FormatText
}

// objectLine reports whether some complete line of t is a JSON object on
// its own.
func objectLine(t []byte) bool {
	for {
		i := bytes.IndexByte(t, '\n')
		if i < 0 {
			return false
		}
		line := bytes.TrimSpace(t[:i])
		if len(line) > 0 && line[0] == '{' && json.Valid(line) {
			return true
		}
		t = t[i+1:]
	}
}

func looksHTML(t []byte) bool {
	n := t
	if len(n) > 512 {
		n = n[:512]
	}
	l := bytes.ToLower(n)
	for _, p := range []string{"<!doctype html", "<html", "<head", "<body", "<p>", "<p ", "<div", "<h1", "<h2", "<table", "<ul", "<article", "<section", "<title", "<meta"} {
		if bytes.HasPrefix(l, []byte(p)) {
			return true
		}
	}
	return false
}

// readSized is io.ReadAll with the buffer sized once when the size is known
// (size >= 0), so a file is read without growing and copying its text.
func readSized(r io.Reader, size int64) ([]byte, error) {
	if size < 0 {
		return io.ReadAll(r)
	}
	b := make([]byte, 0, size+1) // one more byte, to see the end at once
	for {
		n, err := r.Read(b[len(b):cap(b)])
		b = b[:len(b)+n]
		if err == io.EOF {
			return b, nil
		}
		if err != nil {
			return b, err
		}
		if len(b) == cap(b) { // the file grew while it was read
			b = append(b, 0)[:len(b)]
		}
	}
}
