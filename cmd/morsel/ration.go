package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync"

	"github.com/spf13/cobra"

	"morsel/corpus"
	"morsel/internal/outfile"
	"morsel/report/ration"
	"morsel/report/render"
)

func init() { extraCommands = append(extraCommands, newRation) }

func newRation(sh *shared) *cobra.Command {
	var cf corpusFlags
	var sf sortFlag
	var tf targetFlags
	var rf requestFlags
	var budget, overlap int
	var emit string
	var force bool
	c := &cobra.Command{
		Use:   "ration PATH...",
		Short: "Plan chunks so that every framed request stays within a token budget",
		Long: `ration splits every document into chunks whose requests (the chunk in its --frame, plus
--overhead) take at most --budget tokens. The default budget is the window less the answer
reserved: --window and --reserve, or the target's window and answer size, else the
vocabulary's window.

Every chunk is counted on its own framed text, so its count is exact; the split moves BPE
boundaries, and a slice of the whole document's tokens is not trusted. Each chunk ends at
the latest place that fits, preferring, among places that fill at least half the budget, a
paragraph break, then a line break, then a sentence end, then any edge between
pre-tokens; a chunk is cut inside a pre-token only when one pre-token alone is over the
budget, and never inside a UTF-8 character. Without --overlap the chunks put together give
back the document byte for byte; --overlap N starts each chunk with up to N tokens of the
previous chunk's tail, at a pre-token edge.

The report lists chunks per document and how full the chunks are. --emit FILE writes the
plan as JSON Lines, one chunk a line: source, record, chunk (from 0), start and end (byte
offsets in the document), tokens (the request's), cut (the kind of place it ends at) and
text. The plan is written to a temporary file beside FILE and renamed to FILE once it is
whole, so a run that fails leaves no half plan; FILE may not be one of the inputs, and an
existing FILE is replaced only with --force. A file the run writes is never read as input.
--emit - writes the plan to standard output as it goes, and the report to standard error.

A document over 32 MiB, and standard input, is cut as it is read, in a window that holds
the next chunk and what its choice looks at, so memory stays bounded; the plan is the one
the whole text gives. That holds under the GPT-2 rule and under a bundle whose pipeline
lets a text be cut into stretches that tokenize apart (qwen3's does, after a line break
or before a space between words); under one that does not (a Metaspace that prepends to
every text, a SentencePiece model, --split-pattern, honoured special tokens that hold
white space) the document is read whole first.

Exit status: 1 when an input could not be read, else 3 when a document cannot be cut
because the budget cannot hold the frame and one character, else 0.`,
		Example: `  morsel ration testdata/demo/docs --budget 512 --frame testdata/demo/settings/frame.txt
  morsel ration testdata/demo/docs --target harbor-small --targets testdata/demo/settings/morsel.toml --emit plan.jsonl
  morsel ration notes/ --budget 2000 --overlap 100 --format json`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(c *cobra.Command, args []string) error {
			sh.boundMemory()
			f, err := sh.outFormat("ration", render.Table, render.JSON, render.CSV, render.Markdown)
			if err != nil {
				return err
			}
			order, err := sf.order("ration")
			if err != nil {
				return err
			}
			rq, err := sh.request(c, "ration", &tf, &rf)
			if err != nil {
				return err
			}
			room := rq.answer.Budget(rq.window)
			if !c.Flags().Changed("budget") {
				budget = room
			}
			if budget > room {
				return usagef("ration", "--budget %d is more than the %d tokens that the %d-token window leaves once the answer is reserved: give --budget %d or less, or a larger --window", budget, room, rq.window, room)
			}
			if rq.frameTokens >= budget {
				return usagef("ration", "the frame %s takes %d tokens (overhead included), which leaves no room for a document in the %d-token budget: give a budget above %d, or a shorter frame", rq.frame.Label(), rq.frameTokens, budget, rq.frameTokens)
			}
			if overlap < 0 || 2*overlap >= budget {
				return usagef("ration", "--overlap %d: want 0 or more and less than half the %d-token budget", overlap, budget)
			}
			r := &ration.Rationer{Enc: rq.enc, Frame: rq.frame, Budget: budget, Overlap: overlap, Overhead: rq.overhead, Generic: sh.genericSplit(rq.enc)}
			if emit != "" && (sh.partialOut || sh.replay != nil) {
				return usagef("ration", "--emit writes the chunks' text, which a partial report does not keep: give it without --format partial")
			}
			var plan *outfile.File
			var out *bufio.Writer
			var jl *json.Encoder
			report, scratchBeside := sh.stdout, emit
			switch emit {
			case "":
			case "-":
				// The chunks are standard output; the report goes to
				// standard error, as the two cannot share one stream.
				out, report = bufio.NewWriterSize(sh.stdout, 1<<16), sh.stderr
				scratchBeside = filepath.Join(os.TempDir(), "plan.jsonl")
			default:
				file, err := sh.createOutput("ration", "--emit", emit, force, &cf, args)
				if err != nil {
					return err
				}
				// Put in place once the plan is whole; dropped on any error.
				defer file.Abort()
				plan = file
				out = bufio.NewWriterSize(file, 1<<16)
				scratchBeside = plan.Name()
			}
			if out != nil {
				jl = json.NewEncoder(out)
				jl.SetEscapeHTML(false)
			}
			rc := ration.NewCollector(r, rq.target)
			var spills scratchSet
			defer spills.closeAll()
			work := func(d *corpus.Document) (rationDoc, error) {
				if jl == nil || d.Stream == nil {
					doc, err := r.CutDocument(d, jl != nil, nil)
					return rationDoc{Doc: doc}, err
				}
				// A streamed document's chunks wait in a scratch file
				// until the plan reaches it in input order.
				sf, err := spills.open(scratchBeside)
				if err != nil {
					return rationDoc{}, &inputError{fmt.Errorf("--emit %s: %w", emit, err)}
				}
				w := bufio.NewWriterSize(sf, 1<<16)
				enc := json.NewEncoder(w)
				enc.SetEscapeHTML(false)
				doc, err := r.CutDocument(d, true, func(c ration.Chunk) error { return enc.Encode(&c) })
				if err == nil {
					err = w.Flush()
				}
				if err != nil {
					spills.close(sf)
					return rationDoc{}, err
				}
				return rationDoc{Doc: doc, spill: sf}, nil
			}
			skipped, err := walkDocs(sh, &cf, args, work, collector[rationDoc]{
				add: func(_ *corpus.Document, d rationDoc) error {
					if jl != nil {
						for i := range d.Plan {
							if err := jl.Encode(&d.Plan[i]); err != nil {
								return &inputError{fmt.Errorf("--emit %s: %w", emit, err)}
							}
						}
						if d.spill != nil {
							_, err := d.spill.Seek(0, io.SeekStart)
							if err == nil {
								_, err = io.Copy(out, d.spill)
							}
							spills.close(d.spill)
							if err != nil {
								return &inputError{fmt.Errorf("--emit %s: %w", emit, err)}
							}
						}
					}
					return rc.Add(d.Doc)
				},
				failed: ration.FailedDoc,
				tokens: func(d rationDoc) int { return d.Tokens },
				encode: encodeRation,
				decode: decodeRation,
			})
			if err != nil {
				return err
			}
			if out != nil {
				if err := out.Flush(); err != nil {
					return &inputError{fmt.Errorf("--emit %s: %w", emit, err)}
				}
			}
			if plan != nil {
				if err := plan.Commit(); err != nil {
					return &inputError{fmt.Errorf("--emit: %w", err)}
				}
			}
			rep := rc.Finish(skipped)
			rep.Sort(order)
			if err := ration.Write(report, f, rep); err != nil {
				return err
			}
			var check error
			if rep.Totals.NoRoom > 0 {
				check = &checkFailed{fmt.Sprintf("%s document(s) could not be cut within the %s-token budget", render.Num(rep.Totals.NoRoom), render.Num(budget))}
			}
			return sh.finish(rep.Skipped, check)
		},
	}
	addCorpusFlags(c, &cf)
	addSortFlag(c, &sf, ration.Orders)
	addTargetFlags(c, &tf, false)
	addRequestFlags(c, &rf)
	c.Flags().IntVar(&budget, "budget", 0, "tokens a chunk's request may take, frame and overhead included (default: window - reserve)")
	c.Flags().IntVar(&overlap, "overlap", 0, "start each chunk with up to this many tokens of the previous chunk's tail")
	c.Flags().StringVar(&emit, "emit", "", "write the chunks to this file as JSON Lines (never one of the inputs; put in place once whole); - for standard output, the report then on standard error")
	c.Flags().BoolVar(&force, "force", false, "let --emit replace an existing file")
	addShardFlags(sh, c, &cf)
	return c
}

