package corpus

import (
	"errors"
	"path/filepath"
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
