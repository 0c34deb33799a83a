package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"morsel/report/ration"
)

// notesDir makes a folder of two short notes.
func notesDir(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	for name, text := range map[string]string{
		"README.md": "# Tide tables\n\nThe harbour keeps its tide tables here.\n",
		"log.txt":   strings.Repeat("The keeper counts the boats at dawn. ", 40),
	} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// A plan emitted into the folder it plans is never read back: a second
// run gives the same plan instead of a plan of the plan.
func TestEmitIntoWalkedFolder(t *testing.T) {
	dir := notesDir(t)
	plan := filepath.Join(dir, "plan.jsonl")
	args := []string{"ration", dir, "--budget", "100", "--emit", plan, "--hidden", "--format", "json", "--quiet"}
	_, serr, code := run(t, "", args...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	first := readFile(t, plan)
	if !strings.Contains(first, "log.txt") || strings.Contains(first, "plan.jsonl") {
		t.Fatalf("plan does not cover the notes alone:\n%s", first)
	}

	// Again, without --force: refused, the plan untouched.
	_, serr, code = run(t, "", args...)
	if code != exitUsage || !strings.Contains(serr, "--force") {
		t.Fatalf("exit %d, want %d naming --force: %s", code, exitUsage, serr)
	}
	if readFile(t, plan) != first {
		t.Fatal("a refused run changed the plan")
	}

	// With --force: the old plan is left out as the output, and replaced
	// by the same plan.
	out, serr, code := run(t, "", append(args, "--force")...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	var rep ration.Report
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	left := 0
	for _, s := range rep.Skipped {
		if s.Reason == "output" && !s.Failed && filepath.Base(s.Source) == "plan.jsonl" {
			left++
		}
	}
	if left != 1 {
		t.Fatalf("skipped %+v: want plan.jsonl once as the output", rep.Skipped)
	}
	if got := readFile(t, plan); got != first {
		t.Fatalf("plan changed on a rerun:\n%s\nwas\n%s", got, first)
	}
	if es, _ := os.ReadDir(dir); len(es) != 3 {
		t.Fatalf("folder holds %d entries, want the notes and the plan", len(es))
	}
}

// An output that is an input is refused even with --force, whether named,
// reached through a link, or met in a walked folder without --force.
func TestEmitOverInputRefused(t *testing.T) {
	dir := notesDir(t)
	readme := filepath.Join(dir, "README.md")
	want := readFile(t, readme)
	link := filepath.Join(t.TempDir(), "alias.md")
	if err := os.Symlink(readme, link); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"ration", readme, "--emit", readme, "--force"},
		{"ration", readme, "--emit", link, "--force"},
		{"ration", link, "--emit", readme, "--force"},
		{"ration", dir, "--emit", readme},
		{"ration", dir, "--emit", dir},
	} {
		_, serr, code := run(t, "", append(args, "--budget", "100", "--quiet")...)
		if code != exitUsage {
			t.Errorf("%v: exit %d, want %d: %s", args, code, exitUsage, serr)
		}
		if got := readFile(t, readme); got != want {
			t.Fatalf("%v: the input was changed to %q", args, got)
		}
	}
}

// A plan that cannot be written whole is not put in place: exit status 1,
// the old file as it was.
func TestEmitWriteErrorKeepsOld(t *testing.T) {
	if _, err := os.Stat("/dev/full"); err != nil {
		t.Skip("no /dev/full")
	}
	dir := notesDir(t)
	_, serr, code := run(t, "", "ration", dir, "--budget", "100", "--emit", "/dev/full", "--quiet")
	if code != exitInput || !strings.Contains(serr, "no space left") {
		t.Fatalf("exit %d, want %d with the write error: %s", code, exitInput, serr)
	}
}

func TestLearnOutNeedsForce(t *testing.T) {
	out := t.TempDir()
	args := []string{"learn", "../../testdata/demo", "--add", "20", "--out", out, "--format", "json", "--quiet"}
	if _, serr, code := run(t, "", args...); code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	merges := readFile(t, filepath.Join(out, "merges.txt"))
	if _, serr, code := run(t, "", args...); code != exitUsage || !strings.Contains(serr, "--force") {
		t.Fatalf("second run: exit %d, want %d naming --force: %s", code, exitUsage, serr)
	}
	if _, serr, code := run(t, "", append(args, "--force")...); code != exitOK {
		t.Fatalf("--force: exit %d: %s", code, serr)
	}
	if got := readFile(t, filepath.Join(out, "merges.txt")); got != merges {
		t.Fatal("the same learning gave other merges")
	}
	if es, _ := os.ReadDir(out); len(es) != 3 {
		t.Fatalf("--out holds %d entries, want vocab.json, merges.txt and tokenizer.json", len(es))
	}
}

// brokenWriter takes limit bytes, then fails every write with err.
type brokenWriter struct {
	limit int
	err   error
}

func (b *brokenWriter) Write(p []byte) (int, error) {
	if len(p) <= b.limit {
		b.limit -= len(p)
		return len(p), nil
	}
	n := b.limit
	b.limit = 0
	return n, b.err
}

// runBroken runs a command whose standard output fails after limit bytes,
// and returns its exit status and what it printed on standard error.
func runBroken(t *testing.T, limit int, werr error, args ...string) (int, string) {
	t.Helper()
	var errb strings.Builder
	root := newRootIO(strings.NewReader(""), &brokenWriter{limit, werr}, &errb)
	root.SetArgs(args)
	root.SetErr(&errb)
	err := root.Execute()
	f, ferr := os.CreateTemp(t.TempDir(), "stderr")
	if ferr != nil {
		t.Fatal(ferr)
	}
	saved := os.Stderr
	os.Stderr = f
	code := exitStatus(err)
	os.Stderr = saved
	f.Close()
	return code, errb.String() + readFile(t, f.Name())
}

// A report that cannot be written in full is exit status 1, with one line
// naming the error; a pipe whose reader left gives no line.
func TestReportWriteError(t *testing.T) {
	docs := "../../testdata/demo/docs"
	for _, args := range [][]string{
		{"pieces", "The harbour keeps its tide tables here."},
		{"survey", docs},
		{"survey", docs, "--format", "html"},
		{"fit", docs, "--format", "csv"},
		{"ration", docs, "--budget", "300", "--format", "md"},
		{"quote", docs, "--targets", demoTargets},
		{"fragments", docs, "--format", "json"},
		{"vocab"},
	} {
		for _, limit := range []int{0, 100} {
			args := append(args, "--quiet")
			code, serr := runBroken(t, limit, syscall.ENOSPC, args...)
			if code != exitInput || strings.Count(serr, "no space left on device") != 1 || strings.Count(serr, "\n") != 1 {
				t.Errorf("%v after %d bytes: exit %d, want %d with one line naming the error:\n%s", args, limit, code, exitInput, serr)
			}
			code, serr = runBroken(t, limit, syscall.EPIPE, args...)
			if code != exitInput || serr != "" {
				t.Errorf("%v, closed pipe after %d bytes: exit %d, want %d and nothing said:\n%s", args, limit, code, exitInput, serr)
			}
		}
	}
}

// --emit - writes the plan to standard output, the same lines --emit FILE
// writes, and the report to standard error; no file named "-" is made.
func TestEmitToStandardOutput(t *testing.T) {
	dir := notesDir(t)
	plan := filepath.Join(t.TempDir(), "plan.jsonl")
	_, _, code := run(t, "", "ration", dir, "--budget", "100", "--quiet", "--emit", plan)
	if code != 0 {
		t.Fatalf("--emit FILE: exit %d", code)
	}
	t.Chdir(t.TempDir())
	out, serr, code := run(t, "", "ration", dir, "--budget", "100", "--quiet", "--emit", "-")
	if code != 0 || out != readFile(t, plan) {
		t.Fatalf("--emit -: exit %d, standard output %.200q, want the plan %.200q", code, out, readFile(t, plan))
	}
	if !strings.Contains(serr, "Chunk plan") {
		t.Errorf("--emit -: the report is not on standard error: %q", serr)
	}
	if _, err := os.Stat("-"); err == nil {
		t.Error(`--emit - made a file named "-"`)
	}
	if _, serr, code := run(t, "", "learn", dir, "--add", "5", "--out", "-", "--quiet"); code != exitUsage || !strings.Contains(serr, "--out -") {
		t.Errorf("learn --out -: exit %d (%s), want %d", code, serr, exitUsage)
	}
}
