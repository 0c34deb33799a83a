package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"reflect"
	"runtime"
	"slices"
	"strings"
	"sync"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/register"

	// The file systems a pattern may name: local paths always; gs:// and
	// s3:// where the runner's workers hold credentials for them.
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/gcs"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/local"
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem/s3"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/internal/screen"
	"morsel/report"
	"morsel/report/partial"
	"morsel/report/render"
	"morsel/report/survey"
)

// Config is what a run weighs and how; it travels to the workers inside
// the DoFns, so its fields are exported.
type Config struct {
	Inputs  []string // file patterns, local or gs:// or s3://
	Output  string   // where the report goes; "-" is the standard output of the worker that writes it
	Format  string   // table, json, csv, md, or partial
	Command string   // survey
	// Vocab and Merges name the vocabulary as morsel's --vocab and
	// --merges do (a path every worker can read); empty Vocab is the
	// embedded GPT-2 vocabulary.
	Vocab, Merges string
	// Field and Column name the JSON and CSV text field as morsel's
	// --field and --column do; empty is morsel's default ("text", and a
	// file whose first record has no such field is read as text).
	Field  string
	Column string
	As     string
	Hidden bool
	// SplitAbove is the size above which a file of records is read by
	// several workers, each weighing its own share of the records
	// (corpus.Shard); 0 never splits.
	SplitAbove int64
	// Workers weigh the units of one bundle at once; 0 means one a core.
	Workers int
}

func (c Config) options() corpus.Options {
	return corpus.Options{Field: c.Field, Column: c.Column, Format: c.As}
}

// Unit is one file, or one share of the records of a big file, to weigh.
type Unit struct {
	// In is the place of the input it was matched by among
	// Config.Inputs, which orders the report's rows as morsel orders
	// them: by argument, then by path.
	In   int
	Path string
	Size int64
	K, N int // the share of the file's records; 0 and 0 for all of them
}

func init() {
	register.DoFn3x1[context.Context, string, func(Unit), error](&matchFn{})
	register.DoFn2x0[Unit, func(Unit)](&splitFn{})
	register.Emitter1[Unit]()
	register.DoFn3x1[context.Context, Unit, func([]byte), error](&weighFn{})
	register.Emitter1[[]byte]()
	register.Combiner3[partial.Partial, []byte, []byte](&mergeFn{})
	register.DoFn2x1[context.Context, []byte, error](&writeFn{})
	beam.RegisterCoder(reflect.TypeOf(partial.Partial{}), encodePartial, decodePartial)
}

func encodePartial(p partial.Partial) ([]byte, error) {
	var b bytes.Buffer
	err := p.Write(&b, false)
	return b.Bytes(), err
}

func decodePartial(b []byte) (partial.Partial, error) {
	p, err := partial.Read(bytes.NewReader(b), "partial")
	if err != nil {
		return partial.Partial{}, err
	}
	return *p, nil
}

// Build adds the pipeline to s: match the patterns, weigh every file (big
// files of records in shares), combine the partial reports, write the
// report.
func Build(s beam.Scope, c Config) {
	pats := beam.CreateList(s, c.Inputs)
	files := beam.ParDo(s, &matchFn{Cfg: c}, pats)
	units := beam.ParDo(s, &splitFn{Cfg: c}, files)
	units = beam.Reshuffle(s, units)
	parts := beam.ParDo(s, &weighFn{Cfg: c}, units)
	merged := beam.Combine(s, &mergeFn{Cfg: c}, parts)
	beam.ParDo0(s, &writeFn{Cfg: c}, merged)
}

// matchFn expands one input: a local folder is walked as morsel walks it
// (recursively, hidden files and folders left out unless Config.Hidden);
// anything else is a pattern for the file system its scheme names.
type matchFn struct{ Cfg Config }

func (fn *matchFn) ProcessElement(ctx context.Context, pattern string, emit func(Unit)) error {
	in := slices.Index(fn.Cfg.Inputs, pattern)
	if fi, err := os.Stat(pattern); err == nil && fi.IsDir() && !strings.Contains(pattern, "://") {
		return filepath.WalkDir(pattern, func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if p != pattern && !fn.Cfg.Hidden && strings.HasPrefix(d.Name(), ".") {
				if d.IsDir() {
					return filepath.SkipDir
				}
				return nil
			}
			if d.Type().IsRegular() {
				info, err := d.Info()
				if err != nil {
					return err
				}
				emit(Unit{In: in, Path: p, Size: info.Size()})
			}
			return nil
		})
	}
	fsys, err := filesystem.New(ctx, pattern)
	if err != nil {
		return err
	}
	defer fsys.Close()
	paths, err := fsys.List(ctx, pattern)
	if err != nil {
		return fmt.Errorf("%s: %w", pattern, err)
	}
	for _, p := range paths {
		if !fn.Cfg.Hidden && strings.HasPrefix(path.Base(p), ".") {
			continue
		}
		size, err := fsys.Size(ctx, p)
		if err != nil {
			return fmt.Errorf("%s: %w", p, err)
		}
		emit(Unit{In: in, Path: p, Size: size})
	}
	return nil
}

