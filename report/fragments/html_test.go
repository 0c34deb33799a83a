package fragments

import (
	"bytes"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"morsel/corpus"
	"morsel/report"
	"morsel/report/internal/reporttest"
)

func TestFragmentsHTML(t *testing.T) {
	enc := reporttest.Encoder(t)
	terms, err := ParseGlossary("terms.txt", strings.NewReader("Bathyphorus quillandri\n"+reporttest.Hostile[1]+"\n"))
	if err != nil {
		t.Fatal(err)
	}
	fr := NewFragmenter(enc, terms)
	text := "Bathyphorus quillandri and Fluvantrazine again: Bathyphorus. Кряжево прошивка. " + strings.Join(reporttest.Hostile, " ")
	for i, h := range reporttest.Hostile {
		d := &corpus.Document{Source: "in/" + h, Record: i, Text: []byte(text)}
		dw, err := fr.Scan(d)
		if err != nil {
			t.Fatal(err)
		}
		fr.AddWords(d.Source, d.Record, dw)
	}
	r := fr.Finish(Options{MinPieces: 2, MinCount: 1, Top: 20}, []report.Skipped{{Source: reporttest.Hostile[0], Reason: "binary"}})
	if len(r.Words) == 0 || len(r.Terms) != 2 {
		t.Fatalf("%d words, %d terms", len(r.Words), len(r.Terms))
	}
	var b bytes.Buffer
	if err := WriteHTML(&b, r, 0); err != nil {
		t.Fatal(err)
	}
	doc := reporttest.CheckPage(t, b.Bytes(), []string{"glance", "words", "scripts", "terms", "skipped"}, 2)
	all := reporttest.TextOf(doc)
	if !strings.Contains(all, reporttest.Hostile[1]) || !strings.Contains(all, "in/"+reporttest.Hostile[0]) {
		t.Error("hostile term or document name not shown as text")
	}
	// Each word's row shows its pieces as alternating shaded spans that
	// spell the word's split.
	rows := 0
	reporttest.WalkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode || n.Data != "table" || !reporttest.HasClass(n, "split") {
			return
		}
		reporttest.WalkNodes(n, func(tr *html.Node) {
			if tr.Type != html.ElementNode || tr.Data != "tr" || tr.Parent.Data != "tbody" {
				return
			}
			var spans []string
			var classes []string
			reporttest.WalkNodes(tr, func(s *html.Node) {
				if s.Type == html.ElementNode && s.Data == "span" && reporttest.HasClass(s, "p") {
					spans = append(spans, reporttest.TextOf(s))
					c, _ := reporttest.Attr(s, "class")
					classes = append(classes, c)
				}
			})
			if rows < len(r.Words) {
				want := fragmentPieces(r.Words[rows])
				if strings.Join(spans, "|") != strings.Join(want, "|") {
					t.Errorf("row %d pieces %q, want %q", rows, spans, want)
				}
			}
			// Every piece carries the rule that ends it (class p) and a
			// shade by the bytes it covers.
			for _, c := range classes {
				if c != "p b1" && c != "p b2" && c != "p b3" && c != "p b4" {
					t.Errorf("row %d: piece class %q, want p and a byte shade", rows, c)
				}
			}
			rows++
		})
	})
	if rows != len(r.Words)+len(r.Terms) {
		t.Errorf("%d rows of pieces, want %d words + %d terms", rows, len(r.Words), len(r.Terms))
	}
	if got := fragmentPieces(r.Words[0]); len(got) < 2 {
		t.Errorf("top word %q has pieces %q", r.Words[0].Word, got)
	}
}
