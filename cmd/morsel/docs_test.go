package main

import (
	"flag"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"morsel/internal/manpage"
)

var updateMan = flag.Bool("update-man", false, "rewrite docs/man from the commands")

// TestManPages checks that docs/man holds the pages the commands give
// (scripts/man.sh rewrites them).
func TestManPages(t *testing.T) {
	dir := t.TempDir()
	if *updateMan {
		dir = "../../docs/man"
		os.RemoveAll(dir)
	}
	names, err := manpage.Write(newRootIO(nil, nil, nil), dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(names) < 7 {
		t.Fatalf("only %d pages: %q", len(names), names)
	}
	for _, n := range names {
		got, _ := os.ReadFile(filepath.Join(dir, n))
		want, err := os.ReadFile(filepath.Join("../../docs/man", n))
		if err != nil || string(got) != string(want) {
			t.Errorf("docs/man/%s is missing or stale: run scripts/man.sh", n)
		}
	}
	committed, _ := filepath.Glob("../../docs/man/*.1")
	if len(committed) != len(names) {
		t.Errorf("docs/man holds %d pages, the commands give %d: run scripts/man.sh", len(committed), len(names))
	}
}

// TestReadmeGoVersion checks that the README asks for the Go release
// go.mod needs.
func TestReadmeGoVersion(t *testing.T) {
	mod, err := os.ReadFile("../../go.mod")
	if err != nil {
		t.Fatal(err)
	}
	m := regexp.MustCompile(`(?m)^go (\S+)$`).FindSubmatch(mod)
	if m == nil {
		t.Fatal("go.mod has no go line")
	}
	readme, _ := os.ReadFile("../../README.md")
	if !strings.Contains(string(readme), "Go "+string(m[1])+" or later") {
		t.Errorf("README does not say \"Go %s or later\", which go.mod needs", m[1])
	}
}

func TestCompletion(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"__complete", "survey", demoDir, "--format", ""}, "html"},
		{[]string{"__complete", "survey", demoDir, "--as", ""}, "jsonl"},
		{[]string{"__complete", "survey", demoDir, "--sort", ""}, "overflow"},
		{[]string{"__complete", "quote", demoDir, "--targets", demoTargets, "--target", ""}, "harbor-medium"},
	} {
		_, out, _ := run(t, "", c.args...)
		if !strings.Contains(out, c.want+"\n") {
			t.Errorf("%q: %q lacks %q", c.args, out, c.want)
		}
	}
}

func TestSort(t *testing.T) {
	out, _, _ := runMorsel(t, "survey", demoDir, "--sort", "tokens", "--format", "csv")
	rows := strings.Split(strings.TrimSpace(out), "\n")[1:]
	last := -1
	for _, r := range rows {
		n, _ := strconv.Atoi(strings.Split(r, ",")[6]) // tokens
		if last >= 0 && n > last {
			t.Fatalf("--sort tokens: %d after %d", n, last)
		}
		last = n
	}
	if _, serr, code := runMorsel(t, "fit", demoDir, "--sort", "bytes"); code != 2 || !strings.Contains(serr, "tokens, name, overflow") {
		t.Errorf("fit --sort bytes: exit %d, %q", code, serr)
	}
	name, _, _ := runMorsel(t, "quote", demoDir, "--targets", demoTargets, "--sort", "name", "--format", "csv")
	if !strings.Contains(strings.Split(name, "\n")[1], "calibrate_th9_chain.py") {
		t.Errorf("--sort name: first row %q", strings.Split(name, "\n")[1])
	}
}
