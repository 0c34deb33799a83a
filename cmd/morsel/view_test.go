package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"morsel/internal/screen"
)

// checkLines checks that none ends in a space and,
// when width is above 0, that none is wider than width.
func checkLines(t *testing.T, out string, width int) {
	t.Helper()
	for i, l := range strings.Split(strings.TrimSuffix(out, "\n"), "\n") {
		if strings.HasSuffix(l, " ") {
			t.Errorf("line %d ends in a space: %q", i+1, l)
		}
		if width > 0 && screen.Width(l) > width {
			t.Errorf("line %d is %d columns, over %d: %q", i+1, screen.Width(l), width, l)
		}
	}
}

func TestTablesFitTheWidth(t *testing.T) {
	for _, cmd := range [][]string{
		{"survey", demoDir},
		{"fit", demoDir, "--targets", demoTargets, "--target", "harbor-small"},
		{"ration", demoDir, "--budget", "512"},
	} {
		for _, width := range []int{80, 120} {
			out, serr, code := runMorsel(t, append(cmd, "--width", strconv.Itoa(width))...)
			if code != 0 && code != 3 {
				t.Fatalf("%q: exit %d: %s", cmd, code, serr)
			}
			checkLines(t, out, width)
		}
		// Piped, and with --wide, rows keep their cells whole.
		piped, _, _ := runMorsel(t, cmd...)
		checkLines(t, piped, 0)
		wide, _, _ := runMorsel(t, append(cmd, "--width", "80", "--wide")...)
		if wide != piped {
			t.Errorf("%q: --wide differs from the piped output", cmd)
		}
	}
}

func TestSourcesRelativeToThePathGiven(t *testing.T) {
	out, _, _ := runMorsel(t, "survey", demoDir, "--rows", "0")
	if strings.Contains(out, "testdata/demo/docs/") || !strings.Contains(out, "\n memo-ja-kirisaki-shipping.txt ") {
		t.Errorf("sources not shown relative to %s:\n%s", demoDir, out)
	}
	// JSON and CSV keep the source as walked.
	js, _, _ := runMorsel(t, "survey", demoDir, "--format", "csv")
	if !strings.Contains(js, demoDir+"/memo-ja-kirisaki-shipping.txt") {
		t.Errorf("CSV lost the walked source")
	}
}

func TestVersion(t *testing.T) {
	// run sends cobra's own output (the version) with standard error.
	_, out, code := run(t, "", "--version")
	if code != 0 || !strings.HasPrefix(out, "morsel ") || !strings.Contains(out, "(commit ") || !strings.Contains(out, "built with go1.") {
		t.Errorf("exit %d: %q", code, out)
	}
}

func TestTopLevelUsageError(t *testing.T) {
	_, serr, code := runMorsel(t, "--bogus")
	if code != 2 || !strings.Contains(serr, "(see morsel --help)") || strings.Contains(serr, "morsel morsel") {
		t.Errorf("exit %d: %q", code, serr)
	}
}
func TestQuoteNarrowShape(t *testing.T) {
	out, _, _ := runMorsel(t, "quote", demoDir, "--targets", demoTargets, "--width", "100")
	if !strings.Contains(out, "one row a target") || strings.Contains(out, "harbor-small in") {
		t.Errorf("at 100 columns the per-document quote keeps a column group per target:\n%s", out)
	}
	wide, _, _ := runMorsel(t, "quote", demoDir, "--targets", demoTargets, "--wide")
	if !strings.Contains(wide, "harbor-small in") || strings.Contains(wide, "one row a target") {
		t.Errorf("--wide lost the column groups:\n%s", wide)
	}
}

