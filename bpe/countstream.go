package bpe

import (
	"io"
	"runtime"
	"sync"
	"sync/atomic"
)

// streamChunk is how much CountReader reads at a time, and about the size
// of the stretches it counts apart.
const streamChunk = 1 << 20

// cutPlan is where an encoder may cut a long text so that its stretches,
// counted apart (all but the first as continuations), give the count of
// the whole: under the GPT-2 rule where a character other than white
// space is followed by white space (safeCut); under a bundle at the places
// of streamcut.go; under a SentencePiece model at the spaces of
// spm_stream.go, which the cut drops.
type cutPlan struct {
	// last returns the last cut in buf at from or after: the stretch
	// before it is buf[:end] and the rest starts at next; end is 0 when
	// there is none.
	last func(buf []byte, from int) (end, next int)
	// at, for a free plan, reports whether t may be cut at i (0 < i <
	// len(t)-1) by the bytes t[i-2:i+2] alone: the cuts that last finds
	// there, or fewer (FreeCutAt).
	at func(t []byte, i int) bool
	// free says that the stretches also tokenize as texts of their own,
	// and that the cut drops nothing (Windows).
	free bool
}

// planFor returns e's cut plan, or nil when it cuts nowhere.
func planFor(e *Encoder) *cutPlan {
	switch {
	case e.cutsInput():
		sp := e.v.spm
		return &cutPlan{last: func(buf []byte, from int) (int, int) {
			if j := sp.lastInputCut(buf, from); j > 0 {
				return j, j + 1
			}
			return 0, 0
		}}
	case e.v.spm != nil || e.re != nil:
		return nil
	case e.v.pipe != nil:
		rc := bundleCuts(e)
		if rc == nil {
			return nil
		}
		return &cutPlan{last: func(buf []byte, from int) (int, int) {
			i := rc.last(buf, from)
			return i, i
		}, at: func(t []byte, i int) bool {
			switch {
			case t[i] == ' ':
				return rc.allowsASCII(cutSpace, t[i-1], t[i+1])
			case t[i-1] == '\n' && i >= 2:
				return rc.allowsASCII(cutNewline, t[i-2], t[i])
			}
			return false
		}, free: rc.free}
	case e.specialsHoldSpace():
		return nil
	}
	return &cutPlan{last: func(buf []byte, from int) (int, int) {
		i := safeCutFrom(buf, from)
		return i, i
	}, at: func(t []byte, i int) bool {
		return safeCutFrom(t[:i+1], i) == i
	}, free: true}
}

// FreeCuts reports whether the encoder knows places where a text may be
// cut so that the stretches, each tokenized as a text of its own, give the
// tokens of the whole (FreeCutAt): under the GPT-2 rule, and under a
// bundle whose pipeline allows it and prepends nothing to a text (see
// streamcut.go).
func (e *Encoder) FreeCuts() bool { return e.plan != nil && e.plan.free }

// FreeCutAt reports whether, under FreeCuts, t may be cut at i (0 < i <
// len(t)). It looks at t[i-2:i+2] at most, so it may leave out places
// that the streamed count uses (a bundle's cut beside a letter beyond
// ASCII); a place one byte before the end of t is never one.
func (e *Encoder) FreeCutAt(t []byte, i int) bool {
	if !e.FreeCuts() || i <= 0 || i+1 >= len(t) {
		return false
	}
	return e.plan.at(t, i)
}

// countPart counts text into st with s: as a continuation when cont is
// set (a stretch after the start of a longer text).
func (e *Encoder) countPart(s *state, text []byte, cont bool, st *Stats) {
	switch {
	case e.v.spm != nil:
		e.spmCount(s, text, st)
	case e.v.pipe != nil:
		s.mode, s.n, s.cont = sinkCount, 0, cont
		var pst Stats
		e.runBundle(s, text, &pst, func(uint32, int, int) { s.n++ })
		s.cont = false
		st.Tokens += s.n
		st.Specials += pst.Specials
		if st.Err == nil {
			st.Err = pst.Err
		}
	default:
		e.segments(text, st, func(seg []byte, special int) {
			if special >= 0 {
				st.Tokens++
				return
			}
			if e.re != nil {
				keepErr(st, e.re.spans(seg, func(a, b int) { st.Tokens += len(s.piece(seg[a:b])) }))
				return
			}
			for i := 0; i < len(seg); {
				j := nextGPT2(seg, i)
				st.Tokens += s.count(seg[i:j])
				i = j
			}
		})
	}
}

// countLong counts a text of the plan's encoder on up to workers
// goroutines, in stretches of about size bytes; as a continuation when
// cont is set.
func (e *Encoder) countLong(text []byte, size, workers int, cont bool) Stats {
	type stretch struct{ a, b int }
	var parts []stretch
	for i := 0; i < len(text); {
		end, next := len(text), len(text)
		for w := 2 * size; ; w *= 2 { // the last cut within w bytes; a wider reach only where there is none
			j := i + w
			if j >= len(text) {
				break
			}
			if c, n := e.plan.last(text[:j], i+size); c > 0 {
				end, next = c, n
				break
			}
		}
		parts = append(parts, stretch{i, end})
		i = next
	}
	var tokens, specials atomic.Int64
	var errs sync.Once
	var err error
	e.inParallel(nil, len(parts), workers, func(k int, s *state) {
		var st Stats
		e.countPart(s, text[parts[k].a:parts[k].b], cont || k > 0, &st)
		tokens.Add(int64(st.Tokens))
		specials.Add(int64(st.Specials))
		if st.Err != nil {
			errs.Do(func() { err = st.Err })
		}
	})
	return Stats{Tokens: int(tokens.Load()), Specials: int(specials.Load()), Err: err}
}

