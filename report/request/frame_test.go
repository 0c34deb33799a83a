package request

import (
	"strings"
	"testing"

	"morsel/report/internal/reporttest"
)

func TestParseFrame(t *testing.T) {
	for _, tc := range []struct {
		name, in, err string
		before, after string
	}{
		{"plain", "Summarise:\n{{document}}\nEnd.", "", "Summarise:\n", "\nEnd."},
		{"source", "File {{source}}\n{{document}}", "", "File a.txt\n", ""},
		{"none", "no placeholder here", "f.txt: the frame has no {{document}}", "", ""},
		{"twice", "one\n{{document}}\ntwo\n{{document}}", "f.txt:4: a second {{document}} (the first is on line 2)", "", ""},
		{"nul", "Summarise:\n{{document}}\x00\n", "f.txt:2: a NUL byte", "", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			f, err := ParseFrame("f.txt", []byte(tc.in))
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("error %v, want %q", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			b, a := f.Parts("a.txt")
			if string(b) != tc.before || string(a) != tc.after {
				t.Fatalf("parts %q %q, want %q %q", b, a, tc.before, tc.after)
			}
		})
	}
}

// TestInputTokensOnAssembledText checks that a request is counted on the
// assembled text, not as the sum of its parts: "Note:" + " salt" framed
// together is "Note", ":", " salt", while the frame part "Note: " alone
// ends in a space token of its own.
func TestInputTokensOnAssembledText(t *testing.T) {
	enc := reporttest.Encoder(t)
	f, _ := ParseFrame("f", []byte("Note: {{document}}"))
	doc := []byte("salt")
	got, _ := InputTokens(enc, f, "x", doc, 5)
	if want := enc.Count([]byte("Note: salt")) + 5; got != want {
		t.Fatalf("input tokens %d, want %d", got, want)
	}
	sum := enc.Count([]byte("Note: ")) + enc.Count(doc) + 5
	if got == sum {
		t.Fatalf("the assembled count equals the parts' sum (%d); the case no longer tells them apart", sum)
	}
}

func FuzzParseFrame(f *testing.F) {
	f.Add("a {{document}} b {{source}}")
	f.Add("{{document}}{{document}}")
	f.Add("{{source}}{{document}}{{source}}")
	f.Fuzz(func(t *testing.T, s string) {
		fr, err := ParseFrame("f", []byte(s))
		if strings.Count(s, DocumentMark) != 1 {
			if err == nil {
				t.Fatalf("accepted %d placeholders", strings.Count(s, DocumentMark))
			}
			return
		}
		if err != nil {
			// A NUL byte and a placeholder of another name are refused
			// on purpose.
			if strings.Contains(s, "\x00") || strings.Contains(err.Error(), "unknown placeholder") {
				return
			}
			t.Fatal(err)
		}
		if strings.Contains(s, "\x00") {
			t.Fatalf("accepted a NUL byte")
		}
		halves := strings.SplitN(s, DocumentMark, 2)
		want := strings.ReplaceAll(halves[0], SourceMark, "SRC") + "DOC" + strings.ReplaceAll(halves[1], SourceMark, "SRC")
		if got := string(fr.Assemble("SRC", []byte("DOC"))); got != want {
			t.Fatalf("assembled %q, want %q", got, want)
		}
	})
}
