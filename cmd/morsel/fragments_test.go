package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestFragmentsJSONContract(t *testing.T) {
	out, _, code := run(t, "", "fragments", "../../testdata/demo/docs", "--terms", "../../testdata/demo/settings/terms.txt", "--top", "5", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	var got struct {
		Words []struct {
			Word   string   `json:"word"`
			Count  int      `json:"count"`
			Pieces float64  `json:"pieces"`
			Excess int      `json:"excess"`
			Split  []string `json:"split"`
		} `json:"words"`
		Totals struct {
			Tokens int     `json:"tokens"`
			Saving float64 `json:"saving_upper_bound"`
		} `json:"totals"`
		Fertility struct {
			ByScript []struct {
				Script string `json:"script"`
			} `json:"by_script"`
		} `json:"fertility"`
		Terms []struct {
			Term    string `json:"term"`
			Flagged bool   `json:"flagged"`
		} `json:"terms"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatalf("%v in %s", err, out)
	}
	if len(got.Words) != 5 || got.Words[0].Word != "fluvantrazine" || len(got.Terms) != 24 || got.Totals.Tokens == 0 || len(got.Fertility.ByScript) < 3 {
		t.Fatalf("got %+v", got)
	}
	for _, w := range got.Words {
		// The JSON contract (fragments --help): excess = occurrences x (pieces - 1).
		if d := float64(w.Excess) - float64(w.Count)*(w.Pieces-1); d > 0.01*float64(w.Count) || d < -0.01*float64(w.Count) || len(w.Split) == 0 {
			t.Errorf("%+v", w)
		}
	}
}

func TestFragmentsFormats(t *testing.T) {
	out, _, code := run(t, "", "fragments", "../../testdata/demo/docs/notes-species-bathyphorus-quillandri.txt", "--format", "csv")
	if code != 0 || !strings.HasPrefix(out, "rank,word,script,count,documents,pieces,excess,split,split_share,kind,pieces_alone,flagged,line\n") {
		t.Fatalf("exit %d\n%s", code, out)
	}
	out, _, code = run(t, "", "fragments", "../../testdata/demo/docs/notes-species-bathyphorus-quillandri.txt")
	if code != 0 || !strings.Contains(out, "Bathyphorus") || !strings.Contains(out, "saving, at most") || !strings.Contains(out, "upper bound") {
		t.Fatalf("exit %d\n%s", code, out)
	}
	out, _, code = run(t, "", "fragments", "../../testdata/demo/docs/notes-species-bathyphorus-quillandri.txt", "--format", "md")
	if code != 0 || !strings.Contains(out, "| --- |") {
		t.Fatalf("exit %d\n%s", code, out)
	}
}

func TestFragmentsErrors(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "glossary.txt")
	if err := os.WriteFile(bad, []byte("alpha\n# c\nalpha\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	doc := "../../testdata/demo/docs/notes-species-bathyphorus-quillandri.txt"
	for _, c := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"fragments", doc, "--terms", bad}, 1, bad + `:3: term "alpha" is already on line 1`},
		{[]string{"fragments", doc, "--terms", filepath.Join(dir, "missing.txt")}, 1, "missing.txt"},
		{[]string{"fragments", doc, "--min-pieces", "0"}, 2, "--min-pieces"},
		{[]string{"fragments", doc, "--min-count", "0"}, 2, "--min-count"},
		{[]string{"fragments", doc, "--format", "xml"}, 2, "--format"},
		{[]string{"fragments"}, 2, ""},
		{[]string{"fragments", doc, filepath.Join(dir, "nothing-here")}, 1, ""},
	} {
		_, errs, code := run(t, "", c.args...)
		if code != c.code || !strings.Contains(errs, c.msg) {
			t.Errorf("%v: exit %d, stderr %q; want %d and %q", c.args, code, errs, c.code, c.msg)
		}
	}
}

// TestFragmentsWorkers checks that the report does not depend on how many
// workers share the documents.
func TestFragmentsWorkers(t *testing.T) {
	one, _, c1 := run(t, "", "fragments", "../../testdata/demo/docs", "--workers", "1", "--top", "0", "--format", "json")
	many, _, c8 := run(t, "", "fragments", "../../testdata/demo/docs", "--workers", "8", "--top", "0", "--format", "json")
	if c1 != 0 || c8 != 0 || one != many {
		t.Fatalf("exit %d, %d; reports differ: %v", c1, c8, one != many)
	}
}
