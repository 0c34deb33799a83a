package screen

import (
	"strings"
	"testing"
)

func TestWidth(t *testing.T) {
	// Widths from Unicode UAX #11 (East Asian Width): 日 and 本 are W (two
	// columns); U+0301 COMBINING ACUTE ACCENT is Mn (none).
	for _, c := range []struct {
		s    string
		want int
	}{
		{"", 0}, {"abc", 3}, {"日本", 4}, {"e\u0301", 1}, {"…", 1},
	} {
		if got := Width(c.s); got != c.want {
			t.Errorf("Width(%q) = %d, want %d", c.s, got, c.want)
		}
	}
}

func TestCutMiddle(t *testing.T) {
	for _, c := range []struct {
		s     string
		width int
		want  string
	}{
		{"short", 10, "short"},
		{"exactly10!", 10, "exactly10!"},
		{"testdata/demo/incident-2024-11-vennskarth-buoy-loss.md", 20, "testdata/d…y-loss.md"},
		{"abcdefghij", 5, "ab…ij"},
		{"abcdefghij", 4, "ab…j"},
		{"abcdefghij", 1, "…"},
		{"abcdefghij", 0, ""},
		// A wide character is never split; the column the head cannot use
		// goes to the tail.
		{"日本語のテキスト", 7, "日…スト"},
		// A combining mark stays with its letter.
		{"e\u0301e\u0301e\u0301e\u0301e\u0301", 3, "e\u0301…e\u0301"},
	} {
		got := CutMiddle(c.s, c.width)
		if got != c.want {
			t.Errorf("CutMiddle(%q, %d) = %q, want %q", c.s, c.width, got, c.want)
		}
		if Width(got) > c.width && c.width >= 0 {
			t.Errorf("CutMiddle(%q, %d) = %q is %d columns wide", c.s, c.width, got, Width(got))
		}
	}
}

func TestShorten(t *testing.T) {
	long := strings.Repeat("7", 100002)
	got, cut := Shorten(long, 25)
	if !cut || got != strings.Repeat("7", 12)+"…"+strings.Repeat("7", 12) {
		t.Errorf("Shorten(100002 digits, 25) = %q, %v", got, cut)
	}
	if got, cut := Shorten("Bathyphorus", 25); cut || got != "Bathyphorus" {
		t.Errorf("Shorten(short word) = %q, %v", got, cut)
	}
	// Counted in characters: 30 two-byte letters are 30, not 60.
	cyr := strings.Repeat("ж", 30)
	if got, cut := Shorten(cyr, 30); cut || got != cyr {
		t.Errorf("Shorten(30 Cyrillic letters, 30) = %q, %v", got, cut)
	}
	if got, _ := Shorten(cyr, 5); got != "жж…жж" {
		t.Errorf("Shorten(30 Cyrillic letters, 5) = %q", got)
	}
	if Chars(long) != 100002 || Chars("e\u0301") != 1 {
		t.Error("Chars counts bytes, not characters")
	}
}
