package main

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/internal/outfile"
	"morsel/report/learn"
	"morsel/report/render"
	"morsel/report/walk"
)

func init() { extraCommands = append(extraCommands, newLearn) }

// learnFlags are the flags of morsel learn.
type learnFlags struct {
	add     int
	extend  string
	holdout float64
	out     string
	write   string
	force   bool
	top     int
	rows    int
}

func newLearn(sh *shared) *cobra.Command {
	var cf corpusFlags
	var tf targetFlags
	var lf learnFlags
	c := &cobra.Command{
		Use:   "learn PATH... --add K --out DIR [--extend BASE]",
		Short: "Learn domain merges from a document set and measure what they save on documents kept out",
		Long: `learn learns K byte-level BPE merges from the documents (byte-pair encoding as Sennrich,
Haddow and Birch 2016 describe it, over bytes as GPT-2 uses it) and writes the vocabulary
to --out: a vocab.json + merges.txt pair, a tokenizer.json bundle, or both (--write). An existing file there is replaced only with
--force, and only once the new one is whole; the files are never read as input.

With --extend BASE the K merges go on top of BASE (a pair, a bundle or a folder): the new
tokens take the ids after BASE's and BASE's merges keep their order, so the new vocabulary
gives BASE's ids wherever no new merge applies. Without it the merges are learned from the
256 bytes, and the report compares with --vocab (default: GPT-2). Words are split as the
base splits them (--split-pattern for another rule).

--holdout F keeps a share F of the documents out of learning, chosen by their names. Every
document is then encoded again under both vocabularies, and the report gives the measured
saving on the held-out and on the learning documents, per document and in total, the new
tokens with the words they serve, and with --target the input cost before and after at
the target's price. learn reads its inputs twice, so standard input is not taken.`,
		Example: `  morsel learn testdata/demo/docs --add 200 --holdout 0.25 --out /tmp/demo-vocab
  morsel learn docs/ --extend models/x/tokenizer.json --add 2000 --out models/x-domain --write bundle
  morsel learn testdata/demo/docs --add 200 --out /tmp/v --targets testdata/demo/settings/morsel.toml --target harbor-small`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			return runLearn(sh, &cf, &tf, &lf, args)
		},
	}
	addCorpusFlags(c, &cf)
	addTargetFlags(c, &tf, false)
	f := c.Flags()
	f.IntVar(&lf.add, "add", 0, "merges to learn (required)")
	f.StringVar(&lf.extend, "extend", "", "vocabulary to learn on top of (pair file, bundle or folder); default: learn from bytes")
	f.Float64Var(&lf.holdout, "holdout", 0.1, "share of documents kept out of learning, 0 to below 1")
	f.StringVar(&lf.out, "out", "", "folder to write the vocabulary to (required; made if missing)")
	f.StringVar(&lf.write, "write", "both", "what to write: pair, bundle or both")
	f.BoolVar(&lf.force, "force", false, "let --out's files replace existing ones")
	f.IntVar(&lf.top, "words", 3, "words listed per new token")
	f.IntVar(&lf.rows, "rows", 50, "rows of new tokens and of documents in the table and md views (0: all)")
	return c
}

