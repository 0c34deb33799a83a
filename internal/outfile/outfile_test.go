package outfile

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

func write(t *testing.T, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o640); err != nil {
		t.Fatal(err)
	}
}

func read(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// entries returns the names in dir, to show that no temporary file stays.
func entries(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range es {
		names = append(names, e.Name())
	}
	return names
}

func TestCreateNewCommits(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "plan.jsonl")
	o, err := Create(p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(p); !errors.Is(err, os.ErrNotExist) {
		t.Fatalf("target exists before Commit: %v", err)
	}
	o.Write([]byte("new\n"))
	if err := o.Commit(); err != nil {
		t.Fatal(err)
	}
	if got := read(t, p); got != "new\n" {
		t.Fatalf("got %q", got)
	}
	if got := entries(t, dir); len(got) != 1 {
		t.Fatalf("left in the folder: %v", got)
	}
	// The temporary file became the target: Written names it by inode.
	fi, _ := os.Stat(p)
	if w := o.Written(); len(w) != 1 || !os.SameFile(w[0], fi) {
		t.Fatalf("Written %v does not name the committed file", w)
	}
}

func TestExistingNeedsForce(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "plan.jsonl")
	write(t, p, "old\n")
	if _, err := Create(p, Options{}); !errors.Is(err, ErrExists) {
		t.Fatalf("want ErrExists, got %v", err)
	}
	o, err := Create(p, Options{Force: true})
	if err != nil {
		t.Fatal(err)
	}
	o.Write([]byte("new\n"))
	if got := read(t, p); got != "old\n" {
		t.Fatalf("old file changed before Commit: %q", got)
	}
	if err := o.Commit(); err != nil {
		t.Fatal(err)
	}
	if got := read(t, p); got != "new\n" {
		t.Fatalf("got %q", got)
	}
	fi, _ := os.Stat(p)
	if fi.Mode().Perm() != 0o640 {
		t.Fatalf("mode %v, want the old file's 0640", fi.Mode().Perm())
	}
}

func TestAbortKeepsOld(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "plan.jsonl")
	write(t, p, "old\n")
	o, err := Create(p, Options{Force: true})
	if err != nil {
		t.Fatal(err)
	}
	o.Write([]byte("half"))
	o.Abort()
	o.Commit() // after Abort, a no-op
	if got := read(t, p); got != "old\n" {
		t.Fatalf("got %q", got)
	}
	if got := entries(t, dir); len(got) != 1 {
		t.Fatalf("left in the folder: %v", got)
	}
}

func TestRemovePending(t *testing.T) {
	dir := t.TempDir()
	o, err := Create(filepath.Join(dir, "plan.jsonl"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	o.Write([]byte("half"))
	RemovePending()
	if got := entries(t, dir); len(got) != 0 {
		t.Fatalf("left in the folder: %v", got)
	}
	o.Abort()
}

func TestInputRefusedEvenWithForce(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "notes.md")
	write(t, in, "keep me\n")
	hard := filepath.Join(dir, "hard.md")
	if err := os.Link(in, hard); err != nil {
		t.Fatal(err)
	}
	soft := filepath.Join(dir, "soft.md")
	if err := os.Symlink("notes.md", soft); err != nil {
		t.Fatal(err)
	}
	stdin, err := os.Open(in)
	if err != nil {
		t.Fatal(err)
	}
	defer stdin.Close()
	cases := []struct {
		name, out string
		opt       Options
	}{
		{"same path", in, Options{Inputs: []string{in}}},
		{"hard link", hard, Options{Inputs: []string{in}}},
		{"symbolic link as output", soft, Options{Inputs: []string{in}}},
		{"symbolic link as input", in, Options{Inputs: []string{soft}}},
		{"standard input", in, Options{Inputs: []string{"-"}, Stdin: stdin}},
	}
	for _, c := range cases {
		c.opt.Force = true
		if _, err := Create(c.out, c.opt); !errors.Is(err, ErrIsInput) {
			t.Errorf("%s: want ErrIsInput, got %v", c.name, err)
		}
	}
	if got := read(t, in); got != "keep me\n" {
		t.Fatalf("input changed: %q", got)
	}
}

func TestSymlinkTargetReplaced(t *testing.T) {
	dir := t.TempDir()
	real := filepath.Join(dir, "run-7.jsonl")
	write(t, real, "old\n")
	link := filepath.Join(dir, "latest.jsonl")
	if err := os.Symlink("run-7.jsonl", link); err != nil {
		t.Fatal(err)
	}
	o, err := Create(link, Options{Force: true})
	if err != nil {
		t.Fatal(err)
	}
	o.Write([]byte("new\n"))
	if err := o.Commit(); err != nil {
		t.Fatal(err)
	}
	if lfi, _ := os.Lstat(link); lfi.Mode()&os.ModeSymlink == 0 {
		t.Fatal("the link was replaced by a file")
	}
	if got := read(t, real); got != "new\n" {
		t.Fatalf("got %q", got)
	}
}

func TestNotAFile(t *testing.T) {
	dir := t.TempDir()
	if _, err := Create(dir, Options{Force: true}); !errors.Is(err, ErrNotFile) {
		t.Fatalf("directory: want ErrNotFile, got %v", err)
	}
	dangling := filepath.Join(dir, "gone")
	os.Symlink("nowhere", dangling)
	if _, err := Create(dangling, Options{Force: true}); !errors.Is(err, ErrNotFile) {
		t.Fatalf("dangling link: want ErrNotFile, got %v", err)
	}
	if _, err := Create(filepath.Join(dir, "no", "such", "dir", "x"), Options{}); err == nil {
		t.Fatal("a file in a missing folder was created")
	}
}

func TestDeviceWrittenInPlace(t *testing.T) {
	o, err := Create("/dev/null", Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := o.Write([]byte("x")); err != nil {
		t.Fatal(err)
	}
	if err := o.Commit(); err != nil {
		t.Fatal(err)
	}
	if fi, err := os.Stat("/dev/null"); err != nil || fi.Mode().IsRegular() {
		t.Fatalf("/dev/null is no longer a device: %v %v", fi, err)
	}
}
