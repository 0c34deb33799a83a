package fragments

import (
	"slices"
	"strings"
	"testing"
)

func TestParseGlossary(t *testing.T) {
	for _, c := range []struct {
		name, in string
		want     []Term
		err      string
	}{
		{"plain", "\ufeff# comment\n\nQX-7731-Rb\n  Bathyphorus quillandri  \n\t# indented comment\nC#\n",
			[]Term{{"QX-7731-Rb", 3}, {"Bathyphorus quillandri", 4}, {"C#", 6}}, ""},
		{"crlf", "alpha\r\nbeta\r\n", []Term{{"alpha", 1}, {"beta", 2}}, ""},
		{"empty", "", nil, ""},
		{"duplicate", "alpha\nbeta\nalpha\n", nil, `g.txt:3: term "alpha" is already on line 1`},
		{"not utf8", "alpha\nbe\xfftа\n", nil, "g.txt:2: the line is not valid UTF-8"},
		{"control", "alpha\nbe\x00ta\n", nil, `g.txt:2: term "be\x00ta" holds the control character U+0000`},
		{"tab inside", "two\twords\n", nil, "g.txt:1: term"},
		{"too long", strings.Repeat("x", MaxTermBytes+1), nil, "g.txt:1: term of 201 bytes is longer than 200"},
	} {
		got, err := ParseGlossary("g.txt", strings.NewReader(c.in))
		if c.err != "" {
			if err == nil || !strings.HasPrefix(err.Error(), c.err) {
				t.Errorf("%s: error %v, want %q", c.name, err, c.err)
			}
			continue
		}
		if err != nil || !slices.Equal(got, c.want) {
			t.Errorf("%s: %v, %v; want %v", c.name, got, err, c.want)
		}
	}
	if _, err := ParseGlossary("g.txt", strings.NewReader(strings.Repeat("y", 2<<20))); err == nil || !strings.HasPrefix(err.Error(), "g.txt:1:") {
		t.Errorf("a 2 MB line: %v", err)
	}
}

func FuzzParseGlossary(f *testing.F) {
	f.Add("# c\nalpha\n\nbeta gamma\n")
	f.Add("a\na\n")
	f.Add("\xff\n")
	f.Fuzz(func(t *testing.T, in string) {
		terms, err := ParseGlossary("g.txt", strings.NewReader(in))
		if err != nil {
			if !strings.HasPrefix(err.Error(), "g.txt:") {
				t.Fatalf("error without a place: %v", err)
			}
			return
		}
		seen := map[string]bool{}
		for _, tm := range terms {
			if tm.Text == "" || tm.Text != strings.TrimSpace(tm.Text) || tm.Text[0] == '#' || seen[tm.Text] || tm.Line < 1 {
				t.Fatalf("bad term %+v", tm)
			}
			seen[tm.Text] = true
		}
	})
}
