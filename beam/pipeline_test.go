package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/runners/prism"

	"morsel/report/partial"
)

func TestMain(m *testing.M) {
	flag.Parse()
	beam.Init()
	os.Exit(m.Run())
}

// morselCLI builds the command-line tool from the parent module once.
var morselCLI = func() func(t *testing.T) string {
	var bin string
	return func(t *testing.T) string {
		t.Helper()
		if bin != "" {
			return bin
		}
		dir, err := os.MkdirTemp("", "morsel-cli")
		if err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "morsel")
		cmd := exec.Command("go", "build", "-o", out, "./cmd/morsel")
		cmd.Dir = ".."
		if b, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("building morsel: %v\n%s", err, b)
		}
		bin = out
		return bin
	}
}()

// cli runs morsel with args and returns its standard output.
func cli(t *testing.T, args ...string) []byte {
	t.Helper()
	var out, errb bytes.Buffer
	cmd := exec.Command(morselCLI(t), append(args, "-q")...)
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() != 1 { // 1: some input could not be read
			t.Fatalf("morsel %s: %v\n%s", strings.Join(args, " "), err, errb.String())
		}
	}
	return out.Bytes()
}

// runBeam runs the pipeline on prism, in process, and returns the report.
func runBeam(t *testing.T, c Config) []byte {
	t.Helper()
	c.Output = filepath.Join(t.TempDir(), "report")
	p, s := beam.NewPipelineWithRoot()
	Build(s, c)
	if _, err := prism.Execute(context.Background(), p); err != nil {
		t.Fatalf("pipeline: %v", err)
	}
	b, err := os.ReadFile(c.Output)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// The pipeline's report is morsel survey's, byte for byte, on the demo.
func TestSurveyDemoMatchesCLI(t *testing.T) {
	for _, f := range []string{"json", "table", "csv", "md"} {
		want := cli(t, "survey", "../testdata/demo/docs", "--format", f)
		got := runBeam(t, Config{Inputs: []string{"../testdata/demo/docs/*"}, Format: f, Command: "survey"})
		if !bytes.Equal(got, want) {
			t.Errorf("--format %s: the pipeline's report differs from morsel survey's:\n%s", f, firstDiff(got, want))
		}
	}
}

// --vocab weighs in another vocabulary, as morsel survey --vocab does.
func TestSurveyVocabMatchesCLI(t *testing.T) {
	dir := t.TempDir()
	vocab := filepath.Join(dir, "tokenizer.json")
	gz, err := os.Open("../testdata/vocab/metaspace-32k/tokenizer.json.gz")
	if err != nil {
		t.Fatal(err)
	}
	defer gz.Close()
	zr, err := gzip.NewReader(gz)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(vocab, b, 0o644); err != nil {
		t.Fatal(err)
	}
	want := cli(t, "survey", "../testdata/demo/docs", "--vocab", vocab, "--format", "json")
	got := runBeam(t, Config{Inputs: []string{"../testdata/demo/docs/*"}, Format: "json", Command: "survey", Vocab: vocab})
	if !bytes.Equal(got, want) {
		t.Errorf("the pipeline's report differs from morsel survey --vocab's:\n%s", firstDiff(got, want))
	}
}

// A big file of records is weighed in shares by several workers, and bad
// records, binary and empty files are reported as a single run reports
// them.
func TestSurveySplitFilesMatchCLI(t *testing.T) {
	dir := t.TempDir()
	var big bytes.Buffer
	for i := 1; i <= 3000; i++ {
		switch {
		case i%97 == 0:
			big.WriteString("{not json\n")
		case i%89 == 0:
			fmt.Fprintf(&big, "{\"text\":\"\"}\n")
		default:
			fmt.Fprintf(&big, "{\"text\":\"ticket %d: the mooring line of buoy %d chafed at %d metres\"}\n", i, i%13, i%400)
		}
	}
	files := map[string][]byte{
		"tickets.jsonl": big.Bytes(),
		"rows.csv":      []byte("id,text\n1,uno\n2\n3,tres\n"),
		"blob.png":      []byte("\x89PNG\r\n"),
		"empty.txt":     nil,
		"notes.md":      []byte("# Mooring notes\n\nThe chain was re-tensioned."),
		".hidden.txt":   []byte("left out"),
	}
	for name, b := range files {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want := cli(t, "survey", dir, "--format", "json")
	got := runBeam(t, Config{Inputs: []string{dir + "/*"}, Format: "json", Command: "survey", SplitAbove: 20000})
	if !bytes.Equal(got, want) {
		t.Errorf("the pipeline's report differs from morsel survey's:\n%s", firstDiff(got, want))
	}
}

// firstDiff shows the first line where got and want differ.
func firstDiff(got, want []byte) string {
	g, w := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
	for i := 0; i < len(g) || i < len(w); i++ {
		var a, b string
		if i < len(g) {
			a = g[i]
		}
		if i < len(w) {
			b = w[i]
		}
		if a != b {
			return fmt.Sprintf("line %d:\n  pipeline: %q\n  survey:   %q", i+1, a, b)
		}
	}
	return "(same lines)"
}

// readHeader reads the header of the partial at path.
func readHeader(t *testing.T, path string) partial.Header {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	p, err := partial.Read(f, path)
	if err != nil {
		t.Fatal(err)
	}
	return p.Header
}

// The pipeline's partial has the header morsel survey --format partial
// writes for the same inputs and settings, and morsel merge turns it into
// morsel survey's report.
func TestPartialIsCLIs(t *testing.T) {
	const docs = "../testdata/demo/docs"
	dir := t.TempDir()
	for i, c := range []struct {
		cfg  Config
		args []string
	}{
		{Config{Inputs: []string{docs}}, nil},
		{Config{Inputs: []string{docs, "../testdata/corpus"}, Field: "body", Column: "note", Hidden: true}, []string{"--field", "body", "--column", "note", "--hidden"}},
	} {
		c.cfg.Command, c.cfg.Format = "survey", "partial"
		beamPart := filepath.Join(dir, fmt.Sprintf("beam-%d.part", i))
		b := runBeam(t, c.cfg)
		if err := os.WriteFile(beamPart, b, 0o644); err != nil {
			t.Fatal(err)
		}
		cliPart := filepath.Join(dir, fmt.Sprintf("cli-%d.part", i))
		args := append(append([]string{"survey"}, c.cfg.Inputs...), c.args...)
		cli(t, append(args, "--format", "partial", "-o", cliPart)...)
		got, want := readHeader(t, beamPart), readHeader(t, cliPart)
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%v: the pipeline's header\n%+v\nmorsel survey's\n%+v", c.args, got, want)
		}
		for _, f := range []string{"json", "csv"} {
			merged := cli(t, "merge", beamPart, "--format", f)
			single := cli(t, append(args, "--format", f)...)
			if !bytes.Equal(merged, single) {
				t.Errorf("%v: morsel merge of the pipeline's partial, --format %s, differs from morsel survey's report:\n%s", c.args, f, firstDiff(merged, single))
			}
		}
	}
}
