package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"syscall"

	"github.com/spf13/cobra"

	"morsel/internal/outfile"
)

// createOutput starts writing the file that flag (such as --emit) names,
// through outfile: it refuses, as a usage error, a file that is one of the
// inputs or that exists without --force. The walk is kept off the file
// from then on.
func (sh *shared) createOutput(cmd, flag, path string, force bool, cf *corpusFlags, inputs []string) (*outfile.File, error) {
	opt := outfile.Options{Force: force, Inputs: inputs}
	if f, ok := sh.stdin.(*os.File); ok {
		opt.Stdin = f
	}
	o, err := outfile.Create(path, opt)
	switch {
	case errors.Is(err, outfile.ErrIsInput), errors.Is(err, outfile.ErrExists), errors.Is(err, outfile.ErrNotFile):
		return nil, usagef(cmd, "%s %v", flag, err)
	case err != nil:
		return nil, &inputError{fmt.Errorf("%s: %w", flag, err)}
	}
	if cf != nil {
		cf.written = append(cf.written, o.Written()...)
	}
	return o, nil
}

// reportWriter passes the report to standard output and keeps the first
// write error: later writes are dropped, and the command's exit status
// reports the error whatever the renderer did with it.
type reportWriter struct {
	w   io.Writer
	err error
}

func (r *reportWriter) Write(p []byte) (int, error) {
	if r.err != nil {
		return 0, r.err
	}
	n, err := r.w.Write(p)
	if err != nil {
		r.err = err
	}
	return n, err
}

// outputError is a report that could not be written to standard output:
// exit status 1. A reader that went away (a closed pipe) is not worth a
// message; a full disk is.
type outputError struct{ err error }

func (e *outputError) Error() string { return "writing the report: " + e.err.Error() }
func (e *outputError) Unwrap() error { return e.err }

// quiet reports whether the error needs no message: the reader of a pipe
// closed it, as `| head` does.
func (e *outputError) quiet() bool { return errors.Is(e.err, syscall.EPIPE) }

// reportWriteErrors makes every command of root return an outputError
// when its report could not be written in full, whatever else it returns.
func reportWriteErrors(root *cobra.Command, sh *shared) {
	for _, c := range root.Commands() {
		if c.RunE == nil {
			continue
		}
		run := c.RunE
		c.RunE = func(c *cobra.Command, args []string) error {
			err := run(c, args)
			var done errPartial
			if errors.As(err, &done) {
				err = done.err
			}
			if sh.report != nil && sh.report.err != nil {
				return &outputError{sh.report.err}
			}
			return err
		}
	}
}
