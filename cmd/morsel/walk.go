package main

import (
	"encoding/json"
	"slices"
	"strings"

	"morsel/corpus"
	"morsel/report"
	"morsel/report/partial"
	"morsel/report/walk"
)

// collector folds the items of one walk into an analysis, in input order:
// each document's result goes to add, each input or record the walk left
// out and each document whose work failed to the list of skips.
type collector[R any] struct {
	// add takes one document's result; an error stops the walk.
	add func(d *corpus.Document, r R) error
	// failed makes the skip for a document whose work failed with err
	// (report.FailedDoc when nil).
	failed func(d *corpus.Document, err error) report.Skipped
	// tokens gives the tokens a result counted, for the progress bar.
	tokens func(r R) int
	// encode writes a result to a partial report (json.Marshal when
	// nil), and decode reads it back from a partial report (json.Unmarshal
	// when nil), for what the JSON leaves out.
	encode func(r R) ([]byte, error)
	decode func(d *corpus.Document, raw []byte) (R, error)
	// tables writes the command's own rows to a partial report, and
	// load reads them back from the merged one; both may be nil.
	tables func(pw *partial.Writer) error
	load   func(tables map[string][]json.RawMessage) error

	prog    walk.Progress
	skipped []report.Skipped
	once    *onceFilter              // --once: later copies of a text are left out
	note    func(d *corpus.Document) // says how a document was read, when the reader noted it
}

func (c *collector[R]) emit(it corpus.Item, r R, err error) error {
	switch {
	case it.Skip != nil:
		c.skipped = append(c.skipped, report.SkipOf(it.Skip))
	case err != nil:
		failed := c.failed
		if failed == nil {
			failed = report.FailedDoc
		}
		c.skipped = append(c.skipped, failed(it.Doc, err))
	default:
		if it.Doc.Note != "" && c.note != nil {
			c.note(it.Doc)
		}
		if rep := c.once.repeat(it.Doc); rep != nil {
			c.skipped = append(c.skipped, *rep)
			return nil
		}
		if c.prog != nil && c.tokens != nil {
			c.prog.Tokens(c.tokens(r))
		}
		return c.add(it.Doc, r)
	}
	return nil
}

// walkDocs walks paths as the corpus flags say (standard input "-" read
// from the command's own), does work on every document on --workers
// workers with a progress bar on a terminal, and folds the results with c.
// It returns what was skipped, in input order.
func walkDocs[R any](sh *shared, cf *corpusFlags, paths []string, work func(*corpus.Document) (R, error), c collector[R]) ([]report.Skipped, error) {
	opt := cf.options()
	opt.Stdin = sh.stdin
	opt.Settings = sh.read
	if err := corpus.CheckPatterns(opt); err != nil {
		return nil, usagef("", "--%v", err)
	}
	if cf.as != "" && !slices.Contains(asNames, cf.as) {
		return nil, usagef("", "--as %q: want one of %s", cf.as, strings.Join(asNames, ", "))
	}
	if sh.once {
		c.once = &onceFilter{}
	}
	c.note = func(d *corpus.Document) { sh.note("%s: %s", d.Source, d.Note) }
	c.skipped = []report.Skipped{}
	switch {
	case sh.partialOut:
		return nil, errPartial{writePartial(sh, cf, paths, opt, work, c)}
	case sh.replay != nil:
		if err := replay(sh, cf, &c); err != nil {
			return nil, err
		}
		return c.skipped, nil
	}
	share, err := cf.shareOf()
	if err != nil {
		return nil, err
	}
	c.prog = sh.progress()
	emit := func(_ walk.Place, it corpus.Item, r R, err error) error { return c.emit(it, r, err) }
	if err := walk.Shard(paths, opt, share, sh.workers, c.prog, work, emit); err != nil {
		return nil, err
	}
	return c.skipped, nil
}

// finish returns a walking command's exit error: an input error (exit
// status 1) when any input could not be read, else check, the command's
// own check (nil when it passed).
func (sh *shared) finish(skips []report.Skipped, check error) error {
	if err := sh.skipStatus(skips); err != nil {
		return err
	}
	return check
}
