package main

import (
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
	if strings.Contains(out, "testdata/demo/") || !strings.Contains(out, "\n README.md ") {
		t.Errorf("sources not shown relative to %s:\n%s", demoDir, out)
	}
	// JSON and CSV keep the source as walked.
	js, _, _ := runMorsel(t, "survey", demoDir, "--format", "csv")
	if !strings.Contains(js, demoDir+"/README.md") {
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
