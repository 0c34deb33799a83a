package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"runtime"
	"runtime/pprof"
	"time"

	"github.com/spf13/cobra"
	"golang.org/x/term"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/internal/buildinfo"
	"morsel/internal/screen"
	"morsel/report/partial"
	"morsel/report/render"
	"morsel/report/walk"
)

// shared holds the flags every command takes.
type shared struct {
	vocab, merges string
	vocabs        []string // every --vocab given, in order; vocab is the first
	format        string
	workers       int
	quiet         bool
	wide          bool // tables as wide as their cells, even on a terminal
	width         int  // --width: the columns tables are fitted to; 0 means the terminal's
	verbose       bool // list every input not counted
	once          bool // count each text once
	specials      string
	splitPattern  string
	// read are the settings files this run reads (targets, frames,
	// glossary); a walk leaves them out.
	read []corpus.Setting

	// shardable names the running command when it writes partial
	// reports; partialOut is --format partial; loaded are the
	// vocabularies loaded; replay, when set, is the
	// merged partial that a merge feeds the command instead of a walk.
	shardable  string // set by a command's PreRunE
	partialOut bool
	loaded     []*bpe.Vocab
	replay     *partial.Partial

	stdin          io.Reader
	stdout, stderr io.Writer
	out0           io.Writer     // standard output as given, for a merge's own run
	report         *reportWriter // standard output as the command writes to it
}

// reads records that the run reads path as a setting (what names its
// role), so that a walk leaves it out rather than count it as a document.
func (sh *shared) reads(path, what string) {
	if path != "" {
		sh.read = append(sh.read, corpus.Setting{Path: path, What: what})
	}
}

func newRoot() *cobra.Command { return newRootIO(os.Stdin, os.Stdout, os.Stderr) }

// newRootIO builds the command tree with its own standard streams, so that
// tests can run commands in-process.
func newRootIO(stdin io.Reader, stdout, stderr io.Writer) *cobra.Command {
	return newRootWith(&shared{stdin: stdin, stdout: stdout, stderr: stderr, out0: stdout})
}

