package survey

import (
	"bytes"
	"io"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"golang.org/x/net/html"

	"morsel/corpus"
	"morsel/report/internal/reporttest"
)

func TestSampleViewUnits(t *testing.T) {
	enc := reporttest.Encoder(t)
	tests := []string{
		"Bathyphorus quillandri at 4 m.\n\nNext line\ttab",
		"桐崎の出荷について、担当者に確認しました。",
		"Кряжево: прошивка 2.3 — ошибка",
		"emoji 🦑🦑 and a combining e\u0301",
		"",
	}
	for _, text := range tests {
		pieces, err := PiecesOf(enc, []byte(text))
		if err != nil {
			t.Fatalf("%q: %v", text, err)
		}
		if got, want := len(pieces), enc.Count([]byte(text)); got != want {
			t.Errorf("%q: %d pieces, encoder counts %d", text, got, want)
		}
		v := sampleViewOf(&Sample{Source: "s", Text: []byte(text), Pieces: pieces})
		var b strings.Builder
		tokens := 0
		for _, u := range v.Units {
			var ub strings.Builder
			for _, p := range u.Parts {
				if p.NL {
					ub.WriteByte('\n')
				} else {
					ub.WriteString(p.Text)
				}
			}
			if !utf8.ValidString(ub.String()) {
				t.Errorf("%q: unit %q is not whole characters", text, ub.String())
			}
			n := 1
			if strings.Contains(u.Class, "multi") {
				n, _ = strconv.Atoi(strings.Fields(u.Tip)[0])
				if n < 2 {
					t.Errorf("%q: multi unit %q tip %q", text, ub.String(), u.Tip)
				}
			}
			tokens += n
			b.WriteString(ub.String())
		}
		if b.String() != text {
			t.Errorf("units spell %q, want %q", b.String(), text)
		}
		if tokens != len(pieces) {
			t.Errorf("%q: units hold %d tokens, want %d", text, tokens, len(pieces))
		}
	}
}

// FuzzSampleHTML renders arbitrary text as a sample and checks that the
// parsed page shows it back as text and holds nothing that loads or runs.
func FuzzSampleHTML(f *testing.F) {
	for _, h := range reporttest.Hostile {
		f.Add(h)
	}
	f.Add("a\n\nb\r\n\tc é 桐 🦑")
	enc := reporttest.Encoder(f)
	f.Fuzz(func(t *testing.T, text string) {
		if !utf8.ValidString(text) || strings.ContainsAny(text, "\r\x00") || len(text) > SampleLimit {
			return // an HTML parser rewrites CR and NUL, so the text would not read back byte for byte
		}
		pieces, err := PiecesOf(enc, []byte(text))
		if err != nil {
			t.Fatal(err)
		}
		s := &Report{}
		var b bytes.Buffer
		if err := WriteHTML(&b, s, &Sample{Source: text, Text: []byte(text), Pieces: pieces}, 0); err != nil {
			t.Fatal(err)
		}
		doc, err := html.Parse(&b)
		if err != nil {
			t.Fatal(err)
		}
		reporttest.CheckSelfContained(t, doc)
		reporttest.WalkNodes(doc, func(n *html.Node) {
			if n.Type == html.ElementNode && n.Data == "div" && reporttest.HasClass(n, "pieces") {
				got := strings.ReplaceAll(reporttest.TextOf(n), "↵\n", "\n")
				if got != text {
					t.Errorf("shows %q, want %q", got, text)
				}
			}
		})
	})
}

type closeCounter struct {
	io.Reader
	closed int
}

func (c *closeCounter) Close() error { c.closed++; return nil }

func TestSamplerChoice(t *testing.T) {
	enc := reporttest.Encoder(t)
	plain := strings.Repeat("the cat sat on the mat ", 10)                      // one token a word
	dense := strings.Repeat("Bathyphorus quillandri oxymeridol QX-7731-Rb ", 6) // many tokens a word
	long := strings.Repeat("Fluvantrazine ", SampleLimit)                       // dense too, and longer than the limit
	docs := []*corpus.Document{
		{Source: "a.txt", Text: []byte(plain)},
		{Source: "b.jsonl", Record: 2, Text: []byte(dense)},
		{Source: "b.jsonl", Record: 3, Text: []byte("tiny QX-7731-Rb")}, // too few words
		{Source: "c.txt", Text: []byte(dense)},                          // ties with b.jsonl:2, which comes first
	}
	type pick struct {
		want, source string
		record       int
	}
	for _, tc := range []pick{{"", "b.jsonl", 2}, {"a.txt", "a.txt", 0}, {"b.jsonl:3", "b.jsonl", 3}, {"c.txt", "c.txt", 0}} {
		sp := NewSampler(enc, tc.want)
		// Offer in reverse to show the choice does not hang on the order
		// workers finish in.
		for i := len(docs) - 1; i >= 0; i-- {
			d := *docs[i]
			if _, err := sp.Weigh(&d); err != nil {
				t.Fatal(err)
			}
		}
		s, err := sp.Sample()
		if err != nil || s == nil {
			t.Fatalf("want %q: Sample() = %v, %v", tc.want, s, err)
		}
		if s.Source != tc.source || s.Record != tc.record || s.Cut {
			t.Errorf("want %q: kept %s:%d (cut %v), want %s:%d", tc.want, s.Source, s.Record, s.Cut, tc.source, tc.record)
		}
	}
	// With no document of enough words, the densest of the short ones.
	sp := NewSampler(enc, "")
	for _, d := range []corpus.Document{{Source: "x.txt", Text: []byte("the cat")}, {Source: "y.txt", Text: []byte("QX-7731-Rb Bathyphorus")}} {
		sp.Weigh(&d)
	}
	if s, _ := sp.Sample(); s == nil || s.Source != "y.txt" || !strings.Contains(s.Why, "no document has") {
		t.Errorf("short documents only: kept %+v", s)
	}
	sp = NewSampler(enc, "missing.txt")
	d := *docs[0]
	sp.Weigh(&d)
	if s, err := sp.Sample(); s != nil || err != nil {
		t.Errorf("no match: Sample() = %v, %v", s, err)
	}

	// A streamed document: its start is kept, its stream still closed once.
	cc := &closeCounter{Reader: strings.NewReader(long)}
	sp = NewSampler(enc, "")
	w, err := sp.Weigh(&corpus.Document{Source: "big.txt", Stream: cc, Size: int64(len(long))})
	if err != nil {
		t.Fatal(err)
	}
	if w.Tokens != enc.Count([]byte(long)) || cc.closed != 1 {
		t.Errorf("streamed: %d tokens (want %d), closed %d times", w.Tokens, enc.Count([]byte(long)), cc.closed)
	}
	s, _ := sp.Sample()
	if s == nil || !s.Cut || len(s.Text) != SampleLimit || string(s.Text) != long[:SampleLimit] {
		t.Fatalf("streamed sample: %+v", s)
	}
}

func TestCutUTF8(t *testing.T) {
	tests := []struct{ in, want string }{
		{"abc", "abc"},
		{"ab\xc3", "ab"},          // first byte of é
		{"ab\xe6\xa1", "ab"},      // two of three bytes of 桐
		{"ab\xe6\xa1\x90", "ab桐"}, // whole
		{"\xf0\x9f\xa6", ""},      // three of four bytes of 🦑
		{"é", "é"},
		{"", ""},
	}
	for _, tc := range tests {
		if got := string(cutUTF8([]byte(tc.in))); got != tc.want {
			t.Errorf("cutUTF8(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}
