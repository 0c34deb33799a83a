package main

import (
	"encoding/json"
	"fmt"

	"github.com/spf13/cobra"

	"morsel/corpus"
	"morsel/report"
	"morsel/report/partial"
	"morsel/report/render"
	"morsel/report/survey"
)

func newSurvey(sh *shared) *cobra.Command {
	var cf corpusFlags
	var sf sortFlag
	var rows int
	var sampleOf string
	c := &cobra.Command{
		Use:   "survey PATH...",
		Short: "Weigh a document set: tokens per document and in total, and their spread",
		Long: `survey walks files, folders (recursively, in name order), glob patterns and - (standard
input), reads each as plain text, Markdown, code, HTML (visible text), JSON Lines, JSON, CSV
or TSV (also gzip- or zstd-compressed), and counts every document's bytes, characters,
words (as wc -w counts them) and tokens. A JSON Lines line, JSON array element or CSV
row is one document.

The report gives the totals, the spread of tokens per document (min, median, p90, p99,
max) with a histogram, a breakdown by file type, the largest documents, and every input or
record that was not counted, with the reason. The exit status is 1 when any input could not
be read; the report still covers all the rest.`,
		Example: `  morsel survey testdata/demo/docs
  morsel survey exports/tickets.jsonl --field body.text --format json
  morsel survey docs/ --include '*.md' --exclude 'drafts/**' --format csv > weights.csv`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			if len(sh.vocabs) > 1 {
				return sh.runSide("survey", &cf, args)
			}
			sh.boundMemory()
			f, err := sh.outFormat("survey", render.Table, render.JSON, render.CSV, render.Markdown, render.HTML)
			if err != nil {
				return err
			}
			order, err := sf.order("survey")
			if err != nil {
				return err
			}
			enc, err := sh.encoder()
			if err != nil {
				return err
			}
			sv := survey.NewSurveyor(enc.Vocab().Info())
			work := func(d *corpus.Document) (survey.Weight, error) { return survey.Weigh(enc, d) }
			var sampler *survey.Sampler
			if f == render.HTML || sh.partialOut {
				sampler = survey.NewSampler(enc, sampleOf)
				work = sampler.Weigh
			}
			// In the input's order, JSON and CSV rows are written as they
			// come and the table keeps only the rows it shows.
			var stream *survey.RowStream
			if order == report.InputOrder {
				switch f {
				case render.JSON, render.CSV:
					if stream, err = survey.NewRowStream(sh.stdout, f, enc.Vocab().Info()); err != nil {
						return err
					}
					sv.Keep(0, stream.Row)
				case render.Table, render.Markdown:
					if rows > 0 {
						sv.Keep(rows, nil)
					}
				}
			}
			skipped, err := walkDocs(sh, &cf, args, work, collector[survey.Weight]{
				add:    func(_ *corpus.Document, w survey.Weight) error { return sv.Add(w) },
				tokens: func(w survey.Weight) int { return w.Tokens },
				encode: func(w survey.Weight) ([]byte, error) { return survey.AppendWeight(nil, w), nil },
				decode: survey.DecodeWeight,
				tables: func(pw *partial.Writer) error {
					if w, head, ok := sampler.Kept(); ok {
						return pw.Row(sampleTable, sampleRow{w, head})
					}
					return nil
				},
				load: func(t map[string][]json.RawMessage) error { return loadSamples(sampler, t[sampleTable]) },
			})
			if err != nil {
				return err
			}
			s := sv.Finish(skipped)
			s.Sort(order)
			switch {
			case stream != nil:
				err = stream.Finish(s)
			case f == render.HTML:
				err = writeSurveyHTML(sh, s, sampler, sampleOf, rows)
			default:
				err = survey.Write(sh.stdout, f, s, rows)
			}
			if err != nil {
				return err
			}
			return sh.finish(s.Skipped, nil)
		},
	}
	addCorpusFlags(c, &cf)
	addSortFlag(c, &sf, survey.Orders)
	c.Flags().IntVar(&rows, "rows", 50, "per-document rows in the table and html views (0: all)")
	c.Flags().StringVar(&sampleOf, "sample", "", "with --format html: the document (SOURCE or SOURCE:RECORD) shown split into tokens (default: the one with the most tokens per wc -w word)")
	addShardFlags(sh, c, &cf)
	return c
}

// writeSurveyHTML renders the survey page with its sample document.
func writeSurveyHTML(sh *shared, s *survey.Report, sampler *survey.Sampler, want string, rows int) error {
	sample, err := sampler.Sample()
	if err != nil {
		sh.note("%v; the page is written without it", err)
	}
	if sample == nil && want != "" {
		sh.note("--sample %s: no such document was counted; the page is written without a sample", want)
	}
	return survey.WriteHTML(sh.stdout, s, sample, rows)
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

// sampleTable is the partial report's table of the document each shard
// kept as the HTML page's sample, which a merge offers to its own sampler.
const sampleTable = "sample"

type sampleRow struct {
	Weight survey.Weight `json:"weight"`
	Head   []byte        `json:"head"`
}

// loadSamples offers the shards' samples to sampler (none without one).
func loadSamples(sampler *survey.Sampler, rows []json.RawMessage) error {
	if sampler == nil {
		return nil
	}
	for _, raw := range rows {
		var r sampleRow
		if err := json.Unmarshal(raw, &r); err != nil {
			return &inputError{fmt.Errorf("partial report: a sample row that does not read: %w", err)}
		}
		sampler.Offer(r.Weight, r.Head)
	}
	return nil
}