// newRootWith builds the command tree around sh, whose streams (and, for
// a merge's run, replay) are set.
func newRootWith(sh *shared) *cobra.Command {
	root := &cobra.Command{
		Use:   "morsel",
		Short: "Weigh a document set in a model's own BPE tokens before a batch job",
		Long: `morsel weighs a document set in the tokens of a model's own byte-pair vocabulary:
exact counts per document and in total, which documents overflow the context window once
the prompt frame and the reserved answer are added, how to split them, what the run costs
at your rates, and which words the vocabulary breaks into many pieces.

With no --vocab it uses the embedded GPT-2 vocabulary (50,257 tokens, 1,024-token window).`,
		Example: `  morsel survey testdata/demo/docs
  morsel pieces "Bathyphorus quillandri"
  morsel fit testdata/demo/docs --frame testdata/demo/settings/frame.txt --reserve 200
  morsel survey exports/ --vocab models/mine/ --format json > weights.json`,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       buildinfo.Read().String(),
	}
	root.SetVersionTemplate("{{.Version}}\n")
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &usageError{cmd: c.Name(), err: err}
	})
	pf := root.PersistentFlags()
	pf.Var(&vocabFlag{first: &sh.vocab, all: &sh.vocabs}, "vocab", "vocabulary JSON file (token -> id), or a folder holding vocab.json+merges.txt or encoder.json+vocab.bpe (default: embedded GPT-2); survey, fit and fragments take it more than once to compare vocabularies side by side")
	pf.StringVar(&sh.merges, "merges", "", "merges file, one ranked pair a line (with --vocab FILE)")
	pf.StringVar(&sh.format, "format", "table", "output: table, json, csv or md; html too for survey, fit, quote and fragments; partial (a partial report for morsel merge) for survey, fit, quote, ration and fragments")
	pf.IntVar(&sh.workers, "workers", runtime.NumCPU(), "documents encoded at once")
	pf.BoolVarP(&sh.quiet, "quiet", "q", false, "no progress or notes on standard error")
	pf.BoolVar(&sh.wide, "wide", false, "tables as wide as their cells, even on a terminal (a pipe always gets them so)")
	pf.IntVar(&sh.width, "width", 0, "fit tables to this many columns (default: the terminal's width; none when piped)")
	pf.BoolVarP(&sh.verbose, "verbose", "v", false, "list every input that was not counted, not only the failures")
	pf.BoolVar(&sh.once, "once", false, "count documents with the same text once: later copies are left out as repeats")
	root.RegisterFlagCompletionFunc("format", fixed(formatNames...))
	root.RegisterFlagCompletionFunc("specials", fixed(specialNames...))
	pf.StringVar(&sh.specials, "specials", "text", "special-token strings such as <|endoftext|> in a text: text (ordinary text) or honor (their ids)")
	pf.StringVar(&sh.splitPattern, "split-pattern", "", "pre-tokenization regular expression instead of the GPT-2 rule (look-ahead allowed)")
	var cpuprofile string
	pf.StringVar(&cpuprofile, "cpuprofile", "", "write a CPU profile to this file (for development)")
	pf.MarkHidden("cpuprofile")
	var memprofile string
	pf.StringVar(&memprofile, "memprofile", "", "write a heap profile to this file when the command ends (for development)")
	pf.MarkHidden("memprofile")
	var profFile *os.File
	root.PersistentPreRunE = func(c *cobra.Command, args []string) error {
		if err := checkFloors(c); err != nil {
			return err
		}
		sh.report = &reportWriter{w: sh.stdout}
		sh.stdout = render.WithView(sh.report, sh.view(args))
		if cpuprofile == "" {
			return nil
		}
		f, err := os.Create(cpuprofile)
		if err != nil {
			return err
		}
		profFile = f
		return pprof.StartCPUProfile(f)
	}
	root.PersistentPostRun = func(c *cobra.Command, args []string) {
		if profFile != nil {
			pprof.StopCPUProfile()
			profFile.Close()
		}
		if memprofile != "" {
			writeHeapProfile(memprofile)
		}
	}
	root.AddCommand(newPieces(sh), newSurvey(sh))
	for _, add := range extraCommands {
		root.AddCommand(add(sh))
	}
	reportWriteErrors(root, sh)
	for _, c := range root.Commands() {
		if c.Args != nil {
			args, name := c.Args, c.Name()
			c.Args = func(c *cobra.Command, a []string) error {
				if err := args(c, a); err != nil {
					return &usageError{cmd: name, err: err}
				}
				return nil
			}
		}
	}
	return root
}

// view returns how the text views are laid out: fitted to the terminal
// that standard output is (or to --width), unless --wide, with sources
// shown relative to the folder the arguments name.
func (sh *shared) view(args []string) render.View {
	v := render.View{Base: screen.Base(args), Verbose: sh.verbose}
	switch {
	case sh.wide:
	case sh.width > 0:
		v.Width = sh.width
	default:
		v.Width = terminalWidth(sh.stdout)
	}
	return v
}

// terminalWidth returns the width of the terminal that w is, or 0.
func terminalWidth(w io.Writer) int {
	if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		if n, _, err := term.GetSize(int(f.Fd())); err == nil {
			return n
		}
	}
	return 0
}

// extraCommands lets each command file register itself.
var extraCommands []func(*shared) *cobra.Command

// encoder loads the vocabulary the flags name and builds an encoder.
func (sh *shared) encoder() (*bpe.Encoder, error) {
	v, err := sh.loadVocab()
	if err != nil {
		return nil, err
	}
	return sh.encoderFor(v)
}

func (sh *shared) loadVocab() (*bpe.Vocab, error) {
	if sh.vocab == "" && sh.merges != "" {
		return nil, usagef("morsel", "--merges needs --vocab")
	}
	if sh.vocab == "" {
		v := bpe.Default()
		sh.loaded = append(sh.loaded, v)
		return v, nil
	}
	for _, f := range []struct{ flag, path string }{{"--vocab", sh.vocab}, {"--merges", sh.merges}} {
		if _, err := os.Stat(f.path); f.path != "" && errors.Is(err, fs.ErrNotExist) {
			return nil, &inputError{fmt.Errorf("%s %s: not found", f.flag, f.path)}
		}
	}
	v, err := bpe.LoadFiles(sh.vocab, sh.merges)
	if err != nil {
		return nil, &inputError{err}
	}
	sh.loaded = append(sh.loaded, v)
	return v, nil
}

