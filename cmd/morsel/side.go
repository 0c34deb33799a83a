package main

import (
	"fmt"

	"morsel/corpus"
	"morsel/report/render"
	"morsel/report/side"
	"morsel/report/walk"
)

// vocabFlag is --vocab: the first value is the vocabulary of a command
// that takes one; every value is kept for the commands that compare.
type vocabFlag struct {
	first *string
	all   *[]string
}

func (v *vocabFlag) Set(s string) error {
	*v.all = append(*v.all, s)
	if len(*v.all) == 1 {
		*v.first = s
	}
	return nil
}

func (v *vocabFlag) String() string {
	if v.first == nil {
		return ""
	}
	return *v.first
}

func (v *vocabFlag) Type() string { return "string" }

// sideRows is how many documents the table view of a comparison lists.
const sideRows = 50

// runSide weighs the documents under every --vocab side by side: what
// survey, fit and fragments do when given more than one.
func (sh *shared) runSide(cmd string, cf *corpusFlags, args []string) error {
	f, err := sh.outFormat(cmd, render.Table, render.JSON, render.CSV, render.Markdown)
	if err != nil {
		return err
	}
	if sh.merges != "" {
		return usagef(cmd, "--merges names one vocabulary's merges; with several --vocab, name each as a folder or a bundle")
	}
	var vs []side.Vocab
	seen := map[string]bool{}
	for _, path := range sh.vocabs {
		sh.vocab = path
		enc, err := sh.encoder()
		if err != nil {
			return err
		}
		name := enc.Vocab().Name()
		if name == "" || seen[name] {
			name = path
		}
		seen[name] = true
		vs = append(vs, side.Vocab{Name: name, Enc: enc})
	}
	sh.vocab = sh.vocabs[0]
	col := side.NewCollector(vs, 10)
	skipped, err := walkDocs(sh, cf, args, func(d *corpus.Document) (*side.DocWords, error) {
		text, err := walk.Text(d)
		if err != nil {
			return nil, err
		}
		return side.Measure(vs, d.Source, d.Record, text)
	}, collector[*side.DocWords]{
		add:    func(_ *corpus.Document, dw *side.DocWords) error { col.Add(dw); return nil },
		tokens: func(dw *side.DocWords) int { return dw.Doc.Tokens[0] },
	})
	if err != nil {
		return err
	}
	for _, s := range skipped {
		col.Skip(s)
	}
	r := col.Finish()
	if cmd != "survey" {
		sh.note("%s with %d vocabularies: the documents weighed side by side (tokens per document and in total, and the words each vocabulary splits)", cmd, len(vs))
	}
	if err := side.Write(sh.stdout, f, r, sideRows); err != nil {
		return fmt.Errorf("writing the comparison: %w", err)
	}
	return sh.finish(r.Skipped, nil)
}
