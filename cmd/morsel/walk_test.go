package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"morsel/report"
)

// The demo's documents and its settings sit in separate folders: the
// documents folder holds the scenario's 43 documents and nothing else
// (testdata/demo/README.md lists them).
func TestDemoDocumentsAlone(t *testing.T) {
	s, _, code := runSurvey(t, demoDir)
	if code != 0 || len(s.Documents) != 43 || len(s.Skipped) != 0 {
		t.Fatalf("exit %d, %d documents, skipped %v; want 0, 43, none", code, len(s.Documents), s.Skipped)
	}
}

// A targets file, frame or glossary that the run reads is not counted when
// it sits in the walked folder, and the report says so on one line.
func TestSettingsInTheWalkLeftOut(t *testing.T) {
	demo := filepath.Dir(demoDir) // docs/, settings/ and the README
	for _, tc := range []struct {
		args []string
		left []string // base names of the files left out, in walk order
		docs int      // 43 documents, the README and the settings not read
	}{
		{[]string{"fit", demo, "--targets", demoTargets, "--target", "harbor-small"}, []string{"frame.txt", "morsel.toml"}, 45},
		{[]string{"quote", demo, "--targets", demoTargets}, []string{"frame.txt", "morsel.toml"}, 45},
		{[]string{"fragments", demo, "--terms", filepath.Join(demoSettings, "terms.txt")}, []string{"terms.txt"}, 46},
		{[]string{"survey", demo}, nil, 47},
	} {
		name := tc.args[0]
		out, serr, code := runMorsel(t, append(tc.args, "--format", "json", "--quiet")...)
		if code != exitOK && code != exitCheck {
			t.Fatalf("%s: exit %d: %s", name, code, serr)
		}
		var r struct {
			Totals struct {
				Documents int `json:"documents"`
			} `json:"totals"`
			Skipped []report.Skipped `json:"skipped"`
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		var left []string
		for _, s := range r.Skipped {
			if s.Reason != "setting" || s.Failed || !strings.Contains(s.Detail, "read by this run") {
				t.Errorf("%s: skip %+v, want a setting this run reads", name, s)
			}
			left = append(left, filepath.Base(s.Source))
		}
		if strings.Join(left, " ") != strings.Join(tc.left, " ") {
			t.Errorf("%s: left out %q, want %q", name, left, tc.left)
		}
		if r.Totals.Documents != tc.docs {
			t.Errorf("%s: %d documents, want %d", name, r.Totals.Documents, tc.docs)
		}
		if tc.left == nil {
			continue
		}
		table, _, _ := runMorsel(t, append(tc.args, "--quiet")...)
		var lines []string
		for _, l := range strings.Split(table, "\n") {
			if strings.HasPrefix(strings.TrimSpace(l), "setting ") {
				lines = append(lines, l)
			}
		}
		want := "left out: the run's own settings (" + strings.Join(tc.left, ", ") + ")"
		if len(lines) != 1 || !strings.Contains(lines[0], want) {
			t.Errorf("%s: table lines %q, want one holding %q", name, lines, want)
		}
	}
}
