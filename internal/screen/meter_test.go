package screen

import (
	"strings"
	"testing"
	"time"
)

func TestMeter(t *testing.T) {
	var out strings.Builder
	clock := time.Unix(0, 0)
	cols := 80
	m := &Meter{W: &out, Columns: func() int { return cols }, Every: 100 * time.Millisecond, Now: func() time.Time { return clock }}
	m.Plan(3, 3000)
	m.FileDone(1000) // too soon: no redraw
	if n := strings.Count(out.String(), clearLine); n != 1 {
		t.Errorf("%d draws, want 1 (the plan)", n)
	}
	clock = clock.Add(time.Second)
	cols = 30 // the window narrowed
	m.FileDone(1000)
	lines := strings.Split(out.String(), clearLine)
	last := lines[len(lines)-1]
	if Width(last) > 29 || !strings.HasPrefix(last, "weighing 2/3 files") {
		t.Errorf("redraw after narrowing = %q", last)
	}
	if strings.Contains(out.String(), "\n") {
		t.Error("the meter wrote a line feed: each redraw would leave a line behind")
	}
	m.Finish()
	if !strings.HasSuffix(out.String(), clearLine) {
		t.Errorf("Finish did not clear the line: %q", out.String())
	}
	n := out.Len()
	m.FileDone(1000)
	m.Finish()
	if out.Len() != n {
		t.Error("the meter drew after Finish")
	}
}

func TestMeterNeverDrawn(t *testing.T) {
	var out strings.Builder
	(&Meter{W: &out}).Finish()
	if out.Len() != 0 {
		t.Errorf("Finish without a plan wrote %q", out.String())
	}
}