// rationDoc is a document's result: its plan, and the scratch file that
// holds the emitted chunks of a streamed document.
type rationDoc struct {
	ration.Doc
	spill *outfile.ScratchFile
}

// scratchSet is the scratch files of a run not yet copied into the plan.
type scratchSet struct {
	mu    sync.Mutex
	files map[*outfile.ScratchFile]bool
}

func (s *scratchSet) open(target string) (*outfile.ScratchFile, error) {
	f, err := outfile.Scratch(target)
	if err != nil {
		return nil, err
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.files == nil {
		s.files = map[*outfile.ScratchFile]bool{}
	}
	s.files[f] = true
	return f, nil
}

func (s *scratchSet) close(f *outfile.ScratchFile) {
	s.mu.Lock()
	defer s.mu.Unlock()
	delete(s.files, f)
	f.Close()
}

// closeAll closes the files of a walk that stopped before their turn.
func (s *scratchSet) closeAll() {
	s.mu.Lock()
	defer s.mu.Unlock()
	for f := range s.files {
		f.Close()
	}
	s.files = nil
}

// rationRow is a document's result in a partial report: its row, and its
// chunks' request tokens and cuts, which the fill histogram and the cut
// counts take (the chunks' text is not kept); for a streamed document,
// whose chunks are not kept one by one, their tally instead.
type rationRow struct {
	ration.Doc
	Plan  []chunkSum    `json:"plan"`
	Tally *ration.Tally `json:"tally,omitempty"`
}

type chunkSum struct {
	Tokens int    `json:"t"`
	Cut    string `json:"c"`
}

func encodeRation(d rationDoc) ([]byte, error) {
	row := rationRow{Doc: d.Doc, Plan: make([]chunkSum, len(d.Plan)), Tally: d.Tally}
	for i, c := range d.Plan {
		row.Plan[i] = chunkSum{c.Tokens, c.Cut}
	}
	return json.Marshal(row)
}

func decodeRation(_ *corpus.Document, raw []byte) (rationDoc, error) {
	var row rationRow
	if err := json.Unmarshal(raw, &row); err != nil {
		return rationDoc{}, err
	}
	d := row.Doc
	if row.Tally != nil {
		d.Tally = row.Tally
		return rationDoc{Doc: d}, nil
	}
	d.Plan = make([]ration.Chunk, len(row.Plan))
	for i, c := range row.Plan {
		d.Plan[i] = ration.Chunk{Source: d.Source, Record: d.Record, Chunk: i + 1, Tokens: c.Tokens, Cut: c.Cut}
	}
	return rationDoc{Doc: d}, nil
}
