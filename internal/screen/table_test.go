package screen

import (
	"strings"
	"testing"
)

func demoTable() *Table {
	return &Table{
		Header: []string{"document", "format", "tokens"},
		Rows: [][]string{
			{"testdata/demo/incident-2024-11-vennskarth-buoy-loss.md", "markdown", "4,765"},
			{"testdata/demo/memo-ja-kirisaki-shipping.txt", "text", "830"},
			{"a", "", "1"},
		},
		Right: []bool{false, false, true},
	}
}

func TestTableNatural(t *testing.T) {
	var b strings.Builder
	if err := demoTable().Write(&b, 0); err != nil {
		t.Fatal(err)
	}
	want := ` document                                                format    tokens
─────────────────────────────────────────────────────────────────────────
 testdata/demo/incident-2024-11-vennskarth-buoy-loss.md  markdown   4,765
 testdata/demo/memo-ja-kirisaki-shipping.txt             text         830
 a                                                                      1
`
	if b.String() != want {
		t.Errorf("got\n%s\nwant\n%s", b.String(), want)
	}
}

func TestTableFits(t *testing.T) {
	for _, width := range []int{40, 50, 60, 80} {
		var b strings.Builder
		demoTable().Write(&b, width)
		for _, line := range strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n") {
			if Width(line) > width {
				t.Errorf("width %d: line %q is %d columns", width, line, Width(line))
			}
			if strings.HasSuffix(line, " ") {
				t.Errorf("width %d: trailing space in %q", width, line)
			}
		}
		// Numbers are never cut.
		if !strings.Contains(b.String(), "4,765") {
			t.Errorf("width %d: a number was cut:\n%s", width, b.String())
		}
	}
	var b strings.Builder
	demoTable().Write(&b, 40)
	if !strings.Contains(b.String(), "testdata/d…oy-loss.md") {
		t.Errorf("width 40: the long name is not cut in the middle:\n%s", b.String())
	}
}

func TestTableTooNarrow(t *testing.T) {
	// Cut columns stop at the larger of their header and minCut; the
	// table then runs past the width rather than lose more.
	w := demoTable().Widths(10)
	if w[0] != minCut || w[1] != len("markdown") || w[2] != len("tokens") {
		t.Errorf("Widths(10) = %v", w)
	}
}

func TestTableKeep(t *testing.T) {
	tb := &Table{Header: []string{"name", "bar"}, Rows: [][]string{{strings.Repeat("n", 30), strings.Repeat("▪", 30)}}, Keep: []bool{false, true}}
	var b strings.Builder
	tb.Write(&b, 50)
	if !strings.Contains(b.String(), strings.Repeat("▪", 30)) {
		t.Errorf("a kept column was cut:\n%s", b.String())
	}
}

func TestWrap(t *testing.T) {
	got := Wrap("... and 12 more documents (--rows 0 lists all; --format csv or json gives every row)", 40)
	want := []string{"... and 12 more documents (--rows 0", "lists all; --format csv or json gives", "every row)"}
	if strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("Wrap = %q", got)
	}
	if got := Wrap("short", 0); len(got) != 1 || got[0] != "short" {
		t.Errorf("Wrap(width 0) = %q", got)
	}
}

func TestTableHeaderWraps(t *testing.T) {
	tb := &Table{Header: []string{"term", "split after a space", "occurrences"}, Rows: [][]string{{"QX-7731-Rb", "␣Q X - 77 31 - R b", "71"}}, Right: []bool{false, false, true}}
	var b strings.Builder
	// The narrowest it can be: the term whole (10, under minCut), the
	// split at the longest word of its header ("after", 5) or minCut.
	tb.Write(&b, 38)
	lines := strings.Split(b.String(), "\n")
	for _, l := range lines {
		if Width(l) > 38 {
			t.Errorf("line %q is over 38 columns:\n%s", l, b.String())
		}
	}
	if !strings.Contains(b.String(), "QX-7731-Rb") || !strings.Contains(b.String(), "71") {
		t.Errorf("cells lost:\n%s", b.String())
	}
	if len(lines) < 4 || !strings.Contains(lines[0], "split") {
		t.Errorf("the header did not wrap onto two lines:\n%s", b.String())
	}
}