// splitFn turns a matched file into the units that weigh it.
type splitFn struct{ Cfg Config }

func (fn *splitFn) ProcessElement(md Unit, emit func(Unit)) {
	n := 1
	if fn.Cfg.SplitAbove > 0 && md.Size > fn.Cfg.SplitAbove && !corpus.WholeFile(md.Path, fn.Cfg.options()) {
		n = int((md.Size + fn.Cfg.SplitAbove - 1) / fn.Cfg.SplitAbove)
	}
	if n == 1 {
		emit(md)
		return
	}
	for k := 1; k <= n; k++ {
		emit(Unit{In: md.In, Path: md.Path, Size: md.Size, K: k, N: n})
	}
}

// weighFn weighs the units of a bundle on Config.Workers goroutines and
// emits their partial report when the bundle ends, so that a runner that
// hands one worker one bundle at a time still uses every core.
type weighFn struct {
	Cfg Config
	enc *bpe.Encoder

	units chan Unit
	wg    sync.WaitGroup
	parts []*partial.Partial
	errs  []error
}

func (fn *weighFn) Setup() error {
	enc, err := fn.Cfg.encoder()
	fn.enc = enc
	return err
}

// encoder loads the vocabulary the run names and builds its encoder.
func (c Config) encoder() (*bpe.Encoder, error) {
	v := bpe.Default()
	if c.Vocab != "" {
		var err error
		if v, err = bpe.LoadFiles(c.Vocab, c.Merges); err != nil {
			return nil, err
		}
	}
	return bpe.NewEncoder(v, bpe.Options{})
}

func (fn *weighFn) StartBundle(ctx context.Context, _ func([]byte)) {
	n := fn.Cfg.Workers
	if n <= 0 {
		n = runtime.NumCPU()
	}
	fn.units = make(chan Unit, n)
	fn.parts = make([]*partial.Partial, n)
	fn.errs = make([]error, n)
	for i := range n {
		fn.parts[i] = newPartial(fn.Cfg, fn.enc)
		fn.wg.Add(1)
		go func() {
			defer fn.wg.Done()
			for u := range fn.units {
				if err := fn.weigh(ctx, u, fn.parts[i]); err != nil && fn.errs[i] == nil {
					fn.errs[i] = err
				}
			}
		}()
	}
}

func (fn *weighFn) ProcessElement(_ context.Context, u Unit, _ func([]byte)) error {
	fn.units <- u
	return nil
}

// weigh reads one unit and adds its items to p.
func (fn *weighFn) weigh(ctx context.Context, u Unit, p *partial.Partial) error {
	share := corpus.Shard{K: u.K, N: u.N}
	seq := 0
	add := func(it corpus.Item) error {
		k := partial.Key{In: u.In, Src: u.Path, Seq: seq}
		seq++
		if it.Doc == nil && it.Skip == nil {
			return nil // a record of another share, passed over unread
		}
		if it.Skip != nil {
			if share.Owns(it.Skip.Source, it.Skip.Record) {
				s := it.Skip
				p.Items = append(p.Items, partial.Item{Key: k, Record: s.Record, Line: s.Line,
					Skip: &partial.Skip{Reason: s.Reason, Detail: s.Detail, Failed: s.Failed}})
			}
			return nil
		}
		d := it.Doc
		if !share.Owns(d.Source, d.Record) {
			if d.Stream != nil {
				d.Stream.Close()
			}
			return nil
		}
		item := partial.Item{Key: k, Record: d.Record, Line: d.Line, Format: d.Format}
		w, err := survey.Weigh(fn.enc, d)
		item.Hash = d.Hash // a stream's is known once it is read
		if err != nil {
			item.Err = err.Error()
		} else {
			item.Result = survey.AppendWeight(nil, w)
		}
		p.Items = append(p.Items, item)
		return nil
	}
	fsys, err := filesystem.New(ctx, u.Path)
	if err != nil {
		return err
	}
	defer fsys.Close()
	rc, err := fsys.OpenRead(ctx, u.Path)
	if err != nil {
		return add(corpus.Item{Skip: &corpus.Skip{Source: u.Path, Reason: corpus.ReasonUnreadable, Detail: err.Error(), Failed: true}})
	}
	defer rc.Close()
	opt := fn.Cfg.options()
	opt.Shard = share
	return corpus.ReadStream(u.Path, u.Size, rc, opt, add)
}

func (fn *weighFn) FinishBundle(_ context.Context, emit func([]byte)) error {
	close(fn.units)
	fn.wg.Wait()
	if err := errors.Join(fn.errs...); err != nil {
		return err
	}
	p := fn.parts[0]
	for _, q := range fn.parts[1:] {
		if err := p.Combine(q); err != nil {
			return err
		}
	}
	b, err := encodePartial(*p)
	if err != nil {
		return err
	}
	emit(b)
	fn.parts = nil
	return nil
}

// newPartial starts an empty partial of this run.
func newPartial(c Config, enc *bpe.Encoder) *partial.Partial {
	return &partial.Partial{Header: c.header(enc.Vocab()), Tables: map[string][]json.RawMessage{}}
}

