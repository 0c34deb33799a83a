package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"morsel/bpe"
	"morsel/internal/textfile"
	"morsel/report/render"
	"morsel/report/request"
)

// defaultTargets is the targets file looked for in the working folder.
const defaultTargets = "morsel.toml"

// targetFlags are --targets and --target, shared by fit, ration and quote.
type targetFlags struct {
	file  string
	names []string
}

func addTargetFlags(c *cobra.Command, tf *targetFlags, many bool) {
	f := c.Flags()
	f.StringVar(&tf.file, "targets", "", "targets file (TOML) with [target.NAME] tables (default: "+defaultTargets+" in the working folder)")
	defer c.RegisterFlagCompletionFunc("target", completeTargets(tf))
	if many {
		f.StringArrayVar(&tf.names, "target", nil, "price for this target (repeatable; default: every target in the file)")
	} else {
		f.StringArrayVar(&tf.names, "target", nil, "take vocabulary, window, frame and answer size from this target; flags given override them")
	}
}

// load reads the targets file: --targets, else morsel.toml in the working
// folder. required says whether a missing default file is an error.
func (tf *targetFlags) load(cmd string, required bool) (*request.Targets, error) {
	path := tf.file
	if path == "" {
		path = defaultTargets
		if _, err := os.Stat(path); errors.Is(err, fs.ErrNotExist) {
			if !required {
				return nil, nil
			}
			return nil, usagef(cmd, "no targets file: give --targets FILE or put %s in the working folder", defaultTargets)
		}
	}
	data, err := readSetting(cmd, "--targets", path)
	if err != nil {
		return nil, err
	}
	ts, err := request.ParseTargets(path, data)
	if err != nil {
		return nil, usagef(cmd, "%v", err)
	}
	return ts, nil
}

// one returns the target --target names, or nil without --target.
func (tf *targetFlags) one(cmd string) (*request.Target, error) {
	if len(tf.names) == 0 {
		return nil, nil
	}
	if len(tf.names) > 1 {
		return nil, usagef(cmd, "--target: one target at a time here (morsel quote takes several)")
	}
	ts, err := tf.load(cmd, true)
	if err != nil {
		return nil, err
	}
	t, err := ts.Lookup(tf.names[0])
	if err != nil {
		return nil, usagef(cmd, "--target: %v", err)
	}
	return t, nil
}

// requestFlags describe one request: the frame around each document, the
// window, the answer reserved and a fixed overhead.
type requestFlags struct {
	frame    string
	window   int
	reserve  int
	overhead int
}

func addRequestFlags(c *cobra.Command, rf *requestFlags) {
	f := c.Flags()
	f.StringVar(&rf.frame, "frame", "", "prompt frame file wrapping each document, with {{document}} (and {{source}}) placeholders")
	f.IntVar(&rf.window, "window", 0, "context window in tokens (default: the target's, else the vocabulary's)")
	f.IntVar(&rf.reserve, "reserve", 0, "tokens kept for the answer (default: the target's answer_tokens or answer_ratio, else 0)")
	f.IntVar(&rf.overhead, "overhead", 0, "fixed tokens added to every request for framing you know of (message markers, say)")
}

// settings is what a command needs to weigh requests under one setting.
type settings struct {
	enc      *bpe.Encoder
	frame    *request.Frame
	window   int
	answer   request.Answer
	overhead int
	target   string
	// frameTokens is what the frame and overhead take around an empty
	// document.
	frameTokens int
}

// loadFrame reads and parses a frame file: a file that cannot be read is
// an input error (exit status 1), one without {{document}} bad usage.
func (sh *shared) loadFrame(cmd, path string) (*request.Frame, error) {
	if path == "" {
		return nil, nil
	}
	sh.reads(path, "frame")
	data, err := readSetting(cmd, "--frame", path)
	if err != nil {
		return nil, err
	}
	f, err := request.ParseFrame(path, data)
	if err != nil {
		return nil, usagef(cmd, "--frame: %v", err)
	}
	return f, nil
}

