package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shopspring/decimal"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/fit"
	"morsel/report/ration"
)

const (
	demoDir     = "../../testdata/demo"
	demoTargets = "../../testdata/demo/morsel.toml"
	demoFrame   = "../../testdata/demo/frame.txt"
)

// runMorsel runs the command line in-process and returns its standard
// output, standard error and exit status.
func runMorsel(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	dir := t.TempDir()
	outF, err := os.Create(filepath.Join(dir, "stdout"))
	if err != nil {
		t.Fatal(err)
	}
	errF, err := os.Create(filepath.Join(dir, "stderr"))
	if err != nil {
		t.Fatal(err)
	}
	saveOut, saveErr := os.Stdout, os.Stderr
	os.Stdout, os.Stderr = outF, errF
	root := newRoot()
	root.SetArgs(append([]string{}, args...))
	code := exitStatus(root.Execute())
	os.Stdout, os.Stderr = saveOut, saveErr
	outF.Close()
	errF.Close()
	out, _ := os.ReadFile(outF.Name())
	serr, _ := os.ReadFile(errF.Name())
	return string(out), string(serr), code
}

func TestFitExitAndMargins(t *testing.T) {
	out, serr, code := runMorsel(t, "fit", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--format", "json", "--quiet")
	if code != exitCheck {
		t.Fatalf("exit %d, want 3 (the demo has documents over 1,024 tokens); stderr %s", code, serr)
	}
	var r fit.Report
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if r.Window != 1024 || r.Totals.Overflow == 0 || r.Totals.Fit+r.Totals.Overflow != r.Totals.Documents || r.Totals.Documents != len(r.Documents) {
		t.Fatalf("totals %+v window %d", r.Totals, r.Window)
	}
	seenFit := false
	for _, d := range r.Documents {
		if d.Margin != d.Window-d.InputTokens-d.Reserve || d.Fits != (d.Margin >= 0) || d.Reserve != 200 {
			t.Fatalf("%+v: margin is not window - input - reserve", d)
		}
		if d.Fits {
			seenFit = true
		} else if seenFit {
			t.Fatalf("%s overflows but is listed after a document that fits", d.Source)
		}
	}
	// The input is the assembled request, counted whole.
	enc, _ := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	frame, err := loadFrame("test", demoFrame)
	if err != nil {
		t.Fatal(err)
	}
	text, _ := os.ReadFile(filepath.Join(demoDir, "terms.txt"))
	want := enc.Count(frame.Assemble(filepath.Join(demoDir, "terms.txt"), text))
	for _, d := range r.Documents {
		if strings.HasSuffix(d.Source, "terms.txt") && d.InputTokens != want {
			t.Fatalf("terms.txt input %d, want %d", d.InputTokens, want)
		}
	}

	for _, tc := range []struct {
		name string
		args []string
		code int
		err  string
	}{
		{"all fit", []string{"fit", filepath.Join(demoDir, "terms.txt"), "--window", "100000", "--quiet"}, exitOK, ""},
		{"flag beats target", []string{"fit", filepath.Join(demoDir, "terms.txt"), "--targets", demoTargets, "--target", "harbor-small", "--reserve", "5000", "--quiet"}, exitUsage, "--reserve 5000 leaves no room"},
		{"unreadable input wins", []string{"fit", filepath.Join(demoDir, "terms.txt"), filepath.Join(demoDir, "no-such-file.txt"), "--window", "10", "--quiet"}, exitInput, ""},
		{"frame without placeholder", []string{"fit", demoDir, "--frame", filepath.Join(demoDir, "terms.txt")}, exitUsage, "has no {{document}} placeholder"},
		{"unknown target", []string{"fit", demoDir, "--targets", demoTargets, "--target", "harbor-huge"}, exitUsage, `no target "harbor-huge"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, serr, code := runMorsel(t, tc.args...)
			if code != tc.code || !strings.Contains(serr, tc.err) {
				t.Fatalf("exit %d, want %d; stderr %q should hold %q", code, tc.code, serr, tc.err)
			}
		})
	}
}

func TestTargetsFileErrorNamesLine(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "morsel.toml")
	os.WriteFile(bad, []byte("[target.a]\nwindow = 512\n\nprice_in = \"lots\"\n"), 0o644)
	_, serr, code := runMorsel(t, "fit", demoDir, "--targets", bad, "--target", "a")
	if code != exitUsage || !strings.Contains(serr, bad+`:4: target "a": price_in`) {
		t.Fatalf("exit %d, stderr %q", code, serr)
	}
}

func TestRationEmit(t *testing.T) {
	plan := filepath.Join(t.TempDir(), "plan.jsonl")
	out, serr, code := runMorsel(t, "ration", demoDir, "--budget", "300", "--frame", demoFrame, "--emit", plan, "--format", "json", "--quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	var rep ration.Report
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(plan)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	enc, _ := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	frame, _ := loadFrame("test", demoFrame)
	docs := map[string][]byte{}
	lines := 0
	sc := bufio.NewScanner(f)
	sc.Buffer(nil, 1<<24)
	for sc.Scan() {
		var c ration.Chunk
		if err := json.Unmarshal(sc.Bytes(), &c); err != nil {
			t.Fatalf("line %d: %v", lines+1, err)
		}
		lines++
		key := report.Where(c.Source, c.Record)
		if c.Start != len(docs[key]) || c.End-c.Start != len(c.Text) {
			t.Fatalf("%s chunk %d: offsets [%d, %d) after %d bytes", key, c.Chunk, c.Start, c.End, len(docs[key]))
		}
		docs[key] = append(docs[key], c.Text...)
		if got := enc.Count(frame.Assemble(key, []byte(c.Text))); got != c.Tokens || got > 300 {
			t.Fatalf("%s chunk %d: %d tokens re-encoded, %d reported, budget 300", key, c.Chunk, got, c.Tokens)
		}
	}
	if lines != rep.Totals.Chunks || lines == 0 {
		t.Fatalf("%d lines, report says %d chunks", lines, rep.Totals.Chunks)
	}
	// Whole files rebuild byte for byte.
	for _, name := range []string{"incident-2024-11-vennskarth-buoy-loss.md", "memo-ja-kirisaki-shipping.txt"} {
		p := filepath.Join(demoDir, name)
		want, _ := os.ReadFile(p)
		if !bytes.Equal(docs[p], want) {
			t.Fatalf("%s: the chunks do not rebuild the file (%d of %d bytes)", name, len(docs[p]), len(want))
		}
	}
	// A budget the frame alone fills is one usage error.
	_, serr, code = runMorsel(t, "ration", filepath.Join(demoDir, "terms.txt"), "--budget", "100", "--frame", demoFrame, "--quiet")
	if code != exitUsage || !strings.Contains(serr, "100-token budget") {
		t.Fatalf("exit %d, want 2: %s", code, serr)
	}
	_, serr, code = runMorsel(t, "ration", demoDir, "--budget", "100", "--overlap", "60")
	if code != exitUsage {
		t.Fatalf("overlap over half the budget: exit %d, want 2: %s", code, serr)
	}
}

func TestQuoteJSON(t *testing.T) {
	out, serr, code := runMorsel(t, "quote", demoDir, "--targets", demoTargets, "--target", "harbor-small", "--target", "harbor-large", "--ration", "--format", "json", "--quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	var q struct {
		Caution string `json:"caution"`
		Targets []struct {
			Name         string `json:"name"`
			InputTokens  int64  `json:"input_tokens"`
			OutputTokens int64  `json:"output_tokens"`
			Requests     int    `json:"requests"`
			Cost         string `json:"cost"`
			Currency     string `json:"currency"`
			Overflow     int    `json:"overflow"`
		} `json:"targets"`
	}
	if err := json.Unmarshal([]byte(out), &q); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(q.Caution, "estimate") || len(q.Targets) != 2 || q.Targets[0].Name != "harbor-small" || q.Targets[1].Name != "harbor-large" {
		t.Fatalf("%+v", q)
	}
	// harbor-small (invented prices in the demo file): 0.40 in and 1.60 out
	// per million, 200 answer tokens a request, so the cost is
	// (0.40 in + 1.60 out) / 1e6 and out = 200 x requests.
	s := q.Targets[0]
	want := decimal.NewFromInt(s.InputTokens).Mul(decimal.RequireFromString("0.40")).
		Add(decimal.NewFromInt(s.OutputTokens).Mul(decimal.RequireFromString("1.60"))).Div(decimal.NewFromInt(1_000_000))
	if got := decimal.RequireFromString(s.Cost); !got.Equal(want) || s.OutputTokens != int64(200*s.Requests) || s.Currency != "EUR" || s.Overflow != 0 {
		t.Fatalf("harbor-small %+v, want cost %s", s, want)
	}
	// --ration makes requests from every chunk: more requests than documents.
	if s.Requests <= q.Targets[1].Requests {
		t.Fatalf("harbor-small (1,024 window) has %d requests, harbor-large (4,096) %d", s.Requests, q.Targets[1].Requests)
	}

	noPrice := filepath.Join(t.TempDir(), "t.toml")
	os.WriteFile(noPrice, []byte("[target.free]\nwindow = 1024\n"), 0o644)
	_, serr, code = runMorsel(t, "quote", demoDir, "--targets", noPrice)
	if code != exitUsage || !strings.Contains(serr, noPrice+":1: target \"free\" has no price_in") {
		t.Fatalf("exit %d: %s", code, serr)
	}
	out, _, code = runMorsel(t, "quote", filepath.Join(demoDir, "terms.txt"), "--targets", demoTargets)
	if code != exitOK || !strings.Contains(out, "caution:") || !strings.Contains(out, "harbor-medium") {
		t.Fatalf("table view: exit %d\n%s", code, out)
	}
}
