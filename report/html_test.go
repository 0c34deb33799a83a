package report

import (
	"bytes"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"golang.org/x/net/html"

	"morsel/bpe"
	"morsel/corpus"
)

// hostile is document text and names that would run or load something if
// they reached the page unescaped.
var hostile = []string{
	`<script>alert("x")</script>`,
	`<img src=x onerror="alert(1)">`,
	`"><svg onload=alert(2)>`,
	`' onmouseover='alert(3)`,
	`</style><link rel=stylesheet href=https://example.invalid/x.css>`,
	`]]><!-- --></title></svg><iframe src="//example.invalid">`,
}

func hostileSurvey(t *testing.T) (*Survey, *Sample) {
	t.Helper()
	enc := newTestEncoder(t)
	sp := NewSampler(enc, "")
	sv := NewSurveyor(enc.Vocab().Info())
	text := strings.Repeat("Plain words before the trouble starts here. ", 3) + strings.Join(hostile, "\n") + "\nQX-7731-Rb Bathyphorus quillandri\tend <|endoftext|>"
	for i, name := range hostile {
		d := &corpus.Document{Source: "in/" + name + ".txt", Format: "text", Text: []byte(strings.Repeat(text, i+1))}
		w, err := sp.Weigh(d)
		sv.Add(corpus.Item{Doc: d}, w, err)
	}
	sv.Add(corpus.Item{Skip: &corpus.Skip{Source: "in/<b onclick=x>bad</b>.bin", Reason: "binary", Detail: "<i>nul byte</i>"}}, Weight{}, nil)
	s := sv.Finish()
	sample, err := sp.Sample()
	if err != nil || sample == nil {
		t.Fatalf("Sample() = %v, %v", sample, err)
	}
	return s, sample
}

func newTestEncoder(t testing.TB) *bpe.Encoder {
	t.Helper()
	enc, err := bpe.NewEncoder(bpe.Default(), bpe.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return enc
}

func renderSurvey(t *testing.T, s *Survey, sample *Sample) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := WriteSurveyHTML(&b, s, sample, 0); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func attr(n *html.Node, key string) (string, bool) {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val, true
		}
	}
	return "", false
}

func walkNodes(n *html.Node, fn func(*html.Node)) {
	fn(n)
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		walkNodes(c, fn)
	}
}

func textOf(n *html.Node) string {
	var b strings.Builder
	walkNodes(n, func(c *html.Node) {
		if c.Type == html.TextNode {
			b.WriteString(c.Data)
		}
	})
	return b.String()
}

func inSVG(n *html.Node) bool {
	for p := n.Parent; p != nil; p = p.Parent {
		if p.Type == html.ElementNode && p.Data == "svg" {
			return true
		}
	}
	return false
}

func hasClass(n *html.Node, class string) bool {
	v, _ := attr(n, "class")
	for _, c := range strings.Fields(v) {
		if c == class {
			return true
		}
	}
	return false
}

// checkSelfContained fails the test for anything in the page that would
// load from outside it or run code: script elements, link elements,
// frames, event-handler attributes, and src, href or url() that leave the
// page.
func checkSelfContained(t *testing.T, doc *html.Node) {
	t.Helper()
	walkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		switch n.Data {
		case "script", "link", "iframe", "object", "embed", "img", "base", "frame", "audio", "video", "source":
			t.Errorf("page holds a <%s> element", n.Data)
		case "style":
			if css := textOf(n); strings.Contains(css, "url(") || strings.Contains(css, "@import") {
				t.Errorf("style sheet loads something: %.80q", css)
			}
		}
		for _, a := range n.Attr {
			k := strings.ToLower(a.Key)
			if strings.HasPrefix(k, "on") {
				t.Errorf("<%s> has event handler %s=%q", n.Data, a.Key, a.Val)
			}
			if k == "style" && strings.Contains(a.Val, "url(") {
				t.Errorf("<%s> style loads %q", n.Data, a.Val)
			}
			if k == "src" || k == "href" || k == "xlink:href" || k == "action" || k == "srcset" {
				if !strings.HasPrefix(a.Val, "#") {
					t.Errorf("<%s %s=%q> leaves the page", n.Data, a.Key, a.Val)
				}
			}
		}
	})
}

