package main

import (
	"encoding/json"
	"fmt"
	"os"
	"sort"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"morsel/corpus"
	"morsel/report"
	"morsel/report/partial"
)

func init() { extraCommands = append(extraCommands, newMerge) }

func newMerge(sh *shared) *cobra.Command {
	var output string
	var force bool
	c := &cobra.Command{
		Use:   "merge PARTIAL...",
		Short: "Merge the partial reports of a sharded run into the report one run gives",
		Long: `merge reads the partial reports that survey, fit, quote, ration or fragments wrote with
--shard K/N --format partial, checks that they are shards of one run (the same command,
arguments, vocabulary, settings files and flags) and that every shard is there once, and
prints the report that one unsharded run over the same inputs prints, byte for byte, in
any of the command's formats.

The command runs again on the merged results with the flags the shards were given; the
settings files (frame, targets, glossary) must be readable here, with the same contents
(give --frame, --targets or --terms if they moved). --format partial writes the merged
partial instead, for a merge in stages; it may hold only some of the shards.`,
		Example: `  morsel survey docs/ --shard 1/2 --format partial -o part1.gz
  morsel survey docs/ --shard 2/2 --format partial -o part2.gz
  morsel merge part1.gz part2.gz --format json`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			ps := make([]*partial.Partial, len(args))
			for i, name := range args {
				f, err := os.Open(name)
				if err != nil {
					return &inputError{err}
				}
				ps[i], err = partial.ReadForMerge(f, name)
				f.Close()
				if err != nil {
					return &inputError{err}
				}
			}
			whole := sh.format != formatPartial
			m, err := partial.Merge(ps, args, whole)
			if err != nil {
				return &inputError{err}
			}
			if !whole {
				return sh.writeMerged(c, m, output, force, args)
			}
			run := []string{m.Header.Command}
			given := map[string]bool{}
			var extra []string
			visit := func(f *pflag.Flag) {
				if f.Changed {
					switch f.Name {
					case "output", "force", "cpuprofile", "memprofile":
						return
					}
					given[f.Name] = true
					extra = append(extra, "--"+f.Name+"="+f.Value.String())
				}
			}
			c.Flags().Visit(visit)
			c.InheritedFlags().Visit(visit)
			for _, a := range m.Header.Args {
				if !given[flagName(a)] {
					run = append(run, a)
				}
			}
			run = append(append(append(run, extra...), "--"), m.Header.Paths...)
			again := newRootWith(&shared{stdin: sh.stdin, stdout: sh.out0, stderr: sh.stderr, out0: sh.out0, replay: m})
			again.SetArgs(run)
			_, err = again.ExecuteC()
			return err
		},
	}
	// The flags of the report that a merge may choose anew: how it is
	// shown, and where the settings files are now. They are passed to the
	// command the partials are of.
	f := c.Flags()
	f.Int("rows", 0, "as the command's --rows")
	f.String("sort", "", "as the command's --sort")
	f.Int("top", 0, "as fragments' --top")
	f.Float64("min-pieces", 0, "as fragments' --min-pieces")
	f.Int64("min-count", 0, "as fragments' --min-count")
	f.Int("doc-rows", 0, "as fragments' --doc-rows")
	f.String("frame", "", "the frame file, where it is now (its contents must be the shards' own)")
	f.String("targets", "", "the targets file, where it is now (its contents must be the shards' own)")
	f.String("terms", "", "the glossary, where it is now (its contents must be the shards' own)")
	f.StringVarP(&output, "output", "o", "", "with --format partial: write the merged partial to this file, gzip-compressed if its name ends in .gz (default, or -: standard output)")
	f.BoolVar(&force, "force", false, "with --output: replace an existing file")
	return c
}

// flagName returns the name of a flag argument "--name=value".
func flagName(arg string) string {
	for i := 2; i < len(arg); i++ {
		if arg[i] == '=' {
			return arg[2:i]
		}
	}
	if len(arg) > 2 {
		return arg[2:]
	}
	return arg
}

// writeMerged writes the merged partial m to output (standard output when
// empty or "-").
func (sh *shared) writeMerged(c *cobra.Command, m *partial.Partial, output string, force bool, inputs []string) error {
	if output == "" || output == "-" {
		return m.Write(sh.stdout, false)
	}
	o, err := sh.createOutput("merge", "--output", output, force, nil, inputs)
	if err != nil {
		return err
	}
	defer o.Abort()
	if err := m.Write(o, compressed(output)); err != nil {
		return &inputError{fmt.Errorf("--output %s: %w", output, err)}
	}
	if err := o.Commit(); err != nil {
		return &inputError{fmt.Errorf("--output %s: %w", output, err)}
	}
	return nil
}

// replay feeds the merged partial's items to c in the order of a single
// run, after checking that this run's vocabulary, settings and flags are
// those the partials were made with.
func replay[R any](sh *shared, cf *corpusFlags, c *collector[R]) error {
	m := sh.replay
	a, err := sh.agreement(cf.shard.cmd)
	if err != nil {
		return err
	}
	for _, k := range agreeKeys(a, m.Header.Agree) {
		if x, y := m.Header.Agree[k], a[k]; x != y {
			return usagef("merge", "the partial reports were made with %s %s, this merge has %s", k, orNone(x), orNone(y))
		}
	}
	decode := c.decode
	if decode == nil {
		decode = func(_ *corpus.Document, raw []byte) (R, error) {
			var r R
			err := json.Unmarshal(raw, &r)
			return r, err
		}
	}
	if c.load != nil {
		if err := c.load(m.Tables); err != nil {
			return err
		}
	}
	var zero R
	// One document serves every item: the collectors copy what they need
	// from it and keep no pointer, and an allocation an item was a tenth
	// of a merge's time.
	doc := new(corpus.Document)
	return m.Each(func(it *partial.Item) error {
		if s := it.Skip; s != nil {
			sk := corpus.Skip{Source: it.Src, Record: it.Record, Line: it.Line, Reason: s.Reason, Detail: s.Detail, Failed: s.Failed}
			return c.emit(corpus.Item{Skip: &sk}, zero, nil)
		}
		*doc = corpus.Document{Source: it.Src, Record: it.Record, Line: it.Line, Format: it.Format, Hash: it.Hash}
		d := doc
		if it.Err != "" {
			c.skipped = append(c.skipped, report.Skipped{Source: d.Source, Record: d.Record, Line: d.Line, Reason: report.ReasonFailed, Detail: it.Err, Failed: true})
			return nil
		}
		r, err := decode(d, it.Result)
		if err != nil {
			return &inputError{fmt.Errorf("%s: a result that does not read: %w", report.Where(d.Source, d.Record), err)}
		}
		return c.emit(corpus.Item{Doc: d}, r, nil)
	})
}

func orNone(s string) string {
	if s == "" {
		return "(none)"
	}
	return s
}

func agreeKeys(a, b map[string]string) []string {
	var keys []string
	for k := range a {
		keys = append(keys, k)
	}
	for k := range b {
		if _, ok := a[k]; !ok {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	return keys
}
