package main

import (
	"github.com/spf13/cobra"

	"morsel/corpus"
	"morsel/report"
)

func newSurvey(sh *shared) *cobra.Command {
	var cf corpusFlags
	var rows int
	c := &cobra.Command{
		Use:   "survey PATH...",
		Short: "Weigh a document set: tokens per document and in total, and their spread",
		Long: `survey walks files, folders (recursively, in name order), glob patterns and - (standard
input), reads each as plain text, Markdown, code, HTML (visible text), JSON Lines, JSON, CSV
or TSV (also gzip- or zstd-compressed), and counts every document's bytes, characters,
words and tokens. A JSON Lines line, JSON array element or CSV row is one document.

The report gives the totals, the spread of tokens per document (min, median, p90, p99,
max) with a histogram, a breakdown by file type, the largest documents, and every input or
record that was not counted, with the reason. The exit status is 1 when any input could not
be read; the report still covers all the rest.`,
		Example: `  morsel survey testdata/demo
  morsel survey exports/tickets.jsonl --field body.text --format json
  morsel survey docs/ --include '*.md' --exclude 'drafts/**' --format csv > weights.csv`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			f, err := sh.outFormat("survey", report.Table, report.JSON, report.CSV, report.Markdown)
			if err != nil {
				return err
			}
			enc, err := sh.encoder()
			if err != nil {
				return err
			}
			sv := report.NewSurveyor(enc.Vocab().Info())
			prog := sh.progress()
			err = report.Walk(args, cf.options(), sh.workers, prog,
				func(d *corpus.Document) (report.Weight, error) { return report.Weigh(enc, d) },
				func(it corpus.Item, w report.Weight, err error) error {
					if prog != nil {
						prog.Tokens(w.Tokens)
					}
					sv.Add(it, w, err)
					return nil
				})
			if err != nil {
				return err
			}
			s := sv.Finish()
			if err := report.WriteSurvey(sh.stdout, f, s, rows); err != nil {
				return err
			}
			return sh.skipStatus(s.Skipped)
		},
	}
	addCorpusFlags(c, &cf)
	cf.stdin = sh.stdin
	c.Flags().IntVar(&rows, "rows", 50, "per-document rows in the table view (0: all)")
	return c
}

// skipStatus returns the exit error for a report's skips: exit status 1
// when any input could not be read, with a count on standard error.
func (sh *shared) skipStatus(skips []report.Skipped) error {
	failed := 0
	for _, s := range skips {
		if s.Failed {
			failed++
		}
	}
	if failed == 0 {
		if len(skips) > 0 {
			sh.note("%d input(s) left out on purpose (binary, empty, duplicate...); the report lists them", len(skips))
		}
		return nil
	}
	sh.note("%d input(s) or record(s) could not be read; the report lists them with the reason", failed)
	return &inputError{}
}