func TestSurveyHTMLStructure(t *testing.T) {
	s, sample := hostileSurvey(t)
	page := renderSurvey(t, s, sample)
	if !bytes.HasPrefix(page, []byte("<!DOCTYPE html>")) {
		t.Errorf("page starts %.40q, want a doctype", page)
	}
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatal(err)
	}
	checkSelfContained(t, doc)

	counts := map[string]int{}
	ids := map[string]bool{}
	var svgs, sections []*html.Node
	var piecesDiv *html.Node
	walkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		if !inSVG(n) {
			counts[n.Data]++ // svg elements have titles of their own
		}
		if id, ok := attr(n, "id"); ok {
			if ids[id] {
				t.Errorf("id %q used twice", id)
			}
			ids[id] = true
		}
		switch {
		case n.Data == "svg":
			svgs = append(svgs, n)
		case n.Data == "section":
			sections = append(sections, n)
		case n.Data == "div" && hasClass(n, "pieces"):
			piecesDiv = n
		}
	})
	for _, el := range []string{"html", "head", "body", "main", "title", "style", "h1", "footer"} {
		if counts[el] != 1 {
			t.Errorf("%d <%s> elements, want 1", counts[el], el)
		}
	}
	if lang, _ := attr(doc.LastChild, "lang"); lang != "en" {
		t.Errorf("html lang = %q", lang)
	}
	if !strings.Contains(string(page), `<meta charset="utf-8">`) || !strings.Contains(string(page), `name="viewport"`) {
		t.Error("page lacks the charset or viewport meta element")
	}
	if !strings.Contains(string(page), "@media print") || !strings.Contains(string(page), "@media (max-width") {
		t.Error("style sheet lacks the print or narrow-window rules")
	}
	wantSections := []string{"glance", "spread", "largest", "sample", "formats", "documents", "skipped", "notes"}
	for _, id := range wantSections {
		if !ids[id] {
			t.Errorf("no section %q", id)
		}
	}
	for _, sec := range sections {
		id, _ := attr(sec, "id")
		if l, _ := attr(sec, "aria-labelledby"); !ids[l] {
			t.Errorf("section %q labelled by missing id %q", id, l)
		}
	}
	// Every chart: role img, a title and a description it points to, a
	// visible title, axis labels, and bars.
	if len(svgs) != 2 {
		t.Errorf("%d charts, want 2 (histogram, largest)", len(svgs))
	}
	for _, svg := range svgs {
		if r, _ := attr(svg, "role"); r != "img" {
			t.Errorf("svg role %q", r)
		}
		if _, ok := attr(svg, "viewBox"); !ok {
			t.Error("svg without a viewBox does not scale")
		}
		lb, _ := attr(svg, "aria-labelledby")
		refs := strings.Fields(lb)
		if len(refs) != 2 {
			t.Errorf("svg aria-labelledby %q", lb)
		}
		var parts = map[string]int{}
		walkNodes(svg, func(n *html.Node) {
			if n.Type != html.ElementNode {
				return
			}
			id, _ := attr(n, "id")
			for i, r := range refs {
				if id == r && n.Data != []string{"title", "desc"}[i] {
					t.Errorf("svg label %q is a <%s>", r, n.Data)
				}
				if id == r && strings.TrimSpace(textOf(n)) == "" {
					t.Errorf("svg label %q is empty", r)
				}
			}
			for _, c := range []string{"ctitle", "alabel", "bar", "tick"} {
				if hasClass(n, c) {
					parts[c]++
				}
			}
		})
		if parts["ctitle"] != 1 || parts["alabel"] < 1 || parts["bar"] < 1 || parts["tick"] < 2 {
			t.Errorf("chart %q parts %v: want a title, axis labels, ticks and bars", lb, parts)
		}
	}

	// The hostile text shows as text: in the sample, in the document
	// names, in the skip list.
	if piecesDiv == nil {
		t.Fatal("no sample pieces")
	}
	shown := strings.ReplaceAll(textOf(piecesDiv), "↵\n", "\n")
	if want := string(sample.Text); shown != want {
		t.Errorf("sample shows\n%q\nwant\n%q", shown, want)
	}
	all := textOf(doc)
	for _, h := range hostile {
		if !strings.Contains(all, "in/"+h+".txt") {
			t.Errorf("document name %q not shown as text", h)
		}
	}
	if !strings.Contains(all, "<b onclick=x>bad</b>") || !strings.Contains(all, "<i>nul byte</i>") {
		t.Error("skip entry not shown as text")
	}
}

