package main

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"morsel/bpe"
	"morsel/corpus"
)

type surveyJSON struct {
	Documents []struct {
		Source string `json:"source"`
		Record int    `json:"record"`
		Bytes  int64  `json:"bytes"`
		Tokens int    `json:"tokens"`
	} `json:"documents"`
	Skipped []struct {
		Source string `json:"source"`
		Record int    `json:"record"`
		Reason string `json:"reason"`
	} `json:"skipped"`
	Totals struct {
		Documents int   `json:"documents"`
		Tokens    int64 `json:"tokens"`
		Bytes     int64 `json:"bytes"`
		Skipped   int   `json:"skipped"`
	} `json:"totals"`
}

func runSurvey(t *testing.T, args ...string) (surveyJSON, string, int) {
	t.Helper()
	out, errs, code := run(t, "", append([]string{"survey", "--format", "json"}, args...)...)
	var s surveyJSON
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatalf("survey JSON: %v\n%s\n%s", err, out, errs)
	}
	return s, errs, code
}

// The survey's totals equal the sum of what pieces counts for the same
// texts, document by document.
func TestSurveyTotalsMatchPieces(t *testing.T) {
	s, _, code := runSurvey(t, "../../testdata/demo/docs")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	texts := map[string]string{}
	inputs, _ := corpus.List([]string{"../../testdata/demo/docs"}, corpus.Options{})
	for _, in := range inputs {
		corpus.Read(in, corpus.Options{}, func(it corpus.Item) error {
			if it.Doc != nil {
				texts[fmt.Sprintf("%s#%d", it.Doc.Source, it.Doc.Record)] = string(it.Doc.Text)
			}
			return nil
		})
	}
	var sum int64
	for _, d := range s.Documents {
		key := fmt.Sprintf("%s#%d", d.Source, d.Record)
		text, ok := texts[key]
		if !ok {
			t.Fatalf("no text for %s:%d", d.Source, d.Record)
		}
		out, _, code := run(t, text, "pieces", "--format", "json")
		var p struct {
			Tokens int `json:"tokens"`
		}
		if code != 0 || json.Unmarshal([]byte(out), &p) != nil {
			t.Fatalf("pieces on %s: exit %d", d.Source, code)
		}
		if p.Tokens != d.Tokens {
			t.Fatalf("%s:%d: survey %d tokens, pieces %d", d.Source, d.Record, d.Tokens, p.Tokens)
		}
		sum += int64(p.Tokens)
	}
	if sum != s.Totals.Tokens || s.Totals.Documents != len(s.Documents) || len(s.Documents) < 40 {
		t.Fatalf("sum of pieces %d, survey total %d over %d documents", sum, s.Totals.Tokens, len(s.Documents))
	}
}

// One worker or eight: the same report, byte for byte.
func TestSurveyWorkersAgree(t *testing.T) {
	inputs := []string{"../../testdata/demo/docs", "../../testdata/golden/corpus"}
	for _, f := range []string{"json", "table", "csv", "md"} {
		one, _, c1 := run(t, "", append([]string{"survey", "--format", f, "--workers", "1"}, inputs...)...)
		eight, _, c8 := run(t, "", append([]string{"survey", "--format", f, "--workers", "8"}, inputs...)...)
		if c1 != c8 || one != eight || len(one) < 1000 {
			t.Fatalf("%s: 1 and 8 workers differ (exit %d, %d; %d and %d bytes)", f, c1, c8, len(one), len(eight))
		}
	}
}

