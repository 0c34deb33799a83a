package screen

import (
	"strings"
	"testing"
	"time"
)

var midRun = Status{Files: 5223, FilesDone: 1200, Bytes: 180_400_000, BytesDone: 41_000_000, Tokens: 10_345_678, Elapsed: 4 * time.Second}

func TestProgressLineFits(t *testing.T) {
	for width := 1; width <= 200; width++ {
		line := ProgressLine(midRun, width)
		if w := Width(line); w > width-1 && width > 1 {
			t.Errorf("width %d: %q is %d columns", width, line, w)
		}
	}
}

func TestProgressLineDrops(t *testing.T) {
	wide := ProgressLine(midRun, 200)
	for _, part := range []string{"weighing 1,200/5,223 files", "[", "  22%", "10,345,678 tokens", "41.0 MB of 180.4 MB", "10.2 MB/s", "14s left"} {
		if !strings.Contains(wide, part) {
			t.Errorf("at 200 columns %q lacks %q", wide, part)
		}
	}
	// Narrower, the time left goes first and the file count last: the
	// parts present at one width are a suffix of this order, and never
	// more than at a wider one.
	order := []string{"left", "/s", " of ", "tokens", "[", "%"}
	prevKept := 0
	for width := 200; width > 20; width-- {
		line := ProgressLine(midRun, width)
		if !strings.Contains(line, "weighing") {
			t.Fatalf("width %d: %q lost the file count", width, line)
		}
		dropped := 0
		for dropped < len(order) && !strings.Contains(line, order[dropped]) {
			dropped++
		}
		for _, p := range order[dropped:] {
			if !strings.Contains(line, p) {
				t.Errorf("width %d: %q dropped %q before an earlier part", width, line, p)
			}
		}
		if dropped < prevKept {
			t.Errorf("width %d: %q shows a part that a wider line dropped", width, line)
		}
		prevKept = dropped
	}
	if got := ProgressLine(midRun, 80); !strings.Contains(got, "[") || strings.Contains(got, "[]") {
		t.Errorf("at 80 columns the bar is missing or empty: %q", got)
	}
}

func TestProgressLineStdin(t *testing.T) {
	// Standard input has no known size: no bar, no percentage.
	line := ProgressLine(Status{Files: 1, BytesDone: 2_500_000, Tokens: 10, Elapsed: time.Second}, 120)
	if strings.Contains(line, "[") || strings.Contains(line, "%") || !strings.Contains(line, "2.5 MB") {
		t.Errorf("stdin line = %q", line)
	}
}

func TestBytesAndDuration(t *testing.T) {
	for n, want := range map[int64]string{0: "0 B", 999: "999 B", 1000: "1.0 kB", 117_127: "117.1 kB", 180_400_000: "180.4 MB", 3_300_000_000: "3.3 GB"} {
		if got := Bytes(n); got != want {
			t.Errorf("Bytes(%d) = %q, want %q", n, got, want)
		}
	}
	for d, want := range map[time.Duration]string{0: "0s", 42 * time.Second: "42s", 185 * time.Second: "3m05s", 3720 * time.Second: "1h02m"} {
		if got := Duration(d); got != want {
			t.Errorf("Duration(%v) = %q, want %q", d, got, want)
		}
	}
}
