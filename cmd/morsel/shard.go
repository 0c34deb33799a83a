package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"sort"
	"strings"
	"sync"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/internal/outfile"
	"morsel/report"
	"morsel/report/partial"
	"morsel/report/walk"
)

// shardFlags are --shard and --output, which cut a walk into shares and
// say where its partial report goes.
type shardFlags struct {
	shard  string
	output string
	cmd    *cobra.Command
}

// addShardFlags adds --shard, -o/--output and, unless the command has its
// own, --force to c, a walking command whose results merge.
func addShardFlags(sh *shared, c *cobra.Command, cf *corpusFlags) {
	cf.shard = &shardFlags{cmd: c}
	f := c.Flags()
	f.StringVar(&cf.shard.shard, "shard", "", "walk only share K of N (K/N, such as 3/8): a stable hash of each document's source and record picks its share")
	f.StringVarP(&cf.shard.output, "output", "o", "", "with --format partial: write the partial report to this file, gzip-compressed if its name ends in .gz (default, or -: standard output)")
	if f.Lookup("force") == nil {
		f.Bool("force", false, "with --output: replace an existing file")
	}
	c.PreRunE = func(c *cobra.Command, _ []string) error {
		sh.shardable = c.Name()
		return nil
	}
}

// formatPartial is --format partial.
const formatPartial = "partial"

// shareOf returns the share --shard names (the whole walk without it).
func (cf *corpusFlags) shareOf() (corpus.Shard, error) {
	if cf.shard == nil || cf.shard.shard == "" {
		return corpus.Shard{}, nil
	}
	s, err := corpus.ParseShard(cf.shard.shard)
	if err != nil {
		return corpus.Shard{}, usagef("", "--%v", err)
	}
	return s, nil
}

// localFlags are the flags that change neither which documents a walk
// reads nor what it finds in them: how the report is shown, or how one
// process runs. A merge takes them anew (the layout flags are merge's own
// flags too, TestLocalFlagsAreMergeFlags keeps the two in step); every
// other flag must agree.
var localFlags = map[string]bool{
	"format": true, "output": true, "force": true, "shard": true, "workers": true, "quiet": true,
	"cpuprofile": true, "verbose": true, "wide": true, "width": true, "rows": true, "sort": true,
	"top": true, "min-pieces": true, "min-count": true, "doc-rows": true,
	// Files are compared by what they hold, not where they are.
	"vocab": true, "merges": true, "frame": true, "targets": true, "terms": true,
}

// processFlags are the local flags that only concern one process or where
// its output goes: a partial does not keep them for the merge.
var processFlags = map[string]bool{"format": true, "output": true, "force": true, "shard": true, "workers": true, "quiet": true, "cpuprofile": true}

// agreement returns what every partial of one run must share: the
// fingerprints of the vocabularies the command loaded, the contents of the
// settings files it read, and every flag that is not local and not at its
// default, by name. Flags at their defaults are left out so that the Beam
// pipeline, which has only some of the flags, writes the same header.
func (sh *shared) agreement(c *cobra.Command) (map[string]string, error) {
	a := map[string]string{}
	var prints []string
	for _, v := range sh.loaded {
		prints = append(prints, vocabPrint(v))
	}
	sort.Strings(prints)
	a["vocabulary"] = strings.Join(prints, " ")
	for _, s := range sh.read {
		b, err := os.ReadFile(s.Path)
		if err != nil {
			return nil, &inputError{fmt.Errorf("%s %s: %w", s.What, s.Path, err)}
		}
		sum := sha256.Sum256(b)
		a[s.What] = "sha256:" + hex.EncodeToString(sum[:])
	}
	visit := func(f *pflag.Flag) {
		if v := f.Value.String(); !localFlags[f.Name] && v != f.DefValue {
			a["--"+f.Name] = v
		}
	}
	c.Flags().VisitAll(visit)
	c.InheritedFlags().VisitAll(visit)
	return a, nil
}

// givenArgs returns the flags given to c, as arguments that give them
// again, less the local ones that only concern this process or its output.
func givenArgs(c *cobra.Command) []string {
	var args []string
	visit := func(f *pflag.Flag) {
		if !f.Changed || processFlags[f.Name] {
			return
		}
		if sv, ok := f.Value.(pflag.SliceValue); ok {
			for _, v := range sv.GetSlice() {
				args = append(args, "--"+f.Name+"="+v)
			}
			return
		}
		args = append(args, "--"+f.Name+"="+f.Value.String())
	}
	c.Flags().Visit(visit)
	c.InheritedFlags().Visit(visit)
	return args
}

