package screen

import "testing"

func TestBaseAndRel(t *testing.T) {
	dirs := map[string]bool{"testdata/demo": true, "/usr/share/doc": true, "a/b": true, "a/c": true, ".": true, "/usr/local/go/src": true}
	old := isDir
	isDir = func(p string) bool { return dirs[p] }
	defer func() { isDir = old }()
	for _, c := range []struct {
		args   []string
		base   string
		source string
		shown  string
	}{
		{[]string{"testdata/demo"}, "testdata/demo", "testdata/demo/README.md", "README.md"},
		{[]string{"testdata/demo/"}, "testdata/demo", "testdata/demo/sub/x.md", "sub/x.md"},
		{[]string{"./testdata/demo"}, "testdata/demo", "testdata/demo/a.txt", "a.txt"},
		{[]string{"/usr/share/doc"}, "/usr/share/doc", "/usr/share/doc/adduser/copyright", "adduser/copyright"},
		{[]string{"."}, "", "README.md", "README.md"},
		{[]string{"-"}, "", "-", "-"},
		{[]string{"a/b", "a/c"}, "a", "a/b/x.txt", "b/x.txt"},
		{[]string{"a/b/file.txt"}, "a/b", "a/b/file.txt", "file.txt"},
		{[]string{"docs/*.md"}, "docs", "docs/x.md", "x.md"},
		{[]string{"docs/**/*.md"}, "docs", "docs/a/x.md", "a/x.md"},
		{[]string{"*.md"}, "", "x.md", "x.md"},
		{[]string{"/usr/share/doc", "/usr/local/go/src"}, "/usr", "/usr/share/doc/x", "share/doc/x"},
		{[]string{"testdata/demo", "/usr/share/doc"}, "", "/usr/share/doc/x", "/usr/share/doc/x"},
		{[]string{"testdata/demo", "-"}, "testdata/demo", "-", "-"},
		// A source outside the base stays whole.
		{[]string{"testdata/demo"}, "testdata/demo", "testdata/demolition.txt", "testdata/demolition.txt"},
	} {
		base := Base(c.args)
		if base != c.base {
			t.Errorf("Base(%q) = %q, want %q", c.args, base, c.base)
		}
		if got := Rel(c.source, base); got != c.shown {
			t.Errorf("Rel(%q, %q) = %q, want %q", c.source, base, got, c.shown)
		}
	}
}
