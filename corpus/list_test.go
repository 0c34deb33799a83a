package corpus

import (
	"os"
	"path/filepath"
	"testing"
)

// A file the run reads as a setting is left out of the walk by file
// identity: under another path, through a symbolic link or named directly,
// and a file of the same name elsewhere is still a document.
func TestListLeavesOutSettings(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"a.txt", "frame.txt", "sub/frame.txt", "terms.txt"} {
		p := filepath.Join(dir, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte("text of "+name+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	link := filepath.Join(dir, "glossary-link.txt")
	if err := os.Symlink(filepath.Join(dir, "terms.txt"), link); err != nil {
		t.Fatal(err)
	}
	opt := Options{Settings: []Setting{
		// Reached by another spelling of the path than the walk's.
		{Path: filepath.Join(dir, "sub", "..", "frame.txt"), What: "frame"},
		{Path: link, What: "glossary"},
		{Path: filepath.Join(dir, "no-such-file"), What: "frame"},
	}}
	ins, skips := List([]string{dir}, opt)
	var got []string
	for _, in := range ins {
		got = append(got, rel(dir, in.Path))
	}
	if want := []string{"a.txt", "sub/frame.txt"}; !equal(got, want) {
		t.Errorf("inputs %q, want %q", got, want)
	}
	var left []string
	for _, s := range skips {
		if s.Reason != ReasonSetting || s.Failed || s.Detail == "" {
			t.Errorf("skip %+v: want a setting, not failed, with a detail", s)
		}
		left = append(left, rel(dir, s.Source))
	}
	// The link and the file it names are one file, a setting under both
	// paths.
	if want := []string{"frame.txt", "glossary-link.txt", "terms.txt"}; !equal(left, want) {
		t.Errorf("left out %q, want %q", left, want)
	}

	// Named as an argument, a setting is left out too.
	ins, skips = List([]string{filepath.Join(dir, "frame.txt")}, opt)
	if len(ins) != 0 || len(skips) != 1 || skips[0].Reason != ReasonSetting {
		t.Errorf("named setting: inputs %v, skips %v", ins, skips)
	}
	// Without settings every file counts (the link is a duplicate).
	if ins, _ := List([]string{dir}, Options{}); len(ins) != 4 {
		t.Errorf("no settings: %d inputs, want 4", len(ins))
	}
}

func equal(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
