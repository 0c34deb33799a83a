package main

import (
	"errors"
	"fmt"
	"os"

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