// TestChartLabelsEscaped checks the hand-built SVG on its own: hostile bar
// labels, tips and titles come out as text inside the chart.
func TestChartLabelsEscaped(t *testing.T) {
	for _, h := range hostile {
		c := &barList{ID: "c", Title: h, Desc: h, XLabel: h, Rows: []barRow{{Label: "x" + h, Value: 3, Text: h, Tip: h}},
			Marks: []chartMark{{At: 2, Label: h, Class: "window"}}}
		k := &columnChart{ID: "k", Title: h, Desc: h, XLabel: h, YLabel: h, Cols: []column{{Value: 1, Tip: h}}, Labels: []string{h}}
		for _, svg := range []string{string(c.SVG()), string(k.SVG())} {
			doc, err := html.Parse(strings.NewReader("<!DOCTYPE html><html><body>" + svg + "</body></html>"))
			if err != nil {
				t.Fatal(err)
			}
			checkSelfContained(t, doc)
			n := 0
			walkNodes(doc, func(x *html.Node) {
				if x.Type == html.ElementNode && x.Data == "svg" {
					n++
				}
			})
			if n != 1 {
				t.Errorf("label %q: %d svg elements, want 1", h, n)
			}
			if !strings.Contains(textOf(doc), h) {
				t.Errorf("label %q not shown as text", h)
			}
		}
	}
}

