package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"morsel/corpus"
	"morsel/report/fit"
	"morsel/report/render"
)

func init() { extraCommands = append(extraCommands, newFit) }

func newFit(sh *shared) *cobra.Command {
	var cf corpusFlags
	var sf sortFlag
	var tf targetFlags
	var rf requestFlags
	var rows int
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
		Example: `  morsel fit testdata/demo/docs --frame testdata/demo/settings/frame.txt --reserve 200
  morsel fit testdata/demo/docs --targets testdata/demo/settings/morsel.toml --target harbor-large
  morsel fit exports/ --window 8192 --format json | jq '.totals'`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			if len(sh.vocabs) > 1 {
				return sh.runSide("fit", &cf, args)
			}
			sh.boundMemory()
			f, err := sh.outFormat("fit", render.Table, render.JSON, render.CSV, render.Markdown, render.HTML)
			if err != nil {
				return err
			}
			order, err := sf.order("fit")
			if err != nil {
				return err
			}
			rq, err := sh.request(c, "fit", &tf, &rf)
			if err != nil {
				return err
			}
			fitter := &fit.Fitter{Enc: rq.enc, Frame: rq.frame, Window: rq.window, Answer: rq.answer, Overhead: rq.overhead}
			fc := fit.NewCollector(fitter, rq.target)
			skipped, err := walkDocs(sh, &cf, args, fitter.Fit, collector[fit.Doc]{
				add:    func(_ *corpus.Document, d fit.Doc) error { fc.Add(d); return nil },
				tokens: func(d fit.Doc) int { return d.Tokens },
			})
			if err != nil {
				return err
			}
			r := fc.Finish(skipped)
			r.Sort(order)
			write := func() error { return fit.Write(sh.stdout, f, r, rows) }
			if f == render.HTML {
				write = func() error { return fit.WriteHTML(sh.stdout, r, 0) }
			}
			if err := write(); err != nil {
				return err
			}
			var check error
			if r.Totals.Overflow > 0 {
				check = &checkFailed{fmt.Sprintf("%s of %s document(s) overflow the %s-token window", render.Num(r.Totals.Overflow), render.Num(r.Totals.Documents), render.Num(r.Window))}
			}
			return sh.finish(r.Skipped, check)
		},
	}
	addCorpusFlags(c, &cf)
	addSortFlag(c, &sf, fit.Orders)
	addTargetFlags(c, &tf, false)
	addRequestFlags(c, &rf)
	addShardFlags(sh, c, &cf)
	c.Flags().IntVar(&rows, "rows", 50, "per-document rows in the table and md views, overflowing first (0: all; csv and json list all)")
	return c
}
