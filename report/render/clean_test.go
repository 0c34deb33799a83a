package render

import (
	"strings"
	"testing"
	"unicode/utf8"
)

func TestClean(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"plain name.txt", "plain name.txt"},
		{"naïve café 東京.md", "naïve café 東京.md"},
		// The name from the report of the bug: a title-setting OSC and a
		// clear-screen CSI (ECMA-48 escape sequences).
		{"\x1b]0;pwned\a\x1b[2Jt.txt", `\x1b]0;pwned\x07\x1b[2Jt.txt`},
		{"a\rb\nc\td\x7f", `a\x0db\x0ac\x09d\x7f`},
		{"bad \xff\xfe byte", `bad \xff\xfe byte`},
		{"cut \xe6\x9d", `cut \xe6\x9d`},
		// U+202E RIGHT-TO-LEFT OVERRIDE would show "exe.txt" as "txt.exe".
		{"report\u202etxt.exe", `report\u202etxt.exe`},
		{"\u2066iso\u2069 \u200e\u200f\u061c", `\u2066iso\u2069 \u200e\u200f\u061c`},
		{"line\u2028sep", `line\u2028sep`},
		{"c1 \u0085 \u009b", `c1 \u0085 \u009b`},
		{"nbsp\u202fkept", "nbsp\u202fkept"},
	} {
		if got := Clean(c.in); got != c.want {
			t.Errorf("Clean(%q) = %q, want %q", c.in, got, c.want)
		}
	}
	if got := CleanMessage("one\ntwo\x1b"); got != "one\ntwo\\x1b" {
		t.Errorf("CleanMessage kept %q", got)
	}
}

// Whatever the input, Clean's output holds no control character, no bidi
// control and no invalid UTF-8, and text without them comes back as it is.
func FuzzClean(f *testing.F) {
	for _, s := range []string{"", "a\x1bb", "\xff", "\u202e", "東京\u0085"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got := Clean(s)
		if !utf8.ValidString(got) {
			t.Fatalf("Clean(%q) = %q is not UTF-8", s, got)
		}
		clean := true
		for _, r := range got {
			if r < 0x20 || r >= 0x7f && r < 0xa0 || hiding(r) {
				t.Fatalf("Clean(%q) = %q holds %U", s, got, r)
			}
		}
		for _, r := range s {
			if r == utf8.RuneError || r < 0x20 || r >= 0x7f && r < 0xa0 || hiding(r) {
				clean = false
			}
		}
		if clean && got != s {
			t.Fatalf("Clean(%q) = %q changed clean text", s, got)
		}
	})
}

func TestCSVCell(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		// Formula prefixes as OWASP's "CSV Injection" page lists them.
		{"=HYPERLINK(\"x\")", "'=HYPERLINK(\"x\")"},
		{"@SUM(A1)", "'@SUM(A1)"},
		{"+1+cmd|' /C calc'!A0", "'+1+cmd|' /C calc'!A0"},
		{"-2+3", "'-2+3"},
		{"-0x1p3", "'-0x1p3"},
		// Numbers stay numbers.
		{"-42", "-42"},
		{"+3.5", "+3.5"},
		{"-1.25e3", "-1.25e3"},
		{"notes/=odd.txt", "notes/=odd.txt"},
		{"", ""},
		{"\x1b[2J", `\x1b[2J`},
	} {
		if got := CSVCell(c.in); got != c.want {
			t.Errorf("CSVCell(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// Every text view of a grid shows hostile cells escaped.
func TestGridViewsEscape(t *testing.T) {
	g := &Grid{Title: "Sources \x1b[2J", Header: []string{"source", "tokens"}, Right: []int{1}, Sources: true,
		Notes: []string{"note \a"}}
	g.AddRow("\x1b]0;pwned\a\x1b[2Jt.txt", "12")
	g.AddRow("report\u202etxt.exe", "-3")
	g.AddRow("=cmd|' /C calc'!A0", "\xff")
	for _, f := range []Format{Table, CSV, Markdown} {
		var b strings.Builder
		if err := WriteGrids(WithView(&b, View{Width: 60, Base: "."}), f, g); err != nil {
			t.Fatal(err)
		}
		out := b.String()
		if strings.ContainsAny(out, "\x1b\a\r\u202e") || !utf8.ValidString(out) {
			t.Errorf("%s view holds a raw control character or invalid UTF-8:\n%q", f, out)
		}
		if !strings.Contains(out, `\x1b]0;pwned\x07\x1b[2Jt.txt`) || !strings.Contains(out, `report\u202etxt.exe`) {
			t.Errorf("%s view does not show the names escaped:\n%s", f, out)
		}
		if f == CSV && (!strings.Contains(out, "'=cmd") || !strings.Contains(out, ",-3\n")) {
			t.Errorf("CSV view: formula not neutralised or number changed:\n%s", out)
		}
	}
}