// Every bad input gives its reason and the run goes on.
func TestSurveyBadInputs(t *testing.T) {
	dir := t.TempDir()
	w := func(name string, data []byte) { os.WriteFile(filepath.Join(dir, name), data, 0o644) }
	w("good.txt", []byte("The harbour crane was serviced on Tuesday.\n"))
	w("binary.bin", []byte("\x00\x01\x02 ELF header \x00\x00"))
	w("invalid.txt", []byte("caf\xe9 au lait, \xff twice\n"))
	w("empty.txt", nil)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(bytes.Repeat([]byte(`{"text": "a ticket about the buoy"}`+"\n"), 200))
	zw.Close()
	w("cut.jsonl.gz", gz.Bytes()[:gz.Len()/2])
	w("tickets.jsonl", []byte("{\"text\": \"one\"}\n{\"text\": broken\n{\"text\": \"three\"}\n"))
	w("rows.csv", []byte("id,text\n1,first row\n2,second,extra\n3,third row\n"))
	os.Symlink("loop-b", filepath.Join(dir, "loop-a"))
	os.Symlink("loop-a", filepath.Join(dir, "loop-b"))
	s, _, code := runSurvey(t, dir, filepath.Join(dir, "missing.txt"))
	if code != 1 {
		t.Fatalf("exit %d, want 1", code)
	}
	reasons := map[string]string{}
	for _, k := range s.Skipped {
		reasons[fmt.Sprintf("%s:%d", filepath.Base(k.Source), k.Record)] = k.Reason
	}
	for where, want := range map[string]string{
		"binary.bin:0": "binary", "empty.txt:0": "empty",
		"tickets.jsonl:2": "malformed", "rows.csv:2": "ragged", "missing.txt:0": "unreadable",
	} {
		if reasons[where] != want {
			t.Errorf("%s: reason %q, want %q (all: %v)", where, reasons[where], want, reasons)
		}
	}
	loop, cut := false, false
	for k, r := range reasons {
		cut = cut || strings.HasPrefix(k, "cut.jsonl.gz:") && r == "truncated"
		if strings.HasPrefix(k, "loop-") && (r == "symlink-loop" || r == "unreadable") {
			loop = true
		}
	}
	if !cut {
		t.Errorf("truncated gzip not reported: %v", reasons)
	}
	if !loop {
		t.Errorf("symbolic link loop not reported: %v", reasons)
	}
	docs := map[string]bool{}
	for _, d := range s.Documents {
		docs[fmt.Sprintf("%s:%d", filepath.Base(d.Source), d.Record)] = true
	}
	for _, want := range []string{"good.txt:0", "invalid.txt:0", "tickets.jsonl:1", "tickets.jsonl:3", "rows.csv:1", "rows.csv:3"} {
		if !docs[want] {
			t.Errorf("document %s missing from the survey (have %v)", want, docs)
		}
	}
	if s.Totals.Skipped != len(s.Skipped) || s.Totals.Documents != len(s.Documents) {
		t.Errorf("totals %+v disagree with the lists", s.Totals)
	}
}

// A plain file larger than the streaming threshold is counted exactly as
// the whole text would be.
func TestSurveyStreamedFile(t *testing.T) {
	dir := t.TempDir()
	para := []byte("Salt spray dulled the QX-7731-Rb housing; the crew logged 3.5 mm of pitting.\n\n")
	big := bytes.Repeat(para, (corpus.DefaultStreamAbove/len(para))+1000)
	os.WriteFile(filepath.Join(dir, "big.txt"), big, 0o644)
	s, _, code := runSurvey(t, dir)
	if code != 0 || len(s.Documents) != 1 {
		t.Fatalf("exit %d, %d documents", code, len(s.Documents))
	}
	enc, _ := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if want := enc.Count(big); s.Documents[0].Tokens != want || s.Documents[0].Bytes != int64(len(big)) {
		t.Fatalf("streamed count %d (%d bytes), whole-text count %d (%d bytes)", s.Documents[0].Tokens, s.Documents[0].Bytes, want, len(big))
	}
}

func TestSurveyUsage(t *testing.T) {
	if _, _, code := run(t, "", "survey"); code != 2 {
		t.Fatalf("no paths: exit %d", code)
	}
	if _, _, code := run(t, "", "survey", "--format", "yaml", "."); code != 2 {
		t.Fatalf("bad format: exit %d", code)
	}
}
