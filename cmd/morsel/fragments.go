package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"

	"github.com/spf13/cobra"

	"morsel/corpus"
	"morsel/report/fragments"
	"morsel/report/partial"
	"morsel/report/render"
)

func init() { extraCommands = append(extraCommands, newFragments) }

func newFragments(sh *shared) *cobra.Command {
	var cf corpusFlags
	var minPieces float64
	memory := sizeFlag(1 << 30)
	var minCount int64
	var top, docRows int
	var termsFile string
	c := &cobra.Command{
		Use:   "fragments PATH...",
		Short: "Rank the words and glossary terms the vocabulary breaks into many pieces",
		Long: `fragments finds the words (by the Unicode word-boundary rules) that the vocabulary breaks
into many pieces, and ranks them by the tokens they waste: excess = occurrences x (pieces - 1).
A word's pieces are the tokens that spell it where it stands in the text, its leading space
included; a token shared by two words counts for both.

Beside the ranking it gives tokens per word (UAX #29 words) over the corpus, by script (Latin, Cyrillic,
Greek, Arabic, Hebrew, Devanagari, Han, Hiragana and Katakana, Hangul, digits, other) and by
document, with the share of words that are one token; and the saving: the listed words'
excess as a share of all tokens, the most that adding them to the vocabulary could save (an
upper bound, never a promise).

--terms checks a glossary, one term a line (several words allowed; lines starting with # are
comments): each term's pieces alone and after a space, its occurrences in the corpus, and a
flag when it reaches --min-pieces.`,
		Example: `  morsel fragments testdata/demo/docs
  morsel fragments testdata/demo/docs --terms testdata/demo/settings/terms.txt
  morsel fragments exports/tickets.jsonl --min-pieces 4 --min-count 5 --top 20 --format json`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			if len(sh.vocabs) > 1 {
				return sh.runSide("fragments", &cf, args)
			}
			f, err := sh.outFormat("fragments", render.Table, render.JSON, render.CSV, render.Markdown, render.HTML)
			if err != nil {
				return err
			}
			if !(minPieces >= 1) || math.IsInf(minPieces, 1) {
				return usagef("fragments", "--min-pieces %g: want 1 or more", minPieces)
			}
			if minCount < 1 {
				return usagef("fragments", "--min-count %d: want 1 or more", minCount)
			}
			if top < 0 || docRows < 0 {
				return usagef("fragments", "--top and --doc-rows take 0 (all) or more")
			}
			var terms []fragments.Term
			if termsFile != "" {
				sh.reads(termsFile, "glossary")
				data, err := readSetting("fragments", "--terms", termsFile)
				if err != nil {
					return err
				}
				terms, err = fragments.ParseGlossary(termsFile, bytes.NewReader(data))
				if err != nil {
					return &inputError{fmt.Errorf("glossary: %w", err)}
				}
			}
			enc, err := sh.encoder()
			if err != nil {
				return err
			}
			paceGrowingHeap()
			sh.boundWords(int64(memory))
			fr := fragments.NewFragmenter(enc, terms)
			fr.SetMemory(int64(memory))
			skipped, err := walkDocs(sh, &cf, args, fr.Scan, collector[*fragments.DocWords]{
				add: func(d *corpus.Document, dw *fragments.DocWords) error {
					fr.AddWords(d.Source, d.Record, dw)
					return nil
				},
				tokens: func(dw *fragments.DocWords) int { return dw.Tokens },
				tables: func(pw *partial.Writer) error {
					return fr.WordRows(func(r fragments.WordRow) error { return pw.Row(wordTable, r) })
				},
				load: func(t map[string][]json.RawMessage) error {
					for _, raw := range t[wordTable] {
						var r fragments.WordRow
						if err := json.Unmarshal(raw, &r); err != nil {
							return &inputError{fmt.Errorf("partial report: a word row that does not read: %w", err)}
						}
						fr.AddWordRow(r)
					}
					return nil
				},
			})
			if err != nil {
				return err
			}
			r := fr.Finish(fragments.Options{MinPieces: minPieces, MinCount: minCount, Top: top}, skipped)
			write := func() error { return fragments.Write(sh.stdout, f, r, docRows) }
			if f == render.HTML {
				write = func() error { return fragments.WriteHTML(sh.stdout, r, docRows) }
			}
			if err := write(); err != nil {
				return err
			}
			return sh.finish(r.Skipped, nil)
		},
	}
	addCorpusFlags(c, &cf)
	fl := c.Flags()
	fl.Float64Var(&minPieces, "min-pieces", 3, "list words of at least this many pieces per occurrence (on average)")
	fl.Int64Var(&minCount, "min-count", 1, "list words that occur at least this many times")
	fl.IntVar(&top, "top", 50, "list at most this many words (0: all)")
	fl.StringVar(&termsFile, "terms", "", "glossary file to check, one term a line")
	fl.IntVar(&docRows, "doc-rows", 10, "documents in the table of tokens per UAX #29 word (0: all)")
	fl.Var(&memory, "memory", "bound on the word tables (past it, the most frequent words are counted approximately, with the error stated)")
	addShardFlags(sh, c, &cf)
	return c
}

// wordTable is the partial report's table of every word's tallies.
const wordTable = "words"
