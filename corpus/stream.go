package corpus

import (
	"compress/gzip"
	"io"
	"path/filepath"
	"strings"

	"github.com/klauspost/compress/zstd"
)

// ReadStream reads one input that another file system opened (an object
// store, say) as Read reads a file: name is the input's path, which names
// its items and chooses its format by extension, size its length in bytes
// or -1. A ".gz", ".zst" or ".zstd" name is decompressed first. It calls fn
// for each document and skip, in order, and returns only the first error
// fn returns. r is read to its end but not closed.
func ReadStream(name string, size int64, r io.Reader, opt Options, fn func(Item) error) error {
	named := func(it Item) error {
		if it.Doc != nil {
			it.Doc.Source = name
		} else if it.Skip != nil {
			it.Skip.Source = name
		}
		return fn(it)
	}
	skip := func(reason, detail string, failed bool) error {
		return fn(Item{Skip: &Skip{Source: name, Reason: reason, Detail: detail, Failed: failed}})
	}
	base := strings.ToLower(filepath.Base(name))
	var body io.Reader = r
	// closer closes the decompressor once Read is done with it, or once
	// a Document.Stream that reads through it is closed.
	var closer io.Closer
	switch {
	case strings.HasSuffix(base, ".gz"):
		base = strings.TrimSuffix(base, ".gz")
		zr, err := gzip.NewReader(r)
		if err == io.EOF {
			return skip(ReasonEmpty, "no bytes", false)
		}
		if err != nil {
			msg := err.Error()
			if !strings.HasPrefix(msg, "gzip:") {
				msg = "gzip: " + msg
			}
			return skip(ReasonCorrupt, msg, true)
		}
		closer = zr
		body, size = zr, -1
	case strings.HasSuffix(base, ".zst"), strings.HasSuffix(base, ".zstd"):
		base = strings.TrimSuffix(strings.TrimSuffix(base, ".zstd"), ".zst")
		zr, err := zstd.NewReader(r, zstd.WithDecoderConcurrency(1), zstd.WithDecoderLowmem(true),
			zstd.WithDecoderMaxMemory(1<<30))
		if err != nil {
			return skip(ReasonCorrupt, err.Error(), true)
		}
		closer = zstdCloser{zr}
		body, size = zr, -1
	}
	if opt.Format == "" {
		opt.Format = formatByExt(filepath.Ext(base))
	}
	if opt.Format == "binary" {
		if closer != nil {
			closer.Close()
		}
		return skip(ReasonBinary, "binary file type "+filepath.Ext(base), false)
	}
	// Read treats "-" as a stream it must not open, and takes its bytes
	// from Options.Stdin; the names are put back on the way out.
	opt.Stdin = body
	rd := newReader(Input{Path: "-", Size: size}, opt, named)
	rd.stdinCloser = closer
	rd.source = name
	return rd.run()
}
