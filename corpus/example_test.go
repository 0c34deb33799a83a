package corpus_test

import (
	"fmt"
	"strings"

	"morsel/corpus"
)

// Reading a corpus: List resolves the paths into inputs (here "-", standard
// input, which Options.Stdin stands in for), and Read turns each input into
// documents and skips, in input order. A JSON Lines line is one document;
// a malformed line is skipped with its reason and the others carry on.
func ExampleRead() {
	opt := corpus.Options{Stdin: strings.NewReader(`{"text": "The buoy drifted."}
{"text": broken
{"text": "The crane was serviced."}
`)}
	inputs, skips := corpus.List([]string{"-"}, opt)
	fmt.Println(len(inputs), "input,", len(skips), "skipped while listing")
	for _, in := range inputs {
		corpus.Read(in, opt, func(it corpus.Item) error {
			if it.Doc != nil {
				fmt.Printf("%s:%d %s %q\n", it.Doc.Source, it.Doc.Record, it.Doc.Format, it.Doc.Text)
			} else {
				fmt.Printf("%s:%d skipped: %s\n", it.Skip.Source, it.Skip.Record, it.Skip.Reason)
			}
			return nil
		})
	}
	// Output:
	// 1 input, 0 skipped while listing
	// -:1 jsonl "The buoy drifted."
	// -:2 skipped: malformed
	// -:3 jsonl "The crane was serviced."
}
