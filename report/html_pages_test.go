package report

import (
	"bytes"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"morsel/corpus"
)

// checkPage parses a page, checks what every page must hold (one title,
// heading and footer, the sections asked for with their labels, charts
// with a title, description, axis labels and bars, nothing loaded or run)
// and returns the parsed page.
func checkPage(t *testing.T, page []byte, sections []string, charts int) *html.Node {
	t.Helper()
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatal(err)
	}
	checkSelfContained(t, doc)
	ids := map[string]*html.Node{}
	counts := map[string]int{}
	var svgs []*html.Node
	walkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		if !inSVG(n) {
			counts[n.Data]++
		}
		if id, ok := attr(n, "id"); ok {
			if ids[id] != nil {
				t.Errorf("id %q used twice", id)
			}
			ids[id] = n
		}
		if n.Data == "svg" {
			svgs = append(svgs, n)
		}
	})
	for _, el := range []string{"title", "h1", "style", "footer", "main"} {
		if counts[el] != 1 {
			t.Errorf("%d <%s> elements, want 1", counts[el], el)
		}
	}
	for _, id := range sections {
		n := ids[id]
		if n == nil || n.Data != "section" {
			t.Errorf("no section %q", id)
			continue
		}
		if l, _ := attr(n, "aria-labelledby"); ids[l] == nil || strings.TrimSpace(textOf(ids[l])) == "" {
			t.Errorf("section %q has no heading", id)
		}
	}
	if len(svgs) != charts {
		t.Errorf("%d charts, want %d", len(svgs), charts)
	}
	for _, svg := range svgs {
		refs := strings.Fields(func() string { v, _ := attr(svg, "aria-labelledby"); return v }())
		if r, _ := attr(svg, "role"); r != "img" || len(refs) != 2 {
			t.Errorf("chart role %q, labelled by %v", r, refs)
			continue
		}
		for i, want := range []string{"title", "desc"} {
			if n := ids[refs[i]]; n == nil || n.Data != want || strings.TrimSpace(textOf(n)) == "" {
				t.Errorf("chart label %q is not a non-empty <%s>", refs[i], want)
			}
		}
		parts := map[string]int{}
		walkNodes(svg, func(n *html.Node) {
			for _, c := range []string{"ctitle", "alabel", "bar", "tick", "rowlabel"} {
				if n.Type == html.ElementNode && hasClass(n, c) {
					parts[c]++
				}
			}
		})
		if parts["ctitle"] != 1 || parts["alabel"] < 1 || parts["bar"] < 1 || parts["tick"] < 2 {
			t.Errorf("chart %v parts %v: want a title, an axis label, ticks and bars", refs, parts)
		}
		if parts["rowlabel"] > 0 && parts["alabel"] != 2 {
			t.Errorf("bar list %v has %d axis labels, want one for the values and one for the rows", refs, parts["alabel"])
		}
	}
	return doc
}

func TestFitHTML(t *testing.T) {
	r := &FitReport{Window: 100, Frame: "<b>frame</b>.txt", FrameTok: 12}
	r.Vocabulary.Name = "test<vocab>"
	for i, h := range hostile {
		r.Documents = append(r.Documents, FitDoc{Source: "in/" + h, Record: i, Tokens: 50 + 20*i, InputTokens: 62 + 20*i, Reserve: 10, Window: 100})
	}
	r.Skipped = []Skipped{{Source: hostile[1], Reason: "binary"}}
	for i := range r.Documents {
		d := &r.Documents[i]
		d.Margin = d.Window - d.InputTokens - d.Reserve
		d.Fits = d.Margin >= 0
	}
	fc := &FitCollector{r: *r}
	r = fc.Finish()
	if r.Totals.Overflow == 0 || r.Totals.Fit == 0 {
		t.Fatalf("want both verdicts, got %+v", r.Totals)
	}
	var b bytes.Buffer
	if err := WriteFitHTML(&b, r, 0); err != nil {
		t.Fatal(err)
	}
	doc := checkPage(t, b.Bytes(), []string{"glance", "overflow", "tightest", "documents", "skipped"}, 2)
	all := textOf(doc)
	for _, h := range hostile {
		if !strings.Contains(all, "in/"+h) {
			t.Errorf("document %q not shown as text", h)
		}
	}
	for _, s := range []string{"<b>frame</b>.txt", "test<vocab>"} {
		if !strings.Contains(all, s) {
			t.Errorf("%q not shown as text", s)
		}
	}
	// The worst overflow leads its chart, marked over.
	worst := r.Documents[0]
	c := overflowChart(r)
	if c.Rows[0].Value != float64(-worst.Margin) || c.Rows[0].Class != "over" || len(c.Rows) != r.Totals.Overflow {
		t.Errorf("overflow chart rows %+v, want %d rows led by %d", c.Rows, r.Totals.Overflow, -worst.Margin)
	}
	tc := tightestChart(r)
	for i := 1; i < len(tc.Rows); i++ {
		if tc.Rows[i].Value < tc.Rows[i-1].Value {
			t.Errorf("tightest fits out of order: %+v", tc.Rows)
		}
	}
}

