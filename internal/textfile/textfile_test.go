package textfile

import "testing"

func TestLine(t *testing.T) {
	data := []byte("one\ntwo\n\nfour")
	for _, c := range []struct {
		off  int64
		want int
	}{{-5, 1}, {0, 1}, {3, 1}, {4, 2}, {8, 3}, {9, 4}, {13, 4}, {99, 4}} {
		if got := Line(data, c.off); got != c.want {
			t.Errorf("Line(%d) = %d, want %d", c.off, got, c.want)
		}
	}
}

func TestTrimBOM(t *testing.T) {
	for in, want := range map[string]string{"\ufeffterm": "term", "term": "term", "": "", "\xef\xbb": "\xef\xbb", "a\ufeff": "a\ufeff"} {
		if got := string(TrimBOM([]byte(in))); got != want {
			t.Errorf("TrimBOM(%q) = %q, want %q", in, got, want)
		}
	}
}
