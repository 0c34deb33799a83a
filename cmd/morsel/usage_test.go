package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestContradictingFlags checks that settings which cannot work together
// are one usage error (exit status 2) that says what to change, with
// nothing on standard output.
func TestContradictingFlags(t *testing.T) {
	dir := t.TempDir()
	badFrame := filepath.Join(dir, "frame.txt")
	os.WriteFile(badFrame, []byte("Summarize {{sorce}}:\n{{document}}\n"), 0o644)
	targets := filepath.Join(dir, "t.toml")
	os.WriteFile(targets, []byte("# demo\n[target.x]\nwindow = 1024\nframe = \"nope.txt\"\nprice_in = 1\nprice_out = 1\ncurrency = \"EUR\"\n"), 0o644)
	for _, c := range []struct {
		name string
		args []string
		want []string // in standard error
		not  string   // never in standard error
	}{
		{"budget over window", []string{"ration", demoDir, "--budget", "900", "--window", "800"}, []string{"--budget 900", "800"}, ""},
		{"reserve over window", []string{"fit", demoDir, "--window", "800", "--reserve", "900"}, []string{"--reserve 900", "800-token window"}, ""},
		{"reserve equal to window", []string{"ration", demoDir, "--reserve", "1024"}, []string{"--reserve 1024"}, ""},
		{"no workers", []string{"survey", demoDir, "--workers", "0"}, []string{"--workers 0", "1 or more"}, ""},
		{"negative workers", []string{"fit", demoDir, "--workers", "-1"}, []string{"--workers -1"}, ""},
		{"negative rows", []string{"survey", demoDir, "--rows", "-1"}, []string{"--rows -1", "0 or more"}, ""},
		{"negative top", []string{"fragments", demoDir, "--top", "-1"}, []string{"--top -1"}, ""},
		{"zero budget", []string{"ration", demoDir, "--budget", "0"}, []string{"--budget 0"}, "answer reserved"},
		{"frame over budget", []string{"ration", demoDir, "--budget", "100", "--frame", demoFrame}, []string{"frame", "100-token budget"}, ""},
		{"misspelled placeholder", []string{"fit", demoDir, "--frame", badFrame}, []string{"frame.txt:1", "{{sorce}}"}, ""},
		{"frame of a target", []string{"fit", demoDir, "--targets", targets, "--target", "x"}, []string{"t.toml:2", "nope.txt", "no such file"}, "reading frame"},
		{"frame of a quoted target", []string{"quote", demoDir, "--targets", targets}, []string{"t.toml:2", "nope.txt"}, ""},
		{"top-level flag", []string{"--bogus"}, []string{"(see morsel --help)"}, "morsel morsel"},
		{"merges without vocab", []string{"survey", demoDir, "--merges", "x.txt"}, []string{"(see morsel --help)"}, "morsel morsel"},
	} {
		t.Run(c.name, func(t *testing.T) {
			out, serr, code := runMorsel(t, c.args...)
			if code != 2 || out != "" {
				t.Fatalf("exit %d, want 2; stdout %d bytes; stderr %q", code, len(out), serr)
			}
			for _, w := range c.want {
				if !strings.Contains(serr, w) {
					t.Errorf("stderr %q lacks %q", serr, w)
				}
			}
			if c.not != "" && strings.Contains(serr, c.not) {
				t.Errorf("stderr %q holds %q", serr, c.not)
			}
			if n := strings.Count(serr, "\n"); n > 3 {
				t.Errorf("%d lines on stderr, want one error:\n%s", n, serr)
			}
		})
	}
}

func TestVocabNotFound(t *testing.T) {
	_, serr, code := runMorsel(t, "survey", demoDir, "--vocab", "/no/such/path")
	if code != 1 || !strings.Contains(serr, "/no/such/path: not found") || strings.Contains(serr, "merges") {
		t.Errorf("exit %d, stderr %q", code, serr)
	}
}

func TestStdinDash(t *testing.T) {
	// "-" is standard input in every command, pieces included.
	for _, args := range [][]string{{"pieces", "-"}, {"pieces", "--file", "-"}, {"pieces"}} {
		out, serr, code := run(t, "hello world", append(args, "--format", "json")...)
		if code != 0 || !strings.Contains(out, `"tokens": 2`) {
			t.Errorf("%q: exit %d, %s %s", args, code, out, serr)
		}
	}
}

func TestFragmentsCSVHasTerms(t *testing.T) {
	out, _, code := runMorsel(t, "fragments", demoDir, "--terms", demoSettings+"/terms.txt", "--format", "csv")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if !strings.HasSuffix(lines[0], ",kind,pieces_alone,flagged,line") {
		t.Errorf("header %q", lines[0])
	}
	if !strings.Contains(out, ",QX-7731-Rb,") || !strings.Contains(out, ",term,") {
		t.Errorf("no glossary rows in\n%s", out)
	}
}

// A worker count past maxWorkers, zero or negative is a usage error, not a
// crash of the runtime.
func TestWorkersBounded(t *testing.T) {
	for _, n := range []string{"1000000000", "1025", "0", "-3"} {
		_, stderr, code := run(t, "", "survey", "../../testdata/demo/docs", "--workers", n)
		if code != exitUsage || !strings.Contains(stderr, "--workers") {
			t.Errorf("--workers %s: exit %d, stderr %q; want %d naming --workers", n, code, stderr, exitUsage)
		}
	}
	if _, _, code := run(t, "", "survey", "../../testdata/demo/docs", "--workers", "1024"); code != exitOK {
		t.Errorf("--workers 1024: exit %d", code)
	}
}
