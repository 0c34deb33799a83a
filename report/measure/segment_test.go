package measure

import (
	"bufio"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"

	"morsel/report/internal/reporttest"
)

// boundaries returns the word-boundary offsets nextSegment finds in text,
// 0 and len(text) included.
func boundaries(text []byte) []int {
	out := []int{0}
	for s := 0; s < len(text); {
		s = NextSegment(text, s)
		out = append(out, s)
	}
	return out
}

// TestWordBreakTest checks the word boundaries against every case of
// WordBreakTest.txt, Unicode 15.0.0 (testdata/unicode), the version
// github.com/rivo/uniseg v0.4.7 implements.
func TestWordBreakTest(t *testing.T) {
	f, err := os.Open("../../testdata/unicode/WordBreakTest-15.0.0.txt")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	cases := 0
	for line := 1; sc.Scan(); line++ {
		data, _, _ := strings.Cut(sc.Text(), "#")
		fields := strings.Fields(data)
		if len(fields) == 0 {
			continue
		}
		var text []byte
		want := []int{}
		for _, fl := range fields {
			switch fl {
			case "÷":
				want = append(want, len(text))
			case "×":
			default:
				cp, err := strconv.ParseUint(fl, 16, 32)
				if err != nil {
					t.Fatalf("line %d: %q", line, fl)
				}
				text = append(text, string(rune(cp))...)
			}
		}
		if got := boundaries(text); !slices.Equal(got, want) {
			t.Errorf("line %d: %q: boundaries %v, want %v", line, text, got, want)
		}
		cases++
	}
	if cases != 1823 {
		t.Fatalf("read %d cases, want the file's 1823", cases)
	}
}

// TestSegmentsMatchUniseg checks that starting uniseg afresh at each
// boundary, and deciding ASCII alone, finds what uniseg finds in one run.
func TestSegmentsMatchUniseg(t *testing.T) {
	for _, s := range reporttest.SegmentSamples {
		if got, want := boundaries([]byte(s)), reporttest.UnisegBoundaries([]byte(s)); !slices.Equal(got, want) {
			t.Errorf("%q: boundaries %v, uniseg %v", s, got, want)
		}
	}
}

func FuzzSegments(f *testing.F) {
	for _, s := range reporttest.SegmentSamples {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if got, want := boundaries([]byte(s)), reporttest.UnisegBoundaries([]byte(s)); !slices.Equal(got, want) {
			t.Fatalf("%q: boundaries %v, uniseg %v", s, got, want)
		}
	})
}
