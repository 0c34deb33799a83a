package main

import (
	"github.com/spf13/cobra"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report/quote"
	"morsel/report/ration"
	"morsel/report/render"
	"morsel/report/request"
	"morsel/report/walk"
)

func init() { extraCommands = append(extraCommands, newQuote) }

func newQuote(sh *shared) *cobra.Command {
	var cf corpusFlags
	var sf sortFlag
	var tf targetFlags
	var rf requestFlags
	var answer int
	var cut, batch bool
	c := &cobra.Command{
		Use:   "quote PATH... [--target NAME...]",
		Short: "Estimate the bill per document and in total, for one or more targets side by side",
		Long: `quote prices a batch under the targets of a targets file (--targets FILE, or morsel.toml in
the working folder): one --target NAME per target wanted, or every target in the file. For
each document and in total it gives the input tokens (the framed request, counted on the
assembled text, plus --overhead), the answer tokens (the target's answer_tokens per
request, or answer_ratio of the input rounded up), the requests and the cost: input x
price_in + answer x price_out, per million tokens, in exact decimal arithmetic. --batch
takes the target's batch_discount off.

A request over its target's window is priced as one request and flagged; with --ration such
a document is cut first (as morsel ration does, with the budget the window less the answer)
and every chunk is a request.

Flags given override every target's fields: --vocab/--merges, --window, --frame,
--answer-tokens. The prices are your own figures and the result is an estimate; every
output says so.

Exit status: 1 when an input could not be read (the bill covers the rest), else 3 when a
document could not be priced (with --ration, a window that cannot hold the frame, the answer
and one piece of it: the bill is short of it), else 0.`,
		Example: `  morsel quote testdata/demo/docs --targets testdata/demo/settings/morsel.toml
  morsel quote testdata/demo/docs --targets testdata/demo/settings/morsel.toml --target harbor-small --target harbor-large --ration
  morsel quote exports/ --target harbor-large --batch --format json`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			sh.boundMemory()
			f, err := sh.outFormat("quote", render.Table, render.JSON, render.CSV, render.Markdown, render.HTML)
			if err != nil {
				return err
			}
			order, err := sf.order("quote")
			if err != nil {
				return err
			}
			ts, err := tf.load("quote", true)
			if err != nil {
				return err
			}
			sh.reads(ts.File, "targets file")
			targets := ts.List
			if len(tf.names) > 0 {
				targets = nil
				for _, n := range tf.names {
					t, err := ts.Lookup(n)
					if err != nil {
						return usagef("quote", "--target: %v", err)
					}
					targets = append(targets, t)
				}
			}
			flags := c.Flags()
			if rf.window < 0 || rf.overhead < 0 || answer < 0 {
				return usagef("quote", "--window, --overhead and --answer-tokens take 0 or more tokens")
			}
			encs := map[[2]string]*bpe.Encoder{}
			var ps []*quote.Pricer
			for _, t := range targets {
				if !t.Set["price_in"] || !t.Set["price_out"] {
					return usagef("quote", "%s: target %q has no price_in or price_out", t.Where(), t.Name)
				}
				vocab, merges := t.Vocab, t.Merges
				if flags.Changed("vocab") || flags.Changed("merges") {
					vocab, merges = sh.vocab, sh.merges
				}
				key := [2]string{vocab, merges}
				enc := encs[key]
				if enc == nil {
					saved := [2]string{sh.vocab, sh.merges}
					sh.vocab, sh.merges = vocab, merges
					enc, err = sh.encoder()
					sh.vocab, sh.merges = saved[0], saved[1]
					if err != nil {
						return err
					}
					encs[key] = enc
				}
				p := &quote.Pricer{Target: t, Enc: enc, Window: t.Window, Answer: t.Answer, Overhead: rf.overhead + sh.templateTokens(enc.Vocab()), Ration: cut, Batch: batch, Generic: sh.genericSplit(enc)}
				if flags.Changed("window") {
					p.Window = rf.window
				}
				if p.Window <= 0 {
					p.Window = enc.Vocab().Window()
				}
				if p.Window <= 0 {
					return usagef("quote", "%s: target %q has no window and its vocabulary does not say one; give --window", t.Where(), t.Name)
				}
				if flags.Changed("frame") {
					p.Frame, err = sh.loadFrame("quote", rf.frame)
				} else {
					p.Frame, err = sh.targetFrame("quote", t)
				}
				if err != nil {
					return err
				}
				if flags.Changed("answer-tokens") {
					p.Answer = request.Answer{Tokens: answer}
				}
				ps = append(ps, p)
			}
			qc := quote.NewCollector(ps)
			work := func(d *corpus.Document) (quote.Doc, error) {
				text, err := walk.Text(d)
				if err != nil {
					return quote.Doc{}, err
				}
				return quote.Price(ps, d.Source, d.Record, text)
			}
			skipped, err := walkDocs(sh, &cf, args, work, collector[quote.Doc]{
				add:    func(_ *corpus.Document, d quote.Doc) error { qc.Add(d); return nil },
				failed: ration.FailedDoc,
				tokens: func(d quote.Doc) int {
					if len(d.Targets) == 0 {
						return 0
					}
					return d.Targets[0].InputTokens // the first target's requests
				},
			})
			if err != nil {
				return err
			}
			if err := qc.Err(); err != nil {
				return &inputError{err}
			}
			q := qc.Finish(skipped)
			q.Sort(order)
			write := func() error { return quote.Write(sh.stdout, f, q) }
			if f == render.HTML {
				write = func() error { return quote.WriteHTML(sh.stdout, q, 0) }
			}
			if err := write(); err != nil {
				return err
			}
			var check error
			if q.Totals.Unpriced > 0 {
				check = &checkFailed{q.Unpriced()}
			}
			return sh.finish(q.Skipped, check)
		},
	}
	addCorpusFlags(c, &cf)
	addSortFlag(c, &sf, quote.Orders)
	addTargetFlags(c, &tf, true)
	f := c.Flags()
	f.StringVar(&rf.frame, "frame", "", "prompt frame file for every target, instead of each target's frame")
	f.IntVar(&rf.window, "window", 0, "context window in tokens for every target, instead of each target's")
	f.IntVar(&rf.overhead, "overhead", 0, "fixed tokens added to every request")
	f.IntVar(&answer, "answer-tokens", 0, "answer tokens per request for every target, instead of each target's")
	f.BoolVar(&cut, "ration", false, "cut documents whose request overflows the window, and price every chunk as a request")
	f.BoolVar(&batch, "batch", false, "take each target's batch_discount off")
	addShardFlags(sh, c, &cf)
	return c
}
