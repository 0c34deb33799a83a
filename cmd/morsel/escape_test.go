package main

import (
	"encoding/base64"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"
)

// Names that would drive a terminal or hide text if printed raw.
const (
	nameTitle = "\x1b]0;pwned\a\x1b[2Jt.txt" // sets the window title, clears the screen
	nameBidi  = "report\u202etxt.md"         // shows as "reportdm.txt"
	nameBad   = "bad\xff\xfe.txt"            // not UTF-8
	nameEmpty = "\x1b[31mempty\r.txt"        // an empty file: listed under "Not counted"
	nameCalc  = "=HYPERLINK(1).txt"          // a formula to a spreadsheet
)

func hostileDir(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	for _, n := range []string{nameTitle, nameBidi, nameBad, nameCalc} {
		if err := os.WriteFile(filepath.Join(dir, n), []byte("The keeper counts the boats.\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.WriteFile(filepath.Join(dir, nameEmpty), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	return dir
}

// rawHostile returns what in out a terminal would act on, or "".
func rawHostile(out string) string {
	if !utf8.ValidString(out) {
		return "invalid UTF-8"
	}
	for _, r := range out {
		switch {
		case r == '\n':
		case r < 0x20 || r == 0x7f || r >= 0x80 && r < 0xa0:
			return "control character " + string(rune(r))
		case r == 0x202e || r == 0x2066 || r == 0x200f:
			return "bidi control"
		}
	}
	return ""
}

func TestTextViewsEscapeNames(t *testing.T) {
	targets, err := filepath.Abs(demoTargets)
	if err != nil {
		t.Fatal(err)
	}
	// Walked from inside, so that the sources start with the names.
	t.Chdir(hostileDir(t))
	dir := "."
	for _, cmd := range [][]string{
		{"survey"}, {"fit"}, {"ration", "--budget", "300"}, {"quote", "--targets", targets}, {"fragments"},
	} {
		for _, f := range []string{"table", "md", "csv"} {
			args := append(append([]string{}, cmd...), dir, "--format", f, "--verbose", "--quiet")
			out, serr, code := run(t, "", args...)
			if code != exitOK {
				t.Fatalf("%v: exit %d: %s", args, code, serr)
			}
			if what := rawHostile(out); what != "" {
				t.Errorf("%v: %s in the output:\n%q", args, what, out)
			}
			if cmd[0] == "fragments" {
				continue // its rows are words, not names
			}
			if !strings.Contains(out, `\x1b]0;pwned\x07\x1b[2Jt.txt`) || !strings.Contains(out, `report\u202etxt.md`) ||
				!strings.Contains(out, `bad\xff\xfe.txt`) {
				t.Errorf("%v: names not shown escaped:\n%s", args, out)
			}
			if f == "csv" && (!strings.Contains(out, "\n'=HYPERLINK") || strings.Contains(out, "\n=HYPERLINK")) {
				t.Errorf("%v: formula cell not neutralised:\n%s", args, out)
			}
			if f != "csv" && cmd[0] == "survey" && !strings.Contains(out, `\x1b[31mempty\x0d.txt`) {
				t.Errorf("%v: the empty file is not listed escaped under Not counted:\n%s", args, out)
			}
		}
	}
}

// JSON keeps names exact: as JSON text when they are UTF-8, and as base64
// bytes beside it when not.
func TestJSONKeepsNames(t *testing.T) {
	dir := hostileDir(t)
	out, serr, code := run(t, "", "survey", dir, "--format", "json", "--quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	var r struct {
		Documents []struct {
			Source      string `json:"source"`
			SourceBytes string `json:"source_bytes"`
		} `json:"documents"`
		Skipped []struct {
			Source string `json:"source"`
		} `json:"skipped"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	got := map[string]bool{}
	for _, d := range r.Documents {
		name := d.Source
		if d.SourceBytes != "" {
			b, err := base64.StdEncoding.DecodeString(d.SourceBytes)
			if err != nil {
				t.Fatal(err)
			}
			name = string(b)
		}
		got[filepath.Base(name)] = true
	}
	for _, n := range []string{nameTitle, nameBidi, nameBad, nameCalc} {
		if !got[n] {
			t.Errorf("%q not recovered from the JSON; got %v", n, got)
		}
	}
	if len(r.Skipped) != 1 || filepath.Base(r.Skipped[0].Source) != nameEmpty {
		t.Errorf("skipped %q, want the empty file's exact name", r.Skipped)
	}
}

// Messages on standard error show names escaped too.
func TestMessagesEscapeNames(t *testing.T) {
	f, err := os.CreateTemp(t.TempDir(), "stderr")
	if err != nil {
		t.Fatal(err)
	}
	saved := os.Stderr
	os.Stderr = f
	code := exitStatus(usagef("fit", "--frame %s: not found", "\x1b[2J\u202eframe.txt"))
	os.Stderr = saved
	f.Close()
	msg := readFile(t, f.Name())
	if code != exitUsage || rawHostile(msg) != "" || !strings.Contains(msg, `\x1b[2J\u202eframe.txt`) {
		t.Fatalf("exit %d, message %q", code, msg)
	}
}
