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
	"morsel/corpus"
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

// A document larger than the streaming threshold is cut in a window: its
// chunks, emitted between those of the files around it, are those that
// cutting the whole text gives, and the report's figures are those of
// the whole text's plan.
func TestRationStreamedFile(t *testing.T) {
	dir := t.TempDir()
	para := []byte("Salt spray dulled the QX-7731-Rb housing; the crew logged 3.5 mm of pitting.\nThe keeper counts the boats.\n\n")
	big := bytes.Repeat(para, corpus.DefaultStreamAbove/len(para)+1000)
	os.WriteFile(filepath.Join(dir, "a.txt"), []byte("A short note before."), 0o644)
	os.WriteFile(filepath.Join(dir, "b.txt"), big, 0o644)
	os.WriteFile(filepath.Join(dir, "c.txt"), []byte("A short note after."), 0o644)
	plan := filepath.Join(t.TempDir(), "plan.jsonl")
	out, serr, code := runMorsel(t, "ration", dir, "--budget", "3000", "--window", "4000", "--overlap", "50", "--emit", plan, "--format", "json", "--quiet", "--workers", "2")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	var rep ration.Report
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}

	enc, _ := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	r := &ration.Rationer{Enc: enc, Frame: nil, Budget: 3000, Overlap: 50}
	var want bytes.Buffer
	jl := json.NewEncoder(&want)
	jl.SetEscapeHTML(false)
	rc := ration.NewCollector(r, "")
	for _, name := range []string{"a.txt", "b.txt", "c.txt"} {
		p := filepath.Join(dir, name)
		text, _ := os.ReadFile(p)
		chunks, tokens, err := r.Cut(p, 0, text, true)
		if err != nil {
			t.Fatal(err)
		}
		d := ration.Doc{Source: p, Record: 0, Bytes: len(text), Tokens: tokens, Chunks: len(chunks), Plan: chunks, Largest: chunks[0].Tokens, Smallest: chunks[0].Tokens}
		for _, c := range chunks {
			d.Largest, d.Smallest = max(d.Largest, c.Tokens), min(d.Smallest, c.Tokens)
			jl.Encode(&c)
		}
		if err := rc.Add(d); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want.Bytes()) {
		t.Fatalf("the emitted plan (%d bytes) is not the whole texts' plan (%d bytes)", len(got), want.Len())
	}
	whole := rc.Finish(report.OrNone(nil))
	whole.Vocabulary, whole.Frame = rep.Vocabulary, rep.Frame
	a, _ := json.Marshal(whole)
	b, _ := json.Marshal(&rep)
	if !bytes.Equal(a, b) {
		t.Fatalf("streamed report\n%s\nwhole texts' report\n%s", b, a)
	}
	if ls, _ := os.ReadDir(filepath.Dir(plan)); len(ls) != 1 {
		t.Fatalf("the plan's folder holds %d files, want the plan alone", len(ls))
	}
}

// Under a bundle with free cuts, a document over 32 MiB is cut as it is
// read, and the plan is the one the whole text gives; a bundle without
// free cuts, or --split-pattern, reads the text whole and counts every
// chunk whole.
func TestRationStreamedUnderBundle(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "qwen3")
	os.Mkdir(dir, 0o755)
	gunzipTo(t, "../../testdata/vocab/qwen3/tokenizer.json.gz", filepath.Join(dir, "tokenizer.json"))
	cfg, err := os.ReadFile("../../testdata/vocab/qwen3/tokenizer_config.json")
	if err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "tokenizer_config.json"), cfg, 0o644)
	v, err := bpe.LoadBundle(dir)
	if err != nil {
		t.Fatal(err)
	}
	enc, err := bpe.NewEncoder(v, bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if (&shared{}).genericSplit(enc) || !(&shared{splitPattern: `\w+|\s+`}).genericSplit(enc) {
		t.Fatal("qwen3: want the window, and the whole text under --split-pattern")
	}
	meta := filepath.Join(t.TempDir(), "tokenizer.json")
	gunzipTo(t, "../../testdata/vocab/metaspace-32k/tokenizer.json.gz", meta)
	if mv, err := bpe.LoadBundle(meta); err != nil {
		t.Fatal(err)
	} else if me, _ := bpe.NewEncoder(mv, bpe.Options{}); !(&shared{}).genericSplit(me) {
		t.Fatal("metaspace-32k prepends to every text: want the whole text")
	}

	var text []byte
	files, _ := filepath.Glob("../../testdata/golden/corpus/*")
	for len(text) <= corpus.DefaultStreamAbove {
		for _, f := range files {
			b, _ := os.ReadFile(f)
			text = append(append(text, b...), "\n\n"...)
		}
	}
	in := filepath.Join(t.TempDir(), "big.txt")
	os.WriteFile(in, text, 0o644)
	plan := filepath.Join(t.TempDir(), "plan.jsonl")
	_, serr, code := runMorsel(t, "ration", in, "--vocab", dir, "--budget", "3000", "--window", "4000", "--overlap", "30", "--emit", plan, "--quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, serr)
	}
	f, err := os.Open(plan)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var got []ration.Chunk
	sc := bufio.NewScanner(f)
	sc.Buffer(nil, 1<<24)
	for sc.Scan() {
		var c ration.Chunk
		if err := json.Unmarshal(sc.Bytes(), &c); err != nil {
			t.Fatal(err)
		}
		got = append(got, c)
	}
	// The package's tests hold the window's plan to the whole-text path's;
	// here the whole text is cut in memory, which is quicker.
	r := &ration.Rationer{Enc: enc, Budget: 3000, Overlap: 30}
	want, _, err := r.Cut(in, 0, text, true)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(want) || len(want) < 1000 {
		t.Fatalf("%d chunks streamed, %d from the whole text", len(got), len(want))
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.Start != w.Start || g.End != w.End || g.Tokens != w.Tokens || g.Cut != w.Cut || g.Text != w.Text {
			t.Fatalf("chunk %d: [%d, %d) %d tokens, %s; the whole text [%d, %d) %d, %s", i, g.Start, g.End, g.Tokens, g.Cut, w.Start, w.End, w.Tokens, w.Cut)
		}
	}
}