// writePartial walks the share of paths that --shard names, does work on
// each document and writes every item, with its result as JSON, to the
// partial report. Repeats (--once) are left to the merge, which sees every
// shard. It returns an inputError when any input could not be read.
func writePartial[R any](sh *shared, cf *corpusFlags, paths []string, opt corpus.Options, work func(*corpus.Document) (R, error), c collector[R]) error {
	share, err := cf.shareOf()
	if err != nil {
		return err
	}
	cmd := cf.shard.cmd
	agree, err := sh.agreement(cmd)
	if err != nil {
		return err
	}
	h := partial.Header{Command: cmd.Name(), Shards: []int{share.K}, Of: share.N, Inputs: partial.InputsPrint(paths),
		Agree: agree, Args: givenArgs(cmd), Paths: paths}
	if share.Whole() {
		h.Shards, h.Of = []int{1}, 1
	}
	out, commit, err := sh.partialOutput(cf, paths)
	if err != nil {
		return err
	}
	defer commit(false)
	opt.Written = cf.written
	pw, err := partial.NewWriter(out, h, compressed(cf.shard.output))
	if err != nil {
		return err
	}
	encode := c.encode
	if encode == nil {
		encode = func(r R) ([]byte, error) { return json.Marshal(r) }
	}
	failed, skipped := 0, map[string]int{}
	c.note = func(d *corpus.Document) { sh.note("%s: %s", d.Source, d.Note) }
	emit := func(at walk.Place, it corpus.Item, r R, werr error) error {
		item := partial.Item{Key: partial.Key{In: at.In, Seq: at.Seq}}
		var s *report.Skipped
		switch {
		case it.Skip != nil:
			sk := report.SkipOf(it.Skip)
			s = &sk
		case werr != nil:
			failed := c.failed
			if failed == nil {
				failed = report.FailedDoc
			}
			sk := failed(it.Doc, werr)
			s = &sk
		default:
			if it.Doc.Note != "" {
				c.note(it.Doc)
			}
			d := it.Doc
			item.Src, item.Record, item.Line, item.Format, item.Hash = d.Source, d.Record, d.Line, d.Format, d.Hash
			if item.Result, err = encode(r); err != nil {
				return fmt.Errorf("%s: %w", report.Where(d.Source, d.Record), err)
			}
		}
		if s != nil {
			item.Src, item.Record, item.Line = s.Source, s.Record, s.Line
			item.Skip = &partial.Skip{Reason: s.Reason, Detail: s.Detail, Failed: s.Failed}
			skipped[s.Reason]++
			if s.Failed {
				failed++
			}
		}
		return pw.Item(&item)
	}
	if err := walk.Shard(paths, opt, share, sh.workers, sh.progress(), work, emit); err != nil {
		return err
	}
	if c.tables != nil {
		if err := c.tables(pw); err != nil {
			return err
		}
	}
	summary, _ := json.Marshal(map[string]any{"skipped": skipped})
	if err := pw.Close(summary); err != nil {
		return &outputError{err}
	}
	if err := commit(true); err != nil {
		return err
	}
	if failed > 0 {
		sh.note("%d input(s) or record(s) could not be read; the partial report lists them with the reason", failed)
		return &inputError{}
	}
	return nil
}

// partialOutput opens where the partial goes: --output through outfile
// (put in place by commit(true), dropped by commit(false)), else standard
// output.
func (sh *shared) partialOutput(cf *corpusFlags, paths []string) (w interface{ Write([]byte) (int, error) }, commit func(bool) error, err error) {
	if cf.shard.output == "" || cf.shard.output == "-" {
		return sh.stdout, func(bool) error { return nil }, nil
	}
	force, _ := cf.shard.cmd.Flags().GetBool("force")
	var f *outfile.File
	f, err = sh.createOutput(cf.shard.cmd.Name(), "--output", cf.shard.output, force, cf, paths)
	if err != nil {
		return nil, nil, err
	}
	done := false
	return f, func(ok bool) error {
		if done {
			return nil
		}
		done = true
		if !ok {
			f.Abort()
			return nil
		}
		if err := f.Commit(); err != nil {
			return &inputError{fmt.Errorf("--output %s: %w", cf.shard.output, err)}
		}
		return nil
	}, nil
}

// compressed reports whether a partial written to name is gzip-compressed:
// when the name ends in ".gz".
func compressed(name string) bool { return strings.HasSuffix(name, ".gz") }

// errPartial ends a command once its walk has written the partial report
// (err is the walk's outcome): the report itself is not made.
type errPartial struct{ err error }

func (e errPartial) Error() string {
	if e.err == nil {
		return "partial report written"
	}
	return e.err.Error()
}

// vocabPrint fingerprints a vocabulary with the window it gives, which
// fit and ration take by default. The embedded vocabulary's is computed
// once a process.
func vocabPrint(v *bpe.Vocab) string {
	if v == bpe.Default() {
		defaultPrintOnce.Do(func() { defaultPrint = vocabPrintOf(v) })
		return defaultPrint
	}
	return vocabPrintOf(v)
}

func vocabPrintOf(v *bpe.Vocab) string { return partial.VocabPrint(v.Fingerprint(), v.Window()) }

var (
	defaultPrintOnce sync.Once
	defaultPrint     string
)
