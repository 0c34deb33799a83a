package render

import (
	"fmt"
	"path/filepath"
	"sort"
	"strings"

	"morsel/corpus"
	"morsel/report"
)

func skipList(title string, skips []report.Skipped) *Grid {
	g := &Grid{Sources: true, Title: title, Header: []string{"input", "reason", "detail"}}
	for _, s := range skips {
		why := s.Reason
		if s.Failed {
			why += " (failed)"
		}
		g.AddRow(report.Where(s.Source, s.Record), why, s.Detail)
	}
	return g
}

// SkipGrids lists skipped inputs for the table, Markdown and HTML views:
// a count per reason, then the inputs that could not be read, in full.
// Inputs left out on purpose (duplicates, empty or binary files) are only
// counted, unless the view is Verbose, which lists every skip.
func SkipGrids(v View, skips []report.Skipped) []*Grid {
	if len(skips) == 0 {
		return nil
	}
	if v.Verbose {
		return []*Grid{SkipGrid(skips)}
	}
	type tally struct {
		reason string
		failed bool
		n      int
		names  []string // the settings files left out, which are few and named
	}
	var order []*tally
	by := map[string]*tally{}
	var failures []report.Skipped
	for _, s := range skips {
		key := s.Reason
		if s.Failed {
			key += "\x00failed"
			failures = append(failures, s)
		}
		t := by[key]
		if t == nil {
			t = &tally{reason: s.Reason, failed: s.Failed}
			by[key] = t
			order = append(order, t)
		}
		t.n++
		if s.Reason == corpus.ReasonSetting {
			t.names = append(t.names, filepath.Base(s.Source))
		}
	}
	sort.SliceStable(order, func(i, j int) bool { return order[i].n > order[j].n })
	sum := &Grid{Title: fmt.Sprintf("Not counted (%s), by reason", Num(len(skips))), Header: []string{"reason", "inputs", ""}, Right: []int{1}}
	for _, t := range order {
		kind := "left out"
		if t.failed {
			kind = "failed: listed below"
		}
		if len(t.names) > 0 {
			kind = "left out: the run's own settings (" + strings.Join(t.names, ", ") + ")"
		}
		sum.AddRow(t.reason, Num(t.n), kind)
	}
	if len(failures) < len(skips) {
		sum.Notes = append(sum.Notes, "--verbose lists every input left out; --format json lists them all")
	}
	grids := []*Grid{sum}
	if len(failures) > 0 {
		grids = append(grids, skipList(fmt.Sprintf("Could not be read (%s)", Num(len(failures))), failures))
	}
	return grids
}