// request settles the request settings for cmd: the flags given, else the
// target's fields, else the defaults.
func (sh *shared) request(c *cobra.Command, cmd string, tf *targetFlags, rf *requestFlags) (*settings, error) {
	t, err := tf.one(cmd)
	if err != nil {
		return nil, err
	}
	flags := c.Flags()
	if rf.window < 0 || rf.reserve < 0 || rf.overhead < 0 {
		return nil, usagef(cmd, "--window, --reserve and --overhead take 0 or more tokens")
	}
	rq := &settings{overhead: rf.overhead, answer: request.Answer{Tokens: rf.reserve}}
	framePath := rf.frame
	if t != nil {
		sh.reads(t.File, "targets file")
		rq.target = t.Name
		if t.Vocab != "" && !flags.Changed("vocab") && !flags.Changed("merges") {
			sh.vocab, sh.merges = t.Vocab, t.Merges
		}
		if !flags.Changed("frame") {
			framePath = t.Frame
		}
		if !flags.Changed("reserve") {
			rq.answer = t.Answer
		}
	}
	if rq.enc, err = sh.encoder(); err != nil {
		return nil, err
	}
	rq.overhead += sh.templateTokens(rq.enc.Vocab())
	switch {
	case flags.Changed("window"):
		if rf.window <= 0 {
			return nil, usagef(cmd, "--window %d: a window is a positive number of tokens", rf.window)
		}
		rq.window = rf.window
	case t != nil && t.Window > 0:
		rq.window = t.Window
	default:
		rq.window = rq.enc.Vocab().Window()
	}
	if rq.window <= 0 {
		return nil, usagef(cmd, "the vocabulary does not say its window: give --window N (or a target with window)")
	}
	if rq.answer.Budget(rq.window) <= 0 {
		what := fmt.Sprintf("--reserve %d", rq.answer.Tokens)
		if !flags.Changed("reserve") && t != nil {
			what = fmt.Sprintf("the answer that target %s reserves (%s)", t.Name, t.Where())
		}
		return nil, usagef(cmd, "%s leaves no room for a document in the %d-token window: reserve fewer tokens than the window, or give a larger --window", what, rq.window)
	}
	if t != nil && !flags.Changed("frame") {
		rq.frame, err = sh.targetFrame(cmd, t)
	} else {
		rq.frame, err = sh.loadFrame(cmd, framePath)
	}
	if err != nil {
		return nil, err
	}
	rq.frameTokens, _ = request.InputTokens(rq.enc, rq.frame, "", nil, rq.overhead) // the frame alone: a pattern timeout there shows on every document
	return rq, nil
}

// maxSettingFile is the most bytes a frame, targets file or glossary may
// hold: far more than any real one, far less than a mistake can cost.
const maxSettingFile = 16 << 20

// readSetting reads the settings file that flag names: one that is not a
// regular file or is over maxSettingFile is bad usage (exit status 2), one
// that cannot be read an input error (exit status 1).
func readSetting(cmd, flag, path string) ([]byte, error) {
	data, err := textfile.ReadSmall(path, maxSettingFile)
	switch {
	case errors.Is(err, textfile.ErrNotRegular), errors.Is(err, textfile.ErrTooLarge):
		return nil, usagef(cmd, "%s %v", flag, err)
	case err != nil:
		return nil, &inputError{fmt.Errorf("%s: %w", flag, err)}
	}
	return data, nil
}

// targetFrame reads the frame a target names. The frame is part of the
// targets file's settings, so a frame that cannot be read is bad usage
// (exit status 2) at the target's line.
func (sh *shared) targetFrame(cmd string, t *request.Target) (*request.Frame, error) {
	if t.Frame == "" {
		return nil, nil
	}
	sh.reads(t.Frame, "frame of target "+t.Name)
	data, err := textfile.ReadSmall(t.Frame, maxSettingFile)
	if err != nil {
		why := strings.TrimPrefix(err.Error(), t.Frame+": ")
		if pe, ok := err.(*fs.PathError); ok {
			why = pe.Err.Error()
		}
		return nil, usagef(cmd, "%s: target %s: frame %s: %s (a frame's path is relative to the targets file)", t.Where(), t.Name, t.Frame, why)
	}
	f, err := request.ParseFrame(t.Frame, data)
	if err != nil {
		return nil, usagef(cmd, "%s: target %s: %v", t.Where(), t.Name, err)
	}
	return f, nil
}

// genericSplit reports whether the planner must hold a document whole and
// count every chunk whole: the encoder knows no free cuts (a split pattern
// of the user's, special tokens honoured whose text holds white space, a
// bundle whose pipeline joins text across every place, SentencePiece).
func (sh *shared) genericSplit(enc *bpe.Encoder) bool {
	return sh.splitPattern != "" || !enc.FreeCuts()
}

// templateTokens returns the number of tokens that the vocabulary's
// template adds to every request (a start token, say), and says so: the
// model sees them, so fit, ration and quote count them as overhead.
func (sh *shared) templateTokens(v *bpe.Vocab) int {
	ids := v.Template()
	if len(ids) == 0 {
		return 0
	}
	var names []string
	for _, id := range ids {
		raw, _ := v.Token(id)
		names = append(names, render.Readable(raw))
	}
	sh.note("vocabulary %s adds %d token(s) to every request (%s); each request's input counts them", v.Name(), len(ids), strings.Join(names, " "))
	return len(ids)
}
