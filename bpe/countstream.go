package bpe

import "io"

// streamChunk is how much CountReader reads at a time.
const streamChunk = 1 << 20

// CountReader counts the tokens of everything r yields, holding about one
// megabyte at a time, and returns the count with the number of bytes read.
// With the GPT-2 rule it cuts the stream only where a pre-token must end (a
// non-space character followed by white space), so the count equals that
// of the whole text; with another split pattern, special strings that
// hold white space, or a SentencePiece model, it reads the whole text
// first. Under a SentencePiece model whose texts may be cut before
// normalization (spm_stream.go), it cuts the stream there and counts the
// stretches on every core, holding a few megabytes.
func (e *Encoder) CountReader(r io.Reader) (Stats, int64, error) {
	if e.cutsInput() {
		return e.spmCountReader(r, streamChunk, spmWorkers())
	}
	st, _, n, err := e.countStream(r, nil, nil, false)
	return st, n, err
}

// CountFramedReader counts the text r yields as CountReader does, and also
// the tokens of the text with before and after joined to it, as
// CountChecked(before+text+after) would count them, in the same one pass:
// the cuts inside the text are cuts of the joined text too, so only the
// text before the first cut and after the last one is counted again with
// the frame's parts.
func (e *Encoder) CountFramedReader(r io.Reader, before, after []byte) (alone Stats, framed int, n int64, err error) {
	return e.countStream(r, before, after, true)
}

func (e *Encoder) countStream(r io.Reader, before, after []byte, frame bool) (Stats, int, int64, error) {
	if e.re != nil || e.v.pipe != nil || e.v.spm != nil || e.specialsHoldSpace() {
		all, err := io.ReadAll(r)
		st := e.CountStats(all)
		if err == nil {
			err = st.Err
		}
		framed := 0
		if frame && err == nil {
			framed, err = e.CountChecked(join(before, all, after))
		}
		return st, framed, int64(len(all)), err
	}
	var total Stats
	framed := 0 // the framed count, less the tokens of the text after the last cut so far
	first := true
	n, err := e.windows(r, streamChunk, func(w []byte, last bool) error {
		st := e.CountStats(w)
		total.Tokens += st.Tokens
		total.Specials += st.Specials
		if frame {
			switch {
			case first && last: // no cut in the whole text
				framed = e.Count(join(before, w, after))
			case first:
				framed = e.Count(join(before, w, nil))
			case last:
				framed += e.Count(join(nil, w, after))
			default:
				framed += st.Tokens
			}
		}
		first = false
		return nil
	})
	if err != nil {
		framed = 0
	}
	return total, framed, n, err
}

// Windows reads r to its end and gives fn its text in consecutive windows
// of at least size bytes (the last may be shorter), each but the last
// ending where a pre-token must end under the GPT-2 rule, so that the
// windows tokenized apart give the tokens of the whole text, and its words
// too (no word crosses white space). Where no such place is known (another
// split pattern, a bundle's pipeline, a SentencePiece model, special
// strings that hold white space) fn gets the whole text as one window. A
// window is valid only during the call. It returns the bytes read and the
// first error of the reader or of fn; on a read error fn has had what was
// read before it.
func (e *Encoder) Windows(r io.Reader, size int, fn func(window []byte, last bool) error) (int64, error) {
	if e.re != nil || e.v.pipe != nil || e.v.spm != nil || e.specialsHoldSpace() {
		all, err := io.ReadAll(r)
		if ferr := fn(all, true); err == nil {
			err = ferr
		}
		return int64(len(all)), err
	}
	return e.windows(r, size, fn)
}

func (e *Encoder) windows(r io.Reader, size int, fn func(window []byte, last bool) error) (int64, error) {
	var n int64
	buf := make([]byte, 0, 2*size)
	checked := 0 // buf[:checked] holds no cut: a long run of one class is not scanned again at every read
	for {
		if cap(buf)-len(buf) < size/2 {
			nb := make([]byte, len(buf), 2*cap(buf))
			copy(nb, buf)
			buf = nb
		}
		m, err := r.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+m]
		n += int64(m)
		eof := err == io.EOF
		if err != nil && !eof {
			fn(buf, true)
			return n, err
		}
		cut := len(buf)
		if !eof {
			if len(buf) < size {
				continue
			}
			cut = safeCutFrom(buf, checked)
			if cut == 0 { // one long pre-token so far; read on
				checked = len(buf)
				continue
			}
		}
		if err := fn(buf[:cut], eof); err != nil || eof {
			return n, err
		}
		rest := copy(buf, buf[cut:])
		buf = buf[:rest]
		checked = rest // the cut was the last one
	}
}