func TestSampleViewUnits(t *testing.T) {
	enc := newTestEncoder(t)
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
	for _, h := range hostile {
		f.Add(h)
	}
	f.Add("a\n\nb\r\n\tc é 桐 🦑")
	enc := newTestEncoder(f)
	f.Fuzz(func(t *testing.T, text string) {
		if !utf8.ValidString(text) || strings.ContainsAny(text, "\r\x00") || len(text) > SampleLimit {
			return // an HTML parser rewrites CR and NUL, so the text would not read back byte for byte
		}
		pieces, err := PiecesOf(enc, []byte(text))
		if err != nil {
			t.Fatal(err)
		}
		s := &Survey{}
		var b bytes.Buffer
		if err := WriteSurveyHTML(&b, s, &Sample{Source: text, Text: []byte(text), Pieces: pieces}, 0); err != nil {
			t.Fatal(err)
		}
		doc, err := html.Parse(&b)
		if err != nil {
			t.Fatal(err)
		}
		checkSelfContained(t, doc)
		walkNodes(doc, func(n *html.Node) {
			if n.Type == html.ElementNode && n.Data == "div" && hasClass(n, "pieces") {
				got := strings.ReplaceAll(textOf(n), "↵\n", "\n")
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
	enc := newTestEncoder(t)
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

func TestBinPosition(t *testing.T) {
	bins := Histogram([]int{1, 300}) // [0,64) [64,128) [128,256) [256,512)
	tests := []struct {
		n    int
		want float64
		ok   bool
	}{
		{32, 0.5, true},
		{64, 1, true},
		{96, 1 + math.Log2(1.5), true},
		{256, 3, true},
		{511, 3 + math.Log2(511.0/256), true},
		{512, 0, false},
		{0, 0, false},
	}
	for _, tc := range tests {
		got, ok := binPosition(bins, tc.n)
		if ok != tc.ok || math.Abs(got-tc.want) > 1e-9 {
			t.Errorf("binPosition(%d) = %v, %v; want %v, %v", tc.n, got, ok, tc.want, tc.ok)
		}
	}
}

func TestHistogramChartReachesWindow(t *testing.T) {
	s := &Survey{Vocabulary: bpe.Info{Window: 1024}, Histogram: Histogram([]int{10, 70}), Totals: SurveyTotals{Documents: 2}}
	c := histogramChart(s)
	// [0,64) [64,128) [128,256) [256,512) [512,1024) [1024,2048)
	if len(c.Cols) != 6 || c.Edges[len(c.Edges)-1] != "2,048" {
		t.Fatalf("columns %d, edges %v; want the axis widened to [1024,2048)", len(c.Cols), c.Edges)
	}
	if len(c.Marks) != 1 || c.Marks[0].At != 5 || c.Cols[5].Class != "over" || c.Cols[4].Class != "" {
		t.Errorf("window mark %+v, want at the left edge of column 5, the first one past the window", c.Marks)
	}
}

func TestNiceStep(t *testing.T) {
	tests := []struct {
		max  float64
		n    int
		want float64
	}{
		{14, 5, 5}, {100, 5, 20}, {4765, 5, 1000}, {0.37, 5, 0.1}, {1, 5, 0.2}, {0, 5, 1},
	}
	for _, tc := range tests {
		if got := niceStep(tc.max, tc.n); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("niceStep(%v, %d) = %v, want %v", tc.max, tc.n, got, tc.want)
		}
	}
}

// luminance and contrast follow the definitions of relative luminance and
// contrast ratio in WCAG 2.1 (W3C Recommendation, 2018), success criterion
// 1.4.3.
func luminance(hex string) float64 {
	v, err := strconv.ParseUint(strings.TrimPrefix(hex, "#"), 16, 32)
	if err != nil {
		panic(err)
	}
	ch := func(c uint64) float64 {
		s := float64(c) / 255
		if s <= 0.03928 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	return 0.2126*ch(v>>16&0xff) + 0.7152*ch(v>>8&0xff) + 0.0722*ch(v&0xff)
}

func contrast(a, b string) float64 {
	la, lb := luminance(a), luminance(b)
	if la < lb {
		la, lb = lb, la
	}
	return (la + 0.05) / (lb + 0.05)
}

func TestContrast(t *testing.T) {
	// The formula itself: black on white is 21:1 by the WCAG 2.1
	// definition; #767676 on white is the lightest grey that reaches 4.5:1
	// (common practice), #777777 falls just short.
	if c := contrast("#000000", "#ffffff"); math.Abs(c-21) > 1e-9 {
		t.Fatalf("black on white = %v", c)
	}
	if c := contrast("#767676", "#ffffff"); c < 4.5 || contrast("#777777", "#ffffff") >= 4.5 {
		t.Fatalf("grey threshold wrong: %v", c)
	}
	p := palette
	pairs := []struct{ name, fg, bg string }{
		{"text on page", p.Ink, p.Paper}, {"text on card", p.Ink, p.Card},
		{"muted on page", p.Muted, p.Paper}, {"muted on card", p.Muted, p.Card},
		{"link on page", p.Bar, p.Paper}, {"window label", p.Mark, p.Card}, {"spread label", p.Mean, p.Card},
		{"piece 0", p.Ink, p.Shade[0]}, {"piece 1", p.Ink, p.Shade[1]}, {"piece 2", p.Ink, p.Shade[2]},
		{"line-feed mark on piece", p.Muted, p.Shade[1]},
	}
	for _, pr := range pairs {
		if c := contrast(pr.fg, pr.bg); c < 4.5 {
			t.Errorf("%s: %s on %s is %.2f:1, want 4.5:1 or more", pr.name, pr.fg, pr.bg, c)
		}
	}
	// Bars against the card are graphics: WCAG 2.1 criterion 1.4.11 asks
	// 3:1.
	for _, c := range []string{p.Bar, p.Over} {
		if r := contrast(c, p.Card); r < 3 {
			t.Errorf("bar %s on card: %.2f:1, want 3:1", c, r)
		}
	}
}
