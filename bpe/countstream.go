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
	var n int64
	framed := 0 // the framed count, less the tokens of the text after the last cut so far
	first := true
	buf := make([]byte, 0, 2*streamChunk)
	checked := 0 // buf[:checked] holds no cut: a long run of one class is not scanned again at every read
	for {
		if cap(buf)-len(buf) < streamChunk/2 {
			nb := make([]byte, len(buf), 2*cap(buf))
			copy(nb, buf)
			buf = nb
		}
		m, err := r.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+m]
		n += int64(m)
		eof := err == io.EOF
		if err != nil && !eof {
			st := e.CountStats(buf)
			total.Tokens += st.Tokens
			total.Specials += st.Specials
			return total, 0, n, err
		}
		cut := len(buf)
		if !eof {
			if len(buf) < streamChunk {
				continue
			}
			cut = safeCutFrom(buf, checked)
			if cut == 0 { // one long pre-token so far; read on
				checked = len(buf)
				continue
			}
		}
		st := e.CountStats(buf[:cut])
		total.Tokens += st.Tokens
		total.Specials += st.Specials
		if frame {
			switch {
			case first && eof: // no cut in the whole text
				framed = e.Count(join(before, buf, after))
			case first:
				framed = e.Count(join(before, buf[:cut], nil))
			case eof:
				framed += e.Count(join(nil, buf, after))
			default:
				framed += st.Tokens
			}
		}
		first = false
		if eof {
			return total, framed, n, nil
		}
		rest := copy(buf, buf[cut:])
		buf = buf[:rest]
		checked = rest // the cut was the last one
	}
}