// CountReader counts the tokens of everything r yields and returns the
// count with the number of bytes read. Where the encoder may cut a text
// (cutPlan), it holds a few megabytes at a time and counts them on every
// core; otherwise it reads the whole text first.
func (e *Encoder) CountReader(r io.Reader) (Stats, int64, error) {
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
	if e.plan == nil {
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
	return e.countCut(r, streamChunk, runtime.GOMAXPROCS(0), before, after, frame)
}

// countCut is countStream under a cut plan: r is read about size bytes at
// a time and cut into stretches of at least size bytes, counted on up to
// workers goroutines; about 2*workers stretches are held at once. A text
// shorter than size is counted on the calling goroutine.
func (e *Encoder) countCut(r io.Reader, size, workers int, before, after []byte, frame bool) (Stats, int, int64, error) {
	var tokens, specials, framed atomic.Int64
	var errs sync.Once
	var serr error
	count := func(s *state, text []byte, k int, last bool) {
		var st Stats
		e.countPart(s, text, k > 0, &st)
		tokens.Add(int64(st.Tokens))
		specials.Add(int64(st.Specials))
		f := st.Tokens
		if frame {
			var fst Stats
			switch {
			case k == 0 && last:
				e.countPart(s, join(before, text, after), false, &fst)
			case k == 0:
				e.countPart(s, join(before, text, nil), false, &fst)
			case last:
				e.countPart(s, join(nil, text, after), true, &fst)
			default:
				fst = st
			}
			f = fst.Tokens
			if st.Err == nil {
				st.Err = fst.Err
			}
		}
		framed.Add(int64(f))
		if st.Err != nil {
			errs.Do(func() { serr = st.Err })
		}
	}
	result := func(n int64, rerr error) (Stats, int, int64, error) {
		err := rerr
		if err == nil {
			err = serr
		}
		f := int(framed.Load())
		if err != nil {
			f = 0
		}
		return Stats{Tokens: int(tokens.Load()), Specials: int(specials.Load()), Err: serr}, f, n, err
	}

	var n int64
	buf := make([]byte, 0, 2*size)
	// fill reads into buf until it holds at least want bytes or r ends.
	fill := func(want int) (bool, error) {
		for len(buf) < want {
			if cap(buf)-len(buf) <= size/2 {
				nb := make([]byte, len(buf), 2*cap(buf)+size)
				copy(nb, buf)
				buf = nb
			}
			m, err := r.Read(buf[len(buf):cap(buf)])
			buf = buf[:len(buf)+m]
			n += int64(m)
			if err == io.EOF {
				return true, nil
			}
			if err != nil {
				return true, err
			}
		}
		return false, nil
	}
	eof, rerr := fill(size)
	if eof {
		s := e.get()
		count(s, buf, 0, true)
		e.put(s)
		return result(n, rerr)
	}

	type job struct {
		text []byte
		k    int
		last bool
	}
	jobs := make(chan job)
	free := make(chan []byte, 2*workers)
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			s := e.get()
			defer e.put(s)
			for j := range jobs {
				count(s, j.text, j.k, j.last)
				select {
				case free <- j.text[:0]:
				default:
				}
			}
		})
	}
	last := func([]byte, int) (int, int) { return 0, 0 }
	if e.plan != nil {
		last = e.plan.last
	}
	k := 0
	checked := 0 // buf[:checked] holds no cut: a long stretch without one is not scanned again at every read
	for !eof && rerr == nil {
		if len(buf) >= size {
			if end, next := last(buf, checked); end > 0 {
				var nb []byte
				select {
				case nb = <-free:
				default:
					nb = make([]byte, 0, 2*size)
				}
				nb = append(nb, buf[next:]...)
				jobs <- job{buf[:end], k, false}
				k++
				buf = nb
				checked = max(len(buf)-1, 0) // the cut was the last one but for the final byte, which had nothing after it
			} else {
				checked = max(len(buf)-1, 0)
			}
		}
		eof, rerr = fill(len(buf) + max(size/2, 1))
	}
	jobs <- job{buf, k, true}
	close(jobs)
	wg.Wait()
	return result(n, rerr)
}

// Windows reads r to its end and gives fn its text in consecutive windows
// of at least size bytes (the last may be shorter), each but the last
// ending at a cut of the encoder's plan that drops nothing and whose
// stretches tokenize as texts of their own (the GPT-2 rule's, and most
// bundles'), so that the windows tokenized apart give the tokens of the
// whole text, and its words too (every cut is at white space). Where no
// such place is known (another split pattern, a bundle that prepends to
// its text, a SentencePiece model, special strings that hold white space)
// fn gets the whole text as one window. A window is valid only during the
// call. It returns the bytes read and the first error of the reader or of
// fn; on a read error fn has had what was read before it.
func (e *Encoder) Windows(r io.Reader, size int, fn func(window []byte, last bool) error) (int64, error) {
	if e.plan == nil || !e.plan.free {
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
			cut, _ = e.plan.last(buf, checked)
			if cut == 0 { // no cut so far; read on
				checked = max(len(buf)-1, 0)
				continue
			}
		}
		if err := fn(buf[:cut], eof); err != nil || eof {
			return n, err
		}
		rest := copy(buf, buf[cut:])
		buf = buf[:rest]
		checked = max(rest-1, 0) // the cut was the last one but for the final byte, which had nothing after it
	}
}
