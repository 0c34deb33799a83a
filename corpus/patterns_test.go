package corpus

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A malformed include or exclude pattern is an error a caller can tell
// apart; an include that matches no file is a failed skip naming it.
func TestIncludePatterns(t *testing.T) {
	for _, opt := range []Options{{Include: []string{"["}}, {Exclude: []string{"notes/[a-"}}, {Include: []string{"*.md", "**/x[/*.txt"}}} {
		err := CheckPatterns(opt)
		if !errors.Is(err, ErrBadPattern) {
			t.Errorf("%+v: %v, want a bad-pattern error", opt, err)
		}
	}
	if err := CheckPatterns(Options{Include: []string{"*.md", "**/notes/*.txt", "[ab].csv"}, Exclude: []string{"vendor"}}); err != nil {
		t.Errorf("good patterns: %v", err)
	}
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"a.txt": "alpha", "notes/b.md": "beta"})
	ins, skips := List([]string{dir}, Options{Include: []string{"*.md", "*.pdf"}})
	if len(ins) != 1 || filepath.Base(ins[0].Path) != "b.md" {
		t.Errorf("inputs %+v", ins)
	}
	if len(skips) != 1 || skips[0].Reason != ReasonNoMatch || skips[0].Source != "*.pdf" || !skips[0].Failed {
		t.Errorf("skips %+v, want one failed no-match for *.pdf", skips)
	}
}

// Standard input is read as CSV as a file named .csv is: a ragged row, or
// a quoted field cut by the end of the sniffed window, does not make it
// text.
func TestStdinCSVLikeAFile(t *testing.T) {
	long := "\"" + strings.Repeat("a long note that spans the sniffing window\n", 250) + "\""
	for _, in := range []string{
		"id,text\n1,first\n2,second,extra\n3,third\n",
		"id,text\n1,first\n2," + long + "\n3,third\n",
	} {
		dir := t.TempDir()
		p := filepath.Join(dir, "rows.csv")
		if err := os.WriteFile(p, []byte(in), 0o644); err != nil {
			t.Fatal(err)
		}
		want := show(t, dir, readFile(t, p, Options{}))
		for i := range want {
			want[i] = "-" + strings.TrimPrefix(want[i], "rows.csv")
		}
		check(t, show(t, "", readBytes(t, []byte(in), Options{})), want)
	}
}

func TestWrittenNeverRead(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []string{"a.txt", "plan.jsonl", ".plan.jsonl.1-2.tmp"} {
		if err := os.WriteFile(filepath.Join(dir, n), []byte("text\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	link := filepath.Join(t.TempDir(), "alias.jsonl")
	if err := os.Link(filepath.Join(dir, "plan.jsonl"), link); err != nil {
		t.Fatal(err)
	}
	var written []fs.FileInfo
	for _, n := range []string{"plan.jsonl", ".plan.jsonl.1-2.tmp"} {
		fi, err := os.Stat(filepath.Join(dir, n))
		if err != nil {
			t.Fatal(err)
		}
		written = append(written, fi)
	}
	// Walked, named through a hard link, and with hidden files walked.
	ins, skips := List([]string{dir, link}, Options{Written: written, Hidden: true})
	if len(ins) != 1 || filepath.Base(ins[0].Path) != "a.txt" {
		t.Fatalf("inputs %v: want a.txt alone", ins)
	}
	if len(skips) != 3 {
		t.Fatalf("skips %v: want the two written files and the link", skips)
	}
	for _, s := range skips {
		if s.Reason != ReasonOutput || s.Failed {
			t.Errorf("skip %v: want a deliberate %q", s, ReasonOutput)
		}
	}
}
