package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/report/fit"
)

const (
	demoDir     = "../../testdata/demo/docs"
	demoTargets = "../../testdata/demo/settings/morsel.toml"
	demoFrame   = "../../testdata/demo/settings/frame.txt"
	// demoSettings holds the demo's targets, frame and glossary, apart
	// from its documents.
	demoSettings = "../../testdata/demo/settings"
)

// runMorsel runs the command line in-process and returns its standard
// output, standard error and exit status.
func runMorsel(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	dir := t.TempDir()
	outF, err := os.Create(filepath.Join(dir, "stdout"))
	if err != nil {
		t.Fatal(err)
	}
	errF, err := os.Create(filepath.Join(dir, "stderr"))
	if err != nil {
		t.Fatal(err)
	}
	saveOut, saveErr := os.Stdout, os.Stderr
	os.Stdout, os.Stderr = outF, errF
	root := newRoot()
	root.SetArgs(append([]string{}, args...))
	code := exitStatus(root.Execute())
	os.Stdout, os.Stderr = saveOut, saveErr
	outF.Close()
	errF.Close()
	out, _ := os.ReadFile(outF.Name())
	serr, _ := os.ReadFile(errF.Name())
	return string(out), string(serr), code
}

func TestFitExitAndMargins(t *testing.T) {
	out, serr, code := runMorsel(t, "fit", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--format", "json", "--quiet")
	if code != exitCheck {
		t.Fatalf("exit %d, want 3 (the demo has documents over 1,024 tokens); stderr %s", code, serr)
	}
	var r fit.Report
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if r.Window != 1024 || r.Totals.Overflow == 0 || r.Totals.Fit+r.Totals.Overflow != r.Totals.Documents || r.Totals.Documents != len(r.Documents) {
		t.Fatalf("totals %+v window %d", r.Totals, r.Window)
	}
	seenFit := false
	for _, d := range r.Documents {
		if d.Margin != d.Window-d.InputTokens-d.Reserve || d.Fits != (d.Margin >= 0) || d.Reserve != 200 {
			t.Fatalf("%+v: margin is not window - input - reserve", d)
		}
		if d.Fits {
			seenFit = true
		} else if seenFit {
			t.Fatalf("%s overflows but is listed after a document that fits", d.Source)
		}
	}
	// The input is the assembled request, counted whole.
	enc, _ := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	frame, err := (&shared{}).loadFrame("test", demoFrame)
	if err != nil {
		t.Fatal(err)
	}
	memo := filepath.Join(demoDir, "memo-ja-kirisaki-shipping.txt")
	text, _ := os.ReadFile(memo)
	want := enc.Count(frame.Assemble(memo, text))
	seen := false
	for _, d := range r.Documents {
		if d.Source == memo {
			seen = true
			if d.InputTokens != want {
				t.Fatalf("%s input %d, want %d", memo, d.InputTokens, want)
			}
		}
	}
	if !seen {
		t.Fatalf("%s not in the report", memo)
	}

	for _, tc := range []struct {
		name string
		args []string
		code int
		err  string
	}{
		{"all fit", []string{"fit", filepath.Join(demoSettings, "terms.txt"), "--window", "100000", "--quiet"}, exitOK, ""},
		{"flag beats target", []string{"fit", filepath.Join(demoSettings, "terms.txt"), "--targets", demoTargets, "--target", "harbor-small", "--reserve", "5000", "--quiet"}, exitUsage, "--reserve 5000 leaves no room"},
		{"unreadable input wins", []string{"fit", filepath.Join(demoSettings, "terms.txt"), filepath.Join(demoDir, "no-such-file.txt"), "--window", "10", "--quiet"}, exitInput, ""},
		{"frame without placeholder", []string{"fit", demoDir, "--frame", filepath.Join(demoSettings, "terms.txt")}, exitUsage, "has no {{document}} placeholder"},
		{"unknown target", []string{"fit", demoDir, "--targets", demoTargets, "--target", "harbor-huge"}, exitUsage, `no target "harbor-huge"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, serr, code := runMorsel(t, tc.args...)
			if code != tc.code || !strings.Contains(serr, tc.err) {
				t.Fatalf("exit %d, want %d; stderr %q should hold %q", code, tc.code, serr, tc.err)
			}
		})
	}
}

func TestTargetsFileErrorNamesLine(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "morsel.toml")
	os.WriteFile(bad, []byte("[target.a]\nwindow = 512\n\nprice_in = \"lots\"\n"), 0o644)
	_, serr, code := runMorsel(t, "fit", demoDir, "--targets", bad, "--target", "a")
	if code != exitUsage || !strings.Contains(serr, bad+`:4: target "a": price_in`) {
		t.Fatalf("exit %d, stderr %q", code, serr)
	}
}