func TestLongWordsCut(t *testing.T) {
	dir := t.TempDir()
	long := strings.Repeat("7", 100002)
	os.WriteFile(filepath.Join(dir, "digits.txt"), []byte("x "+long+" y "+long+"\n"), 0o644)
	for _, f := range []string{"table", "csv", "md", "html"} {
		out, serr, code := runMorsel(t, "fragments", dir, "--format", f)
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", f, code, serr)
		}
		if strings.Contains(out, long) || !strings.Contains(out, "(100,002 characters)") {
			t.Errorf("%s: the long word is not cut with its length (%d bytes of output)", f, len(out))
		}
		if len(out) > 100000 {
			t.Errorf("%s: %d bytes of output for one word", f, len(out))
		}
	}
	out, _, _ := runMorsel(t, "fragments", dir, "--format", "json")
	var got struct {
		Words []struct{ Word string } `json:"words"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil || len(got.Words) == 0 || got.Words[0].Word != long {
		t.Errorf("JSON does not keep the whole word (%v)", err)
	}
}

func TestNotCountedByReason(t *testing.T) {
	dir := t.TempDir()
	for i := 0; i < 30; i++ {
		os.WriteFile(filepath.Join(dir, fmt.Sprintf("empty%03d.txt", i)), nil, 0o644)
	}
	os.WriteFile(filepath.Join(dir, "bad.jsonl"), []byte("{\"text\": \"fine\"}\n{not json\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "ok.txt"), []byte("counted"), 0o644)
	out, _, code := runMorsel(t, "survey", dir)
	if code != 1 {
		t.Errorf("exit %d, want 1", code)
	}
	if strings.Contains(out, "empty005.txt") || !strings.Contains(out, "bad.jsonl:2") {
		t.Errorf("the table lists a harmless skip, or misses the failure:\n%s", out)
	}
	if !strings.Contains(out, "empty ") || !strings.Contains(out, "30") {
		t.Errorf("no count for the empty files:\n%s", out)
	}
	verbose, _, _ := runMorsel(t, "survey", dir, "--verbose")
	if !strings.Contains(verbose, "empty005.txt") {
		t.Errorf("--verbose does not list every skip:\n%s", verbose)
	}
	js, _, _ := runMorsel(t, "survey", dir, "--format", "json")
	if strings.Count(js, `"reason": "empty"`) != 30 {
		t.Errorf("JSON does not list every skip")
	}
}

func TestIdenticalDocuments(t *testing.T) {
	dir := t.TempDir()
	text := []byte(strings.Repeat("The same changelog entry, word for word. ", 50))
	for _, n := range []string{"a.txt", "b.txt", "c.txt"} {
		os.WriteFile(filepath.Join(dir, n), text, 0o644)
	}
	os.WriteFile(filepath.Join(dir, "other.txt"), []byte("something else"), 0o644)
	out, _, code := runMorsel(t, "survey", dir)
	if code != 0 || !strings.Contains(out, "Identical documents (1 groups; 2 repeats") || !strings.Contains(out, " b.txt ") {
		t.Errorf("exit %d; no group of identical documents:\n%s", code, out)
	}
	js, _, _ := runMorsel(t, "survey", dir, "--once", "--format", "json")
	var got struct {
		Totals  struct{ Documents int }   `json:"totals"`
		Skipped []struct{ Reason string } `json:"skipped"`
	}
	json.Unmarshal([]byte(js), &got)
	if got.Totals.Documents != 2 || len(got.Skipped) != 2 || got.Skipped[0].Reason != ReasonRepeat {
		t.Errorf("--once: %+v", got)
	}
}

func TestIncludePatterns(t *testing.T) {
	_, serr, code := runMorsel(t, "survey", demoDir, "--include", "[")
	if code != 2 || !strings.Contains(serr, `include pattern "["`) {
		t.Errorf("a bad pattern: exit %d, %q", code, serr)
	}
	out, _, code := runMorsel(t, "survey", demoDir, "--include", "*.nomatch")
	if code != 1 || !strings.Contains(out, "no-match") {
		t.Errorf("a pattern that matches nothing: exit %d\n%s", code, out)
	}
}

func TestNoTextFieldIsOneDocument(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "x.jsonl"), []byte("{\"a\":1}\n{\"a\":2}\n"), 0o644)
	out, serr, code := runMorsel(t, "survey", dir, "--format", "json")
	if code != 0 || !strings.Contains(serr, "x.jsonl: read as one text document") || !strings.Contains(out, `"documents": 1`) {
		t.Errorf("exit %d, stderr %q\n%s", code, serr, out)
	}
	if _, _, code := runMorsel(t, "survey", dir, "--field", "text"); code != 1 {
		t.Errorf("--field text asked for: exit %d, want 1", code)
	}
}

// TestFitRows checks that fit's table lists --rows documents, the
// overflowing first, says how many more there are, and that CSV lists all.
func TestFitRows(t *testing.T) {
	dir := t.TempDir()
	for i := range 6 {
		words := 10
		if i == 4 {
			words = 2000 // the one that overflows
		}
		os.WriteFile(filepath.Join(dir, fmt.Sprintf("d%d.txt", i)), []byte(strings.Repeat("harbor ", words)), 0o644)
	}
	out, _, code := runMorsel(t, "fit", dir, "--rows", "2")
	if code != 3 || !strings.Contains(out, "d4.txt") || !strings.Contains(out, "d0.txt") || strings.Contains(out, "d1.txt") ||
		!strings.Contains(out, "4 more document(s) not listed") {
		t.Errorf("exit %d; want d4.txt (over) then d0.txt, and 4 more:\n%s", code, out)
	}
	all, _, _ := runMorsel(t, "fit", dir, "--rows", "0")
	if strings.Contains(all, "not listed") || !strings.Contains(all, "d5.txt") {
		t.Errorf("--rows 0 does not list all:\n%s", all)
	}
	csv, _, _ := runMorsel(t, "fit", dir, "--rows", "1", "--format", "csv")
	if n := strings.Count(csv, "\n"); n != 7 {
		t.Errorf("csv has %d lines, want a header and 6 rows:\n%s", n, csv)
	}
}
