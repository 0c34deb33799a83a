// Command morsel weighs document collections in a model's own BPE tokens
// before a batch job: exact counts, what overflows the context window, how
// to split it, what it costs, and which words the vocabulary shatters.
package main

import (
	"errors"
	"fmt"
	"math"
	"os"
	"os/signal"
	"runtime/debug"
	"strings"
	"syscall"

	"morsel/internal/outfile"
	"morsel/report/render"
)

// Exit statuses, as the README's "Exit status" table gives them.
const (
	exitOK    = 0
	exitInput = 1 // an input or vocabulary could not be read, or any other failure
	exitUsage = 2 // bad usage
	exitCheck = 3 // the check the command exists for failed
)

// memoryLimit is the soft heap limit that the commands whose memory does
// not grow with the corpus (survey, fit, ration, quote) run under, unless
// GOMEMLIMIT says otherwise: the garbage collector works harder as the heap
// nears it, which keeps a long walk's peak memory flat. fragments keeps
// every distinct word, so its heap grows with the corpus; under a limit
// below that heap the collector would run without pause.
const memoryLimit = 100 << 20

// boundMemory sets the soft heap limit for a streaming command. A merge
// holds every document's result, so its heap grows with the corpus: it
// runs without the limit, under which the collector would never pause.
func (sh *shared) boundMemory() {
	if sh.replay != nil {
		if os.Getenv("GOMEMLIMIT") == "" {
			debug.SetMemoryLimit(math.MaxInt64)
		}
		return
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(memoryLimit)
	}
}

// boundWords sets the soft heap limit of fragments under a --memory bound
// on its word tables: a quarter more, and a constant for the rest (the
// encoder, the batches, the summary that takes over past the bound),
// makes the collector work harder as the heap nears the bound instead of
// letting it grow by half again (growingGC). A merge's tables take every
// shard's words whatever the bound, so it runs without the limit.
func (sh *shared) boundWords(bound int64) {
	if sh.replay != nil || bound <= 0 || os.Getenv("GOMEMLIMIT") != "" {
		return
	}
	debug.SetMemoryLimit(bound + bound/4 + 128<<20)
}

// growingGC is the garbage collector's GOGC for fragments, whose heap is
// mostly word tables without pointers, cheap to mark: collecting at half
// the live heap's growth instead of all of it lowers the peak memory (215
// to 180 MB on the 105 MB code corpus) at no cost in time that the
// benchmarks could measure.
const growingGC = 50

// paceGrowingHeap sets growingGC, unless GOGC says otherwise.
func paceGrowingHeap() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(growingGC)
	}
}

func main() {
	if stdoutClosed() {
		fmt.Fprintln(os.Stderr, "morsel: standard output is closed (it is /dev/null opened for reading and writing, which a closed one becomes), so the report would go nowhere: redirect it to a file, or to /dev/null (>/dev/null) to throw it away")
		os.Exit(exitInput)
	}
	cleanUpOnSignal()
	err := newRoot().Execute()
	os.Exit(exitStatus(err))
}

// cleanUpOnSignal makes an interrupt or a termination remove the
// temporary files of outputs not yet put in place, then exit as the
// signal would (128 + its number), so that a stopped run leaves every
// older output as it was and no half-written file beside it.
func cleanUpOnSignal() {
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, syscall.SIGINT, syscall.SIGTERM, syscall.SIGHUP)
	// A closed pipe on standard output is a write error (EPIPE) that the
	// command reports with its exit status, not a signal that kills it.
	signal.Ignore(syscall.SIGPIPE)
	go func() {
		sig := <-ch
		outfile.RemovePending()
		os.Exit(128 + int(sig.(syscall.Signal)))
	}()
}

// exitStatus maps a command's error to the process exit status, printing
// the error on standard error.
func exitStatus(err error) int {
	if err == nil {
		return exitOK
	}
	var ue *usageError
	var ce *checkFailed
	var ie *inputError
	var oe *outputError
	switch {
	case errors.As(err, &oe):
		if !oe.quiet() {
			say("%v", oe)
		}
		return exitInput
	case errors.As(err, &ce):
		// The report already said what failed; say it once more briefly.
		say("%s", ce.msg)
		return exitCheck
	case errors.As(err, &ie):
		if ie.err != nil {
			say("%v", ie.err)
		}
		return exitInput
	case errors.As(err, &ue):
		say("%v\n(see %s --help)", ue.err, helpPath(ue.cmd))
		return exitUsage
	}
	if strings.HasPrefix(err.Error(), "unknown command") {
		say("%v\n(see morsel --help)", err)
		return exitUsage
	}
	say("%v", err)
	return exitInput
}

// say prints a message on standard error, with what a terminal would act
// on (escape sequences, bidi controls, invalid bytes in a file name)
// escaped.
func say(format string, args ...any) {
	fmt.Fprintln(os.Stderr, "morsel: "+render.CleanMessage(fmt.Sprintf(format, args...)))
}

// helpPath returns the command line whose --help explains cmd.
func helpPath(cmd string) string {
	if cmd == "" || cmd == "morsel" {
		return "morsel"
	}
	return "morsel " + cmd
}

// usageError is a mistake in the command line: exit status 2.
type usageError struct {
	cmd string
	err error
}

func (e *usageError) Error() string { return e.err.Error() }
func (e *usageError) Unwrap() error { return e.err }

func usagef(cmd, format string, args ...any) error {
	return &usageError{cmd: cmd, err: fmt.Errorf(format, args...)}
}

// inputError is an input or vocabulary that could not be read: exit status
// 1. err is nil when the report has already named what was skipped.
type inputError struct{ err error }

func (e *inputError) Error() string {
	if e.err == nil {
		return "some inputs could not be read"
	}
	return e.err.Error()
}
func (e *inputError) Unwrap() error { return e.err }

// checkFailed is the command's own check failing (an overflow in fit):
// exit status 3.
type checkFailed struct{ msg string }

func (e *checkFailed) Error() string { return e.msg }
