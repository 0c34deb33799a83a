// Command morsel-beam weighs a document set on an Apache Beam runner: it
// matches file patterns through Beam's file systems, reads them as morsel
// does, weighs every document in the model's tokens, combines the
// workers' partial reports and writes the report that morsel survey would
// print for the same files.
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"strings"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/x/beamx"

	// The in-process runner, for --runner prism (the default here).
	_ "github.com/apache/beam/sdks/v2/go/pkg/beam/runners/prism"
)

var (
	input      = flag.String("input", "", "file patterns to weigh, comma-separated (local, gs:// or s3://)")
	output     = flag.String("output", "-", "where to write the report (- for standard output, with the prism runner)")
	format     = flag.String("format", "table", "table, json, csv, md, or partial")
	command    = flag.String("command", "survey", "the report: survey")
	vocab      = flag.String("vocab", "", "vocabulary file or folder, as morsel's --vocab, readable on every worker (default: the embedded GPT-2)")
	merges     = flag.String("merges", "", "merges file, with --vocab FILE")
	field      = flag.String("field", "", "JSON / JSON Lines field holding the text, as morsel's --field (default: text, and a file whose first record has none is read as text)")
	column     = flag.String("column", "", "CSV / TSV column holding the text, as morsel's --column (default: text, and a file without one is read as text)")
	as         = flag.String("as", "", "read every input as this format")
	hidden     = flag.Bool("hidden", false, "weigh hidden files too")
	workers    = flag.Int("workers", 0, "files weighed at once in one bundle (0: one a core)")
	splitAbove = flag.Int64("split-above", 64<<20, "read files of records larger than this many bytes in shares on several workers (0: never)")
)

func main() {
	flag.Parse()
	beam.Init()
	if *input == "" {
		fmt.Fprintln(os.Stderr, "morsel-beam: --input is required")
		os.Exit(2)
	}
	c := Config{Inputs: strings.Split(*input, ","), Output: *output, Format: *format, Command: *command, Vocab: *vocab, Merges: *merges,
		Field: *field, Column: *column, As: *as, Hidden: *hidden, SplitAbove: *splitAbove, Workers: *workers}
	p, s := beam.NewPipelineWithRoot()
	Build(s, c)
	if err := beamx.Run(context.Background(), p); err != nil {
		fmt.Fprintln(os.Stderr, "morsel-beam:", err)
		os.Exit(1)
	}
}