// header is the header of this run's partials: the one morsel COMMAND
// --format partial writes for the same inputs and settings, so that
// morsel merge takes the pipeline's partial as its own. Agree holds the
// vocabulary with its window and the settings that are not at morsel's
// defaults, by morsel's flag names; Args gives them as morsel would be
// given them (its own flags by name, then --merges and --vocab).
func (c Config) header(v *bpe.Vocab) partial.Header {
	h := partial.Header{Format: partial.Magic, Version: partial.Version, Command: c.Command, Shards: []int{1}, Of: 1,
		Inputs: partial.InputsPrint(c.Inputs), Paths: c.Inputs,
		Agree: map[string]string{"vocabulary": partial.VocabPrint(v.Fingerprint(), v.Window())}}
	hidden := ""
	if c.Hidden {
		hidden = "true"
	}
	for _, f := range [...]struct{ name, value string }{{"as", c.As}, {"column", c.Column}, {"field", c.Field}, {"hidden", hidden}} {
		if f.value != "" {
			h.Agree["--"+f.name] = f.value
			h.Args = append(h.Args, "--"+f.name+"="+f.value)
		}
	}
	// The files are compared by their fingerprint, not their names.
	if c.Merges != "" {
		h.Args = append(h.Args, "--merges="+c.Merges)
	}
	if c.Vocab != "" {
		h.Args = append(h.Args, "--vocab="+c.Vocab)
	}
	return h
}

// mergeFn combines the bundles' partial reports into one.
type mergeFn struct{ Cfg Config }

func (fn *mergeFn) CreateAccumulator() partial.Partial {
	enc, err := fn.Cfg.encoder()
	if err != nil {
		panic(fmt.Sprintf("vocabulary %s: %v", fn.Cfg.Vocab, err)) // Setup of weighFn has reported it already
	}
	return *newPartial(fn.Cfg, enc)
}

func (fn *mergeFn) AddInput(a partial.Partial, b []byte) (partial.Partial, error) {
	q, err := decodePartial(b)
	if err != nil {
		return a, err
	}
	return fn.MergeAccumulators(a, q)
}

func (fn *mergeFn) MergeAccumulators(a, b partial.Partial) (partial.Partial, error) {
	err := a.Combine(&b)
	return a, err
}

func (fn *mergeFn) ExtractOutput(a partial.Partial) ([]byte, error) {
	a.Sort()
	return encodePartial(a)
}

// writeFn renders the merged partial and writes the report.
type writeFn struct{ Cfg Config }

func (fn *writeFn) ProcessElement(ctx context.Context, b []byte) error {
	var out io.Writer = os.Stdout
	if fn.Cfg.Output != "-" && fn.Cfg.Output != "" {
		fsys, err := filesystem.New(ctx, fn.Cfg.Output)
		if err != nil {
			return err
		}
		defer fsys.Close()
		wc, err := fsys.OpenWrite(ctx, fn.Cfg.Output)
		if err != nil {
			return err
		}
		defer wc.Close()
		out = wc
	}
	if fn.Cfg.Format == "partial" {
		_, err := out.Write(b)
		return err
	}
	p, err := decodePartial(b)
	if err != nil {
		return err
	}
	enc, err := fn.Cfg.encoder()
	if err != nil {
		return err
	}
	sv := survey.NewSurveyor(enc.Vocab().Info())
	skipped := []report.Skipped{}
	for _, it := range p.Items {
		ci, w, failed, err := replay(it)
		switch {
		case err != nil:
			return err
		case ci.Skip != nil:
			skipped = append(skipped, report.SkipOf(ci.Skip))
		case failed != nil:
			skipped = append(skipped, report.FailedDoc(ci.Doc, failed))
		default:
			sv.Add(w)
		}
	}
	f, err := render.ParseFormat(fn.Cfg.Format, render.Table, render.JSON, render.CSV, render.Markdown)
	if err != nil {
		return err
	}
	// Sources are shown relative to the inputs, as morsel shows them.
	out = render.WithView(out, render.View{Base: screen.Base(fn.Cfg.Inputs)})
	return survey.Write(out, f, sv.Finish(skipped), 50)
}

// replay turns a partial's item back into the walk item, weight and work
// error that a single run's aggregation takes; err is for a result that
// does not decode.
func replay(it partial.Item) (ci corpus.Item, w survey.Weight, failed, err error) {
	if it.Skip != nil {
		return corpus.Item{Skip: &corpus.Skip{Source: it.Src, Record: it.Record, Line: it.Line, Reason: it.Skip.Reason, Detail: it.Skip.Detail, Failed: it.Skip.Failed}}, w, nil, nil
	}
	d := &corpus.Document{Source: it.Src, Record: it.Record, Line: it.Line, Format: it.Format, Hash: it.Hash}
	if it.Err != "" {
		return corpus.Item{Doc: d}, w, errors.New(it.Err), nil
	}
	w, err = survey.DecodeWeight(d, it.Result)
	if err != nil {
		return ci, w, nil, fmt.Errorf("%s: %w", report.Where(it.Src, it.Record), err)
	}
	return corpus.Item{Doc: d}, w, nil, nil
}