func (sh *shared) encoderFor(v *bpe.Vocab) (*bpe.Encoder, error) {
	mode, err := bpe.ParseSpecialMode(sh.specials)
	if err != nil {
		return nil, usagef("morsel", "--specials: %v", err)
	}
	enc, err := bpe.NewEncoder(v, bpe.Options{Specials: mode, SplitPattern: sh.splitPattern})
	if err != nil {
		return nil, usagef("morsel", "--split-pattern: %v", err)
	}
	return enc, nil
}

// outFormat checks --format against the formats a command offers.
func (sh *shared) outFormat(cmd string, allowed ...render.Format) (render.Format, error) {
	if sh.format == formatPartial {
		switch {
		case sh.shardable != cmd:
			return "", usagef(cmd, "--format partial: only survey, fit, quote, ration and fragments write partial reports")
		case len(sh.vocabs) > 1:
			return "", usagef(cmd, "--format partial takes one --vocab")
		}
		// The walk writes the partial; the report is never rendered.
		sh.partialOut = true
		return allowed[0], nil
	}
	f, err := render.ParseFormat(sh.format, allowed...)
	if err != nil {
		return "", usagef(cmd, "--format: %v", err)
	}
	return f, nil
}

// note prints a line on standard error unless --quiet.
func (sh *shared) note(format string, args ...any) {
	if !sh.quiet {
		fmt.Fprintln(sh.stderr, "morsel: "+render.CleanMessage(fmt.Sprintf(format, args...)))
	}
}

// corpusFlags are the flags of every command that walks documents.
type corpusFlags struct {
	field, column    string
	include, exclude []string
	hidden           bool
	as               string
	maxDocument      sizeFlag
	written          []fs.FileInfo // files the command writes, which the walk never reads
	shard            *shardFlags   // --shard and --output, on the commands whose results merge
}

// addCorpusFlags adds the document-walking flags to c.
func addCorpusFlags(c *cobra.Command, cf *corpusFlags) {
	f := c.Flags()
	f.StringVar(&cf.field, "field", "", "JSON / JSON Lines field holding the text, a dotted path for nesting (default text; a file without it is then one text document, unless --field is given)")
	f.StringVar(&cf.column, "column", "", "CSV / TSV column holding the text (default text; a file without it is then one text document, unless --column is given)")
	f.StringSliceVar(&cf.include, "include", nil, "only files matching these globs (repeatable; ** spans folders)")
	f.StringSliceVar(&cf.exclude, "exclude", nil, "leave out files and folders matching these globs")
	f.BoolVar(&cf.hidden, "hidden", false, "walk hidden files and folders (such as .git) too")
	f.StringVar(&cf.as, "as", "", "read every input as this format: text, markdown, code, html, jsonl, json, csv, tsv")
	c.RegisterFlagCompletionFunc("as", fixed(asNames...))
	cf.maxDocument = corpus.DefaultMaxDocument
	f.Var(&cf.maxDocument, "max-document", "skip a document whose text is longer than this (bytes, or with KiB, MiB, GiB)")
}

// options returns the corpus options the flags ask for.
func (cf *corpusFlags) options() corpus.Options {
	return corpus.Options{Field: cf.field, Column: cf.column, Include: cf.include, Exclude: cf.exclude,
		Hidden: cf.hidden, Format: cf.as, MaxDocument: int64(cf.maxDocument), Written: cf.written}
}

// progress returns a progress line on standard error when it is a
// terminal and --quiet is not given, else nil. The line is sized to the
// terminal at every redraw and erased at the end.
func (sh *shared) progress() walk.Progress {
	if sh.quiet {
		return nil
	}
	f, ok := sh.stderr.(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		return nil
	}
	columns := func() int {
		w, _, err := term.GetSize(int(f.Fd()))
		if err != nil {
			return 0
		}
		return w
	}
	return &screen.Meter{W: f, Columns: columns, Every: 100 * time.Millisecond}
}

// writeHeapProfile writes the heap as of the last garbage collection to
// path, for go tool pprof; a failure is only reported, as the command's
// own work is done.
func writeHeapProfile(path string) {
	f, err := os.Create(path)
	if err == nil {
		err = pprof.WriteHeapProfile(f)
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}
	if err != nil {
		fmt.Fprintf(os.Stderr, "morsel: --memprofile: %v\n", err)
	}
}
