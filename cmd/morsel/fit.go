package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"morsel/corpus"
	"morsel/report"
)

func init() { extraCommands = append(extraCommands, newFit) }

func newFit(sh *shared) *cobra.Command {
	var cf corpusFlags
	var tf targetFlags
	var rf requestFlags
	c := &cobra.Command{
		Use:   "fit PATH...",
		Short: "Check which documents overflow the window once framed, with the answer reserved",
		Long: `fit frames every document (--frame), counts the tokens of the assembled request on the
assembled text itself, adds --overhead, and sets that plus the reserved answer (--reserve)
against the window (--window; default the target's, else the vocabulary's: 1,024 for the
embedded GPT-2). The margin is the room left, negative on overflow. Overflowing documents
are listed first, worst first, then the rest in input order.

--target NAME takes vocabulary, window, frame and answer size from the targets file
(--targets FILE, or morsel.toml in the working folder); flags given override them. A
target with answer_ratio reserves that share of each request's input, rounded up.

Exit status: 1 when an input could not be read (the report still covers the rest; a
failure to read wins, since an unread document may overflow too), else 3 when any document
overflows, else 0.`,
		Example: `  morsel fit testdata/demo --frame testdata/demo/frame.txt --reserve 200
  morsel fit testdata/demo --targets testdata/demo/morsel.toml --target harbor-large
  morsel fit exports/ --window 8192 --format json | jq '.totals'`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			boundMemory()
			f, err := sh.outFormat("fit", report.Table, report.JSON, report.CSV, report.Markdown, report.HTML)
			if err != nil {
				return err
			}
			rq, err := sh.request(c, "fit", &tf, &rf)
			if err != nil {
				return err
			}
			fitter := &report.Fitter{Enc: rq.enc, Frame: rq.frame, Window: rq.window, Answer: rq.answer, Overhead: rq.overhead}
			fc := report.NewFitCollector(fitter, rq.target)
			err = report.Walk(args, cf.options(), sh.workers, sh.progress(), fitter.Fit,
				func(it corpus.Item, d report.FitDoc, err error) error {
					fc.Add(it, d, err)
					return nil
				})
			if err != nil {
				return err
			}
			r := fc.Finish()
			write := func() error { return report.WriteFit(sh.stdout, f, r) }
			if f == report.HTML {
				write = func() error { return report.WriteFitHTML(sh.stdout, r, 0) }
			}
			if err := write(); err != nil {
				return err
			}
			if err := sh.skipStatus(r.Skipped); err != nil {
				return err
			}
			if r.Totals.Overflow > 0 {
				return &checkFailed{fmt.Sprintf("%s of %s document(s) overflow the %s-token window", report.Num(r.Totals.Overflow), report.Num(r.Totals.Documents), report.Num(r.Window))}
			}
			return nil
		},
	}
	addCorpusFlags(c, &cf)
	addTargetFlags(c, &tf, false)
	addRequestFlags(c, &rf)
	return c
}
