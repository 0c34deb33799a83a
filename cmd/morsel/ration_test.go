package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/report"
	"morsel/report/ration"
)

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
	frame, _ := (&shared{}).loadFrame("test", demoFrame)
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
	_, serr, code = runMorsel(t, "ration", filepath.Join(demoSettings, "terms.txt"), "--budget", "100", "--frame", demoFrame, "--quiet")
	if code != exitUsage || !strings.Contains(serr, "100-token budget") {
		t.Fatalf("exit %d, want 2: %s", code, serr)
	}
	_, serr, code = runMorsel(t, "ration", demoDir, "--budget", "100", "--overlap", "60")
	if code != exitUsage {
		t.Fatalf("overlap over half the budget: exit %d, want 2: %s", code, serr)
	}
}
