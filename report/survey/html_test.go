package survey

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"morsel/bpe"
	"morsel/corpus"
	"morsel/report"
	"morsel/report/internal/reporttest"
)

func hostileSurvey(t *testing.T) (*Report, *Sample) {
	t.Helper()
	enc := reporttest.Encoder(t)
	sp := NewSampler(enc, "")
	sv := NewSurveyor(enc.Vocab().Info())
	text := strings.Repeat("Plain words before the trouble starts here. ", 3) + strings.Join(reporttest.Hostile, "\n") + "\nQX-7731-Rb Bathyphorus quillandri\tend <|endoftext|>"
	for i, name := range reporttest.Hostile {
		d := &corpus.Document{Source: "in/" + name + ".txt", Format: "text", Text: []byte(strings.Repeat(text, i+1))}
		w, err := sp.Weigh(d)
		if err != nil {
			t.Fatal(err)
		}
		sv.Add(w)
	}
	s := sv.Finish([]report.Skipped{report.SkipOf(&corpus.Skip{Source: "in/<b onclick=x>bad</b>.bin", Reason: "unreadable", Detail: "<i>nul byte</i>", Failed: true})})
	sample, err := sp.Sample()
	if err != nil || sample == nil {
		t.Fatalf("Sample() = %v, %v", sample, err)
	}
	return s, sample
}

func renderSurvey(t *testing.T, s *Report, sample *Sample) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := WriteHTML(&b, s, sample, 0); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
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
	reporttest.CheckSelfContained(t, doc)

	counts := map[string]int{}
	ids := map[string]bool{}
	var svgs, sections []*html.Node
	var piecesDiv *html.Node
	reporttest.WalkNodes(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		if !reporttest.InSVG(n) {
			counts[n.Data]++ // svg elements have titles of their own
		}
		if id, ok := reporttest.Attr(n, "id"); ok {
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
		case n.Data == "div" && reporttest.HasClass(n, "pieces"):
			piecesDiv = n
		}
	})
	for _, el := range []string{"html", "head", "body", "main", "title", "style", "h1", "footer"} {
		if counts[el] != 1 {
			t.Errorf("%d <%s> elements, want 1", counts[el], el)
		}
	}
	if lang, _ := reporttest.Attr(doc.LastChild, "lang"); lang != "en" {
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
		id, _ := reporttest.Attr(sec, "id")
		if l, _ := reporttest.Attr(sec, "aria-labelledby"); !ids[l] {
			t.Errorf("section %q labelled by missing id %q", id, l)
		}
	}
	// Every chart: role img, a title and a description it points to, a
	// visible title, axis labels, and bars.
	if len(svgs) != 2 {
		t.Errorf("%d charts, want 2 (histogram, largest)", len(svgs))
	}
	for _, svg := range svgs {
		if r, _ := reporttest.Attr(svg, "role"); r != "img" {
			t.Errorf("svg role %q", r)
		}
		if _, ok := reporttest.Attr(svg, "viewBox"); !ok {
			t.Error("svg without a viewBox does not scale")
		}
		lb, _ := reporttest.Attr(svg, "aria-labelledby")
		refs := strings.Fields(lb)
		if len(refs) != 2 {
			t.Errorf("svg aria-labelledby %q", lb)
		}
		var parts = map[string]int{}
		reporttest.WalkNodes(svg, func(n *html.Node) {
			if n.Type != html.ElementNode {
				return
			}
			id, _ := reporttest.Attr(n, "id")
			for i, r := range refs {
				if id == r && n.Data != []string{"title", "desc"}[i] {
					t.Errorf("svg label %q is a <%s>", r, n.Data)
				}
				if id == r && strings.TrimSpace(reporttest.TextOf(n)) == "" {
					t.Errorf("svg label %q is empty", r)
				}
			}
			for _, c := range []string{"ctitle", "alabel", "bar", "tick"} {
				if reporttest.HasClass(n, c) {
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
	shown := strings.ReplaceAll(reporttest.TextOf(piecesDiv), "↵\n", "\n")
	if want := string(sample.Text); shown != want {
		t.Errorf("sample shows\n%q\nwant\n%q", shown, want)
	}
	all := reporttest.TextOf(doc)
	for _, h := range reporttest.Hostile {
		if !strings.Contains(all, "in/"+h+".txt") {
			t.Errorf("document name %q not shown as text", h)
		}
	}
	if !strings.Contains(all, "<b onclick=x>bad</b>") || !strings.Contains(all, "<i>nul byte</i>") {
		t.Error("skip entry not shown as text")
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
	s := &Report{Vocabulary: bpe.Info{Window: 1024}, Histogram: Histogram([]int{10, 70}), Totals: Totals{Documents: 2}}
	c := histogramChart(s)
	// [0,64) [64,128) [128,256) [256,512) [512,1024) [1024,2048)
	if len(c.Cols) != 6 || c.Edges[len(c.Edges)-1] != "2,048" {
		t.Fatalf("columns %d, edges %v; want the axis widened to [1024,2048)", len(c.Cols), c.Edges)
	}
	if len(c.Marks) != 1 || c.Marks[0].At != 5 || c.Cols[5].Class != "over" || c.Cols[4].Class != "" {
		t.Errorf("window mark %+v, want at the left edge of column 5, the first one past the window", c.Marks)
	}
}
