package main

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// --max-document skips a longer document; a bad size is a usage error.
func TestMaxDocumentFlag(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "big.txt"), []byte(strings.Repeat("lantern ", 300)), 0o644)
	os.WriteFile(filepath.Join(dir, "small.txt"), []byte("wick"), 0o644)
	s, _, code := runSurvey(t, dir, "--max-document", "1KiB")
	if code != 1 || len(s.Documents) != 1 || len(s.Skipped) != 1 || s.Skipped[0].Reason != "too-large" {
		t.Errorf("--max-document 1KiB: exit %d, %+v", code, s)
	}
	for _, bad := range []string{"0", "-5", "lots", "1TiB"} {
		if _, _, code := run(t, "", "survey", dir, "--max-document", bad); code != 2 {
			t.Errorf("--max-document %s: exit %d, want 2", bad, code)
		}
	}
	var f sizeFlag
	for in, want := range map[string]int64{"1048576": 1 << 20, "256MiB": 256 << 20, "3 KiB": 3 << 10, "1GiB": 1 << 30} {
		if err := f.Set(in); err != nil || int64(f) != want {
			t.Errorf("size %q = %d (%v), want %d", in, f, err, want)
		}
	}
}

// Standard input is read as the same file would be, CSV included.
func TestStdinCSVAsAFile(t *testing.T) {
	dir := t.TempDir()
	csv := "id,text\n1,first row\n2,\"two\nlines\"\n3,third,extra\n"
	p := filepath.Join(dir, "rows.csv")
	os.WriteFile(p, []byte(csv), 0o644)
	file, _, fcode := run(t, "", "survey", "--format", "json", p)
	stdin, _, scode := run(t, csv, "survey", "--format", "json", "-")
	if fcode != scode || strings.ReplaceAll(file, p, "-") != stdin {
		t.Errorf("stdin (exit %d)\n%s\nfile (exit %d)\n%s", scode, stdin, fcode, file)
	}
	if !strings.Contains(stdin, `"line": 3`) {
		t.Errorf("no line beside the second row's record:\n%s", stdin)
	}
}

// Every walking command skips a document over 256 MiB unless told
// otherwise (the bound the hostile-input issue asks for, like the line
// cap).
func TestMaxDocumentDefault(t *testing.T) {
	root := newRootIO(strings.NewReader(""), io.Discard, io.Discard)
	for _, name := range []string{"survey", "fit", "ration", "quote", "fragments"} {
		c, _, err := root.Find([]string{name})
		if err != nil {
			t.Fatal(err)
		}
		f := c.Flags().Lookup("max-document")
		if f == nil || f.DefValue != "256MiB" {
			t.Errorf("%s --max-document: %+v, want a default of 256MiB", name, f)
		}
	}
}
