package render

import (
	"math"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"morsel/report/internal/reporttest"
)

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

// TestChartLabelsEscaped checks the hand-built SVG on its own: hostile bar
// labels, tips and titles come out as text inside the chart.
func TestChartLabelsEscaped(t *testing.T) {
	for _, h := range reporttest.Hostile {
		c := &BarList{ID: "c", Title: h, Desc: h, XLabel: h, Rows: []BarRow{{Label: "x" + h, Value: 3, Text: h, Tip: h}},
			Marks: []ChartMark{{At: 2, Label: h, Class: "window"}}}
		k := &ColumnChart{ID: "k", Title: h, Desc: h, XLabel: h, YLabel: h, Cols: []Column{{Value: 1, Tip: h}}, Labels: []string{h}}
		for _, svg := range []string{string(c.SVG()), string(k.SVG())} {
			doc, err := html.Parse(strings.NewReader("<!DOCTYPE html><html><body>" + svg + "</body></html>"))
			if err != nil {
				t.Fatal(err)
			}
			reporttest.CheckSelfContained(t, doc)
			n := 0
			reporttest.WalkNodes(doc, func(x *html.Node) {
				if x.Type == html.ElementNode && x.Data == "svg" {
					n++
				}
			})
			if n != 1 {
				t.Errorf("label %q: %d svg elements, want 1", h, n)
			}
			if !strings.Contains(reporttest.TextOf(doc), h) {
				t.Errorf("label %q not shown as text", h)
			}
		}
	}
}
