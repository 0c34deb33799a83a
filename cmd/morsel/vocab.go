package main

import (
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"morsel/report/render"
	"morsel/report/vocab"
)

func init() { extraCommands = append(extraCommands, newVocab) }

func newVocab(sh *shared) *cobra.Command {
	return &cobra.Command{
		Use:   "vocab",
		Short: "Describe a vocabulary: family, pipeline, sizes, special tokens, fingerprint",
		Long: `vocab describes the vocabulary that --vocab names (or the embedded default): its
family in words, its normalizer and pre-tokenizer, its distinct tokens and merges, its
added and special tokens, the tokens its template adds to every request, byte fallback,
the window when known, its longest tokens, its tokens per script, and a fingerprint: the
sha256 of a canonical form, the same however the vocabulary is named (file, folder,
embedded), so that two teams can check they count with the same one.`,
		Example: `  morsel vocab
  morsel vocab --vocab models/x/ --format json
  morsel vocab --vocab models/x/tokenizer.json --format md`,
		Args: cobra.NoArgs,
		RunE: func(c *cobra.Command, args []string) error {
			f, err := sh.outFormat("vocab", render.Table, render.JSON, render.Markdown)
			if err != nil {
				return err
			}
			v, err := sh.loadVocab()
			if err != nil {
				return err
			}
			return writeVocab(sh.stdout, f, vocab.Describe(v))
		},
	}
}

func writeVocab(w io.Writer, f render.Format, r *vocab.Result) error {
	if f == render.JSON {
		return render.WriteJSON(w, r)
	}
	facts := &render.Grid{Header: []string{"vocabulary", r.Name}}
	window := "not known (set --window)"
	if r.Window != nil {
		window = render.Num(*r.Window) + " tokens"
	}
	list := func(ts []vocab.Token) string {
		if len(ts) == 0 {
			return "none"
		}
		var parts []string
		for _, t := range ts {
			parts = append(parts, fmt.Sprintf("%s (%d)", render.Readable([]byte(t.Text)), t.ID))
		}
		return strings.Join(parts, " ")
	}
	yes := map[bool]string{true: "yes", false: "no"}
	facts.AddRow("family", r.Family)
	facts.AddRow("normalizer", r.Normalizer)
	facts.AddRow("pre-tokenizer", r.PreTokenizer)
	facts.AddRow("tokens", render.Num(r.Tokens))
	facts.AddRow("merges", render.Num(r.Merges))
	facts.AddRow("added tokens", render.Num(r.Added))
	facts.AddRow("special tokens", list(r.Specials))
	facts.AddRow("added per request", list(r.Template))
	facts.AddRow("byte fallback", yes[r.ByteFallback])
	facts.AddRow("window", window)
	facts.AddRow("fingerprint", r.Fingerprint)
	long := &render.Grid{Header: []string{"longest tokens", "id", "bytes"}, Right: []int{1, 2}}
	for _, t := range r.Longest {
		long.AddRow(render.Readable([]byte(t.Text)), fmt.Sprint(t.ID), fmt.Sprint(t.Bytes))
	}
	scripts := &render.Grid{Header: []string{"tokens by script", "tokens", "share"}, Right: []int{1, 2}}
	for _, s := range r.Scripts {
		scripts.AddRow(s.Label, render.Num(s.Tokens), render.Percent(float64(s.Tokens), float64(r.Tokens)))
	}
	return render.WriteGrids(w, f, facts, long, scripts)
}
