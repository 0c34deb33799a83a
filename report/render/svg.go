package render

import (
	"fmt"
	"html"
	"html/template"
	"math"
	"morsel/internal/screen"
	"strconv"
	"strings"
	"unicode/utf8"
)

// The charts of the HTML report are inline SVG drawn here: a column chart
// for histograms and a bar list for ranked documents and targets. Every
// piece of text that goes into the SVG passes through esc, so a file name
// such as `<img onerror=...>.txt` shows as text.

// esc escapes s for SVG text and for double- or single-quoted attribute
// values, and replaces bytes that are not UTF-8 with U+FFFD.
func esc(s string) string { return html.EscapeString(strings.ToValidUTF8(s, "\uFFFD")) }

// num formats a chart coordinate with at most one decimal.
func num(x float64) string { return strconv.FormatFloat(math.Round(x*10)/10, 'f', -1, 64) }

// chartMark is a vertical line across a chart at a position: a value on the
// value axis of a bar list, or a place on the category axis of a column
// chart (2.5 is half-way through the third column).
type ChartMark struct {
	At    float64
	Label string
	Class string // "window" for the red dashed window line
}

// column is one column of a column chart.
type Column struct {
	Value float64
	Tip   string // hover text, also read by screen readers
	Class string
}

// columnChart is a vertical bar chart over an ordered category axis.
// Edges labels the boundaries between columns (len(Cols)+1 labels) when
// set, as a histogram wants; else Labels names the columns.
type ColumnChart struct {
	ID             string
	Title, Desc    string
	XLabel, YLabel string
	Cols           []Column
	Edges          []string
	Labels         []string
	Marks          []ChartMark
}

// niceStep returns a round step (1, 2 or 5 times a power of ten) that cuts
// 0..max into about n intervals.
func niceStep(max float64, n int) float64 {
	if max <= 0 || n <= 0 {
		return 1
	}
	raw := max / float64(n)
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= raw {
			return m * p
		}
	}
	return 10 * p
}

// axisTop returns the top of a value axis that holds max, rounded up to a
// whole number of steps, and the step.
func axisTop(max float64, n int, whole bool) (top, step float64) {
	step = niceStep(max, n)
	if whole && step < 1 {
		step = 1
	}
	top = math.Ceil(max/step) * step
	if top == 0 {
		top = step
	}
	return top, step
}