func runLearn(sh *shared, cf *corpusFlags, tf *targetFlags, lf *learnFlags, args []string) error {
	const cmd = "learn"
	f, err := sh.outFormat(cmd, render.Table, render.JSON, render.CSV, render.Markdown)
	if err != nil {
		return err
	}
	switch {
	case lf.add <= 0:
		return usagef(cmd, "--add: give the number of merges to learn, 1 or more")
	case !(lf.holdout >= 0 && lf.holdout < 1): // NaN too
		return usagef(cmd, "--holdout %v: give a share from 0 to below 1", lf.holdout)
	case lf.out == "":
		return usagef(cmd, "--out: name the folder to write the vocabulary to")
	case lf.out == "-":
		return usagef(cmd, "--out -: learn writes a folder of files, which standard output cannot hold: name a folder")
	case lf.write != "pair" && lf.write != "bundle" && lf.write != "both":
		return usagef(cmd, "--write %q: want pair, bundle or both", lf.write)
	}
	for _, a := range args {
		if a == "-" {
			return usagef(cmd, "learn reads its inputs twice (to learn, then to measure); give files, not standard input")
		}
	}
	target, err := tf.one(cmd)
	if err != nil {
		return err
	}
	if target != nil {
		sh.reads(target.File, "targets file")
	}
	if target != nil && !target.Set["price_in"] {
		return usagef(cmd, "%s: target %q has no price_in", target.Where(), target.Name)
	}

	// before is what the report measures against; base is what learning
	// starts from: the same vocabulary when extending.
	var base *bpe.Vocab
	if lf.extend != "" {
		if base, err = bpe.LoadFiles(lf.extend, ""); err != nil {
			return &inputError{err}
		}
	} else {
		base = bpe.ByteVocab()
	}
	out, err := openLearned(sh, cf, lf, base, args)
	if err != nil {
		return err
	}
	defer out.abort()
	baseEnc, err := sh.encoderFor(base)
	if err != nil {
		return err
	}
	before := baseEnc
	if lf.extend == "" {
		if before, err = sh.encoder(); err != nil {
			return err
		}
	}

	// Pass 1: count the words of the learning documents.
	words := bpe.NewWordCount(baseEnc)
	_, err = walkDocs(sh, cf, args, func(d *corpus.Document) (*bpe.WordCount, error) {
		text, err := walk.Text(d)
		if err != nil || learn.HeldOut(d.Source, d.Record, lf.holdout) {
			return nil, err
		}
		wc := bpe.NewWordCount(baseEnc)
		wc.Add(text)
		return wc, nil
	}, collector[*bpe.WordCount]{add: func(_ *corpus.Document, wc *bpe.WordCount) error {
		if wc != nil {
			words.Merge(wc)
		}
		return nil
	}})
	if err != nil {
		return err
	}
	if words.Len() == 0 {
		return &inputError{fmt.Errorf("no words to learn from in the documents that are not held out (--holdout %v)", lf.holdout)}
	}
	learned, err := bpe.Learn(words, bpe.LearnOptions{Merges: lf.add})
	if err != nil {
		return &inputError{err}
	}
	learned.Vocab.SetName(filepath.Base(filepath.Clean(lf.out)))
	after, err := sh.encoderFor(learned.Vocab)
	if err != nil {
		return err
	}
	col, err := learn.NewCollector(learned, words, lf.add, lf.holdout, lf.top)
	if err != nil {
		return err
	}
	files, err := out.write(learned.Vocab, sh.splitPattern)
	if err != nil {
		return err
	}
	for _, p := range files {
		col.Wrote(p)
	}

	// Pass 2: every document under both vocabularies.
	type counts struct{ before, after int }
	skipped, err := walkDocs(sh, cf, args, func(d *corpus.Document) (counts, error) {
		text, err := walk.Text(d)
		if err != nil {
			return counts{}, err
		}
		b, a := learn.Measure(before, after, text)
		return counts{b, a}, nil
	}, collector[counts]{
		add: func(d *corpus.Document, n counts) error {
			col.Add(d.Source, d.Record, learn.HeldOut(d.Source, d.Record, lf.holdout), n.before, n.after)
			return nil
		},
		tokens: func(n counts) int { return n.before },
	})
	if err != nil {
		return err
	}
	for _, s := range skipped {
		col.Skip(s)
	}
	if target != nil {
		col.Price(target.Name, target.Currency, target.PriceIn)
	}
	r := col.Finish()
	r.Base = before.Vocab().Info()
	if err := learn.Write(sh.stdout, f, r, lf.rows); err != nil {
		return err
	}
	return sh.finish(r.Skipped, nil)
}

// learnedFiles are the files learn writes into --out. They are opened
// before learning starts, so that a name that is taken (without --force)
// or that is an input fails at once, and they are put in place together
// once all are written.
type learnedFiles struct {
	vocab, merges, bundle *outfile.File
}

// openLearned opens the files lf.write asks for in lf.out. A base that
// keeps a bundle's pipeline can only be written as a bundle.
func openLearned(sh *shared, cf *corpusFlags, lf *learnFlags, base *bpe.Vocab, args []string) (*learnedFiles, error) {
	if err := os.MkdirAll(lf.out, 0o755); err != nil {
		return nil, &inputError{fmt.Errorf("--out: %w", err)}
	}
	pair, bundle := lf.write != "bundle", lf.write != "pair"
	if pair && !base.PairWritable() {
		if lf.write == "pair" {
			return nil, usagef("learn", "--write pair: the base is a bundle, whose normalizer and pre-tokenizer a pair cannot hold; write a bundle")
		}
		sh.note("the base is a bundle: writing the bundle alone, since a pair cannot hold its normalizer and pre-tokenizer")
		pair = false
	}
	files := &learnedFiles{}
	open := func(name string) (*outfile.File, error) {
		return sh.createOutput("learn", "--out", filepath.Join(lf.out, name), lf.force, cf, args)
	}
	var err error
	if pair {
		if files.vocab, err = open("vocab.json"); err == nil {
			files.merges, err = open("merges.txt")
		}
	}
	if bundle && err == nil {
		files.bundle, err = open("tokenizer.json")
	}
	if err != nil {
		files.abort()
		return nil, err
	}
	return files, nil
}

// write writes v into the files and puts them in place, returning their
// paths; on any error none of them replaces an older file.
func (l *learnedFiles) write(v *bpe.Vocab, splitPattern string) ([]string, error) {
	defer l.abort()
	var err error
	if l.vocab != nil {
		err = bpe.WritePair(l.vocab, l.merges, v)
	}
	if l.bundle != nil && err == nil {
		err = bpe.WriteBundle(l.bundle, v, splitPattern)
	}
	if err != nil {
		return nil, &inputError{fmt.Errorf("--out: %w", err)}
	}
	var paths []string
	for _, f := range l.all() {
		if err := f.Commit(); err != nil {
			return nil, &inputError{fmt.Errorf("--out: %w", err)}
		}
		paths = append(paths, f.Name())
	}
	return paths, nil
}

// all returns the files opened, in the order they are reported.
func (l *learnedFiles) all() []*outfile.File {
	var fs []*outfile.File
	for _, f := range []*outfile.File{l.vocab, l.merges, l.bundle} {
		if f != nil {
			fs = append(fs, f)
		}
	}
	return fs
}

// abort drops every file not yet put in place.
func (l *learnedFiles) abort() {
	for _, f := range l.all() {
		f.Abort()
	}
}
