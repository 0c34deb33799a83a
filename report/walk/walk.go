package walk

import (
	"fmt"
	"io"
	"runtime"
	"sync"

	"morsel/corpus"
)

// Progress hears how a run goes; a nil Progress hears nothing. Its methods
// are called from one goroutine at a time.
type Progress interface {
	// Plan gives the number of files and their bytes, before reading.
	Plan(files int, bytes int64)
	// FileDone says one more input was read to its end.
	FileDone(bytes int64)
	// Tokens adds tokens counted.
	Tokens(n int)
	// Finish ends the run.
	Finish()
}

// Walk walks the inputs named by paths, hands every document to work on a
// fixed pool of workers, and calls emit with every item (document or skip)
// and its result in input order, whatever the number of workers. Skips that
// listing the inputs finds come first. work must read and close a
// document's Stream when it has one; emit gets the document without its
// text, which is dropped once work is done so that memory stays bounded. An
// error from emit stops the walk and is returned.
func Walk[R any](paths []string, opt corpus.Options, workers int, prog Progress,
	work func(d *corpus.Document) (R, error), emit func(it corpus.Item, r R, err error) error) error {
	return Shard(paths, opt, corpus.Shard{}, workers, prog, work,
		func(_ Place, it corpus.Item, r R, err error) error { return emit(it, r, err) })
}

// Place is an item's place in the order of the whole walk: In is its
// input's place in the listing (-1 for a skip that listing found), Seq its
// place among the items of that input (or among the listing's skips),
// counting the items of every shard.
type Place struct{ In, Seq int }

// Shard walks as Walk does but only the items that share owns (the whole
// walk for the zero Shard), and gives emit each item's Place, so that the
// items of all shards can be put back in the whole walk's order. An input
// that can hold no item of share is not opened.
func Shard[R any](paths []string, opt corpus.Options, share corpus.Shard, workers int, prog Progress,
	work func(d *corpus.Document) (R, error), emit func(at Place, it corpus.Item, r R, err error) error) error {
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	inputs, skips := corpus.List(paths, opt)
	opt.Shard = share
	if prog != nil {
		var total int64
		for _, in := range inputs {
			if in.Size > 0 {
				total += in.Size
			}
		}
		prog.Plan(len(inputs), total)
		defer prog.Finish()
	}
	var zero R
	for i := range skips {
		if !share.Owns(skips[i].Source, skips[i].Record) {
			continue
		}
		if err := emit(Place{In: -1, Seq: i}, corpus.Item{Skip: &skips[i]}, zero, nil); err != nil {
			return err
		}
	}

	// A job is a batch of items in input order: small documents (a JSON
	// Lines record) go many to a job, so that the hand-offs between the
	// reader, the workers and emit cost little beside the counting.
	type entry struct {
		at   Place
		item corpus.Item
		res  R
		err  error
	}
	type job struct {
		items []entry
		done  chan struct{}
	}
	// At most window jobs are between the reader and emit, which bounds
	// memory whatever one slow document does to the others.
	window := 4 * workers
	if window < 16 {
		window = 16
	}
	ordered := make(chan *job, window)
	todo := make(chan *job, window)
	stop := make(chan struct{})
	var once sync.Once
	halt := func() { once.Do(func() { close(stop) }) }

	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := range todo {
				for k := range j.items {
					e := &j.items[k]
					if e.item.Doc == nil {
						continue
					}
					e.res, e.err = runWork(work, e.item.Doc)
					e.item.Doc.Text = nil
					e.item.Doc.Stream = nil
				}
				close(j.done)
			}
		}()
	}

	go func() {
		defer close(ordered)
		defer close(todo)
		var at Place
		var batch *job
		owner := corpus.NewOwner(share)
		var held int // text bytes in batch
		flush := func() error {
			j := batch
			if j == nil {
				return nil
			}
			batch, held = nil, 0
			select {
			case ordered <- j:
			case <-stop:
				for _, e := range j.items {
					closeStream(e.item)
				}
				return errStopped
			}
			select {
			case todo <- j:
			case <-stop:
				for _, e := range j.items {
					closeStream(e.item)
				}
				close(j.done)
				return errStopped
			}
			return nil
		}
		send := func(it corpus.Item) error {
			here := at
			at.Seq++
			if it.Doc == nil && it.Skip == nil {
				return nil // a record of another share, passed over unread
			}
			if src, rec := itemAt(it); !owner.Owns(src, rec) {
				closeStream(it)
				return nil
			}
			if batch == nil {
				batch = &job{items: make([]entry, 0, batchItems), done: make(chan struct{})}
			}
			batch.items = append(batch.items, entry{at: here, item: it})
			if it.Doc != nil {
				held += len(it.Doc.Text)
			}
			if len(batch.items) == batchItems || held >= batchBytes || it.Doc != nil && it.Doc.Stream != nil {
				return flush()
			}
			return nil
		}
		for i, in := range inputs {
			at = Place{In: i}
			if !share.Wants(in, opt) {
				if prog != nil {
					prog.FileDone(in.Size)
				}
				continue
			}
			err := corpus.Read(in, opt, send)
			if err == nil {
				err = flush()
			}
			if err != nil {
				return
			}
			if prog != nil {
				prog.FileDone(in.Size)
			}
		}
	}()

	var emitErr error
	for j := range ordered {
		<-j.done
		for _, e := range j.items {
			if emitErr != nil {
				break
			}
			if err := emit(e.at, e.item, e.res, e.err); err != nil {
				emitErr = err
				halt()
			}
		}
	}
	wg.Wait()
	return emitErr
}

// A batch holds at most batchItems items or, past batchBytes of text, no
// more; a document read as a stream ends its batch, so that it is not
// held back behind the ones after it.
const (
	batchItems = 64
	batchBytes = 256 << 10
)

var errStopped = fmt.Errorf("walk stopped")

// itemAt returns an item's source and record.
func itemAt(it corpus.Item) (string, int) {
	if it.Doc != nil {
		return it.Doc.Source, it.Doc.Record
	}
	return it.Skip.Source, it.Skip.Record
}

func closeStream(it corpus.Item) {
	if it.Doc != nil && it.Doc.Stream != nil {
		it.Doc.Stream.Close()
	}
}

// runWork calls work and turns a panic into an error for that one document,
// so that a bug met on one input never loses the rest of the report.
func runWork[R any](work func(*corpus.Document) (R, error), d *corpus.Document) (r R, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("internal error on this document: %v", p)
			if d.Stream != nil {
				d.Stream.Close()
			}
		}
	}()
	return work(d)
}

// Text returns a document's whole text, reading and closing its Stream when
// it has one.
func Text(d *corpus.Document) ([]byte, error) {
	if d.Stream == nil {
		return d.Text, nil
	}
	defer d.Stream.Close()
	return io.ReadAll(d.Stream)
}