// tickLabel formats a tick value: thousands separators for whole numbers,
// else up to three significant decimals.
func TickLabel(v float64) string {
	if v == math.Trunc(v) && math.Abs(v) < 1e15 {
		return Num(int64(v))
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// svgOpen starts an svg element with its title and description, which
// screen readers announce.
func svgOpen(b *strings.Builder, id, title, desc string, w, h float64) {
	fmt.Fprintf(b, `<svg class="chart" viewBox="0 0 %s %s" role="img" aria-labelledby="%s-t %s-d" xmlns="http://www.w3.org/2000/svg">`,
		num(w), num(h), esc(id), esc(id))
	fmt.Fprintf(b, `<title id="%s-t">%s</title><desc id="%s-d">%s</desc>`, esc(id), esc(title), esc(id), esc(desc))
}

// SVG renders the chart.
func (c *ColumnChart) SVG() template.HTML {
	const w, h = 720.0, 320.0
	const left, right, top, bottom = 70.0, 24.0, 40.0, 62.0
	pw, ph := w-left-right, h-top-bottom
	max := 0.0
	for _, col := range c.Cols {
		max = math.Max(max, col.Value)
	}
	ymax, step := axisTop(max, 5, true)
	n := float64(len(c.Cols))
	if n == 0 {
		n = 1
	}
	cw := pw / n
	y := func(v float64) float64 { return top + ph - v/ymax*ph }
	var b strings.Builder
	svgOpen(&b, c.ID, c.Title, c.Desc, w, h)
	fmt.Fprintf(&b, `<text class="ctitle" x="%s" y="18">%s</text>`, num(left), esc(c.Title))
	// Grid lines and value ticks.
	for v := 0.0; v <= ymax+step/2; v += step {
		fmt.Fprintf(&b, `<line class="grid" x1="%s" x2="%s" y1="%s" y2="%s"/>`, num(left), num(left+pw), num(y(v)), num(y(v)))
		fmt.Fprintf(&b, `<text class="tick" x="%s" y="%s" text-anchor="end">%s</text>`, num(left-6), num(y(v)+4), esc(TickLabel(v)))
	}
	for i, col := range c.Cols {
		x := left + float64(i)*cw
		bh := col.Value / ymax * ph
		cls := "bar"
		if col.Class != "" {
			cls += " " + col.Class
		}
		fmt.Fprintf(&b, `<g><title>%s</title><rect class="%s" x="%s" y="%s" width="%s" height="%s"/>`,
			esc(col.Tip), esc(cls), num(x+2), num(y(col.Value)), num(math.Max(cw-4, 1)), num(bh))
		if col.Value > 0 {
			fmt.Fprintf(&b, `<text class="val" x="%s" y="%s" text-anchor="middle">%s</text>`, num(x+cw/2), num(y(col.Value)-4), esc(TickLabel(col.Value)))
		}
		b.WriteString(`</g>`)
	}
	base := top + ph
	fmt.Fprintf(&b, `<line class="axis" x1="%s" x2="%s" y1="%s" y2="%s"/>`, num(left), num(left+pw), num(base), num(base))
	if c.Edges != nil {
		// Thin the labels out when they would touch: about 7 px a character.
		every := 1
		for longest(c.Edges)*7 > int(cw)*every && every < len(c.Edges) {
			every++
		}
		for i, e := range c.Edges {
			x := left + float64(i)*cw
			fmt.Fprintf(&b, `<line class="axis" x1="%s" x2="%s" y1="%s" y2="%s"/>`, num(x), num(x), num(base), num(base+5))
			if i%every == 0 {
				fmt.Fprintf(&b, `<text class="tick" x="%s" y="%s" text-anchor="middle">%s</text>`, num(x), num(base+18), esc(e))
			}
		}
	} else {
		for i, l := range c.Labels {
			x := left + (float64(i)+0.5)*cw
			fmt.Fprintf(&b, `<text class="tick" x="%s" y="%s" text-anchor="middle">%s</text>`, num(x), num(base+18), esc(clip(l, int(cw/7))))
		}
	}
	for _, m := range c.Marks {
		x := left + m.At*cw
		fmt.Fprintf(&b, `<line class="mark %s" x1="%s" x2="%s" y1="%s" y2="%s"/>`, esc(m.Class), num(x), num(x), num(top-6), num(base))
		anchor := "start"
		lx := x + 5
		if m.At > n*0.7 {
			anchor, lx = "end", x-5
		}
		fmt.Fprintf(&b, `<text class="marklabel %s" x="%s" y="%s" text-anchor="%s">%s</text>`, esc(m.Class), num(lx), num(top+6), anchor, esc(m.Label))
	}
	fmt.Fprintf(&b, `<text class="alabel" x="%s" y="%s" text-anchor="middle">%s</text>`, num(left+pw/2), num(h-12), esc(c.XLabel))
	fmt.Fprintf(&b, `<text class="alabel" transform="translate(18 %s) rotate(-90)" text-anchor="middle">%s</text>`, num(top+ph/2), esc(c.YLabel))
	b.WriteString(`</svg>`)
	return template.HTML(b.String())
}

// barRow is one row of a bar list.
type BarRow struct {
	Label string
	Value float64
	Text  string // the figure printed after the bar
	Tip   string
	Class string
}

// barList is a horizontal bar chart: one labelled row per item, values on
// a linear axis from zero.
type BarList struct {
	ID          string
	Title, Desc string
	XLabel      string // the value axis, with its unit
	YLabel      string // what the rows are
	Rows        []BarRow
	Marks       []ChartMark
	Decimals    bool // the axis may have fractional ticks (money)
	// Paths says the labels are file names: a folder they all share is
	// named once in the title instead of on every row.
	Paths bool
}

// SVG renders the chart.
func (c *BarList) SVG() template.HTML {
	const w = 720.0
	const left, right, top, bottom, rowH = 250.0, 96.0, 52.0, 50.0, 24.0
	pw := w - left - right
	h := top + bottom + rowH*float64(len(c.Rows))
	max := 0.0
	for _, r := range c.Rows {
		max = math.Max(max, r.Value)
	}
	for _, m := range c.Marks {
		max = math.Max(max, m.At)
	}
	xmax, step := axisTop(max, 5, !c.Decimals)
	title, dir := c.Title, ""
	if c.Paths {
		labels := make([]string, len(c.Rows))
		for i, r := range c.Rows {
			labels[i] = r.Label
		}
		if dir = commonDir(labels); dir != "" {
			title += " (in " + dir + ")"
		}
	}
	x := func(v float64) float64 { return left + v/xmax*pw }
	base := top + rowH*float64(len(c.Rows))
	var b strings.Builder
	svgOpen(&b, c.ID, c.Title, c.Desc, w, h)
	fmt.Fprintf(&b, `<text class="ctitle" x="8" y="18">%s</text>`, esc(title))
	for v := 0.0; v <= xmax+step/2; v += step {
		fmt.Fprintf(&b, `<line class="grid" x1="%s" x2="%s" y1="%s" y2="%s"/>`, num(x(v)), num(x(v)), num(top-4), num(base))
		fmt.Fprintf(&b, `<text class="tick" x="%s" y="%s" text-anchor="middle">%s</text>`, num(x(v)), num(base+16), esc(TickLabel(v)))
	}
	for i, r := range c.Rows {
		y := top + float64(i)*rowH
		cls := "bar"
		if r.Class != "" {
			cls += " " + r.Class
		}
		fmt.Fprintf(&b, `<g><title>%s</title>`, esc(r.Tip))
		fmt.Fprintf(&b, `<text class="rowlabel" x="%s" y="%s" text-anchor="end">%s</text>`, num(left-8), num(y+rowH/2+4), esc(screen.CutMiddle(strings.TrimPrefix(r.Label, dir), rowLabelColumns)))
		fmt.Fprintf(&b, `<rect class="%s" x="%s" y="%s" width="%s" height="%s"/>`, esc(cls), num(left), num(y+4), num(math.Max(x(r.Value)-left, 0)), num(rowH-8))
		fmt.Fprintf(&b, `<text class="val" x="%s" y="%s">%s</text>`, num(x(r.Value)+5), num(y+rowH/2+4), esc(r.Text))
		b.WriteString(`</g>`)
	}
	fmt.Fprintf(&b, `<line class="axis" x1="%s" x2="%s" y1="%s" y2="%s"/>`, num(left), num(left), num(top-4), num(base))
	for _, m := range c.Marks {
		fmt.Fprintf(&b, `<line class="mark %s" x1="%s" x2="%s" y1="%s" y2="%s"/>`, esc(m.Class), num(x(m.At)), num(x(m.At)), num(top-10), num(base))
		lx, anchor := markLabelAt(x(m.At), m.Label, left, w)
		fmt.Fprintf(&b, `<text class="marklabel %s" x="%s" y="%s" text-anchor="%s">%s</text>`, esc(m.Class), num(lx), num(top-14), anchor, esc(m.Label))
	}
	fmt.Fprintf(&b, `<text class="alabel" x="%s" y="%s" text-anchor="middle">%s</text>`, num(left+pw/2), num(h-10), esc(c.XLabel))
	if c.YLabel != "" {
		fmt.Fprintf(&b, `<text class="alabel" x="%s" y="%s" text-anchor="end">%s</text>`, num(left-8), num(top-14), esc(c.YLabel))
	}
	b.WriteString(`</svg>`)
	return template.HTML(b.String())
}

// rowLabelColumns is the most columns of a bar's label: about 210 px at
// the labels' 11 px, inside the 242 px left of the bars.
const rowLabelColumns = 34

// markLabelAt returns where a mark's label goes on the line above the
// bars: centred on the mark, unless it would reach left of the bars (over
// the row labels' heading) or past the chart's edge, in which case it
// starts just right of the mark, or ends just left of it.
func markLabelAt(x float64, label string, left, width float64) (float64, string) {
	half := labelPixels(label) / 2
	switch {
	case x-half < left:
		return x + 4, "start"
	case x+half > width-4:
		return x - 4, "end"
	}
	return x, "middle"
}

// labelPixels estimates the width of a 12 px semibold label: 7 px a
// column, a wide character two columns.
func labelPixels(s string) float64 { return 7 * float64(screen.Width(s)) }

// clip shortens s to at most n characters, keeping its end (where file
// names differ) behind an ellipsis.
func clip(s string, n int) string {
	if n < 2 || utf8.RuneCountInString(s) <= n {
		return s
	}
	r := []rune(s)
	return "…" + string(r[len(r)-(n-1):])
}

func longest(ss []string) int {
	m := 0
	for _, s := range ss {
		m = max(m, utf8.RuneCountInString(s))
	}
	return m
}

// commonDir returns the longest folder prefix, ending in a slash, that all
// names share, or "" when they share none.
func commonDir(names []string) string {
	if len(names) == 0 {
		return ""
	}
	p := names[0]
	for _, n := range names[1:] {
		for !strings.HasPrefix(n, p) {
			p = p[:len(p)-1]
		}
	}
	if i := strings.LastIndexByte(p, '/'); i >= 0 {
		return p[:i+1]
	}
	return ""
}

// ChartRows is the most rows a bar chart of the HTML report draws; the
// tables under it list the rest.
const ChartRows = 15