func TestFragmentsHTML(t *testing.T) {
	enc := newTestEncoder(t)
	terms, err := ParseGlossary("terms.txt", strings.NewReader("Bathyphorus quillandri\n"+hostile[1]+"\n"))
	if err != nil {
		t.Fatal(err)
	}
	fr := NewFragmenter(enc, terms)
	text := "Bathyphorus quillandri and Fluvantrazine again: Bathyphorus. Кряжево прошивка. " + strings.Join(hostile, " ")
	for i, h := range hostile {
		d := &corpus.Document{Source: "in/" + h, Record: i, Text: []byte(text)}
		dw, err := fr.Scan(d)
		fr.Add(corpus.Item{Doc: d}, dw, err)
	}
	fr.Add(corpus.Item{Skip: &corpus.Skip{Source: hostile[0], Reason: "binary"}}, nil, nil)
	r := fr.Finish(FragmentOptions{MinPieces: 2, MinCount: 1, Top: 20})
	if len(r.Words) == 0 || len(r.Terms) != 2 {
		t.Fatalf("%d words, %d terms", len(r.Words), len(r.Terms))
	}
	var b bytes.Buffer
	if err := WriteFragmentsHTML(&b, r, 0); err != nil {
		t.Fatal(err)
	}
	doc := checkPage(t, b.Bytes(), []string{"glance", "words", "scripts", "terms", "skipped"}, 2)
	all := textOf(doc)
	if !strings.Contains(all, hostile[1]) || !strings.Contains(all, "in/"+hostile[0]) {
		t.Error("hostile term or document name not shown as text")
	}
	// Each word's row shows its pieces as alternating shaded spans that
	// spell the word's split.
	rows := 0
	walkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode || n.Data != "table" || !hasClass(n, "split") {
			return
		}
		walkNodes(n, func(tr *html.Node) {
			if tr.Type != html.ElementNode || tr.Data != "tr" || tr.Parent.Data != "tbody" {
				return
			}
			var spans []string
			var classes []string
			walkNodes(tr, func(s *html.Node) {
				if s.Type == html.ElementNode && s.Data == "span" && hasClass(s, "p") {
					spans = append(spans, textOf(s))
					c, _ := attr(s, "class")
					classes = append(classes, c)
				}
			})
			if rows < len(r.Words) {
				want := fragmentPieces(r.Words[rows])
				if strings.Join(spans, "|") != strings.Join(want, "|") {
					t.Errorf("row %d pieces %q, want %q", rows, spans, want)
				}
			}
			for i := 1; i < len(classes); i++ {
				if classes[i] == classes[i-1] {
					t.Errorf("row %d: neighbouring pieces share shading %q", rows, classes[i])
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

func TestCommonDir(t *testing.T) {
	tests := []struct {
		in   []string
		want string
	}{
		{[]string{"a/b/c.txt", "a/b/d.txt"}, "a/b/"},
		{[]string{"a/b/c.txt", "a/bc.txt"}, "a/"},
		{[]string{"a/b.txt", "c.txt"}, ""},
		{[]string{"a/b.txt"}, "a/"},
		{nil, ""},
	}
	for _, tc := range tests {
		if got := commonDir(tc.in); got != tc.want {
			t.Errorf("commonDir(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}
