package main

import (
	"bytes"
	"os"
	"strings"
	"testing"
)

// run executes one morsel command line in-process and returns its standard
// output, standard error and exit status.
func run(t *testing.T, stdin string, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	root := newRootIO(strings.NewReader(stdin), &out, &errb)
	root.SetArgs(args)
	root.SetOut(&errb)
	root.SetErr(&errb)
	err := root.Execute()
	// exitStatus prints to os.Stderr; keep the test output clean.
	saved := os.Stderr
	os.Stderr, _ = os.Open(os.DevNull)
	code := exitStatus(err)
	os.Stderr = saved
	if err != nil {
		errb.WriteString(err.Error())
	}
	return out.String(), errb.String(), code
}
